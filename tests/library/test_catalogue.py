"""The shipped library's integrity, look-up, and validation of user species files."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import numpy as np
import pytest

import feasibly
from feasibly import DataFileError, Library, UnknownSpecies
from feasibly.library.catalogue import canonical_hash, standard_uncertainty

EXAMPLE = Path(__file__).resolve().parents[2] / "data" / "examples" / "my-species.toml"


def test_runs_against_the_installed_package() -> None:
    # The suite must exercise the wheel (with its data files), not the source tree.
    assert "site-packages" in feasibly.__file__, feasibly.__file__


def test_shipped_library_size_version_and_hash(lib: Library) -> None:
    assert len(lib) >= 800
    assert lib.version == "2026.12.2"
    assert len(lib.content_hash) == 64
    phases = {sp.phase for sp in lib}
    assert {"g", "l", "cr"} <= phases


def test_every_value_has_source_and_standard_uncertainty(lib: Library) -> None:
    for sp in lib:
        for v in (sp.dHf, sp.S298):
            assert v.source and np.isfinite(v.u) and v.u >= 0, sp.id
            if v.assumed:
                assert v.uncertainty["source"].startswith("policy:"), sp.id
        assert sp.cp_u_rel >= 0 and sp.cp_source.get("source"), sp.id


def test_reference_states_have_zero_enthalpy(lib: Library) -> None:
    refs = {sp.reference_state_of: sp for sp in lib if sp.reference_state_of}
    for element in ("H", "O", "N", "C", "Cl", "S", "Fe", "Ca", "Na"):
        assert element in refs, element
        assert refs[element].dHf.value == 0.0
    assert refs["C"].form == "graphite"


@pytest.mark.parametrize(
    ("query", "expected_id"),
    [
        ("CO2", "CO2(g)"),
        ("carbon dioxide", "CO2(g)"),
        ("Carbon Dioxide", "CO2(g)"),
        ("124-38-9", "CO2(g)"),  # CAS of CO2, from memory (also in the library's source tables)
        ("H2O(l)", "H2O(l)"),
        ("methanol", "CH3OH(g)"),
    ],
)
def test_lookup(lib: Library, query: str, expected_id: str) -> None:
    assert expected_id in [sp.id for sp in lib.find(query)]


def test_unknown_species_suggests_close_matches(lib: Library) -> None:
    with pytest.raises(UnknownSpecies) as info:
        lib["CO3(g)"]
    assert "Did you mean" in str(info.value)
    assert info.value.suggestions


def test_search_ranks_exact_first(lib: Library) -> None:
    hits = lib.search("CH4")
    assert hits[0].formula == "CH4"


def test_standard_uncertainty_conventions() -> None:
    assert standard_uncertainty(2.0, "standard") == 2.0
    assert standard_uncertainty(2.0, "k=2") == 1.0
    assert standard_uncertainty(1.96, "expanded-95") == 1.0  # JCGM 100:2008 Table G.1
    assert standard_uncertainty(3**0.5, "half-width-rectangular") == pytest.approx(1.0)
    for bad in (-1.0, float("nan")):
        with pytest.raises(feasibly.InvalidUncertainty):
            standard_uncertainty(bad, "standard")
    with pytest.raises(feasibly.InvalidUncertainty, match="unknown coverage"):
        standard_uncertainty(1.0, "95 percent-ish")


def test_example_user_file_loads_and_joins_the_library(lib: Library) -> None:
    user = Library.from_file(EXAMPLE)
    sp = user["C9H10O3(cr)"]
    assert sp.dHf.u == pytest.approx(8000.0 / 1.96)
    assert sp.S298.u == pytest.approx(5.0)
    assert sp.origin == "user file my-species.toml"
    merged = lib.with_species(user)
    assert "C9H10O3(cr)" in merged and len(merged) == len(lib) + 1
    assert merged.user_files == (str(EXAMPLE),)  # records name the file the entries came from
    # Maier–Kelley increments: h(T) = ∫Cp dT from 298.15 K, checked by numerical quadrature (scipy).
    from scipy.integrate import quad

    cp = sp.cp_model
    expected = quad(lambda t: float(cp.cp(np.array(t))), 298.15, 400.0)[0]
    assert sp.enthalpy(np.array([400.0]))[0] - sp.dHf.value == pytest.approx(expected, rel=1e-9)


def _good_entry() -> dict:
    return {
        "formula": "CH4",
        "phase": "g",
        "T_range_K": [300.0, 600.0],
        "dHf_298": {"value": -74600.0, "u": 300.0, "source": "my lab notebook p. 12"},
        "S_298": {"value": 186.3, "u": 0.5, "source": "my lab notebook p. 12"},
        "cp": {"model": "constant", "cp_J_per_mol_K": 35.7, "u_rel": 0.05, "source": "estimate"},
    }


def _doc(*entries: dict) -> str:
    return json.dumps({"schema": "feasibly-species", "schema_version": 1, "species": list(entries)})


def test_minimal_user_entry() -> None:
    lib = Library.from_text(_doc(_good_entry()), "mine.json")
    sp = lib["CH4(g)"]
    assert sp.molar_mass == pytest.approx(16.043, abs=1e-3)
    assert sp.enthalpy(np.array([400.0]))[0] == pytest.approx(-74600.0 + 35.7 * (400 - 298.15))


@pytest.mark.parametrize(
    ("mutate", "fragment"),
    [
        (lambda e: e.pop("dHf_298"), "entry 0 (CH4): field dHf_298: missing"),
        (lambda e: e["dHf_298"].pop("u"), "field dHf_298: an uncertainty is needed"),
        (lambda e: e["dHf_298"].update(u=-1.0), "field dHf_298.u: -1.0 is not a finite number ≥ 0"),
        (lambda e: e["S_298"].update(u=float("nan")), "field S_298.u"),
        (lambda e: e.update(phase="gas"), "field phase: 'gas' is not one of g, l, cr, aq"),
        (lambda e: e.update(formula="CH4Xy"), "field formula"),
        (lambda e: e.update(T_range_K=[600.0, 300.0]), "field T_range_K"),
        (lambda e: e.update(T_range_K=[0.0, 300.0]), "field T_range_K"),
        (lambda e: e.update(colour="blue"), "field colour: unknown key"),
        (lambda e: e["cp"].update(model="shomate"), "field cp.model: 'shomate' is not one of"),
        (lambda e: e["cp"].pop("cp_J_per_mol_K"), "field cp.cp_J_per_mol_K: missing"),
        (lambda e: e["dHf_298"].update(source=""), "field dHf_298.source: a source"),
        (lambda e: e.update(elements={"C": 1, "H": 3}), "does not match formula"),
        (lambda e: e.update(cas="12-3"), "field cas"),
        (
            lambda e: e["dHf_298"].update(uncertainty={"stated": 1.0, "convention": "2 sigma"}),
            "unknown coverage convention",
        ),
    ],
)
def test_bad_entries_name_entry_and_field(mutate, fragment: str) -> None:
    entry = _good_entry()
    mutate(entry)
    with pytest.raises(DataFileError) as info:
        Library.from_text(_doc(entry), "mine.json")
    assert fragment in str(info.value)
    assert str(info.value).startswith("mine.json:")


def test_every_problem_is_reported_at_once() -> None:
    a, b = _good_entry(), _good_entry()
    a["dHf_298"]["u"] = -5.0
    b["phase"] = "plasma"
    b["formula"] = "CH3"
    with pytest.raises(DataFileError) as info:
        Library.from_text(_doc(a, b), "mine.json")
    assert len(info.value.problems) == 2
    assert "entry 0" in info.value.problems[0] and "entry 1" in info.value.problems[1]


def test_duplicate_ids_rejected() -> None:
    with pytest.raises(DataFileError, match="duplicate of entry 0"):
        Library.from_text(_doc(_good_entry(), _good_entry()), "mine.json")


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("{not json", "not valid JSON"),
        ("[]", "table at the top level"),
        ('{"schema": "feasibly-species", "schema_version": 9, "species": []}', "schema_version"),
        ('{"schema": "other", "schema_version": 1, "species": []}', "field schema"),
    ],
)
def test_malformed_files(text: str, fragment: str) -> None:
    with pytest.raises(DataFileError, match=fragment):
        Library.from_text(text, "bad.json")


def test_malformed_toml_and_missing_file(tmp_path: Path) -> None:
    bad = tmp_path / "bad.toml"
    bad.write_text("species = [", encoding="utf-8")
    with pytest.raises(DataFileError, match="not valid TOML"):
        Library.from_file(bad)
    with pytest.raises(DataFileError, match="cannot read"):
        Library.from_file(tmp_path / "absent.json")


def test_tampered_hash_is_detected() -> None:
    species = [_good_entry()]
    doc = {
        "schema": "feasibly-species",
        "schema_version": 1,
        "species": species,
        "content_sha256": canonical_hash(species),
    }
    Library.from_text(json.dumps(doc), "ok.json")
    tampered = copy.deepcopy(doc)
    tampered["species"][0]["dHf_298"]["value"] = -74000.0
    with pytest.raises(DataFileError, match="changed after it was hashed"):
        Library.from_text(json.dumps(tampered), "tampered.json")


# --- the prebuilt index of the shipped file (feasibly.library._index) ---------------------------


def _shipped_bytes() -> bytes:
    from feasibly._files import data_bytes

    return data_bytes("species-library.json")


def test_index_reads_every_entry_back_as_the_full_reader_does() -> None:
    from feasibly.library._index import build_index, read_index
    from feasibly.library._reader import _from_index, _parse_document, _read_species

    data = _shipped_bytes()
    text = data.decode("utf-8")
    index = read_index(data, json.dumps(build_index(data)))
    assert index is not None
    pending, meta = _from_index(index, text, "species-library.json", "library")
    eager, eager_meta = _read_species(
        _parse_document(text, "species-library.json"), "species-library.json", "library", True
    )
    assert meta == eager_meta
    assert [p.id for p in pending] == [sp.id for sp in eager]
    for p, sp in zip(pending, eager, strict=True):
        built = p.build()
        assert (built.formula, built.names, built.cas) == (sp.formula, sp.names, sp.cas)
        assert (p.formula, p.names, p.cas) == (sp.formula, sp.names, sp.cas)
        assert built.provenance() == sp.provenance()
        assert dict(built.raw) == dict(sp.raw)


def test_every_shipped_entry_validates(lib: Library) -> None:
    # Entries are validated on first use; this builds all of them, so a bad one fails here.
    assert len(list(lib)) == len(lib)


def test_stale_or_foreign_index_is_ignored() -> None:
    from feasibly.library._index import build_index, read_index

    data = _shipped_bytes()
    index = json.dumps(build_index(data))
    assert read_index(data + b" ", index) is None  # the file changed after the index was built
    assert read_index(data, "{not json") is None
    assert read_index(data, json.dumps({"format": "other"})) is None
    assert read_index(data, None) is None


def test_index_is_not_built_for_a_tampered_file() -> None:
    from feasibly.library._index import build_index

    doc = json.loads(_shipped_bytes())
    doc["species"][0]["dHf_298"]["value"] += 1.0  # content no longer matches content_sha256
    with pytest.raises(ValueError, match="content_sha256"):
        build_index(json.dumps(doc).encode())


def test_a_bad_entry_is_reported_with_entry_and_field_when_first_used() -> None:
    from feasibly.library._index import build_index, read_index
    from feasibly.library._reader import _from_index

    bad = _good_entry()
    bad["S_298"]["u"] = -1.0
    species = [_good_entry() | {"formula": "C2H6", "T_range_K": [300.0, 600.0]}, bad]
    species[0]["id"] = "C2H6(g)"
    doc = {
        "schema": "feasibly-species",
        "schema_version": 1,
        "content_sha256": canonical_hash(species),
        "species": species,
    }
    data = json.dumps(doc, indent=1).encode()
    index = read_index(data, json.dumps(build_index(data)))
    assert index is not None
    pending, _ = _from_index(index, data.decode(), "mine.json", "user")
    lazy = Library(pending)
    assert "CH4(g)" in lazy  # look-up needs no validation
    with pytest.raises(DataFileError, match=r"entry 1 \(CH4\): field S_298.u"):
        lazy["CH4(g)"]
