"""The public consistency check (steamnet.testing.consistency) on solved cases and on
result tables damaged on purpose.

References: on undamaged results, the independent check of tests/independent_balance.py
(every balance recomputed with CoolProp's IF97 backend, no steamnet property or solver
code) must agree that the case closes; on damaged results the expected problem follows
from the damage itself (a flow or enthalpy moved by 1 %, far beyond the 1e-6 relative
closure of docs/method.md, "The balance").
"""

from __future__ import annotations

import ast
import dataclasses
import re
import subprocess
import sys
from pathlib import Path

import pytest

import steamnet
from independent_balance import check_solved
from steamnet.testing import check_case, check_study
from steamnet.testing.synth import random_model_text

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "orlewick.toml"
DATA = ROOT / "tests" / "data"


@pytest.fixture(scope="module")
def demo():
    """The demo's three cases (read-only: tests damage copies of the tables)."""
    model = steamnet.load_model(DEMO)
    return model, steamnet.solve_cases(model)


def _solved(study):
    return [c for c in study.cases if c.status == "solved"]


def test_demo_cases_pass(demo):
    model, study = demo
    assert len(_solved(study)) == 3
    assert check_study(study) == []
    for r in study.cases:   # the independent CoolProp check agrees that they close
        assert check_solved(model.for_case(r.case), r) == []


@pytest.mark.parametrize("name", ["one_header", "two_header", "three_level",
                                  "coupled_loop", "two_swing_extractions"])
def test_models_of_tests_data_pass(name):
    model = steamnet.load_model(DATA / f"{name}.toml")
    study = steamnet.solve_cases(model)
    assert _solved(study), "no solved case to check"
    assert check_study(study) == []


@pytest.mark.parametrize("seed", [3, 10, 23, 35])     # seeds whose cases balance
def test_random_networks_pass_where_the_independent_check_passes(seed):
    text = random_model_text(seed, n_headers=2 + seed % 4, n_items=14 + seed, n_cases=2)
    model = steamnet.loads_model(text, source=f"seed {seed}")
    study = steamnet.solve_cases(model)
    solved = _solved(study)
    assert solved, "no solved case to check"
    for r in solved:
        assert check_solved(model.for_case(r.case), r) == []
        assert check_case(model, r) == []


def _damaged(r, table, key_col, key, col, factor=None, value=None):
    """A copy of case result ``r`` with one cell of ``table`` multiplied or replaced."""
    df = getattr(r, table).copy()
    i = df.index[df[key_col] == key]
    assert len(i) == 1
    df.loc[i, col] = df.loc[i, col] * factor if factor is not None else value
    return dataclasses.replace(r, **{table: df})


@pytest.mark.parametrize("table, key, col, expected", [
    # a user on LP draws 1 % more than the tables' balance carries
    ("equipment", "PM1 dryer section", "flow_t_h", "header 'LP' mass balance"),
    # TG1 exhausts to LP: 1 % on its outlet enthalpy moves only LP's energy
    ("equipment", "TG1", "h_out_kj_kg", "header 'LP' energy balance"),
    ("headers", "MP", "h_kj_kg", "header 'MP' energy balance"),
    ("equipment", "DA", "makeup_t_h", "deaerator 'DA' mass balance"),
    ("equipment", "PRV-LL", "spray_t_h", "letdown 'PRV-LL' mass balance"),
    ("equipment", "B2-gas", "feedwater_t_h", "boiler 'B2-gas' feedwater"),
])
def test_a_value_off_by_one_percent_is_reported_with_its_header_or_item(demo, table, key,
                                                                        col, expected):
    model, study = demo
    r = study.case("winter")
    key_col = "header" if table == "headers" else "item"
    bad = _damaged(r, table, key_col, key, col, factor=1.01)
    problems = check_case(model, bad)
    assert any(p.startswith(expected) for p in problems), problems


def test_the_damaged_header_alone_is_named(demo):
    model, study = demo
    bad = _damaged(study.case("winter"), "equipment", "item", "TG1", "h_out_kj_kg",
                   factor=1.01)
    named = {p.split(" energy")[0] for p in check_case(model, bad) if "energy" in p}
    assert named == {"header 'LP'"}


def test_flows_beyond_limits_and_negative_flows_are_reported(demo):
    model, study = demo
    r = study.case("summer")
    # B1-bark is fixed at 68 t/h in the demo model (cases/orlewick.toml)
    bad = _damaged(r, "equipment", "item", "B1-bark", "flow_t_h", factor=1.01)
    assert any(p.startswith("boiler 'B1-bark': flow") and "not its fixed" in p
               for p in check_case(model, bad))
    # PRV-LL's maximum is 45 t/h (cases/orlewick.toml)
    bad = _damaged(r, "equipment", "item", "PRV-LL", "flow_t_h", value=46.0)
    assert any("letdown 'PRV-LL': flow" in p and "above its maximum" in p
               for p in check_case(model, bad))
    bad = _damaged(r, "equipment", "item", "LP vent", "flow_t_h", value=-0.5)
    assert any(p.startswith("vent 'LP vent': negative flow_t_h") for p in
               check_case(model, bad))


def test_study_problems_name_their_case(demo):
    model, study = demo
    bad = _damaged(study.case("summer"), "equipment", "item", "Bark dryer", "flow_t_h",
                   factor=1.01)
    damaged = steamnet.StudyResult(model, [bad if c.case == "summer" else c
                                           for c in study.cases])
    problems = check_study(damaged)
    assert problems and all(p.startswith("case 'summer': ") for p in problems)
    assert any(p.startswith("case 'summer': header 'MP' mass balance") for p in problems)


def test_cases_without_a_balance_say_so():
    model = steamnet.load_model(DATA / "two_header.toml")
    study = steamnet.solve_cases(model)
    bad = study.case("toomuch")
    assert bad.status == "infeasible"
    assert check_case(model, bad)[0].startswith("status infeasible: no balance")
    lean = steamnet.solve_case(model, "winter", tables=False)
    assert lean.status == "solved"
    assert check_case(model, lean) == ["no result tables to check (solved with "
                                       "tables=False?)"]


def test_the_check_uses_neither_the_solver_nor_test_only_packages():
    """It must stand apart from what it checks, and run where steamnet runs."""
    path = ROOT / "steamnet" / "testing" / "consistency.py"
    imported = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.level:      # from .. import x
            base = ".".join(["steamnet", "testing"][:3 - node.level]
                            + ([node.module] if node.module else []))
            imported.update(f"{base}.{a.name}" for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            imported.add(node.module)
        elif isinstance(node, ast.Import):
            imported.update(a.name for a in node.names)
    assert imported == {"__future__", "math", "dataclasses", "steamnet.properties"}


def test_the_example_of_docs_results_runs_and_finds_nothing_on_the_demo():
    text = (ROOT / "docs" / "results.md").read_text(encoding="utf-8")
    section = text.split("## Checking results yourself", 1)[1].split("\n## ", 1)[0]
    code, = re.findall(r"```python\n(.*?)```", section, flags=re.S)
    r = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True,
                       text=True)
    assert r.returncode == 0, r.stderr
    assert r.stdout == ""
