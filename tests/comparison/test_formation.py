"""Formation lines: equations per mole of reagent, bands and draw-by-draw comparisons from one
shared set of draws, reductant ratios, refusals. JANAF checks: tests/reference/."""

from __future__ import annotations

import math

import numpy as np
import pytest

import feasibly
from feasibly.comparison import formation_lines
from feasibly.errors import InvalidInput

R = 8.314462618


def test_lines_are_per_mole_of_reagent() -> None:
    lines = formation_lines(["Al2O3", "MgO"], T_range=("800 K", "1000 K"), points=2)
    assert lines.equations == ["4/3 Al + O2 -> 2/3 Al2O3", "2 Mg + O2 -> 2 MgO"]
    a = feasibly.assess("Al + 3/4 O2 -> 1/2 Al2O3", T_range=("800 K", "1000 K"), points=2)
    np.testing.assert_allclose(lines.G[0], a.standard.dG / 0.75, rtol=1e-12)


def test_chlorides_per_mole_of_chlorine() -> None:
    lines = formation_lines(["TiCl4", "FeCl2"], reagent="Cl2", T_range=("600 K", "800 K"), points=2)
    assert lines.equations[0] == "1/2 Ti + Cl2 -> 1/2 TiCl4"
    assert lines.ratios == {}  # CO/CO2 and H2/H2O ratios are for oxides


def test_equations_are_scaled_to_one_mole_of_reagent() -> None:
    by_formula = formation_lines(["Cu2O"], T_range=("700 K", "900 K"), points=3)
    by_equation = formation_lines(["2 Cu + 1/2 O2 -> Cu2O"], T_range=("700 K", "900 K"), points=3)
    np.testing.assert_allclose(by_formula.G, by_equation.G, rtol=1e-12)


def test_bands_bracket_the_line_and_comparisons_are_counted_per_draw() -> None:
    lines = formation_lines(
        ["Fe3O4", "Cr2O3", "Cu2O"], T_range=("700 K", "1300 K"), points=4, samples=8000, seed=3
    )
    assert lines.bands is not None
    lo, mid, hi = lines.bands[0], lines.bands[2], lines.bands[-1]
    assert np.all(lo < lines.G) and np.all(lines.G < hi)
    # the median of a linear function of normal inputs is the nominal, within 4 SE of a median
    u = (hi - lo) / 3.92
    assert np.all(np.abs(mid - lines.G) < 4 * u * math.sqrt(math.pi / 2 / 8000))
    p = lines.p_below("Cr2O3", "Fe3O4")
    assert np.all(p == 1.0)  # hundreds of kJ apart: no draw reverses them
    assert np.all(lines.p_below("Fe3O4", "Cr2O3") == 0.0)


def test_phase_changes_are_marked_on_their_line() -> None:
    lines = formation_lines(["Al2O3", "Fe3O4"], T_range=("600 K", "1300 K"), points=3)
    al = {(sp, frm.split("(")[0]) for sp, _, frm, _ in lines.phase_changes[0]}
    assert ("Al", "Al") in al  # aluminium melts at 933 K on the way
    melt = next(t for sp, t, *_ in lines.phase_changes[0] if sp == "Al")
    tm = pytest.importorskip("chemicals.phase_change").Tm("7429-90-5")  # CRC melting point
    assert melt == pytest.approx(tm, abs=1.0)
    fe = [t for sp, t, *_ in lines.phase_changes[1] if sp == "Fe"]
    assert fe and fe[0] == pytest.approx(1184, abs=2)  # α→γ iron at 1184 K (JANAF Fe, from memory)


def test_reductant_ratio_is_the_equilibrium_of_the_couple() -> None:
    """log10(CO/CO2) needed = (ΔG°(2CO+O2→2CO2) − ΔG°(line)) / (2 RT ln 10)."""
    lines = formation_lines(["Cu2O"], T_range=("900 K", "1100 K"), points=3)
    couple = feasibly.assess("2 CO + O2 -> 2 CO2", T_range=("900 K", "1100 K"), points=3)
    expected = (couple.standard.dG - lines.G[0]) / (2 * R * lines.T * math.log(10))
    np.testing.assert_allclose(lines.ratios["CO/CO2"]["nominal"][0], expected, rtol=1e-12)
    # The same from the overall reduction Cu2O + CO -> 2 Cu + CO2: K = p(CO2)/p(CO).
    red = feasibly.assess("Cu2O + CO -> 2 Cu + CO2", T_range=("900 K", "1100 K"), points=3)
    np.testing.assert_allclose(
        lines.ratios["CO/CO2"]["nominal"][0], -red.standard.log10_K, rtol=1e-9
    )


def test_table_rows() -> None:
    lines = formation_lines(["MgO", "CuO"], T_range=("600 K", "800 K"), points=2, samples=512)
    rows = lines.table()
    assert len(rows) == 4 and {"line", "T_K", "dG_J_per_mol_O2", "lo95_J_per_mol"} <= set(rows[0])


@pytest.mark.parametrize(
    ("kwargs", "fragment"),
    [
        ({"compounds": ["CaCO3"]}, "'compounds'"),
        ({"compounds": "NiO"}, "'compounds'"),
        ({"compounds": ["MgO", "MgO"]}, "each compound once"),
        ({"compounds": ["MgO"], "reagent": "Xe"}, "'reagent'"),
        ({"compounds": ["H2 + Cl2 -> 2 HCl"]}, "consume O2"),
        ({"compounds": ["MgO"], "samples": 1}, "'samples'"),
    ],
)
def test_refusals(kwargs, fragment: str) -> None:
    with pytest.raises(InvalidInput, match=fragment):
        formation_lines(T_range=("600 K", "800 K"), points=2, **kwargs)


def test_no_draws_no_comparison() -> None:
    lines = formation_lines(["MgO", "CuO"], T_range=("600 K", "800 K"), points=2)
    with pytest.raises(InvalidInput, match="samples"):
        lines.p_below("MgO", "CuO")


def test_a_gas_only_compound_is_refused_where_it_is_condensed() -> None:
    """FeO has only its gas in the data (thermo.inp has wustite Fe0.95O, no FeO(cr)); it melts at
    1650 K (CRC Handbook via chemicals). A line for its vapour would say CO/CO2 > 1e-21 reduces
    it at 900 K, where wustite needs a ratio of a few: refused, as in assess."""
    with pytest.raises(feasibly.MissingCondensedPhase, match=r"write FeO\(g\)"):
        formation_lines(["Cu2O", "FeO"], T_range=("700 K", "1700 K"), points=5)


def test_p_below_names_the_lines_it_has() -> None:
    lines = formation_lines(["Cu2O", "Fe3O4"], T_range=("700 K", "900 K"), points=2, samples=64)
    with pytest.raises(feasibly.InvalidInput, match="Cu2O, Fe3O4"):
        lines.p_below("Cu2O", "FeO")


def test_p_below_follows_the_normal_law_of_the_difference() -> None:
    """Both lines are linear in normal inputs, so line a − line b is normal with the first-order
    (GUM, JCGM 100:2008 eq. 13) standard uncertainty from the inputs' own u: P(a below b) =
    Φ((G_b − G_a)/u) (scipy.stats.norm). The count over the shared draws lies within 4 binomial
    standard errors of it. The CO and CO2 lines of carbon cross (the Boudouard equilibrium, near
    980 K at 1 bar), so P runs from 0 to 1 over 800–1200 K: a real test."""
    from scipy.stats import norm

    from feasibly.thermo import Reaction
    from feasibly.uncertainty import build_inputs, draw_samples, linear_model, uncertain_species

    n = 20_000
    co, co2 = "2 C + O2 -> 2 CO", "C + O2 -> CO2"
    lines = formation_lines([co, co2], T_range=("800 K", "1200 K"), points=9, samples=n, seed=5)
    rxns = [Reaction.parse(eq) for eq in lines.equations]
    species = {sp.id: sp for r in rxns for sp in uncertain_species(r)}
    inputs = build_inputs(species.values())
    order = draw_samples(inputs, 2, seed=0)  # only fixes the order of the inputs
    m_a, m_b = (linear_model(r, lines.T, order) for r in rxns)
    coef = m_a.aG - m_b.aG  # both equations consume one O2: no rescaling
    u = np.sqrt(np.einsum("ij,j,ij->i", coef, np.array([i.u for i in order.inputs]) ** 2, coef))
    expected = norm.cdf((m_b.G0 - m_a.G0) / u)
    p = lines.p_below(co, co2)
    assert p.min() < 0.05 and p.max() > 0.95  # the lines cross inside the range
    se = np.sqrt(expected * (1 - expected) / n)
    assert np.all(np.abs(p - expected) <= 4 * se + 1.0 / n)
