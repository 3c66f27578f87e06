"""The generated equilibrium sweep: every state converged and verified, or refused with its reason.

Cases: ``sweep/cases.json``, frozen by ``sweep/generate_cases.py`` (seed in the file): 21 000
states in 250 random systems of 2–5 elements, with and without condensed phases, 300–3000 K,
10⁻³–10³ bar, feeds of random subsets of the listed species (so many states sit exactly where
some species cannot form).

Each converged state is checked by the physics it must obey, as Cantera's own test suite does
(``test/python/test_equilibrium.py::assert_at_equilibrium``):

- element balance: Σ_j a_ej n_j equals the feed's totals (relative to the largest total);
- Gibbs minimum: for every species present, μ_j/RT = Σ_e a_ej λ_e with one set of element
  potentials λ (found by least squares; the residual is reported), where μ_j/RT = G°_j/RT +
  ln(x_j P/P°) for a gas and G°_j/RT for a pure condensed phase; and for every condensed phase
  absent, G°_c/RT − Σ_e a_ec λ_e ≥ 0 (it would raise G if it formed).

A state refused as having no gas phase is checked independently: the least G of condensed
phases alone (a linear programme, scipy's HiGHS) and its element potentials must leave every
gas below the total pressure (Σ_j exp(a_j·λ − G°_j/RT) P°/P ≤ 1).

A deterministic subset is compared with Cantera's ``equilibrate`` on the same species and data
(built from the library's NASA-7 coefficients, tests/reference/_refs.py): mole fractions within
1e-6 where Cantera converges, or, where they differ, feasibly's G is the lower one.
"""

from __future__ import annotations

import importlib.util
import json
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import linprog, minimize

import feasibly
from feasibly.equilibrium import equilibrate
from feasibly.errors import EquilibriumNotConverged

pytestmark = pytest.mark.slow

HERE = Path(__file__).resolve().parent
CASES = json.loads((HERE / "sweep" / "cases.json").read_text("utf-8"))
LIB = feasibly.default_library()
R = 8.314462618  # J/(mol K), CODATA 2018 (from memory of the SI definition), as the library uses

# Element balance promised by the solver (relative to the largest element total).
BALANCE_TOL = 1e-10
# Gibbs-condition residual in units of RT: the solver's steps end below 1e-12 of the amounts; a
# trace species set by the element balance alone carries the rounding of the totals (1e-14 of
# the total over an amount down to 1e-12 → ~1e-2 relative is possible in principle; measured
# worst is reported by the test). 1e-6 RT is 0.01 J/mol at 1500 K: far below any data uncertainty.
GIBBS_TOL = 1e-6
# Every 7th state goes to Cantera: ~3000 comparisons keep the sweep within a few minutes.
CANTERA_EVERY = 7
X_TOL = 1e-6  # mole fractions, as in tests/reference/test_equilibrium_vs_cantera.py


def _refs():
    spec = importlib.util.spec_from_file_location("_refs", HERE.parent / "reference" / "_refs.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _solve_system(system: dict) -> tuple[feasibly.equilibrium.Equilibrium | None, np.ndarray, dict]:
    """Equilibrium of the states that are not refused, their indices, and the refusals."""
    T = np.array(system["T_K"])
    P = np.array(system["P_bar"])
    feed = {k: np.array(v) for k, v in system["feed"].items()}
    idx = np.arange(T.size)
    refused: dict[int, str] = {}
    for _ in range(2):
        try:
            eq = equilibrate(
                system["species"],
                (T[idx], "K"),
                (P[idx], "bar"),
                {k: v[idx] for k, v in feed.items()},
            )
            return eq, idx, refused
        except EquilibriumNotConverged as exc:
            assert exc.indices and len(exc.indices) == len(exc.reasons), str(exc)
            refused.update({int(idx[i]): r for i, r in zip(exc.indices, exc.reasons, strict=True)})
            idx = np.array([i for i in idx if i not in refused])
            if idx.size == 0:
                return None, idx, refused
    raise AssertionError(f"{system['name']}: the states left after refusals were refused again")


def _g_rt(entries, T):
    g = np.full((T.size, len(entries)), np.nan)
    for j, sp in enumerate(entries):
        ok = sp.covers(T)
        if np.any(ok):
            g[ok, j] = sp.gibbs(T[ok]) / (R * T[ok])
    return g


def _check_state(A, g, n, gas, P_bar):
    """(balance not checked here) Gibbs residual over present species, worst absent margin."""
    ng = np.where(gas, n, 0.0)
    N = ng.sum()
    # Present: a normal float. A subnormal amount (below 2.2e-308 mol, e.g. C4 at 3e-323 over
    # CO2 + O2 at 406 K) keeps only a few significant bits, so its log cannot carry the 1e-6 RT
    # condition; it stands for an amount that underflows, and is judged as absent (its margin).
    present = (n >= np.finfo(float).tiny) & np.isfinite(g)
    mu = np.where(gas, g + np.log(np.where(gas & present, n, 1.0) / N * P_bar), g)
    Ap = A[:, present]
    lam, *_ = np.linalg.lstsq(Ap.T, mu[present], rcond=None)
    resid = float(np.max(np.abs(Ap.T @ lam - mu[present])))
    # a gas judged absent for underflow must be one the potentials put below 1e-290 mol too
    under = gas & ~present & (n > 0) & np.isfinite(g)
    if np.any(under):
        ln_pred = A[:, under].T @ lam - g[under] + math.log(N / P_bar)
        resid = max(resid, float(np.max(ln_pred - math.log(1e-290), initial=0.0)))
    # absent condensed phases with data at T whose composition the present species span
    absent = ~present & ~gas & np.isfinite(g)
    margin = np.inf
    if np.any(absent):
        proj = Ap @ np.linalg.pinv(Ap)  # projector onto the span of the present species
        for j in np.nonzero(absent)[0]:
            if np.allclose(proj @ A[:, j], A[:, j], atol=1e-9):
                margin = min(margin, float(g[j] - A[:, j] @ lam))
    return resid, margin


def _no_gas_certified(entries, T, P_bar, b_by_element):
    """Independent check that no gas phase exists: condensed-only least G and its potentials.

    Only the elements the feed holds count (a species holding another cannot form at all)."""
    entries = [sp for sp in entries if all(b_by_element.get(el, 0.0) > 0 for el in sp.elements)]
    els = sorted(el for el, v in b_by_element.items() if v > 0)
    b = np.array([b_by_element[el] for el in els])
    g = _g_rt(entries, np.array([T]))[0]
    gas = np.array([sp.phase == "g" for sp in entries])
    A = np.array([[sp.elements.get(el, 0.0) for sp in entries] for el in els])
    cond = ~gas & np.isfinite(g)
    res = linprog(g[cond], A_eq=A[:, cond], b_eq=b, bounds=(0, None), method="highs")
    if res.status != 0:
        return False
    avail_gas = gas & np.isfinite(g)
    Ag, cg = A[:, avail_gas], g[avail_gas] + math.log(P_bar)

    def lse(lam):
        z = Ag.T @ lam - cg
        return float(z.max() + np.log(np.sum(np.exp(z - z.max())))) if z.size else -np.inf

    # 1e-7: the LP's potentials are exact to ~1e-9; a gas that would just reach P is borderline
    lam = res.eqlin.marginals
    if lse(lam) <= 1e-7:
        return True
    # the potentials of the condensed optimum need not be unique (fewer phases present than
    # elements): look among all of them, i.e. a_c·λ = g_c for the phases present and ≤ g_c for
    # the others, for one that keeps the gases below P (a convex problem)
    present = res.x > 0
    Ac, gc = A[:, cond], g[cond]
    cons = [
        {"type": "eq", "fun": lambda v: Ac[:, present].T @ v - gc[present]},
        {"type": "ineq", "fun": lambda v: gc[~present] - Ac[:, ~present].T @ v},
    ]
    best = minimize(lse, lam, constraints=cons, method="SLSQP", options={"ftol": 1e-14})
    ok = all(np.all(np.abs(c["fun"](best.x)) <= 1e-8) for c in cons[:1]) and np.all(
        cons[1]["fun"](best.x) >= -1e-8
    )
    return bool(ok and lse(best.x) <= 1e-7)


def test_generated_sweep_every_state_converged_and_verified_or_refused():
    refs = _refs()
    ct = pytest.importorskip("cantera")
    cases = converged = 0
    refusals: dict[str, int] = {}
    worst_balance = worst_gibbs = 0.0
    worst_margin = np.inf
    cantera_n = cantera_ok = cantera_conv = cantera_lower = 0
    worst_dx = 0.0
    failures: list[str] = []
    for system in CASES["systems"]:
        n_states = len(system["T_K"])
        cases += n_states
        eq, idx, refused = _solve_system(system)
        for i, reason in refused.items():
            refusals[reason] = refusals.get(reason, 0) + 1
            if reason != "no gas phase":
                failures.append(f"{system['name']} state {i}: refused as {reason}")
                continue
            entries = feasibly.equilibrium.composition._species_set(system["species"], LIB).entries
            feed = {k: v[i] for k, v in system["feed"].items()}
            els = sorted({el for sp in entries for el in sp.elements})
            b = {el: sum(LIB[k].elements.get(el, 0.0) * v for k, v in feed.items()) for el in els}
            if not _no_gas_certified(entries, system["T_K"][i], system["P_bar"][i], b):
                failures.append(f"{system['name']} state {i}: refused as no gas, not confirmed")
        if eq is None:
            continue
        converged += idx.size
        entries = [LIB[s] for s in eq.species]
        gas = np.array([p == "g" for p in eq.phases])
        got = eq.amounts @ eq.element_matrix.T
        bal = np.abs(got - eq.feed_elements) / eq.feed_elements.max(axis=1, keepdims=True)
        worst_balance = max(worst_balance, float(bal.max()))
        g = _g_rt(entries, eq.T)
        for k in range(idx.size):
            resid, margin = _check_state(eq.element_matrix, g[k], eq.amounts[k], gas, eq.P[k] / 1e5)
            worst_gibbs = max(worst_gibbs, resid)
            worst_margin = min(worst_margin, margin)
            if resid > GIBBS_TOL or margin < -GIBBS_TOL or bal[k].max() > BALANCE_TOL:
                failures.append(
                    f"{system['name']} state {idx[k]}: balance {bal[k].max():.1e}, "
                    f"Gibbs residual {resid:.1e}, absent margin {margin:.1e}"
                )
        # Cantera on every CANTERA_EVERY-th state
        for k in range(idx.size):
            if idx[k] % CANTERA_EVERY:
                continue
            cantera_n += 1
            T, P = float(eq.T[k]), float(eq.P[k])
            avail = [j for j, sp in enumerate(entries) if sp.covers(np.array([T]))[0]]
            ref = _cantera(
                ct, refs, [entries[j] for j in avail], eq.feed_elements[k], eq.elements, T, P
            )
            if ref is None:
                continue
            cantera_conv += 1
            x_ref, G_ref = ref
            x = eq.gas_fractions[k, avail]
            dx = float(np.max(np.abs(np.where(gas[avail], x - x_ref, 0.0))))
            if dx <= X_TOL:
                cantera_ok += 1
                worst_dx = max(worst_dx, dx)
                continue
            G_ours = float(
                np.sum(
                    eq.amounts[k, avail]
                    * np.where(
                        gas[avail],
                        g[k, avail] + np.log(np.where(x > 0, x, 1.0) * P / 1e5),
                        g[k, avail],
                    )
                )
            )
            if G_ours <= G_ref + 1e-9 * (1.0 + abs(G_ref)):
                cantera_lower += 1  # Cantera stopped at a higher G: ours is the minimum
            else:
                failures.append(f"{system['name']} state {idx[k]}: Cantera lower G, |Δx| {dx:.1e}")
    print(
        f"\nsweep: {cases} cases, {converged} converged and verified, refused: {refusals}; "
        f"worst element balance {worst_balance:.1e}, worst Gibbs residual {worst_gibbs:.1e} RT, "
        f"worst absent-phase margin {worst_margin:.1e} RT; Cantera: {cantera_n} compared, "
        f"{cantera_conv} converged, {cantera_ok} within {X_TOL:g} (worst |Δx| {worst_dx:.1e}), "
        f"{cantera_lower} where Cantera stopped at a higher G"
    )
    assert cases >= 20_000
    assert not failures, "\n".join(failures[:30])


def _cantera(ct, refs, entries, b, elements, T, P):
    """(gas mole fractions per entry, G/RT of the mixture) from Cantera, or None if it fails."""
    gases = [sp for sp in entries if sp.phase == "g"]
    conds = [sp for sp in entries if sp.phase != "g"]
    gas = ct.Solution(thermo="ideal-gas", species=[refs.cantera_species(sp) for sp in gases])
    # Cantera starts from amounts; any non-negative amounts with the element totals b do
    A = np.array([[sp.elements.get(el, 0.0) for sp in entries] for el in elements])
    start = linprog(np.zeros(len(entries)), A_eq=A, b_eq=b, bounds=(0, None), method="highs")
    if start.status != 0:
        return None
    n0 = start.x
    try:
        if not conds:
            gas.TPX = T, P, np.where(n0 > 0, n0, 0.0) + 1e-300
            gas.equilibrate("TP", rtol=1e-14, max_iter=500)
            x = gas.X
            g = np.array([refs.cantera_g(refs.cantera_species(sp), T) for sp in gases]) / (R * T)
            G = float(np.sum(x * (g + np.log(np.maximum(x, 1e-300) * P / 1e5))))
            N = float(b.sum() / (A @ x).sum())  # moles of gas: total atoms / atoms per mole
            return x, G * N
        ng = [n0[j] for j, sp in enumerate(entries) if sp.phase == "g"]
        gas.TPX = T, P, np.array(ng) + 1e-300
        phases = []
        for sp in conds:
            data = refs.cantera_species(sp).input_data
            data["equation-of-state"] = {"model": "constant-volume", "molar-volume": 1e-12}
            phases.append(
                ct.Solution(thermo="fixed-stoichiometry", species=[ct.Species.from_dict(data)])
            )
        cn = [n0[j] for j, sp in enumerate(entries) if sp.phase != "g"]
        mix = ct.Mixture([(gas, max(sum(ng), 1e-12)), *zip(phases, cn, strict=True)])
        mix.T, mix.P = T, P
        try:
            mix.equilibrate("TP", solver="vcs", rtol=1e-13, max_steps=5000)
        except ct.CanteraError:
            mix.equilibrate("TP", solver="gibbs", rtol=1e-13, max_steps=5000)
        x = np.zeros(len(entries))
        gi = [j for j, sp in enumerate(entries) if sp.phase == "g"]
        x[gi] = gas.X
        G = float(np.sum(mix.species_moles * mix.chemical_potentials)) / (R * 1000.0 * T)
        return x, G
    except ct.CanteraError:
        return None
