"""The call at the user's conditions against measured decomposition pressures.

Reference: E. H. Baker, "The calcium oxide–carbon dioxide system in the pressure range 1–300
atmospheres", J. Chem. Soc. 1962, 464–470: the measured CO2 pressure over calcite and lime fits
log10(p / atm) = 7.079 − 8308 / (T / K) (equation recalled, from memory; not read from the paper
here). The equilibrium CO2 pressure p_eq gives ΔrG° = −RT ln(p_eq / p°) for
CaCO3 → CaO + CO2, and the decomposition temperature at a given p(CO2) is where ΔrG at that
pressure is zero.

Tolerance: the expanded (k = 2) uncertainty of ΔrG° from the library's own source-stated and
policy uncertainties (first-order GUM propagation, the same model the Monte Carlo samples), and
for temperatures that uncertainty divided by ΔrS°. A disagreement beyond it means the data or the
call is wrong.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from feasibly import assess, assess_uncertainty
from feasibly.library.cp_models import R

pytestmark = pytest.mark.reference

_ATM = 101325.0
_BAR = 1e5


def _baker_p_pa(T: float) -> float:
    """Equilibrium CO2 pressure over CaCO3/CaO, Baker 1962 fit (from memory), in Pa."""
    return _ATM * 10.0 ** (7.079 - 8308.0 / T)


def _baker_T_at(p_pa: float) -> float:
    return 8308.0 / (7.079 - math.log10(p_pa / _ATM))


def _u_dG(T: float) -> float:
    u = assess_uncertainty("CaCO3 -> CaO + CO2", T=f"{T} K", samples=1024, seed=11)
    return float(u.gum()["u"][0])


@pytest.mark.parametrize("T", [1000.0, 1100.0, 1169.0])
def test_standard_dG_matches_measured_co2_pressure(T: float) -> None:
    a = assess("CaCO3 -> CaO + CO2", T=f"{T} K")
    measured = -R * T * math.log(_baker_p_pa(T) / _BAR)
    tol = 2.0 * _u_dG(T)
    assert abs(float(a.standard.dG[0]) - measured) < tol, (a.standard.dG[0], measured, tol)


@pytest.mark.parametrize("p_bar", [0.05, 0.15, 0.5])
def test_decomposition_temperature_at_partial_pressure(p_bar: float) -> None:
    a = assess(
        "CaCO3 -> CaO + CO2",
        T_range=("900 K", "1200 K"),
        points=7,
        partial_pressures={"CO2": f"{p_bar} bar"},
    )
    assert a.crossover_at_conditions_K is not None
    (t_call,) = a.crossover_at_conditions_K
    t_meas = _baker_T_at(p_bar * _BAR)
    tol = 2.0 * _u_dG(t_meas) / float(assess("CaCO3 -> CaO + CO2", T=f"{t_meas} K").standard.dS[0])
    assert abs(t_call - t_meas) < tol, (t_call, t_meas, tol)
    # The call flips exactly there: not favourable below, favourable above.
    below = assess(
        "CaCO3 -> CaO + CO2", T=f"{t_call - 5} K", partial_pressures={"CO2": f"{p_bar} bar"}
    )
    above = assess(
        "CaCO3 -> CaO + CO2", T=f"{t_call + 5} K", partial_pressures={"CO2": f"{p_bar} bar"}
    )
    assert not below.favourable[0] and above.favourable[0]


def test_calcite_at_1123_K_under_015_bar_is_favourable_not_no() -> None:
    # Measured (Baker 1962, from memory): p_eq(1123 K) ≈ 0.47 atm > 0.15 bar, so calcite decomposes.
    assert _baker_p_pa(1123.0) > 0.15 * _BAR
    a = assess("CaCO3 -> CaO + CO2", T="1123 K", partial_pressures={"CO2": "0.15 bar"})
    assert a.dG_call[0] < 0 and a.favourable[0]
    assert a.standard.dG[0] > 0  # the standard value alone would have said no
    doc = a.to_dict()
    assert doc["rows"][0]["call"] == "favourable"
    assert doc["call_basis"] == {"quantity": "ΔrG", "conditions": "p(CO2) = 0.15 bar"}
    assert np.isclose(doc["rows"][0]["dG_actual_J_per_mol"], float(a.dG_call[0]))
