"""Generate the frozen equilibrium sweep (``cases.json`` beside this file).

Run from the checkout: ``PYTHONPATH=src python tests/equilibrium/sweep/generate_cases.py``.
Deterministic (fixed seed, sorted library order): running it twice gives identical bytes. The
cases are checked by ``tests/equilibrium/test_sweep.py``.

Each system is a random set of 2–4 elements from a pool of light elements (H C O N S Cl) with,
in half of them, one metal or metalloid whose condensed phases (and their allotropes and melts)
may appear and vanish, and, in three quarters of those, argon as an inert that is always fed
(the others may end with no gas phase at all). Its species are up to eight gases made of those
elements and, where a metal was drawn, up to four condensed compounds, each written without a
phase so that every phase the library holds for it takes part. Each state has its own
temperature (300–3000 K, uniform, where every listed compound has data), pressure (10⁻³–10³ bar,
log-uniform) and feed: a random amount (10⁻⁴–10 mol, log-uniform) of each entry of a random
subset of the listed ones, whose element totals are the case's (so every state is physically
possible, and many sit exactly where some species cannot form at all, like CO + 2 H2 with
neither CO2 nor H2O).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

import feasibly
from feasibly.thermo import resolve_species, split_phase_label

HERE = Path(__file__).resolve().parent
SEED = 20261202  # fixed: the same cases on every run
N_SYSTEMS = 250
STATES_PER_SYSTEM = 84  # 250 × 84 = 21 000 ≥ the 20 000 asked for
LIGHT = ("H", "C", "O", "N", "S", "Cl")
HEAVY = ("Si", "Ca", "Mg", "Fe", "Na", "Al", "Ti", "Cu")
T_LO, T_HI = 300.0, 3000.0
P_LO, P_HI = 1e-3, 1e3  # bar


def _round(x: float) -> float:
    return float(f"{x:.9g}")  # 9 digits: exact enough to define the case, short in the file


def _system(rng: np.random.Generator, lib: feasibly.Library, i: int) -> dict:
    while True:
        light = list(rng.choice(LIGHT, size=int(rng.integers(1, 4)), replace=False))
        metal = bool(rng.random() < 0.5)
        els = set(light) | ({str(rng.choice(HEAVY))} if metal else set())
        inert = metal and rng.random() < 0.75
        gases = [
            sp
            for sp in lib
            if sp.phase == "g"
            and not sp.charge
            and set(sp.elements) <= els
            and sum(sp.elements.values()) <= 6  # small molecules: the species a chemist lists
            and not sp.id.startswith("(")
        ]
        if len(gases) < 2:
            continue
        tokens: list[str] = []
        condensed_formulas: list[str] = []
        if metal:
            formulas = sorted(
                {
                    sp.formula
                    for sp in lib
                    if sp.phase in ("cr", "l")
                    and not sp.charge
                    and set(sp.elements) <= els
                    and set(sp.elements) & (els - set(LIGHT))
                }
            )
            if not formulas:
                continue
            k = min(len(formulas), int(rng.integers(1, 5)))
            condensed_formulas = [str(f) for f in rng.choice(formulas, size=k, replace=False)]
            tokens += condensed_formulas
        pool = [sp for sp in gases if sp.formula not in condensed_formulas]
        k = min(len(pool), int(rng.integers(2, 9)))
        picks = sorted(int(j) for j in rng.choice(len(pool), size=k, replace=False))
        tokens += [pool[j].id for j in picks]
        if inert:
            tokens.append("Ar(g)")
        # entries and the temperatures every token covers
        entries = []
        for tok in tokens:
            formula, phase, form = split_phase_label(tok)
            found = resolve_species(lib, formula, phase, form, tok)[1]
            entries.append([sp for sp in found if sp.phase in ("g", "l", "cr")])
        T = rng.uniform(T_LO, T_HI, 4 * STATES_PER_SYSTEM)
        ok = np.ones(T.size, dtype=bool)
        for group in entries:
            ok &= np.any([sp.covers(T) for sp in group], axis=0)
        T = T[ok][:STATES_PER_SYSTEM]
        if T.size < STATES_PER_SYSTEM:
            continue
        flat = [sp for group in entries for sp in group]
        elements = sorted({el for sp in flat for el in sp.elements})
        n = STATES_PER_SYSTEM
        use = rng.random((n, len(flat))) < 0.5
        use[np.arange(n), rng.integers(0, len(flat), n)] = True  # at least one entry fed
        if inert:  # the inert is always fed: a gas phase exists at every state of the system
            use[:, [sp.id for sp in flat].index("Ar(g)")] = True
        amounts = np.where(use, np.exp(rng.uniform(math.log(1e-4), math.log(10.0), use.shape)), 0)
        P = np.exp(rng.uniform(math.log(P_LO), math.log(P_HI), n))
        return {
            "name": f"system {i:03d}: {'-'.join(elements)}",
            "species": tokens,
            "condensed": bool(condensed_formulas),
            "T_K": [_round(t) for t in T],
            "P_bar": [_round(p) for p in P],
            # the feed, mol of each entry per state; its element totals are the case's
            "feed": {
                sp.id: [_round(v) for v in amounts[:, j]]
                for j, sp in enumerate(flat)
                if np.any(amounts[:, j] > 0)
            },
        }


def main() -> None:
    rng = np.random.default_rng(SEED)
    lib = feasibly.default_library()
    systems = [_system(rng, lib, i) for i in range(N_SYSTEMS)]
    doc = {
        "generator": "tests/equilibrium/sweep/generate_cases.py",
        "seed": SEED,
        "library_version": lib.version,
        "cases": sum(len(s["T_K"]) for s in systems),
        "systems": systems,
    }
    text = json.dumps(doc, separators=(",", ":"), ensure_ascii=True)
    (HERE / "cases.json").write_text(text + "\n", encoding="utf-8")
    print(f"{doc['cases']} cases in {len(systems)} systems → {HERE / 'cases.json'}")


if __name__ == "__main__":
    main()
