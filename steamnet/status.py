"""The status of a solved case, as a type.

:class:`CaseStatus` is a :class:`enum.StrEnum`: a member is equal to its text
(``CaseStatus.SOLVED == "solved"``) and prints as it, so tables, JSON and the workbook
carry the plain words.
"""

from __future__ import annotations

from enum import StrEnum

__all__ = ["CaseStatus", "LIMIT_REL_TOL", "beyond"]


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


#: Relative tolerance of every comparison of a value with a limit (station checks,
#: balance flags, input checks): a value within it of the limit is *at* the limit and is
#: graded by the limit's own rule, so "warn below 10 K" does not warn at 10 K computed
#: as 9.9999999999 K (docs/checks/index.md).
LIMIT_REL_TOL = 1e-9


def beyond(value: float, limit: float, *, above: bool) -> bool:
    """Whether ``value`` lies beyond ``limit`` by more than :data:`LIMIT_REL_TOL`
    (relative to the limit): above it when ``above``, else below it.

    >>> beyond(10.0 - 1e-12, 10.0, above=False), beyond(9.99, 10.0, above=False)
    (False, True)
    >>> beyond(0.0, 0.0, above=True), beyond(1e-300, 0.0, above=True)
    (False, True)
    """
    slack = LIMIT_REL_TOL * abs(limit)
    return value > limit + slack if above else value < limit - slack
