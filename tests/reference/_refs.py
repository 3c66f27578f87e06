"""Shared helpers for the outside-reference tests (loaded by path; not a test module).

Reads the outside references directly from the packages that carry them:

- NIST-JANAF Thermochemical Tables, 4th ed. (M.W. Chase, J. Phys. Chem. Ref. Data Monograph 9,
  1998), via the ``janaf`` package (``janaf.Table(index).df``);
- ATcT 1.112 (Ruscic et al.), via ``chemicals/Reactions/ATcT 1.112 (g|l).tsv``;
- Cantera's species thermo (``cantera.Species`` with NASA7 / NASA9 thermo).

Nothing here uses feasibly's own results as a reference.
"""

from __future__ import annotations

import csv
import importlib.resources as ir
import json
import math
from functools import cache
from pathlib import Path

import numpy as np

#: Repository checkout root (tests/reference/_refs.py → parents[2]).
ROOT = Path(__file__).resolve().parents[2]
SOURCE_GAPS = ROOT / "data" / "source-gaps.json"

# CODATA 2018 exact molar gas constant (J/(mol K)), from memory of the SI definition
# (N_A·k = 6.02214076e23 × 1.380649e-23).
R = 6.02214076e23 * 1.380649e-23


@cache
def janaf_rows(index: str) -> dict[float, dict[str, float | None]]:
    """JANAF table ``index`` as T → row (SI: J/mol, J/(mol K)); temperatures that appear twice
    (a phase transition row pair) are dropped, since such a T has no single value."""
    import janaf

    df = janaf.Table(index).df
    rows: dict[float, dict[str, float | None]] = {}
    dup: set[float] = set()
    for r in df.iter_rows(named=True):
        if r["T(K)"] is None:  # a few tables carry a blank row; it has no temperature
            continue
        T = float(r["T(K)"])
        if T in rows:
            dup.add(T)

        def kj(x: float | None) -> float | None:
            return None if x is None or not math.isfinite(x) else 1000.0 * x

        rows[T] = {
            "Cp": r["Cp"],
            "S": r["S"],
            "H-H298": kj(r["H-H(Tr)"]),
            "dfH": kj(r["delta-f H"]),
            "dfG": kj(r["delta-f G"]),
            "logKf": r["log Kf"],
        }
    for T in dup:
        rows.pop(T)
    return rows


def janaf_title(index: str) -> str:
    import janaf

    t = janaf.Table(index)
    return f"{t.name} {t.formula}"


def janaf_dfG_interp(index: str, T: float) -> float:
    """ΔfG° (J/mol) linearly interpolated between the table's rows (100 K spacing above 300 K;
    ΔfG° is nearly linear in T: curvature −ΔfCp/T gives < ~20 J/mol interpolation error)."""
    rows = janaf_rows(index)
    Ts = np.array(sorted(t for t, r in rows.items() if r["dfG"] is not None))
    G = np.array([rows[t]["dfG"] for t in Ts])
    if not Ts[0] <= T <= Ts[-1]:
        raise ValueError(f"{T} K outside JANAF {index}")
    return float(np.interp(T, Ts, G))


@cache
def source_gaps() -> dict:
    """``data/source-gaps.json`` (written by the data build, ``data/build_species_library/``)."""
    return json.loads(SOURCE_GAPS.read_text("utf-8"))


def documented_janaf_gap(lib_id: str, janaf_index: str, lib_source: str) -> float | None:
    """Documented ΔfH°(298.15) difference (JANAF − library's source), J/mol, or None."""
    entry = source_gaps().get("species", {}).get(lib_id)
    if not entry:
        return None
    vals = entry["values_J_per_mol"]
    jk = f"janaf-4 {janaf_index}"
    if jk in vals and lib_source in vals:
        return float(vals[jk] - vals[lib_source])
    return None


def atct_rows(phase: str) -> list[dict[str, str]]:
    """Rows of ATcT 1.112 (g) or (l) as carried by the ``chemicals`` package."""
    path = Path(str(ir.files("chemicals").joinpath("Reactions", f"ATcT 1.112 ({phase}).tsv")))
    with path.open(encoding="utf-8") as fh:
        return list(csv.DictReader(fh, delimiter="\t"))


# ---------------------------------------------------------------------------------------------
# CRC/NBS 298.15 K rows (chemicals) and the checks that a row is the entry's compound
# ---------------------------------------------------------------------------------------------


@cache
def crc_rows() -> dict[str, dict[str, str]]:
    """The CRC Handbook table "Standard Thermodynamic Properties of Chemical Substances" (NBS
    values) as carried by ``chemicals``, by CAS."""
    path = ir.files("chemicals").joinpath(
        "Heat Capacity", "CRC Standard Thermodynamic Properties of Chemical Substances.tsv"
    )
    with open(str(path), encoding="utf-8", newline="") as f:
        return {r["CAS"]: r for r in csv.DictReader(f, delimiter="\t")}


@cache
def same_substance(cas: str, elements_items: tuple) -> bool:
    """CRC rows are keyed by CAS only: compare only where chemicals' identifier database gives
    that CAS the entry's composition (a shared CAS would compare unlike substances)."""
    from chemicals.elements import simple_formula_parser
    from chemicals.identifiers import search_chemical

    try:
        comp = simple_formula_parser(search_chemical(cas).formula)
    except Exception:  # an unknown CAS or formula: no comparison
        return False
    els = dict(elements_items)
    return set(comp) == set(els) and all(abs(float(comp[k]) - float(els[k])) < 1e-9 for k in comp)


def element_entropies(species: list[dict]) -> dict[str, float]:
    """S° per atom of each element's reference state among library entries (J/(mol K))."""
    return {
        e["reference_state_of"]: e["S_298"]["value"] / sum(e["elements"].values())
        for e in species
        if e.get("reference_state_of")
    }


def crc_row_fits(
    elements: dict[str, float], row: dict[str, str], letter: str, element_s: dict[str, float]
) -> bool:
    """Whether a CRC row's own ΔfG° = ΔfH° − T(S° − ΣS°(elements)) holds for the composition
    within twice the combined u of 4 kJ/mol and T × 2 J/(mol K), as the data build checks it (a
    wrong CAS in the identifier database pairs TiO(cr) with Ti3O5's row, −2459 kJ/mol). A row
    without the three values, or with an element lacking a reference state, is not judged."""
    cells = [row.get(f"{k}{letter}", "").strip() for k in ("Hf", "S0", "Gf")]
    if not all(cells) or any(k not in element_s for k in elements):
        return True
    h, s, g = (float(c) for c in cells)
    ds = s - sum(element_s[k] * n for k, n in elements.items())
    return abs(g - (h - 298.15 * ds)) <= 2 * math.hypot(4000.0, 298.15 * 2.0)


# ---------------------------------------------------------------------------------------------
# Cantera species from a library entry's NASA-7 coefficients
# ---------------------------------------------------------------------------------------------


def cantera_species(sp):
    """A ``cantera.Species`` with the entry's own polynomial, a6/a7 shifted so that
    H(298.15) = ΔfH° and S(298.15) = S° (the library takes only increments from the polynomial).

    One or two intervals → NASA7 (``NasaPoly2``); more → the same polynomials written as NASA9
    (Cp/R = a3 + a4 T + … with a1 = a2 = 0, b1 = a6, b2 = a7), which Cantera evaluates per region.
    """
    import cantera as ct

    m = sp.cp_model
    breaks = list(m.breaks)
    coeffs = np.array(m.coeffs, dtype=float).copy()
    if coeffs.shape[1] == 9:
        return _cantera_species_nasa9(sp, breaks, coeffs)
    # the polynomial's own H and S at 298.15 K, in the interval holding 298.15 K (the first one
    # when 298.15 K lies below the range): NASA TP-2002-211556 eqs. 2-3
    k = 0
    for i in range(len(breaks) - 1):
        if 298.15 > breaks[i + 1]:
            k = i + 1
    a = coeffs[k]
    t = 298.15
    h_rt = a[0] + a[1] * t / 2 + a[2] * t**2 / 3 + a[3] * t**3 / 4 + a[4] * t**4 / 5 + a[5] / t
    s_r = a[0] * math.log(t) + a[1] * t + a[2] * t**2 / 2 + a[3] * t**3 / 3 + a[4] * t**4 / 4 + a[6]
    Rc = ct.gas_constant / 1000.0  # J/(mol K), Cantera's own constant
    coeffs[:, 5] += (sp.dHf.value - Rc * t * h_rt) / Rc
    coeffs[:, 6] += (sp.S298.value - Rc * s_r) / Rc
    comp = {el: float(n) for el, n in sp.elements.items()}
    s = ct.Species(sp.id, comp)
    if len(breaks) == 2:
        s.thermo = ct.NasaPoly2(breaks[0], breaks[1], 1e5, [breaks[1], *coeffs[0], *coeffs[0]])
    elif len(breaks) == 3:
        s.thermo = ct.NasaPoly2(breaks[0], breaks[2], 1e5, [breaks[1], *coeffs[1], *coeffs[0]])
    else:
        flat = [len(breaks) - 1]
        for i in range(len(breaks) - 1):
            c = coeffs[i]
            flat += [breaks[i], breaks[i + 1], 0.0, 0.0, *c[:5], c[5], c[6]]
        s.thermo = ct.Nasa9PolyMultiTempRegion(breaks[0], breaks[-1], 1e5, flat)
    return s


def _nasa9_h_s(a, t: float) -> tuple[float, float]:
    """H/RT and S/R of one NASA-9 interval (NASA TP-2002-211556, eqs. 2-3)."""
    h_rt = (
        -a[0] / t**2 + a[1] * math.log(t) / t + a[2] + a[3] * t / 2 + a[4] * t**2 / 3
        + a[5] * t**3 / 4 + a[6] * t**4 / 5 + a[7] / t
    )  # fmt: skip
    s_r = (
        -a[0] / (2 * t**2) - a[1] / t + a[2] * math.log(t) + a[3] * t + a[4] * t**2 / 2
        + a[5] * t**3 / 3 + a[6] * t**4 / 4 + a[8]
    )  # fmt: skip
    return h_rt, s_r


def _cantera_species_nasa9(sp, breaks, coeffs):
    """NASA-9 entries: Cantera's ``Nasa9PolyMultiTempRegion`` with b1, b2 shifted as above."""
    import cantera as ct

    k = 0
    for i in range(len(breaks) - 1):
        if 298.15 > breaks[i + 1]:
            k = i + 1
    t = 298.15
    h_rt, s_r = _nasa9_h_s(coeffs[k], t)
    Rc = ct.gas_constant / 1000.0
    coeffs[:, 7] += (sp.dHf.value - Rc * t * h_rt) / Rc
    coeffs[:, 8] += (sp.S298.value - Rc * s_r) / Rc
    s = ct.Species(sp.id, {el: float(n) for el, n in sp.elements.items()})
    flat = [len(breaks) - 1]
    for i in range(len(breaks) - 1):
        flat += [breaks[i], breaks[i + 1], *coeffs[i]]
    s.thermo = ct.Nasa9PolyMultiTempRegion(breaks[0], breaks[-1], 1e5, flat)
    return s


def cantera_g(species, T: float) -> float:
    """G°(T) = H − T S of a cantera species, J/mol (Cantera works in J/kmol)."""
    return (species.thermo.h(T) - T * species.thermo.s(T)) / 1000.0
