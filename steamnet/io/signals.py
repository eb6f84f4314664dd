"""SIGTERM and SIGHUP handled like Ctrl-C.

A service manager or ``kill`` ends a run with SIGTERM, a closed terminal with SIGHUP.
By default either ends Python at once, leaving the hidden temporary file of an output
beside it. While a command runs, both raise :class:`Terminated` instead (a
``KeyboardInterrupt``), which unwinds through the writers like Ctrl-C: the temporary
files are removed, the previous outputs kept, and the command exits 128 + the signal's
number. SIGKILL cannot be caught; the next run removes what it left
(:func:`steamnet.io.atomic.remove_stale`).
"""

from __future__ import annotations

import contextlib
import os
import signal
import threading
from typing import Iterator

__all__ = ["Terminated", "termination_as_interrupt"]

_SIGNALS = tuple(getattr(signal, n) for n in ("SIGTERM", "SIGHUP") if hasattr(signal, n))


class Terminated(KeyboardInterrupt):
    """The run was ended by a signal; ``code`` is the exit code (128 + its number)."""

    def __init__(self, signum: int):
        self.signum = signum
        self.code = 128 + signum
        name = signal.Signals(signum).name
        self.text = f"terminated by {name}: nothing half-written was kept"
        super().__init__(self.text)


@contextlib.contextmanager
def termination_as_interrupt() -> Iterator[None]:
    """Within the block, SIGTERM and SIGHUP raise :class:`Terminated` in this process
    (worker processes forked meanwhile keep the default action)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    owner = os.getpid()

    def handler(signum, frame):
        if os.getpid() != owner:            # a forked worker: end as by default
            signal.signal(signum, signal.SIG_DFL)
            os.kill(os.getpid(), signum)
            return
        for s in _SIGNALS:                  # the clean-up must not be cut short
            signal.signal(s, signal.SIG_IGN)
        raise Terminated(signum)

    previous = {}
    for s in _SIGNALS:
        if signal.getsignal(s) is signal.SIG_IGN:    # e.g. nohup: leave it ignored
            continue
        previous[s] = signal.signal(s, handler)
    try:
        yield
    finally:
        for s, h in previous.items():
            signal.signal(s, h)
