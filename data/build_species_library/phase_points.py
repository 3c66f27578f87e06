"""Tabulated melting and boiling points (chemicals) as the entries' ``phase_points``.

The kernel says when the phase stable at a temperature is missing from the library (see
``feasibly.thermo.missing_phases``); it needs each substance's melting and boiling point, taken
here at build time so that chemicals is never needed at run time. Only tabulated values are
used, in this order of preference: the CRC Handbook tables (inorganic, organic), the reference
equations of state (HEOS), the NIST WebBook, CAS Common Chemistry, the Open Notebook melting
points, Yaws' compilation; estimation methods (e.g. Joback) are never used. The source of each
value is written with it.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from chemicals.phase_change import Tb, Tb_methods, Tm, Tm_methods

from .entries import Entry
from .sources import VERS

# Tabulated (not estimated) methods of chemicals.phase_change, most preferred first.
TABULATED = (
    "CRC_INORG",
    "CRC_ORG",
    "HEOS",
    "WEBBOOK",
    "COMMON_CHEMISTRY",
    "OPEN_NTBKM",
    "YAWS",
)


def _first(cas: str, methods: Callable[[str], list[str]], value: Callable[..., Any]) -> tuple:
    try:
        have = methods(cas)
    except Exception:  # chemicals raises for CAS numbers it does not know
        return None, None
    for m in TABULATED:
        if m in have:
            v = value(cas, method=m)
            if v is not None and v > 0:
                return round(float(v), 3), m
    return None, None


def _cas_by_formula(formula: str) -> str | None:
    """CAS of the compound chemicals' identifier database files under ``formula``, or None."""
    from chemicals.identifiers import pubchem_db

    try:
        found = pubchem_db.search_formula(formula)
    except Exception:  # chemicals raises for formulas it cannot parse
        return None
    return str(found.CASs) if found else None


def add_phase_points(entries: list[Entry]) -> int:
    """Set ``phase_points`` on every non-aqueous entry with a CAS that chemicals tabulates a
    melting or boiling point for; return how many entries got one.

    A carbon-free compound whose only entries are gas and carry no CAS (thermo.inp's FeO, NiO) is
    looked up by its formula, so that its tabulated melting point can say that it is a solid
    where a call would otherwise be made on its vapour. Formulas with carbon are not looked up:
    one formula can name several organic isomers.
    """
    phases: dict[str, set[str]] = {}
    for e in entries:
        phases.setdefault(e["formula"], set()).add(e["phase"])
    n = 0
    for e in entries:
        if e["phase"] == "aq":
            continue
        cas, how = e["cas"], "CAS"
        if (
            not cas
            and phases[e["formula"]] == {"g"}
            and not e["charge"]
            and "C" not in e["elements"]
            and sum(e["elements"].values()) > 1
        ):
            cas, how = _cas_by_formula(e["formula"]), "CAS found by formula"
        if not cas:
            continue
        tm, m_tm = _first(cas, Tm_methods, Tm)
        tb, m_tb = _first(cas, Tb_methods, Tb)
        if tm is None and tb is None:
            continue
        e["phase_points"] = {
            "T_melt_K": tm,
            "T_boil_K": tb,
            "source": f"chemicals {VERS['chemicals']} phase_change (Tm: {m_tm}; Tb: {m_tb}; "
            f"{how} {cas})",
        }
        n += 1
    return n
