"""Scope in which the cyclic garbage collector skips its full collections.

A sweep keeps every case's result, so the heap grows by some ten thousand objects a
case, and each full collection walks all of them: with the default thresholds a year
of hourly cases spends a tenth of its time there, while the solve makes no cyclic
garbage that a young collection would not find. Inside :func:`young_collections_only`
only the young generations are collected; the thresholds are restored on leaving.
"""

from __future__ import annotations

import gc
from contextlib import contextmanager

__all__ = ["young_collections_only"]


@contextmanager
def young_collections_only():
    """Collect only generations 0 and 1 inside the block (nested use is fine)."""
    old = gc.get_threshold()
    gc.set_threshold(old[0], old[1], 2**31 - 1)
    try:
        yield
    finally:
        gc.set_threshold(*old)
