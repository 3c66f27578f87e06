"""Monte Carlo summaries: feasibly's streamed exact selection vs the straightforward approach.

Run by hand (never in the tests): ``python benchmarks/bench_uncertainty_summary.py``.

Workload (from the uncertainty issue): N = 10^5 trials × 200 temperatures for a 6-species
reaction, full summary per temperature (P(ΔrG < 0), mean, u, 2.5/50/97.5 % quantiles). The
baseline, measured in the same run, builds the whole N × T matrix and calls ``numpy.quantile``
along the trials. Both give the same numbers (checked and printed). Also measured: re-evaluation
at one new temperature from the kept draws, and the peak memory of a run at N = 10^6 (in a fresh
subprocess, from the kernel's own peak-RSS counter).
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import timeit

import numpy as np

import feasibly
from feasibly.uncertainty import _scan, assess_uncertainty, build_inputs, draw_samples
from feasibly.uncertainty.linear import linear_model, summarise

EQUATION = "2 CH4(g) + O2(g) + CO2(g) -> 3 CO(g) + 3 H2(g) + H2O(g)"
PROBS = (0.025, 0.5, 0.975)


def straightforward(model, samples) -> tuple[np.ndarray, ...]:
    g = model.values("G", samples)  # the whole T × N matrix
    return (
        (g < 0).mean(axis=1),
        g.mean(axis=1),
        g.std(axis=1, ddof=1),
        np.quantile(g, PROBS, axis=1),
    )


def fast(model, samples) -> tuple[np.ndarray, ...]:
    s = summarise(model, samples, "G", 0.0)
    return s.p_below, s.mean, s.u, np.vstack([s.lo, s.median, s.hi])


def _high_water_mb() -> float:
    """Peak resident memory of this process (Linux VmHWM; reset by exec, unlike ru_maxrss)."""
    with open("/proc/self/status", encoding="ascii") as f:
        for line in f:
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # not Linux


def memory_probe(n: int, points: int) -> None:
    """Child process: one full run at N trials; prints peak RSS before and after, in MB."""
    feasibly.default_library()  # the data are loaded before the baseline is read
    base = _high_water_mb()
    a = assess_uncertainty(
        EQUATION, T_range=("800 K", "1500 K"), points=points, samples=n, seed=1, progress=False
    )
    a.at("1234 K")
    peak = _high_water_mb()
    print(json.dumps({"before_MB": base, "peak_MB": peak, "trials": a.trials}))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=100_000)
    parser.add_argument("--points", type=int, default=200)
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--memory-n", type=int, default=1_000_000)
    parser.add_argument("--probe", type=int, help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.probe:
        memory_probe(args.probe, args.points)
        return

    rxn = feasibly.Reaction.parse(EQUATION)
    samples = draw_samples(build_inputs(rxn.species_used()), args.n, seed=1)
    T = np.linspace(800.0, 1500.0, args.points)
    model = linear_model(rxn, T, samples)
    print(f"reaction: {EQUATION}")
    print(
        f"N = {args.n:,} trials × {args.points} temperatures, {len(samples.inputs)} inputs; "
        f"numpy {np.__version__}, feasibly {feasibly.__version__}, "
        f"{'compiled C' if _scan.compiled() else 'numpy (C kernel not built)'} scan kernel"
    )

    ref = straightforward(model, samples)
    got = fast(model, samples)
    same_p = np.array_equal(ref[0], got[0])
    q_diff = float(np.max(np.abs(ref[3] - got[3]) / np.maximum(np.abs(ref[3]), 1.0)))
    m_diff = float(np.max(np.abs(ref[1] - got[1])))
    u_diff = float(np.max(np.abs(ref[2] - got[2]) / ref[2]))

    t_ref = min(
        timeit.repeat(lambda: straightforward(model, samples), number=1, repeat=args.repeat)
    )
    t_fast = min(timeit.repeat(lambda: fast(model, samples), number=1, repeat=args.repeat))
    print(
        f"  straightforward (matrix + np.quantile)  {t_ref * 1e3:9.1f} ms (best of {args.repeat})"
    )
    print(
        f"  feasibly summarise                      {t_fast * 1e3:9.1f} ms (best of {args.repeat})"
    )
    print(f"  ratio straightforward / feasibly        {t_ref / t_fast:9.2f}")
    print(
        f"  same answers: P identical = {same_p}; max rel. quantile diff = {q_diff:.1e}; "
        f"max |mean diff| = {m_diff:.1e} J/mol; max rel. u diff = {u_diff:.1e}"
    )

    a = assess_uncertainty(
        EQUATION, T_range=("800 K", "1500 K"), points=21, samples=args.n, seed=1, progress=False
    )
    t_at = min(timeit.repeat(lambda: a.at("1234 K"), number=1, repeat=20))
    print(f"  re-evaluation at a new T from kept draws {t_at * 1e3:8.1f} ms (best of 20)")

    out = subprocess.run(
        [sys.executable, __file__, "--probe", str(args.memory_n), "--points", str(args.points)],
        capture_output=True,
        text=True,
        check=True,
    )
    mem = json.loads(out.stdout.strip().splitlines()[-1])
    print(
        f"  peak RSS of a full run at N = {mem['trials']:,} × {args.points} T: "
        f"{mem['peak_MB']:.0f} MB, {mem['peak_MB'] - mem['before_MB']:.0f} MB above the "
        f"{mem['before_MB']:.0f} MB of interpreter, numpy, scipy, pint and data"
    )


if __name__ == "__main__":
    main()
