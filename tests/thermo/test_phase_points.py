"""Warnings when the phase that would be stable at T is not in the library.

Melting and boiling points are the tabulated ones the data build takes from chemicals (CRC
Handbook tables first) and ships in the entries' ``phase_points``; the named cases below are
substances whose library entries miss a phase the tables say is stable.
"""

from __future__ import annotations

import json

import pytest

from feasibly import assess
from feasibly.errors import FeasiblyError, MissingCondensedPhase
from feasibly.library import Library, default_library


def test_ethylbenzene_gas_only_below_its_boiling_point() -> None:
    """CRC: ethylbenzene boils at 409.35 K; the library has only its gas."""
    lib = default_library()
    pts = lib["C6H5C2H5(g)"].raw["phase_points"]
    assert pts["T_boil_K"] == pytest.approx(409.35, abs=0.5) and "CRC" in pts["source"]
    # written without a phase, the gas-only compound is refused where it is a liquid
    with pytest.raises(MissingCondensedPhase, match=r"write C6H5C2H5\(g\)"):
        assess("C6H5CHCH2(g) + H2 -> C6H5C2H5", T="350 K")
    # written as the gas, the call is made, with the missing liquid said
    a = assess("C6H5CHCH2(g) + H2 -> C6H5C2H5(g)", T="350 K")
    (note,) = [n for n in a.notes if n.startswith("C6H5C2H5(g):")]
    assert "the stable liquid at 350–350 K is missing" in note and "C6H5C2H5(g)" in note
    assert "CRC" in note  # the source of the boiling point is named
    assert note in a.to_dict()["notes"]  # the record and the JSON output carry it
    # above its boiling point the gas is the stable phase: no note
    b = assess("C6H5CHCH2 + H2 -> C6H5C2H5", T="450 K")
    assert not [n for n in b.notes if n.startswith("C6H5C2H5")]


def test_no_chemicals_needed_at_run_time(monkeypatch: pytest.MonkeyPatch) -> None:
    """The check reads the shipped ``phase_points``: it works with chemicals unimportable."""
    import sys

    monkeypatch.setitem(sys.modules, "chemicals", None)
    monkeypatch.setitem(sys.modules, "chemicals.phase_change", None)
    a = assess("C6H5CHCH2(g) + H2 -> C6H5C2H5(g)", T="350 K")
    assert [n for n in a.notes if n.startswith("C6H5C2H5(g):")]


def test_no_note_when_the_stable_phase_is_there() -> None:
    a = assess("2 H2 + O2 -> 2 H2O", T_range=("300 K", "500 K"), points=5)
    assert not [n for n in a.notes if "stable phase" in n]


def test_cli_prints_the_note(capsys: pytest.CaptureFixture[str]) -> None:
    from feasibly.cli import main

    assert main(["assess", "C6H5CHCH2(g) + H2 -> C6H5C2H5(g)", "--T", "350", "K"]) == 0
    out = capsys.readouterr().out
    assert "C6H5C2H5(g): the stable liquid at 350–350 K is missing" in out


def test_phase_points_are_checked_when_read() -> None:
    entry = {
        "formula": "CH4",
        "phase": "g",
        "T_range_K": [300.0, 600.0],
        "dHf_298": {"value": -74600.0, "u": 300.0, "source": "x"},
        "S_298": {"value": 186.3, "u": 0.5, "source": "x"},
        "cp": {"model": "constant", "cp_J_per_mol_K": 35.7, "u_rel": 0.05, "source": "x"},
        "phase_points": {"T_melt_K": -1.0, "T_boil_K": 111.6, "source": "x"},
    }
    doc = {"schema": "feasibly-species", "schema_version": 1, "species": [entry]}
    with pytest.raises(FeasiblyError, match="phase_points"):
        Library.from_text(json.dumps(doc), "mine.json")
    entry["phase_points"] = {"T_melt_K": 90.7}
    with pytest.raises(FeasiblyError, match="phase_points"):
        Library.from_text(json.dumps(doc), "mine.json")
