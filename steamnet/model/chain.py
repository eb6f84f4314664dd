"""Chains of cases based on other cases, with loop detection, in one place.

A case of a model file, a row of a case table and a row of an hourly profile may each be
based on another; :func:`case_chain` walks such a chain from a case up to its root and
raises :class:`CaseLoop` (with the chain that closed the loop) when a name comes back.
"""

from __future__ import annotations

from typing import Callable, Hashable

__all__ = ["case_chain", "CaseLoop"]


class CaseLoop(Exception):
    """Cases based on each other in a loop; ``chain`` runs from the first case to the
    one that came back."""

    def __init__(self, chain: list):
        super().__init__(" -> ".join(map(str, chain)))
        self.chain = chain


def case_chain(name: Hashable, parent_of: Callable[[Hashable], Hashable | None]) -> list:
    """``[name, parent, grandparent, ...]`` while ``parent_of`` names a parent (None ends
    the chain).

    >>> case_chain("c", {"c": "b", "b": "a", "a": None}.get)
    ['c', 'b', 'a']
    >>> case_chain("c", {"c": "b", "b": "c"}.get)
    Traceback (most recent call last):
    ...
    steamnet.model.chain.CaseLoop: c -> b -> c
    """
    out = [name]
    seen = {name}
    nxt = parent_of(name)
    while nxt is not None:
        if nxt in seen:
            raise CaseLoop(out + [nxt])
        out.append(nxt)
        seen.add(nxt)
        nxt = parent_of(nxt)
    return out
