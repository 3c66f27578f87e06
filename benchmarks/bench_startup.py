#!/usr/bin/env python
"""Benchmark: start-up of the ``feasibly`` command against ``python -c "import numpy"``.

Routes, each a fresh interpreter, interleaved over --rounds rounds (each round runs every route
in turn, the order alternating):
  numpy     python -c "import numpy"                       (the baseline)
  version   the feasibly console script with --version
  assess    the feasibly console script: assess "CO + H2O -> CO2 + H2" --T 900 K

The console script is run as its entry point is (``from feasibly.cli import main; main()``), so
the figure is what a chemist waits for. Bytecode is cached in a temporary folder
(PYTHONPYCACHEPREFIX) and a warm-up round fills it, as an installed wheel has its .pyc files:
otherwise the run would time the compiler. Prints min/median/max of the per-round ratios
route / numpy (the goal: assess within 2.5×) and which heavy modules each route imported.
Run by hand:  PYTHONPATH=src python benchmarks/bench_startup.py [--rounds N]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time

from _rounds import ratio_line, time_line

ENTRY = "import sys; from feasibly.cli import main; sys.exit(main())"
ROUTES = {
    "numpy": ["-c", "import numpy"],
    "version": ["-c", ENTRY, "--version"],
    "assess": ["-c", ENTRY, "assess", "CO + H2O -> CO2 + H2", "--T", "900", "K"],
}
HEAVY = ("scipy.stats", "scipy.optimize", "scipy", "pint", "plotly")


def _run(args: list[str], env: dict[str, str]) -> float:
    t0 = time.perf_counter()
    subprocess.run([sys.executable, *args], env=env, check=True, stdout=subprocess.DEVNULL)
    return time.perf_counter() - t0


def _heavy(args: list[str], env: dict[str, str]) -> list[str]:
    """Heavy modules a route imports (from ``-X importtime``)."""
    out = subprocess.run(
        [sys.executable, "-X", "importtime", *args],
        env=env,
        check=True,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    ).stderr
    loaded = {line.rsplit("|", 1)[-1].strip() for line in out.splitlines() if "|" in line}
    return [m for m in HEAVY if m in loaded]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rounds", type=int, default=10, help="interleaved rounds (at least 5)")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as cache:
        env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
        env["PYTHONPYCACHEPREFIX"] = cache
        for route in ROUTES.values():  # warm-up: fills the bytecode cache
            _run(route, env)
        times: dict[str, list[float]] = {name: [] for name in ROUTES}
        names = list(ROUTES)
        for r in range(args.rounds):
            for name in names if r % 2 == 0 else names[::-1]:
                times[name].append(_run(ROUTES[name], env))
        heavy = {name: _heavy(route, env) for name, route in ROUTES.items() if name != "numpy"}
    print(f"python {sys.version.split()[0]}; {args.rounds} interleaved rounds, fresh process each")
    for name, t in times.items():
        print("  " + time_line(f"{name:8s} wall time", t))
    for name in ("version", "assess"):
        print("  " + ratio_line(f"{name} / numpy", times[name], times["numpy"]))
    for name, mods in heavy.items():
        print(f"  {name} imports: {', '.join(mods) or 'none of ' + ', '.join(HEAVY)}")


if __name__ == "__main__":
    main()
