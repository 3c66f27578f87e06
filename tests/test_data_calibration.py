"""The calibration rule of the data build (data/build_species_library/calibration.py) on made-up
comparisons: the numbers below are invented to exercise the rule, not data."""

from __future__ import annotations

import sys
from collections.abc import Iterator
from pathlib import Path
from types import ModuleType

import pytest

pytest.importorskip("chemicals", reason="the build's comparison step reads chemicals' tables")

DATA = Path(__file__).resolve().parents[1] / "data"


@pytest.fixture(scope="module")
def cal() -> Iterator[ModuleType]:
    sys.path.insert(0, str(DATA))
    try:
        from build_species_library import calibration as module
    finally:
        sys.path.remove(str(DATA))
    yield module


def _entry(sid: str, value: float, u: float) -> dict:
    block = {
        "value": value,
        "u": u,
        "source": "nasa-glenn",
        "entry": sid,
        "uncertainty": {
            "stated": u,
            "convention": "standard",
            "divisor": 1.0,
            "source": "policy:condensed-dHf",
            "assumed": True,
        },
    }
    s = dict(block, value=50.0)
    cp = {"model": "nasa7", "u_rel": 0.05, "uncertainty": dict(block["uncertainty"])}
    return {
        "id": sid,
        "phase": "cr",
        "charge": 0,
        "hypothetical_298": False,
        "dHf_298": block,
        "S_298": s,
        "cp": cp,
        "notes": [],
    }


def _comparisons(cal: ModuleType, gaps_a: list[float], gaps_b: list[float]) -> list:
    C = cal.Comparison
    out = [C("dHf-condensed", f"E{i}", "janaf-4", 298.15, g, 0.0) for i, g in enumerate(gaps_a)]
    out += [C("dHf-condensed", f"E{i}", "crc-298", 298.15, g, 0.0) for i, g in enumerate(gaps_b)]
    return out


def test_u_is_half_the_95th_percentile_of_the_widest_source(cal: ModuleType) -> None:
    # invented: source A spreads 0..99 J/mol, source B 0..990 J/mol, 100 comparisons each
    comps = _comparisons(cal, [float(i) for i in range(100)], [10.0 * i for i in range(100)])
    for cls in cal.CLASSES:
        if cls != "dHf-condensed":
            comps += [cal.Comparison(cls, "E0", "janaf-4", 298.15, 1.0, 1.0)] * 20
    got = cal.derive(comps)["dHf-condensed"]
    assert got.u == pytest.approx(940.5 / 2)  # numpy's linear 95th percentile of 0, 10 … 990
    assert got.n_comparisons == 200 and got.n_entries == 100


def test_gaps_beyond_2u_widen_unless_superseded(cal: ModuleType) -> None:
    entries = [_entry("E0", 0.0, 100.0), _entry("E1", 0.0, 100.0), _entry("E2", 0.0, 100.0)]
    entries[2]["_superseded_sources"] = ("crc-298",)
    C = cal.Comparison
    comps = [
        C("dHf-condensed", "E0", "crc-298", 298.15, 0.0, 150.0),  # within 2u of 100
        C("dHf-condensed", "E1", "crc-298", 298.15, 0.0, 900.0),  # a disagreement
        C("dHf-condensed", "E2", "crc-298", 298.15, 0.0, 900.0),  # superseded source
    ]
    calib = {k: cal.Calibration(k, 1, 1, 0.0, 200.0, 100.0) for k in cal.CLASSES}
    assert cal.apply(entries, calib, comps) == 1
    e0, e1, e2 = entries
    assert e0["dHf_298"]["u"] == 100.0 and e0["dHf_298"]["uncertainty"]["source"].endswith(
        "cal-condensed-dHf"
    )
    assert e1["dHf_298"]["u"] == pytest.approx((100.0**2 + 900.0**2 / 3) ** 0.5)
    assert e1["dHf_298"]["uncertainty"]["source"] == "policy:source-disagreement"
    assert 2 * e1["dHf_298"]["u"] >= 900.0 and "sources disagree" in e1["notes"][0]
    assert e2["dHf_298"]["u"] == 100.0
    # condensed S is relative: u = f·|S| (f = 100 here, an invented factor), Cp factor set too
    assert e0["S_298"]["u"] == pytest.approx(100.0 * 50.0)
    assert e0["cp"]["u_rel"] == 100.0
