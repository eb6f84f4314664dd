"""A progress bar for long studies: tqdm on stderr, only on a terminal.

:class:`ProgressBar` is the ``progress(done, total, label)`` callback the studies take.
It draws nothing when stderr is not a terminal, when ``quiet`` is set, or while the work
has fewer than ``min_total`` steps, and it removes its line when closed, also after
Ctrl-C.
"""

from __future__ import annotations

import sys

__all__ = ["ProgressBar"]


class ProgressBar:
    """Callable ``progress(done, total, label)`` drawing one tqdm bar on stderr.

    Parameters
    ----------
    desc : str
        Text before the bar.
    quiet : bool
        Never draw.
    min_total : int
        Draw only for work of at least this many steps (a handful of cases needs none).
    stream : file, optional
        Where to draw (default ``sys.stderr``).
    """

    def __init__(self, desc: str, *, quiet: bool = False, min_total: int = 6,
                 stream=None):
        self.desc = desc
        self.stream = stream if stream is not None else sys.stderr
        isatty = getattr(self.stream, "isatty", None)
        self.enabled = not quiet and bool(isatty and isatty())
        self.min_total = min_total
        self.bar = None

    def __call__(self, done: int, total: int, label: str = "") -> None:
        if not self.enabled or total < self.min_total:
            return
        if self.bar is None:
            from tqdm import tqdm
            self.bar = tqdm(total=total, desc=self.desc, file=self.stream, leave=False,
                            unit="step", dynamic_ncols=True, mininterval=0.2)
        if total != self.bar.total:
            self.bar.total = total
        self.bar.set_postfix_str(str(label)[:32], refresh=False)
        self.bar.update(done - self.bar.n)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()
            self.bar = None

    def __enter__(self) -> "ProgressBar":
        return self

    def __exit__(self, *exc) -> None:
        self.close()
