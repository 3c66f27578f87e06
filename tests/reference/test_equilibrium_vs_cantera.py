"""Equilibrium compositions against Cantera's ``equilibrate('TP')`` on the same species and data.

Reference: Cantera 3.2. Gas-only systems use ``ct.Solution(thermo='ideal-gas')``'s own
equilibrium solver; systems with condensed phases use a ``ct.Mixture`` of that gas and one
``fixed-stoichiometry`` phase per condensed species, equilibrated with ``solver='vcs'``
(falling back to ``solver='gibbs'``, Cantera's other multiphase solver, where VCS reports a
failure — it does when graphite is used up). Every species is built from the library's own
NASA-7 coefficients with a6/a7 shifted to the library's ΔfH° and S° (tests/reference/_refs.py),
so both codes minimise the same Gibbs energy. Condensed phases get a molar volume of
1e-12 m³/kmol, which makes Cantera's P·V term (absent from the library's pure-condensed model)
smaller than 1e-9 J/mol.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

import feasibly
from feasibly.equilibrium.conversion import equilibrate

ct = pytest.importorskip("cantera")

_spec = importlib.util.spec_from_file_location("_refs", Path(__file__).with_name("_refs.py"))
refs = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(refs)

LIB = feasibly.default_library()
# The target: mole fractions within 1e-6 absolute. Condensed amounts are compared on the
# same footing: within 1e-6 of the feed's total amount.
X_TOL = 1e-6

#: name → (species, feeds, temperatures in K, pressures in bar)
SYSTEMS = {
    "steam reforming": (
        "CH4(g) H2O(g) CO(g) CO2(g) H2(g)",
        ["CH4:1, H2O:2", "CH4:1, H2O:1, CO2:0.5"],
        np.arange(600.0, 1301.0, 100.0),
        [1.0, 5.0, 30.0],
    ),
    "water-gas shift": (
        "CO(g) H2O(g) CO2(g) H2(g) N2(g)",
        ["CO:1, H2O:1", "CO:1, H2O:3, N2:1"],
        np.arange(400.0, 1401.0, 100.0),
        [1.0, 20.0],
    ),
    "ammonia synthesis": (
        "N2(g) H2(g) NH3(g) Ar(g)",
        ["N2:1, H2:3, Ar:0.1", "N2:1, H2:1"],
        np.arange(500.0, 1001.0, 50.0),
        [1.0, 100.0, 300.0],
    ),
    "calcination under CO2": (
        "CaCO3(cr,calcite) CaO(cr) CO2(g) N2(g)",
        ["CaCO3:1, CO2:0.05, N2:1", "CaO:1, CO2:0.5, N2:1"],
        np.arange(800.0, 1200.1, 25.0),
        [1.0],
    ),
    # Three condensed phases that pin the potentials of Ca, C and O together at the start, below
    # the calcite decomposition pressure: the solver's first phase set cannot hold there.
    "calcination with graphite in air, part vacuum": (
        "CaCO3(cr,calcite) CaO(cr) C(cr,graphite) CO2(g) CO(g) O2(g) N2(g)",
        ["CaCO3:0.6, C:0.7, O2:0.47, N2:1.9", "CaCO3:0.8, C:0.5, O2:0.43, N2:0.43"],
        np.arange(700.0, 1501.0, 100.0),
        [0.17, 1.0],
    ),
    "carbon gasification with graphite": (
        "C(cr,graphite) H2O(g) CO(g) H2(g) CO2(g) CH4(g)",
        ["C:1, H2O:1.5", "C:2, H2O:1, CO2:0.5"],
        np.arange(600.0, 1501.0, 100.0),
        [1.0, 10.0],
    ),
    "SO2 oxidation": (
        "SO2(g) O2(g) SO3(g) N2(g)",
        ["SO2:1, O2:1, N2:4", "SO2:2, O2:1"],
        np.arange(500.0, 1301.0, 100.0),
        [1.0, 5.0],
    ),
    "methanol synthesis": (
        "CO(g) CO2(g) H2(g) CH3OH(g) H2O(g)",
        ["CO:1, CO2:0.2, H2:2.5", "CO2:1, H2:3"],
        np.arange(400.0, 801.0, 50.0),
        [10.0, 50.0],
    ),
}


def _condensed_phase(sp):
    s = refs.cantera_species(sp)
    data = s.input_data
    data["equation-of-state"] = {"model": "constant-volume", "molar-volume": 1e-12}
    return ct.Solution(thermo="fixed-stoichiometry", species=[ct.Species.from_dict(data)])


def _cantera_equilibrium(entries, feed_amounts, T, P):
    """(gas mole fractions by id, condensed amounts by id) from Cantera at T (K), P (Pa)."""
    gases = [sp for sp in entries if sp.phase == "g"]
    conds = [sp for sp in entries if sp.phase != "g"]
    gas = ct.Solution(thermo="ideal-gas", species=[refs.cantera_species(sp) for sp in gases])
    gfeed = {sp.id: feed_amounts.get(sp.id, 0.0) for sp in gases}
    gas.TPX = T, P, {k: v for k, v in gfeed.items() if v > 0}
    if not conds:
        gas.equilibrate("TP", rtol=1e-14, max_iter=500)
        return dict(zip(gas.species_names, gas.X, strict=True)), {}
    phases = [_condensed_phase(sp) for sp in conds]
    mix = ct.Mixture(
        [(gas, sum(gfeed.values()))]
        + [(ph, feed_amounts.get(sp.id, 0.0)) for ph, sp in zip(phases, conds, strict=True)]
    )
    mix.T, mix.P = T, P
    try:
        mix.equilibrate("TP", solver="vcs", rtol=1e-13, max_steps=5000)
    except ct.CanteraError:
        mix.equilibrate("TP", solver="gibbs", rtol=1e-13, max_steps=5000)
    cond = {sp.id: mix.phase_moles(i + 1) for i, sp in enumerate(conds)}
    return dict(zip(gas.species_names, gas.X, strict=True)), cond


CASES = [
    (name, feed, P) for name, (_, feeds, _, Ps) in SYSTEMS.items() for feed in feeds for P in Ps
]


@pytest.mark.parametrize(("name", "feed", "P_bar"), CASES)
def test_matches_cantera_over_temperature(name, feed, P_bar):
    species, _, temps, _ = SYSTEMS[name]
    eq = equilibrate(species, (temps, "K"), (P_bar, "bar"), feed)
    amounts = feasibly.equilibrium.parse_feed(feed)
    by_id = {}
    for sp_id in eq.species:
        sp = LIB[sp_id]
        by_id[sp_id] = sum(
            v
            for k, v in amounts.items()
            if LIB.by_formula(k.split("(")[0])[0].formula == sp.formula
        )
    total = sum(amounts.values())
    worst = 0.0
    for i, T in enumerate(temps):
        x_ref, m_ref = _cantera_equilibrium([LIB[s] for s in eq.species], by_id, T, P_bar * 1e5)
        for sid, x in x_ref.items():
            worst = max(worst, abs(eq.fraction(sid)[i] - x))
            assert eq.fraction(sid)[i] == pytest.approx(x, abs=X_TOL), (name, T, sid)
        for sid, m in m_ref.items():
            assert eq.amount(sid)[i] == pytest.approx(m, abs=X_TOL * total), (name, T, sid)
    print(f"{name} | {feed} | {P_bar} bar: max |Δx| vs Cantera {worst:.2e} over {temps.size} T")


def test_calcination_case_loses_a_phase_inside_the_range():
    """The grid of the calcination system really crosses the disappearance of CaCO3 (so the
    comparison above covers a vanishing condensed phase), by Cantera's own answer."""
    species, _, temps, _ = SYSTEMS["calcination under CO2"]
    entries = [LIB[s] for s in species.split()]
    feed = {"CaCO3(cr,calcite)": 1.0, "CO2(g)": 0.05, "N2(g)": 1.0}
    lo = _cantera_equilibrium(entries, feed, temps[0], 1e5)[1]["CaCO3(cr,calcite)"]
    hi = _cantera_equilibrium(entries, feed, temps[-1], 1e5)[1]["CaCO3(cr,calcite)"]
    assert lo > 0.9 and hi < 1e-9


def test_a_phase_set_that_cannot_hold_is_revised_before_it_settles():
    """CaCO3, CaO and graphite at 1053 K and 0.229 bar: the solver starts with all three, which
    pin the potentials of Ca, C and O together, and no gas composition can then hold at that
    pressure. The phase set is revised as soon as the amounts pass what the element totals allow
    (before that rule the amounts drifted to ±1.3e5 mol and the state took 83 iterations); the
    answer is Cantera's."""
    from feasibly.equilibrium import composition as se

    species = "CaCO3(cr,calcite) CaO(cr) C(cr,graphite) CO2(g) CO(g) O2(g) N2(g)"
    feed = {"CaCO3(cr,calcite)": 1.1259448, "C(cr,graphite)": 0.6733037, "O2(g)": 0.0544249,
            "N2(g)": 0.7258133}  # fmt: skip
    T, P = np.array([1053.1]), np.array([0.229e5])
    sset = se._species_set(species, LIB)
    b = se._feed_elements({k: np.array([v]) for k, v in feed.items()}, sset, LIB, 1)
    avail = se._availability(sset, T)
    prep = se._Prepared(sset, T, P, b, avail, None)
    amounts, ok, solved, _ = se._solve(prep, se._gibbs_rt(sset, T, avail))
    ((_, sol),) = solved.values()
    assert ok[0] and sol.iterations[0] <= 40
    x_ref, m_ref = _cantera_equilibrium(sset.entries, feed, float(T[0]), float(P[0]))
    total = sum(feed.values())
    gas_total = amounts[0, [k for k, e in enumerate(sset.entries) if e.phase == "g"]].sum()
    for j, sp in enumerate(sset.entries):
        if sp.phase == "g":
            assert amounts[0, j] / gas_total == pytest.approx(x_ref[sp.id], abs=X_TOL)
        else:
            assert amounts[0, j] == pytest.approx(m_ref[sp.id], abs=X_TOL * total)
    assert m_ref["CaCO3(cr,calcite)"] < 1e-9 < m_ref["CaO(cr)"]  # calcite has decomposed
