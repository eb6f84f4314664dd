"""Failure paths: what the user sees when a case cannot be solved, and that nothing the
user had is lost when a run fails or is interrupted."""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path

import pytest
from click.testing import CliRunner

import steamnet.solve as solve_mod
from conftest import DATA, DEMO
from steamnet import load_model, solve_case, solve_cases
from steamnet.cli import EXIT_INTERRUPT, EXIT_OUTPUT, main
from steamnet.io import atomic, jsonout
from steamnet.io.atomic import OutputError
from steamnet.io.jsonout import write_json
from steamnet.model.schema import Case


@pytest.fixture(scope="module")
def demo():
    return load_model(DEMO)


# ---------------------------------------------------------------- non-convergence
def test_not_converged_is_reported_per_case(demo):
    full = solve_case(demo, "winter")
    assert full.ok and full.iterations > 1          # the demo needs several iterations
    r = solve_case(demo, "winter", max_iter=1)
    assert r.status == "not_converged"
    assert r.case == "winter"
    assert r.message.startswith("not converged after 1 iterations")
    assert "enthalpy change" in r.message and "flow change" in r.message
    assert r.summary["status"] == "not_converged" and r.iterations == 1


def test_a_case_that_does_not_converge_leaves_the_others_solved(demo, monkeypatch):
    real = solve_mod.solve_net

    def one_iteration_for_winter(net, **kw):
        if net.model.case_name == "winter":
            kw["max_iter"] = 1
        return real(net, **kw)
    monkeypatch.setattr(solve_mod, "solve_net", one_iteration_for_winter)
    study = solve_cases(demo)
    assert [(c.case, c.status) for c in study.cases] == [
        ("summer", "solved"), ("winter", "not_converged"), ("winter-TG1-trip", "solved")]
    assert not study.all_solved


# ---------------------------------------------------------- outside IAPWS-IF97
def test_boiler_temperature_outside_if97_names_the_boiler(demo):
    hot = demo.with_changes({"boiler.B2-gas.steam_temperature": "2500 degC"})
    r = solve_case(hot)
    assert r.status == "error"
    assert r.message.startswith("outside IAPWS-IF97: boiler 'B2-gas'")
    assert "2773.15 K" in r.message


def test_condenser_pressure_below_the_triple_point_names_the_turbine(demo):
    # the exhaust of TG2 would leave IF97's range (below 611.2 Pa)
    cold = demo.with_changes({"extraction_turbine.TG2.condenser_pressure": "1 mbar(a)"})
    r = solve_case(cold)
    assert r.status == "error"
    assert "extraction turbine 'TG2'" in r.message
    assert "outside IAPWS-IF97" in r.message


def test_the_same_changes_as_a_case_are_a_model_error_naming_the_field(demo):
    from steamnet.errors import ModelError
    m = dataclasses.replace(demo, cases=(
        Case(name="hot", changes={"boiler.B2-gas.steam_temperature": "2500 degC"}),))
    with pytest.raises(ModelError) as exc:
        solve_case(m, "hot")
    e = exc.value.errors[0]
    assert (e.item, e.field) == ("case 'hot': boiler 'B2-gas'", "steam_temperature")


# ------------------------------------------------- one failing case, the others run
def test_a_failing_case_in_the_middle_does_not_stop_the_others(monkeypatch):
    m = load_model(DATA / "two_header.toml")
    cases = {c.name: c for c in m.cases}
    bad = Case(name="bad-input", changes={"boiler.B1.steam_temperature": "2500 degC"})
    m = dataclasses.replace(m, cases=(cases["winter"], cases["toomuch"], bad,
                                      cases["summer"]))
    study = solve_cases(m)
    got = [(c.case, c.status) for c in study.cases]
    assert got == [("winter", "solved"), ("toomuch", "infeasible"), ("bad-input", "error"),
                   ("summer", "solved")]
    assert "header 'HP' is short of steam" in study.case("toomuch").message
    assert "boiler 'B1'" in study.case("bad-input").message


def test_an_internal_fault_in_one_case_is_reported_and_the_others_run(monkeypatch):
    m = load_model(DATA / "two_header.toml")
    real = solve_mod.build

    def faulty(model, *args, **kwargs):
        if model.case_name == "summer":
            raise RuntimeError("simulated fault")
        return real(model, *args, **kwargs)
    monkeypatch.setattr(solve_mod, "build", faulty)
    study = solve_cases(m)
    assert [c.status for c in study.cases] == ["solved", "error", "infeasible"]
    assert study.case("summer").message == ("internal error: RuntimeError: simulated "
                                            "fault (please report this)")


# ------------------------------------------------ no partial output, old file kept
def _leftovers(folder: Path, target: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p != target)


@pytest.fixture(scope="module")
def study():
    return solve_cases(load_model(DATA / "two_header.toml"))


def _interrupting_write_text(self, text, *a, **kw):
    """Write half of the text, then be interrupted (as by Ctrl-C)."""
    with open(self, "w", encoding="utf-8") as f:
        f.write(text[: len(text) // 2])
    raise KeyboardInterrupt


def test_interrupted_json_write_leaves_no_file(tmp_path, study, monkeypatch):
    target = tmp_path / "out.json"
    monkeypatch.setattr(Path, "write_text", _interrupting_write_text)
    with pytest.raises(KeyboardInterrupt):
        write_json(study, target)
    assert not target.exists()
    assert _leftovers(tmp_path, target) == []           # no temporary file left


def test_interrupted_json_write_keeps_the_previous_file(tmp_path, study, monkeypatch):
    target = tmp_path / "out.json"
    write_json(study, target)
    before = target.read_bytes()
    json.loads(before)
    monkeypatch.setattr(Path, "write_text", _interrupting_write_text)
    with pytest.raises(KeyboardInterrupt):
        write_json(study, target)
    assert target.read_bytes() == before
    assert _leftovers(tmp_path, target) == []


def test_failed_json_write_keeps_the_previous_file(tmp_path, study, monkeypatch):
    target = tmp_path / "out.json"
    target.write_text('{"previous": true}', encoding="utf-8")

    def disk_full(self, text, *a, **kw):
        with open(self, "w", encoding="utf-8") as f:
            f.write(text[:100])
        raise OSError(28, "No space left on device")
    monkeypatch.setattr(Path, "write_text", disk_full)
    with pytest.raises(OutputError) as exc:
        write_json(study, target)
    assert "No space left on device" in str(exc.value)
    assert "previous file" in str(exc.value)
    assert json.loads(target.read_text(encoding="utf-8")) == {"previous": True}
    assert _leftovers(tmp_path, target) == []


def test_failed_replace_keeps_the_previous_file(tmp_path, study, monkeypatch):
    target = tmp_path / "out.json"
    target.write_text('{"previous": true}', encoding="utf-8")

    def locked(src, dst):
        raise PermissionError(13, "Permission denied")
    monkeypatch.setattr(atomic.os, "replace", locked)
    with pytest.raises(OutputError):
        write_json(study, target)
    assert json.loads(target.read_text(encoding="utf-8")) == {"previous": True}
    assert _leftovers(tmp_path, target) == []


# ------------------------------------------------------------ the same via the CLI
def test_cli_interrupted_solve_exits_130_and_keeps_the_previous_json(tmp_path,
                                                                       monkeypatch):
    target = tmp_path / "out.json"
    target.write_text('{"previous": true}', encoding="utf-8")
    monkeypatch.setattr(Path, "write_text", _interrupting_write_text)
    r = CliRunner().invoke(main, ["solve", str(DATA / "two_header.toml"), "--json",
                                  str(target), "--quiet"])
    assert r.exit_code == EXIT_INTERRUPT, r.output
    assert "interrupted" in r.output
    assert json.loads(target.read_text(encoding="utf-8")) == {"previous": True}
    assert _leftovers(tmp_path, target) == []


def test_cli_failed_json_write_exits_3_and_keeps_the_previous_json(tmp_path, monkeypatch):
    target = tmp_path / "out.json"
    target.write_text('{"previous": true}', encoding="utf-8")

    def disk_full(self, text, *a, **kw):
        raise OSError(28, "No space left on device")
    monkeypatch.setattr(Path, "write_text", disk_full)
    r = CliRunner().invoke(main, ["solve", str(DEMO), "--json", str(target), "--quiet"])
    assert r.exit_code == EXIT_OUTPUT, r.output
    assert "No space left on device" in r.output
    assert "Traceback" not in r.output
    assert json.loads(target.read_text(encoding="utf-8")) == {"previous": True}
    assert _leftovers(tmp_path, target) == []


def test_cli_json_into_a_missing_folder_exits_3(tmp_path):
    target = tmp_path / "no" / "such" / "out.json"
    r = CliRunner().invoke(main, ["solve", str(DEMO), "--json", str(target), "--quiet"])
    assert r.exit_code == EXIT_OUTPUT, r.output
    assert "does not exist" in r.output
    assert not target.parent.exists()


def test_json_layout_module_writes_through_the_atomic_writer():
    # the guarantees above rest on write_json going through write_atomic
    assert jsonout.write_atomic is atomic.write_atomic
