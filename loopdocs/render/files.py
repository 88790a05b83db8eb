"""Output files of the build: permissions and leftovers of interrupted writes.

Every output is written through ``loopdocs.starter.atomic_write`` (a temporary
``.<name>.<random>.part`` file in the same folder, then ``os.replace``), so a file under
its final name is always complete. These helpers deal with the two side effects.
"""

from __future__ import annotations

import os
from pathlib import Path

PARTIAL_GLOB = ".*.part"


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
