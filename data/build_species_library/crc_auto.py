"""Constant-Cp entries from every complete row of the CRC 298.15 K table (carried by chemicals).

A row's phase (solid, liquid, gas) becomes an entry when the table gives ΔfH°, S° and Cp° for it,
no entry of the same composition and phase exists already (thermo.inp and the curated CRC picks
come first), and its formula can be written unambiguously:

* ``crc_formulas.toml`` gives the formula (and names, form) for a CAS: used first;
* else an existing entry with the same CAS gives its formula (so phases of one compound pair up);
* else, for a species without C–H bonds in its formula, the formula is written with the elements
  in order of rising Pauling electronegativity (chemicals' periodic table), e.g. CCaO3 -> CaCO3,
  CHKO3 -> KHCO3, except hydrides of C, Si, Ge, N, P, As, Sb, B (written with H last: SiH4, NH3);
  hydrates and ammonium salts need a curated formula (the ordering would mangle them);
* else (organics) the molecular formula in Hill order, only when no other compound of that
  composition is in the CRC table or the library (isomers need a curated formula).

The Cp° is used as a constant over the policy range (``cp-crc-constant``), cut at the melting
point (solids) and at the melting and boiling points (liquids) where chemicals tabulates them.
A row whose phase would not exist at 298.15 K in that range is left out.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from chemicals.elements import periodic_table, simple_formula_parser
from chemicals.identifiers import search_chemical
from chemicals.phase_change import Tb, Tm

from ._kernel import T_REF, parse_formula
from .crc import CRC_FILE
from .entries import Entry, base_entry
from .errors import need
from .formulas import hill
from .policies import POLICIES, cp_u_rel, cp_uncertainty, policy_block
from .sources import fnum, pkg_file, read_tsv
from .tables import crc_formulas

PHASES = (("s", "cr"), ("l", "l"), ("g", "g"))
#: Hydride formers written with H last (common practice, no source): CH4, SiH4, NH3, PH3, B2H6.
H_LAST = {"C", "Si", "Ge", "Sn", "Pb", "N", "P", "As", "Sb", "Bi", "B"}
NOTE = (
    "only 298.15 K data available: constant Cp(298.15) with a narrow range and a large "
    "assumed Cp uncertainty (policy cp-crc-constant)"
)


def _safe(f: Any, cas: str) -> float | None:
    try:
        v = f(cas)
    except Exception:  # chemicals raises for unknown CAS; no value then
        return None
    return float(v) if v is not None else None


def _lookup_formula(cas: str) -> str | None:
    try:
        return str(search_chemical(cas).formula)
    except Exception:  # not in chemicals' identifier database
        return None


def written_formula(elements: Mapping[str, float]) -> str:
    """Elements by rising electronegativity (H last for the hydrides of ``H_LAST``)."""
    if set(elements) - {"H"} and len(elements) == 2 and "H" in elements:
        (other,) = set(elements) - {"H"}
        if other in H_LAST:
            keys = [other, "H"]
            return "".join(k + ("" if elements[k] == 1 else f"{elements[k]:g}") for k in keys)
    keys = sorted(elements, key=lambda k: (periodic_table[k].elneg or 0.0, k))
    return "".join(k + ("" if elements[k] == 1 else f"{elements[k]:g}") for k in keys)


def _form(name: str) -> str | None:
    """``"Calcium carbonate (calcite)"`` -> ``"calcite"``; ``"α-quartz"`` -> ``"alpha-quartz"``."""
    if not name.endswith(")") or "(" not in name:
        return None
    inner = name[name.rindex("(") + 1 : -1]
    for g, w in (("α", "alpha"), ("β", "beta"), ("γ", "gamma"), ("δ", "delta")):
        inner = inner.replace(g, w)
    inner = inner.replace(" ", "-")
    ok = inner and inner[0].isalnum() and all(c.isalnum() or c in "-_" for c in inner)
    # Oxidation states "(II)", "(IV)" and bracketed formulas are part of the name, not a form.
    if not ok or set(inner) <= set("IVX") or any(c.isdigit() for c in inner):
        return None
    return inner


def build_crc_auto(
    els: Mapping[str, Any], existing: list[Entry], skipped: list[str]
) -> list[Entry]:
    """Entries for the complete CRC rows not yet in ``existing`` (see the module docstring)."""
    cols = ["CAS", "Chemical"] + [f"{k}{p}" for p, _ in PHASES for k in ("Hf", "S0", "Cp")]
    rows = read_tsv(pkg_file("chemicals", *CRC_FILE), cols)
    curated = crc_formulas()
    t_range = POLICIES["cp-crc-constant"].T_range_K
    need(t_range is not None, "policy cp-crc-constant gives no T_range_K")
    assert t_range is not None
    t_low, t_high = t_range

    by_cas: dict[str, Entry] = {}
    comp_phase: set[tuple[Any, str]] = set()
    comp_formula: dict[Any, set[str]] = {}

    def key(elements: Mapping[str, float]) -> Any:
        return tuple(sorted((k, float(v)) for k, v in elements.items()))

    for e in existing:
        if e["cas"]:
            by_cas.setdefault(e["cas"], e)
        if not e["charge"]:
            comp_phase.add((key(e["elements"]), e["phase"]))
            comp_formula.setdefault(key(e["elements"]), set()).add(e["formula"])
    # Compositions of every CRC row with a formula: isomers among them need curation.
    row_comp: dict[str, dict[str, int]] = {}
    crc_comp_count: dict[Any, set[str]] = {}
    for r in rows:
        f = _lookup_formula(r["CAS"])
        if f is None:
            continue
        try:
            el = dict(sorted(simple_formula_parser(f).items()))
        except Exception:  # a formula chemicals cannot parse: left out below
            continue
        row_comp[r["CAS"]] = el
        crc_comp_count.setdefault(key(el), set()).add(r["CAS"])

    out: list[Entry] = []
    ids = {e["id"] for e in existing}
    for r in rows:
        cas, cname = r["CAS"], r["Chemical"].strip()
        for letter, phase in PHASES:
            hf, s0, cp = (fnum(r[f"{k}{letter}"]) for k in ("Hf", "S0", "Cp"))
            if hf is None or s0 is None or cp is None:
                continue
            why = None
            cur = curated.get(cas)
            el = row_comp.get(cas)
            if cur is not None:
                # a curated formula says what the compound is: its composition is the formula's
                # (chemicals' identifier database cannot parse some, e.g. La2O3; the row's own
                # ΔfG° check in crosschecks.py verifies it against the row's values)
                own = {k: float(v) for k, v in parse_formula(cur.formula).elements.items()}
                need(
                    el is None or key(el) == key(own),
                    f"crc_formulas.toml [{cas}]: {cur.formula} is not the composition chemicals "
                    f"gives ({el})",
                )
                el = dict(sorted(own.items()))
            if el is None or any(k not in els for k in el):
                skipped.append(f"CRC {cas} {cname} ({phase}): no parseable formula in chemicals")
                continue
            ck = key(el)
            if (ck, phase) in comp_phase and (
                cur is None or cur.formula in comp_formula.get(ck, set())
            ):
                # a polynomial source or an earlier row has this composition and phase (a
                # curated formula names another isomer, which is built)
                continue
            form = None
            names: list[str] = [cname.lower() if cname[:1].isupper() else cname]
            origin = "chemicals"
            if cur is not None:
                origin = "curated"
                formula, form = cur.formula, cur.form
                names = list(cur.names) or names
            elif cas in by_cas and not by_cas[cas].get("_crc_auto"):
                # another phase of the compound from another source (composition checked there)
                origin = "existing"
                formula = by_cas[cas]["formula"]
                names = list(by_cas[cas]["names"]) or names
            elif "hydrate" in cname.lower() or "ammonium" in cname.lower():
                why = "hydrate or ammonium salt without a curated formula"
            elif "C" in el and "H" in el:
                if len(crc_comp_count.get(ck, ())) > 1 or ck in comp_formula:
                    why = "isomer of another compound in the sources, no curated formula"
                else:
                    formula = hill(el)
            else:
                formula = written_formula(el)
                form = _form(cname)
                if formula in {f for fs in comp_formula.values() for f in fs} and (
                    comp_formula.get(ck) != {formula}
                ):
                    why = f"formula {formula} already names another composition"
            if why:
                skipped.append(f"CRC {cas} {cname} ({phase}): {why}")
                continue
            lo, hi = t_low, t_high
            tm, tb = _safe(Tm, cas), _safe(Tb, cas)
            if phase == "cr" and tm and tm < hi:
                hi = tm
            if phase == "l":
                if tm and tm > lo:
                    lo = tm
                if tb and tb < hi:
                    hi = tb
            if not (lo <= T_REF <= hi) or hi - lo < 1.0:
                skipped.append(
                    f"CRC {cas} {cname} ({phase}): 298.15 K outside its range "
                    f"[{lo:g}, {hi:g}] K (chemicals Tm/Tb)"
                )
                continue
            e = base_entry(formula, el, 0, phase, form, names, (lo, hi), els)
            if e["id"] in ids:
                skipped.append(f"CRC {cas} {cname} ({phase}): id {e['id']} taken")
                continue
            e["cas"] = cas
            lab = f"CRC table CAS {cas} '{cname}' ({phase})"
            e["dHf_298"] = policy_block(hf, "crc-dHf", "crc-298", lab)
            e["S_298"] = policy_block(s0, "crc-S", "crc-298", lab)
            e["cp"] = {
                "model": "constant",
                "cp_J_per_mol_K": cp,
                "u_rel": cp_u_rel("cp-crc-constant"),
                "source": "crc-298",
                "entry": lab,
                "uncertainty": cp_uncertainty("cp-crc-constant"),
            }
            e["notes"].append(NOTE)
            if (lo, hi) != (t_low, t_high):
                e["notes"].append(
                    f"T_range_K cut to [{lo:g}, {hi:g}] K at the melting/boiling point from "
                    "chemicals.phase_change (Tm, Tb)"
                )
            e["_crc_gf"] = fnum(r.get(f"Gf{letter}"))
            e["_crc_hf"] = hf
            # Only formulas taken from chemicals' identifier database for non-organic rows need
            # the ΔfG check (crosschecks.drop_unverified_crc): for salts it sometimes lists one
            # component (e.g. HoO for holmium oxide, BK for potassium borohydride).
            e["_crc_auto"] = origin == "chemicals" and not ("C" in el and "H" in el)
            ids.add(e["id"])
            comp_phase.add((ck, phase))
            comp_formula.setdefault(ck, set()).add(formula)
            by_cas.setdefault(cas, e)
            out.append(e)
    return out
