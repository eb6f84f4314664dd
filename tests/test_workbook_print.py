"""The demo workbook as a reader prints it: opened in LibreOffice Calc (headless) and
exported to PDF, on A4 (the paper the workbook declares) and on US Letter.

Skipped, with the reason, where LibreOffice (`soffice`) or poppler-utils (`pdftotext`)
is not on the PATH; `.ci/run` installs both on Debian. One LibreOffice run converts both
workbooks, and one test reads them (several tests would each convert again in their own
pytest-xdist worker). The pages are read with poppler's word boxes and from
the PDF's own drawing (tests/pdf_pages.py), so nothing of steamnet measures itself here.
"""

from __future__ import annotations

import hashlib
import io
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import openpyxl
import pytest
from PIL import Image

import steamnet
from conftest import DEMO
from pdf_pages import page_words, pdf_pages
from steamnet.workbook.network import SMALLEST_PT

SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")
PDFTOTEXT = shutil.which("pdftotext")

#: The smallest printed text that reads on paper at arm's length [pt] (common practice,
#: no source).
LEGIBLE_PT = 7.0
#: Pages of the demo workbook (the README's demo command) at most. Measured with
#: LibreOffice 7.4: 109 on A4 and about as many on Letter once the four station sheets
#: were folded into two (Stations, Station summary) and the findings moved up front; it
#: was 122 on A4 with the four (the long check table alone took a dozen pages). The
#: bound leaves room for a few more rows or columns (about 5 %), not for a sheet split
#: at random or a station sheet unfolded again.
DEMO_PAGE_BOUND = 115
#: Paper sizes [pt]: ISO 216 A4 210 x 297 mm, ANSI US Letter 8.5 x 11 in.
PAPER_PT = {"A4": (595.28, 841.89), "Letter": (612.0, 792.0)}
#: OOXML paperSize codes (ECMA-376 Part 1, 18.3.1.63): 1 Letter, 9 A4.
PAPER_CODE = {"A4": "9", "Letter": "1"}

pytestmark = pytest.mark.skipif(
    SOFFICE is None or PDFTOTEXT is None,
    reason="needs LibreOffice Calc (soffice) and poppler-utils (pdftotext) on the PATH; "
           "on Debian: apt-get install libreoffice-calc-nogui poppler-utils")


def _on_paper(src: Path, dst: Path, paper: str) -> None:
    """A copy of the workbook whose sheets declare ``paper`` (the XML attribute only)."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as z:
        for item in zin.infolist():
            data = zin.read(item.filename)
            if item.filename.startswith("xl/worksheets/sheet"):
                data = data.replace(b'paperSize="9"', f'paperSize="{PAPER_CODE[paper]}"'
                                    .encode())
            z.writestr(item, data)


def _printed(d: Path) -> dict:
    """The README's demo workbook and its PDF on each paper: {paper: (sheets, pages,
    words)}."""
    book = d / "A4.xlsx"
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", "report", str(DEMO),
                        "--out", str(book), "--new-user", "LP=12 t/h", "--quiet"],
                       capture_output=True, text=True)
    # exit 1: the invented demo fails station checks by design; the workbook is written
    assert r.returncode == 1 and book.exists(), r.stderr
    _on_paper(book, d / "Letter.xlsx", "Letter")
    profile = (d / "lo-profile").as_uri()        # its own profile: no lock with others
    r = subprocess.run([SOFFICE, f"-env:UserInstallation={profile}", "--headless",
                        "--convert-to", "pdf", "--outdir", str(d / "pdf"),
                        str(book), str(d / "Letter.xlsx")],
                       capture_output=True, text=True, timeout=300)
    wb = openpyxl.load_workbook(book)
    sheets = wb.sheetnames
    out = {"figures": {}}
    for name in ("Network", "Network, worst case"):
        (img,) = wb[name]._images
        png = Image.open(io.BytesIO(img._data()))
        out["figures"][name] = png.width / png.info["dpi"][0] * 72   # figure width [pt]
    for paper in PAPER_PT:
        pdf = d / "pdf" / f"{paper}.pdf"
        assert pdf.exists(), f"LibreOffice wrote no {pdf.name}: {r.stdout} {r.stderr}"
        out[paper] = (sheets, pdf_pages(pdf), page_words(pdf))
    return out


def _margin_text(words, page, top: bool) -> str:
    """The words of the page header (top) or footer, in reading order."""
    band = 0.75 * 72                              # the top and bottom margins [pt]
    sel = [w for w in words if (w[4] <= band if top else w[2] >= page.height - band)]
    return " ".join(w[0] for w in sorted(sel, key=lambda w: (round(w[2]), w[1])))


def test_demo_workbook_prints_legibly_on_a4_and_letter(tmp_path):
    printed = _printed(tmp_path)
    for paper in PAPER_PT:
        _every_sheet_prints_in_order_with_its_header_and_footer(printed, paper)
        _page_count_within_the_demo_bound(printed, paper)
        _text_on_every_page_is_legible(printed, paper)
        _network_drawing_prints_whole_on_one_page(printed, paper)


def _every_sheet_prints_in_order_with_its_header_and_footer(printed, paper):
    sheets, pages, words = printed[paper]
    plant = steamnet.load_model(DEMO).site.name
    sha = hashlib.sha256(DEMO.read_bytes()).hexdigest()   # the model file's own bytes
    assert len(pages) == len(words)
    seen = []
    for i, (page, ws) in enumerate(zip(pages, words), 1):
        w, h = sorted((page.width, page.height))
        assert (w, h) == pytest.approx(PAPER_PT[paper], abs=1.0), (paper, i)
        head = _margin_text(ws, page, top=True)
        assert head.startswith(plant + " "), (i, head)
        sheet = head[len(plant) + 1:]
        assert sheet in sheets, (i, head)
        if not seen or seen[-1] != sheet:
            seen.append(sheet)
        foot = _margin_text(ws, page, top=False)
        assert sha in foot and f"steamnet {steamnet.__version__}" in foot, (i, foot)
        assert f"page {i} of {len(pages)}" in foot, (i, foot)
    assert seen == sheets, paper    # every sheet converted, each once, in reading order


def _page_count_within_the_demo_bound(printed, paper):
    sheets, pages, _ = printed[paper]
    assert len(sheets) <= len(pages) <= DEMO_PAGE_BOUND, (paper, len(pages))


def _text_on_every_page_is_legible(printed, paper):
    _, pages, words = printed[paper]
    for i, (page, ws) in enumerate(zip(pages, words), 1):
        assert ws and page.sizes, f"{paper}: page {i} has no text"
        assert min(page.sizes) >= LEGIBLE_PT, (paper, i, min(page.sizes))
        # a word's box spans the font's ascent to descent: never shorter than the text
        assert min(w[4] - w[2] for w in ws) >= LEGIBLE_PT, (paper, i)


def _network_drawing_prints_whole_on_one_page(printed, paper):
    """Each network sheet (the base case, the worst case) prints whole on one page, and
    its smallest label at LEGIBLE_PT or more: the drawing's font sizes are in points of
    its own figure (the PNG's size in pixels over its resolution, pHYs), so a label
    prints at its size times the printed width over the figure's width."""
    sheets, pages, words = printed[paper]
    figures = printed["figures"]
    for sheet in ("Network", "Network, worst case"):
        on = [p for p, ws in zip(pages, words)
              if _margin_text(ws, p, top=True).endswith(" " + sheet)]
        assert len(on) == 1, (paper, sheet, len(on))
        (page,) = on
        assert len(page.pictures) == 1, paper
        drawn, shown = page.pictures[0]
        assert shown == pytest.approx(drawn, abs=0.5), paper    # nothing of it clipped
        x0, y0, x1, y1 = drawn
        assert x0 >= 0 and y0 >= 0 and x1 <= page.width and y1 <= page.height
        fig_w_pt = figures[sheet]
        assert SMALLEST_PT * (x1 - x0) / fig_w_pt >= LEGIBLE_PT, (paper, sheet)
