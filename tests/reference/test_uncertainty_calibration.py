"""The shipped uncertainties against the independent compilations they were calibrated on.

Recomputed here from the shipped library and the outside sources themselves, not from the
build's own comparison code:

- NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), via the ``janaf`` package, for the
  entries listed in ``data/source-gaps.json`` ``janaf_index``;
- the CRC Handbook table "Standard Thermodynamic Properties of Chemical Substances" (NBS-derived
  298.15 K values), via ``chemicals``.

Band: each class's own u (the calibrated policy, before a disagreement widened a value) covers
90–99 % of the differences within 2u, against JANAF and CRC/NBS together; every value a
disagreement widened covers the gap that widened it; and the published CSV states the figures
these recomputations give.
"""

from __future__ import annotations

import csv
import json
from functools import cache
from pathlib import Path

import numpy as np
import pytest

from ._refs import crc_row_fits, crc_rows, element_entropies, janaf_rows, same_substance

pytestmark = pytest.mark.reference

DATA = Path(__file__).resolve().parents[2] / "data"
# The stated band of the coverage of 2u (issue target: about 95 %).
BAND = (0.90, 0.99)


@cache
def _library() -> dict:
    return json.loads((DATA / "species-library.json").read_text("utf-8"))


@cache
def _index() -> dict[str, str]:
    return json.loads((DATA / "source-gaps.json").read_text("utf-8"))["janaf_index"]


@cache
def _calibration() -> dict[str, dict[str, str]]:
    with open(DATA / "uncertainty-calibration.csv", encoding="utf-8", newline="") as f:
        return {r["class"]: r for r in csv.DictReader(f) if r["against"] == "all"}


@cache
def _element_s() -> dict[str, float]:
    return element_entropies(_library()["species"])


def _class_u(cls: str) -> float:
    return float(_calibration()[cls]["chosen_u"])


def _cls(e: dict, q: str) -> str | None:
    if e["hypothetical_298"] or e["phase"] == "aq":
        return None
    if e["phase"] == "g":
        if q == "dHf" and e["charge"]:
            return "dHf-ion"
        return f"{q}-gas-{'cas' if e['cas'] else 'nocas'}"
    return f"{q}-condensed"


def _pid(block: dict) -> str:
    return str(block["uncertainty"]["source"]).removeprefix("policy:")


def _differences() -> list[tuple[str, str, float, float, str, float]]:
    """(class, entry, |difference|, shipped u, policy, scale of the class u) per comparison."""
    lib = _library()["species"]
    index = _index()
    crc = crc_rows()
    cols = {"g": ("Hfg", "S0g"), "l": ("Hfl", "S0l"), "cr": ("Hfs", "S0s")}
    count: dict[tuple[str, str], int] = {}
    for e in lib:
        if e["cas"] and not e["hypothetical_298"]:
            count[(e["cas"], e["phase"])] = count.get((e["cas"], e["phase"]), 0) + 1
    out = []
    for e in lib:
        for q, field, j in (("dHf", "dHf_298", "dfH"), ("S", "S_298", "S")):
            cls = _cls(e, q)
            block = e[field]
            pid = _pid(block)
            if cls is None or not (pid.startswith("cal-") or pid == "source-disagreement"):
                continue
            others = []
            if e["id"] in index:
                row = janaf_rows(index[e["id"]]).get(298.15)
                if row is not None and row[j] is not None:
                    others.append(row[j])
            if (
                e["cas"]
                and count.get((e["cas"], e["phase"])) == 1
                and same_substance(e["cas"], tuple(sorted(e["elements"].items())))
                and block["source"] != "crc-298"
                and e["cas"] in crc
                and crc_row_fits(
                    e["elements"], crc[e["cas"]], cols[e["phase"]][0][-1], _element_s()
                )
            ):
                cell = crc[e["cas"]][cols[e["phase"]][0 if q == "dHf" else 1]].strip()
                if cell:
                    others.append(float(cell))
            for x in others:
                # the class's own u: a fraction of S for condensed S° (see the CSV's rule)
                scale = abs(block["value"]) if cls == "S-condensed" else 1.0
                out.append((cls, e["id"], abs(block["value"] - x), block["u"], pid, scale))
    return out


@pytest.mark.parametrize(
    "cls",
    [
        "dHf-gas-cas",
        "dHf-gas-nocas",
        "dHf-ion",
        "dHf-condensed",
        "S-gas-cas",
        "S-gas-nocas",
        "S-condensed",
    ],
)
def test_class_u_covers_about_95_percent_of_the_differences(cls: str) -> None:
    rows = [r for r in _differences() if r[0] == cls]
    assert len(rows) >= 25, cls
    u = _class_u(cls)
    cover = float(np.mean([d <= 2 * u * scale for _, _, d, _, _, scale in rows]))
    assert BAND[0] <= cover <= BAND[1], (cls, cover, len(rows))
    # the CSV states the same figure (its ATcT comparisons are left out here, hence the slack:
    # one comparison in a hundred)
    stated = float(_calibration()[cls]["coverage_2u_class_u"])
    assert abs(cover - stated) < 0.01 + 1.0 / len(rows), (cls, cover, stated)


def test_shipped_u_covers_every_difference_after_the_disagreement_rule() -> None:
    rows = _differences()
    for _, sid, d, u, pid, _ in rows:
        if pid == "source-disagreement":
            assert d <= 2 * u, (sid, d, u)
    # a value left at its class u differs by at most 2u from every compilation
    for _, sid, d, u, pid, _ in rows:
        if pid.startswith("cal-"):
            assert d <= 2 * u * (1 + 1e-9), (sid, d, u)


# Gaps recorded in data/source-gaps.json before the calibration existed (issue 11): JANAF against
# the value then shipped was 23.2 (MgSO4), 73.0 (Al2S3), 26.2 (Be2C) and 14.2 (CuCl2) kJ/mol with
# u of 2–4. Whatever the gap to JANAF is now, the shipped 2u covers it, and a gap beyond twice the
# class u is a recorded disagreement.
KNOWN_GAPS = ("MgSO4(cr,II)", "Al2S3(cr,alpha)", "Be2C(cr)", "CuCl2(cr)")


@pytest.mark.parametrize("sid", KNOWN_GAPS)
def test_known_source_gaps_widen_the_uncertainty(sid: str) -> None:
    e = next(x for x in _library()["species"] if x["id"] == sid)
    jt = janaf_rows(_index()[sid])[298.15]
    gap = abs(e["dHf_298"]["value"] - jt["dfH"])
    assert 2 * e["dHf_298"]["u"] >= gap, (sid, gap, e["dHf_298"]["u"])
    if gap > 2 * _class_u("dHf-condensed"):
        assert _pid(e["dHf_298"]) == "source-disagreement"
        assert any("sources disagree" in n for n in e["notes"])


def test_cp_factor_matches_janaf_increments() -> None:
    """Relative differences of h(T) = H(T) − H(298.15) from JANAF at 1000 K (gas and condensed
    entries with a JANAF table): 95 % within 2 u_rel, recomputed with the kernel's Cp model."""
    from feasibly import default_library

    lib = default_library()
    index = _index()
    for phase_group, cls in ((("g",), "cp-gas"), (("cr", "l"), "cp-condensed")):
        rel = []
        for e in _library()["species"]:
            if e["id"] not in index or e["phase"] not in phase_group or e["hypothetical_298"]:
                continue
            if not e["T_range_K"][0] <= 1000.0 <= e["T_range_K"][1]:
                continue
            row = janaf_rows(index[e["id"]]).get(1000.0)
            if row is None or row["H-H298"] is None:
                continue
            h = float(lib[e["id"]].cp_model.h_inc(np.array([1000.0]))[0])
            rel.append(abs(h - row["H-H298"]) / row["H-H298"])
        u = _class_u(cls)
        assert len(rel) >= 50, cls
        cover = float(np.mean(np.array(rel) <= 2 * u))
        assert BAND[0] <= cover <= 1.0, (cls, cover)


@pytest.mark.parametrize("sid", ["Al2O3(cr,alpha)", "MgO(cr)", "TiO2(cr,rutile)", "CaO(cr)"])
def test_high_temperature_enthalpy_interval_is_not_wider_than_the_tables_support(
    sid: str,
) -> None:
    """Issue 11: the old blanket ±5 % Cp factor gave u ≈ 54 kJ/mol for H(1400 K) of Cr23C6 where
    independent tables agree within 0.3 kJ/mol (Cr23C6 is not in thermo.inp). An entry with a
    NIST-JANAF table carries its own measured Cp factor: u of H(1400 K) − H(298.15) is a few
    kJ/mol at most, and its 2u still covers the gap to JANAF."""
    from feasibly import default_library

    sp = default_library()[sid]
    h = float(sp.cp_model.h_inc(np.array([1400.0]))[0])
    u_cp = sp.cp_u_rel * abs(h)
    row = janaf_rows(_index()[sid])[1400.0]
    assert u_cp < 3000.0, u_cp
    assert abs(h - row["H-H298"]) <= max(2 * u_cp, 300.0), (h, row["H-H298"], u_cp)
