"""The docs agree with the code: generated reference, README example, docs example."""

from __future__ import annotations

import re
import subprocess
import sys

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


def test_docs_three_header_model_solves(tmp_path):
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
