"""Writing output files: never half-written, with the usual permissions, and no leftovers.

Every output is written through :func:`atomic_write` (a temporary
``.<name>.<pid>.<random>.part`` file in the same folder, then ``os.replace``), so a file
under its final name is always complete. The other helpers deal with its side effects:
permissions (:func:`shareable`), leftovers of interrupted writes (:func:`remove_partials`,
:func:`remove_stale_partials`, :func:`interrupt_on_terminate`) and two processes writing
one folder (:func:`folder_lock`).
"""

from __future__ import annotations

import glob
import os
import signal
import socket
import tempfile
import threading
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from loopdocs.core.errors import InputError

PARTIAL_GLOB = ".*.part"
LOCK_NAME = ".loopdocs.lock"


def atomic_write(path: Path, write: Any) -> None:
    """Call ``write(tmp_path)`` then rename into ``path``: never a half-written file, and
    the permissions of a normally created file (``shareable``), whatever wrote it."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.{os.getpid()}.", suffix=".part")
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


def pid_alive(pid: int) -> bool:
    """True when a process with this id exists on this machine (signal 0 probes it)."""
    if pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True  # exists, owned by someone else
    except OSError:
        return False
    return True


def remove_stale_partials(path: Path) -> list[Path]:
    """Delete the temporary files that an earlier, killed write of ``path`` left beside it:
    named ``.<name>.<pid>.<random>.part`` by :func:`atomic_write` for this very file, with
    the id of a process that no longer runs (a kill -9 runs no cleanup). A write of the same
    file still running in another process keeps its temporary file. Returns those deleted."""
    path = Path(path)
    removed = []
    prefix = f".{path.name}."
    if not path.parent.is_dir():
        return removed
    for tmp in path.parent.glob(f"{glob.escape(prefix)}*.part"):
        pid_text = tmp.name[len(prefix):].split(".", 1)[0]
        if pid_text.isdigit() and not pid_alive(int(pid_text)) and tmp.is_file() and not tmp.is_symlink():
            tmp.unlink(missing_ok=True)
            removed.append(tmp)
    return removed


@contextmanager
def interrupt_on_terminate() -> Iterator[None]:
    """Inside the block, SIGTERM (``kill``, a closing terminal session) raises
    ``KeyboardInterrupt`` as Ctrl-C does, so the ``finally`` clauses run: a temporary file
    is removed, finished work is recorded. Only the main thread can take signals; elsewhere
    the block runs unchanged. SIGKILL cannot be caught (see :func:`remove_stale_partials`)."""
    if threading.current_thread() is not threading.main_thread() or not hasattr(signal, "SIGTERM"):
        yield
        return

    def raise_interrupt(signum: int, frame: Any) -> None:
        raise KeyboardInterrupt(f"signal {signum}")

    previous = signal.signal(signal.SIGTERM, raise_interrupt)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


class FolderBusy(InputError):
    """Another process holds the folder's lock (message: one line, naming folder and pid)."""


def _lock_holder(lock: Path) -> tuple[int, str, str]:
    """(pid, host, started) written in a lock file; pid 0 when it cannot be read."""
    try:
        fields = lock.read_text(encoding="utf-8").split("\n")
        return int(fields[0]), fields[1] if len(fields) > 1 else "", fields[2] if len(fields) > 2 else ""
    except (OSError, ValueError, IndexError):
        return 0, "", ""


@contextmanager
def folder_lock(folder: Path, wait_s: float = 5.0, poll_s: float = 0.2, what: str = "loopdocs build") -> Iterator[Path]:
    """Hold ``folder/.loopdocs.lock`` while the block runs: one writer per folder.

    The lock file is created exclusively (``O_CREAT | O_EXCL``) and holds the process id,
    the host name and the start time. When another live process holds it, wait up to
    ``wait_s`` seconds, then raise :class:`FolderBusy` naming the folder and that process's
    id. A lock left by a process that no longer runs on this host (killed) is taken over.
    The lock is removed on leaving the block, when it is still ours.
    """
    folder = Path(folder)
    lock = folder / LOCK_NAME
    host = socket.gethostname()
    text = f"{os.getpid()}\n{host}\n{time.strftime('%Y-%m-%d %H:%M:%S')}\n"
    deadline = time.monotonic() + wait_s
    while True:
        try:
            fd = os.open(lock, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o666)
        except FileExistsError:
            pid, holder_host, started = _lock_holder(lock)
            stale = holder_host in ("", host) and pid > 0 and not pid_alive(pid)
            if stale:
                lock.unlink(missing_ok=True)  # its process is gone: take the folder over
                continue
            if time.monotonic() >= deadline:
                who = f"process {pid}" + (f" on {holder_host}" if holder_host and holder_host != host else "") if pid else "another process"
                since = f" since {started}" if started else ""
                raise FolderBusy(f"{folder}: another {what} ({who}{since}) is writing this folder; "
                                 f"wait for it to finish, or delete {lock} if that process no longer runs") from None
            time.sleep(poll_s)
            continue
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            handle.write(text)
        break
    try:
        yield lock
    finally:
        if _lock_holder(lock)[0] == os.getpid():
            lock.unlink(missing_ok=True)
