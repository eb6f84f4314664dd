"""The docs agree with the code: generated reference, README example, docs example."""

from __future__ import annotations

import re
import subprocess
import sys

import pytest

from steamnet.model import docgen
import steamnet
from conftest import ROOT


def _blocks(path, lang):
    text = (ROOT / path).read_text(encoding="utf-8")
    return re.findall(rf"```{lang}\n(.*?)```", text, flags=re.S)


def test_model_file_reference_is_generated_from_schema():
    text = (ROOT / "docs" / "model-file.md").read_text(encoding="utf-8")
    assert docgen.render(text) == text, "run: python -m steamnet.model.docgen"


def test_readme_python_example_runs():
    code = _blocks("README.md", "python")[0]
    r = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True,
                       text=True)
    assert r.returncode == 0, r.stderr


def test_docs_model_to_start_from_solves(tmp_path):
    block = [b for b in _blocks("docs/model-file.md", "toml") if "format_version" in b][0]
    p = tmp_path / "my_plant.toml"
    p.write_text(block)
    study = steamnet.solve_cases(steamnet.load_model(p))
    assert study.all_solved
    assert len(study.headers) == 3


def test_readme_quick_start_has_exactly_two_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    qs = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    cmds = re.findall(r"```sh\n(.*?)```", qs, flags=re.S)
    assert len(cmds) == 2 and all(len(c.strip().splitlines()) == 1 for c in cmds)
    ci = (ROOT / ".ci" / "run").read_text()
    assert cmds[1].strip() in ci


#: What no file of the project may cite: design notes outside the repository and issue
#: numbers (the rule belongs on the project's own docs page: docs/method.md,
#: docs/checks/...). Written as patterns so that this file does not cite them itself.
FORBIDDEN = re.compile(r"\.\./shared|engineering\.md|style\.md|engineering[\s_]+notes"
                       r"|\bissues?\s*#|\bissues?\s+\d", flags=re.I)


def _tracked_text_files():
    r = subprocess.run(["git", "ls-files", "-z"], cwd=ROOT, capture_output=True)
    if r.returncode == 0:
        names = [n for n in r.stdout.decode().split("\0") if n]
    else:                                    # not a git checkout: every file but builds
        skip = {".git", ".venv", "build", "dist", "__pycache__"}
        names = [str(p.relative_to(ROOT)) for p in ROOT.rglob("*") if p.is_file()
                 and not skip & set(p.relative_to(ROOT).parts)
                 and not p.parent.name.endswith(".egg-info")]
    for name in names:
        data = (ROOT / name).read_bytes() if (ROOT / name).is_file() else b""
        if b"\0" in data:
            continue
        try:
            yield name, data.decode("utf-8")
        except UnicodeDecodeError:
            continue


def _help_texts():
    from click.testing import CliRunner

    from steamnet.cli import main
    yield "steamnet --help", CliRunner().invoke(main, ["--help"]).output
    for name in sorted(main.commands):
        yield f"steamnet {name} --help", CliRunner().invoke(main, [name, "--help"]).output


def _hits(where, text):
    return [f"{where}:{n}: {line.strip()}" for n, line in enumerate(text.splitlines(), 1)
            if FORBIDDEN.search(line)]


def test_the_pattern_catches_what_it_must():
    # each example in two pieces, so that this file does not hold what it forbids
    for a, b in [("see ../", "shared/notes"), ("Engineering", ".md section 5"),
                 ("STYLE", ".md"), ("the engineering", " notes, section 8"),
                 ("issue", " 7"), ("Issue", " #12"), ("(issue", " 2: 1e-6 relative)"),
                 ("issues", " 3 and 4")]:
        text = a + b
        assert FORBIDDEN.search(text), text
    for text in ["no issue with that", "an issue: the flow", "docs/method.md"]:
        assert not FORBIDDEN.search(text), text


def test_no_file_cites_notes_outside_the_repository_or_issue_numbers():
    files = list(_tracked_text_files())
    assert any(name == "README.md" for name, _ in files)
    hits = [h for name, text in files for h in _hits(name, text)]
    assert not hits, "point to docs/method.md or docs/checks/ instead:\n" + "\n".join(hits)


def test_no_help_text_cites_notes_outside_the_repository_or_issue_numbers():
    texts = list(_help_texts())
    assert len(texts) > 5 and all("Usage:" in t for _, t in texts)
    hits = [h for where, text in texts for h in _hits(where, text)]
    assert not hits, "\n".join(hits)


def test_method_states_the_stopping_tolerances_the_solver_uses():
    """docs/method.md gives the enthalpy and flow tolerances at which the balance stops,
    and they are the defaults of the solver."""
    import inspect
    from steamnet.solver import balance
    text = " ".join((ROOT / "docs" / "method.md").read_text(encoding="utf-8").split())
    m = re.search(r"no header enthalpy moves by more than (\S+) of the largest "
                  r"saturated-vapour enthalpy of the headers \(about (\S+) J/kg\) and no "
                  r"flow by more than (\S+) kg/s \((\d+) iterations at most", text)
    assert m, "docs/method.md no longer states the stopping rule in the expected words"
    rel, about, tol_x, max_iter = float(m[1]), float(m[2]), float(m[3]), int(m[4])
    sig = inspect.signature(balance.solve_net).parameters
    assert rel == balance.TOL_H_REL
    assert tol_x == sig["tol_x"].default
    assert max_iter == sig["max_iter"].default
    # the largest saturated-vapour enthalpy is about 2.80e6 J/kg (IAPWS R7-97(2012),
    # saturated vapour near 30 bar, from memory): the "about" figure follows from it
    assert about == pytest.approx(rel * 2.80e6, rel=0.1)


def test_iapws_saturation_table_citations_name_the_right_table():
    """IAPWS R7-97(2012) gives psat(T) in Table 35 and Tsat(p) in Table 36: every
    citation of either table beside a saturation check names the one that holds it."""
    bad = []
    for path in [*(ROOT / "tests").glob("*.py"), *(ROOT / "steamnet").rglob("*.py"),
                 *(ROOT / "docs").glob("*.md")]:
        if path.name == "test_docs.py":
            continue
        lines = path.read_text(encoding="utf-8").splitlines()
        for i, line in enumerate(lines):
            near = " ".join(lines[max(0, i - 1):i + 3]).lower()
            if "table 35" in line.lower() and re.search(
                    r"t_?sat|saturation temp|saturation\(.*\)\.t\b", near):
                bad.append(f"{path.relative_to(ROOT)}:{i + 1}")
    assert not bad, "Tsat(p) is IAPWS R7-97(2012) Table 36: " + ", ".join(bad)


def _field_rows():
    """Every row of the generated field tables: (table, field, value, default, meaning)."""
    text = (ROOT / "docs" / "model-file.md").read_text(encoding="utf-8")
    part = text.split(docgen.BEGIN, 1)[1].split(docgen.END, 1)[0]
    rows, table = [], None
    for line in part.splitlines():
        if line.startswith("### "):
            table = line[4:]
        elif line.startswith("| `") and table and not table.startswith("[station_limits]"):
            cells = [c.strip() for c in line.strip().strip("|").split(" | ")]
            rows.append((table, *cells))
    return part, rows


def test_generated_field_tables_speak_plain_words():
    """Value types and defaults in words a plant engineer reads, a meaning for every
    field, no internal SI unit in a meaning, no sentence cut off."""
    part, rows = _field_rows()
    assert len(rows) > 150
    for word in ("PydanticUndefined", "Optional", "NoneType", "steamnet.", "typing",
                 "<class", "(SI)", "Annotated", "| None"):
        assert word not in part, word
    si = re.compile(r"\[(Pa|K|kg/s|W|J/kg|J|kg|m|s|-|currency/J|currency/kg|m2|kg/m3)\]")
    for table, field, value, default, meaning in rows:
        assert value and default, (table, field)
        assert meaning, (table, field)                      # every field has its meaning
        assert not si.search(meaning), (table, field, meaning)
    for block in part.split("### ")[1:]:
        intro = block.split("\n\n")[1].strip()             # the table's sentence
        assert intro.endswith("."), intro


def test_no_phrase_of_a_known_template():
    """A model to start from is called that, not by the phrase a known tool uses for its
    template (the pattern is written so that this file does not hold it)."""
    phrase = re.compile(r"three" + r"[- ]header\s+(model|example|network)", re.I)
    bad = [n for n, t in _tracked_text_files() if phrase.search(t)]
    assert bad == []


def test_results_page_documents_what_stations_json_adds(tmp_path):
    """docs/results.md names every list and column that `stations --json` writes, that
    a model needs no deaerator, and that a file without cases solves the case 'base'."""
    import json
    from conftest import DEMO
    out = tmp_path / "s.json"
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", "stations", str(DEMO),
                        "--json", str(out)], capture_output=True, text=True, cwd=ROOT)
    assert r.returncode == 1, r.stderr
    doc = json.loads(out.read_text())
    text = (ROOT / "docs" / "results.md").read_text(encoding="utf-8")
    section = text.split("`steamnet stations --json` adds", 1)[1]
    for name, rows in doc["stations"].items():
        assert f"`{name}`" in section, name
        for key in rows[0]:
            if key.startswith("worst_"):
                key = "worst_CHECK"
            if key.endswith("_case") and key != "case":
                key = "..._case"
            assert f"`{key}`" in section, (name, key)
    for key in doc["findings"][0]:
        assert f"`{key}`" in section, key
    model_doc = (ROOT / "docs" / "model-file.md").read_text(encoding="utf-8")
    assert "## A deaerator is optional" in model_doc
    assert "solves one case, named `base`" in model_doc
