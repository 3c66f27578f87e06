"""CAS numbers and names of entries the curated tables do not give them for.

CAS comes from the ATcT table (name match, composition checked), else
``chemicals.identifiers.search_chemical`` (composition checked; it may also supply a name). A hit
whose own name carries another formula in parentheses is rejected: the identifier database files
"titanium oxide (Ti3O5)" under TiO's composition, "nickel sulfide (Ni3S4)" under NiS and "lead
oxide (Pb2O3)" under PbO, and such a CAS and name would lead a query for Ti3O5 to TiO. Ions and the
electron are left alone.
"""

from __future__ import annotations

import re
from typing import Any

from chemicals.elements import simple_formula_parser
from chemicals.identifiers import search_chemical

from .atct import Row, composition
from .entries import Entry
from .formulas import same_comp

_FORMULA_IN_NAME = re.compile(r"\(([A-Z][a-z]?\d*(?:[A-Z][a-z]?\d*)+)\)")


def names_other_formula(name: str, elements: Any) -> bool:
    """Whether ``name`` carries, in parentheses, a formula of other proportions than
    ``elements`` (oxidation states such as "(II)" are not formulas)."""
    for token in _FORMULA_IN_NAME.findall(name or ""):
        if set(token) <= set("IVX"):
            continue
        try:
            comp = simple_formula_parser(token)
        except Exception:  # not a formula after all
            continue
        if set(comp) != set(elements):
            return True
        ratios = [float(comp[k]) / float(elements[k]) for k in comp]
        if max(ratios) - min(ratios) > 1e-9:
            return True
    return False


def assign_identifiers(entries: list[Entry], atct_g: list[Row], atct_l: list[Row]) -> None:
    """Set ``cas`` (and a name where none is curated) on neutral entries that lack one."""
    atct_by_name: dict[str, Row] = {}
    for r in atct_g + atct_l:
        atct_by_name.setdefault(r["Chemical"].strip().lower(), r)
    cache: dict[str, Any] = {}

    def lookup(q: str) -> Any:
        if q not in cache:
            try:
                cache[q] = search_chemical(q)
            except Exception:  # chemicals raises ValueError for unknown identifiers
                cache[q] = None
        return cache[q]

    for e in entries:
        if e["cas"] or e["charge"] or not e["elements"]:
            continue
        cas = None
        for n in e["names"]:
            hit = atct_by_name.get(n.lower())
            if hit and same_comp(composition(hit), e["elements"]):
                cas, why = hit["CAS"], f"CAS from ATcT table entry '{hit['Chemical']}' (name match)"
                break
        if cas is None:
            for q in e["names"][:2] or ([e["formula"]] if e["phase"] != "g" else []):
                m = lookup(q)
                if (
                    m is not None
                    and same_comp(simple_formula_parser(m.formula), e["elements"])
                    and not names_other_formula(m.common_name, e["elements"])
                    and not names_other_formula(getattr(m, "iupac_name", ""), e["elements"])
                ):
                    cas, why = m.CASs, f"CAS from chemicals identifier DB lookup of '{q}'"
                    if not e["names"] and m.common_name:
                        e["names"] = [m.common_name]
                    break
        if cas:
            e["cas"] = cas
            e["notes"].append(why)
