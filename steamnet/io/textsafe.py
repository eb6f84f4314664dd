"""Text that is safe to show: control characters escaped, formula-like cells guarded.

* :func:`escape_controls` writes control characters (C0, DEL, C1, and the Unicode
  bidirectional overrides that reorder what a terminal shows) as ``\\n``, ``\\x1b``,
  ``\\u202e``, so that a name or file name in a message cannot start a second line
  (forging an ``error:`` line) or move the cursor.
* :func:`formula_like` tells whether a spreadsheet could take text for a formula: it
  begins with = + - @ after any blanks (space, tab, carriage return, line feed), or
  begins with a tab or carriage return itself, as OWASP's "CSV Injection" guidance
  describes (common practice, no source beyond it).
"""

from __future__ import annotations

import re

__all__ = ["escape_controls", "formula_like", "has_controls", "FORMULA_SIGNS"]

#: First characters that make a spreadsheet read a cell as a formula.
FORMULA_SIGNS = ("=", "+", "-", "@")

_CONTROLS = re.compile("[\x00-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}
_BLANKS = " \t\r\n"


def _escape_one(m: re.Match) -> str:
    ch = m.group(0)
    if ch in _NAMED:
        return _NAMED[ch]
    code = ord(ch)
    return f"\\x{code:02x}" if code <= 0xFF else f"\\u{code:04x}"


def has_controls(text: str) -> bool:
    """True when ``text`` holds a character :func:`escape_controls` would escape."""
    return _CONTROLS.search(text) is not None


def escape_controls(text: str) -> str:
    """``text`` with every control character written as an escape (see module)."""
    return _CONTROLS.sub(_escape_one, text)


def formula_like(text: str) -> bool:
    """True when a spreadsheet could read ``text`` as a formula (see module)."""
    if text[:1] in ("\t", "\r"):
        return True
    return text.lstrip(_BLANKS).startswith(FORMULA_SIGNS)


def control_error(text: str, **where):
    """The :class:`~steamnet.errors.ModelError` of a name holding control characters
    (shown escaped), for a reader that names things outside the schema (case tables)."""
    from ..errors import ModelError
    return ModelError(f"name '{escape_controls(text)}' holds control characters (a line "
                      "break, tab, escape, ...); write the name on one line in plain "
                      "characters", **where)
