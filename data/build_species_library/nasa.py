"""NASA Glenn entries from ``thermo.inp`` (NASA TP-2002-211556, via :mod:`.thermo_inp`), and the
reader of Cantera's older ``nasa_gas.yaml`` / ``nasa_condensed.yaml`` (McBride, Gordon & Reno
1993), which the cross-checks compare with.

Names come from the curated tables ``nasa_gas.toml``, ``nasa_condensed.toml`` and
``nasa_phase_labels.toml``; ``nasa_exceptions.toml`` lists species left out and charge fixes.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

import yaml

from . import tables
from .entries import Entry, base_entry, poly_entry
from .errors import SourceError, need
from .formulas import clean_elements, mech_formula
from .polynomials import extend_300
from .sources import cantera_file
from .thermo_inp import Record, load_thermo_inp

#: thermo.inp element codes of the 'inert' copies of species (not chemistry).
INERT_CODES = ("Ic", "Ih", "Io")

ION_NOTE = (
    "ion: NASA/JANAF thermal-electron convention (the electron gas e-(g) is a "
    "species with its own H and S; not the ion convention of ATcT/NBS)"
)


class _NoBoolSafeLoader(yaml.SafeLoader):
    """Safe loader without YAML 1.1 booleans: species names such as NO, ON must stay strings."""


_NoBoolSafeLoader.yaml_implicit_resolvers = {
    k: [(tag, rx) for tag, rx in v if tag != "tag:yaml.org,2002:bool"]
    for k, v in yaml.SafeLoader.yaml_implicit_resolvers.items()
}


def load_nasa(fname: str) -> list[dict[str, Any]]:
    """The species of a Cantera NASA file, every one as NASA-7 (checked shape)."""
    path = cantera_file(fname)
    with open(path, encoding="utf-8") as f:
        # A yaml.SafeLoader subclass (only the bool resolver removed): no object construction.
        doc = yaml.load(f, Loader=_NoBoolSafeLoader)  # noqa: S506
    sp = doc.get("species")
    need(isinstance(sp, list) and len(sp) > 300, f"{fname}: species list changed")
    for s in sp:
        th = s.get("thermo", {})
        if th.get("model") == "NASA9":
            # A NASA-9 entry with a1 = a2 = 0 (the T^-2 and T^-1 Cp terms) is exactly a NASA-7
            # entry with coefficients a3..a7, b1, b2: Cp, H and S expressions coincide term by term.
            need(
                all(len(c) == 9 and c[0] == 0.0 and c[1] == 0.0 for c in th["data"]),
                f"{fname}: {s['name']}: NASA9 with non-zero a1/a2 cannot be written as NASA7",
            )
            th["data"] = [c[2:] for c in th["data"]]
            th["model"] = "NASA7"
            th["note"] = (
                f"{th.get('note', '')} [NASA-9 with a1=a2=0 in the file, rewritten as NASA-7]"
            ).strip()
        need(th.get("model") == "NASA7", f"{fname}: {s.get('name')}: not NASA7")
        tr, data = th.get("temperature-ranges"), th.get("data")
        need(
            len(tr) == len(data) + 1 and all(len(c) == 7 for c in data),
            f"{fname}: {s['name']}: shape",
        )
    return sp


def condensed_split(name: str) -> tuple[str, str, str]:
    """``"CaCO3(cr)"`` -> ``("CaCO3", "cr", "")``; ``"C8H18(L),isooct"`` ->
    ``("C8H18", "L", ",isooct")``: base name, phase label and isomer label."""
    m = re.match(r"^(.*)\(([^()]*)\)(,.*)?$", name)
    if m is None:
        raise SourceError(f"NASA condensed name {name} not understood")
    return m.group(1), m.group(2), m.group(3) or ""


def _composition(rec: Record) -> dict[str, float]:
    """thermo.inp element codes (upper case, ``E`` = electron) as symbols: AG -> Ag."""
    return {(k if k == "E" else k.capitalize()): v for k, v in rec.elements.items()}


def build_nasa(els: Mapping[str, Any], notes_unmapped: list[str]) -> list[Entry]:
    """Every usable entry of NASA Glenn's thermo.inp, in file order (gases, condensed, then the
    reactant section); left-out records go to ``notes_unmapped``."""
    gas_names = tables.nasa_gas()
    cond_names = tables.nasa_condensed()
    labels = tables.nasa_phase_labels()
    exceptions = tables.nasa_exceptions()
    entries = []
    for rec in load_thermo_inp():
        name = rec.name
        if name in exceptions.skip:
            notes_unmapped.append(f"NASA {name}: {exceptions.skip[name]}")
            continue
        if not rec.coeffs:
            why = rec.repairs[-1] if rec.repairs else "enthalpy at one temperature only"
            notes_unmapped.append(f"NASA {name}: {why} (no Cp polynomial)")
            continue
        comp = _composition(rec)
        if any(k in INERT_CODES for k in comp):
            notes_unmapped.append(
                f"NASA {name}: 'inert' copy of a species (element codes {INERT_CODES})"
            )
            continue
        elements, charge = clean_elements(comp)
        if name in exceptions.charge:
            need(charge == 0, f"NASA {name}: composition now carries a charge; drop the fix")
            charge = exceptions.charge[name]
        if any(k not in els for k in elements):
            notes_unmapped.append(
                f"NASA {name}: element symbol(s) {sorted(k for k in elements if k not in els)} "
                "not in the periodic table (deuterium)"
            )
            continue
        breaks, coeffs = extend_300(rec.breaks), rec.coeffs
        table_note = None
        if not rec.condensed:
            if name in gas_names:
                formula, names, table_note = gas_names[name]
            else:
                formula, names = mech_formula(name), ()
                need("," not in name, f"NASA gas {name}: isomer label without curated formula")
            phase, form = "g", None
        else:
            base, label, isomer = condensed_split(name)
            need(label in labels, f"NASA condensed {name}: unknown phase label {label}")
            phase, form = labels[label]
            key = base + isomer
            need(
                not isomer or key in cond_names,
                f"NASA condensed {name}: isomer label without curated formula ({key})",
            )
            if key in cond_names:
                formula, names, by_phase, form_by_label = cond_names[key]
                names = by_phase.get(phase, names)
                form = form_by_label.get(label, form)
            else:
                formula, names = mech_formula(base), ()
        e = base_entry(formula, elements, charge, phase, form, names, (breaks[0], breaks[-1]), els)
        label_txt = f"thermo.inp {name} ({rec.date_code})"
        poly_entry(e, "nasa-glenn-2002", label_txt, breaks, coeffs, rec.breaks)
        # The record's own stated ΔfH°(298.15 K) (header line), kept for the cross-check.
        e["_record_dhf"] = rec.dhf_298
        e["_record_name"] = name
        if rec.comment:
            e["notes"].append(f"NASA record: {rec.comment}")
        e["notes"] += rec.repairs
        if charge:
            e["notes"].append(ION_NOTE)
        if table_note:
            e["notes"].append(table_note)
        entries.append(e)
    return entries
