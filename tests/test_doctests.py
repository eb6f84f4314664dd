"""The examples in the docstrings run: every module of the package, found by
pkgutil.walk_packages, goes through doctest.testmod.

Examples that read ``cases/orlewick.toml`` or write a file run in a temporary folder
that holds a link to the repository's ``cases/`` (so nothing is written into the
checkout). Modules that import a test-only package (CoolProp, hypothesis, pytest) would
not import where steamnet is installed without the test extra; they are left out.
"""

from __future__ import annotations

import ast
import doctest
import importlib
import io
import pkgutil
from pathlib import Path

import pytest

import steamnet
from conftest import ROOT

TEST_ONLY = {"CoolProp", "hypothesis", "pytest", "_pytest"}


def _imports_test_only(path: Path) -> bool:
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom) and not node.level:
            names = [node.module or ""]
        else:
            continue
        if any(n.split(".")[0] in TEST_ONLY for n in names):
            return True
    return False


def _modules() -> list[str]:
    out = []
    for info in pkgutil.walk_packages(steamnet.__path__, "steamnet."):
        if info.name.rsplit(".", 1)[-1] == "__main__":     # importing one runs the CLI
            continue
        spec = importlib.util.find_spec(info.name)
        if spec.origin and _imports_test_only(Path(spec.origin)):
            continue
        module = importlib.import_module(info.name)
        if any(t.examples for t in doctest.DocTestFinder().find(module)):
            out.append(info.name)
    return out


#: The modules whose docstrings hold examples.
MODULES = _modules()


@pytest.fixture()
def beside_the_cases(tmp_path, monkeypatch):
    (tmp_path / "cases").symlink_to(ROOT / "cases", target_is_directory=True)
    monkeypatch.chdir(tmp_path)


def test_every_module_with_examples_is_found():
    """The modules known to hold examples are among those run (so a change of the
    finder cannot leave them out unnoticed)."""
    assert {"steamnet.units", "steamnet.properties", "steamnet.calc.desuperheater",
            "steamnet.calc.valve", "steamnet.solve", "steamnet.studies",
            "steamnet.workbook", "steamnet.testing.consistency"} <= set(MODULES)


@pytest.mark.parametrize("name", MODULES)
def test_doctests(name, beside_the_cases):
    module = importlib.import_module(name)
    out = io.StringIO()
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
    for test in doctest.DocTestFinder().find(module):
        runner.run(test, out=out.write)
    result = runner.summarize(verbose=False)
    assert result.failed == 0, f"{name}: {result.failed} example(s) failed\n{out.getvalue()}"
