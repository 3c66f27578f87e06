#!/usr/bin/env python
"""Benchmark: equilibrium on distinct cold states, feasibly's vectorised solver vs a Cantera loop.

Two systems, the same species and data in both codes (Cantera species built from the library's
own NASA-7 coefficients, tests/reference/_refs.py, as the reference tests do):

  gas only    CH4 H2O CO CO2 H2 N2 NH3 C2H6 CH3OH, all gas (9 species)
  condensed   C(cr,graphite) H2O CO H2 CO2 CH4: graphite as a pure condensed phase

--states distinct states per system (default 10^4), drawn once with a fixed seed: T uniform in
the range, P log-uniform, and a different feed in every state, so no state can start from
another's answer. Both codes start every state cold:

  feasibly  the composition kernel (feasibly.equilibrium.composition) on all states at once,
            no warm start from another state: G°/RT of every entry at each state's T, then one
            solve, each gas-only state starting from its own feed (gas-only states are iterated
            by the compiled Newton kernel where it is built, which the first line says; the
            condensed system by the vectorised numpy iteration)
  cantera   ct.Solution.equilibrate("TP") per state (gas only), or a ct.Mixture of the gas and
            a fixed-stoichiometry graphite phase, looped over --ct-states of the states per
            round (a different subset each round) and scaled per state to all states. The
            condensed system is timed with two of Cantera's solvers: its default
            (equilibrate("TP"), which runs VCS: on about 2 % of these states VCS gives up after
            1 000 iterations, printing "ERROR: FAILURE its = 1001!", and Cantera goes on with
            its "gibbs" solver) and "gibbs" alone, which solves every state here and in half the
            time (measured 3 December: 91 against 191 µs per state, mean of 500 states). The
            figure to quote is against the faster one.

Interleaved over --rounds rounds; prints min/median/max of the per-round ratio Cantera / feasibly
and the largest |Δx| of the gas mole fractions (and |Δn| of graphite) over the compared states.
Run by hand:  PYTHONPATH=src python benchmarks/bench_equilibrium.py [--rounds N] [--states N]
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import statistics
import time
from pathlib import Path

import numpy as np
from _rounds import ratio_line

import feasibly
from feasibly.equilibrium import _newton
from feasibly.equilibrium import composition as se

SYSTEMS = {
    "gas only": {
        "species": "CH4(g) H2O(g) CO(g) CO2(g) H2(g) N2(g) NH3(g) C2H6(g) CH3OH(g)",
        "feed": {
            "CH4(g)": (0.2, 2.0),
            "H2O(g)": (0.5, 4.0),
            "CO2(g)": (0.0, 1.0),
            "N2(g)": (0.0, 2.0),
        },
        "T": (600.0, 1300.0),
        "P_bar": (1.0, 50.0),
    },
    "condensed": {
        "species": "C(cr,graphite) H2O(g) CO(g) H2(g) CO2(g) CH4(g)",
        "feed": {"C(cr,graphite)": (0.5, 2.0), "H2O(g)": (0.5, 3.0), "CO2(g)": (0.0, 1.0)},
        "T": (700.0, 1500.0),
        "P_bar": (1.0, 10.0),
    },
}


def _refs():
    path = Path(__file__).resolve().parents[1] / "tests" / "reference" / "_refs.py"
    spec = importlib.util.spec_from_file_location("_refs", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _states(system: dict, n: int, rng: np.random.Generator):
    T = rng.uniform(*system["T"], n)
    lo, hi = np.log(system["P_bar"][0]), np.log(system["P_bar"][1])
    P = np.exp(rng.uniform(lo, hi, n)) * 1e5
    feed = {sp: rng.uniform(a, b, n) for sp, (a, b) in system["feed"].items()}
    return T, P, feed


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--states", type=int, default=10_000)
    ap.add_argument("--ct-states", type=int, default=500, help="Cantera states per round")
    ap.add_argument("--rounds", type=int, default=5, help="interleaved rounds (at least 5)")
    args = ap.parse_args()
    import cantera as ct

    refs = _refs()
    lib = feasibly.default_library()
    rng = np.random.default_rng(13)  # fixed: the same states every run
    print(
        f"{args.states:,} distinct cold states per system; Cantera {ct.__version__} on "
        f"{args.ct_states} states per round, scaled; {args.rounds} interleaved rounds; "
        f"compiled Newton kernel {'in use' if _newton.compiled() else 'NOT built (numpy)'}; "
        f"load average {' '.join(f'{x:.1f}' for x in os.getloadavg())}"
    )
    for name, system in SYSTEMS.items():
        bench_system(name, system, args, lib, refs, ct, rng)


def bench_system(name, system, args, lib, refs, ct, rng) -> None:  # type: ignore[no-untyped-def]
    """Both routes on one system's states, interleaved; prints timings, ratios and |Δx|."""
    sset = se._species_set(system["species"], lib)
    entries = sset.entries
    T, P, feed = _states(system, args.states, rng)
    b = se._feed_elements(feed, sset, lib, args.states)
    gas = sset.gas

    def run_feasibly() -> tuple[np.ndarray, np.ndarray]:
        # As equilibrate() does: each state may start from its own feed (gas-only systems).
        avail = se._availability(sset, T)
        prep = se._Prepared(sset, T, P, b, avail, se._feed_amounts(feed, sset, args.states))
        amounts, ok, *_ = se._solve(prep, se._gibbs_rt(sset, T, avail))
        return amounts, ok

    gases = [sp for sp in entries if sp.phase == "g"]
    conds = [sp for sp in entries if sp.phase != "g"]
    ct_gas = ct.Solution(thermo="ideal-gas", species=[refs.cantera_species(sp) for sp in gases])
    phases = []
    for sp in conds:
        data = refs.cantera_species(sp).input_data
        # 1e-12 m³/kmol: Cantera's P·V term (absent from the pure-condensed model) < 1e-9 J/mol
        data["equation-of-state"] = {"model": "constant-volume", "molar-volume": 1e-12}
        phases.append(
            ct.Solution(thermo="fixed-stoichiometry", species=[ct.Species.from_dict(data)])
        )

    def run_cantera(rows: np.ndarray, solver: str) -> tuple[np.ndarray, np.ndarray]:
        x = np.empty((rows.size, len(gases)))
        m = np.empty((rows.size, len(conds)))
        for n, i in enumerate(rows):
            gfeed = {sp.id: float(feed[sp.id][i]) for sp in gases if sp.id in feed}
            if not conds:
                ct_gas.TPX = T[i], P[i], gfeed
                ct_gas.equilibrate("TP")
                x[n] = ct_gas.X
                continue
            ct_gas.TPX = T[i], P[i], gfeed
            mix = ct.Mixture(
                [(ct_gas, sum(gfeed.values()))]
                + [(ph, float(feed[sp.id][i])) for ph, sp in zip(phases, conds, strict=True)]
            )
            mix.T, mix.P = T[i], P[i]
            mix.equilibrate("TP", solver=solver)
            x[n] = ct_gas.X
            m[n] = [mix.phase_moles(k + 1) for k in range(len(conds))]
        return x, m

    # Cantera's routes: its default solver, and for the condensed system also "gibbs" alone.
    solvers = {"ct": "auto"} | ({"ct-gibbs": "gibbs"} if conds else {})

    run_feasibly()  # warm-up (imports, caches)
    # Wall and CPU seconds per round of each route (CPU: of this process; Cantera runs on one
    # thread), the largest differences to each Cantera route, feasibly's unconverged states.
    wall: dict[str, list[float]] = {k: [] for k in ["fe", *solvers]}
    cpu: dict[str, list[float]] = {k: [] for k in wall}
    dx = dict.fromkeys(solvers, 0.0)
    dn = dict.fromkeys(solvers, 0.0)
    failed = 0
    for r in range(args.rounds):
        rows = rng.choice(args.states, size=args.ct_states, replace=False)
        order = list(wall) if r % 2 == 0 else list(wall)[::-1]
        out: dict[str, tuple[np.ndarray, np.ndarray]] = {}
        for route in order:
            t0, c0 = time.perf_counter(), time.process_time()
            if route == "fe":
                amounts, ok = run_feasibly()
                wall[route].append(time.perf_counter() - t0)
                cpu[route].append(time.process_time() - c0)
            else:
                out[route] = run_cantera(rows, solvers[route])
                wall[route].append((time.perf_counter() - t0) / rows.size * args.states)
                cpu[route].append((time.process_time() - c0) / rows.size * args.states)
        failed = int(np.count_nonzero(~ok))
        a = amounts[rows]
        x_fe = a[:, gas] / a[:, gas].sum(axis=1, keepdims=True)
        for route, (x_ct, m_ct) in out.items():
            dx[route] = max(dx[route], float(np.abs(x_fe - x_ct).max()))
            if conds:
                dn[route] = max(dn[route], float(np.abs(a[:, ~gas] - m_ct).max()))
    print(f"{name}: {system['species']}")
    print(f"  feasibly {statistics.median(wall['fe']):.3f} s for all states (median)")
    for route, solver in solvers.items():
        label = f"Cantera ({'default solver' if solver == 'auto' else solver + ' solver'})"
        t = wall[route]
        print(
            f"  {label}: {statistics.median(t):.2f} s scaled to all states (median, "
            f"{statistics.median(t) / args.states * 1e6:.0f} µs per state)"
        )
        print("    " + ratio_line(f"{label} / feasibly", t, wall["fe"]))
        # On a shared machine the wall-clock ratio moves with the load; CPU time much less.
        print("    " + ratio_line(f"{label} / feasibly, CPU time", cpu[route], cpu["fe"]))
        extra = f"; max |Δn| graphite {dn[route]:.1e} mol" if conds else ""
        print(
            f"    max |Δx| on {args.rounds * args.ct_states} compared states: "
            f"{dx[route]:.1e}{extra}"
        )
    print(f"  feasibly states not converged: {failed}")


if __name__ == "__main__":
    main()
