"""``hazard-flags.csv``: toxic, flammable and oxidiser flags with their basis and source.

flammable: an LFL listed in IEC 60079-20-1 (first) or NFPA 497; toxic: the first Ontario
occupational exposure limit given (TWA, ceiling, STEL) at or below the thresholds of
``hazards.toml``; then the curated lists of ``hazards.toml``. Flags say nothing about reaction
hazards or scale-up.
"""

from __future__ import annotations

import csv
import io
import re

from . import tables
from .entries import Entry
from .errors import need
from .sources import VERS, fnum, pkg_file, read_tsv

IEC_FILE = "IS IEC 60079-20-1 2010.tsv"
NFPA_FILE = "NFPA 497 2008.tsv"
ONTARIO_FILE = "Ontario Exposure Limits.tsv"
PHASE_ORDER = {"g": 0, "l": 1, "cr": 2}


def _nm(e: Entry) -> str:
    return e["names"][0] if e["names"] else ""


def build_hazards(entries: list[Entry]) -> tuple[str, int]:
    """The CSV text (sorted by flag, formula, CAS) and its number of rows."""
    rules = tables.hazards()
    chem = f"chemicals {VERS['chemicals']} Safety/"
    by_cas: dict[str, Entry] = {}
    for e in sorted(entries, key=lambda e: (PHASE_ORDER[e["phase"]], e["id"])):
        if e["cas"]:
            by_cas.setdefault(e["cas"], e)
    rows = []
    iec = read_tsv(pkg_file("chemicals", "Safety", IEC_FILE), ["CAS", "LFL"])
    nfpa = read_tsv(pkg_file("chemicals", "Safety", NFPA_FILE), ["CAS", "LFL"])
    done = set()
    for table, label, fname in ((iec, "IEC 60079-20-1", IEC_FILE), (nfpa, "NFPA 497", NFPA_FILE)):
        for r in table:
            lfl = fnum(r["LFL"])
            if lfl is None or r["CAS"] not in by_cas or (r["CAS"], "flammable") in done:
                continue
            e = by_cas[r["CAS"]]
            done.add((r["CAS"], "flammable"))
            rows.append(
                (
                    e["cas"],
                    e["formula"],
                    _nm(e),
                    "flammable",
                    f"LFL {lfl * 100:.3g} vol% ({label})",
                    chem + fname,
                )
            )
    ont = read_tsv(
        pkg_file("chemicals", "Safety", ONTARIO_FILE),
        ["CASRN", "Time-Weighted Average Limit (TWA)", "Ceiling Limit (C)"],
    )
    for r in ont:
        cas = (r["CASRN"] or "").strip()
        if cas not in by_cas or (cas, "toxic") in done:
            continue
        hit = None
        for col, short in (
            ("Time-Weighted Average Limit (TWA)", "TWA"),
            ("Ceiling Limit (C)", "ceiling"),
            ("Short-Term Exposure Limit (STEL)", "STEL"),
        ):
            val = (r.get(col) or "").strip()
            m = re.match(r"^([\d.]+)\s*(ppm|mg/m3)", val)
            if m:
                x, unit = float(m.group(1)), m.group(2)
                if (unit == "ppm" and x <= rules.toxic_ppm) or (
                    unit == "mg/m3" and x <= rules.toxic_mg_m3
                ):
                    hit = f"{short} {m.group(1)} {unit} (Ontario OEL)"
                break  # only the first limit that is given decides
        if hit:
            e = by_cas[cas]
            done.add((cas, "toxic"))
            rows.append((cas, e["formula"], _nm(e), "toxic", hit, chem + ONTARIO_FILE))
    by_id = {e["id"]: e for e in entries}
    missing = sorted(
        sid
        for items in (rules.toxic, rules.flammable, rules.oxidiser)
        for sid in items
        if sid not in by_id
    )
    need(not missing, f"curated hazard species not in the library: {missing}")
    for flag, items in (
        ("toxic", rules.toxic),
        ("flammable", rules.flammable),
        ("oxidiser", rules.oxidiser),
    ):
        for sid, why in items.items():
            need(sid in by_id, f"curated hazard species {sid} not in library")
            e = by_id[sid]
            key = (e["cas"] or sid, flag)
            if key in done:
                continue
            done.add(key)
            rows.append(
                (
                    e["cas"] or "",
                    e["formula"],
                    _nm(e),
                    flag,
                    f"curated: {why}",
                    rules.curated_source,
                )
            )
    rows.sort(key=lambda r: (r[3], r[1], r[0]))
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["cas", "formula", "name", "flag", "basis", "source"])
    w.writerows(rows)
    return buf.getvalue(), len(rows)
