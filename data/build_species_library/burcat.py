"""Burcat/Ruscic entries (``BURCAT_THR.xml`` carried by thermochem) for what NASA lacks.

Which records are taken is the curated table ``burcat.toml``.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET  # package data file, parsed without entity expansion of DTDs
from collections.abc import Collection, Mapping
from typing import Any

from .entries import Entry, base_entry, poly_entry
from .errors import need
from .polynomials import R, extend_300
from .sources import pkg_file
from .tables import BurcatPick, burcat_picks

Record = dict[str, Any]
# A Burcat HF298 differing from its polynomial's H(298.15) by more than this is noted: larger than
# fit round-off (common practice, no source).
HF_NOTE_GAP = 100.0


def bfloat(t: str) -> float:
    """A Burcat number; some carry a blank for the exponent sign ("-0.178E 01"): read as "E+"."""
    t = t.strip()
    try:
        return float(t)
    except ValueError:
        return float(re.sub(r"\s+", "", t.replace("E ", "E+").replace("e ", "e+")))


def load_burcat() -> list[Record]:
    """Every phase record of the Burcat file whose numbers can be read."""
    path = pkg_file("thermochem", "BURCAT_THR.xml")
    root = ET.parse(path).getroot()
    out = []
    for sp in root.findall("specie"):
        cas = (sp.get("CAS") or "").strip()
        for ph in sp.findall("phase"):
            tl = ph.find("temp_limit")
            co = ph.find("coefficients")
            need(tl is not None and co is not None, "Burcat: phase without temp_limit/coefficients")
            assert tl is not None and co is not None

            def coefs(tag: str, co: ET.Element = co) -> list[float]:
                node = co.find(tag)
                need(node is not None, f"Burcat: missing {tag}")
                assert node is not None
                vals = {c.get("name"): bfloat(c.text or "") for c in node.findall("coef")}
                return [vals[f"a{i}"] for i in range(1, 8)]

            try:
                lo, hi = coefs("range_Tmin_to_1000"), coefs("range_1000_to_Tmax")
            except ValueError:
                # a few Burcat records hold corrupted numbers (e.g. '01839G52E+01'): such a record
                # is never used; if a pick is affected the build stops (pick not found)
                continue
            hf = co.find("hf298_div_r")
            out.append(
                {
                    "cas": cas,
                    "formula": _text(ph, "formula", strip=False),
                    "phase": _text(ph, "phase", strip=False),
                    "source": _text(ph, "source"),
                    "date": _text(ph, "date"),
                    "Tlow": float(tl.get("low", "")),
                    "Thigh": float(tl.get("high", "")),
                    "lo": lo,
                    "hi": hi,
                    "hf298_div_r": bfloat(hf.text) if hf is not None and hf.text else None,
                    "elements": {
                        (e.get("name") or "").strip().capitalize(): float(e.get("num_of_atoms", ""))
                        for e in _child(ph, "elements")
                        if float(e.get("num_of_atoms", "")) != 0.0
                    },
                }
            )
    need(len(out) > 1000, "Burcat XML changed shape")
    return out


def _child(node: ET.Element, tag: str) -> ET.Element:
    child = node.find(tag)
    need(child is not None, f"Burcat: phase without {tag}")
    assert child is not None
    return child


def _text(node: ET.Element, tag: str, strip: bool = True) -> Any:
    text = _child(node, tag).text
    return (text or "").strip() if strip else text


def burcat_poly(b: Record) -> tuple[list[float], list[list[float]]]:
    """Breaks and coefficients; Burcat polynomials share a fixed common temperature of 1000 K."""
    lo_zero, hi_zero = not any(b["lo"]), not any(b["hi"])
    if b["Thigh"] <= 1000.0 or hi_zero:
        return [b["Tlow"], b["Thigh"]], [b["lo"]]
    if b["Tlow"] >= 1000.0 or lo_zero:
        return [b["Tlow"], b["Thigh"]], [b["hi"]]
    return [b["Tlow"], 1000.0, b["Thigh"]], [b["lo"], b["hi"]]


def _elements(b: Record) -> dict[str, Any]:
    return {k: (int(v) if float(v).is_integer() else v) for k, v in sorted(b["elements"].items())}


def build_burcat(
    els: Mapping[str, Any], existing_keys: Collection[tuple[str, str, str | None]]
) -> tuple[list[Entry], list[Record]]:
    """Entries for the picks NASA lacks (file order, then merged records), and every record."""
    picks, merges = burcat_picks()
    pick: dict[tuple[str, str], BurcatPick] = {(p.burcat, p.burcat_phase): p for p in picks}
    merge: dict[tuple[str, str], BurcatPick] = {(p.burcat, p.burcat_phase): p for p in merges}
    need(len(pick) == len(picks), "burcat.toml: a Burcat record is picked twice")
    bur = load_burcat()
    entries = []
    seen = set()
    merged: dict[tuple[str, str], list[Record]] = {}
    for b in bur:
        key = (b["formula"], b["phase"])
        if key in merge:
            merged.setdefault(key, []).append(b)
            continue
        if key not in pick:
            continue
        need(key not in seen, f"Burcat pick {key} is not unique")
        seen.add(key)
        p = pick[key]
        if (p.formula, p.phase, p.form) in existing_keys:
            continue
        src_breaks, coeffs = burcat_poly(b)
        breaks = extend_300(src_breaks)
        e = base_entry(
            p.formula, _elements(b), 0, p.phase, p.form, p.names, (breaks[0], breaks[-1]), els
        )
        poly_entry(
            e,
            "burcat",
            f"BURCAT_THR.xml CAS {b['cas']} '{b['formula']}' ({b['source']} {b['date']})",
            breaks,
            coeffs,
            src_breaks,
        )
        e["_burcat_cas"] = b["cas"]
        _hf_note(e, b)
        entries.append(e)
    missing = set(pick) - seen
    need(not missing, f"Burcat picks not found: {sorted(missing)}")
    for key, parts in merged.items():
        p = merge[key]
        parts.sort(key=lambda b: b["Tlow"])
        need(
            len(parts) == 2 and abs(parts[0]["Thigh"] - parts[1]["Tlow"]) < 1e-9,
            f"Burcat merge {key}",
        )
        breaks = [parts[0]["Tlow"], parts[0]["Thigh"], parts[1]["Thigh"]]
        coeffs = [burcat_poly(parts[0])[1][0], burcat_poly(parts[1])[1][0]]
        e = base_entry(
            p.formula,
            _elements(parts[0]),
            0,
            p.phase,
            p.form,
            p.names,
            (breaks[0], breaks[-1]),
            els,
        )
        poly_entry(
            e,
            "burcat",
            f"BURCAT_THR.xml CAS {parts[0]['cas']} '{key[0]}' (two entries merged)",
            breaks,
            coeffs,
        )
        e["_burcat_cas"] = parts[0]["cas"]
        entries.append(e)
    need(set(merged) == set(merge), f"Burcat merges not found: {sorted(set(merge) - set(merged))}")
    return entries, bur


def _hf_note(e: Entry, b: Record) -> None:
    if b["hf298_div_r"] is not None:
        hf = b["hf298_div_r"] * R
        d = hf - e["dHf_298"]["value"]
        if abs(d) > HF_NOTE_GAP:
            e["notes"].append(
                f"Burcat's stated HF298 ({hf:.0f} J/mol) differs from its polynomial's H(298.15) "
                f"by {d:.0f} J/mol; the polynomial's value is used so that H(T) stays continuous"
            )
