"""Equilibrium extent, Gibbs minimisation, bands and the required-conversion criterion.

Outside references are named beside each check: closed-form solutions of the law of mass action
(IUPAC Green Book, K° = Π (p_i/p°)^ν_i for ideal gases, pure condensed phases at unit activity),
its limits for very large and very small K, the normal distribution of a linear function of normal
inputs (JCGM 101 §6.4.7, for the probability of meeting a conversion), and element conservation.
The comparison with Cantera is in tests/reference/test_equilibrium_vs_cantera.py.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import special

import feasibly
from feasibly.cli import main
from feasibly.equilibrium.conversion import (
    conversion_assessment,
    conversion_bands,
    conversion_window,
    equilibrate,
    equilibrium_extent,
)
from feasibly.errors import EquilibriumNotConverged
from feasibly.uncertainty import build_inputs, draw_samples
from feasibly.uncertainty.linear import gum_uncertainty, linear_model, uncertain_species

R = 8.314462618  # CODATA 2018 exact molar gas constant (from memory of the SI definition)
LIB = feasibly.default_library()


def _lnK(eq: str, T: np.ndarray) -> np.ndarray:
    return -feasibly.standard_properties(feasibly.Reaction.parse(eq), T).dG / (R * T)


# --- closed forms -------------------------------------------------------------------------------
def test_shift_extent_matches_the_closed_form():
    """CO + H2O ⇌ CO2 + H2 from 1:1 feed: K = ξ²/(1 − ξ)², so ξ = √K/(1 + √K) (Δν = 0)."""
    T = np.linspace(400.0, 1400.0, 11)
    eq = "CO(g) + H2O(g) -> CO2(g) + H2(g)"
    x = equilibrium_extent(eq, (T, "K"), "7 bar", "CO:1, H2O:1, N2:2", key="CO")
    rk = np.exp(0.5 * _lnK(eq, T))
    # 1e-12: the root is solved to |f| ≤ 1e-12 in ln units, i.e. ~1e-13 relative in ξ
    np.testing.assert_allclose(x.extent, rk / (1 + rk), rtol=1e-12)
    np.testing.assert_allclose(x.conversion, rk / (1 + rk), rtol=1e-12)
    g = equilibrate("CO(g) H2O(g) CO2(g) H2(g) N2(g)", (T, "K"), "7 bar", "CO:1, H2O:1, N2:2")
    # 1e-10: Gibbs minimisation converges to 1e-12 of the total amount per step
    np.testing.assert_allclose(g.amount("H2(g)"), rk / (1 + rk), rtol=1e-10)


def test_very_large_and_very_small_K():
    """Limits of the law of mass action. 2 H2 + O2 → 2 H2O at 500 K has log10 K ≈ 46 (library
    data): H2 with O2 in excess converts completely, and the H2 left is (x_H2O²/(K x_O2))^½ N
    exactly. The reverse (decomposition) barely moves: ξ ≈ (K_rev · 2 N / (P/P°))^{1/3}/… from
    K_rev = (2ξ)² ξ /(1 − 2ξ)² · (P/P°)/N for small ξ."""
    T = np.array([500.0])
    fwd = equilibrium_extent("2 H2 + O2 -> 2 H2O", "500 K", "1 bar", "H2:2, O2:2", key="H2")
    assert fwd.conversion[0] == pytest.approx(1.0, abs=1e-15)
    K = np.exp(_lnK("2 H2(g) + O2(g) -> 2 H2O(g)", T))[0]
    n_h2o, n_o2 = 2.0, 1.0
    N = n_h2o + n_o2
    h2_left = math.sqrt((n_h2o / N) ** 2 / (K * n_o2 / N)) * N
    assert fwd.amounts[0, 0] == pytest.approx(h2_left, rel=1e-9)
    rev = equilibrium_extent("2 H2O -> 2 H2 + O2", "500 K", "1 bar", "H2O:1", key="H2O")
    xi = rev.extent[0]
    # small-ξ limit: K_rev = (2ξ)² ξ / (1)² with N ≈ 1, P = P°
    assert xi == pytest.approx((1 / K / 4) ** (1 / 3), rel=1e-9)
    assert rev.conversion[0] == pytest.approx(2 * xi, rel=1e-12)
    assert 0 < rev.conversion[0] < 1e-14


def test_condensed_phase_used_up_and_vanishing_inside_the_range():
    """CaCO3 ⇌ CaO + CO2 with N2: p_CO2 = K° p° while CaCO3 remains (unit activity), so
    n_CO2 = x/(1 − x) n_N2 with x = K° p°/P, until all of the CaCO3 has gone."""
    T = np.arange(900.0, 1200.1, 10.0)
    K = np.exp(_lnK("CaCO3(cr) -> CaO(cr) + CO2(g)", T))
    x = np.minimum(K, 1.0)
    with np.errstate(divide="ignore"):  # x = 1 exactly where K ≥ 1: all CaCO3 goes
        n_co2 = np.minimum(x / (1 - x) * 1.0, 1.0)
    ext = equilibrium_extent("CaCO3 -> CaO + CO2", (T, "K"), "1 bar", "CaCO3:1, N2:1", key="CaCO3")
    np.testing.assert_allclose(ext.conversion, n_co2, rtol=1e-11)
    g = equilibrate("CaCO3(cr) CaO(cr) CO2(g) N2(g)", (T, "K"), "1 bar", "CaCO3:1, N2:1")
    # 1e-9 absolute: amounts of order 1, converged to 1e-12; the phase vanishes exactly
    np.testing.assert_allclose(g.amount("CaCO3(cr,calcite)"), 1 - n_co2, atol=1e-9)
    gone = n_co2 >= 1.0
    assert gone.any() and (~gone).any()  # the phase does disappear inside this range
    assert np.all(g.amount("CaCO3(cr,calcite)")[gone] == 0.0)


def test_element_conservation():
    """Σ_species a_ej n_j equals the feed's element totals to 1e-10 relative (issue)."""
    rng = np.random.default_rng(7)
    cases = [
        ("CH4(g) H2O(g) CO(g) CO2(g) H2(g) C(s)", ["CH4", "H2O", "CO2"], (500, 1500)),
        ("N2(g) H2(g) NH3(g)", ["N2", "H2", "NH3"], (400, 1200)),
        ("SO2(g) O2(g) SO3(g)", ["SO2", "O2", "SO3"], (400, 1500)),
    ]
    for species, feed_names, (lo, hi) in cases:
        T = rng.uniform(lo, hi, 200)
        feed = {k: rng.uniform(0.01, 3, 200) for k in feed_names}
        eq = equilibrate(species, (T, "K"), (rng.uniform(0.1, 100, 200), "bar"), feed)
        got = eq.amounts @ eq.element_matrix.T
        rel = np.abs(got - eq.feed_elements) / eq.feed_elements.max(axis=1, keepdims=True)
        assert rel.max() <= 1e-10, species


# --- Monte Carlo ------------------------------------------------------------------------------
def test_probability_of_meeting_a_conversion_matches_the_normal_law():
    """ΔrG° is linear in normal inputs, hence exactly normal (JCGM 101 §6.4.7), and conversion
    rises monotonically with K. So P(X ≥ X_req) = Φ((ΔG_req − mean)/u) with
    ΔG_req = −RT ln K_req and, for the 1:1 shift, K_req = X_req²/(1 − X_req)²."""
    T = np.array([800.0, 900.0, 1000.0])
    rxn = feasibly.Reaction.parse("CO(g) + H2O(g) -> CO2(g) + H2(g)")
    n = 40_000  # se of P ≤ 0.0025; the check allows 4 se
    b = conversion_bands(
        rxn, ("800 K", "1000 K") and (T, "K"), "1 bar", "CO:1, H2O:1", "CO", 0.6, samples=n, seed=11
    )
    inputs = build_inputs(uncertain_species(rxn))
    cov = np.diag([inp.u**2 for inp in inputs])
    model = linear_model(rxn, T, draw_samples(inputs, 2, seed=0))
    u = gum_uncertainty(model, cov)
    g_req = -R * T * math.log(0.6**2 / 0.4**2)
    expected = special.ndtr((g_req - model.G0) / u)
    assert b.p_meets is not None
    assert np.all(np.abs(b.p_meets - expected) <= 4 * np.maximum(b.p_meets_se, 1 / n)), (
        b.p_meets,
        expected,
    )
    assert np.all(b.lo <= b.median) and np.all(b.median <= b.hi)


def test_gibbs_bands_agree_with_extent_bands_on_the_same_draws():
    """Two routes on the same seeded draws (the shift is the only reaction of these species):
    the H2 amount band of the Gibbs minimisation equals the CO conversion band of the extent."""
    T = (np.array([700.0, 1000.0]), "K")
    ext = conversion_bands(
        "CO(g) + H2O(g) -> CO2(g) + H2(g)", T, "1 bar", "CO:1, H2O:1", "CO", samples=3000, seed=5
    )
    g = equilibrate("CO(g) H2O(g) CO2(g) H2(g)", T, "1 bar", "CO:1, H2O:1", samples=3000, seed=5)
    assert g.bands is not None
    h2 = g.bands["amounts"][:, :, g.species.index("H2(g)")]
    # 1e-9: both solvers converge far tighter; the draws are identical
    np.testing.assert_allclose(h2, np.vstack([ext.lo, ext.median, ext.hi]), rtol=1e-9)


def test_conversion_window_and_assessment():
    assert conversion_window(
        np.array([1.0, 2.0, 3.0, 4.0]), np.array([1.0, 0.0, 0.0, 1.0]), 0.5
    ) == [
        {"T_lo_K": 1.0, "lo_open": True, "T_hi_K": 1.5, "hi_open": False},
        {"T_lo_K": 3.5, "lo_open": False, "T_hi_K": 4.0, "hi_open": True},
    ]
    doc = conversion_assessment(
        "CH4 + H2O -> CO + 3 H2",
        ([900, 1000, 1100, 1200], "K"),
        "CH4:1, H2O:2",
        "CH4",
        "90%",
        "5 bar",
        samples=2000,
        seed=2,
    )
    json.dumps(doc)  # JSON-ready
    assert doc["required_conversion"] == 0.9
    p = [r["P_meets_required"] for r in doc["rows"]]
    assert p[0] == 0.0 and p[-1] == 1.0  # from 41 % to ~99 % conversion nominally
    assert len(doc["window"]) == 1 and doc["window"][0]["hi_open"]
    nominal = conversion_assessment(
        "CH4 + H2O -> CO + 3 H2", ([900, 1200], "K"), "CH4:1, H2O:2", "CH4", 0.9, "5 bar"
    )
    assert [r["meets_required"] for r in nominal["rows"]] == [False, True]


# --- refusals -----------------------------------------------------------------------------------
def test_bad_input_is_refused_with_a_message():
    with pytest.raises(feasibly.UnknownSpecies, match="Xx"):
        equilibrate("CH4(g) Xx", "900 K", "1 bar", "CH4:1")
    with pytest.raises(feasibly.UnitError, match="SPECIES:AMOUNT"):
        equilibrate("CH4(g) H2(g)", "900 K", "1 bar", "CH4 1")
    with pytest.raises(feasibly.UnitError, match="bare number"):
        equilibrate("CH4(g) H2(g)", 900, "1 bar", "CH4:1")
    with pytest.raises(feasibly.OutsideDataRange, match="CaCO3"):
        # calcite (NASA thermo.inp) has data to 1603 K, where its liquid takes over
        equilibrate("CaCO3(cr) CaO(cr) CO2(g)", "1700 K", "1 bar", "CaCO3:1")
    with pytest.raises(feasibly.UnknownSpecies, match="reactant"):
        equilibrium_extent("CO + H2O -> CO2 + H2", "900 K", "1 bar", "CO:1, H2O:1", key="H2")
    with pytest.raises(feasibly.UnitError, match="percentage"):
        conversion_assessment(
            "CO + H2O -> CO2 + H2", "900 K", "CO:1, H2O:1", "CO", "ninety", "1 bar"
        )


def test_feed_that_leaves_listed_species_at_zero_converges(capsys):
    """The methanol set-up from CO + 2 H2 (issue 12): O = C in the feed, and every species with
    more O than C (CO2, H2O) would need one with less to balance it: none is listed, so both are
    exactly zero at every feasible composition. The law of mass action of CO + 2 H2 ⇌ CH3OH
    (IUPAC Green Book: K° = x_M/(x_CO x_H2²) (P/P°)⁻²) then fixes the rest."""
    species = "CO(g) H2(g) CH3OH(g) CO2(g) H2O(g)"
    eq = equilibrate(species, "500 K", "50 bar", "CO:1, H2:2")
    assert eq.amount("CO2(g)")[0] == 0.0 and eq.amount("H2O(g)")[0] == 0.0
    x = eq.gas_fractions[0]
    K = math.exp(_lnK("CO(g) + 2 H2(g) -> CH3OH(g)", np.array([500.0]))[0])
    j = eq.species.index
    got = x[j("CH3OH(g)")] / (x[j("CO(g)")] * x[j("H2(g)")] ** 2) / 50.0**2
    assert got == pytest.approx(K, rel=1e-9)
    code = main(["equilibrate", "--species", species, "--feed", "CO:1, H2:2", "--T", "500", "K",
                 "--P", "50", "bar"])  # fmt: skip
    assert code == 0
    assert "cannot form CO2(g), H2O(g)" in capsys.readouterr().out


def test_no_gas_phase_is_refused_with_that_reason():
    """Pure CaCO3 at 800 K and 1 bar: its CO2 pressure (K° p°, ~2e-4 bar by the library data)
    is far below 1 bar, so no gas phase forms; the refusal says so and names the state. At
    1195 K (K° = 1.5) all of it decomposes into CaO and a gas of CO2: that state is solved."""
    with pytest.raises(EquilibriumNotConverged, match="no gas phase") as info:
        equilibrate("CaCO3(cr) CaO(cr) CO2(g)", ([800.0, 1195.0], "K"), "1 bar", "CaCO3:1")
    assert info.value.indices == [0] and info.value.reasons == ["no gas phase"]


def test_non_convergence_is_an_error_not_a_number():
    """Pure CaCO3 below its decomposition temperature: the gas phase vanishes, which this solver
    cannot represent; it says so instead of returning a composition."""
    with pytest.raises(EquilibriumNotConverged, match="inert gas"):
        equilibrate("CaCO3(cr) CaO(cr) CO2(g)", "800 K", "1 bar", "CaCO3:1")


def test_cli_equilibrate(capsys):
    code = main(
        [
            "equilibrate",
            "--species",
            "CH4(g) H2O(g) CO(g) CO2(g) H2(g) C(s)",
            "--feed",
            "CH4:1, H2O:2",
            "--T",
            "900",
            "K",
            "--P",
            "5",
            "bar",
            "--json",
        ]
    )
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    x = doc["rows"][0]["species"]
    assert sum(v["gas_mole_fraction"] or 0.0 for v in x.values()) == pytest.approx(1.0, abs=1e-12)
    code = main(["equilibrate", "--species", "CH4(g) H2(g)", "--feed", "CH4:1", "--T", "900"])
    assert code == 2
    assert "not a temperature" in capsys.readouterr().err


# --- robustness sweep ---------------------------------------------------------------------------
#: system → (species, feed species with amount ranges, T range K, P range bar)
SWEEP = {
    "steam reforming": (
        "CH4(g) H2O(g) CO(g) CO2(g) H2(g)",
        {"CH4": (0.1, 2), "H2O": (0.1, 4), "CO2": (0, 1)},
        (500, 1600),
        (0.1, 50),
    ),
    "water-gas shift": (
        "CO(g) H2O(g) CO2(g) H2(g) N2(g)",
        {"CO": (0.1, 2), "H2O": (0.1, 4), "N2": (0, 2)},
        (350, 1800),
        (0.1, 50),
    ),
    "ammonia": (
        "N2(g) H2(g) NH3(g) Ar(g)",
        {"N2": (0.1, 2), "H2": (0.1, 4), "Ar": (0, 0.5)},
        (300, 1500),
        (0.1, 500),
    ),
    "calcination": (
        "CaCO3(cr,calcite) CaO(cr) CO2(g) N2(g)",
        {"CaCO3": (0, 2), "CaO": (0, 2), "CO2": (0, 1), "N2": (0.05, 2)},
        (400, 1200),
        (0.1, 10),
    ),
    "gasification": (
        "C(cr,graphite) H2O(g) CO(g) H2(g) CO2(g) CH4(g)",
        {"C": (0, 3), "H2O": (0.1, 3), "CO2": (0, 1)},
        (400, 2000),
        (0.1, 50),
    ),
    "SO2 oxidation": (
        "SO2(g) O2(g) SO3(g) N2(g)",
        {"SO2": (0.1, 2), "O2": (0.05, 2), "N2": (0, 5)},
        (400, 2000),
        (0.1, 20),
    ),
    "methanol": (
        "CO(g) CO2(g) H2(g) CH3OH(g) H2O(g)",
        {"CO": (0, 2), "CO2": (0.05, 1), "H2": (0.2, 4)},
        (300, 1200),
        (1, 300),
    ),
}
N_PER_SYSTEM = 3000  # 7 × 3000 = 21 000 cases ≥ the 20 000


def test_sweep_of_generated_cases_never_fails_to_converge():
    rng = np.random.default_rng(20240606)  # frozen seed: the same cases every run
    total = failures = 0
    for name, (species, feeds, (tlo, thi), (plo, phi)) in SWEEP.items():
        T = rng.uniform(tlo, thi, N_PER_SYSTEM)
        P = np.exp(rng.uniform(math.log(plo), math.log(phi), N_PER_SYSTEM))  # log-uniform P
        feed = {k: rng.uniform(a, b, N_PER_SYSTEM) for k, (a, b) in feeds.items()}
        try:
            eq = equilibrate(species, (T, "K"), (P, "bar"), feed)
        except EquilibriumNotConverged as exc:
            failures += len(exc.states)
            print(f"{name}: {len(exc.states)} failures, e.g. {exc.states[:3]}")
            continue
        got = eq.amounts @ eq.element_matrix.T
        rel = np.abs(got - eq.feed_elements) / eq.feed_elements.max(axis=1, keepdims=True)
        assert rel.max() <= 1e-10, name
        total += T.size
        print(f"sweep {name}: {T.size} cases converged; element balance ≤ {rel.max():.1e}")
    print(f"sweep total: {total} converged, {failures} failed to converge")
    assert failures == 0
    assert total >= 20_000


def _fed_and_cold(n: int, seed: int):  # type: ignore[no-untyped-def]
    # The benchmark's gas-only system: given as a feed (each state starts from its own feed)
    # and as element totals only (each state starts from equal amounts).
    from feasibly.equilibrium import equilibrate

    species = "CH4(g) H2O(g) CO(g) CO2(g) H2(g) N2(g) NH3(g) C2H6(g) CH3OH(g)"
    rng = np.random.default_rng(seed)
    T, P = rng.uniform(600.0, 1300.0, n), rng.uniform(1.0, 50.0, n)
    ch4, h2o, co2, n2 = (rng.uniform(a, b, n) for a, b in [(0.2, 2), (0.5, 4), (0, 1), (0, 2)])
    feed = {"CH4(g)": ch4, "H2O(g)": h2o, "CO2(g)": co2, "N2(g)": n2}
    fed = equilibrate(species, (T, "K"), (P, "bar"), feed)
    elements = {"C": ch4 + co2, "H": 4 * ch4 + 2 * h2o, "O": h2o + 2 * co2, "N": 2 * n2}
    cold = equilibrate(species, (T, "K"), (P, "bar"), elements=elements)
    return fed, cold


def _fractions(eq):  # type: ignore[no-untyped-def]
    return eq.amounts / eq.amounts.sum(axis=1, keepdims=True)


def test_gas_states_started_from_their_feed_reach_the_same_equilibrium(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    from feasibly.equilibrium import composition

    calls = []
    real = composition._solve_from_feed
    monkeypatch.setattr(composition, "_solve_from_feed", lambda *a: calls.append(1) or real(*a))
    fed, cold = _fed_and_cold(400, 61)
    assert len(calls) == 1  # the feed start was taken for the feed, not for element totals
    # The ideal-gas minimum is unique: the two starts agree to the solver's tolerance.
    np.testing.assert_allclose(_fractions(fed), _fractions(cold), rtol=0, atol=1e-12)


# The forced failure below starts species at zero amount, where 0 × ln 0 warns before the state
# is found singular and given up: that is the failure the test needs.
@pytest.mark.filterwarnings("ignore:invalid value encountered in multiply:RuntimeWarning")
def test_states_that_fail_from_their_feed_are_solved_from_equal_amounts(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    from feasibly.equilibrium import composition

    # Without the share every species outside the feed starts at zero amount, where the
    # iteration cannot raise it: the states fail from the feed and are solved again.
    monkeypatch.setattr(composition, "_FEED_START_SHARE", 0.0)
    sizes = []
    real = composition.solve_batch
    monkeypatch.setattr(
        composition, "solve_batch", lambda *a, **k: sizes.append(len(a[4])) or real(*a, **k)
    )
    fed, cold = _fed_and_cold(50, 62)
    assert sizes[:2] == [50, 50]  # all 50 from their feed, then all 50 again from equal amounts
    np.testing.assert_allclose(_fractions(fed), _fractions(cold), rtol=0, atol=1e-12)
