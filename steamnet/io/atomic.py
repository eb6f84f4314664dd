"""Write a file so that a failure never leaves it half-written or destroys the old one.

The content goes to a temporary file in the target's folder, is flushed to disk, and is
then moved over the target with :func:`os.replace` (atomic on POSIX and Windows). If
anything fails, the temporary file is removed and the previous target is untouched.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path
from typing import Callable, Iterator

from ..errors import SteamnetError

__all__ = ["OutputError", "atomic_path", "write_atomic"]


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
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix or ".tmp",
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
        try:
            writer(tmp)
        except OSError as exc:       # disk full, permissions, ...: not an internal error
            raise OutputError(f"{target}: cannot write ({exc.strerror or exc}); the "
                              "previous file, if any, is unchanged") from None
