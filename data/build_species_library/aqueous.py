"""Aqueous ions at the 1 molal standard state from the CRC table carried by chemicals.

Source: CRC Handbook, "Thermodynamic Properties of Aqueous Ions" (NBS-derived 298.15 K values:
ΔfH°, ΔfG°, S°, Cp°), file ``Electrolytes/CRC Thermodynamic Properties of Aqueous Ions.tsv`` of
chemicals. Conventions: standard state the ideal 1 mol/kg solution; ΔfH°, ΔfG° and S° of H⁺(aq)
are zero (the H⁺ convention), so ions' S° may be negative. In a reaction balanced in charge the
convention cancels; a reaction that mixes these ions with the gas ions (thermal-electron
convention) is refused by the kernel.

Every row with ΔfH°, ΔfG° and S° becomes an entry; ΔfG° itself is not carried (the kernel forms G
from H and S) but checked: the closure ΔfG° − (ΔfH° − T·ΔfS°), with the elements' S° from the
library's reference states and S°(e⁻) = ½ S°(H₂) (H⁺ convention), must be small. Its spread sets
the uncertainty (policy ``aq-closure``): the table's three numbers agree with each other only to
that extent. It is a lower bound: no independent aqueous compilation is carried by the build's
packages.

Temperature dependence: a constant Cp° = the table's Cp°(298.15 K), valid 0–100 °C, with the
constant-Cp factor of the calibration (its uncertainty grows away from 25 °C through the
increments). Rows without Cp° are valid at 25 °C only (298.15 ± 0.01 K).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from typing import Any

import numpy as np

from ._kernel import T_REF
from .entries import Entry, base_entry
from .errors import need
from .policies import value_block
from .sources import fnum, pkg_file, read_tsv

AQ_FILE = ("Electrolytes", "CRC Thermodynamic Properties of Aqueous Ions.tsv")
# The liquid-water range at 1 bar, 0-100 °C: a constant Cp(298.15) is used no further.
T_RANGE_CP = (273.15, 373.15)
# Rows without Cp: 25 °C only. ±0.01 K: a constant Cp of even 300 J/(mol K) moves G by
# Cp·ΔT²/(2T) < 1e-4 J/mol there, so the missing Cp cannot matter.
T_RANGE_NO_CP = (T_REF - 0.01, T_REF + 0.01)
CLOSURE_POLICY = "aq-closure"
CP_POLICY = "cp-aq-constant"
NO_CP_POLICY = "aq-25C-only"
CONVENTION_NOTE = (
    "aqueous, 1 mol/kg ideal-solution standard state; H+ convention (dHf, dGf and S of H+(aq) "
    "are 0, so an ion's S may be negative); activities in Q are molalities (gamma = 1, ideal "
    "dilute solution)"
)


def element_entropies(entries: list[Entry]) -> dict[str, float]:
    """S°(298.15) per atom of each element's reference state in the library."""
    out = {}
    for e in entries:
        el = e["reference_state_of"]
        if el:
            out[el] = e["S_298"]["value"] / float(e["elements"][el])
    return out


def closure(
    hf: float, gf: float, s: float, elements: Mapping[str, float], charge: int, s_el: dict
) -> float | None:
    """ΔfG° − (ΔfH° − T ΔfS°) in J/mol, or None when an element has no reference state here.

    Formation of an ion of charge z: elements → ion + z e⁻, with S°(e⁻) = ½ S°(H₂) so that
    ½ H₂ → H⁺ + e⁻ has ΔS° = 0 (the H⁺ convention)."""
    if any(el not in s_el for el in elements) or "H" not in s_el:
        return None
    s_e = s_el["H"]  # ½ S(H2) per H atom
    dfs = s + charge * s_e - sum(n * s_el[el] for el, n in elements.items())
    return gf - (hf - T_REF * dfs)


def build_aqueous(
    els: Mapping[str, Any], entries: list[Entry], cp_u: float
) -> tuple[list[Entry], dict[str, str]]:
    """Aqueous-ion entries (in table order) with closure-based uncertainties, and the texts of
    the policies they use.

    ``entries``: the library so far (its reference states give the element entropies);
    ``cp_u``: the calibrated constant-Cp factor.
    """
    from chemicals.elements import nested_formula_parser

    from ._kernel import parse_formula

    rows = read_tsv(
        pkg_file("chemicals", *AQ_FILE), ["CAS", "Formula", "Name", "Hf(aq)", "Gf(aq)", "S(aq)"]
    )
    need(len(rows) > 150, f"{AQ_FILE[1]}: table changed shape ({len(rows)} rows)")
    s_el = element_entropies(entries)
    made: list[tuple[Entry, float | None]] = []
    for r in rows:
        hf, gf, s = fnum(r["Hf(aq)"]), fnum(r["Gf(aq)"]), fnum(r["S(aq)"])
        if hf is None or gf is None or s is None:
            continue
        formula = r["Formula"].strip()
        parsed = parse_formula(formula)
        elements = {k: (int(v) if float(v).is_integer() else v) for k, v in parsed.elements.items()}
        elements = dict(sorted(elements.items()))
        need(parsed.charge != 0, f"aqueous row {formula}: not an ion")
        # cross-check of our formula reading against chemicals' own parser (charge stripped)
        bare = re.sub(r"[+-]\d*$", "", formula)
        need(
            {k: float(v) for k, v in nested_formula_parser(bare).items()}
            == {k: float(v) for k, v in elements.items()},
            f"aqueous row {formula}: composition differs between parsers",
        )
        cp = fnum(r.get("Cp(aq)"))
        t_range = T_RANGE_CP if cp is not None else T_RANGE_NO_CP
        e = base_entry(
            formula,
            elements,
            parsed.charge,
            "aq",
            None,
            [r["Name"].strip().lower()],
            t_range,
            els,
        )
        if re.fullmatch(r"\d{2,7}-\d\d-\d", r["CAS"].strip()):
            e["cas"] = r["CAS"].strip()
        lab = f"CRC aqueous-ion table CAS {r['CAS'].strip()} '{r['Name'].strip()}'"
        e["_aq"] = {"hf": hf, "gf": gf, "s": s, "label": lab}
        e["cp"] = {
            "model": "constant",
            "cp_J_per_mol_K": cp if cp is not None else 0.0,
            "u_rel": cp_u if cp is not None else 0.0,
            "source": "crc-aq",
            "entry": lab,
            "uncertainty": {
                "stated": cp_u if cp is not None else 0.0,
                "convention": "standard",
                "divisor": 1.0,
                "source": f"policy:{CP_POLICY if cp is not None else NO_CP_POLICY}",
                "assumed": True,
            },
        }
        e["notes"].append(CONVENTION_NOTE)
        e["notes"].append(f"CRC dGf(298.15) = {gf:.0f} J/mol (checked against dHf and S)")
        if cp is None:
            e["notes"].append(
                "no Cp in the source: valid at 25 degC only (298.15 +/- 0.01 K); a temperature "
                "dependence would need a Cp this table does not give"
            )
        else:
            e["notes"].append(
                "constant Cp(298.15) over 0-100 degC: the Cp factor's uncertainty grows the "
                "uncertainty of H and S with |T - 298.15 K|; outside 0-100 degC no value is given"
            )
        made.append((e, closure(hf, gf, s, parsed.elements, parsed.charge, s_el)))
    res = np.abs(np.array([c for _, c in made if c is not None]))
    need(res.size >= 50, f"aqueous closure: only {res.size} rows checkable")
    # Half the 95th percentile of the closure residual, the rule of the calibrated classes.
    u_h = float(np.quantile(res, 0.95)) / 2.0
    u_s = u_h / T_REF  # the same spread read as an entropy (T·S carries it equally)
    for e, c in made:
        a = e.pop("_aq")
        if e["formula"] == "H+":
            # zero by convention, exactly
            for field in ("dHf_298", "S_298"):
                e[field] = value_block(
                    0.0, 0.0, "standard", "crc-aq", a["label"], "policy:h-plus-convention", True
                )
            e["cp"]["uncertainty"]["source"] = "policy:h-plus-convention"
            continue
        uh, us, pid = u_h, u_s, CLOSURE_POLICY
        if c is not None and abs(c) > 2 * u_h:
            # the row disagrees with itself beyond the spread: widen by the disagreement rule
            uh = math.sqrt(u_h**2 + c**2 / 3.0)
            us = uh / T_REF
            pid = "source-disagreement"
            e["notes"].append(
                f"closure dGf - (dHf - T dSf) = {c:.0f} J/mol exceeds 2u = {2 * u_h:.0f}: u "
                f"widened to {uh:.0f} J/mol (policy source-disagreement)"
            )
        if c is None:
            e["notes"].append(
                "closure not checked: an element has no reference state in this library"
            )
        e["dHf_298"] = value_block(
            a["hf"], uh, "standard", "crc-aq", a["label"], f"policy:{pid}", True
        )
        e["S_298"] = value_block(
            a["s"], us, "standard", "crc-aq", a["label"], f"policy:{pid}", True
        )
    aq_texts = {
        CLOSURE_POLICY: (
            "Aqueous ion dHf(298.15) and S(298.15) from the CRC table (no stated uncertainty): "
            f"standard u(dHf) = {u_h:.4g} J/mol and u(S) = u(dHf)/298.15 K = {u_s:.4g} J/(mol K), "
            "half the 95th percentile of the table's closure |dGf - (dHf - T dSf)| over "
            f"{res.size} rows (median {float(np.median(res)):.3g} J/mol), elements' S from this "
            "library's reference states, S(e-) = S(H2)/2. A lower bound: no independent aqueous "
            "compilation is carried by the build's packages."
        ),
        NO_CP_POLICY: (
            "Aqueous ion without a Cp in the CRC table: the entry is valid at 298.15 +/- 0.01 K "
            "only, where any Cp moves G by less than 1e-4 J/mol; its Cp (0) and Cp factor "
            "(u_rel = 0) are placeholders of the format, never used for a temperature change."
        ),
        "h-plus-convention": (
            "H+(aq): dHf, S and Cp are 0 by the convention that defines the aqueous ion scale; "
            "u = 0."
        ),
        CP_POLICY: (
            "Constant Cp(298.15) of an aqueous ion over 0-100 degC: u_rel = the calibrated "
            f"constant-Cp factor ({cp_u:.4g}, measured on solids over 298-500 K). Aqueous Cp "
            "varies more with temperature than a solid's; the value is checked against the IAPWS "
            "ion product of water at 0-100 degC (tests/reference), not derived from aqueous data."
        ),
    }
    return [e for e, _ in made], aq_texts
