"""Decision records: round trip, bitwise reproduction, tamper evidence, malformed input, files.

Outside references: ``jsonschema`` (the reference JSON Schema implementation) validating records
against the published ``data/record-schema.json`` checks our own validator; the records'
recomputation is checked against the kernel run directly (same seed → same bits).
"""

from __future__ import annotations

import copy
import json
import os
from pathlib import Path
from typing import Any

import jsonschema
import pytest

import feasibly
from feasibly._files import data_text
from feasibly.cli import main
from feasibly.errors import FeasiblyError, RecordError
from feasibly.records import (
    load_record,
    make_record,
    record_from,
    record_hash,
    record_html,
    record_markdown,
    validate_record,
    verify_record,
    write_record,
)
from feasibly.uncertainty.inputs import parse_override

EXAMPLE_SPECIES = Path(__file__).resolve().parents[2] / "data" / "examples" / "my-species.toml"
SCHEMA = json.loads(data_text("record-schema.json"))


@pytest.fixture(scope="module")
def record() -> dict[str, Any]:
    """A call with partial pressures, an override with its reason, a correlation and cautions."""
    return make_record(
        "Fe3O4 + H2 -> Fe + H2O",
        T_range=("500 K", "1300 K"),
        points=5,
        balance=True,
        samples=4096,  # 2^12: small for speed; reproduction is bitwise at any N
        seed=20261201,
        partial_pressures={"H2O": "0.1 bar"},
        overrides=[parse_override("Fe3O4(cr):dHf ± 6 kJ/mol 95%; our own DSC, run 12")],
        correlations={(("Fe3O4(cr)", "dHf"), ("H2O(g)", "dHf")): 0.3},
        author="A. Chemist",
        reviewer="B. Reviewer",
        rationale="Pilot reduction of a magnetite charge.",
    )


def _resealed(doc: dict[str, Any]) -> dict[str, Any]:
    """The record re-hashed after an edit (a careful forger's version)."""
    from feasibly.records.document import _seal

    doc = copy.deepcopy(doc)
    doc.pop("integrity")
    return _seal(doc)


# --- what a record holds ------------------------------------------------------------------------
def test_record_holds_what_a_reviewer_needs(record: dict[str, Any]) -> None:
    lib = feasibly.default_library()
    assert record["reaction"]["entered"] == "Fe3O4 + H2 -> Fe + H2O"
    assert record["reaction"]["balanced"] == "Fe3O4 + 4 H2 -> 3 Fe + 4 H2O"
    assert record["reaction"]["balance"] is True
    assert record["data"] == {
        "library_version": lib.version,
        "library_sha256": lib.content_hash,
        "user_files": [],
        "sources": dict(lib.meta["sources"]),
    }
    # each data owner's terms travel with the record (issue 11: licence hygiene)
    assert "Apache" in record["data"]["sources"]["nasa-glenn-2002"]["licence"]
    ids = {s["id"] for s in record["species"]}
    assert {"Fe3O4(cr)", "H2(g)", "H2O(g)", "Fe(cr,alpha)"} <= ids
    fe3o4 = next(s for s in record["species"] if s["id"] == "Fe3O4(cr)")
    assert fe3o4["provenance"] == json.loads(json.dumps(lib["Fe3O4(cr)"].provenance()))
    assert fe3o4["provenance"]["dHf_298_J_per_mol"]["uncertainty"]["convention"]
    unc = record["uncertainty"]
    assert (unc["method"], unc["seed"], unc["samples"], unc["confidence"]) == (
        "mc",
        20261201,
        4096,
        0.95,
    )
    assert unc["overrides"][0]["reason"] == "our own DSC, run 12"
    assert unc["correlations"] == [{"a": ["Fe3O4(cr)", "dHf"], "b": ["H2O(g)", "dHf"], "rho": 0.3}]
    assert record["conditions"]["partial_pressures_Pa"] == {"H2O": 10000.0}
    assert record["conditions"]["temperature"]["T_K"] == [500.0, 700.0, 900.0, 1100.0, 1300.0]
    assert set(record["environment"]) >= {"feasibly", "python", "numpy", "scipy", "platform"}
    assert record["review"]["rationale"] == "Pilot reduction of a magnetite charge."
    res = record["results"]
    assert [r["verdict"] for r in res["uncertainty"]["rows"]][-1] == "feasible"
    assert res["uncertainty"]["feasible_window"] and res["uncertainty"]["sensitivity"]
    assert any("flammable" in c["message"] for c in res["assessment"]["cautions"])
    assert res["summary"]["verdict"] == "feasible in part of the range"


def test_results_are_the_kernels_own(record: dict[str, Any]) -> None:
    """Outside check: the kernel run directly with the same inputs gives the recorded numbers."""
    from feasibly.uncertainty import assess_uncertainty

    u = assess_uncertainty(
        "Fe3O4 + H2 -> Fe + H2O",
        T_range=("500 K", "1300 K"),
        points=5,
        balance=True,
        samples=4096,
        seed=20261201,
        partial_pressures={"H2O": "0.1 bar"},
        overrides=[parse_override("Fe3O4(cr):dHf ± 6 kJ/mol 95%; our own DSC, run 12")],
        correlations={(("Fe3O4(cr)", "dHf"), ("H2O(g)", "dHf")): 0.3},
    )
    recorded = record["results"]["uncertainty"]["rows"]
    assert [r["P_feasible"] for r in recorded] == [float(p) for p in u.p_feasible]
    assert [r["dG_mean_J_per_mol"] for r in recorded] == [float(g) for g in u.G.mean]


# --- round trip and reproduction ----------------------------------------------------------------
def test_round_trip_export_load_verify_identical(record: dict[str, Any], tmp_path: Path) -> None:
    paths = write_record(
        record, tmp_path / "r.json", tmp_path / "r.html", path_markdown=tmp_path / "r.md"
    )
    assert [p.name for p in paths] == ["r.json", "r.html", "r.md"]
    loaded = load_record(tmp_path / "r.json")
    assert loaded == record
    result = verify_record(tmp_path / "r.json")
    assert result.identical, result.summary()
    assert result.summary().startswith("identical")


def test_same_seed_gives_bitwise_identical_results(record: dict[str, Any]) -> None:
    again = make_record(
        "Fe3O4 + H2 -> Fe + H2O",
        T_range=("500 K", "1300 K"),
        points=5,
        balance=True,
        samples=4096,
        seed=20261201,
        partial_pressures={"H2O": "0.1 bar"},
        overrides=[parse_override("Fe3O4(cr):dHf ± 6 kJ/mol 95%; our own DSC, run 12")],
        correlations={(("Fe3O4(cr)", "dHf"), ("H2O(g)", "dHf")): 0.3},
    )
    canon = {"sort_keys": True, "separators": (",", ":")}
    assert json.dumps(again["results"], **canon) == json.dumps(record["results"], **canon)
    other = make_record("Fe3O4 + H2 -> Fe + H2O", T="900 K", balance=True, samples=4096, seed=1)
    assert other["results"] != record["results"]  # the comparison can fail


@pytest.mark.parametrize(
    "kwargs",
    [
        {"T": "800 K"},  # standard values only
        {"T": ("650", "degC"), "samples": 2048, "seed": 5, "method": "sobol"},
        {"T_range": ("600 K", "800 K"), "points": 3, "samples": 4096, "seed": 9, "required_K": 2.5},
        {"T": "700 K", "samples": 4096, "seed": 2, "threshold": "-5 kJ/mol", "confidence": 0.9},
        {"T": "750 K", "seed": 11, "adaptive": True, "max_trials": 40_000},
        {"T": "700 K", "samples": 4096, "seed": 2, "standard_pressure": "1 atm"},
        {"T": "700 K", "samples": 4096, "seed": 3, "method": "mc-per-species"},
        {
            "T": "750 K",
            "seed": 12,
            "adaptive": True,
            "max_trials": 40_000,
            "method": "mc-per-species",
        },
    ],
    ids=[
        "standard-only",
        "sobol-degC",
        "required-K",
        "threshold",
        "adaptive",
        "1-atm",
        "per-species",
        "per-species-adaptive",
    ],
)
def test_every_kind_of_call_reproduces(kwargs: dict[str, Any]) -> None:
    rec = make_record("MgCO3 -> MgO + CO2", **kwargs)
    result = verify_record(rec)
    assert result.identical, result.summary()


def test_user_species_travel_with_the_record(tmp_path: Path) -> None:
    own = tmp_path / "own.toml"
    own.write_text(EXAMPLE_SPECIES.read_text("utf-8"), "utf-8")
    lib = feasibly.default_library().with_species(feasibly.Library.from_file(own))
    rec = make_record(
        "C9H10O3 + O2 -> CO2 + H2O", T="400 K", balance=True, library=lib, samples=4096, seed=3
    )
    entry = next(s for s in rec["species"] if s["id"] == "C9H10O3(cr)")
    assert entry["origin"] == "user file own.toml"
    assert entry["entry"]["dHf_298"]["source"] == "invented demo value"
    own.unlink()  # verification needs only the record
    assert verify_record(rec).identical


def test_a_run_without_seed_is_refused() -> None:
    from feasibly.uncertainty import assess_uncertainty

    a = feasibly.assess("MgCO3 -> MgO + CO2", T="800 K")
    u = assess_uncertainty("MgCO3 -> MgO + CO2", T="800 K", samples=1024)
    with pytest.raises(RecordError, match="field seed"):
        record_from(a, u)
    drawn = make_record("MgCO3 -> MgO + CO2", T="800 K", samples=1024)  # a fresh seed, recorded
    assert isinstance(drawn["uncertainty"]["seed"], int)
    assert verify_record(drawn).identical


# --- tamper evidence ----------------------------------------------------------------------------
def _edit(doc: dict[str, Any], path: list[Any], value: Any) -> dict[str, Any]:
    doc = copy.deepcopy(doc)
    node = doc
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    return doc


@pytest.mark.parametrize(
    ("path", "value", "reported"),
    [
        (
            ["results", "uncertainty", "rows", 2, "P_feasible"],
            0.5,
            "results.uncertainty.rows[2].P_feasible",
        ),
        (
            ["species", 0, "provenance", "dHf_298_J_per_mol", "source"],
            "my-better-table",
            "species[0].provenance.dHf_298_J_per_mol.source",
        ),
        (["uncertainty", "seed"], 20261202, "results.uncertainty.seed"),
        (["review", "reviewer"], "Somebody Else", None),
    ],
    ids=["one-number", "one-source", "one-seed", "reviewer"],
)
def test_tampering_is_reported(
    record: dict[str, Any], tmp_path: Path, path: list[Any], value: Any, reported: str | None
) -> None:
    edited = _edit(record, path, value)
    target = tmp_path / "r.json"
    target.write_text(json.dumps(edited, indent=2, ensure_ascii=False), "utf-8")
    with pytest.raises(RecordError, match="changed after it was exported"):
        load_record(target)
    result = verify_record(target)
    assert not result.identical and result.tampered
    section = path[0]
    assert f"changed: {section}" in str(result.differences[0])
    if reported is not None:
        # Even with the hash recomputed by a forger, recomputation pinpoints the edit.
        fields = [d.field for d in verify_record(_resealed(edited)).differences]
        assert reported in fields


def test_data_drift_is_reported_as_such(record: dict[str, Any]) -> None:
    drifted = _resealed(_edit(record, ["data", "library_version"], "2020.1.0"))
    result = verify_record(drifted)
    assert any("data drift" in n for n in result.notes)
    assert [d.kind for d in result.differences] == ["data"]
    assert result.differences[0].field == "data.library_version"


# --- malformed records ----------------------------------------------------------------------------
def _drop(doc: dict[str, Any], *path: Any) -> dict[str, Any]:
    doc = copy.deepcopy(doc)
    node = doc
    for key in path[:-1]:
        node = node[key]
    del node[path[-1]]
    return doc


MALFORMED = [
    ("missing-field", lambda r: _drop(r, "uncertainty", "seed"), "field uncertainty.seed: missing"),
    (
        "wrong-type",
        lambda r: _edit(r, ["uncertainty", "samples"], "4096"),
        "field uncertainty.samples: must be a whole number or null, not text",
    ),
    (
        "float-seed",
        lambda r: _edit(r, ["uncertainty", "seed"], 7.5),
        "field uncertainty.seed: must be a whole number",
    ),
    (
        "unknown-field",
        lambda r: _edit(r, ["conditions", "pressure"], 1),
        "field conditions.pressure: unknown field",
    ),
    (
        "bad-verdict",
        lambda r: _edit(r, ["results", "uncertainty", "rows", 0, "verdict"], "maybe"),
        "field results.uncertainty.rows[0].verdict",
    ),
    (
        "code-as-distribution",
        lambda r: _edit(
            r,
            ["uncertainty", "overrides", 0, "distribution"],
            {"scipy": "__import__('os').system('true')", "args": [], "kwds": {}},
        ),
        "field uncertainty.overrides[0].distribution",
    ),
    (
        "empty-reason",
        lambda r: _edit(r, ["uncertainty", "overrides", 0, "reason"], ""),
        "field uncertainty.overrides[0].reason: must not be empty",
    ),
]


@pytest.mark.parametrize(("name", "make", "message"), MALFORMED, ids=[m[0] for m in MALFORMED])
def test_malformed_records_name_the_field(
    record: dict[str, Any], name: str, make: Any, message: str
) -> None:
    bad = make(record)
    with pytest.raises(RecordError) as err:
        validate_record(bad, check_hash=False)
    assert message in str(err.value)
    assert any(p.startswith("field ") for p in err.value.problems)
    # Outside check: the reference implementation rejects it too (float-seed: we are stricter,
    # since 7.5 is a valid JSON Schema "number" only, and 7.0 would be an "integer" there).
    assert not jsonschema.Draft202012Validator(SCHEMA).is_valid(bad) or name == "float-seed"


def test_published_schema_is_valid_and_agrees_with_jsonschema(record: dict[str, Any]) -> None:
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    jsonschema.Draft202012Validator(SCHEMA).validate(record)
    validate_record(record)
    plain = make_record("MgCO3 -> MgO + CO2", T="800 K")
    jsonschema.Draft202012Validator(SCHEMA).validate(plain)
    validate_record(plain)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("this is not json", "not JSON"),
        ("[1, 2]", "JSON object at the top level"),
        (
            '{"schema": "feasibly-record", "schema_version": 2}',
            "schema_version: 2 is not a version",
        ),
        ('{"schema": "feasibly-species"}', "not a record"),
        ('{"schema": "feasibly-record", "schema_version": 1, "x": NaN}', "NaN is not a JSON"),
        ('{"schema": "feasibly-record", "schema": "feasibly-record"}', "appears twice"),
    ],
    ids=["not-json", "not-object", "version", "other-schema", "nan", "duplicate-key"],
)
def test_unreadable_records_exit_2_without_traceback(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], text: str, message: str
) -> None:
    target = tmp_path / "bad.json"
    target.write_text(text, "utf-8")
    with pytest.raises(RecordError, match=message):
        load_record(target)
    code = main(["verify", str(target)])
    out, err = capsys.readouterr()
    assert code == 2
    assert message in err and "Traceback" not in err + out


def test_malformed_fields_from_the_command_line(
    record: dict[str, Any], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    target = tmp_path / "bad.json"
    target.write_text(json.dumps(_drop(record, "reaction", "entered")), "utf-8")
    code = main(["verify", str(target)])
    _, err = capsys.readouterr()
    assert code == 2 and "field reaction.entered: missing" in err and "Traceback" not in err
    assert main(["verify", str(tmp_path / "absent.json")]) == 2


def test_cli_verify_exit_codes(
    record: dict[str, Any], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    good = tmp_path / "good.json"
    write_record(record, good)
    assert main(["verify", str(good)]) == 0
    assert "identical" in capsys.readouterr().out
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(_edit(record, ["uncertainty", "seed"], 1)), "utf-8")
    assert main(["verify", str(bad), "--json"]) == 1
    report = json.loads(capsys.readouterr().out)
    assert report["identical"] is False and report["tampered"] is True


def test_recomputation_that_fails_is_a_difference(record: dict[str, Any]) -> None:
    broken = _resealed(_edit(record, ["reaction", "entered"], "Fe3O4 + Unobtainium -> Fe"))
    result = verify_record(broken)
    assert [d.kind for d in result.differences] == ["recompute"]
    assert "could not recompute" in str(result.differences[0])


# --- files ----------------------------------------------------------------------------------------
def test_writes_are_atomic_and_never_overwrite_unasked(
    record: dict[str, Any], tmp_path: Path
) -> None:
    target = tmp_path / "r.json"
    target.write_text("keep me", "utf-8")
    with pytest.raises(RecordError, match="file exists"):
        write_record(record, target, tmp_path / "r.html")
    assert target.read_text("utf-8") == "keep me"
    assert not (tmp_path / "r.html").exists()  # nothing written when any target exists
    write_record(record, target, tmp_path / "r.html", overwrite=True)
    assert load_record(target) == record
    assert sorted(os.listdir(tmp_path)) == ["r.html", "r.json"]  # no temporary files left


def test_a_record_changed_in_memory_is_not_written(record: dict[str, Any], tmp_path: Path) -> None:
    changed = _edit(record, ["review", "author"], "Someone")
    with pytest.raises(RecordError, match="changed after"):
        write_record(changed, tmp_path / "r.json")
    assert not (tmp_path / "r.json").exists()


def test_hash_is_over_the_canonical_form(record: dict[str, Any]) -> None:
    shuffled = json.loads(json.dumps(record, indent=4, sort_keys=True))
    assert record_hash(shuffled) == record["integrity"]["content_sha256"]
    assert record_hash(_edit(record, ["created"], "2000-01-01T00:00:00+00:00")) != record_hash(
        record
    )


# --- reports --------------------------------------------------------------------------------------
def test_html_report_is_self_contained_and_escapes_text(record: dict[str, Any]) -> None:
    rec = _resealed(_edit(record, ["review", "rationale"], "<script>alert('x')</script> & more"))
    html = record_html(rec)
    assert "<script" not in html and "&lt;script&gt;" in html
    assert "http://" not in html.replace("http://www.w3.org/2000/svg", "")
    assert "https://" not in html and "src=" not in html
    assert "default-src 'none'" in html
    assert html.count("<svg xmlns") == 2
    assert "P(feasible) / %" in html and "temperature T / K" in html
    assert "FEASIBLE" not in html and "feasible in part of the range" in html
    assert "process-safety review" in html and "flammable" in html
    assert "our own DSC, run 12" in html and "Fe₃O₄ + 4 H₂ → 3 Fe + 4 H₂O" in html


def test_report_of_a_standard_only_call_has_a_figure_and_says_so() -> None:
    html = record_html(make_record("MgCO3 -> MgO + CO2", T_range=("500 K", "900 K"), points=5))
    assert html.count("<svg xmlns") == 1
    assert "No uncertainty analysis was made" in html


def test_markdown_export(record: dict[str, Any]) -> None:
    rec = _resealed(_edit(record, ["review", "author"], "<img src=x onerror=alert(1)>"))
    md = record_markdown(rec)
    assert md.startswith("# Feasibility decision record: Fe₃O₄ + 4 H₂ → 3 Fe + 4 H₂O")
    assert "| 1,300.00 |" in md and "our own DSC, run 12" in md
    assert "<img" not in md and "&lt;img" in md


def test_record_error_is_a_feasibly_error() -> None:
    err = RecordError("x.json", ["field a: missing", "field b: wrong"])
    assert isinstance(err, FeasiblyError) and isinstance(err, ValueError)
    assert err.problems == ["field a: missing", "field b: wrong"]
    assert "2 problem(s)" in str(err)


def test_required_conversion_travels_and_verifies(tmp_path: Path) -> None:
    # The conversion criterion is recomputed from the record's own inputs by verify.
    from feasibly.cli import main

    path = tmp_path / "reformer.json"
    argv = [
        "assess",
        "CH4 + H2O -> CO + 3 H2",
        "--T-range",
        "900",
        "1100",
        "K",
        "--points",
        "3",
        "--feed",
        "CH4:1, H2O:3",
        "--require-conversion",
        "90%",
        "--key",
        "CH4",
        "--P",
        "5",
        "bar",
        "--samples",
        "1024",
        "--seed",
        "9",
        "--record",
        str(path),
    ]
    assert main(argv) == 0
    doc = json.loads(path.read_text(encoding="utf-8"))
    assert doc["conversion"]["key"] == "CH4" and doc["conversion"]["P_Pa"] == 5e5
    assert doc["results"]["conversion"]["rows"][0]["P_meets_required"] is not None
    assert verify_record(path).identical
    assert "Required conversion of CH4" in path.with_suffix(".html").read_text(encoding="utf-8")
    doc["results"]["conversion"]["rows"][0]["conversion"] += 0.01
    result = verify_record(doc)
    assert not result.identical
    assert any("conversion" in d.field for d in result.differences)


def test_record_of_a_call_at_required_conversion_verifies_and_says_so() -> None:
    # Ammonia at 200 bar: the standard values say "not favourable" over 600–800 K, while the
    # equilibrium conversion is 24–70 %; the record's call must be on the user's conditions.
    from feasibly import assess
    from feasibly.equilibrium import conversion_assessment

    conv_in = {"feed": "N2:1, H2:3", "key": "N2", "required": "20%", "P": "200 bar"}
    a = assess("N2 + 3 H2 -> 2 NH3", T_range=("600 K", "800 K"), points=3, at_conversion=conv_in)
    conv = conversion_assessment(
        a.reaction, (a.standard.T, "K"), "N2:1, H2:3", "N2", "20%", "200 bar"
    )
    inputs = {
        "feed": {"N2": 1.0, "H2": 3.0},
        "key": "N2",
        "required": 0.2,
        "P_Pa": 2e7,
        "samples": None,
        "seed": None,
        "confidence": 0.95,
    }
    rec = record_from(a, conversion=conv, conversion_inputs=inputs)
    jsonschema.Draft202012Validator(SCHEMA).validate(rec)
    assert rec["conditions"]["call_at_required_conversion"] is True
    summary = rec["results"]["summary"]
    assert summary["verdict"] == "favourable"
    assert "20% conversion of N2" in summary["headline"] and "200 bar" in summary["headline"]
    assert "No uncertainty analysis was made" in summary["headline"]
    assert verify_record(rec).identical
    # A call at a required conversion cannot be recorded beside another conversion's inputs.
    with pytest.raises(RecordError, match="required conversion"):
        record_from(a, conversion=conv, conversion_inputs={**inputs, "required": 0.3})


def test_species_identity_travels_in_the_record() -> None:
    rec = make_record("{calcium carbonate} -> CaO + {124-38-9}", T="1000 K")
    used = rec["results"]["assessment"]["species_as_used"]
    assert used[0] == {
        "written": "{calcium carbonate}",
        "formula": "CaCO3",
        "name": "calcium carbonate",
        "cas": "471-34-1",
    }
    assert used[2]["written"] == "{124-38-9}" and used[2]["name"] == "carbon dioxide"
    assert verify_record(rec).identical


def test_report_names_each_species_as_used() -> None:
    html = record_html(make_record("{calcium carbonate} -> CaO + CO2", T="1000 K"))
    assert "CaCO3 = calcium carbonate (CAS 471-34-1), written {calcium carbonate}" in html
    assert "CO2 = carbon dioxide (CAS 124-38-9)" in html


def test_cli_record_conversion_uses_the_calls_draws_and_overrides(tmp_path: Path) -> None:
    path = tmp_path / "reforming.json"
    argv = [
        "assess",
        "CH4 + H2O -> CO + 3 H2",
        "--T-range",
        "880",
        "960",
        "K",
        "--points",
        "3",
        "--feed",
        "CH4:1, H2O:3",
        "--require-conversion",
        "60%",
        "--key",
        "CH4",
        "--P",
        "5",
        "bar",
        "--samples",
        "2048",
        "--seed",
        "9",
        "--override",
        "CH4(g):dHf = -72.0 ± 0.5 kJ/mol; invented for this test",
        "--record",
        str(path),
    ]
    assert main(argv) == 0
    rec = json.loads(path.read_text())
    conv_in = rec["conversion"]
    assert conv_in["shared_draws"] is True
    assert (
        (conv_in["samples"], conv_in["seed"])
        == (2048, 9)
        == (
            rec["uncertainty"]["samples"],
            rec["uncertainty"]["seed"],
        )
    )
    assert rec["uncertainty"]["overrides"][0]["target"] == "CH4(g)"
    assert rec["results"]["conversion"]["trials"] == 2048
    assert verify_record(path).identical


def test_a_record_refuses_conversion_bands_from_other_draws() -> None:
    from feasibly import assess, assess_uncertainty
    from feasibly.equilibrium import conversion_assessment

    a = assess("CH4 + H2O -> CO + 3 H2", T_range=("880 K", "960 K"), points=3)
    u = assess_uncertainty(a.reaction, T_range=("880 K", "960 K"), points=3, samples=1024, seed=1)
    own = conversion_assessment(
        a.reaction, (a.standard.T, "K"), "CH4:1, H2O:3", "CH4", "60%", "5 bar", samples=1024, seed=2
    )
    inputs = {"feed": {"CH4": 1.0, "H2O": 3.0}, "key": "CH4", "required": 0.6, "P_Pa": 5e5}
    inputs |= {"samples": 1024, "seed": 2, "confidence": 0.95}
    with pytest.raises(RecordError, match="one set of draws"):
        record_from(a, u, conversion=own, conversion_inputs=inputs)
