"""``source-gaps.json``: ΔfH°(298.15) from every source that gives one, and their differences.

Per entry: the value written (or replaced), ATcT, the matched NIST-JANAF table, chemicals'
JANAF_1998.tsv by CAS, and the same NASA species in Cantera's older NASA files (McBride, Gordon &
Reno 1993) by name. Entries
with at least two values are listed with every pairwise difference. Reference states are left out.
"""

from __future__ import annotations

from typing import Any

from .entries import Entry
from .nasa import load_nasa
from .polynomials import poly_298
from .sources import fnum, pkg_file, read_tsv

NOTE = (
    "dHf(298.15) from every source that gives one, J/mol; 'janaf-4 <index>' = NIST-JANAF table "
    "(janaf package), 'janaf-1998-tsv' = chemicals JANAF_1998.tsv by CAS"
)


def read_janaf_tsv() -> list[dict[str, Any]]:
    """Rows of chemicals' JANAF_1998.tsv (ΔfH° of gas and liquid by CAS)."""
    return read_tsv(pkg_file("chemicals", "Reactions", "JANAF_1998.tsv"), ["CAS", "Hfl", "Hfg"])


def old_nasa_298() -> dict[str, float]:
    """H(298.15 K) of every species of Cantera's older NASA files, by NASA name (J/mol)."""
    out = {}
    for fname in ("nasa_gas.yaml", "nasa_condensed.yaml"):
        for s in load_nasa(fname):
            th = s["thermo"]
            out[s["name"]] = poly_298(th["temperature-ranges"], th["data"])[0]
    return out


def build_gaps(
    entries: list[Entry],
    gaps_atct: dict[str, dict[str, float]],
    janaf: dict[str, dict[str, Any]],
    jmatch: dict[str, str],
    janaf_tsv: list[dict[str, Any]],
) -> dict[str, dict[str, Any]]:
    """Entry id -> values by source, pairwise differences and the largest gap (J/mol)."""
    res = {}
    old = old_nasa_298()
    tsv_by_cas = {r["CAS"]: r for r in janaf_tsv}
    for e in entries:
        v = {}
        d = e["dHf_298"]
        if d["source"] in ("nasa-glenn-2002", "crc-298"):
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
        if e.get("_record_name") in old:
            v["nasa-glenn-1993"] = old[e["_record_name"]]
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
