"""Regression tests for the data defects of the former library, each against a named outside value.

Outside references, read at test time from the packages that carry them:

- CRC Handbook / NBS 298.15 K table ("CRC Standard Thermodynamic Properties of Chemical
  Substances.tsv" in chemicals 1.5.2), by CAS;
- NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), via the janaf package;
- tabulated melting points (``chemicals.phase_change.Tm``), critical temperatures
  (``chemicals.critical.Tc``) and element entropies (``chemicals.elements.periodic_table``).

Tolerance of a 298.15 K comparison: twice the combined standard uncertainty of the library
value and the CRC value, the CRC value's u being the one the library itself gives CRC-sourced
entries (the build's crc policies, read from a CRC-sourced entry). This is the build's
cross-check rule (data/build_species_library/crosschecks.py).
"""

from __future__ import annotations

import csv
import importlib.resources as ir
import importlib.util
import math
from functools import cache
from pathlib import Path

import pytest

import feasibly
from feasibly.errors import FeasiblyError, OutsideDataRange

_spec = importlib.util.spec_from_file_location("_refs", Path(__file__).with_name("_refs.py"))
refs = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(refs)

pytestmark = pytest.mark.reference

LIB = feasibly.default_library()


@cache
def crc_rows() -> dict[str, dict[str, str]]:
    """CRC/NBS 298.15 K rows by CAS (chemicals' copy of the CRC table)."""
    p = ir.files("chemicals").joinpath(
        "Heat Capacity", "CRC Standard Thermodynamic Properties of Chemical Substances.tsv"
    )
    with open(str(p), encoding="utf-8", newline="") as f:
        return {r["CAS"]: r for r in csv.DictReader(f, delimiter="\t")}


def crc(cas: str, col: str) -> float:
    return float(crc_rows()[cas][col])


def crc_u(quantity: str, value: float) -> float:
    """The standard uncertainty this library gives a condensed value no source states one for:
    the calibrated class u of data/uncertainty-calibration.csv (condensed S° is relative)."""
    import csv

    path = Path(__file__).resolve().parents[2] / "data" / "uncertainty-calibration.csv"
    with open(path, encoding="utf-8", newline="") as f:
        rows = {r["class"]: r for r in csv.DictReader(f) if r["against"] == "all"}
    if quantity == "dHf":
        return float(rows["dHf-condensed"]["chosen_u"])
    return float(rows["S-condensed"]["chosen_u"]) * abs(value)


def within(lib_value: float, lib_u: float, other: float, other_u: float) -> tuple[bool, str]:
    lim = 2 * math.hypot(lib_u, other_u)
    return abs(lib_value - other) <= lim, f"library {lib_value:g} vs {other:g} (limit {lim:g})"


# --- NiO ΔfH°: the former value −8.3 kJ/mol (published tables about −239.7) -----------------


def test_nio_cr_is_not_offered_with_a_wrong_enthalpy():
    # No redistributable source carried here has NiO(cr) (thermo.inp has only the gas; the CRC
    # table in chemicals has no NiO row; JANAF, a cross-check only, has no NiO table in the janaf
    # package). The library must then not offer it, and the screening must refuse.
    assert not [sp.id for sp in LIB.find("NiO") if sp.phase == "cr"]
    with pytest.raises(FeasiblyError):
        feasibly.assess("NiO(cr) + H2 -> Ni + H2O", T=800)


# --- KNO3: the former entry was 19 kJ/mol off the value its own record states ----------------


def test_kno3_formation_enthalpy_vs_crc_nbs():
    sp = LIB["KNO3(cr,alpha)"]
    ok, msg = within(sp.dHf.value, sp.dHf.u, crc("7757-79-1", "Hfs"), crc_u("dHf", 0.0))
    assert ok, msg


# --- NH4ClO4 S°: the former value 631 J/(mol K) ------------------------------------------


def test_nh4clo4_entropy_vs_crc_nbs():
    sp = LIB["NH4ClO4(cr,I)"]
    ok, msg = within(
        sp.S298.value, sp.S298.u, crc("7790-98-9", "S0s"), crc_u("S", crc("7790-98-9", "S0s"))
    )
    assert ok, msg


# --- solids valid far past their melting or decomposition point ------------------------------

TM_SLACK = 5.0  # K: rounding of tabulated melting points (the build's TM_SLACK_K)
SOLIDS = {  # formula: CAS (for chemicals' Tm)
    "CaSO4": "7778-18-9",
    "Fe3O4": "1317-61-9",
    "Pb3O4": "1314-41-6",
    "TiCl3": "7705-07-9",
    "K2O": "12136-45-7",
    "K2O2": "17014-71-0",
    "CuSO4": "7758-98-7",
}


@pytest.mark.parametrize("formula", sorted(SOLIDS))
def test_solid_range_ends_at_melting_or_a_next_phase(formula):
    from chemicals.phase_change import Tm

    tm = Tm(SOLIDS[formula])
    condensed = [sp for sp in LIB.by_formula(formula) if sp.phase != "g"]
    solids = [sp for sp in condensed if sp.phase == "cr"]
    assert solids, f"no solid {formula}"
    top = max(solids, key=lambda sp: sp.T_range[1])
    follows = [sp for sp in condensed if abs(sp.T_range[0] - top.T_range[1]) < 1e-6]
    # the highest solid ends where another condensed phase takes over, at the tabulated
    # melting/decomposition point (chemicals.phase_change.Tm), or ends at or below it
    assert top.T_range[1] <= tm + TM_SLACK or (follows and abs(top.T_range[1] - tm) <= 0.05 * tm), (
        f"{top.id} ends at {top.T_range[1]} K; Tm = {tm} K; next phase: {follows}"
    )


def test_ticl4_liquid_ends_at_its_critical_temperature():
    from chemicals.critical import Tc

    tc = Tc("7550-45-0")
    sp = LIB["TiCl4(l)"]
    assert sp.T_range[1] <= tc + 1e-6, f"TiCl4(l) to {sp.T_range[1]} K, Tc = {tc} K"


# --- metals to working temperatures -------------------------------------------------------

# NIST-JANAF reference-state tables (janaf 1.4.0): S°(T) and H°(T) − H°(298.15) of the element in
# its stable phase, against the library's stable phase at T. Tolerances: S 0.3 J/(mol K),
# H 0.3 kJ/mol (the species tolerances of test_species_vs_janaf.py).
JANAF_METALS = {"Mn": "Mn-001", "Co": "Co-001", "W": "W-001"}


def _stable(formula: str, T: float):
    cands = [sp for sp in LIB.by_formula(formula) if sp.phase != "g" and sp.covers(T)]
    assert cands, f"no condensed {formula} at {T} K"
    return min(cands, key=lambda sp: float(sp.gibbs(T)))


@pytest.mark.parametrize("el", sorted(JANAF_METALS))
@pytest.mark.parametrize("T", [1000.0, 1400.0])
def test_metal_vs_janaf_reference_table(el, T):
    row = refs.janaf_rows(JANAF_METALS[el])[T]
    sp = _stable(el, T)
    ref = LIB.find(el)
    ref_state = [x for x in ref if x.reference_state_of == el]
    assert ref_state, f"{el} has no reference state"
    s = float(sp.entropy(T))
    h = float(sp.enthalpy(T))  # on the ΔfH scale: H(T) − H(298.15 K) of the element
    assert abs(s - row["S"]) <= 0.3, f"{sp.id} S({T}) {s:.3f} vs JANAF {row['S']:.3f}"
    assert abs(h - row["H-H298"]) <= 300.0, f"{sp.id} H-H298 {h:.0f} vs JANAF {row['H-H298']:.0f}"


# Ag and Cd have no JANAF table in the janaf package: their S°(298.15) is compared with the
# element entropies chemicals tabulates, and their condensed data must reach working temperature
# (Ag to 1500 K through the liquid; Cd to 1000 K, below its boiling point 1040 K).
@pytest.mark.parametrize("el, T_work", [("Ag", 1500.0), ("Cd", 1000.0), ("Mn", 1500.0),
                                         ("Co", 1500.0), ("W", 1500.0)])  # fmt: skip
def test_metal_reaches_working_temperature(el, T_work):
    from chemicals.elements import periodic_table

    ref = [x for x in LIB.find(el) if x.reference_state_of == el]
    assert ref, f"{el} has no reference state"
    assert abs(ref[0].S298.value - periodic_table[el].S0) <= 2 * math.hypot(ref[0].S298.u, 0.1)
    assert _stable(el, T_work) is not None


@pytest.mark.parametrize("el", ["Au", "Pt"])
def test_gold_and_platinum_are_refused_beyond_their_data(el):
    # Only the CRC 298.15 K row is redistributable here: constant Cp to 500 K. Beyond that the
    # library must refuse rather than extrapolate.
    ref = next(x for x in LIB.find(el) if x.reference_state_of == el)
    assert ref.T_range[1] <= 500.0
    with pytest.raises(OutsideDataRange):
        ref.gibbs(1000.0)


def test_mno_carbothermic_reduction_vs_crc_nbs_and_refused_where_mno_data_end():
    # ΔrG°(298.15) = ΔfG°(CO, g) − ΔfG°(MnO, cr) from the CRC/NBS rows (the metal and graphite are
    # reference states). MnO(cr) itself is sourced only at 298.15 K (CRC row, constant Cp to
    # 500 K), so at 1600 K the screening must refuse and name MnO(cr).
    ref = crc("630-08-0", "Gfg") - crc("1344-43-0", "Gfs")
    r = feasibly.assess("MnO + C -> Mn + CO", T="298.15 K")
    got = float(r.standard.dG[0])
    lim = 2 * math.hypot(crc_u("dHf", 0.0), crc_u("dHf", 0.0))
    assert abs(got - ref) <= lim, f"ΔrG°(298.15) {got:.0f} vs CRC/NBS {ref:.0f} J/mol"
    with pytest.raises(OutsideDataRange, match="MnO"):
        feasibly.assess("MnO + C -> Mn + CO", T="1600 K")


# --- CaCO3 beyond 1200 K ---------------------------------------------------------------------


def test_calcite_beyond_1200_K_and_vs_crc_nbs():
    sp = LIB["CaCO3(cr,calcite)"]
    assert sp.T_range[1] > 1200.0
    ok, msg = within(sp.dHf.value, sp.dHf.u, crc("471-34-1", "Hfs"), crc_u("dHf", 0.0))
    assert ok, msg
    ok, msg = within(
        sp.S298.value, sp.S298.u, crc("471-34-1", "S0s"), crc_u("S", crc("471-34-1", "S0s"))
    )
    assert ok, msg


# --- tin: white tin is the reference state -------------------------------------------------


def test_white_tin_is_the_reference_state():
    from chemicals.elements import periodic_table

    ref = [x for x in LIB.find("Sn") if x.reference_state_of == "Sn"]
    assert len(ref) == 1 and ref[0].phase == "cr"
    sp = ref[0]
    assert sp.dHf.value == 0.0
    # chemicals' element table: S°(Sn) = 51.18 J/(mol K), the white-tin value (gray tin: 44.1 in
    # the CRC table); 0.1 J/(mol K) is the last digit of that table
    assert abs(sp.S298.value - periodic_table["Sn"].S0) <= 2 * math.hypot(sp.S298.u, 0.1)
    assert sp.T_range[0] <= 298.15 <= sp.T_range[1]
