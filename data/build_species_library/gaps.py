"""``source-gaps.json``: ΔfH°(298.15) from every source that gives one, and their differences.

Per entry: the value written (or replaced), ATcT, the matched NIST-JANAF table, chemicals'
JANAF_1998.tsv by CAS, and Burcat's gas record by CAS where the entry is not from Burcat. Entries
with at least two values are listed with every pairwise difference. Reference states are left out.
"""

from __future__ import annotations

from typing import Any

from .burcat import Record, burcat_poly
from .entries import Entry
from .formulas import same_comp
from .polynomials import poly_298
from .sources import fnum, pkg_file, read_tsv

NOTE = (
    "dHf(298.15) from every source that gives one, J/mol; 'janaf-4 <index>' = NIST-JANAF table "
    "(janaf package), 'janaf-1998-tsv' = chemicals JANAF_1998.tsv by CAS"
)


def read_janaf_tsv() -> list[dict[str, Any]]:
    """Rows of chemicals' JANAF_1998.tsv (ΔfH° of gas and liquid by CAS)."""
    return read_tsv(pkg_file("chemicals", "Reactions", "JANAF_1998.tsv"), ["CAS", "Hfl", "Hfg"])


def build_gaps(
    entries: list[Entry],
    gaps_atct: dict[str, dict[str, float]],
    janaf: dict[str, dict[str, Any]],
    jmatch: dict[str, str],
    janaf_tsv: list[dict[str, Any]],
    burcat_all: list[Record],
) -> dict[str, dict[str, Any]]:
    """Entry id -> values by source, pairwise differences and the largest gap (J/mol)."""
    res = {}
    bur_by_cas: dict[tuple[str, str], list[Record]] = {}
    for b in burcat_all:
        for c in b["cas"].split():
            bur_by_cas.setdefault((c, "g" if b["phase"] == "G" else "cond"), []).append(b)
    tsv_by_cas = {r["CAS"]: r for r in janaf_tsv}
    for e in entries:
        v = {}
        d = e["dHf_298"]
        if d["source"] in ("nasa-glenn", "burcat", "crc-298"):
            v[d["source"]] = d["value"]
        if "replaced" in d:
            v[d["replaced"]["source"]] = d["replaced"]["value"]
        if e["id"] in gaps_atct:
            v.update(gaps_atct[e["id"]])
        if e["id"] in jmatch and janaf[jmatch[e["id"]]]["dHf298"] is not None:
            v["janaf-4 " + jmatch[e["id"]]] = janaf[jmatch[e["id"]]]["dHf298"]
        if e["cas"] and e["cas"] in tsv_by_cas and e["phase"] in ("g", "l"):
            x = fnum(tsv_by_cas[e["cas"]]["Hfg" if e["phase"] == "g" else "Hfl"])
            if x is not None:
                v["janaf-1998-tsv"] = x
        if e["cas"] and e["phase"] == "g" and d["source"] != "burcat":
            bs = [
                b
                for b in bur_by_cas.get((e["cas"], "g"), [])
                if same_comp(b["elements"], e["elements"])
            ]
            if len(bs) == 1:
                bb = burcat_poly(bs[0])
                v["burcat"] = poly_298(*bb)[0]
        if e["reference_state_of"]:
            continue
        if len(v) >= 2:
            keys = sorted(v)
            pair = {
                f"{a} - {b}": round(v[a] - v[b], 3)
                for i, a in enumerate(keys)
                for b in keys[i + 1 :]
            }
            res[e["id"]] = {
                "values_J_per_mol": {k: round(v[k], 3) for k in keys},
                "differences_J_per_mol": pair,
                "max_abs_gap_J_per_mol": round(max(abs(x) for x in pair.values()), 3),
            }
    return res
