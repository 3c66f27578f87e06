"""Monte Carlo summaries: feasibly's streamed exact selection vs the straightforward approach.

Run by hand (never in the tests): ``python benchmarks/bench_uncertainty_summary.py``.

Workload (from the uncertainty issue): N = 10^5 trials × 200 temperatures for a 6-species
reaction, full summary per temperature (P(ΔrG < 0), mean, u, 2.5/50/97.5 % quantiles). The
baseline builds the whole N × T matrix and calls ``numpy.quantile`` along the trials. Both give
the same numbers (checked and printed). The two are timed alternately over --rounds rounds and
the per-round ratios printed as min/median/max. The input moments that feasibly keeps with the
draws are dropped before every timed call, so each call pays for them.

Then the grid: reactions of 2 to 20 species × N = 10^4, 10^5, 10^6 trials (--grid-points
temperatures, default 50), each cell interleaved over --rounds rounds; the worst cell is the
figure to quote. Also measured: re-evaluation at one new temperature from the kept draws, and the
peak memory of a run at N = 10^6 (in a fresh subprocess, from the kernel's own peak-RSS counter).
"""

from __future__ import annotations

import argparse
import json
import resource
import statistics
import subprocess
import sys
import timeit

import numpy as np
from _rounds import interleave, ratio_line, time_line

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
    samples._moments = None  # pay for the input moments in every call, as a first call does
    s = summarise(model, samples, "G", 0.0)
    return s.p_below, s.mean, s.u, np.vstack([s.lo, s.median, s.hi])


# Reactions of 2 to 20 gas species, each built from disjoint balanced steps (H2 always on the
# product side, so shared species only add up): every entry has one phase and NASA-7 data.
_STEPS = {
    "a": {"N2O4(g)": -1, "NO2(g)": 2},
    "b": {"CO(g)": -1, "H2O(g)": -1, "CO2(g)": 1, "H2(g)": 1},
    "c": {"C2H6(g)": -1, "C2H4(g)": 1, "H2(g)": 1},
    "d": {"CH3Cl(g)": -1, "HF(g)": -1, "CH3F(g)": 1, "HCl(g)": 1},
    "e": {"HI(g)": -2, "H2(g)": 1, "I2(g)": 1},
    "f": {"HBr(g)": -2, "H2(g)": 1, "Br2(g)": 1},
    "g": {"C3H8(g)": -1, "C3H6(g)": 1, "H2(g)": 1},
    "h": {"CH3OH(g)": -1, "HCHO(g)": 1, "H2(g)": 1},
}
GRID = {2: "a", 4: "b", 6: "ab", 8: "abc", 12: "abcd", 16: "abcdef", 20: "abcdefgh"}


def grid_equation(steps: str) -> str:
    nu: dict[str, int] = {}
    for key in steps:
        for sp, n in _STEPS[key].items():
            nu[sp] = nu.get(sp, 0) + n
    left = " + ".join(f"{-n} {sp}" for sp, n in nu.items() if n < 0)
    right = " + ".join(f"{n} {sp}" for sp, n in nu.items() if n > 0)
    return f"{left} -> {right}"


def grid(rounds: int, points: int, sizes_n: list[int]) -> None:
    """Every reaction size × N: interleaved rounds per cell; prints each cell and the worst."""
    T = np.linspace(800.0, 1500.0, points)
    print(f"grid: {points} temperatures per reaction, {rounds} interleaved rounds per cell")
    worst_min, cells = np.inf, []
    for size, steps in GRID.items():
        rxn = feasibly.Reaction.parse(grid_equation(steps))
        assert len(rxn.terms) == size, (size, rxn.equation())
        for n in sizes_n:
            samples = draw_samples(build_inputs(rxn.species_used()), n, seed=1)
            model = linear_model(rxn, T, samples)
            ref, got = straightforward(model, samples), fast(model, samples)
            q_diff = float(np.max(np.abs(ref[3] - got[3]) / np.maximum(np.abs(ref[3]), 1.0)))
            t = interleave(
                {
                    "numpy": lambda m=model, s=samples: straightforward(m, s),
                    "feasibly": lambda m=model, s=samples: fast(m, s),
                },
                rounds,
            )
            ratios = [a / b for a, b in zip(t["numpy"], t["feasibly"], strict=True)]
            med = statistics.median(ratios)
            worst_min = min(worst_min, min(ratios))
            cells.append((med, size, n))
            print(
                f"  {size:2d} species ({len(samples.inputs):2d} inputs), N = {n:>9,}: "
                f"numpy {statistics.median(t['numpy']) * 1e3:8.1f} ms, feasibly "
                f"{statistics.median(t['feasibly']) * 1e3:7.1f} ms; ratio min {min(ratios):6.2f}× "
                f"median {med:6.2f}× max {max(ratios):6.2f}×; rel. quantile diff {q_diff:.0e}",
                flush=True,
            )
            del samples, model, ref, got
    med, size, n = min(cells)
    print(
        f"  worst cell (median ratio): {med:.2f}× at {size} species, N = {n:,}; "
        f"lowest single-round ratio anywhere: {worst_min:.2f}×"
    )


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
    parser.add_argument("--rounds", type=int, default=7, help="interleaved rounds (at least 5)")
    parser.add_argument("--grid-points", type=int, default=50)
    parser.add_argument(
        "--grid-n", default="10000,100000,1000000", help="trial counts of the grid (comma list)"
    )
    parser.add_argument("--no-grid", action="store_true")
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

    t = interleave(
        {
            "numpy": lambda: straightforward(model, samples),
            "feasibly": lambda: fast(model, samples),
        },
        args.rounds,
    )
    print("  " + time_line("straightforward (matrix + np.quantile)", t["numpy"]))
    print("  " + time_line("feasibly summarise                    ", t["feasibly"]))
    print("  " + ratio_line("ratio straightforward / feasibly      ", t["numpy"], t["feasibly"]))
    print(
        f"  same answers: P identical = {same_p}; max rel. quantile diff = {q_diff:.1e}; "
        f"max |mean diff| = {m_diff:.1e} J/mol; max rel. u diff = {u_diff:.1e}"
    )
    if not args.no_grid:
        grid(args.rounds, args.grid_points, [int(v) for v in args.grid_n.split(",")])

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
