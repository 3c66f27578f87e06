"""The kernel's NASA 9-coefficient model vs Cantera's NASA9 implementation and NIST-JANAF.

References:
- Cantera 3.2 ``Nasa9PolyMultiTempRegion`` built from the *same* coefficients (a1…a7, b1, b2 per
  interval) that the library entry carries: an independent evaluation of the NASA-9 equations
  (McBride, Zehe & Gordon, NASA TP-2002-211556, eqs. 1–3). Tolerance 1e-9 relative (float
  round-off; common practice, no source), at temperatures off the interval breaks.
- NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), via janaf 1.4.0: Cp°, S°(T) and
  H°(T) − H°(298.15 K) within the species tolerances of test_species_vs_janaf.py (Cp 0.5 %,
  S 0.3 J/(mol K), H 0.3 kJ/mol).
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

import feasibly
from feasibly.library import Nasa9

_spec = importlib.util.spec_from_file_location("_refs", Path(__file__).with_name("_refs.py"))
refs = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(refs)

pytestmark = pytest.mark.reference

LIB = feasibly.default_library()

# entries with several intervals and non-zero a1/a2 terms (checked below), gas and condensed
IDS = ["CO2(g)", "H2O(g)", "CH4(g)", "Al2O3(cr,alpha)", "Fe(cr,alpha)", "TiCl4(g)", "Mn(cr,alpha)"]


def _cantera(model: Nasa9, elements):
    import cantera as ct

    s = ct.Species("x", {k: float(v) for k, v in elements.items()})
    flat = [len(model.breaks) - 1]
    for i in range(len(model.breaks) - 1):
        flat += [model.breaks[i], model.breaks[i + 1], *model.coeffs[i]]
    s.thermo = ct.Nasa9PolyMultiTempRegion(model.breaks[0], model.breaks[-1], 1e5, flat)
    return s.thermo


def _off_break_temperatures(model: Nasa9) -> np.ndarray:
    lo, hi = max(model.breaks[0], 298.15), model.breaks[-1]
    T = np.linspace(lo, hi, 37)[1:-1]
    return np.array([t for t in T if min(abs(t - b) for b in model.breaks) > 1.0])


@pytest.mark.parametrize("sid", IDS)
def test_nasa9_matches_cantera(sid):
    sp = LIB[sid]
    m = sp.cp_model
    assert isinstance(m, Nasa9)
    assert np.any(m.coeffs[:, :2] != 0.0), "entry has no T^-2 / T^-1 terms: pick another"
    th = _cantera(m, sp.elements)
    T = _off_break_temperatures(m)
    cp_ct = np.array([th.cp(t) for t in T]) / 1000.0  # J/kmol/K -> J/mol/K
    h_ct = np.array([th.h(t) for t in T]) / 1000.0
    s_ct = np.array([th.s(t) for t in T]) / 1000.0
    h0, s0 = th.h(298.15) / 1000.0, th.s(298.15) / 1000.0
    # Cantera's R (8314.462618... J/kmol/K) is the kernel's R: same constant, CODATA 2018
    np.testing.assert_allclose(m.cp(T), cp_ct, rtol=1e-9)
    np.testing.assert_allclose(m.h_inc(T), h_ct - h0, rtol=1e-9, atol=1e-6)
    np.testing.assert_allclose(m.s_inc(T), s_ct - s0, rtol=1e-9, atol=1e-9)


JANAF = {"CO2(g)": "C-095", "H2O(g)": "H-064", "N2(g)": "N-023", "Al2O3(cr,alpha)": "Al-096"}


@pytest.mark.parametrize("sid", sorted(JANAF))
@pytest.mark.parametrize("T", [500.0, 1000.0, 1500.0])
def test_nasa9_entry_vs_janaf(sid, T):
    sp = LIB[sid]
    assert isinstance(sp.cp_model, Nasa9)
    row = refs.janaf_rows(JANAF[sid])[T]
    assert abs(float(sp.cp(T)) - row["Cp"]) <= 0.005 * row["Cp"]
    assert abs(float(sp.entropy(T)) - row["S"]) <= 0.3
    assert abs(float(sp.enthalpy(T)) - sp.dHf.value - row["H-H298"]) <= 300.0
