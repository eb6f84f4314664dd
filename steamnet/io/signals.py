"""SIGTERM and SIGHUP handled like Ctrl-C, and none of them cutting a step in two.

A service manager or ``kill`` ends a run with SIGTERM, a closed terminal with SIGHUP.
By default either ends Python at once, leaving the hidden temporary file of an output
beside it. While a command runs, both raise :class:`Terminated` instead (a
``KeyboardInterrupt``), which unwinds through the writers like Ctrl-C: the temporary
files are removed, the previous outputs kept, and the command exits 128 + the signal's
number. SIGKILL cannot be caught; the next run removes what it left
(:func:`steamnet.io.atomic.remove_stale`). Ctrl-C (SIGINT) goes through the same
handler, so that :func:`signals_deferred` holds all three back alike.
"""

from __future__ import annotations

import contextlib
import os
import signal
import threading
from typing import Iterator

__all__ = ["Terminated", "termination_as_interrupt", "signals_deferred"]

_SIGNALS = tuple(getattr(signal, n) for n in ("SIGTERM", "SIGHUP", "SIGINT")
                 if hasattr(signal, n))
_deferring = 0
_pending: list[int] = []


class Terminated(KeyboardInterrupt):
    """The run was ended by a signal; ``code`` is the exit code (128 + its number)."""

    def __init__(self, signum: int):
        self.signum = signum
        self.code = 128 + signum
        name = signal.Signals(signum).name
        self.text = f"terminated by {name}: nothing half-written was kept"
        super().__init__(self.text)


def _exception(signum: int) -> KeyboardInterrupt:
    return KeyboardInterrupt() if signum == signal.SIGINT else Terminated(signum)


@contextlib.contextmanager
def signals_deferred() -> Iterator[None]:
    """Within the block a handled signal waits; it is raised when the block ends.

    For the few steps that must not be cut in two: making a temporary file and noting
    it for removal, swapping a folder in."""
    global _deferring
    _deferring += 1
    try:
        yield
    finally:
        _deferring -= 1
        if not _deferring and _pending:
            signum = _pending.pop()
            _pending.clear()
            raise _exception(signum)


@contextlib.contextmanager
def termination_as_interrupt() -> Iterator[None]:
    """Within the block, SIGTERM and SIGHUP raise :class:`Terminated` in this process
    (worker processes forked meanwhile keep the default action)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    owner = os.getpid()

    def handler(signum, frame):
        if os.getpid() != owner:            # a forked worker: as by default
            if signum == signal.SIGINT:
                raise KeyboardInterrupt
            signal.signal(signum, signal.SIG_DFL)
            os.kill(os.getpid(), signum)
            return
        for s in previous:                  # the clean-up must not be cut short
            signal.signal(s, signal.SIG_IGN)
        if _deferring:
            _pending.append(signum)
            return
        raise _exception(signum)

    previous = {}
    for s in _SIGNALS:
        now = signal.getsignal(s)
        if now is signal.SIG_IGN or (s == signal.SIGINT
                                     and now is not signal.default_int_handler):
            continue                        # e.g. nohup: leave it as it is
        previous[s] = signal.signal(s, handler)
    try:
        yield
    finally:
        for s, h in previous.items():
            signal.signal(s, h)
