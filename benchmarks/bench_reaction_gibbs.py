#!/usr/bin/env python
"""Benchmark: ΔrG° over 1000 temperatures for a 6-species reaction, feasibly vs Cantera.

Reaction: 2 CH4 + O2 + CO2 -> 3 CO + 3 H2 + H2O (partial-oxidation/dry-reforming mix; six distinct
gas species, every one valid 200–6000 K with one NASA-7 break at 1000 K). T = 300…3000 K.

Routes timed in the same run (best of N repeats with timeit):
  feasibly   feasibly.standard_properties(rxn, T) (reaction parse done once, outside the timing)
  ct-loop    Cantera species built from the library's own coefficients (tests/reference/_refs.py),
             Σν (thermo.h(T) − T thermo.s(T)) looping over T and species in Python
  ct-array   Cantera's vectorised route: ct.Solution(thermo="ideal-gas", species=...) with a
             SolutionArray of 1000 states; standard_gibbs_RT · R T, then Σν

Also prints the max |ΔrG°(feasibly) − ΔrG°(Cantera)| so speed is never bought with wrong answers.
Run by hand:  python benchmarks/bench_reaction_gibbs.py  [--repeat N]
"""

from __future__ import annotations

import argparse
import importlib.util
import timeit
from pathlib import Path

import numpy as np

import feasibly

EQUATION = "2 CH4(g) + O2(g) + CO2(g) -> 3 CO(g) + 3 H2(g) + H2O(g)"
NU = {"CH4(g)": -2, "O2(g)": -1, "CO2(g)": -1, "CO(g)": 3, "H2(g)": 3, "H2O(g)": 1}


def _refs():
    path = Path(__file__).resolve().parents[1] / "tests" / "reference" / "_refs.py"
    spec = importlib.util.spec_from_file_location("_refs", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=7, help="timeit repeats (best is reported)")
    args = ap.parse_args()

    import cantera as ct

    refs = _refs()
    lib = feasibly.default_library()
    rxn = feasibly.Reaction.parse(EQUATION, lib)
    T = np.linspace(300.0, 3000.0, 1000)
    sp = {sid: refs.cantera_species(lib[sid]) for sid in NU}

    def run_feasibly() -> np.ndarray:
        return feasibly.standard_properties(rxn, T).dG

    def run_ct_loop() -> np.ndarray:
        out = np.empty(T.size)
        for i, t in enumerate(T):
            g = 0.0
            for sid, n in NU.items():
                th = sp[sid].thermo
                g += n * (th.h(t) - t * th.s(t))
            out[i] = g / 1000.0  # J/kmol → J/mol
        return out

    gas = ct.Solution(thermo="ideal-gas", species=list(sp.values()))
    nu_vec = np.zeros(gas.n_species)
    for sid, n in NU.items():
        nu_vec[gas.species_index(sid)] = n
    arr = ct.SolutionArray(gas, shape=T.size)

    def run_ct_array() -> np.ndarray:
        arr.TP = T, 1e5
        g_rt = arr.standard_gibbs_RT  # (n_T, n_species), dimensionless
        return (g_rt @ nu_vec) * (ct.gas_constant / 1000.0) * T

    results = {"feasibly": run_feasibly(), "ct-loop": run_ct_loop(), "ct-array": run_ct_array()}
    times = {}
    for name, fn in (
        ("feasibly", run_feasibly),
        ("ct-loop", run_ct_loop),
        ("ct-array", run_ct_array),
    ):
        timer = timeit.Timer(fn)
        n, _ = timer.autorange()
        best = min(timer.repeat(repeat=args.repeat, number=n)) / n
        times[name] = best

    print(f"reaction: {rxn.equation()}   ({T.size} temperatures, {T[0]:g}–{T[-1]:g} K)")
    print(f"feasibly {feasibly.__version__}, cantera {ct.__version__}, numpy {np.__version__}")
    for name, t in times.items():
        print(f"  {name:9s} {t * 1e3:9.3f} ms per call (best of {args.repeat})")
    print(f"  ratio ct-loop / feasibly  = {times['ct-loop'] / times['feasibly']:8.2f}")
    ratio = times["ct-array"] / times["feasibly"]
    print(f"  ratio ct-array / feasibly = {ratio:8.2f}")
    ref = results["ct-loop"]
    print(
        f"  max |ΔrG° feasibly − ct-loop|  = {np.max(np.abs(results['feasibly'] - ref)):.3e} J/mol"
    )
    print(
        f"  max |ΔrG° feasibly − ct-array| = "
        f"{np.max(np.abs(results['feasibly'] - results['ct-array'])):.3e} J/mol"
    )


if __name__ == "__main__":
    main()
