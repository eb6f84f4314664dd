"""Verdicts and their look: one restrained palette for every sheet.

A verdict (of a station check) and a case status (of the balance) share one scale of
severity, so that a failed check and an infeasible case read the same way everywhere.
"""

from __future__ import annotations

from openpyxl.styles import Alignment, Font, PatternFill

__all__ = ["VERDICTS", "SEVERITY", "normalise", "display", "rank", "worst", "fill_of",
           "font_of", "HEADING_FILL", "HEADING_FONT", "TITLE_FONT", "NOTE_FONT",
           "WRAP_TOP", "LEGEND", "is_bad_status", "GROUP_FILL", "CENTRE_WRAP"]

#: Verdicts of the station checks, worst first.
VERDICTS = ("fail", "warn", "not_assessed", "ok", "not_applicable")

#: Case statuses of the balance (steamnet.solve.CaseResult.status).
STATUSES = ("infeasible", "error", "not_converged", "solved")

#: Severity rank of every verdict or status word (lower is worse).
SEVERITY = {"infeasible": 0, "error": 0, "not_converged": 0, "fail": 0, "warn": 1,
            "not_assessed": 2, "not_run": 2, "ok": 3, "solved": 3, "not_applicable": 4}

# (fill, font colour, bold, italic) per severity group.
_LOOK = {
    0: ("F4CCCC", "7A1F1F", True, False),     # fail / infeasible: pale red, dark red
    1: ("FCE8B2", "6B4E00", False, False),    # warn: pale amber
    2: ("E7E6E6", "404040", False, True),     # not assessed / not run: pale grey
    3: ("E2EFDA", "2F4F1F", False, False),    # ok / solved: pale green
    4: (None, "7F7F7F", False, False),        # not applicable: grey text only
}

HEADING_FILL = PatternFill("solid", fgColor="3A4B5C")
HEADING_FONT = Font(bold=True, color="FFFFFF")
GROUP_FILL = PatternFill("solid", fgColor="5B6E80")
CENTRE_WRAP = Alignment(wrap_text=True, vertical="center", horizontal="center")
TITLE_FONT = Font(bold=True, size=14, color="1F2D3A")
NOTE_FONT = Font(italic=True, color="595959")
WRAP_TOP = Alignment(wrap_text=True, vertical="top")


def normalise(word) -> str:
    """'Not assessed' / 'not-assessed' / 'NOT_ASSESSED' -> 'not_assessed'."""
    return str(word).strip().lower().replace(" ", "_").replace("-", "_")


def display(word) -> str:
    """How a verdict or status is written in the workbook: 'not_assessed' -> 'not
    assessed'."""
    return normalise(word).replace("_", " ")


def rank(word) -> int | None:
    """Severity rank (0 worst), None for a word that is not a verdict or status."""
    return SEVERITY.get(normalise(word)) if word is not None else None


def worst(words) -> str | None:
    """The most severe of some verdict words (None when there is none)."""
    best = None
    for w in words:
        r = rank(w)
        if r is not None and (best is None or r < best[0]):
            best = (r, normalise(w))
    return best[1] if best else None


def is_bad_status(status: str) -> bool:
    """A case that did not solve (infeasible, not converged, error)."""
    return normalise(status) != "solved"


def fill_of(word) -> PatternFill | None:
    """The fill of a verdict or status (a solved case is left plain: only a case that did
    not balance is marked)."""
    r = rank(word)
    if r is None or _LOOK[r][0] is None or normalise(word) == "solved":
        return None
    return PatternFill("solid", fgColor=_LOOK[r][0])


def font_of(word) -> Font | None:
    r = rank(word)
    if r is None or normalise(word) == "solved":
        return None
    _, colour, bold, italic = _LOOK[r]
    return Font(color=colour, bold=bold, italic=italic)


#: The legend on the cover: word, meaning.
LEGEND = [
    ("fail", "A limit is exceeded: the station or case cannot run like this."),
    ("warn", "Inside the limits but close to one, or outside good practice: review."),
    ("not_assessed", "The check could not be made (data missing, e.g. no valve "
                     "coefficient given); nothing is known either way."),
    ("ok", "Inside every limit checked."),
    ("not_applicable", "The check does not apply (e.g. the station passes no steam in "
                       "this case)."),
    ("infeasible", "The case cannot balance: a header is short or long of steam with "
                   "every element that could close it at a limit. Its numbers show where "
                   "it stands, not a valid operating point."),
    ("not_converged", "The balance did not converge; its numbers are not a result."),
    ("error", "The case could not be computed (e.g. a state outside IAPWS-IF97)."),
]
