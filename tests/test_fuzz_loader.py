"""Fuzz of the model-file loader: mutated and truncated model files.

The only outcomes allowed are a valid model or our own :class:`ModelError` naming the
file (and, for anything past parsing, the item; for a bad value, the field). Never
another exception, never a hang: each example runs under a 10 s alarm. Through the
command line, bad files give exit code 2 and no traceback.

The mutations (tests/toml_mutations.py) drop, duplicate and swap lines, replace values
with wrong types, wrong or missing units, unicode look-alikes, huge numbers, NaN and
infinity, rename items to duplicates, point references elsewhere, mangle table headers,
truncate the file, insert junk and deep nesting, and corrupt the UTF-8. The long run is
``python tests/run_long_fuzz.py loader --examples N``.
"""

from __future__ import annotations

import contextlib
import random
import signal
import subprocess
import sys

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from conftest import DATA, DEMO
from steamnet import Model, loads_model
from steamnet.errors import ModelError
from steamnet.testing.synth import random_model_text
from toml_mutations import mutate

SOURCE = "fuzzed.toml"
#: Messages about the file as a whole, which name no item.
FILE_LEVEL = ("not valid TOML", "not UTF-8", "values nested too deeply")
TIMEOUT_S = 10


class Hang(Exception):
    pass


@contextlib.contextmanager
def alarm(seconds: float = TIMEOUT_S):
    """Fail (instead of hanging) when the body takes longer than ``seconds``."""
    def on_alarm(signum, frame):
        raise Hang(f"no answer within {seconds} s")
    old = signal.signal(signal.SIGALRM, on_alarm)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def load_outcome(text: str | bytes, source: str = SOURCE) -> list[str]:
    """Load ``text``; return the problems with the outcome (empty: allowed outcome)."""
    with alarm():
        try:
            m = loads_model(text, source=source)
        except ModelError as exc:
            problems = []
            for e in getattr(exc, "errors", [exc]):
                if e.file != source:
                    problems.append(f"error without the file: {e}")
                if e.item is None and not e.message.startswith(FILE_LEVEL):
                    problems.append(f"error without the item: {e}")
                if not e.message:
                    problems.append("error without a message")
            return problems
    return [] if isinstance(m, Model) else [f"returned {type(m).__name__}"]


BASES = {
    "demo": DEMO.read_text(encoding="utf-8"),
    "two_header": (DATA / "two_header.toml").read_text(encoding="utf-8"),
    "synthetic": random_model_text(11, n_headers=5, n_items=40, n_cases=3),
}


@settings(max_examples=300, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(sorted(BASES)), st.randoms(use_true_random=False))
def test_mutated_model_files_load_or_raise_model_error(base, rng):
    assert load_outcome(mutate(BASES[base], rng)) == []


@pytest.mark.parametrize("text", ["", " ", "\n", "\ufeff", "# nothing\n", "\x00",
                                  b"\xff\xfe\x00", "format_version = 1\n",
                                  "a = " + "[" * 5000 + "]" * 5000,
                                  "big = " + "9" * 5000, "[site\n", "x = 'unclosed"])
def test_degenerate_files(text):
    assert load_outcome(text) == []
    with pytest.raises(ModelError):
        loads_model(text, source=SOURCE)


# ------------------------------------------------------ the error names item and field
def edit(text: str, name: str, key: str, value: str) -> str:
    """Set ``key = value`` in the item called ``name`` (or in its sub-table), as text."""
    lines = text.split("\n")
    start = lines.index(f'name = "{name}"')
    for i in range(start, len(lines)):
        if i > start and lines[i].startswith("[[") and "extractions" not in lines[i]:
            break
        if lines[i].split("=")[0].strip() == key:
            lines[i] = f"{key} = {value}"
            return "\n".join(lines)
    raise AssertionError(f"{key} not found in {name}")


CASES = [  # (item name, key, bad value, item label, field)
    ("HP", "pressure", '"45 kg"', "header 'HP'", "pressure"),
    ("HP", "pressure", '"45"', "header 'HP'", "pressure"),
    ("HP", "pressure", '"45 bar"', "header 'HP'", "pressure"),
    ("HP", "pressure", "45", "header 'HP'", "pressure"),
    ("LP", "heat_loss", '"nan kW"', "header 'LP'", "heat_loss"),
    ("B2-gas", "max_steam", '"inf t/h"', "boiler 'B2-gas'", "max_steam"),
    ("B2-gas", "max_steam", '"1e400 t/h"', "boiler 'B2-gas'", "max_steam"),
    ("B2-gas", "efficiency", '"140 %"', "boiler 'B2-gas'", "efficiency"),
    ("B2-gas", "mode", '"sometimes"', "boiler 'B2-gas'", "mode"),
    ("B2-gas", "min_steam", '"-5 t/h"', "boiler 'B2-gas'", "min_steam"),
    ("B1-bark", "steam_temperature", '"２３０ degC"', "boiler 'B1-bark'",
     "steam_temperature"),
    ("B1-bark", "steam_temperature", '"230 degC"', "boiler 'B1-bark'",
     "steam_temperature"),                                 # not superheated at 45 bar(g)
    ("TG1", "isentropic_efficiency", "true", "turbine 'TG1'", "isentropic_efficiency"),
    ("TG1", "outlet", '"HP"', "turbine 'TG1'", "outlet"),
    ("TG2", "condensate_temperature", '"5e10 K"', "extraction turbine 'TG2'",
     "condensate_temperature"),
    ("TG2", "section_efficiencies", '["78 %"]', "extraction turbine 'TG2'",
     "section_efficiencies"),
    ("PRV-HM", "outlet_temperature", '"1e301 degC"', "letdown 'PRV-HM'",
     "desuperheater.outlet_temperature"),
    ("PRV-HM", "outlet_temperature", '"150 degC"', "letdown 'PRV-HM'",
     "desuperheater.outlet_temperature"),                  # below saturation
    ("PRV-HL", "approach", '"1.5e-8 K"', "letdown 'PRV-HL'", "desuperheater.approach"),
    ("PRV-HL", "approach", '"-3 K"', "letdown 'PRV-HL'", "desuperheater.approach"),
    ("PRV-HL", "spray_supply", '"nowhere"', "letdown 'PRV-HL'",
     "desuperheater.spray_supply"),
    ("Bark dryer", "condensate_temperature", '"-105 degC"', "user 'Bark dryer'",
     "condensate_temperature"),
    ("Bark dryer", "demand", '{ value = 6 }', "user 'Bark dryer'", "demand"),
    ("Bark dryer", "name", '"Sootblowing"', "user 'Sootblowing'", "name"),
    ("DA", "pressure", '"20 bar(g)"', "deaerator 'DA'", "pressure"),
    ("BFW", "pressure", '"6200 bar(g)"', "water supply 'BFW'", "pressure"),
    ("BFW", "pump_efficiency", '"0.1 %"', "water supply 'BFW'", "pump_efficiency"),
    ("Orlewick Board Mill", "makeup_temperature", '"150 degC"', "site",
     "makeup_temperature"),
]


@pytest.mark.parametrize("name,key,value,item,field", CASES,
                         ids=[f"{c[0]}.{c[1]}={c[2]}" for c in CASES])
def test_a_bad_value_names_file_item_and_field(name, key, value, item, field):
    text = edit(BASES["demo"], name, key, value)
    with alarm(), pytest.raises(ModelError) as exc:
        loads_model(text, source=SOURCE)
    where = [(e.file, e.item, e.field) for e in exc.value.errors]
    assert (SOURCE, item, field) in where, where


# ------------------------------------------------------------------ the command line
CLI_FILES = {
    "unit.toml": edit(BASES["demo"], "HP", "pressure", '"45 kg"'),
    "nan.toml": edit(BASES["demo"], "B2-gas", "max_steam", '"nan t/h"'),
    "truncated.toml": BASES["demo"][:1234],
    "deep.toml": "a = " + "[" * 3000 + "]" * 3000,
    "bigint.toml": "format_version = " + "1" * 5000,
    "latin1.toml": BASES["demo"].replace("Orlewick", "Orléwick").encode("latin-1"),
    "empty.toml": "",
    "duplicate.toml": edit(BASES["demo"], "Bark dryer", "name", '"Sootblowing"'),
}


# each run starts a Python process (about 1.5 s of imports): 'check' for every file,
# 'solve' for a few
CLI_RUNS = [(f, "check") for f in sorted(CLI_FILES)] + [
    ("truncated.toml", "solve"), ("nan.toml", "solve"), ("latin1.toml", "solve")]


@pytest.mark.parametrize("fname,command", CLI_RUNS)
def test_cli_bad_files_exit_2_without_traceback(tmp_path, fname, command):
    path = tmp_path / fname
    content = CLI_FILES[fname]
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content, encoding="utf-8")
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", command, str(path)],
                       capture_output=True, text=True, timeout=120)
    assert r.returncode == 2, (r.returncode, r.stderr)
    assert "Traceback" not in r.stderr
    assert str(path) in r.stderr


def test_random_mutants_through_the_cli(tmp_path):
    """A handful of random mutants: exit 2 for a bad file, 0 or 1 for a valid one,
    never a traceback or an internal error (exit 4)."""
    for seed in range(3):
        path = tmp_path / f"mutant{seed}.toml"
        content = mutate(BASES["demo"], random.Random(seed))
        path.write_bytes(content if isinstance(content, bytes)
                         else content.encode("utf-8"))
        r = subprocess.run([sys.executable, "-m", "steamnet.cli", "check", str(path)],
                           capture_output=True, text=True, timeout=120)
        assert r.returncode in (0, 2), (seed, r.returncode, r.stderr)
        assert "Traceback" not in r.stderr
