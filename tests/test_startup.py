"""Start-up: ``import steamnet`` and ``steamnet --help`` load no numerical or data
library; each is imported where it is first needed (docs/performance.md, start-up).
Which modules are loaded is checked, not how long it takes (speed is measured by
benchmarks/bench_startup.py)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("numpy", "scipy", "pandas", "pint", "iapws", "matplotlib", "networkx",
         "pydantic", "openpyxl", "fluids")


def _loaded_after(code: str) -> list[str]:
    probe = (f"{code}\nimport sys\n"
             f"print(' '.join(m for m in {HEAVY!r} if m in sys.modules))")
    r = subprocess.run([sys.executable, "-c", probe], cwd=ROOT, capture_output=True,
                       text=True, check=True)
    return r.stdout.split()


def test_import_steamnet_loads_no_heavy_library():
    assert _loaded_after("import steamnet") == []


def test_help_loads_no_heavy_library():
    code = ("import contextlib, io\nfrom steamnet.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    try:\n        main(['--help'])\n    except SystemExit:\n        pass")
    assert _loaded_after(code) == []


def test_public_names_still_resolve():
    """The lazily imported public names are the objects of their modules."""
    import steamnet
    from steamnet.model.load import load_model
    from steamnet.sweep import solve_cases
    assert steamnet.load_model is load_model and steamnet.solve_cases is solve_cases
    assert set(steamnet.__all__) <= set(dir(steamnet))
