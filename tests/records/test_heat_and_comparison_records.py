"""Heat balances and formation-line comparisons carried in decision records: what they hold, the
round trip, verification that recomputes them, tamper evidence naming the field, the schema.

Outside references: ``jsonschema`` (the reference JSON Schema implementation) validates the
records against the published ``data/record-schema.json``; the recorded numbers are compared
with the kernel run directly (:func:`feasibly.heat.heat_duty`,
:func:`feasibly.heat.adiabatic_temperature`, :func:`feasibly.comparison.formation_lines`),
which tests/reference/test_heat_vs_references.py checks against Cantera, ATcT/CRC (via
``chemicals``) and NIST-JANAF.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path
from typing import Any

import jsonschema
import numpy as np
import pytest

import feasibly
from feasibly._files import data_text
from feasibly.cli import main
from feasibly.errors import FeasiblyError, RecordError
from feasibly.heat import adiabatic_temperature, heat_duty
from feasibly.records import (
    load_record,
    record_from,
    record_html,
    record_markdown,
    validate_record,
    verify_record,
    write_record,
)

SCHEMA = json.loads(data_text("record-schema.json"))
BURN = "CH4 + 2 O2 -> CO2 + 2 H2O"
FEED = "CH4:1, O2:2.5, N2:9"
COMPOUNDS = ["Cu2O", "Fe3O4", "Cr2O3"]


@pytest.fixture(scope="module")
def call() -> tuple[Any, Any]:
    a = feasibly.assess(BURN, T_range=("400 K", "1000 K"), points=3)
    # 2^12 trials: small for speed; reproduction is bitwise at any N
    u = feasibly.assess_uncertainty(a.reaction, T_range=("400 K", "1000 K"), points=3,
                                    samples=4096, seed=5)  # fmt: skip
    return a, u


@pytest.fixture(scope="module")
def record(call: tuple[Any, Any]) -> dict[str, Any]:
    a, u = call
    return record_from(
        a,
        u,
        heat={"feed": FEED, "T_feed": "25 degC", "product": "H2O"},
        comparison={
            "compounds": COMPOUNDS,
            "T_range": ("600 K", "1400 K"),
            "points": 5,
            "samples": 4096,
            "seed": 3,
        },
        author="A. Chemist",
    )


def _resealed(doc: dict[str, Any]) -> dict[str, Any]:
    from feasibly.records.document import _seal

    doc = copy.deepcopy(doc)
    doc.pop("integrity")
    return _seal(doc)


def _at(doc: Any, path: list[Any]) -> Any:
    for key in path:
        doc = doc[key]
    return doc


def _nudged(doc: dict[str, Any], path: list[Any]) -> dict[str, Any]:
    """The record with one number changed in its 10th significant digit."""
    doc = copy.deepcopy(doc)
    parent = _at(doc, path[:-1])
    parent[path[-1]] = parent[path[-1]] * (1 + 1e-9)
    return doc


# --- what the record holds -----------------------------------------------------------------------
def test_the_record_holds_the_heat_inputs_and_the_kernels_own_numbers(
    record: dict[str, Any], call: tuple[Any, Any]
) -> None:
    a, u = call
    assert record["heat"] == {
        "feed": {"CH4": 1.0, "O2": 2.5, "N2": 9.0},
        "T_feed_K": 298.15,
        "conversion": 1.0,
        "key": None,
        "P_Pa": 100000.0,
        "product": "H2O",
    }
    heat = record["results"]["heat"]
    assert heat["shared_draws"] is True and heat["trials"] == 4096
    assert heat["product"] == "H2O"
    for row, t in zip(heat["rows"], a.standard.T, strict=True):
        d = heat_duty(BURN, (float(t), "K"), FEED, T_feed="298.15 K", product="H2O", call=u)
        assert d.interval and d.interval_per_kg_product and d.interval_per_kg_feed
        assert row["duty_J_per_mol"] == d.J_per_mol_reaction
        assert row["duty_J_per_mol_interval_95"] == list(d.interval)
        assert row["duty_J_per_kg_product"] == d.J_per_kg_product
        assert row["duty_J_per_kg_product_interval_95"] == list(d.interval_per_kg_product)
        assert row["duty_J_per_kg_feed"] == d.J_per_kg_feed
        assert row["duty_J_per_kg_feed_interval_95"] == list(d.interval_per_kg_feed)
        assert row["T_feed_K"] == {"CH4": 298.15, "O2": 298.15, "N2": 298.15}
    hot = adiabatic_temperature(BURN, FEED, "298.15 K", call=u)
    assert hot.interval is not None
    assert heat["adiabatic"]["adiabatic_T_K"] == hot.T_K
    assert heat["adiabatic"]["adiabatic_T_K_interval_95"] == list(hot.interval)
    assert heat["adiabatic"]["T_feed_K"] == 298.15


def test_per_kg_intervals_are_the_per_mol_draws_scaled() -> None:
    """At a fixed conversion the per-kg figures are the per-mole draws times a constant, so
    their intervals are the per-mole interval scaled by the same constants (up to rounding)."""
    d = heat_duty(BURN, "700 K", FEED, T_feed="298.15 K", samples=4096, seed=1)
    assert d.interval and d.interval_per_kg_product and d.interval_per_kg_feed
    assert d.J_per_kg_product is not None
    to_product = d.J_per_kg_product / d.J_per_mol_reaction
    to_feed = d.J_per_kg_feed / d.J_per_mol_reaction
    # 1e-12 relative: the quantile of scaled draws is the scaled quantile, rounding aside
    np.testing.assert_allclose(
        sorted(d.interval_per_kg_product), sorted(np.array(d.interval) * to_product), rtol=1e-12
    )
    np.testing.assert_allclose(d.interval_per_kg_feed, np.array(d.interval) * to_feed, rtol=1e-12)


def test_the_record_holds_the_comparison_and_the_kernels_own_lines(
    record: dict[str, Any],
) -> None:
    from feasibly.comparison import formation_lines

    assert record["comparison"] == {
        "compounds": COMPOUNDS,
        "reagent": "O2",
        "T_lo_K": 600.0,
        "T_hi_K": 1400.0,
        "points": 5,
        "samples": 4096,
        "seed": 3,
    }
    lines = formation_lines(COMPOUNDS, T_range=("600 K", "1400 K"), points=5, samples=4096, seed=3)
    assert lines.bands is not None
    res = record["results"]["comparison"]
    assert res["T_K"] == lines.T.tolist() and res["trials"] == 4096 and res["seed"] == 3
    for i, line in enumerate(res["lines"]):
        assert line["label"] == COMPOUNDS[i]
        assert line["dG_J_per_mol"] == lines.G[i].tolist()
        assert line["lo95_J_per_mol"] == lines.bands[0, i].tolist()
        assert line["hi68_J_per_mol"] == lines.bands[3, i].tolist()
    pairs = {(p["a"], p["b"]): p["P"] for p in res["p_below"]}
    assert set(pairs) == {("Cu2O", "Fe3O4"), ("Cu2O", "Cr2O3"), ("Fe3O4", "Cr2O3")}
    assert pairs[("Fe3O4", "Cr2O3")] == lines.p_below("Fe3O4", "Cr2O3").tolist()
    # Cr2O3 lies far below Fe3O4 (about 200 kJ/mol per O2): no draw puts Fe3O4 below it
    assert pairs[("Fe3O4", "Cr2O3")] == [0.0] * 5
    changes = res["lines"][0]["phase_changes"]
    assert changes and changes[0]["to"] == "Cu(l)"  # copper melts at 1358 K


# --- round trip, verification, tampering -------------------------------------------------------
def test_round_trip_and_verify_identical(record: dict[str, Any], tmp_path: Path) -> None:
    write_record(record, tmp_path / "r.json", tmp_path / "r.html", path_markdown=tmp_path / "r.md")
    loaded = load_record(tmp_path / "r.json")
    assert loaded == record
    result = verify_record(tmp_path / "r.json")
    assert result.identical, result.summary()
    html = (tmp_path / "r.html").read_text("utf-8")
    assert "Heat duty and adiabatic temperature" in html
    assert "Formation lines compared (per mole of O2)" in html
    assert "P(Cu2O below Fe3O4)" in html
    # the reductant ratios each oxide needs, as recorded (nominal, 3 significant figures)
    magnetite = record["results"]["comparison"]["lines"][1]
    assert "Fe3O4: CO/CO2" in html and "Fe3O4: H2/H2O" in html
    assert f"<td>{10 ** magnetite['log10_CO_per_CO2_needed']['nominal'][2]:.3g}</td>" in html
    md = (tmp_path / "r.md").read_text("utf-8")
    assert "## Heat duty" in md and "Adiabatic outlet temperature" in md
    assert "P(Fe3O4 below Cr2O3)" in md


TAMPER = [
    ["results", "heat", "rows", 1, "duty_J_per_mol"],
    ["results", "heat", "rows", 0, "duty_J_per_mol_interval_95", 0],
    ["results", "heat", "rows", 2, "duty_J_per_kg_product_interval_95", 1],
    ["results", "heat", "rows", 2, "duty_J_per_kg_feed"],
    ["results", "heat", "adiabatic", "adiabatic_T_K"],
    ["results", "heat", "adiabatic", "adiabatic_T_K_interval_95", 1],
    ["results", "comparison", "lines", 1, "dG_J_per_mol", 2],
    ["results", "comparison", "lines", 2, "hi95_J_per_mol", 4],
]


def _name(path: list[Any]) -> str:
    out = ""
    for key in path:
        out += f"[{key}]" if isinstance(key, int) else (f".{key}" if out else key)
    return out


@pytest.mark.parametrize("path", TAMPER, ids=[_name(p[2:]) for p in TAMPER])
def test_a_changed_number_fails_verification_naming_the_field(
    record: dict[str, Any], path: list[Any]
) -> None:
    edited = _nudged(record, path)
    with pytest.raises(RecordError, match="changed after it was exported"):
        validate_record(edited)
    plain_edit = verify_record(edited)
    assert plain_edit.tampered and "changed: results" in str(plain_edit.differences[0])
    # A forger who re-seals the hash is caught by the recomputation, at that very field.
    result = verify_record(_resealed(edited))
    assert not result.identical and not result.tampered
    assert [d.field for d in result.differences] == [_name(path)]
    assert f"{_name(path)}: recorded" in result.summary()


def test_a_changed_probability_fails_verification() -> None:
    """P(a below b) of lines that cross (carbon's CO and CO2 lines, the Boudouard equilibrium near
    980 K): edit one probability, and recomputation names it."""
    a = feasibly.assess("MgCO3 -> MgO + CO2", T="800 K")
    rec = record_from(
        a,
        comparison={
            "compounds": ["2 C + O2 -> 2 CO", "C + O2 -> CO2"],
            # 2 K apart around the crossing: the data's doubt moves it by a few kelvin
            "T_range": ("960 K", "1000 K"),
            "points": 21,
            "samples": 2048,
            "seed": 11,
        },
    )
    probabilities = rec["results"]["comparison"]["p_below"][0]["P"]
    k = int(np.argmin(np.abs(np.array(probabilities) - 0.5)))
    assert 0.0 < probabilities[k] < 1.0  # the lines cross in the range: a genuine probability
    edited = copy.deepcopy(rec)
    edited["results"]["comparison"]["p_below"][0]["P"][k] = probabilities[k] / 2
    result = verify_record(_resealed(edited))
    assert [d.field for d in result.differences] == [f"results.comparison.p_below[0].P[{k}]"]


@pytest.mark.parametrize(
    ("path", "value", "field"),
    [
        (["heat", "T_feed_K"], 350.0, "results.heat.rows[0].duty_J_per_mol"),
        (["heat", "feed", "N2"], 5.0, "results.heat.rows[0].duty_J_per_kg_feed"),
        (["comparison", "seed"], 4, "results.comparison.lines[0].lo95_J_per_mol[0]"),
    ],
    ids=["feed-temperature", "feed", "comparison-seed"],
)
def test_a_changed_input_shows_in_the_recomputed_results(
    record: dict[str, Any], path: list[Any], value: Any, field: str
) -> None:
    edited = copy.deepcopy(record)
    _at(edited, path[:-1])[path[-1]] = value
    result = verify_record(_resealed(edited))
    assert field in [d.field for d in result.differences]


def test_a_heat_record_without_draws_is_nominal_and_verifies() -> None:
    a = feasibly.assess("CaCO3 -> CaO + CO2", T="1173 K")
    rec = record_from(a, heat={"feed": "CaCO3:1", "T_feed": "298.15 K"})
    row = rec["results"]["heat"]["rows"][0]
    assert "duty_J_per_mol_interval_95" not in row
    assert rec["results"]["heat"]["shared_draws"] is False
    assert (
        row["duty_J_per_mol"]
        == heat_duty(
            "CaCO3 -> CaO + CO2", "1173 K", "CaCO3:1", T_feed="298.15 K"
        ).J_per_mol_reaction
    )
    # An endothermic step has no adiabatic temperature; the record says why.
    assert rec["results"]["heat"]["adiabatic"] is None
    assert "takes in" in rec["results"]["heat"]["adiabatic_note"]
    assert verify_record(rec).identical
    assert "Nominal data only" in record_html(rec)
    jsonschema.Draft202012Validator(SCHEMA).validate(rec)


def test_a_heat_record_at_the_equilibrium_conversion_verifies() -> None:
    """Heat at the equilibrium conversion: each draw of the call at its own extent, for the duty
    and for the adiabatic temperature; recorded, schema-valid, verified, shown."""
    a = feasibly.assess("CO + H2O -> CO2 + H2", T_range=("800 K", "1000 K"), points=2)
    u = feasibly.assess_uncertainty(a.reaction, T_range=("800 K", "1000 K"), points=2,
                                    samples=2048, seed=12)  # fmt: skip
    rec = record_from(a, u, heat={"feed": "CO:1, H2O:1", "T_feed": "500 K",
                                  "conversion": "equilibrium"})  # fmt: skip
    heat = rec["results"]["heat"]
    assert rec["heat"]["conversion"] == "equilibrium"
    for row in heat["rows"]:
        assert row["conversion"] is None
        lo, hi = row["extent_mol_interval_95"]
        assert lo < row["extent_mol"] < hi
        lo, hi = row["duty_J_per_mol_interval_95"]
        assert lo < row["duty_J_per_mol"] < hi
    hot = heat["adiabatic"]
    assert hot["conversion"] is None and "extent_mol_interval_95" in hot
    jsonschema.Draft202012Validator(SCHEMA).validate(rec)
    assert verify_record(rec).identical
    edited = _nudged(rec, ["results", "heat", "rows", 1, "extent_mol_interval_95", 0])
    assert [d.field for d in verify_record(_resealed(edited)).differences] == [
        "results.heat.rows[1].extent_mol_interval_95[0]"
    ]
    html = record_html(rec)
    assert "the equilibrium conversion at each temperature" in html
    assert "at the equilibrium conversion there" in html


# --- schema ---------------------------------------------------------------------------------------
def test_schema_accepts_heat_and_comparison_records(record: dict[str, Any]) -> None:
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    jsonschema.Draft202012Validator(SCHEMA).validate(record)
    validate_record(record)


MALFORMED = [
    (["heat", "conversion"], 1.5, "field heat.conversion"),
    (["heat", "T_feed_K"], -3.0, "field heat.T_feed_K"),
    (["heat", "colour"], "red", "field heat.colour: unknown field"),
    (["comparison", "reagent"], "Xe", "field comparison.reagent"),
    (["comparison", "samples"], "many", "field comparison.samples"),
    (["results", "heat", "rows", 0, "duty_J_per_mol_interval_95"], [1.0], "needs at least 2"),
    (["results", "comparison", "p_below", 0, "P", 0], 1.5, "above the maximum 1"),
]


@pytest.mark.parametrize(("path", "value", "message"), MALFORMED, ids=[m[2] for m in MALFORMED])
def test_malformed_sections_name_the_field(
    record: dict[str, Any], path: list[Any], value: Any, message: str
) -> None:
    bad = copy.deepcopy(record)
    _at(bad, path[:-1])[path[-1]] = value
    with pytest.raises(RecordError) as err:
        validate_record(bad, check_hash=False)
    assert message in str(err.value)
    # Outside check: the reference implementation rejects it too.
    assert not jsonschema.Draft202012Validator(SCHEMA).is_valid(bad)


# --- refusals -----------------------------------------------------------------------------------
@pytest.mark.parametrize(
    ("kwargs", "fragment"),
    [
        ({"heat": {"feed": "CH4:1, O2:2", "colour": "red"}}, "field heat.colour: unknown"),
        ({"heat": {"T_feed": "298.15 K"}}, "field heat.feed: missing"),
        (
            {"comparison": {"compounds": ["Cu2O"], "samples": 100}},
            "field comparison.seed",
        ),
        ({"comparison": {"compounds": "Cu2O"}}, "field comparison.compounds"),
    ],
    ids=["unknown-heat-field", "no-feed", "no-seed", "compounds-as-text"],
)
def test_refusals_name_the_field(kwargs: dict[str, Any], fragment: str) -> None:
    a = feasibly.assess(BURN, T="700 K")
    with pytest.raises(RecordError, match=fragment):
        record_from(a, **kwargs)


def test_a_bad_heat_input_is_a_project_error() -> None:
    a = feasibly.assess(BURN, T="700 K")
    with pytest.raises(FeasiblyError, match="'conversion'"):
        record_from(a, heat={"feed": "CH4:1, O2:2", "conversion": 2})


# --- command line ---------------------------------------------------------------------------------
def test_cli_record_carries_the_heat_balance(tmp_path: Path) -> None:
    path = tmp_path / "kiln.json"
    argv = [
        "assess", "CaCO3 -> CaO + CO2", "--T-range", "1000", "1200", "K", "--points", "3",
        "--samples", "2048", "--seed", "4", "--heat", "--feed", "CaCO3:1", "--feed-T", "25",
        "degC", "--record", str(path),
    ]  # fmt: skip
    assert main(argv) == 0
    doc = json.loads(path.read_text("utf-8"))
    assert doc["heat"]["T_feed_K"] == 298.15 and doc["heat"]["feed"] == {"CaCO3": 1.0}
    assert len(doc["results"]["heat"]["rows"]) == 3
    assert doc["results"]["heat"]["trials"] == doc["results"]["uncertainty"]["trials"]
    assert verify_record(path).identical
    assert "Heat duty and adiabatic temperature" in path.with_suffix(".html").read_text("utf-8")
    assert "Heat duty" in record_markdown(doc)


def test_cli_record_carries_a_comparison_from_the_calls_seed(tmp_path: Path) -> None:
    path = tmp_path / "reduce.json"
    argv = [
        "assess", "Fe3O4 + 2 C -> 3 Fe + 2 CO2", "--T-range", "900", "1300", "K", "--points",
        "3", "--samples", "1024", "--seed", "8", "--record", str(path), "--compare", "Fe3O4",
        "Cu2O", "--compare-T-range", "800", "1600", "K", "--compare-points", "5",
    ]  # fmt: skip
    assert main(argv) == 0
    doc = json.loads(path.read_text("utf-8"))
    assert doc["comparison"] == {
        "compounds": ["Fe3O4", "Cu2O"],
        "reagent": "O2",
        "T_lo_K": 800.0,
        "T_hi_K": 1600.0,
        "points": 5,
        "samples": 1024,
        "seed": 8,
    }
    assert [p["a"] for p in doc["results"]["comparison"]["p_below"]] == ["Fe3O4"]
    assert verify_record(path).identical
    assert "Formation lines compared" in path.with_suffix(".html").read_text("utf-8")


def test_cli_compare_needs_a_record(capsys: pytest.CaptureFixture[str]) -> None:
    assert (
        main(["assess", "Fe3O4 + 2 C -> 3 Fe + 2 CO2", "--T", "900", "K", "--compare", "Cu2O"]) == 2
    )
    assert "--record" in capsys.readouterr().err


def test_cli_heat_conversion_needs_heat_and_reaches_the_record(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    argv = ["assess", "CO + H2O -> CO2 + H2", "--T", "900", "K", "--heat-conversion", "equilibrium"]
    assert main(argv) == 2
    assert "--heat" in capsys.readouterr().err
    path = tmp_path / "shift.json"
    argv += ["--heat", "--feed", "CO:1, H2O:1", "--feed-T", "500", "K", "--samples", "1024",
             "--seed", "2", "--record", str(path)]  # fmt: skip
    assert main(argv) == 0
    doc = json.loads(path.read_text("utf-8"))
    assert doc["heat"]["conversion"] == "equilibrium"
    assert "extent_mol_interval_95" in doc["results"]["heat"]["rows"][0]
    assert verify_record(path).identical


def test_the_report_escapes_text_from_the_new_sections(record: dict[str, Any]) -> None:
    evil = "<script>alert(1)</script>"
    doc = copy.deepcopy(record)
    doc["heat"]["feed"] = {evil: 1.0}
    doc["results"]["heat"]["product"] = evil
    doc["results"]["comparison"]["lines"][0]["label"] = evil
    doc["results"]["comparison"]["lines"][0]["equation"] = evil
    doc["results"]["comparison"]["p_below"][0]["a"] = evil
    html = record_html(_resealed(doc))
    assert "<script>" not in html and "&lt;script&gt;" in html
