"""Result rows of the station checks and the grading against limits.

A check never raises for a limit it breaks: it returns a :class:`CheckRow` with a
:class:`Status`. Missing data give ``not_assessed`` (never a silent pass); a check that
does not concern the station or the case gives ``not_applicable``.
"""

from __future__ import annotations

from enum import Enum
from typing import NamedTuple

from ..status import beyond

__all__ = ["Status", "CheckRow", "CHECK_COLUMNS", "SEVERITY", "worst", "grade_high",
           "grade_low"]


class Status(str, Enum):
    """Verdict of one check."""

    OK = "ok"
    WARN = "warn"
    FAIL = "fail"
    NOT_ASSESSED = "not_assessed"
    NOT_APPLICABLE = "not_applicable"


#: Order for "worst verdict": a check that could not be assessed ranks above a pass.
SEVERITY = {Status.NOT_APPLICABLE: 0, Status.OK: 1, Status.NOT_ASSESSED: 2,
            Status.WARN: 3, Status.FAIL: 4}


def worst(statuses) -> Status:
    """The most severe of some verdicts (``not_applicable`` when there are none).

    Parameters
    ----------
    statuses : iterable of Status
        Verdicts [-]

    Returns
    -------
    status : Status
        Most severe verdict by :data:`SEVERITY` [-]
    """
    return max(statuses, key=SEVERITY.__getitem__, default=Status.NOT_APPLICABLE)


#: Columns of the checks table, in the order of :class:`CheckRow`'s fields.
CHECK_COLUMNS = ("case", "station", "check", "value", "limit", "unit", "status", "basis",
                 "source", "advice")


class CheckRow(NamedTuple):
    """One check of one station in one case (or across cases).

    An immutable named tuple (a year of hourly trip cases makes about a million of
    them, and a tuple is made several times faster than a frozen dataclass); its
    fields are in the order of the columns of the checks table.

    Attributes
    ----------
    case : str
        Case name, or ``"all cases"`` for checks across cases [-]
    station : str
        Station name [-]
    check : str
        Stable snake_case identifier, e.g. ``"spray_capacity"``; its page is
        ``docs/checks/<check>.md`` [-]
    value : float or None
        Checked value in the display unit ``unit``; None when not assessed or not
        applicable [unit]
    limit : float or None
        The limit the value was judged against (the one crossed, or the nearest one
        when the check passes), in ``unit`` [unit]
    unit : str
        Display unit of value and limit: ``"%"``, ``"K"``, ``"t/h"``, ``"bar"``,
        ``"m/s"``, ``"m"`` or ``"-"`` for a ratio [-]
    status : Status
        Verdict [-]
    basis : str
        How the value was obtained, e.g. ``"IEC 60534-2-1, compressible, choked"`` [-]
    source : str
        Where the limit comes from, e.g. ``"common practice, no source"`` [-]
    advice : str
        One sentence for the reader; for ``not_assessed`` it names the data needed [-]
    """

    case: str
    station: str
    check: str
    value: float | None
    limit: float | None
    unit: str
    status: Status
    basis: str
    source: str
    advice: str


def grade_high(value: float, warn: float | None, fail: float | None
               ) -> tuple[Status, float | None]:
    """Verdict of a value that must stay below its limits.

    Parameters
    ----------
    value : float
        Checked value [any unit]
    warn : float or None
        Warn above this (by more than ``steamnet.status.LIMIT_REL_TOL``); None for
        no warning level [same unit]
    fail : float or None
        Fail above this (the same tolerance); None for no failure level [same unit]

    Returns
    -------
    status, limit : Status, float or None
        Verdict and the limit it refers to [-], [same unit]
    """
    return _grade(value, warn, fail, True)


def grade_low(value: float, warn: float | None, fail: float | None
              ) -> tuple[Status, float | None]:
    """Verdict of a value that must stay above its limits.

    Parameters
    ----------
    value : float
        Checked value [any unit]
    warn : float or None
        Warn below this (by more than ``steamnet.status.LIMIT_REL_TOL``); None for
        no warning level [same unit]
    fail : float or None
        Fail below this (the same tolerance); None for no failure level [same unit]

    Returns
    -------
    status, limit : Status, float or None
        Verdict and the limit it refers to [-], [same unit]
    """
    return _grade(value, warn, fail, False)


def _grade(value, warn, fail, above: bool) -> tuple[Status, float | None]:
    # a value at a limit (within steamnet.status.LIMIT_REL_TOL) is not beyond it
    if fail is not None and beyond(value, fail, above=above):
        return Status.FAIL, fail
    if warn is not None and beyond(value, warn, above=above):
        return Status.WARN, warn
    return Status.OK, warn if warn is not None else fail
