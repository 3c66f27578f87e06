"""Active Thermochemical Tables 1.112 (carried by chemicals): reading, and ΔfH° from them.

ATcT ΔfH°(298.15) replaces the polynomial's own value for neutral gas and liquid entries matched
by CAS (u = stated 95 % limit / 1.96 by the kernel's coverage rule); for unnamed neutral gases a
unique-composition match agreeing within 4 kJ/mol is accepted. When ATcT and the polynomial
differ by more than the disputed-dHf threshold, the polynomial is kept with a widened,
rectangular uncertainty. Reference states keep their exact 0.
"""

from __future__ import annotations

import re
from typing import Any

from chemicals.elements import nested_formula_parser

from .entries import Entry
from .errors import need
from .formulas import hill
from .policies import POLICIES, value_block
from .sources import fnum, pkg_file, read_tsv

Row = dict[str, Any]

# A unique-composition ATcT match for an unnamed gas is accepted within 4 kJ/mol: below typical
# isomer differences (common practice, no source).
COMPOSITION_MATCH_J_PER_MOL = 4000.0


def read_atct() -> tuple[list[Row], list[Row]]:
    """Rows of the ATcT gas and liquid tables."""
    atct_g = read_tsv(
        pkg_file("chemicals", "Reactions", "ATcT 1.112 (g).tsv"),
        ["CAS", "Chemical", "Formula", "Hfg", "uncertainty"],
    )
    atct_l = read_tsv(
        pkg_file("chemicals", "Reactions", "ATcT 1.112 (l).tsv"),
        ["CAS", "Chemical", "Formula", "Hfl", "uncertainty"],
    )
    return atct_g, atct_l


def composition(r: Row) -> dict[str, Any]:
    """Elements of an ATcT row's formula; ``{"_ion": 1}`` for ions, ``{"_unparsed": 1}``."""
    f = r["Formula"].rsplit(" (", 1)[0]
    if re.search(r"[\]+-]", f.replace("(", "").replace(")", "")) and (
        "+" in f or "]-" in f or f.endswith("-")
    ):
        return {"_ion": 1}
    try:
        return nested_formula_parser(f)
    except Exception:
        return {"_unparsed": 1}


def is_ion(r: Row) -> bool:
    """Whether an ATcT row is an ion (ATcT ions are not mixed with NASA's convention)."""
    f = r["Formula"].rsplit(" (", 1)[0]
    return "+" in f or f.endswith("-") or "]-" in f


def apply_atct(
    entries: list[Entry], atct_g: list[Row], atct_l: list[Row], gaps: dict[str, dict[str, float]]
) -> None:
    """Take ATcT ΔfH° where it matches (see the module docstring); every ATcT value seen goes to
    ``gaps`` (entry id -> {"atct-1.112": value}) for source-gaps.json."""
    dispute_gap = POLICIES["disputed-dHf"].gap_threshold_J_per_mol
    need(dispute_gap is not None, "policy disputed-dHf gives no gap_threshold_J_per_mol")
    assert dispute_gap is not None
    for ph, rows in (("g", atct_g), ("l", atct_l)):
        by_cas: dict[str, list[Row]] = {}
        by_comp: dict[str, list[Row]] = {}
        for row in rows:
            if not is_ion(row):
                by_cas.setdefault(row["CAS"], []).append(row)
                by_comp.setdefault(hill(composition(row)), []).append(row)
        phase_entries = [
            e for e in entries if e["phase"] == ph and not e["charge"] and e["elements"]
        ]
        comp_count: dict[str, int] = {}
        for e in phase_entries:
            comp_count[hill(e["elements"])] = comp_count.get(hill(e["elements"]), 0) + 1
        for e in phase_entries:
            r: Row | None = None
            if e["cas"] and len(by_cas.get(e["cas"], [])) == 1:
                r = by_cas[e["cas"]][0]
            elif (
                not e["cas"]
                and comp_count[hill(e["elements"])] == 1
                and len(by_comp.get(hill(e["elements"]), [])) == 1
            ):
                cand = by_comp[hill(e["elements"])][0]
                hv = fnum(cand[list(cand)[4]])
                if (
                    hv is not None
                    and abs(hv - e["dHf_298"]["value"]) <= COMPOSITION_MATCH_J_PER_MOL
                ):
                    r = cand
                    e["cas"] = cand["CAS"]
                    if not e["names"]:
                        e["names"] = [cand["Chemical"].strip()]
                    e["notes"].append(
                        f"CAS and name from ATcT entry '{cand['Chemical']}' (unique composition, "
                        f"dHf agreement within {COMPOSITION_MATCH_J_PER_MOL / 1000:g} kJ/mol)"
                    )
            if r is None:
                continue
            hcol = "Hfg" if ph == "g" else "Hfl"
            hv, unc = fnum(r[hcol]), fnum(r["uncertainty"])
            need(hv is not None and unc is not None, f"ATcT row {r['CAS']} incomplete")
            assert hv is not None and unc is not None
            old = e["dHf_298"]
            label = f"{r['CAS']} {r['Formula'].strip()}"
            gaps.setdefault(e["id"], {})["atct-1.112"] = hv
            e["_atct_u"] = unc / 1.96  # ATcT states 95 % limits (see the sources block)
            if e["reference_state_of"]:
                continue
            gap = hv - old["value"]
            if abs(gap) > dispute_gap:
                e["dHf_298"] = value_block(
                    old["value"],
                    abs(gap),
                    "half-width-rectangular",
                    old["source"],
                    old["entry"],
                    "policy:disputed-dHf",
                    True,
                )
                e["notes"].append(
                    f"ATcT 1.112 ({label}) gives {hv:.0f} J/mol, {gap:+.0f} J/mol from the "
                    f"polynomial; gap exceeds {dispute_gap / 1000:g} kJ/mol, polynomial value "
                    "kept with widened "
                    "uncertainty (policy disputed-dHf) pending review"
                )
                continue
            e["dHf_298"] = value_block(
                hv, unc, "expanded-95", "atct-1.112", label, "atct-1.112", False
            )
            e["dHf_298"]["replaced"] = {
                "value": old["value"],
                "source": old["source"],
                "entry": old["entry"],
                "reason": "ATcT 1.112 (thermochemical network) is better supported than "
                "the polynomial's own H(298.15)",
            }
