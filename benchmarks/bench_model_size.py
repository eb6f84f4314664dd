"""Benchmark: time and memory of `steamnet check` on a model of N users.

Not a test (pytest collects test_*.py only). Run:

    .venv/bin/python benchmarks/bench_model_size.py 10000 50000 100000          # check
    .venv/bin/python benchmarks/bench_model_size.py solve 10000 100000          # or solve, report

Each size runs in a fresh process: a one-header plant (tests/data/one_header.toml) with
N users of 0.0005 t/h each (the boiler of 80 t/h serves 100,000) (synthetic data, not a plant), written to a temporary file and
checked with `steamnet check` (or solved, or reported); printed are the file size, the
wall time and the maximum resident set size of that process (its own
resource.getrusage, printed at its exit), so the figures include the interpreter and the
imported libraries. The machine is shared: compare ratios from one
run. docs/validation.md ("Model size") quotes the figures.
"""

from __future__ import annotations

import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).parent
BASE = (HERE.parent / "tests" / "data" / "one_header.toml").read_text(encoding="utf-8")


#: The command run in-process, printing its own peak resident set size (KiB) at exit.
_WRAP = ("import atexit, resource, runpy, sys\n"
         "atexit.register(lambda: sys.stderr.write("
         "f'MAXRSS {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}'))\n"
         "sys.argv = ['steamnet', *sys.argv[1:]]\n"
         "runpy.run_module('steamnet.cli', run_name='__main__')\n")


def model_text(n_users: int) -> str:
    users = "".join(f'[[user]]\nname = "U{i}"\nheader = "HP"\ndemand = "0.0005 t/h"\n'
                    for i in range(2, n_users + 1))
    return BASE + users


def run(n: int, command: str = "check") -> tuple[float, float, float, int, str]:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "big.toml"
        p.write_text(model_text(n), encoding="utf-8")
        size = p.stat().st_size / 1e6
        t0 = time.perf_counter()
        args = [command, str(p)]
        if command == "solve":
            args += ["--quiet"]
        elif command == "report":
            args += ["--out", str(Path(d) / "big.xlsx"), "--quiet"]
        r = subprocess.run([sys.executable, "-c", _WRAP, *args], capture_output=True,
                           text=True)
        dt = time.perf_counter() - t0
        rss = int(r.stderr.rsplit("MAXRSS ", 1)[1]) if "MAXRSS " in r.stderr else 0
        text = (r.stdout + r.stderr.split("MAXRSS ")[0]).strip()
        return size, dt, rss / 1024, r.returncode, text[:200]


def main(argv: list[str]) -> None:
    command = "check"
    if argv and argv[0] in ("check", "solve", "report"):
        command, argv = argv[0], argv[1:]
    sizes = [int(a) for a in argv] or [1000, 10000, 50000]
    print(f"steamnet {command}: users, file MB, wall s, max RSS MiB, exit code, output")
    for n in sorted(sizes):
        size, dt, rss, rc, out = run(n, command)
        print(f"{n:>9,} {size:8.1f} {dt:8.2f} {rss:9.0f} {rc:3d}  {out.strip()[:120]!r}",
              flush=True)


if __name__ == "__main__":
    main(sys.argv[1:])
