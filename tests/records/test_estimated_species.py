"""A record of a call that uses estimated species: the species travel inside it with their
``estimated`` provenance, the sensitivity ranking names them as estimated, the report shows it,
and ``verify_record`` reproduces the call from the record alone."""

from __future__ import annotations

import json

import pytest

from feasibly.estimation import ORIGIN, estimate_gas
from feasibly.records import make_record, record_html, verify_record

pytest.importorskip("rdkit", reason="estimates need RDKit (feasibly[estimate])")


@pytest.fixture(scope="module")
def record() -> dict:
    alcohol = estimate_gas("CC(O)CC(C)C", name="4-methylpentan-2-ol")
    ketone = estimate_gas("CC(C)CC(C)=O", name="4-methylpentan-2-one")
    lib = ketone.library(alcohol.library())
    return make_record(
        f"{alcohol.id} -> {ketone.id} + H2",
        T_range=("500 K", "900 K"),
        points=5,
        library=lib,
        samples=4096,  # 2^12: small for speed; verification is bitwise at any N
        seed=20261202,
    )


def test_estimated_species_travel_with_their_provenance(record: dict) -> None:
    carried = {s["id"]: s for s in record["species"]}
    for sid in ("C6H14O(g,estimated)", "C6H12O(g,estimated)"):
        assert carried[sid]["origin"] == ORIGIN
        notes = " ".join(carried[sid]["entry"]["notes"])
        assert "group" in notes and "pgradd" in notes
    assert carried["H2(g)"]["origin"] == "library"


def test_sensitivity_names_the_estimates(record: dict) -> None:
    rows = record["results"]["uncertainty"]["sensitivity"]
    estimated = [r for r in rows if r["species"].endswith("(g,estimated)")]
    assert estimated
    assert all(r["source"].startswith("estimated") for r in estimated)
    assert "estimated (Benson group additivity)" in record_html(record)


def test_a_record_with_estimated_species_verifies(record: dict) -> None:
    result = verify_record(json.loads(json.dumps(record)))
    assert result.identical, result.summary()
