"""Comparisons of the library's values with independent compilations (for :mod:`.calibration`).

Independent values: NIST-JANAF tables (the ``janaf`` package, matched in :mod:`.janaf_tables`),
the CRC/NBS 298.15 K table and ATcT ΔfH° (both carried by ``chemicals``). A value is never compared
with the source it was taken from. For the Cp factor the increments h(T) and s(T) are compared with
the JANAF tables; for constant-Cp entries, a constant Cp(298.15) with the library's own condensed
polynomials (the error such a constant makes). Which values are compared: those whose uncertainty a
written policy sets (not the exact, transition-carried or already disputed ones).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from functools import cache
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

from ._kernel import T_REF
from .errors import need
from .formulas import same_comp
from .policies import policy_u

if TYPE_CHECKING:
    from .entries import Entry

#: Policies that are not calibrated: exact by definition, or set from a transition enthalpy,
#: or already a measured disagreement.
NOT_CALIBRATED = frozenset(
    {
        "reference-state",
        "transition-dHf",
        "transition-S",
        "hypothetical-dHf",
        "hypothetical-S",
        "disputed-dHf",
        "disputed-dHf-compilations",
        "disputed-S-compilations",
        "aq-nbs-digits",
        "cp-aq-constant",
    }
)
# Temperatures of the Cp comparison: JANAF rows from 400 K (below it the increments are so small
# that their relative difference is noise of the tables' rounding to 1 J/mol) up to 3000 K.
CP_T_MIN, CP_T_MAX = 400.0, 3000.0
# Temperatures at which a constant Cp(298.15) is compared with a polynomial: the span the CRC
# constant-Cp entries are given for (up to 500 K, policy cp-crc-constant T_range_K).
CONSTANT_T = (350.0, 400.0, 450.0, 500.0)
CRC_FILE = ("Heat Capacity", "CRC Standard Thermodynamic Properties of Chemical Substances.tsv")
_CRC_COLS = {"g": ("Hfg", "S0g"), "l": ("Hfl", "S0l"), "cr": ("Hfs", "S0s")}

#: Class -> (policy id, quantity, unit, text of the class).
CLASSES = {
    "dHf-gas-cas": (
        "cal-gas-dHf-cas",
        "dHf",
        "J/mol",
        "neutral gas dHf(298.15) of a substance with a CAS number",
    ),
    "dHf-gas-nocas": (
        "cal-gas-dHf-nocas",
        "dHf",
        "J/mol",
        "neutral gas dHf(298.15) of a species without a CAS number (radicals, high-temperature "
        "molecules)",
    ),
    "dHf-ion": ("cal-ion-dHf", "dHf", "J/mol", "gas-ion dHf(298.15)"),
    "dHf-condensed": ("cal-condensed-dHf", "dHf", "J/mol", "condensed dHf(298.15)"),
    "S-gas-cas": (
        "cal-gas-S-cas",
        "S",
        "J/(mol K)",
        "gas S(298.15) of a substance with a CAS number",
    ),
    "S-gas-nocas": (
        "cal-gas-S-nocas",
        "S",
        "J/(mol K)",
        "gas S(298.15) of a species without a CAS number (radicals, ions, high-temperature "
        "molecules)",
    ),
    "S-condensed": ("cal-condensed-S", "S", "1 (of S)", "condensed S(298.15)"),
    "cp-gas": ("cal-cp-gas", "cp", "1", "gas Cp factor"),
    "cp-condensed": ("cal-cp-condensed", "cp", "1", "condensed Cp factor"),
    "cp-constant": ("cal-cp-constant", "cp", "1", "constant-Cp(298.15) factor"),
}
#: Build bookkeeping key (removed before writing): the entry has a matched NIST-JANAF table.
JANAF_KEY = "_janaf_table"
#: Classes whose u is a fraction of the value: condensed S° differences between compilations grow
#: with S° (measured: the relative form needs a u of ~1 J/(mol K) at MgO's 27 J/(mol K) where an
#: absolute one needs 3 J/(mol K) for every solid).
RELATIVE = frozenset({"S-condensed"})


class Comparison(NamedTuple):
    """One library value against one independent value (``T_K`` for Cp increments)."""

    cls: str
    entry: str
    against: str
    T_K: float
    value: float
    other: float

    @property
    def gap(self) -> float:
        """Library minus independent, in the quantity's unit."""
        return self.value - self.other

    @property
    def diff(self) -> float:
        """The difference the class is calibrated on: relative to the independent increment for
        the Cp classes, relative to the library value for the relative classes, else ``gap``."""
        if self.cls.startswith("cp-"):
            return (self.value - self.other) / self.other
        if self.cls in RELATIVE:
            return (self.value - self.other) / abs(self.value)
        return self.gap


def janaf_table(index: str) -> dict[float, tuple[float, float, float | None]]:
    """JANAF table ``index``: T -> (S, H − H(298.15) in J/mol, ΔfH in J/mol or None). A
    temperature listed twice (the two sides of a transition) is dropped: it has no one value."""
    from .sources import pkg_file

    lines = pkg_file("janaf", "data", f"{index}.txt").read_text(encoding="utf-8").splitlines()
    need(lines[1].startswith("T(K)"), f"janaf {index}: header changed")
    rows: dict[float, tuple[float, float, float | None]] = {}
    twice: set[float] = set()
    for ln in lines[2:]:
        p = ln.split("\t")
        try:
            T, s, h = float(p[0]), float(p[2]), 1000.0 * float(p[4])
        except (ValueError, IndexError):
            continue
        try:
            dhf: float | None = 1000.0 * float(p[5])
        except (ValueError, IndexError):
            dhf = None
        if T in rows:
            twice.add(T)
        rows[T] = (s, h, dhf)
    for T in twice:
        rows.pop(T)
    return rows


def read_crc() -> dict[str, dict[str, Any]]:
    """CRC/NBS 298.15 K rows by CAS."""
    from .sources import pkg_file, read_tsv

    rows = read_tsv(pkg_file("chemicals", *CRC_FILE), ["CAS", "Hfs", "S0s", "Hfg", "S0g"])
    return {r["CAS"]: r for r in rows}


@cache
def _formula_of(cas: str) -> dict[str, float] | None:
    from chemicals.elements import simple_formula_parser
    from chemicals.identifiers import search_chemical

    try:
        return dict(simple_formula_parser(search_chemical(cas).formula))
    except Exception:  # chemicals raises for unknown CAS numbers and odd formulas
        return None


def same_substance(cas: str, elements: Mapping[str, float]) -> bool:
    """Whether chemicals' identifier database gives CAS ``cas`` the entry's composition: a CRC
    row is matched by CAS only, and a CAS shared by another substance would compare unlike
    things (measured: TiO(cr) against the CRC row of Ti3O5 under the same CAS)."""
    comp = _formula_of(cas)
    return comp is not None and same_comp(comp, elements)


#: Standard uncertainty of a CRC row's ΔfG° computed from its ΔfH° and S° (J/mol): the row's
#: ΔfH° and T·S° under the provisional crc policies (the element entropies' u is far smaller).
ROW_U = math.hypot(policy_u("crc-dHf"), T_REF * policy_u("crc-S"))
#: Coverage factor of the row check, as the cross-checks' (crosschecks.K_COVERAGE).
ROW_K = 2.0


def element_entropies(entries: Sequence[Entry]) -> dict[str, float]:
    """S° per atom of each element's reference state (O2(g) holds 2 atoms), J/(mol K)."""
    return {
        x["reference_state_of"]: x["S_298"]["value"] / sum(x["elements"].values())
        for x in entries
        if x["reference_state_of"]
    }


def crc_row_dfg(
    elements: Mapping[str, float], h: float, s: float, ref_s: Mapping[str, float]
) -> float | None:
    """ΔfG° = ΔfH° − T(S° − ΣS°(elements)) of a CRC row's ΔfH° and S° for the composition
    ``elements`` (J/mol), to compare with the row's own ΔfG°; None when an element has no
    reference state to take S° from."""
    if any(k not in ref_s for k in elements):
        return None
    ds = s - sum(ref_s[k] * n for k, n in elements.items())
    return h - T_REF * ds


def _row_fits(e: Entry, row: Mapping[str, Any], ref_s: Mapping[str, float]) -> bool:
    """Whether a CRC row's ΔfH°, S°, ΔfG° are consistent with the entry's composition: a CAS
    the identifier database gives the wrong compound pairs unrelated rows (measured: TiO(cr)
    against Ti3O5's −2459 kJ/mol). A row that cannot be checked is compared as its CAS says."""
    from .sources import fnum

    col = {"g": "g", "l": "l", "cr": "s"}[e["phase"]]
    h, s, g = (fnum(row.get(f"{k}{col}")) for k in ("Hf", "S0", "Gf"))
    if h is None or s is None or g is None:
        return True
    calc = crc_row_dfg(e["elements"], h, s, ref_s)
    return calc is None or abs(g - calc) <= ROW_K * ROW_U


def _policy(block: Mapping[str, Any]) -> str | None:
    """The policy that set a value block's uncertainty (None when a source stated it)."""
    unc = block.get("uncertainty", {})
    src = str(unc.get("source", ""))
    if not unc.get("assumed") or not src.startswith("policy:"):
        return None
    return src.removeprefix("policy:")


def governed(block: Mapping[str, Any]) -> bool:
    """Whether a value block's uncertainty is a calibrated class's (a policy, not a stated one)."""
    pid = _policy(block)
    return pid is not None and pid not in NOT_CALIBRATED


def value_class(e: Entry, quantity: str) -> str | None:
    """The calibration class of an entry's ΔfH° (``"dHf"``) or S° (``"S"``), or None."""
    if e["hypothetical_298"] or e["phase"] == "aq":
        return None
    if e["phase"] == "g":
        if quantity == "dHf" and e["charge"]:
            return "dHf-ion"
        # Gas values split by whether the species has a CAS number. Measured on the NASA 2002
        # values against NIST-JANAF (build of 2026-12): gases with one (isolable substances)
        # differ by 12.9 kJ/mol and 2.2 J/(mol K) at the 95th percentile, those without (radicals,
        # high-temperature molecules) by 61 kJ/mol and 13.6 J/(mol K); the split itself, not
        # these numbers, is the rule.
        return f"{quantity}-gas-{'cas' if e['cas'] else 'nocas'}"
    return f"{quantity}-condensed"


def cp_class(e: Entry) -> str | None:
    """The calibration class of an entry's Cp factor, or None."""
    if e["phase"] == "aq":
        return None
    if e["cp"]["model"] == "constant":
        return "cp-constant"
    return "cp-gas" if e["phase"] == "g" else "cp-condensed"


def collect(
    entries: Sequence[Entry],
    jmatch: Mapping[str, str],
    atct: Mapping[str, float],
    crc: Mapping[str, Mapping[str, Any]],
) -> list[Comparison]:
    """Every comparison of a policy-governed library value with an independent compilation.

    ``jmatch``: entry id -> JANAF table index; ``atct``: entry id -> ATcT ΔfH°; ``crc``: CRC rows
    by CAS (used only where the library has one entry of that CAS and phase at 298.15 K).
    """
    # imported here: the rule (calibration.py) and its tests need none of the source packages
    from .document import document_text, kernel_read, library_document
    from .entries import public
    from .sources import fnum

    lib = kernel_read(
        document_text(library_document(public(entries))), "<calibration>", shipped=False
    )
    for e in entries:
        if e["id"] in jmatch:
            e[JANAF_KEY] = jmatch[e["id"]]
    cas_count: dict[tuple[str, str], int] = {}
    for e in entries:
        if e["cas"] and not e["hypothetical_298"]:
            cas_count[(e["cas"], e["phase"])] = cas_count.get((e["cas"], e["phase"]), 0) + 1
    tables: dict[str, dict[float, tuple[float, float, float | None]]] = {}
    out: list[Comparison] = []
    # S° per atom of each element's reference state, for the CRC rows' own ΔfG° check
    ref_s = element_entropies(entries)
    for e in sorted(entries, key=lambda x: x["id"]):
        sid = e["id"]
        jt = None
        if sid in jmatch:
            idx = jmatch[sid]
            if idx not in tables:
                tables[idx] = janaf_table(idx)
            jt = tables[idx]
        crow = None
        if (
            e["cas"]
            and cas_count.get((e["cas"], e["phase"])) == 1
            and e["phase"] in _CRC_COLS
            and same_substance(e["cas"], e["elements"])
        ):
            crow = crc.get(e["cas"])
            if crow is not None and not _row_fits(e, crow, ref_s):
                crow = None
        for q, field in (("dHf", "dHf_298"), ("S", "S_298")):
            cls = value_class(e, q)
            block = e[field]
            if cls is None or not governed(block):
                continue
            others: list[tuple[str, float]] = []
            if jt is not None and T_REF in jt:
                s_j, _, h_j = jt[T_REF]
                x = h_j if q == "dHf" else s_j
                if x is not None:
                    others.append(("janaf-4", x))
            if q == "dHf" and sid in atct:
                others.append(("atct-1.112", atct[sid]))
            if crow is not None and block["source"] != "crc-298":
                x = fnum(crow[_CRC_COLS[e["phase"]][0 if q == "dHf" else 1]])
                if x is not None:
                    others.append(("crc-298", x))
            for against, x in others:
                if against != block["source"]:
                    out.append(Comparison(cls, sid, against, T_REF, block["value"], x))
        ccls = cp_class(e)
        if ccls is None or e["hypothetical_298"] or not governed(e["cp"]):
            continue
        sp = lib[sid]
        if ccls == "cp-constant":
            continue  # calibrated on the polynomial entries below, not on itself
        if jt is None:
            continue
        lo, hi = e["T_range_K"]
        for T in sorted(jt):
            if not (CP_T_MIN <= T <= min(hi, CP_T_MAX)) or T < lo:
                continue
            s_j, h_j, _ = jt[T]
            t = np.array([T])
            h_l = float(sp.cp_model.h_inc(t)[0])
            s_l = float(sp.cp_model.s_inc(t)[0])
            out.append(Comparison(ccls, sid, "janaf-4 h(T)", T, h_l, h_j))
            out.append(Comparison(ccls, sid, "janaf-4 s(T)", T, s_l, s_j - jt[T_REF][0]))
    # A constant Cp(298.15) against the polynomial it would replace: condensed entries whose own
    # range covers 298.15 to 500 K (model-form error of the constant-Cp entries).
    for e in sorted(entries, key=lambda x: x["id"]):
        if (
            e["phase"] not in ("cr", "l")
            or e["hypothetical_298"]
            or e["cp"]["model"] == "constant"
            or e["T_range_K"][1] < CONSTANT_T[-1]
        ):
            continue
        sp = lib[e["id"]]
        cp0 = float(sp.cp_model.cp(np.array([T_REF]))[0])
        for T in CONSTANT_T:
            t = np.array([T])
            h_p, s_p = float(sp.cp_model.h_inc(t)[0]), float(sp.cp_model.s_inc(t)[0])
            out.append(
                Comparison("cp-constant", e["id"], "own polynomial h(T)", T, cp0 * (T - T_REF), h_p)
            )
            out.append(
                Comparison(
                    "cp-constant", e["id"], "own polynomial s(T)", T, cp0 * math.log(T / T_REF), s_p
                )
            )
    return out
