"""Reading input files safely: regular files only, of a bounded size.

A named pipe would make a reader wait forever for a writer, and a device such as
``/dev/zero`` never ends; both are refused before a byte is read, as is a file larger
than :data:`MAX_INPUT_BYTES`. The file is opened without blocking (a pipe with no
writer opens at once) and checked with ``fstat`` on the open descriptor, so what is
checked is what is read. Model files, case tables and hourly profiles go through here
(docs/validation.md, "Failure paths").
"""

from __future__ import annotations

import errno
import os
import stat
from pathlib import Path

from ..errors import ModelError, ModelErrors
from .textsafe import escape_controls

__all__ = ["MAX_INPUT_BYTES", "MAX_MODEL_ITEMS", "read_input", "check_input",
           "check_model_size"]

#: The largest input file read (64 MiB): far above any plant model or a year's hourly
#: profile (the demo year's profile is about 2 MB).
MAX_INPUT_BYTES = 64 * 1024 * 1024

#: The largest model accepted, in items (rows of every table, cases included); the
#: time and memory of the largest are in docs/validation.md ("Model size").
MAX_MODEL_ITEMS = 100_000

_KINDS = ((stat.S_ISFIFO, "a named pipe"), (stat.S_ISCHR, "a character device"),
          (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))


def _refuse(path: Path, message: str) -> ModelErrors:
    return ModelErrors([ModelError(message, file=escape_controls(str(path)))])


def _open_checked(path: Path, what: str) -> tuple[int, int]:
    """An open descriptor of ``path`` and its size, after the checks (see module).
    OSErrors of opening (not found, permission) pass through to the caller."""
    fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0)
                 | getattr(os, "O_CLOEXEC", 0))
    try:
        st = os.fstat(fd)
        if stat.S_ISDIR(st.st_mode):
            raise IsADirectoryError(errno.EISDIR, os.strerror(errno.EISDIR), str(path))
        if not stat.S_ISREG(st.st_mode):
            kind = next((k for test, k in _KINDS if test(st.st_mode)), "a special file")
            raise _refuse(path, f"is {kind}, not a regular file: a {what} is read from "
                                "an ordinary file only")
        if st.st_size > MAX_INPUT_BYTES:
            raise _refuse(path, _too_large(st.st_size, what))
    except BaseException:
        os.close(fd)
        raise
    return fd, st.st_size


def _too_large(size: int, what: str) -> str:
    return (f"is {size / 2**20:,.1f} MB; a {what} is read up to "
            f"{MAX_INPUT_BYTES // 2**20} MB")


def read_input(path: str | Path, what: str = "model file") -> bytes:
    """The bytes of ``path``, a regular file of at most :data:`MAX_INPUT_BYTES`.

    Raises :class:`~steamnet.errors.ModelErrors` for a pipe, device, socket or a file
    too large, :class:`IsADirectoryError` for a folder, and the usual ``OSError`` when
    the file cannot be opened.
    """
    path = Path(path)
    fd, _ = _open_checked(path, what)
    with os.fdopen(fd, "rb") as fh:
        data = fh.read(MAX_INPUT_BYTES + 1)      # a file that grew while read
    if len(data) > MAX_INPUT_BYTES:
        raise _refuse(path, _too_large(len(data), what))
    return data


def check_input(path: str | Path, what: str) -> None:
    """Raise as :func:`read_input` would, for a reader that opens ``path`` itself;
    ``OSError`` of opening becomes a :class:`~steamnet.errors.ModelError` too."""
    path = Path(path)
    try:
        fd, _ = _open_checked(path, what)
    except IsADirectoryError:
        raise _refuse(path, f"is a folder, not a {what}") from None
    except FileNotFoundError:
        raise _refuse(path, "file not found") from None
    except OSError as exc:
        raise _refuse(path, f"cannot read: {exc.strerror}") from None
    os.close(fd)


def check_model_size(doc: dict, source: str) -> None:
    """Refuse a model of more than :data:`MAX_MODEL_ITEMS` items before it is validated
    (validating takes memory in proportion to the items)."""
    n = sum(len(v) for v in doc.values() if isinstance(v, list))
    if n > MAX_MODEL_ITEMS:
        raise ModelErrors([ModelError(
            f"{n:,} items: this program checks and solves models of up to "
            f"{MAX_MODEL_ITEMS:,} items (rows of every table, cases included; see "
            "docs/validation.md, 'Model size')", file=escape_controls(source))])
