#!/usr/bin/env python
"""Benchmark: ΔrG° over 1000 temperatures for a 6-species reaction, feasibly vs numpy and Cantera.

Reaction: 2 CH4 + O2 + CO2 -> 3 CO + 3 H2 + H2O (partial-oxidation/dry-reforming mix; six distinct
gas species, NASA-9 polynomials from thermo.inp with a break at 1000 K). T = 300…3000 K.

Routes, interleaved over --rounds rounds (each round times every route in turn):
  feasibly   feasibly.standard_properties(rxn, T).dG (reaction parse done once, outside the timing;
             the call also returns ΔrH°, ΔrS°, ΔrCp° and the phases used)
  numpy      plain vectorised numpy on the same NASA-9 coefficients: per species, pick each T's
             interval, evaluate H/RT and S/R, then Σν G (coefficient arrays prepared outside)
  ct-loop    Cantera species built from the library's own coefficients (tests/reference/_refs.py),
             Σν (thermo.h(T) − T thermo.s(T)) looping over T and species in Python
  ct-array   Cantera's vectorised route: ct.Solution(thermo="ideal-gas", species=...) with a
             SolutionArray of 1000 states; standard_gibbs_RT · R T, then Σν

Prints min/median/max of the per-round ratios and the max |ΔrG°(feasibly) − ΔrG°(other)| so speed
is never bought with wrong answers.
Run by hand:  python benchmarks/bench_reaction_gibbs.py  [--rounds N]
"""

from __future__ import annotations

import argparse
import importlib.util
from pathlib import Path

import numpy as np
from _rounds import interleave, ratio_line, time_line

import feasibly
from feasibly.library import R

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
    ap.add_argument("--rounds", type=int, default=9, help="interleaved rounds (at least 5)")
    ap.add_argument("--number", type=int, default=20, help="calls per route per round")
    args = ap.parse_args()

    import cantera as ct

    refs = _refs()
    lib = feasibly.default_library()
    rxn = feasibly.Reaction.parse(EQUATION, lib)
    T = np.linspace(300.0, 3000.0, 1000)
    sp = {sid: refs.cantera_species(lib[sid]) for sid in NU}

    def run_feasibly() -> np.ndarray:
        return feasibly.standard_properties(rxn, T).dG

    # Plain numpy on the same coefficients: everything that does not depend on T is prepared here.
    plain = []
    for sid, n in NU.items():
        m = lib[sid].cp_model
        h_ref, s_ref = m.absolute_298()
        plain.append(
            (
                float(n),
                np.asarray(m.breaks[1:-1]),
                m.coeffs,
                lib[sid].dHf.value - h_ref,
                lib[sid].S298.value - s_ref,
            )
        )

    def run_numpy() -> np.ndarray:
        total = np.zeros(T.size)
        logT = np.log(T)
        inv = 1.0 / T
        for n, inner, c, off_h, off_s in plain:
            a = c[np.searchsorted(inner, T, side="left")].T
            if a.shape[0] == 9:  # NASA-9 (TP-2002-211556 eqs. 2-3)
                poly_h = a[2] + T * (a[3] / 2 + T * (a[4] / 3 + T * (a[5] / 4 + T * a[6] / 5)))
                h_rt = poly_h + inv * (a[1] * logT - a[0] * inv + a[7])
                poly_s = T * (a[3] + T * (a[4] / 2 + T * (a[5] / 3 + T * a[6] / 4)))
                s_r = a[2] * logT + poly_s - inv * (a[1] + 0.5 * a[0] * inv) + a[8]
            else:  # NASA-7
                poly_h = a[0] + T * (a[1] / 2 + T * (a[2] / 3 + T * (a[3] / 4 + T * a[4] / 5)))
                h_rt = poly_h + a[5] / T
                s_r = a[0] * logT + T * (a[1] + T * (a[2] / 2 + T * (a[3] / 3 + T * a[4] / 4)))
                s_r = s_r + a[6]
            total += n * (R * T * (h_rt - s_r) + off_h - T * off_s)
        return total

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

    results = {
        "feasibly": run_feasibly(),
        "numpy": run_numpy(),
        "ct-loop": run_ct_loop(),
        "ct-array": run_ct_array(),
    }
    # The Python loop over Cantera is ~1000× slower: one call per round keeps the run short.
    fast = interleave(
        {"feasibly": run_feasibly, "numpy": run_numpy, "ct-array": run_ct_array},
        args.rounds,
        args.number,
    )
    loop = interleave({"feasibly": run_feasibly, "ct-loop": run_ct_loop}, args.rounds, 1)

    print(f"reaction: {rxn.equation()}   ({T.size} temperatures, {T[0]:g}–{T[-1]:g} K)")
    print(f"feasibly {feasibly.__version__}, cantera {ct.__version__}, numpy {np.__version__}")
    for name, t in fast.items():
        print("  " + time_line(f"{name:9s} per call", t))
    print("  " + time_line(f"{'ct-loop':9s} per call", loop["ct-loop"]))
    print("  " + ratio_line("numpy / feasibly   ", fast["numpy"], fast["feasibly"]))
    print("  " + ratio_line("ct-array / feasibly", fast["ct-array"], fast["feasibly"]))
    print("  " + ratio_line("ct-loop / feasibly ", loop["ct-loop"], loop["feasibly"]))
    for other in ("numpy", "ct-loop", "ct-array"):
        diff = np.max(np.abs(results["feasibly"] - results[other]))
        print(f"  max |ΔrG° feasibly − {other}| = {diff:.3e} J/mol")


if __name__ == "__main__":
    main()
