"""Δr quantities, K, crossover and non-standard ΔrG: definitions and consistency.

Values against published tables are in tests/reference/; here the checks are the defining
relations (IUPAC Green Book, 3rd ed., §2.11: ΔrG° = −RT ln K°, ΔrG = ΔrG° + RT ln Q) and
internal consistency between routes that share no code.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from feasibly import (
    Q_,
    InvalidInput,
    InvalidTemperature,
    MissingCondensedPhase,
    OutsideDataRange,
    Reaction,
    UnitError,
    assess,
    crossover_temperatures,
    standard_properties,
)
from feasibly.library.cp_models import R

SHIFT = "CO + H2O -> CO2 + H2"
CRACK = "C2H6 -> C2H4 + H2"


def test_K_and_entropy_bookkeeping() -> None:
    rxn = Reaction.parse(SHIFT)
    T = np.array([500.0, 800.0, 1100.0])
    p = standard_properties(rxn, T)
    np.testing.assert_allclose(p.dG, p.dH - T * p.dS, rtol=1e-12)
    np.testing.assert_allclose(np.log(p.K), -p.dG / (R * T), rtol=1e-10)
    np.testing.assert_allclose(p.dS_universe, -p.dG / T, rtol=1e-12)


def test_gibbs_helmholtz_and_kirchhoff() -> None:
    # d(ΔrG°/T)/dT = −ΔrH°/T² (Gibbs–Helmholtz) and dΔrH°/dT = ΔrCp° (Kirchhoff), by central
    # differences with h = 0.01 K (error ~h², far below the 1e-6 relative tolerance).
    rxn = Reaction.parse(CRACK)
    T, h = 900.0, 0.01
    p = standard_properties(rxn, np.array([T - h, T, T + h]))
    dGT = (p.dG[2] / (T + h) - p.dG[0] / (T - h)) / (2 * h)
    assert dGT == pytest.approx(-p.dH[1] / T**2, rel=1e-6)
    assert (p.dH[2] - p.dH[0]) / (2 * h) == pytest.approx(p.dCp[1], rel=1e-5)
    assert (p.dS[2] - p.dS[0]) / (2 * h) == pytest.approx(p.dCp[1] / T, rel=1e-5)


def test_crossover_is_a_root_and_differs_from_the_298_shortcut() -> None:
    rxn = Reaction.parse(CRACK)
    (root,) = crossover_temperatures(rxn, 500.0, 1500.0)
    assert abs(standard_properties(rxn, np.array([root])).dG[0]) < 1e-3  # |ΔrG°| < 1 mJ/mol
    a = assess(CRACK, T_range=("500 K", "1500 K"), points=5)
    assert a.crossover_K == [pytest.approx(root, abs=1e-4)]
    assert a.crossover_298_estimate_K is not None
    assert a.crossover_298_estimate_K != pytest.approx(root, abs=1.0)


def test_no_crossover_gives_empty_list() -> None:
    a = assess(SHIFT, T_range=("400 K", "600 K"), points=3)
    assert a.crossover_K == []


def test_one_atm_standard_state_shift() -> None:
    # Changing p° from 1 bar to 1 atm adds Δn(gas)·RT·ln(101325/100000) to ΔrG° (definition).
    bar = assess(CRACK, T="900 K")
    atm = assess(CRACK, T="900 K", standard_pressure="1 atm")
    shift = 1.0 * R * 900.0 * math.log(101325 / 100000)
    assert atm.standard.dG[0] - bar.standard.dG[0] == pytest.approx(shift, rel=1e-9)
    assert atm.standard.dH[0] == bar.standard.dH[0]


def test_partial_pressures_enter_through_RT_lnQ() -> None:
    a = assess(
        CRACK, T="1000 K", partial_pressures={"C2H6": "0.5 bar", "C2H4": "0.1 bar", "H2": "20 kPa"}
    )
    Q = (0.1 * 0.2) / 0.5
    assert a.dG_actual[0] - a.standard.dG[0] == pytest.approx(R * 1000 * math.log(Q), rel=1e-12)
    assert a.log10_Q == pytest.approx(math.log10(Q))
    b = assess(CRACK, T="1000 K", partial_pressures={"C2H4": "0.1 bar"})
    assert set(b.assumed_standard) == {"C2H6", "H2"}


def test_condensed_phases_have_unit_activity() -> None:
    a = assess("MgCO3 -> MgO + CO2", T="700 K", partial_pressures={"CO2": "0.01 bar"})
    assert a.dG_actual[0] - a.standard.dG[0] == pytest.approx(R * 700 * math.log(0.01), rel=1e-12)


def test_bad_conditions() -> None:
    with pytest.raises(UnitError, match="not in the equation"):
        assess(CRACK, T="900 K", partial_pressures={"CO2": "1 bar"})
    with pytest.raises(UnitError, match="a bare number"):
        assess(CRACK, T=900)
    with pytest.raises(InvalidTemperature):
        assess(CRACK, T="0 K")
    with pytest.raises(InvalidInput, match="The 'T' parameter of assess must be a temperature"):
        assess(CRACK)
    with pytest.raises(InvalidInput, match="'T_range' parameter of assess must be left out"):
        assess(CRACK, T="900 K", T_range=("600 K", "900 K"))
    with pytest.raises(UnitError, match="standard pressure"):
        assess(CRACK, T="900 K", standard_pressure="2 bar")
    with pytest.raises(OutsideDataRange):
        assess("H2 + 1/2 O2 -> H2O(l)", T="700 K")


def test_array_temperatures_with_units() -> None:
    a = assess(SHIFT, T=Q_([600, 700, 800], "K"))
    assert a.standard.T.tolist() == [600.0, 700.0, 800.0]


def test_to_dict_has_the_documented_keys() -> None:
    d = assess(CRACK, T_range=("600 K", "1200 K"), points=4).to_dict()
    for key in ("T_K", "dH_J_per_mol", "dS_J_per_mol_K", "dG_J_per_mol", "log10_K"):
        assert key in d["rows"][0]
    assert d["balanced_equation"] == "C2H6 -> C2H4 + H2"
    assert d["data_version"] == "2026.12.2"
    assert isinstance(d["crossover_K"], list)


def test_cautions() -> None:
    burn = assess("CH4 + 2 O2 -> CO2 + 2 H2O", T="600 K")
    kinds = {c.kind for c in burn.cautions}
    assert "strongly exothermic" in kinds and "flammable" in kinds
    assert any("process-safety review" in n for n in burn.notes)
    crack = assess(CRACK, T="1000 K")
    assert "gas evolution" in {c.kind for c in crack.cautions}


# --- the call at the user's conditions --------------------------------------------------------
def test_call_at_required_conversion_agrees_with_the_equilibrium_solver() -> None:
    # Two routes that share no code: the sign of ΔrG at the composition of the required
    # conversion (this module) and the equilibrium extent solved by feasibly.equilibrium.
    from feasibly.equilibrium import equilibrium_extent

    temps = np.linspace(500.0, 900.0, 17)
    a = assess(
        "N2 + 3 H2 -> 2 NH3",
        T=(temps, "K"),
        at_conversion={"feed": "N2:1, H2:3", "key": "N2", "required": "20%", "P": "200 bar"},
    )
    x = equilibrium_extent("N2 + 3 H2 -> 2 NH3", (temps, "K"), "200 bar", "N2:1, H2:3", key="N2")
    assert x.conversion is not None
    assert a.favourable.tolist() == (x.conversion > 0.2).tolist()
    assert a.favourable.any() and not a.favourable.all()
    # The standard values alone say "not favourable" everywhere above ~460 K.
    assert not (a.standard.dG[temps > 500] < 0).any()
    assert a.call_symbol == "ΔrG" and "200 bar" in a.conditions


def test_crossover_at_required_conversion_is_where_the_conversion_equals_it() -> None:
    from feasibly.equilibrium import equilibrium_extent

    a = assess(
        "N2 + 3 H2 -> 2 NH3",
        T_range=("500 K", "900 K"),
        points=5,
        at_conversion={"feed": "N2:1, H2:3, Ar:0.2", "key": "N2", "required": 0.2, "P": "200 bar"},
    )
    assert a.crossover_at_conditions_K is not None
    (t,) = a.crossover_at_conditions_K
    x = equilibrium_extent(
        "N2 + 3 H2 -> 2 NH3", (t, "K"), "200 bar", "N2:1, H2:3, Ar:0.2", key="N2"
    )
    assert x.conversion is not None
    # Brent's method stops at 1e-6 K; the conversion changes by ~2e-3 per K here.
    assert float(x.conversion[0]) == pytest.approx(0.2, abs=1e-6)
    assert a.window() == [(500.0, t)]


def test_unreachable_conversion_is_never_favourable() -> None:
    # 100 % of N2 from a feed short of H2 would need more H2 than there is.
    a = assess(
        "N2 + 3 H2 -> 2 NH3",
        T="500 K",
        at_conversion={"feed": "N2:1, H2:2", "key": "N2", "required": "100%", "P": "200 bar"},
    )
    assert np.isinf(a.dG_call[0]) and not a.favourable[0]
    assert a.to_dict()["rows"][0]["dG_actual_J_per_mol"] is None


def test_partial_pressures_and_required_conversion_are_exclusive() -> None:
    with pytest.raises(UnitError, match="not both"):
        assess(
            "CaCO3 -> CaO + CO2",
            T="1000 K",
            partial_pressures={"CO2": "0.1 bar"},
            at_conversion={"feed": "CaCO3:1", "key": "CaCO3", "required": 0.5, "P": "1 bar"},
        )


def test_window_at_partial_pressure_starts_at_its_crossover() -> None:
    a = assess(
        "CaCO3 -> CaO + CO2",
        T_range=("900 K", "1200 K"),
        points=7,
        partial_pressures={"CO2": "0.15 bar"},
    )
    assert a.crossover_at_conditions_K is not None and a.crossover_K is not None
    assert a.window() == [(a.crossover_at_conditions_K[0], 1200.0)]
    # Lower CO2 pressure: decomposition sets in below the standard-state crossover.
    assert a.crossover_at_conditions_K[0] < a.crossover_K[0]
    doc = a.to_dict()
    assert doc["window_K"] == [[a.crossover_at_conditions_K[0], 1200.0]]
    assert [r["call"] for r in doc["rows"]] == [
        "favourable" if g < 0 else "not favourable" for g in a.dG_call
    ]


def test_missing_stable_phase_is_said() -> None:
    # Phenol has a solid and a gas entry but no liquid; it melts at 314.15 K and boils at
    # 454.95 K (CRC Handbook via chemicals at build time, shipped in phase_points), so at
    # 350–425 K the stable liquid is missing.
    eq = "C6H5OH + 7 O2 -> 6 CO2 + 3 H2O"
    a = assess(eq, T_range=("350 K", "500 K"), points=7)
    (note,) = [n for n in a.notes if n.startswith("C6H5OH:")]
    assert "stable liquid at 350–425 K is missing" in note and "Tb 454.9 K" in note
    # Above the boiling point the gas is the stable form: nothing to say.
    b = assess(eq, T="480 K")
    assert not [n for n in b.notes if n.startswith("C6H5OH:")]
    # Water has its liquid and gas: nothing to say either.
    c = assess("2 H2 + O2 -> 2 H2O", T_range=("300 K", "500 K"), points=5)
    assert not [n for n in c.notes if "missing from the data" in n]


@pytest.mark.parametrize(
    ("equation", "formula", "melts"),
    [
        # FeO: only FeO(g) in the data (no stoichiometric FeO(cr) source); it melts at 1650.15 K
        # and boils at 3687.15 K (chemicals: CRC_INORG, WIKIDATA), a solid at 1000 K.
        ("Fe + 0.5 O2 -> FeO", "FeO", "Tm 1650.2 K"),
        # NiO: only NiO(g); it melts at 2230.15 K (chemicals: CRC_INORG), no boiling point.
        ("Ni + 0.5 O2 -> NiO", "NiO", "Tm 2230.2 K"),
    ],
)
def test_a_gas_only_species_is_refused_where_it_is_condensed(
    equation: str, formula: str, melts: str
) -> None:
    with pytest.raises(MissingCondensedPhase) as err:
        assess(equation, T="1000 K")
    assert err.value.species == formula and err.value.phase == "solid"
    assert err.value.T_K == [1000.0] and err.value.gas_id == f"{formula}(g)"
    assert melts in str(err.value) and f"write {formula}(g)" in str(err.value)
    # Named as the gas, it is the user's choice: the call is made, with the missing solid said.
    a = assess(equation.replace(formula, f"{formula}(g)"), T="1000 K")
    assert any(n.startswith(f"{formula}(g):") and "stable solid" in n for n in a.notes)
    # Above its melting point, with no boiling point tabulated, nothing shows the gas to be the
    # stable form: the compound is taken as a liquid and the gas-only call is refused too (FeO at
    # 1700 K was once called "not favourable" on its vapour). Ethylbenzene above its tabulated
    # boiling point is used as a gas (tests/thermo/test_phase_points.py).
    with pytest.raises(MissingCondensedPhase) as hot:
        assess(equation, T="2300 K" if formula == "FeO" else "2400 K")
    assert hot.value.phase == "liquid"


def test_the_uncertainty_run_refuses_a_gas_only_species_where_it_is_condensed() -> None:
    # Same case as above (FeO melts at 1650.15 K, chemicals: CRC_INORG): no draws on the gas.
    from feasibly import assess_uncertainty

    with pytest.raises(MissingCondensedPhase, match=r"write FeO\(g\)"):
        assess_uncertainty("Fe + 0.5 O2 -> FeO", T="1000 K", samples=256, seed=1)
