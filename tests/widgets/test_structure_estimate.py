"""The structure-estimate widget: a SMILES gives the kernel's estimate as a library entry; a
refusal shows its reason inline and keeps the last valid estimate, marked; recovery follows."""

from __future__ import annotations

from unittest import mock

import pytest

from feasibly.estimation import estimate_gas

pytest.importorskip("ipywidgets", reason="widgets need feasibly[widgets]")
pytest.importorskip("rdkit", reason="estimates need RDKit (feasibly[estimate])")

from feasibly.widgets import StructureEstimate


def test_a_smiles_becomes_the_kernels_estimate_in_the_library() -> None:
    box = StructureEstimate(smiles="CC(C)CC(C)=O", name="4-methylpentan-2-one")
    est = estimate_gas("CC(C)CC(C)=O", name="4-methylpentan-2-one")
    assert box.error == "" and box.species_id == est.id
    sp = box.library[est.id]
    assert sp.dHf.value == est.dHf and sp.dHf.u == pytest.approx(est.u_dHf)
    shown = box._shown.value
    assert "CO(C)2" in shown and f"{est.dHf / 1000:.2f}" in shown


def test_a_refusal_is_shown_and_the_last_estimate_kept_then_recovery() -> None:
    box = StructureEstimate(smiles="CCO")
    first = box.species_id
    box.smiles = "C=C=C"
    assert "cumulated" in box.error
    assert box.species_id == first and "last valid estimate" in box._shown.value
    assert "cumulated" in box._feedback.value
    box.smiles = "<b>not</b>"
    assert "SMILES" in box.error and "<b>" not in box._feedback.value  # escaped
    box.smiles = "CCCO"
    assert box.error == "" and box.species_id == "C3H8O(g,estimated)"


def test_one_change_one_recomputation() -> None:
    box = StructureEstimate(smiles="CCO")
    with mock.patch("feasibly.widgets.structure.estimate_gas", wraps=estimate_gas) as spy:
        box.smiles = "CCCO"
    assert spy.call_count == 1
