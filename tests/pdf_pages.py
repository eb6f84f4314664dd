"""What a PDF's pages hold, read with poppler-utils (pdftotext) and from the PDF itself.

- :func:`page_words`: each page's words with their boxes (``pdftotext -bbox``), in
  points of the printed page;
- :func:`pdf_pages`: each page's size, its text sizes as the PDF draws them (the size
  given to each ``Tf`` of the page's content, times the scale of the transformation in
  force, ``cm`` and ``Tm``, in points of the printed page) and the box of each picture
  (``Do``) with the part of it that shows inside the clipping in force.

A word's box is taller than its font (poppler spans the font's ascent to descent: 1.3 em
for the fonts LibreOffice embeds here), so the sizes are the measure of the text, the
boxes a cross-check that every page with words has sizes.

Only what LibreOffice's PDF export writes is read: plain (uncompressed or Flate) content
streams referenced from the page tree, no object streams.
"""

from __future__ import annotations

import html
import math
import re
import subprocess
import zlib
from dataclasses import dataclass, field
from pathlib import Path

_OBJ = re.compile(rb"(\d+)\s+0\s+obj\b(.*?)\bendobj", re.S)
_STREAM = re.compile(rb"stream\r?\n(.*)\bendstream", re.S)
_NUM = rb"[-+]?(?:\d+\.?\d*|\.\d+)"
_OPS = re.compile(rb"(?P<m>(?:" + _NUM + rb"\s+){6})(?P<op>cm|Tm)\b"
                  rb"|/[^\s/\[<(]+\s+(?P<tf>" + _NUM + rb")\s+Tf\b"
                  rb"|(?<![\w])(?P<q>[qQ]|BT)(?![\w])"
                  rb"|(?P<re>(?:" + _NUM + rb"\s+){4})re\s+W\*?\s+n\b"
                  rb"|(?P<do>/[^\s/]+)\s+Do\b")
_STRINGS = re.compile(rb"<[0-9A-Fa-f\s]*>|\((?:\\.|[^\\)])*\)", re.S)
_WORD = re.compile(r'<word xMin="([\d.]+)" yMin="([\d.]+)" xMax="([\d.]+)" '
                   r'yMax="([\d.]+)">([^<]*)</word>')


def _objects(data: bytes) -> dict[int, bytes]:
    return {int(m.group(1)): m.group(2) for m in _OBJ.finditer(data)}


def _refs(body: bytes, key: bytes) -> list[int]:
    m = re.search(rb"/" + key + rb"\s*(\[[^\]]*\]|\d+\s+0\s+R)", body)
    return [int(x) for x in re.findall(rb"(\d+)\s+0\s+R", m.group(1))] if m else []


def _pages(objs: dict[int, bytes], root: int) -> list[int]:
    body = objs[root]
    if re.search(rb"/Type\s*/Pages\b", body):
        return [p for k in _refs(body, b"Kids") for p in _pages(objs, k)]
    return [root]


def _content(objs: dict[int, bytes], page: int) -> bytes:
    out = b""
    for ref in _refs(objs[page], b"Contents"):
        body = objs[ref]
        raw = _STREAM.search(body).group(1)
        out += (zlib.decompress(raw) if b"/FlateDecode" in body.split(b"stream")[0]
                else raw) + b"\n"
    return out


def _scale(m: list[float]) -> float:
    """The scale of a 2-D matrix (a b c d e f) on text height (its y axis)."""
    return math.hypot(m[2], m[3])


def _times(m, n):
    a, b, c, d, e, f = m
    A, B, C, D, E, F = n
    return [a * A + b * C, a * B + b * D, c * A + d * C, c * B + d * D,
            e * A + f * C + E, e * B + f * D + F]


def _box(m, x0, y0, x1, y1):
    """The box a matrix maps the rectangle (x0, y0)-(x1, y1) to."""
    pts = [(x * m[0] + y * m[2] + m[4], x * m[1] + y * m[3] + m[5])
           for x in (x0, x1) for y in (y0, y1)]
    xs, ys = [p[0] for p in pts], [p[1] for p in pts]
    return min(xs), min(ys), max(xs), max(ys)


def _inside(a, b, tol=0.5) -> tuple:
    """Box ``a`` cut to box ``b``."""
    return (max(a[0], b[0] - tol), max(a[1], b[1] - tol), min(a[2], b[2] + tol),
            min(a[3], b[3] + tol))


@dataclass
class Page:
    """One page as drawn: its size, its text sizes, and each picture's box as drawn
    and the part of it that shows (inside the clipping in force and the page) [pt]."""

    width: float
    height: float
    sizes: list[float] = field(default_factory=list)
    pictures: list[tuple[tuple, tuple]] = field(default_factory=list)


def pdf_pages(pdf: Path) -> list[Page]:
    """Each page of ``pdf`` as drawn, in page order."""
    data = Path(pdf).read_bytes()
    objs = _objects(data)
    cat = int(re.search(rb"/Root\s+(\d+)\s+0\s+R", data).group(1))
    pages_root = _refs(objs[cat], b"Pages")[0]
    out = []
    for page in _pages(objs, pages_root):
        box = [float(x) for x in re.search(rb"/MediaBox\s*\[([^\]]*)\]",
                                           objs[page]).group(1).split()]
        pg = Page(box[2] - box[0], box[3] - box[1])
        text = _STRINGS.sub(b" ", _content(objs, page))
        ctm, tm, clip = [1.0, 0, 0, 1.0, 0, 0], [1.0, 0, 0, 1.0, 0, 0], tuple(box)
        stack = []
        for m in _OPS.finditer(text):
            if m.group("q") == b"q":
                stack.append((ctm, clip))
            elif m.group("q") == b"BT":
                tm = [1.0, 0, 0, 1.0, 0, 0]
            elif m.group("q") == b"Q":
                ctm, clip = stack.pop() if stack else (ctm, clip)
            elif m.group("op") == b"cm":
                ctm = _times([float(x) for x in m.group("m").split()], ctm)
            elif m.group("op") == b"Tm":
                tm = [float(x) for x in m.group("m").split()]
            elif m.group("tf") is not None:
                pg.sizes.append(float(m.group("tf")) * _scale(tm) * _scale(ctm))
            elif m.group("re") is not None:
                x, y, w, h = (float(v) for v in m.group("re").split())
                clip = _inside(_box(ctm, x, y, x + w, y + h), clip, tol=0.0)
            elif m.group("do") is not None:
                drawn = _box(ctm, 0, 0, 1, 1)
                pg.pictures.append((drawn, _inside(drawn, clip, tol=0.0)))
        out.append(pg)
    return out


def page_words(pdf: Path) -> list[list[tuple[str, float, float, float, float]]]:
    """Each page's words as (text, x_min, y_min, x_max, y_max) [pt], in page order."""
    res = subprocess.run(["pdftotext", "-bbox", str(pdf), "-"], capture_output=True,
                         text=True, check=True)
    pages = res.stdout.split("<page ")[1:]
    return [[(html.unescape(w[4]), *map(float, w[:4])) for w in _WORD.findall(p)]
            for p in pages]
