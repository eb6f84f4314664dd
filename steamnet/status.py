"""The status of a solved case, as a type.

:class:`CaseStatus` is a :class:`enum.StrEnum`: a member is equal to its text
(``CaseStatus.SOLVED == "solved"``) and prints as it, so tables, JSON and the workbook
carry the plain words.
"""

from __future__ import annotations

from enum import StrEnum

__all__ = ["CaseStatus"]


class CaseStatus(StrEnum):
    """How the balance of one case ended (docs/results.md)."""

    #: Every header's mass and energy balance closes within every limit.
    SOLVED = "solved"
    #: No operating mode balances within the limits; the message names the header.
    INFEASIBLE = "infeasible"
    #: The iteration stopped before the balance closed.
    NOT_CONVERGED = "not_converged"
    #: The case could not be solved (bad changes, a state outside IAPWS-IF97, a fault).
    ERROR = "error"
