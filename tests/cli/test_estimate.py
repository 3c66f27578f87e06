"""``feasibly estimate``: the three values with their standard uncertainties and the groups
(``--json``), a species file others calls accept, refusals with exit code 2 and the reason."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from feasibly.cli import main
from feasibly.estimation import estimate_gas

pytest.importorskip("rdkit", reason="estimates need RDKit (feasibly[estimate])")


def test_json_gives_the_three_values_their_u_and_the_groups(
    capsys: pytest.CaptureFixture[str],
) -> None:
    assert main(["estimate", "CC(C)CC(C)=O", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    est = estimate_gas("CC(C)CC(C)=O")
    assert out["dHf_298_J_per_mol"] == {"value": est.dHf, "u": est.u_dHf}
    assert out["S_298_J_per_mol_K"] == {"value": est.S298, "u": est.u_S298}
    assert out["cp"]["u_rel"] == est.cp_u_rel
    assert {g["name"] for g in out["groups"]} == {"C(C)(CO)(H)2", "C(C)(H)3", "C(C)3(H)", "CO(C)2"}
    assert out["method"].startswith("estimated")


def test_written_species_file_is_used_by_assess(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    alcohol, ketone = tmp_path / "alcohol.json", tmp_path / "ketone.json"
    assert main(["estimate", "CC(O)CC(C)C", "--write", str(alcohol)]) == 0
    assert main(["estimate", "CC(C)CC(C)=O", "--write", str(ketone)]) == 0
    capsys.readouterr()
    code = main(
        [
            "assess",
            "C6H14O(g,estimated) -> C6H12O(g,estimated) + H2",
            "--T",
            "600 K",
            "--species-file",
            str(alcohol),
            "--species-file",
            str(ketone),
        ]
    )
    out = capsys.readouterr().out
    assert code == 0, out
    assert "C₆H₁₄O(g,estimated)" in out


@pytest.mark.parametrize(
    ("smiles", "says"),
    [("C=C=C", "cumulated"), ("[CH3]", "radical"), ("C[Fe]", "metal"), ("C1CC", "SMILES")],
)
def test_refusals_exit_2_with_the_reason(
    smiles: str, says: str, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["estimate", smiles]) == 2
    err = capsys.readouterr().err
    assert says in err and "Traceback" not in err


def test_write_needs_a_json_path(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["estimate", "CCO", "--write", str(tmp_path / "x.txt")]) == 2
    assert "--write" in capsys.readouterr().err


def test_a_record_with_estimated_species_passes_feasibly_verify(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    alcohol, ketone = tmp_path / "alcohol.json", tmp_path / "ketone.json"
    assert main(["estimate", "CC(O)CC(C)C", "--write", str(alcohol)]) == 0
    assert main(["estimate", "CC(C)CC(C)=O", "--write", str(ketone)]) == 0
    record = tmp_path / "call.json"
    code = main(
        [
            "assess",
            "C6H14O(g,estimated) -> C6H12O(g,estimated) + H2",
            "--T",
            "750 K",
            "--species-file",
            str(alcohol),
            "--species-file",
            str(ketone),
            "--samples",
            "4096",  # small for speed: verification is bitwise at any N
            "--seed",
            "5",
            "--record",
            str(record),
        ]
    )
    assert code == 0, capsys.readouterr()
    doc = json.loads(record.read_text("utf-8"))
    rows = doc["results"]["uncertainty"]["sensitivity"]
    assert any(r["source"].startswith("estimated") for r in rows)
    alcohol.unlink()  # verification needs only the record
    ketone.unlink()
    capsys.readouterr()
    assert main(["verify", str(record)]) == 0, capsys.readouterr().out
