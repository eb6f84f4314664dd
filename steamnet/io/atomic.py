"""Write a file so that a failure never leaves it half-written or destroys the old one.

The content goes to a temporary file in the target's folder, is flushed to disk, and is
then moved over the target with :func:`os.replace` (atomic on POSIX and Windows). If
anything fails, the temporary file is removed and the previous target is untouched.
"""

from __future__ import annotations

import contextlib
import os
import re
import shutil
import socket
import stat
import tempfile
from pathlib import Path
from typing import Callable, Iterator

from ..errors import SteamnetError
from .signals import signals_deferred

__all__ = ["OutputError", "atomic_path", "write_atomic", "remove_stale", "clean_earlier_runs",
           "refuse_unwritable", "output_errors", "save_guarded", "temp_prefix", "make_temp",
           "remove_own_temps"]


class OutputError(SteamnetError):
    """An output file could not be written (the previous file, if any, is intact)."""


@contextlib.contextmanager
def atomic_path(target: str | Path, suffix: str = "") -> Iterator[Path]:
    """Yield a temporary path beside ``target``; on success move it over ``target``."""
    target = Path(target)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.exists():
        raise OutputError(f"{target}: folder '{folder}' does not exist")
    if target.is_dir():
        raise OutputError(f"{target}: is a folder, not a file name")
    refuse_unwritable(target)
    remove_stale(target)
    try:
        fd, tmp = make_temp(prefix=temp_prefix(target), suffix=suffix or ".tmp",
                            dir=folder)
    except OSError as exc:
        raise OutputError(f"{target}: cannot write in '{folder}': {exc.strerror}") from None
    os.close(fd)
    tmp_path = Path(tmp)
    try:
        yield tmp_path
        _set_mode(tmp_path, target)
        try:
            os.replace(tmp_path, target)
        except OSError as exc:
            raise OutputError(f"{target}: cannot replace the file ({exc.strerror}); is "
                              "it open in another program? The previous file is "
                              "unchanged") from None
    except BaseException:
        with contextlib.suppress(OSError):
            tmp_path.unlink()
        raise


def _set_mode(tmp: Path, target: Path) -> None:
    """Give the new file the old file's permissions, or those of a newly made file
    (mkstemp makes it readable by its owner only)."""
    try:
        mode = target.stat().st_mode & 0o7777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        mode = 0o666 & ~umask
    with contextlib.suppress(OSError):
        os.chmod(tmp, mode)


def write_atomic(target: str | Path, writer: Callable[[Path], None], suffix: str = "") -> None:
    """Call ``writer(tmp_path)`` and move the result over ``target``."""
    with atomic_path(target, suffix) as tmp:
        with output_errors(target):  # disk full, permissions, ...: not an internal error
            writer(tmp)


# ------------------------------------------------ earlier runs, read-only targets, save
#: Temporary files and folders of this program beside an output are named
#: ``.NAME.steamnet-HOST-PID.…``: a later run removes those whose process no longer
#: runs on this host (after a SIGKILL or a power cut), and no one else's.
TEMP_TAG = "steamnet"


def _host() -> str:
    return re.sub(r"[^A-Za-z0-9-]", "", socket.gethostname())[:32] or "host"


def temp_prefix(target: str | Path) -> str:
    """The name prefix of this process's temporary files for ``target``."""
    return f".{Path(target).name}.{TEMP_TAG}-{_host()}-{os.getpid()}."


def _running(pid: int) -> bool:
    if pid == os.getpid() or os.name == "nt":    # Windows' os.kill would end the process
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:          # someone else's process: it runs
        return True
    try:                             # a zombie has ended (Linux; elsewhere assume it runs)
        stat_line = Path(f"/proc/{pid}/stat").read_text()
        return stat_line.rsplit(")", 1)[1].split()[0] != "Z"
    except (OSError, IndexError):
        return True


def remove_stale(target: str | Path) -> list[str]:
    """Remove the temporary files and folders that earlier runs of this program, now
    ended, left beside ``target``; returns their names. A folder an interrupted swap had
    moved aside (``….old.…``) is put back when ``target`` is missing."""
    target = Path(target)
    folder = target.parent if str(target.parent) else Path(".")
    pattern = re.compile(rf"^\.{re.escape(target.name)}\.{TEMP_TAG}-"
                         rf"{re.escape(_host())}-(\d+)\.(old\.)?")
    removed = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for e in entries:
        m = pattern.match(e.name)
        if not m or _running(int(m.group(1))):
            continue
        with contextlib.suppress(OSError):
            if e.is_dir(follow_symlinks=False):
                if m.group(2) and not os.path.lexists(target):
                    os.rename(e.path, target)
                    continue
                shutil.rmtree(e.path)
            else:
                os.unlink(e.path)
            removed.append(e.name)
    return removed


def clean_earlier_runs(*targets: str | Path | None) -> None:
    """:func:`remove_stale` for each output of a command that is given (None skipped)."""
    for t in targets:
        if t is not None:
            remove_stale(t)


def refuse_unwritable(target: str | Path) -> None:
    """Refuse to replace an existing file (or folder) the user cannot write.

    "Cannot write" is: ``os.access`` says so, or the file's owner-write bit is off. The
    second rule matters for root, to whom ``os.access`` grants everything: a file made
    read-only (``chmod a-w``) is someone's decision to keep it, and is kept.
    """
    target = Path(target)
    try:
        st = target.stat()
    except OSError:
        return
    if not (stat.S_ISREG(st.st_mode) or stat.S_ISDIR(st.st_mode)):
        return
    if not (st.st_mode & stat.S_IWUSR) or not os.access(target, os.W_OK):
        what = "the folder is" if stat.S_ISDIR(st.st_mode) else "is"
        raise OutputError(f"{target}: {what} read-only (mode {st.st_mode & 0o7777:o}), so "
                          "it was left as it was; make it writable or write elsewhere")


@contextlib.contextmanager
def output_errors(target: str | Path) -> Iterator[None]:
    """Turn an ``OSError`` while writing ``target`` (disk full, file-size limit, ...) into
    an :class:`OutputError`."""
    try:
        yield
    except OSError as exc:
        reason = exc.strerror or str(exc) or type(exc).__name__
        raise OutputError(f"{target}: could not write ({reason}); the previous file, if "
                          "any, is unchanged") from None


class _GuardedFile:
    """A file that, once a write has failed or it is closed, only counts what follows.

    A zip writer left behind by a failed save writes its central directory when it is
    garbage-collected; into a full disk that fails again and Python prints the traceback
    ("Exception ignored in ..."). Here those late writes go nowhere (the temporary file
    is removed anyway), while positions move as if they had been written, so that the
    zip writer's arithmetic stays in range."""

    def __init__(self, path: Path):
        self._fh = open(path, "wb")
        self._dead = False
        self._pos = self._end = 0

    def _die(self) -> None:
        if not self._dead:
            self._dead = True
            with contextlib.suppress(OSError, ValueError):
                self._pos = self._fh.tell()
            self._end = max(self._end, self._pos)

    def writable(self) -> bool:
        return True

    def seekable(self) -> bool:
        return True

    def write(self, b) -> int:
        n = len(b)
        if not self._dead:
            try:
                self._fh.write(b)
            except BaseException:
                self._die()
                raise
        self._pos += n
        self._end = max(self._end, self._pos)
        return n

    def tell(self) -> int:
        return self._pos

    def seek(self, offset: int, whence: int = 0) -> int:
        self._pos = (offset if whence == 0 else self._pos + offset if whence == 1
                     else self._end + offset)
        if not self._dead:
            try:
                self._fh.seek(self._pos)
            except BaseException:
                self._die()
                raise
        return self._pos

    def flush(self) -> None:
        if not self._dead:
            try:
                self._fh.flush()
            except BaseException:
                self._die()
                raise

    def finish(self) -> None:
        """Flush and close the real file (errors raised); later writes only count."""
        if not self._dead:
            self._dead = True
            try:
                self._fh.flush()
                os.fsync(self._fh.fileno())
            finally:
                self._fh.close()

    def abandon(self) -> None:
        self._die()
        with contextlib.suppress(OSError):
            self._fh.close()

    def close(self) -> None:          # the zip writer does not close a file it was given
        pass


def save_guarded(save: Callable[[object], None], tmp: Path) -> None:
    """Call ``save(fileobj)`` (e.g. an openpyxl ``Workbook.save``) into ``tmp`` through
    a :class:`_GuardedFile`, so that a failed save leaves nothing to fail again later."""
    fh = _GuardedFile(tmp)
    try:
        save(fh)
        fh.finish()
    except BaseException:
        fh.abandon()
        raise


# ----------------------------------------------- this process's temporary files, noted
_OWN_TEMPS: set[str] = set()


def make_temp(*, folder: bool = False, **kw):
    """``tempfile.mkstemp(**kw)`` (or ``mkdtemp`` with ``folder``), noted for
    :func:`remove_own_temps`; a signal cannot fall between the two."""
    with signals_deferred():
        made = tempfile.mkdtemp(**kw) if folder else tempfile.mkstemp(**kw)
        _OWN_TEMPS.add(made if folder else made[1])
    return made


def remove_own_temps() -> None:
    """Remove every temporary file or folder of this process still there (after an
    interruption that fell where no writer could clean up)."""
    for p in sorted(_OWN_TEMPS):
        with contextlib.suppress(OSError):
            if os.path.isdir(p) and not os.path.islink(p):
                shutil.rmtree(p)
            else:
                os.unlink(p)
    _OWN_TEMPS.clear()
