"""Monte Carlo propagation, against JCGM 101 worked examples, the `uncertainties` package and
analytic results.

Monte Carlo checks are seeded and size their tolerance from N (4 standard errors, common practice,
no source).
"""

from __future__ import annotations

import math
from math import comb, factorial, floor, sqrt

import numpy as np
import pytest
import uncertainties
from scipy import stats
from scipy.optimize import brentq

import feasibly
from feasibly import InvalidUncertainty
from feasibly.uncertainty import assess_route, assess_uncertainty, verdict
from feasibly.uncertainty.inputs import (
    Override,
    UncertainInput,
    build_inputs,
    correlation_matrix,
    parse_override,
)
from feasibly.uncertainty.linear import (
    LinearModel,
    first_order_indices,
    linear_model,
    numerical_tolerance,
    shortest_interval,
    summarise,
)
from feasibly.uncertainty.sampling import draw_samples


def additive_model(n_inputs: int) -> LinearModel:
    """Y = X1 + … + Xn as a one-'temperature' linear model."""
    z = np.zeros(1)
    ones = np.ones((1, n_inputs))
    return LinearModel(np.ones(1), z, z, z, ones, ones * 0, ones)


def inputs_of(shape: str, n: int = 4) -> list[UncertainInput]:
    return [UncertainInput((f"X{i}", "dHf"), 1.0, shape) for i in range(1, n + 1)]


# --- JCGM 101:2008 §9.2: Y = X1 + X2 + X3 + X4 ----------------------------------------------


def test_jcgm101_9_2_2_normal_inputs() -> None:
    # JCGM 101:2008 §9.2.2 (Table 2, from memory): Xi ~ N(0, 1); y = 0, u(y) = 2.00,
    # 95 % probabilistically symmetric interval [-3.92, 3.92]; numerical tolerance δ from u with
    # n_dig = 2 (§7.9.2) is 0.05.
    s = summarise(additive_model(4), draw_samples(inputs_of("normal"), 10**6, seed=101))
    delta = float(numerical_tolerance(np.array([2.0]))[0])
    assert delta == pytest.approx(0.05)
    assert abs(s.mean[0]) <= delta
    assert abs(s.u[0] - 2.00) <= delta
    assert abs(s.lo[0] + 3.92) <= delta and abs(s.hi[0] - 3.92) <= delta


def _irwin_hall_quantile(p: float, n: int = 4) -> float:
    # Exact CDF of the sum of n U(0, 1) (Irwin–Hall; from memory), inverted with brentq.
    cdf = lambda x: sum((-1) ** k * comb(n, k) * (x - k) ** n for k in range(floor(x) + 1))  # noqa: E731
    s = brentq(lambda x: cdf(x) / factorial(n) - p, 0.0, float(n))
    return sqrt(3.0) * (2.0 * s - n)  # X = √3 (2U − 1) has unit variance


def test_jcgm101_9_2_3_rectangular_inputs() -> None:
    # JCGM 101:2008 §9.2.3 (from memory): Xi rectangular with u = 1; Monte Carlo gives
    # u(y) = 2.00 and the interval [-3.88, 3.88] (narrower than the GUM's ±3.92).
    s = summarise(additive_model(4), draw_samples(inputs_of("uniform"), 10**6, seed=102))
    assert abs(s.u[0] - 2.00) <= 0.05
    assert abs(s.lo[0] + 3.88) <= 0.05 and abs(s.hi[0] - 3.88) <= 0.05
    # And against the exact Irwin–Hall quantile, within 4 Monte Carlo standard errors.
    exact = _irwin_hall_quantile(0.975)
    assert exact == pytest.approx(3.8794, abs=1e-4)
    assert abs(s.hi[0] - exact) <= 4 * s.hi_se[0]
    assert abs(s.lo[0] + exact) <= 4 * s.lo_se[0]


def test_triangular_and_user_distributions_have_their_stated_u() -> None:
    # Symmetric triangular of half-width a has u = a/√6; scipy.stats.triang is the reference.
    inp = [
        UncertainInput(("A", "dHf"), 3.0, "triangular"),
        UncertainInput(("B", "dHf"), 0.0, stats.lognorm(0.5, scale=2.0), nominal=0.0),
    ]
    s = draw_samples(inp, 2**18, seed=5)
    se = 3.0 / math.sqrt(2 * s.n)
    assert s.values[0].std(ddof=1) == pytest.approx(3.0, abs=4 * se)
    ref = stats.triang(0.5, loc=-3.0 * math.sqrt(6), scale=6.0 * math.sqrt(6))
    assert ref.std() == pytest.approx(3.0)
    assert stats.kstest(s.values[0][:20000], ref.cdf).pvalue > 1e-3
    assert stats.kstest(s.values[1][:20000], stats.lognorm(0.5, scale=2.0).cdf).pvalue > 1e-3


# --- against the uncertainties package and analytic results ----------------------------------


def _uncertainties_dG(equation: str, T: float) -> uncertainties.UFloat:
    """ΔrG°(T) with the `uncertainties` package: H = (ΔfH + δH) + (1 + ε) h(T), etc."""
    rxn = feasibly.Reaction.parse(equation)
    total = 0.0
    for term, idx in zip(rxn.terms, rxn.phase_plan(np.array([T])), strict=True):
        sp = term.candidates[idx[0]]
        assert not sp.hypothetical_298
        hf = uncertainties.ufloat(sp.dHf.value, sp.dHf.u, tag=f"{sp.id}:dHf")
        s0 = uncertainties.ufloat(sp.S298.value, sp.S298.u, tag=f"{sp.id}:S298")
        f = uncertainties.ufloat(1.0, sp.cp_u_rel, tag=f"{sp.id}:cp")
        # Reference states have u(ΔfH°) = 0 exactly; the package warns about zero-width values.
        h = float(sp.cp_model.h_inc(np.array([T]))[0])
        s = float(sp.cp_model.s_inc(np.array([T]))[0])
        total = total + term.nu * (hf + f * h - T * (s0 + f * s))
    return total


@pytest.mark.parametrize(
    ("equation", "T"),
    [
        ("MgCO3 -> MgO + CO2", 700.0),
        ("CO + H2O -> CO2 + H2", 900.0),
        ("2 CH4 + O2 + CO2 -> 3 CO + 3 H2 + H2O", 1100.0),
    ],
)
def test_linear_propagation_equals_uncertainties_package(equation: str, T: float) -> None:
    ref = _uncertainties_dG(equation, T)
    a = assess_uncertainty(equation, T=(T, "K"), samples=10**5, seed=11)
    gum = a.gum()
    assert gum["y"][0] == pytest.approx(ref.nominal_value, rel=1e-9)
    assert gum["u"][0] == pytest.approx(ref.std_dev, rel=1e-9)
    # Monte Carlo standard deviation within 4 standard errors of it (se(u) ≈ u/√(2N)).
    assert abs(a.G.u[0] - ref.std_dev) <= 4 * ref.std_dev / math.sqrt(2 * a.trials)
    # Variance shares equal the uncertainties package's error components, squared and normalised.
    comps = {v.tag: c for v, c in ref.error_components().items()}
    for row in a.sensitivity((T, "K")):
        tag = f"{row['species']}:{row['quantity']}"
        assert row["share"] == pytest.approx((comps[tag] / ref.std_dev) ** 2, rel=1e-9, abs=1e-15)


def test_probability_equals_normal_cdf_for_linear_normal_model() -> None:
    # ΔrG is linear in normal inputs, so P(ΔrG < 0) = Φ(−y/u) exactly (scipy.stats.norm).
    a = assess_uncertainty(
        # around the crossover (P = 0.5 near 580 K with the NASA 2002 data), so 0 < P < 1 at all 5
        "MgCO3 -> MgO + CO2",
        T_range=("560 K", "640 K"),
        points=5,
        samples=2 * 10**5,
        seed=12,
    )
    gum = a.gum()
    exact = stats.norm.cdf(-gum["y"] / gum["u"])
    assert np.all(np.abs(a.p_feasible - exact) <= 4 * np.sqrt(exact * (1 - exact) / a.trials))
    assert np.all(a.p_feasible_se > 0)


def test_sobol_beats_plain_monte_carlo_on_a_smooth_output() -> None:
    # Seeded, measured: RMS error of the estimated mean of ΔrG over 12 seeds at N = 2^12; the
    # exact mean is the nominal value (normal inputs, no shift).
    rxn = feasibly.Reaction.parse("CO + H2O -> CO2 + H2")
    errors = {"mc": [], "sobol": []}
    for method in errors:
        for seed in range(12):
            s = draw_samples(build_inputs(rxn.species_used()), 2**12, method=method, seed=seed)
            m = linear_model(rxn, np.array([900.0]), s)
            errors[method].append(float(m.values("G", s)[0].mean() - m.G0[0]))
    rms = {k: math.sqrt(np.mean(np.square(v))) for k, v in errors.items()}
    assert rms["sobol"] < 0.5 * rms["mc"], rms


def test_shared_intermediate_variance_is_covariance_aware() -> None:
    # Two steps share MgO (produced, then consumed): Var(ΔG1 + ΔG2) must follow aᵀΣa with
    # a = a1 + a2 (the shared draw cancels), not Var1 + Var2.
    steps = [("MgCO3 -> MgO + CO2", "800 K"), ("MgO + 2 HCl -> MgCl2 + H2O", "400 K")]
    r = assess_route(steps, samples=2 * 10**5, seed=13)
    m1 = linear_model(r.steps[0][0], np.array([800.0]), r.samples)
    m2 = linear_model(r.steps[1][0], np.array([400.0]), r.samples)
    u = np.array([inp.u for inp in r.samples.inputs])
    cov = np.diag(u**2)
    a = (m1.aG + m2.aG)[0]
    aware = a @ cov @ a
    independent = m1.aG[0] @ cov @ m1.aG[0] + m2.aG[0] @ cov @ m2.aG[0]
    total = m1.values("G", r.samples)[0] + m2.values("G", r.samples)[0]
    mc = total.var(ddof=1)
    se = mc * math.sqrt(2 / r.samples.n)
    assert abs(mc - aware) <= 4 * se
    assert abs(mc - independent) > 10 * se
    assert r.p_all <= min(r.p_steps)


def test_correlated_inputs_match_uncertainties_correlated_values() -> None:
    rxn = feasibly.Reaction.parse("MgCO3 -> MgO + CO2")
    inputs = build_inputs(rxn.species_used())
    corr = correlation_matrix(inputs, {(("MgCO3(cr)", "dHf"), ("MgO(cr)", "dHf")): 0.8})
    s = draw_samples(inputs, 2 * 10**5, seed=14, correlation=corr)
    i, j = s.index(("MgCO3(cr)", "dHf")), s.index(("MgO(cr)", "dHf"))
    r = np.corrcoef(s.values[i], s.values[j])[0, 1]
    assert r == pytest.approx(0.8, abs=4 * (1 - 0.8**2) / math.sqrt(s.n))
    a = assess_uncertainty(
        rxn,
        T="700 K",
        samples=10**4,
        seed=14,
        correlations={(("MgCO3(cr)", "dHf"), ("MgO(cr)", "dHf")): 0.8},
    )
    u = np.array([inp.u for inp in inputs])
    vals = uncertainties.correlated_values([0.0] * len(u), corr * np.outer(u, u))
    coef = a.model.aG[0]
    ref = sum(c * v for c, v in zip(coef, vals, strict=True))
    assert a.gum()["u"][0] == pytest.approx(ref.std_dev, rel=1e-9)


def test_correlation_as_a_matrix_equals_pairs() -> None:
    rxn = feasibly.Reaction.parse("MgCO3 -> MgO + CO2")
    inputs = build_inputs(rxn.species_used())
    keys = [("MgCO3(cr)", "dHf"), ("MgO(cr)", "dHf"), ("CO2(g)", "dHf")]
    matrix = [[1.0, 0.8, 0.1], [0.8, 1.0, 0.0], [0.1, 0.0, 1.0]]
    pairs = {(keys[0], keys[1]): 0.8, (keys[0], keys[2]): 0.1}
    np.testing.assert_array_equal(
        correlation_matrix(inputs, (keys, matrix)), correlation_matrix(inputs, pairs)
    )
    with pytest.raises(InvalidUncertainty, match="not symmetric"):
        correlation_matrix(inputs, (keys[:2], [[1.0, 0.5], [0.4, 1.0]]))
    with pytest.raises(InvalidUncertainty, match="must be 2 × 2"):
        correlation_matrix(inputs, (keys[:2], [[1.0]]))


def test_first_order_indices_of_a_linear_model_equal_variance_shares() -> None:
    # For Y = Σ a_j X_j with independent inputs, S_j = a_j² u_j² / u² (Saltelli et al., Global
    # Sensitivity Analysis: The Primer, 2008, from memory). Given-data estimate within 0.02.
    rng = np.random.default_rng(15)
    x = rng.standard_normal((3, 200_000)) * np.array([[1.0], [2.0], [0.5]])
    y = 3 * x[0] + x[1] - 2 * x[2]
    share = np.array([9.0, 4.0, 1.0]) / 14.0
    np.testing.assert_allclose(first_order_indices(y, x), share, atol=0.02)


def test_shortest_interval_of_an_exponential() -> None:
    # Exp(1): the shortest 95 % interval is [0, −ln 0.05] (analytic).
    rng = np.random.default_rng(16)
    lo, hi = shortest_interval(rng.exponential(size=400_000))
    assert lo == pytest.approx(0.0, abs=0.002)
    assert hi == pytest.approx(-math.log(0.05), abs=0.03)


# --- reproducibility, re-evaluation, adaptive ------------------------------------------------


def test_same_seed_same_bits_other_seed_other_bits() -> None:
    inputs = build_inputs(feasibly.Reaction.parse("CO + H2O -> CO2 + H2").species_used())
    for method in ("mc", "sobol"):
        a = draw_samples(inputs, 1024, method=method, seed=7).values
        b = draw_samples(inputs, 1024, method=method, seed=7).values
        c = draw_samples(inputs, 1024, method=method, seed=8).values
        assert a.tobytes() == b.tobytes()
        assert not np.array_equal(a, c)


def test_new_temperature_without_resampling() -> None:
    a = assess_uncertainty(
        "MgCO3 -> MgO + CO2", T_range=("600 K", "800 K"), points=3, samples=20_000, seed=17
    )
    before = a.samples.values.copy()
    at = a.at("690 K")
    assert np.array_equal(a.samples.values, before)
    fresh = assess_uncertainty("MgCO3 -> MgO + CO2", T="690 K", samples=20_000, seed=17)
    assert at["P_feasible"] == fresh.p_feasible[0]
    assert at["dG_lo_J_per_mol"] == fresh.G.lo[0]
    assert at["verdict"] == fresh.verdicts[0]


def test_quantiles_are_numpys() -> None:
    a = assess_uncertainty(
        "Fe3O4 + 4 H2 -> 3 Fe + 4 H2O(g)",
        T_range=("700 K", "1300 K"),
        points=9,
        samples=30_000,
        seed=18,
    )
    g = a.model.values("G", a.samples)
    ref = np.quantile(g, [0.025, 0.5, 0.975], axis=1)
    # The outputs themselves may differ in the last bit between BLAS block shapes (2e-15 rel).
    np.testing.assert_allclose(a.G.lo, ref[0], rtol=1e-13)
    np.testing.assert_allclose(a.G.median, ref[1], rtol=1e-13)
    np.testing.assert_allclose(a.G.hi, ref[2], rtol=1e-13)


@pytest.mark.parametrize("shape", ["normal", "skewed", "heavy", "ties", "bimodal"])
def test_bracket_selection_is_exact(shape: str) -> None:
    # Against numpy.quantile on the very same rows: identical numbers, including far-from-normal
    # rows where the bracket guess fails and the fallback runs.
    from feasibly.uncertainty._quantiles import row_statistics

    rng = np.random.default_rng(25)
    n = 50_001
    rows = {
        "normal": rng.standard_normal((4, n)),
        "skewed": rng.exponential(size=(4, n)) ** 3,
        "heavy": rng.standard_cauchy((4, n)),
        "ties": rng.integers(0, 5, (4, n)).astype(float),
        "bimodal": np.where(rng.random((4, n)) < 0.5, -10.0, 10.0) + rng.standard_normal((4, n)),
    }[shape]
    probs = (0.025, 0.5, 0.975)
    thr = np.array([0.0, 0.5, 1.0, -1.0])
    q, e, below = row_statistics(rows, rows.mean(axis=1), rows.std(axis=1), probs, thr)
    np.testing.assert_array_equal(q, np.quantile(rows, probs, axis=1).T)
    np.testing.assert_array_equal(below, (rows < thr[:, None]).sum(axis=1))
    assert np.all(e >= 0)


def test_adaptive_meets_its_own_tolerance() -> None:
    a = assess_uncertainty("MgCO3 -> MgO + CO2", T="700 K", adaptive=True, seed=19)
    rep = a.adaptive
    assert rep is not None and rep.converged
    assert rep.trials == rep.blocks * rep.block_size and rep.block_size == 10_000
    assert rep.worst_ratio <= 1.0
    assert a.trials == rep.trials


def test_adaptive_gives_up_honestly_at_the_trial_limit() -> None:
    a = assess_uncertainty(
        "MgCO3 -> MgO + CO2", T="680 K", adaptive=True, seed=20, max_trials=30_000
    )
    assert a.adaptive is not None and not a.adaptive.converged and a.trials <= 30_000


def test_crossover_distribution_brackets_the_deterministic_root() -> None:
    a = assess_uncertainty(
        # 300–1000 K: wide enough that every trial crosses inside the range (the MgCO3 ΔfH°
        # uncertainty covers the NASA 2002 / JANAF disagreement, crossovers spread about ±60 K)
        "MgCO3 -> MgO + CO2",
        T_range=("300 K", "1000 K"),
        points=15,
        samples=50_000,
        seed=21,
    )
    (root,) = feasibly.crossover_temperatures(a.reaction, 300.0, 1000.0)
    c = a.crossover()
    assert c["lo_K"] < root < c["hi_K"]
    assert c["median_K"] == pytest.approx(root, abs=3.0)
    # Trials that never cross are those already feasible, or still infeasible, over the range.
    assert c["fraction_none"] == pytest.approx(a.p_feasible[0] + 1 - a.p_feasible[-1], abs=0.01)


def test_verdicts_and_window() -> None:
    assert verdict(0.97, 0.95) == "feasible"
    assert verdict(0.03, 0.95) == "not feasible"
    assert verdict(0.5, 0.95) == "too close to call"
    a = assess_uncertainty(
        "MgCO3 -> MgO + CO2", T_range=("600 K", "900 K"), points=31, samples=50_000, seed=22
    )
    (w,) = a.window()
    assert w["hi_open"] and not w["lo_open"]
    # The window opens where P(feasible) reaches 0.95: about 680 K. The library takes ΔfH°(MgCO3)
    # from NASA TP-2002-211556 (−1096.0 kJ/mol; CRC/NBS −1095.8), and its uncertainty covers the
    # gap to JANAF's −1111.7 kJ/mol (policy disputed-dHf-compilations), which widens the window's
    # approach.
    assert 650.0 < w["T_lo_K"] < 720.0 and w["T_lo_se_K"] < 2.0
    assert all(v == "feasible" for t, v in zip(a.T, a.verdicts, strict=True) if t > w["T_lo_K"])


def test_required_K_threshold() -> None:
    a = assess_uncertainty(
        "MgCO3 -> MgO + CO2", T="800 K", samples=20_000, seed=23, required_K=10.0
    )
    assert a.threshold_J_per_mol[0] == pytest.approx(-feasibly.library.R * 800 * math.log(10.0))
    b = assess_uncertainty("MgCO3 -> MgO + CO2", T="800 K", samples=20_000, seed=23)
    assert a.p_feasible[0] < b.p_feasible[0]


# --- overrides ---------------------------------------------------------------------------------


def test_overrides_convert_coverage_and_shift_the_value() -> None:
    rxn = "MgCO3 -> MgO + CO2"
    base = assess_uncertainty(rxn, T="700 K", samples=10**4, seed=24)
    ov = parse_override("MgO(cr):dHf = -602.5 ± 4 kJ/mol 95%; our solution calorimetry, run 7")
    a = assess_uncertainty(rxn, T="700 K", samples=10**4, seed=24, overrides=[ov])
    inp = {i.key: i for i in a.samples.inputs}[("MgO(cr)", "dHf")]
    assert inp.u == pytest.approx(4000 / 1.96)  # JCGM 100:2008 Table G.1: 95 % → k = 1.960
    shift = -602500.0 - feasibly.default_library()["MgO(cr)"].dHf.value
    assert a.gum()["y"][0] - base.gum()["y"][0] == pytest.approx(shift, rel=1e-9)
    k2 = Override("MgO(cr)", "S298", "vendor sheet", uncertainty="1 J/(mol*K)", coverage="k=2")
    assert build_inputs([feasibly.default_library()["MgO(cr)"]], [k2])[1].u == 0.5


@pytest.mark.parametrize(
    ("make", "fragment"),
    [
        (lambda: UncertainInput(("A", "dHf"), -1.0), "not a finite number ≥ 0"),
        (lambda: UncertainInput(("A", "dHf"), float("nan")), "not a finite number ≥ 0"),
        (lambda: UncertainInput(("A", "dHf"), 1.0, "cauchy"), "unknown distribution"),
        (lambda: draw_samples(inputs_of("normal"), 0), "at least 2"),
        (lambda: draw_samples(inputs_of("normal"), 1000, method="sobol"), "power of two"),
        (
            lambda: draw_samples(inputs_of("normal"), 1024, method="lhs"),
            "use 'mc', 'mc-per-species', 'sobol'",
        ),
        (
            lambda: correlation_matrix(
                inputs_of("normal", 3),
                {
                    (("X1", "dHf"), ("X2", "dHf")): 0.9,
                    (("X1", "dHf"), ("X3", "dHf")): 0.9,
                    (("X2", "dHf"), ("X3", "dHf")): -0.9,
                },
            ),
            "not positive semi-definite",
        ),
        (
            lambda: correlation_matrix(
                inputs_of("normal", 2), {(("X1", "dHf"), ("X2", "dHf")): 1.5}
            ),
            "between −1 and 1",
        ),
        (
            lambda: correlation_matrix(
                inputs_of("normal", 2), {(("X1", "dHf"), ("Y", "dHf")): 0.5}
            ),
            "not an input",
        ),
        (
            lambda: summarise(
                additive_model(4), draw_samples(inputs_of("normal"), 100), coverage=1.0
            ),
            "strictly between 0 and 1",
        ),
        (
            lambda: assess_uncertainty("MgCO3 -> MgO + CO2", T="700 K", confidence=1.2),
            "The 'confidence' parameter of assess_uncertainty must be a probability above 0.5",
        ),
        (lambda: Override("MgO(cr)", "dHf", ""), "say why"),
        (lambda: Override("MgO(cr)", "Cp", "x", value=1.0), "not one of"),
        (lambda: parse_override("MgO(cr):dHf ± 4 kJ/mol"), "cannot read the override"),
        (
            lambda: build_inputs([], [Override("MgO(cr)", "dHf", "x", value="1 kJ/mol")]),
            "not a species-phase",
        ),
        (
            lambda: build_inputs(
                [feasibly.default_library()["MgO(cr)"]],
                [Override("MgO(cr)", "dHf", "x", uncertainty="-2 kJ/mol")],
            ),
            "negative",
        ),
        (
            lambda: build_inputs(
                [feasibly.default_library()["MgO(cr)"]],
                [Override("MgO(cr)", "dHf", "x", uncertainty="2 kJ/mol", coverage="90 percent")],
            ),
            "coverage",
        ),
        (
            lambda: build_inputs(
                [feasibly.default_library()["MgO(cr)"]],
                [Override("MgO(cr)", "dHf", "x", uncertainty="2 K")],
            ),
            "energy per amount",
        ),
    ],
)
def test_bad_uncertainty_input(make, fragment: str) -> None:
    with pytest.raises(feasibly.FeasiblyError) as info:
        make()
    assert fragment in str(info.value)


def test_invalid_uncertainty_is_a_value_error() -> None:
    assert issubclass(InvalidUncertainty, ValueError)


def test_crossings_match_a_trial_by_trial_scan() -> None:
    # Reference: each trial's row of ΔrG − threshold scanned in plain Python order, with the
    # same linear interpolation. The threshold oscillates, so trials cross several times, and
    # the small chunk puts crossings on block boundaries.
    from feasibly.uncertainty._quantiles import single_threaded_blas
    from feasibly.uncertainty.linear import crossings, linear_model

    rxn = feasibly.Reaction.parse("CaCO3 -> CaO + CO2")
    samples = draw_samples(build_inputs(rxn.species_used()), 500, seed=41)
    T = np.linspace(900.0, 1200.0, 61)
    model = linear_model(rxn, T, samples)
    # The values as crossings forms them (blocks of 7 rows on one BLAS thread): a BLAS product
    # of other shape or threading may differ in the last bit, and the check below is exact.
    with single_threaded_blas():
        g = np.vstack(
            [model.values("G", samples, slice(s, min(s + 7, T.size))) for s in range(0, T.size, 7)]
        )
    thr = np.median(g, axis=1) + 3000.0 * np.sin(T / 7.0)
    first, count = crossings(model, samples, thr, chunk=7)
    d = g - thr[:, None]
    assert count.max() > 1
    for t in range(samples.n):
        flips = [k for k in range(1, T.size) if (d[k - 1, t] < 0) != (d[k, t] < 0)]
        assert count[t] == len(flips)
        if not flips:
            assert np.isnan(first[t])
            continue
        k = flips[0]
        frac = d[k - 1, t] / (d[k - 1, t] - d[k, t])
        assert first[t] == T[k - 1] + frac * (T[k] - T[k - 1])
