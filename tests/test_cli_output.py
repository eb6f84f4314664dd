"""What the console prints (README, docs/results.md): `solve` shows each case's
turbines, let-downs with their spray and the deaerator; `stations` a compact spray table
before the findings; verdict words spelled as in the workbook and the JSON export; input
errors give the line where the item starts and the known names of a misspelt reference,
and a misspelt table name is an unknown table.

Expected values come from the model file's own text (the lines counted here) and the
solver's equipment table (the console is checked for showing it, not for computing it).
"""

from __future__ import annotations

import json
import re
import subprocess
import sys

import pytest

import steamnet
from conftest import DEMO

UNDERSCORED = re.compile(r"\b(not_assessed|not_applicable|not_converged|NOT[ _]ASSESSED|"
                         r"INFEASIBLE|NOT[ _]CONVERGED)\b")


def _run(*args):
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *args],
                          capture_output=True, text=True)


@pytest.fixture(scope="module")
def solved():
    return steamnet.solve_cases(steamnet.load_model(DEMO))


def test_solve_prints_turbines_letdowns_with_spray_and_the_deaerator(solved):
    r = _run("solve", str(DEMO))
    assert r.returncode == 1, r.stderr           # the demo's trip case fails by design
    blocks = re.split(r"\ncase '", r.stdout)[1:]
    assert len(blocks) == len(solved.cases)
    for block, c in zip(blocks, solved.cases):
        assert block.startswith(f"{c.case}': solved")
        eq = c.equipment
        for row in eq[eq["type"].isin(["turbine", "extraction_turbine"])].itertuples():
            assert re.search(rf"turbine\s+{re.escape(row.item)}\s.*steam\s+"
                             rf"{row.flow_t_h:.1f} t/h", block), row.item
        for row in eq[eq["type"] == "letdown"].itertuples():
            assert re.search(rf"let-down\s+{re.escape(row.item)}\s.*spray\s+"
                             rf"{row.spray_t_h:.2f} t/h", block), row.item
        (da,) = eq[eq["type"] == "deaerator"].itertuples()
        assert re.search(rf"deaerator\s+{da.item}\s.*steam\s+{da.flow_t_h:.1f} t/h", block)
    assert not UNDERSCORED.search(r.stdout)


def test_stations_prints_a_compact_spray_table_before_the_findings(solved, tmp_path):
    out = tmp_path / "s.json"
    r = _run("stations", str(DEMO), "--json", str(out))
    assert r.returncode == 1, r.stderr
    text = r.stdout
    assert text.index("spray per let-down station") < text.index("findings:")
    table = text[text.index("spray per let-down station"):text.index("findings:")]
    lines = [ln.split() for ln in table.strip().splitlines()[1:]]
    assert lines[0] == ["station", *(c.case for c in solved.cases)]
    stations = list(steamnet.load_model(DEMO).table("letdown"))
    assert [ln[0] for ln in lines[1:]] == stations        # one line per station
    for ln in lines[1:]:
        for cell, c in zip(ln[1:], solved.cases):
            row = c.equipment.set_index("item").loc[ln[0]]
            want = (f"{row.flow_t_h:.1f}/{row.spray_t_h:.2f}" if row.flow_t_h > 0
                    else "-")
            assert cell == want, (ln[0], c.case)
    assert not UNDERSCORED.search(text)
    doc = json.loads(out.read_text())
    words = {r["status"] for r in doc["findings"]} | {
        r["status"] for r in doc["stations"]["checks"]}
    assert "not assessed" in words and not any("_" in w for w in words)


def _line_of(text: str, header: str, name: str) -> int:
    """The line of the ``[[header]]`` whose name is ``name``, counted here."""
    lines = text.splitlines()
    for i, ln in enumerate(lines):
        if ln.strip() == header:
            for nxt in lines[i + 1:i + 4]:
                if nxt.strip() == f'name = "{name}"':
                    return i + 1
    raise AssertionError(name)


def test_error_gives_the_line_where_the_item_starts_and_known_names(tmp_path):
    text = DEMO.read_text().replace('spray_supply = "IP-spray"', 'spray_supply = "IP-spary"')
    bad = tmp_path / "bad.toml"
    bad.write_text(text)
    r = _run("check", str(bad))
    assert r.returncode == 2 and "Traceback" not in r.stderr
    (msg, *_) = [ln for ln in r.stderr.splitlines() if "PRV-ML" in ln]
    assert "water supply 'IP-spary' does not exist (water supplies: BFW, IP-spray)" in msg
    assert msg.endswith(f"the item starts on line {_line_of(text, '[[letdown]]', 'PRV-ML')}")


def test_misspelt_reference_to_a_case_lists_the_cases(tmp_path):
    text = DEMO.read_text().replace('based_on = "winter"', 'based_on = "wintr"')
    bad = tmp_path / "bad.toml"
    bad.write_text(text)
    r = _run("check", str(bad))
    assert r.returncode == 2
    assert "no such case (cases: summer, winter, winter-TG1-trip)" in r.stderr


def test_misspelt_table_name_is_an_unknown_table(tmp_path):
    text = DEMO.read_text().replace("[[letdown]]", "[[let_down]]", 1)
    line = text.splitlines().index("[[let_down]]") + 1
    bad = tmp_path / "bad.toml"
    bad.write_text(text)
    r = _run("check", str(bad))
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert f"[[let_down]]: unknown table on line {line}" in r.stderr
    assert "did you mean 'letdown'?" in r.stderr
    assert "overwrite" not in r.stderr.lower() and "not valid TOML" not in r.stderr
