"""Heat duty and adiabatic temperature: balances, units of the per-kg figures, phase changes on
the way, intervals from the draws, and refusals. Outside references are in
tests/reference/test_heat_vs_references.py."""

from __future__ import annotations

import math

import numpy as np
import pytest

import feasibly
from feasibly.errors import InvalidInput, OutsideDataRange
from feasibly.heat import adiabatic_temperature, heat_duty
from feasibly.thermo import Reaction
from feasibly.thermo.energy import reaction_streams, stream_enthalpy

CALCINE = "CaCO3 -> CaO + CO2"
BURN = "CH4 + 2 O2 -> CO2 + 2 H2O"


def test_duty_is_out_minus_in_and_per_kg_figures_follow() -> None:
    d = heat_duty(CALCINE, "1173 K", "CaCO3:2", T_feed="298.15 K")
    lib = feasibly.default_library()
    calcite = Reaction.parse(CALCINE).terms[0].candidates[0]
    h_in = 2 * calcite.enthalpy(298.15)
    h_out = 2 * (lib["CaO(cr)"].enthalpy(1173.0) + lib["CO2(g)"].enthalpy(1173.0))
    assert d.J == pytest.approx(float(h_out - h_in), rel=1e-12)
    assert d.extent == 2.0
    assert d.J_per_mol_reaction == pytest.approx(d.J / 2)
    # per kg of CaO formed (56.077 g/mol) and per kg of CaCO3 fed (100.087 g/mol)
    assert d.product == "CaO"
    assert d.J_per_kg_product == pytest.approx(d.J / (2 * lib["CaO(cr)"].molar_mass / 1000))
    assert d.J_per_kg_feed == pytest.approx(d.J / (2 * calcite.molar_mass / 1000))


def test_feed_at_reaction_temperature_gives_the_reaction_enthalpy() -> None:
    d = heat_duty(CALCINE, "1000 K", "CaCO3:1")
    a = feasibly.assess(CALCINE, T="1000 K")
    assert d.J_per_mol_reaction == pytest.approx(float(a.standard.dH[0]), rel=1e-12)


def test_inerts_and_excess_take_sensible_heat_only() -> None:
    lean = heat_duty(BURN, "600 K", "CH4:1, O2:3, N2:10", T_feed="298.15 K")
    rich = heat_duty(BURN, "600 K", "CH4:1, O2:2", T_feed="298.15 K")
    lib = feasibly.default_library()
    extra = lib["O2(g)"].enthalpy(600.0) - lib["O2(g)"].enthalpy(298.15)
    extra += 10 * (lib["N2(g)"].enthalpy(600.0) - lib["N2(g)"].enthalpy(298.15))
    assert lean.J - rich.J == pytest.approx(float(extra), rel=1e-9)


def test_water_condensing_on_the_way_is_in_the_duty() -> None:
    """Products leaving at 350 K hold liquid water (stable below 373 K at 1 bar): the duty is
    lower than with water forced to stay gas by about 2 × ΔvapH (≈ 41–44 kJ/mol each)."""
    liquid = heat_duty(BURN, "350 K", "CH4:1, O2:2", T_feed="350 K")
    gas = heat_duty("CH4 + 2 O2 -> CO2 + 2 H2O(g)", "350 K", "CH4:1, O2:2", T_feed="350 K")
    gap = (gas.J - liquid.J) / 2
    assert 40e3 < gap < 45e3  # ΔvapH of water between 298 and 373 K (common knowledge range)


def test_given_conversion_and_key() -> None:
    full = heat_duty(BURN, "600 K", "CH4:1, O2:4", T_feed="298.15 K")
    half = heat_duty(BURN, "600 K", "CH4:1, O2:4", T_feed="298.15 K", conversion="50%", key="CH4")
    assert half.extent == pytest.approx(0.5)
    assert full.extent == pytest.approx(1.0)  # CH4 limits: O2 is in excess


def test_equilibrium_conversion_nominal() -> None:
    d = heat_duty("CO + H2O -> CO2 + H2", "1000 K", "CO:1, H2O:1", conversion="equilibrium")
    x = feasibly.equilibrium_extent("CO + H2O -> CO2 + H2", "1000 K", "1 bar", "CO:1, H2O:1")
    assert d.extent == pytest.approx(float(x.extent[0]), rel=1e-12)


def test_interval_from_draws_matches_the_linear_law() -> None:
    """The duty is linear in the inputs: the Monte Carlo mean is the nominal value within
    4 standard errors, and the 95 % interval is ±1.96 u of a normal (normal inputs)."""
    n = 40_000
    d = heat_duty(CALCINE, "1173 K", "CaCO3:1", T_feed="298.15 K", samples=n, seed=11)
    assert d.draws is not None and d.interval is not None
    u = d.draws.std(ddof=1)
    assert abs(d.draws.mean() - d.J_per_mol_reaction) < 4 * u / math.sqrt(n)
    lo, hi = d.interval
    # the 2.5 % and 97.5 % quantiles of N(μ, u²), within 4 standard errors of a quantile
    se_q = math.sqrt(0.025 * 0.975 / n) / 0.0584 * u  # 0.0584 = normal density at 1.96
    assert lo == pytest.approx(d.J_per_mol_reaction - 1.959964 * u, abs=4 * se_q)
    assert hi == pytest.approx(d.J_per_mol_reaction + 1.959964 * u, abs=4 * se_q)


def test_duty_uses_the_call_draws() -> None:
    call = feasibly.assess_uncertainty(CALCINE, T="1173 K", samples=4096, seed=3)
    a = heat_duty(CALCINE, "1173 K", "CaCO3:1", T_feed="298.15 K", call=call)
    b = heat_duty(CALCINE, "1173 K", "CaCO3:1", T_feed="298.15 K", call=call)
    assert a.draws is not None and b.draws is not None
    np.testing.assert_array_equal(a.draws, b.draws)
    # Feed and products at the reaction T: the duty is ΔrH of the same draws as the call.
    same_t = heat_duty(CALCINE, "1173 K", "CaCO3:1", call=call)
    assert same_t.draws is not None
    np.testing.assert_allclose(
        same_t.draws, call.model.values("H", call.samples)[0], rtol=1e-12, atol=1e-6
    )


def test_inerts_outside_the_call_are_drawn_reproducibly() -> None:
    call = feasibly.assess_uncertainty(BURN, T="600 K", samples=2048, seed=8)
    a = heat_duty(BURN, "600 K", "CH4:1, O2:2, N2:7.52", T_feed="298.15 K", call=call)
    b = heat_duty(BURN, "600 K", "CH4:1, O2:2, N2:7.52", T_feed="298.15 K", call=call)
    np.testing.assert_array_equal(a.draws, b.draws)


def test_adiabatic_balance_closes() -> None:
    a = adiabatic_temperature(BURN, "CH4:1, O2:2, N2:7.52", "298.15 K")
    rxn = Reaction.parse(BURN)
    inlet, outlet = reaction_streams(rxn, {"CH4": 1, "O2": 2, "N2": 7.52}, 1.0)
    h_in = stream_enthalpy(inlet, 298.15)[0]
    # 1 J: the bisection stops within ~1e-4 K, times the outlet's heat capacity (~0.5 kJ/K)
    assert stream_enthalpy(outlet, a.T_K)[0] == pytest.approx(h_in, abs=1.0)
    assert a.rise_K == pytest.approx(a.T_K - 298.15)


def test_adiabatic_draws_bracket_the_nominal() -> None:
    a = adiabatic_temperature(BURN, "CH4:1, O2:2, N2:7.52", "298.15 K", samples=8192, seed=2)
    assert a.interval is not None and a.draws is not None
    assert a.interval[0] < a.T_K < a.interval[1]
    assert abs(np.median(a.draws) - a.T_K) < 10.0  # near-linear: median within a few K


def test_more_inert_means_cooler() -> None:
    air = adiabatic_temperature(BURN, "CH4:1, O2:2, N2:7.52", "298.15 K")
    diluted = adiabatic_temperature(BURN, "CH4:1, O2:2, N2:20", "298.15 K")
    assert diluted.T_K < air.T_K


@pytest.mark.parametrize(
    ("call", "fragment"),
    [
        (lambda: heat_duty(CALCINE, "1173 K", "CaCO3:1", conversion=1.5), "'conversion'"),
        (lambda: heat_duty(CALCINE, "1173 K", "CaCO3:1", conversion="most"), "'conversion'"),
        (lambda: heat_duty(CALCINE, "1173 K", "CaCO3:1", key="CO2"), "'key'"),
        (lambda: heat_duty(CALCINE, "1173 K", "CaCO3:1", product="CaCO3"), "'product'"),
        (lambda: heat_duty(CALCINE, "1173 K", "CaO:1"), "'feed'"),
        (lambda: heat_duty(CALCINE, "1173 K", "CaCO3:1", T_feed={"CO2": "300 K"}), "T_feed"),
        (lambda: heat_duty(CALCINE, 1173, "CaCO3:1"), "bare number"),
        (
            lambda: adiabatic_temperature(BURN, "CH4:1, O2:2", "298.15 K", conversion="all"),
            "'conversion'",
        ),
    ],
)
def test_refusals_name_the_problem(call, fragment: str) -> None:
    with pytest.raises(feasibly.FeasiblyError, match=fragment):
        call()


def test_beyond_the_data_range_is_refused() -> None:
    """Pure oxygen with hydrogen runs past the data's upper limit: refused with the range."""
    with pytest.raises(OutsideDataRange):
        adiabatic_temperature("2 H2 + O2 -> 2 H2O", "H2:2, O2:1", "3000 K")


def test_invalid_input_is_the_family() -> None:
    with pytest.raises(InvalidInput):
        heat_duty(CALCINE, "1173 K", "CaCO3:1", conversion=0)


def test_an_endothermic_step_has_no_adiabatic_temperature() -> None:
    with pytest.raises(InvalidInput, match="takes in 178"):
        adiabatic_temperature(CALCINE, "CaCO3:1", "298.15 K")


# --- at the equilibrium conversion, with the call's draws ---------------------------------------
SHIFT = "CO + H2O -> CO2 + H2"
SO2 = "2 SO2 + O2 -> 2 SO3"
SO2_FEED = "SO2:10, O2:11, N2:79"


@pytest.fixture(scope="module")
def shift_call() -> feasibly.UncertainAssessment:
    # 4096 draws: enough to compare draw by draw; the interval itself is not asserted here
    return feasibly.assess_uncertainty(SHIFT, T="1000 K", samples=4096, seed=2)


def test_equilibrium_duty_draw_by_draw_equals_the_duty_at_that_draws_extent(
    shift_call: feasibly.UncertainAssessment,
) -> None:
    """Each draw's duty at its own equilibrium extent equals the duty computed directly at a
    given conversion equal to that extent (a separate path: the whole outlet stream built at
    that extent), for the same draw of the data."""
    d = heat_duty(SHIFT, "1000 K", "CO:1, H2O:1", T_feed="500 K", conversion="equilibrium",
                  call=shift_call)  # fmt: skip
    assert d.draws is not None and d.extent_draws is not None and d.extent_interval is not None
    assert d.extent_interval[0] < d.extent < d.extent_interval[1]
    for k in (0, 17, 1000, 4095):
        direct = heat_duty(SHIFT, "1000 K", "CO:1, H2O:1", T_feed="500 K",
                           conversion=float(d.extent_draws[k]), call=shift_call)  # fmt: skip
        assert direct.draws is not None
        # 1e-12 relative: two orders of the same sums, rounding only
        assert d.draws[k] == pytest.approx(direct.draws[k], rel=1e-12)
    # Nominal: the equilibrium extent of the nominal data, and the duty at that extent.
    nominal = heat_duty(SHIFT, "1000 K", "CO:1, H2O:1", T_feed="500 K", conversion=d.extent)
    assert d.J_per_mol_reaction == pytest.approx(nominal.J_per_mol_reaction, rel=1e-12)


def test_each_draws_extent_satisfies_its_own_equilibrium(
    shift_call: feasibly.UncertainAssessment,
) -> None:
    """K of each draw (from that draw's ΔrG°) equals the quotient of the amounts at its extent:
    x(CO2)·x(H2)/(x(CO)·x(H2O)) = exp(−ΔrG°/RT) (Δn = 0, so pressure drops out)."""
    d = heat_duty(SHIFT, "1000 K", "CO:1, H2O:1", conversion="equilibrium", call=shift_call)
    assert d.extent_draws is not None
    xi = d.extent_draws
    dG = shift_call.model.values("G", shift_call.samples)[0]
    ln_q = 2 * np.log(xi) - 2 * np.log(1 - xi)
    # 1e-9: the extent solver's root tolerance (1e-12 in ln units) and rounding of ln Q
    np.testing.assert_allclose(ln_q, -dG / (8.314462618 * 1000.0), rtol=0, atol=1e-9)


def test_equilibrium_intervals_of_per_kg_figures_use_each_draws_product() -> None:
    call = feasibly.assess_uncertainty(SHIFT, T="900 K", samples=2048, seed=4)
    d = heat_duty(SHIFT, "900 K", "CO:1, H2O:2", T_feed="450 K", conversion="equilibrium",
                  product="H2", call=call)  # fmt: skip
    assert d.draws is not None and d.extent_draws is not None
    assert d.interval_per_kg_product is not None and d.interval_per_kg_feed is not None
    m_h2 = feasibly.default_library()["H2(g)"].molar_mass / 1000
    per_kg = d.draws / m_h2  # per mole of reaction → per kg of H2 (one H2 per mole)
    lo, hi = np.quantile(per_kg, [0.025, 0.975])
    assert d.interval_per_kg_product == pytest.approx((lo, hi), rel=1e-12)
    feed_kg = sum(
        n * feasibly.default_library()[s].molar_mass / 1000
        for s, n in (("CO(g)", 1), ("H2O(g)", 2))
    )
    lo, hi = np.quantile(d.draws * d.extent_draws / feed_kg, [0.025, 0.975])
    assert d.interval_per_kg_feed == pytest.approx((lo, hi), rel=1e-12)


def test_a_draw_in_which_the_reaction_does_not_run_is_refused() -> None:
    """Just above calcite's decomposition temperature (ΔrG° = 0 at 1 bar CO2, from the kernel's
    own crossover) the nominal data decompose the charge fully, but some draws of the data do
    not decompose it at all: the duty per mole at the equilibrium conversion is then undefined,
    and the refusal says in how many draws."""
    a = feasibly.assess(CALCINE, T_range=("1000 K", "1200 K"), points=21)
    assert a.crossover_K
    T = (a.crossover_K[0] + 1.0, "K")  # 1 K above: nominal K > 1, well inside the data's doubt
    assert heat_duty(CALCINE, T, "CaCO3:1", conversion="equilibrium").extent == 1.0
    with pytest.raises(InvalidInput, match="does not run forward"):
        heat_duty(CALCINE, T, "CaCO3:1", conversion="equilibrium", samples=2048, seed=1)


def test_adiabatic_equilibrium_draw_by_draw_closes_at_a_fixed_extent() -> None:
    """Each draw's adiabatic temperature at equilibrium is the adiabatic temperature at a given
    conversion equal to that draw's extent there (the fixed-extent path), for the same draw."""
    call = feasibly.assess_uncertainty(SO2, T="700 K", samples=1024, seed=6)
    hot = adiabatic_temperature(SO2, SO2_FEED, "700 K", conversion="equilibrium", call=call)
    assert hot.draws is not None and hot.interval is not None and hot.conversion is None
    assert hot.interval[0] < hot.T_K < hot.interval[1]
    from feasibly.equilibrium import extents_at
    from feasibly.uncertainty import linear_model

    rxn = call.reaction
    for k in (0, 511, 1023):
        T_k = np.array([hot.draws[k]])
        model = linear_model(rxn, T_k, call.samples)
        dG = model.G0 + model.aG @ call.samples.values[:, k]
        xi = float(extents_at(rxn, T_k, 1e5, {"SO2": 10, "O2": 11, "N2": 79}, dG)[0])
        fixed = adiabatic_temperature(SO2, SO2_FEED, "700 K", conversion=xi / 5.0, call=call)
        assert fixed.draws is not None
        # 1e-6 K: both bisections end far below it (60 halvings of a few thousand K)
        assert fixed.draws[k] == pytest.approx(hot.draws[k], abs=1e-6)


def test_adiabatic_equilibrium_of_an_endothermic_step_cools() -> None:
    """Steam reforming fed hot with no heat supplied runs until its own cooling stops it."""
    hot = adiabatic_temperature(
        "CH4 + H2O -> CO + 3 H2", "CH4:1, H2O:3", "1000 K", conversion="equilibrium"
    )
    assert hot.T_K < 1000.0 and hot.extent > 0.0
