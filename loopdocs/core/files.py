"""Writing output files: never half-written, with the usual permissions, and no leftovers.

Every output is written through :func:`atomic_write` (a temporary
``.<name>.<random>.part`` file in the same folder, then ``os.replace``), so a file under
its final name is always complete. The other helpers deal with its two side effects.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Any

PARTIAL_GLOB = ".*.part"


def atomic_write(path: Path, write: Any) -> None:
    """Call ``write(tmp_path)`` then rename into ``path``: never a half-written file, and
    the permissions of a normally created file (``shareable``), whatever wrote it."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    os.close(fd)
    try:
        write(Path(tmp))
        shareable(Path(tmp))
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def shareable(path: Path) -> None:
    """Give a finished temporary file the permissions of a normally created file
    (``mkstemp`` makes it private, 0600): ``0666`` less the process umask."""
    mask = os.umask(0)
    os.umask(mask)
    os.chmod(path, 0o666 & ~mask)


def remove_partials(folder: Path) -> list[Path]:
    """Delete the temporary files an interrupted write left in ``folder``; return them."""
    removed = []
    if Path(folder).is_dir():
        for tmp in Path(folder).glob(PARTIAL_GLOB):
            tmp.unlink(missing_ok=True)
            removed.append(tmp)
    return removed


def refuse_overwriting(out: Path, inputs: "list[Path | str]", what: str = "--out") -> None:
    """Raise ``InputError`` when ``out`` is (or resolves to) one of the ``inputs``: an output
    never replaces the file it was made from.

    >>> refuse_overwriting(Path("cal.xlsx"), [Path("index.xlsx")])
    """
    from loopdocs.core.errors import InputError

    target = Path(out).expanduser().resolve()
    for source in inputs:
        source_path = Path(source).expanduser().resolve()
        if target == source_path or (target.exists() and source_path.exists() and target.samefile(source_path)):
            raise InputError(f"{what} {out} is an input of this command ({source}); write the output to another file")


def remove_inside(folder: Path, relative: str, suffix: str = ".pdf") -> bool:
    """Delete ``folder / relative`` only if it is a regular file (not a link) with ``suffix``
    that lies inside ``folder`` once resolved; True when deleted. A cache record edited to
    name ``../../elsewhere`` or an absolute path deletes nothing.

    >>> remove_inside(Path("/tmp"), "../etc/passwd")
    False
    """
    base = Path(folder).resolve()
    target = Path(folder) / relative
    try:
        resolved = target.parent.resolve() / target.name
    except (OSError, RuntimeError):
        return False
    if base not in resolved.parents or target.is_symlink() or not target.is_file() or target.suffix != suffix:
        return False
    target.unlink(missing_ok=True)
    return True
