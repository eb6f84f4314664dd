"""Replace a folder of output files as a whole.

The files are written into a hidden temporary folder beside the target
(``.NAME.steamnet-HOST-PID.new.XXXX``), and that folder is swapped in when every file
is complete: an atomic exchange of the two folders where the system offers one
(Linux's ``renameat2(RENAME_EXCHANGE)``), else two renames (the target moved aside to
``….old.…``, the new folder moved in, the old one removed; an interruption between
the two is mended by the next run, :func:`steamnet.io.atomic.remove_stale`). So a
reader, or a second run at the same time, never sees a mixture of two runs, and files
of ours that the new run did not write (a study that no longer runs) are gone.

Files that are not ours (``is_ours(name)`` false, e.g. a note the user keeps there)
are carried into the new folder (hard-linked, or copied where linking is refused); a
target holding a subfolder or a special file is refused, since moving it could lose
something. A read-only target folder, or a read-only file of ours in it, is refused
too (:func:`steamnet.io.atomic.refuse_unwritable`).
"""

from __future__ import annotations

import contextlib
import ctypes
import ctypes.util
import errno
import os
import shutil
import tempfile
from pathlib import Path
from typing import Callable, Iterator

from .atomic import (OutputError, make_temp, output_errors, refuse_unwritable, remove_stale,
                     temp_prefix)
from .signals import signals_deferred

__all__ = ["atomic_folder"]

_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def _exchange(a: Path, b: Path) -> bool:
    """Swap two folders atomically; False where the system cannot."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    fn.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p,
                   ctypes.c_uint]
    if fn(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE) == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False
    raise OSError(err, os.strerror(err), str(b))


def _swap_in(new: Path, target: Path) -> None:
    with signals_deferred():              # never interrupted between two renames
        _swap(new, target)


def _swap(new: Path, target: Path) -> None:
    if not os.path.lexists(target):
        os.rename(new, target)
        return
    if _exchange(new, target):
        shutil.rmtree(new, ignore_errors=True)          # now holds the old files
        return
    old = Path(tempfile.mkdtemp(prefix=temp_prefix(target) + "old.", dir=target.parent))
    os.rmdir(old)
    os.rename(target, old)
    try:
        os.rename(new, target)
    except BaseException:
        os.rename(old, target)
        raise
    shutil.rmtree(old, ignore_errors=True)


def _existing(target: Path, is_ours: Callable[[str], bool]) -> tuple[list[Path], dict, int]:
    """The files of ``target`` that are not ours (to carry over), the modes of ours, and
    the folder's mode."""
    refuse_unwritable(target)
    st = target.stat()
    keep, modes = [], {}
    for e in os.scandir(target):
        if not e.is_file(follow_symlinks=False):
            raise OutputError(f"{target}: holds '{e.name}', which is not a file this "
                              "program writes; write the CSV files into a folder of their "
                              "own (nothing was changed)")
        if is_ours(e.name):
            refuse_unwritable(e.path)
            modes[e.name] = e.stat(follow_symlinks=False).st_mode & 0o7777
        else:
            keep.append(Path(e.path))
    return keep, modes, st.st_mode & 0o7777


def _carry(keep: list[Path], modes: dict, new: Path) -> None:
    """Carry the files not ours into ``new``; give ours their previous modes."""
    for f in keep:
        if not (new / f.name).exists():
            try:
                os.link(f, new / f.name)
            except OSError:
                shutil.copy2(f, new / f.name)
    for name, m in modes.items():
        if (new / name).exists():
            os.chmod(new / name, m)


@contextlib.contextmanager
def atomic_folder(target: str | Path, is_ours: Callable[[str], bool]) -> Iterator[Path]:
    """Yield a temporary folder to write into; on success it replaces ``target``.

    Raises :class:`~steamnet.io.atomic.OutputError` when the folder cannot be
    written or swapped; ``target`` is then as it was.
    """
    target = Path(target)
    if target.is_symlink():
        target = target.resolve()
    parent = target.parent if str(target.parent) else Path(".")
    remove_stale(target)
    keep, modes, mode = [], {}, None
    if target.is_dir():
        keep, modes, mode = _existing(target, is_ours)
    try:
        new = Path(make_temp(folder=True, prefix=temp_prefix(target) + "new.", dir=parent))
    except OSError as exc:
        raise OutputError(f"{target}: cannot write in '{parent}': {exc.strerror}") \
            from None
    try:
        yield new
        with output_errors(target):
            _carry(keep, modes, new)
            if mode is None:
                umask = os.umask(0)
                os.umask(umask)
                mode = 0o777 & ~umask
            os.chmod(new, mode)
        try:
            _swap_in(new, target)
        except OSError as exc:
            raise OutputError(f"{target}: cannot replace the folder ({exc.strerror}); "
                              "the previous files are unchanged") from None
    except BaseException:
        shutil.rmtree(new, ignore_errors=True)
        raise
