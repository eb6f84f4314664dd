"""Start-up benchmark: ``python -c "import steamnet"`` and ``steamnet --help`` as whole
processes, and what the import spends its time on (``python -X importtime``).

Not a test (pytest collects test_*.py only). Run from the repository root:

    .venv/bin/python benchmarks/bench_startup.py
    .venv/bin/python benchmarks/bench_startup.py --before /tmp/before   # same run

Each command runs ``--repeat`` times in a fresh interpreter, alternating between this
checkout and the ``--before`` package so that both meet the same load; the best and
the median wall times are printed. ``python -c pass`` is timed too: the interpreter's
own start-up, which no change to steamnet can remove. The machine is shared: compare
ratios from one run.
"""

from __future__ import annotations

import argparse
import os
import re
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

COMMANDS = {
    "python -c pass": ["-c", "pass"],
    "import steamnet": ["-c", "import steamnet"],
    "steamnet --help": ["-m", "steamnet.cli", "--help"],
    "load the demo model": ["-c", "import steamnet; steamnet.load_model("
                            f"{str(ROOT / 'cases' / 'orlewick.toml')!r})"],
}


def _env(package_dir: str | None) -> dict:
    """The environment of a run: the ``--before`` package first on the path (and the
    working directory there too, since ``-c`` and ``-m`` put it ahead of the path)."""
    env = dict(os.environ)
    env["PYTHONPATH"] = str(Path(package_dir or ROOT).resolve())
    return env


def _cwd(env: dict) -> str:
    return env["PYTHONPATH"]


def timed(args: list[str], env: dict) -> float:
    t0 = time.perf_counter()
    subprocess.run([sys.executable, *args], env=env, cwd=_cwd(env), check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - t0


def import_breakdown(env: dict, top: int, args: list[str]) -> list[tuple[str, float]]:
    """Cumulative import time [s] of the top-level packages a command loads, largest
    first (python -X importtime)."""
    r = subprocess.run([sys.executable, "-X", "importtime", *args],
                       env=env, cwd=_cwd(env), capture_output=True, text=True,
                       check=True)
    total: dict[str, float] = {}
    for line in r.stderr.splitlines():
        m = re.match(r"import time:\s+\d+ \|\s+(\d+) \|( *)(\S+)", line)
        if m and "." not in m.group(3):        # a top-level package, where it loads
            total[m.group(3)] = total.get(m.group(3), 0.0) + int(m.group(1)) * 1e-6
    return sorted(total.items(), key=lambda kv: -kv[1])[:top]


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", metavar="DIR", default=None,
                    help="also time the steamnet package found in DIR (a copy of an "
                         "earlier commit), alternating with this checkout")
    ap.add_argument("--repeat", type=int, default=7)
    ap.add_argument("--top", type=int, default=8)
    a = ap.parse_args(argv)
    sets = [("now", None)] + ([("before", a.before)] if a.before else [])
    print(__doc__.splitlines()[0])
    print(f"python {sys.version.split()[0]}, {os.cpu_count()} CPUs, "
          f"load average {os.getloadavg()[0]:.1f}")
    times: dict[tuple[str, str], list[float]] = {}
    for _ in range(a.repeat):
        for cmd, args in COMMANDS.items():
            for label, pkg in sets:
                times.setdefault((cmd, label), []).append(timed(args, _env(pkg)))
    print(f"{'command':<22}" + "".join(f"{label + ' best':>13}{label + ' median':>15}"
                                       for label, _ in sets))
    for cmd in COMMANDS:
        row = f"{cmd:<22}"
        for label, _ in sets:
            t = times[cmd, label]
            row += f"{min(t):12.3f}s{statistics.median(t):14.3f}s"
        print(row)
    for cmd in ("import steamnet", "load the demo model"):
        for label, pkg in sets:
            print(f"--- python -X importtime, {cmd} ({label}): cumulative time of the "
                  "top-level packages it loads")
            for name, sec in import_breakdown(_env(pkg), a.top, COMMANDS[cmd]):
                print(f"  {name:<36}{sec:8.3f} s")
    print(f"(load average at the end {os.getloadavg()[0]:.1f})")


if __name__ == "__main__":
    main()
