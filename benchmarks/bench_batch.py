"""The batch screen: reaction × temperature × trial evaluations per second, and against running
the same reactions one at a time.

Run by hand (never in the tests): ``python benchmarks/bench_batch.py [--rounds 5] [--reactions
100] [--samples 100000]``.

Workload: combustion and steam-reforming reactions of the library's C/H/O gases (balanced by
feasibly, each over 12 temperatures of its data range within 300–1500 K), N trials each. The
screen (A) draws every input once for the table and screens it in one call; the baseline (B)
calls ``assess_uncertainty`` once per reaction with the same per-species streams, which gives
the same numbers (checked and printed). A and B are interleaved over the rounds; the printed
figures are the min/median/max of the screen's evaluations per second and of the ratio B/A.
The goal of the batch issue is at least 10^7 evaluations per second on a 2-core machine. On a
machine shared with other jobs the wall-clock rate falls with their load, so the screen's rate per
second of this process's own CPU time (all its threads) is printed too: a 2-core machine to
itself gives between that figure and twice it, depending on how much of the work runs on both
cores at once.
"""

from __future__ import annotations

import argparse
import os
import statistics
import time

import numpy as np
import pandas as pd

import feasibly
from feasibly.batch import screen
from feasibly.uncertainty import assess_uncertainty

POINTS = 12  # temperatures per reaction, the default of `feasibly assess --points`


def table(limit: int) -> pd.DataFrame:
    """Balanced reactions of the library's neutral C/H/O gases, in library order."""
    lib = feasibly.default_library()
    rows, seen = [], set()
    for sp in lib:
        if sp.phase != "g" or sp.formula in seen:
            continue
        comp = feasibly.parse_formula(sp.formula)
        els = set(comp.elements)
        if comp.charge or "C" not in els or not els <= {"C", "H", "O"}:
            continue
        seen.add(sp.formula)
        burn = f"{sp.id} + O2 -> CO2 + H2O" if "H" in els else f"{sp.id} + O2 -> CO2"
        for text in (burn, f"{sp.id} + H2O -> CO + H2"):
            try:
                rxn = feasibly.Reaction.parse(text, lib, balance=True)
            except feasibly.FeasiblyError:
                continue  # no unique balance with these partners
            lo, hi = rxn.valid_range()
            lo, hi = max(lo, 300.0), min(hi, 1500.0)
            if hi - lo >= 100.0:
                rows.append(
                    {"equation": rxn.equation(), "T_low": f"{lo} K", "T_high": f"{hi} K"}
                    | {"T_points": POINTS}
                )
    return pd.DataFrame(rows[:limit])


def one_by_one(t: pd.DataFrame, n: int, seed: int) -> np.ndarray:
    p = []
    for rec in t.to_dict("records"):
        a = assess_uncertainty(
            rec["equation"],
            T_range=(rec["T_low"], rec["T_high"]),
            points=POINTS,
            samples=n,
            seed=seed,
            method="mc-per-species",
        )
        p.append(a.p_feasible)
    return np.concatenate(p)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--reactions", type=int, default=100)
    parser.add_argument("--samples", type=int, default=100_000)
    args = parser.parse_args()
    t = table(args.reactions)
    n, seed = args.samples, 1
    evals = len(t) * POINTS * n
    print(f"{len(t)} reactions × {POINTS} temperatures × {n:,} trials = {evals:.3g} evaluations")
    screen(t.head(2), samples=1024, seed=seed)  # data loaded and code warm before timing
    rates, cpu_rates, ratios, same = [], [], [], True
    for r in range(args.rounds):
        c0 = os.times()
        t0 = time.perf_counter()
        res = screen(t, samples=n, seed=seed)
        a = time.perf_counter() - t0
        c1 = os.times()
        cpu = (c1.user - c0.user) + (c1.system - c0.system)
        t0 = time.perf_counter()
        p_b = one_by_one(t, n, seed)
        b = time.perf_counter() - t0
        assert res["error"].isna().all(), res["error"].dropna().head()
        same &= bool(np.array_equal(res["P_feasible"].to_numpy(), p_b))
        rates.append(evals / a)
        cpu_rates.append(evals / cpu)
        ratios.append(b / a)
        print(
            f"round {r + 1}: screen {a:.2f} s ({evals / a:.3g}/s; {cpu:.2f} CPU-s), "
            f"one by one {b:.2f} s"
        )

    def mmm(xs: list[float], fmt: str) -> str:
        return " / ".join(format(x, fmt) for x in (min(xs), statistics.median(xs), max(xs)))

    print(f"screen evaluations per second, min/median/max: {mmm(rates, '.3g')}")
    print(f"screen evaluations per CPU-second, min/median/max: {mmm(cpu_rates, '.3g')}")
    print(f"one-by-one time / screen time, min/median/max: {mmm(ratios, '.2f')}")
    print(f"P(feasible) identical to one-by-one assess_uncertainty: {same}")


if __name__ == "__main__":
    main()
