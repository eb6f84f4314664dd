"""Where things stand in a model file's text: the line of each table header, the line
where an item starts, and the tables a file names that the format does not have.

Read from the text itself (the TOML reader keeps no positions), line by line: a table
header is a line that starts with ``[`` or ``[[``. A multi-line string holding such a
line could mislead it; the worst that does is a wrong line number in a message.

>>> text = '[site]\\nname = "A"\\n\\n[[letdown]]\\nname = "PRV-1"\\n[letdown.desuperheater]\\n'
>>> item_line(text, "letdown 'PRV-1'")
4
>>> unknown_tables('[[let_down]]\\nname = "x"\\n', {"letdown", "site"})
[(1, '[[let_down]]', 'let_down')]
"""

from __future__ import annotations

import re

__all__ = ["table_headers", "item_line", "unknown_tables"]

_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\]]+?)\s*(\]\]?)\s*(#.*)?$")
_NAME = re.compile(r"""^\s*name\s*=\s*(?:"((?:[^"\\]|\\.)*)"|'([^']*)')""")
_LABEL = re.compile(r"^(?:case '[^']*': )?([a-z][a-z _]*?) '([^']*)'")


def _first_key(dotted: str) -> str:
    key = dotted.split(".", 1)[0].strip()
    return key[1:-1] if len(key) > 1 and key[0] == key[-1] and key[0] in "\"'" else key


def table_headers(text: str) -> list[tuple[int, str, str, bool]]:
    """Every table header: (line, as written, its first key, an array of tables)."""
    out = []
    for i, line in enumerate(text.splitlines(), 1):
        m = _HEADER.match(line)
        if m and len(m.group(1)) == len(m.group(3)):
            out.append((i, f"{m.group(1)}{m.group(2)}{m.group(3)}",
                        _first_key(m.group(2)), m.group(1) == "[["))
    return out


def item_line(text: str, item: str | None, labels: dict[str, str] | None = None
              ) -> int | None:
    """The line where the item of a message (``"letdown 'PRV-1'"``, ``"case 'winter'"``,
    ``"site"``) starts: its ``[[table]]`` header (or ``[table]``); None when not found.
    ``labels`` maps a table to the word messages call it by (default the tables' own
    names with '_' read as a space)."""
    if not item:
        return None
    lines = text.splitlines()
    heads = table_headers(text)
    m = _LABEL.match(item)
    if m is None:                           # a bare table: site, prices, a stray table
        key = item.split(" ")[0]
        return next((ln for ln, _, k, _ in heads if k == key), None)
    word, name = m.group(1), m.group(2)
    tables = [t for t, w in (labels or {}).items() if w == word] or [word.replace(" ", "_")]
    for n, (ln, written, key, array) in enumerate(heads):
        if key not in tables or not array or "." in written.strip("[] "):
            continue
        end = heads[n + 1][0] - 1 if n + 1 < len(heads) else len(lines)
        for line in lines[ln:end]:
            nm = _NAME.match(line)
            if nm and (nm.group(1) if nm.group(1) is not None else nm.group(2)) == name:
                return ln
    return None


def unknown_tables(text: str, known: set[str]) -> list[tuple[int, str, str]]:
    """The table headers whose first key is not a table of the format: (line, as
    written, the key), each key once (its first header)."""
    seen: set[str] = set()
    out = []
    for ln, written, key, _ in table_headers(text):
        if key not in known and key not in seen:
            seen.add(key)
            out.append((ln, written, key))
    return out
