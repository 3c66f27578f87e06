"""G°/RT of many entries at many temperatures at once (``feasibly.library.gibbs_rt``, the
equilibrium solver's input) against Cantera's standard-state Gibbs energy of the same entries.

The Cantera species carry the library's own NASA-7 or NASA-9 coefficients with the integration
constants shifted to the library's ΔfH° and S° (tests/reference/_refs.py), so Cantera evaluates
the same thermochemistry with its own code; ``gibbs_rt`` forms G°/RT from nine functions of T
and one matrix product instead of entry by entry.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

import feasibly
from feasibly.library import R, gibbs_rt

ct = pytest.importorskip("cantera")

_spec = importlib.util.spec_from_file_location("_refs", Path(__file__).with_name("_refs.py"))
assert _spec is not None and _spec.loader is not None
_refs = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_refs)

pytestmark = pytest.mark.reference

GASES = "CH4(g) H2O(g) CO(g) CO2(g) H2(g) N2(g) NH3(g) C2H6(g) CH3OH(g) O2(g) NO(g) HCl(g)"


def test_gibbs_table_matches_cantera_for_common_gases() -> None:
    lib = feasibly.default_library()
    entries = [lib[token] for token in GASES.split()]
    # Off the 1000 K break: on it the library takes the lower interval (NASA's convention) and
    # Cantera the upper, which differ by ~4e-8 in G°/RT for these gases.
    T = np.linspace(300.5, 2990.5, 270)
    table = gibbs_rt(entries, T)
    gas = ct.Solution(thermo="ideal-gas", species=[_refs.cantera_species(sp) for sp in entries])
    for i, t in enumerate(T):
        # Cantera's standard state is at the current pressure: set it to our 1 bar
        gas.TP = t, 1e5
        want = gas.standard_gibbs_RT
        # measured: at most 2.1e-11 of |G°/RT| (Cantera's own arithmetic); 1e-9 leaves room
        np.testing.assert_allclose(table[i], want, rtol=1e-9, atol=1e-9)


def test_gibbs_table_is_each_entrys_own_gibbs_energy() -> None:
    # Every entry of the library over its own range: the nine-function form and the entry's own
    # H − TS agree to rounding. The two cancel the polynomial's terms in different orders; the
    # largest difference measured is 9.6e-11 of |G°/RT| (NaCN(cr,II), whose fit has large
    # coefficients), so 1e-9 is the bound (about 10 × the measured).
    lib = feasibly.default_library()
    entries = list(lib)
    assert len(entries) > 2000
    for sp in entries:
        lo, hi = sp.T_range
        T = np.linspace(lo, hi, 40)
        got = gibbs_rt([sp], T)[:, 0]
        want = sp.gibbs(T) / (R * T)
        assert np.all(np.abs(got - want) <= 1e-9 * np.maximum(np.abs(want), 1.0)), sp.id
