"""Issue 17, species files: strict types, validated ids and names, bounded values, size and
nesting; a user file adds species and replaces a shipped one only when asked."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import feasibly
from feasibly import Library, default_library
from feasibly.errors import DataFileError, ReactionSyntaxError


def _entry(**changes: object) -> dict:
    entry: dict = {
        "formula": "CH4",
        "phase": "g",
        "form": "mine",
        "T_range_K": [300.0, 600.0],
        "dHf_298": {"value": -74600.0, "u": 300.0, "source": "my lab notebook p. 12"},
        "S_298": {"value": 186.3, "u": 0.5, "source": "my lab notebook p. 12"},
        "cp": {"model": "constant", "cp_J_per_mol_K": 35.7, "u_rel": 0.05, "source": "estimate"},
    }
    entry.update(changes)
    return entry


def _doc(*entries: dict) -> str:
    return json.dumps({"schema": "feasibly-species", "schema_version": 1, "species": list(entries)})


def _problems(text: str, name: str = "mine.json") -> str:
    with pytest.raises(DataFileError) as info:
        Library.from_text(text, name)
    return str(info.value)


def test_hypothetical_298_must_be_true_or_false() -> None:
    # "hypothetical_298": "no" read as true (bool of a non-empty string).
    assert "field hypothetical_298: 'no' is not true or false" in _problems(
        _doc(_entry(hypothetical_298="no"))
    )


def test_phase_given_as_a_list_is_refused() -> None:
    # "phase": ["cr"] raised TypeError (unhashable list).
    assert "field phase: ['cr'] is not one of" in _problems(_doc(_entry(phase=["cr"])))


def test_reference_state_given_as_a_list_is_refused() -> None:
    # Found by the fuzz campaign: "reference_state_of": [1] raised TypeError (unhashable).
    assert "field reference_state_of" in _problems(_doc(_entry(reference_state_of=[1])))


def test_cp_model_given_as_a_list_is_refused() -> None:
    bad = _entry()
    bad["cp"] = {**bad["cp"], "model": ["constant"]}
    assert "field cp.model" in _problems(_doc(bad))


@pytest.mark.parametrize(
    "bad_id",
    ["<img src=x onerror=alert(1)>", "CO2(g) ; rm", "CO2\x1b]52;c;ZXZpbA==\x07", "", 12, "a" * 200],
)
def test_user_species_ids_are_validated(bad_id: object) -> None:
    # Species ids from user files were not validated (they reached HTML and the terminal).
    assert "field id" in _problems(_doc(_entry(id=bad_id)))


def test_species_names_with_control_characters_are_refused() -> None:
    # Names printed raw to the terminal, so escape sequences (OSC 52) reached it.
    assert "field names" in _problems(_doc(_entry(names=["meth\x1b]52;c;ZXZpbA==\x07ane"])))
    assert "field notes" in _problems(_doc(_entry(notes=["x\x9b2J"])))


def test_absurd_heat_capacity_is_refused() -> None:
    # cp = 1e308 gave "not feasible, P = 0.000".
    bad = _entry()
    bad["cp"] = {**bad["cp"], "cp_J_per_mol_K": 1e308}
    assert "field cp: Cp is not within ±10000" in _problems(_doc(bad))


def test_absurd_values_name_the_field() -> None:
    bad = _entry(dHf_298={"value": 1e300, "u": 1.0, "source": "x"})
    assert "field dHf_298.value: 1e+300 is outside" in _problems(_doc(bad))
    assert "field T_range_K" in _problems(_doc(_entry(T_range_K=[300.0, 1e300])))


def test_huge_charge_is_refused_not_a_value_error() -> None:
    # A charge of 5,000 digits raised ValueError (int conversion limit).
    with pytest.raises(ReactionSyntaxError):
        feasibly.parse_formula("Fe+" + "1" * 5000)
    with pytest.raises(ReactionSyntaxError, match="above 100"):
        feasibly.parse_formula("Fe+1000")


@pytest.mark.parametrize("kind", ["json", "toml"])
def test_deeply_nested_species_file_is_refused(kind: str) -> None:
    # Deeply nested JSON or TOML raised RecursionError.
    if kind == "json":
        text, name = "[" * 100_000 + "]" * 100_000, "deep.json"
    else:
        text, name = "x = " + "[" * 100_000 + "]" * 100_000, "deep.toml"
    assert "nested" in _problems(text, name)
    shallow = "[" * 70 + "]" * 70
    assert "nested more than 64 deep" in _problems(shallow, "deep.json")


def test_oversized_species_file_is_refused(tmp_path: Path) -> None:
    big = tmp_path / "big.json"
    with big.open("wb") as fh:
        fh.truncate(33 * 2**20)  # a sparse file: no real disk use
    with pytest.raises(DataFileError, match="larger than 32 MiB"):
        Library.from_file(big)


def test_user_file_cannot_silently_replace_a_shipped_entry(tmp_path: Path) -> None:
    # A user species file silently replaced the shipped CO2(g) (ΔrG° +38.9 → −9,466 kJ/mol).
    shipped = default_library()["CO2(g)"]
    fake = _entry(formula="CO2", form=None)
    fake["id"] = "CO2(g)"
    fake["dHf_298"] = {"value": -1e7, "u": 1.0, "source": "crafted"}
    del fake["form"]
    path = tmp_path / "crafted.json"
    path.write_text(_doc(fake))
    user = Library.from_file(path)
    with pytest.raises(DataFileError, match="replace_shipped=True"):
        default_library().with_species(user)
    replaced = default_library().with_species(user, replace_shipped=True)
    assert replaced["CO2(g)"].dHf.value == -1e7 and shipped.dHf.value != -1e7
    assert replaced.replaced == (("CO2(g)", "library", "user file crafted.json"),)
    assert ("CO2(g)", "user file crafted.json") in replaced.user_entries()


def test_user_file_may_add_species(tmp_path: Path) -> None:
    path = tmp_path / "mine.json"
    path.write_text(_doc(_entry()))
    lib = default_library().with_species(Library.from_file(path))
    assert lib["CH4(g,mine)"].origin == "user file mine.json" and lib.replaced == ()
