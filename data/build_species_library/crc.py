"""Constant-Cp entries from the CRC 298.15 K table (carried by chemicals) for common solids that
no polynomial source has. Which rows is the curated table ``crc.toml``; the Cp policy
(``cp-crc-constant``) sets their uncertainty and validity range."""

from __future__ import annotations

from collections.abc import Collection, Mapping
from typing import Any

from chemicals.elements import simple_formula_parser
from chemicals.phase_change import Tm

from ._kernel import T_REF
from .entries import Entry, base_entry
from .errors import need
from .formulas import plain
from .policies import POLICIES, cp_u_rel, cp_uncertainty, policy_block
from .sources import fnum, pkg_file, read_tsv
from .tables import crc_picks

CRC_FILE = ("Heat Capacity", "CRC Standard Thermodynamic Properties of Chemical Substances.tsv")
CONSTANT_NOTE = (
    "only 298.15 K data available: constant Cp(298.15) with a narrow range and a large "
    "assumed Cp uncertainty (policy cp-crc-constant)"
)


def _melting_point(cas: str) -> float | None:
    try:
        return Tm(cas)
    except Exception:  # chemicals raises for unknown CAS; no melting point then
        return None


def build_crc(
    els: Mapping[str, Any], existing_keys: Collection[tuple[str, str, str | None]]
) -> tuple[list[Entry], list[str]]:
    """Entries for the picks no other source has as a solid, and the skipped rows' reasons."""
    rows = read_tsv(pkg_file("chemicals", *CRC_FILE), ["CAS", "Chemical", "Hfs", "S0s", "Cps"])
    by_cas = {r["CAS"]: r for r in rows}
    t_range = POLICIES["cp-crc-constant"].T_range_K
    need(t_range is not None, "policy cp-crc-constant gives no T_range_K")
    assert t_range is not None
    t_low, t_high = t_range
    entries, skipped = [], []
    for pick in crc_picks():
        cas = pick.cas
        if pick.skip is not None:
            skipped.append(f"CRC {cas}: {pick.skip}")
            continue
        formula, crc_name = pick.formula, pick.crc_name
        assert formula is not None and crc_name is not None  # tables.crc_picks checked them
        need(
            cas in by_cas and by_cas[cas]["Chemical"].strip() == crc_name,
            f"CRC row {cas} ({crc_name}) changed",
        )
        r = by_cas[cas]
        hf, s0, cp = fnum(r["Hfs"]), fnum(r["S0s"]), fnum(r["Cps"])
        if hf is None or s0 is None or cp is None:
            skipped.append(f"CRC {cas} {crc_name}: incomplete solid data")
            continue
        if any(k[0] == formula and k[1] == "cr" for k in existing_keys):
            continue  # a temperature-dependent source already has it
        elements = dict(sorted(simple_formula_parser(plain(formula)).items()))
        tmax = t_high
        tm = _melting_point(cas)
        if tm and T_REF < tm < tmax:
            tmax = float(tm)
        e = base_entry(formula, elements, 0, "cr", pick.form, pick.names, (t_low, tmax), els)
        e["cas"] = cas
        lab = f"CRC table CAS {cas} '{crc_name}' (solid)"
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
        e["notes"].append(CONSTANT_NOTE)
        if tmax < t_high:
            e["notes"].append(
                f"T_range_K upper end = melting point {tmax} K from chemicals.phase_change.Tm"
            )
        entries.append(e)
    return entries, skipped
