"""NIST-JANAF tables (carried by the janaf package): reading, and matching library entries.

A library entry is matched to a JANAF table by composition, charge and phase; where several
tables share them the entry's form picks one (``janaf.toml`` form words); where isomers share a
composition the table goes to the isomer whose ΔfH°(298.15) is closest, within 10 kJ/mol.
The matches are written to source-gaps.json ``janaf_index``.
"""

from __future__ import annotations

import json
import re
from typing import Any

from . import tables
from .entries import Entry
from .errors import need
from .formulas import hill
from .sources import pkg_file

Table = dict[str, Any]

# An isomer takes a shared JANAF table only within 10 kJ/mol of its ΔfH°: below typical isomer
# gaps (common practice, no source).
ISOMER_MATCH_J_PER_MOL = 10000.0


def load_janaf_tables() -> dict[str, Table]:
    """index -> {phase, elements, charge, display, dHf298 (J/mol), S298}"""
    d = json.loads(pkg_file("janaf", "janaf.json").read_text(encoding="utf-8"))
    need(len(d["display"]) == len(d["index"]) > 1500, "janaf.json changed shape")
    out = {}
    for disp, idx in zip(d["display"], d["index"], strict=True):
        m = re.search(r"\(([^)]*)\)$", disp)
        need(m, f"janaf display {disp}")
        assert m is not None
        lines = pkg_file("janaf", "data", f"{idx}.txt").read_text(encoding="utf-8").splitlines()
        head = lines[0].split("\t")
        need(len(head) >= 2 and lines[1].startswith("T(K)"), f"janaf {idx}: header changed")
        fm = re.match(r"^(.*)\(([^()]*)\)$", head[1].strip())
        need(fm, f"janaf {idx}: formula {head[1]!r} not understood")
        assert fm is not None
        comp: dict[str, float] = {}
        charge = 0
        body = fm.group(1)
        cm = re.search(r"(\d*)([+-])$", body)
        if cm:
            charge = (int(cm.group(1) or 1)) * (1 if cm.group(2) == "+" else -1)
            body = body[: cm.start()]
        for el, n in re.findall(r"([A-Z][a-z]?)(\d*\.?\d*)", body):
            comp[el] = comp.get(el, 0.0) + (float(n) if n else 1.0)
        row = None
        for ln in lines[2:]:
            p = ln.split("\t")
            if p and p[0].strip() == "298.15":
                row = p
        h = s = None
        if row is not None:
            try:
                h = float(row[5]) * 1000.0
            except (ValueError, IndexError):
                h = None
            try:
                s = float(row[2])
            except (ValueError, IndexError):
                s = None
        out[idx] = {
            "phase": m.group(1),
            "elements": comp,
            "charge": charge,
            "display": disp,
            "dHf298": h,
            "S298": s,
        }
    return out


def janaf_matches(entries: list[Entry], janaf: dict[str, Table]) -> dict[str, str]:
    """Library id -> JANAF table index, where one table is this entry's (see module docstring)."""
    words = tables.janaf().form_words
    by_key: dict[tuple[str, int, str], list[str]] = {}
    for idx, j in sorted(janaf.items()):
        if j["phase"] in ("g", "l", "cr", "ref"):
            by_key.setdefault((hill(j["elements"]), j["charge"], j["phase"]), []).append(idx)
    comp_count: dict[tuple[str, int, str], int] = {}
    for e in entries:
        k = (hill(e["elements"]), e["charge"], e["phase"])
        comp_count[k] = comp_count.get(k, 0) + 1
    out = {}
    for e in entries:
        k = (hill(e["elements"]), e["charge"], e["phase"])
        cands = by_key.get(k, [])
        if not cands and e["phase"] == "g" and e["reference_state_of"]:
            # gaseous reference elements (N2, O2, H2, noble gases): JANAF tabulates them as the
            # 'ref' table
            cands = by_key.get((k[0], k[1], "ref"), [])
        if not cands:
            continue
        if len(cands) > 1 and e["form"]:
            w = words.get(e["form"])
            cands = [c for c in cands if w and w in janaf[c]["display"].lower()]
        if (len(cands) == 1 and comp_count[k] == 1) or (len(cands) == 1 and e["form"]):
            out[e["id"]] = cands[0]
        elif len(cands) == 1 and janaf[cands[0]]["dHf298"] is not None:
            # isomers share one composition (e.g. acetylene / vinylidene): the JANAF table goes to
            # the isomer whose dHf(298.15) is closest, and only when within 10 kJ/mol
            jv = janaf[cands[0]]["dHf298"]
            sib = [x for x in entries if (hill(x["elements"]), x["charge"], x["phase"]) == k]
            best = min(sib, key=lambda x: (abs(x["dHf_298"]["value"] - jv), x["id"]))
            if best is e and abs(e["dHf_298"]["value"] - jv) <= ISOMER_MATCH_J_PER_MOL:
                out[e["id"]] = cands[0]
    return out
