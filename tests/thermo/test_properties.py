"""ΔrX°(T) from the folded reaction polynomial against the species-by-species sum.

When every term has one NASA polynomial entry (NASA-7 or NASA-9), ``standard_properties`` folds
Σν·a into one polynomial per stretch between breaks. The reference here is the defining sum
Σν X°(T) over the entries' own ``enthalpy``, ``entropy`` and ``cp`` (each already checked against
NIST-JANAF and Cantera in tests/reference/), evaluated at random temperatures and exactly on
every break.
"""

from __future__ import annotations

import numpy as np
import pytest

from feasibly import OutsideDataRange, Reaction, default_library, standard_properties
from feasibly.thermo.properties import _fold

REACTIONS = [
    "2 CH4(g) + O2(g) + CO2(g) -> 3 CO(g) + 3 H2(g) + H2O(g)",
    "CO(g) + H2O(g) -> CO2(g) + H2(g)",
    "CaCO3(cr,calcite) -> CaO(cr) + CO2(g)",  # breaks at 1000 K and 1200 K; range ends differ
    "3 Fe(cr,alpha) + 2 O2(g) -> Fe3O4(cr)",  # Fe(cr,alpha) has breaks at 1000, 1042 K
]


def _by_species(rxn: Reaction, T: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    dH = sum(t.nu * t.candidates[0].enthalpy(T) for t in rxn.terms)
    dS = sum(t.nu * t.candidates[0].entropy(T) for t in rxn.terms)
    dCp = sum(t.nu * t.candidates[0].cp(T) for t in rxn.terms)
    return dH, dS, dCp  # type: ignore[return-value]


@pytest.mark.parametrize("equation", REACTIONS)
def test_folded_polynomial_equals_the_species_sum(equation: str) -> None:
    lib = default_library()
    rxn = Reaction.parse(equation, lib)
    assert _fold(rxn) is not None, (
        "every term has one NASA polynomial entry, so the fold must apply"
    )
    lo, hi = rxn.valid_range()
    breaks = sorted(
        {b for t in rxn.terms for b in t.candidates[0].cp_model.breaks if lo <= b <= hi}  # type: ignore[attr-defined]
    )
    rng = np.random.default_rng(13)  # seeded: the same temperatures every run
    for T in (np.array(breaks), rng.uniform(lo, hi, 500), np.array([0.5 * (lo + hi)])):
        got = standard_properties(rxn, T)
        dH, dS, dCp = _by_species(rxn, T)
        # Folding Σν·a changes only the order of float operations: 1e-9 relative to the size of
        # the terms (|ΔfH°| up to ~1e6 J/mol) is rounding, far below any data uncertainty.
        scale_h = sum(abs(t.nu) * abs(t.candidates[0].enthalpy(T)).max() for t in rxn.terms)
        scale_s = sum(abs(t.nu) * abs(t.candidates[0].entropy(T)).max() for t in rxn.terms)
        assert np.max(np.abs(got.dH - dH)) <= 1e-12 * scale_h + 1e-9
        assert np.max(np.abs(got.dS - dS)) <= 1e-12 * scale_s + 1e-12
        assert np.allclose(got.dCp, dCp, rtol=1e-12, atol=1e-9)
        np.testing.assert_allclose(
            got.dG, dH - T * dS, rtol=0, atol=1e-12 * (scale_h + hi * scale_s)
        )
        assert got.phases == tuple(tuple(t.candidates[0].id for t in rxn.terms) for _ in T)
        want_dn = sum(t.nu for t in rxn.terms if t.candidates[0].phase == "g")
        assert np.all(got.gas_change == want_dn)


def test_folded_path_still_refuses_temperatures_outside_the_data() -> None:
    # calcite's data end at its decomposition point, 1603 K (thermo.inp record CaCO3(cr))
    rxn = Reaction.parse("CaCO3(cr,calcite) -> CaO(cr) + CO2(g)")
    assert _fold(rxn) is not None
    with pytest.raises(OutsideDataRange, match="CaCO3"):
        standard_properties(rxn, np.array([800.0, 1700.0]))


def test_one_atm_standard_state_on_the_folded_path() -> None:
    # Defining relation (IUPAC Green Book): S°(1 atm) = S°(1 bar) − R ln(101325/100000) per gas.
    rxn = Reaction.parse("CaCO3(cr,calcite) -> CaO(cr) + CO2(g)")
    T = np.linspace(400.0, 1100.0, 8)
    bar = standard_properties(rxn, T)
    atm = standard_properties(rxn, T, 101325.0)
    np.testing.assert_allclose(atm.dS - bar.dS, -8.314462618 * np.log(1.01325), rtol=1e-12)
