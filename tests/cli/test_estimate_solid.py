"""``feasibly estimate --solid``: S° from the fitted ionic contributions and Neumann–Kopp Cp of a
salt (``--json`` with the standard uncertainties and the terms), a species file with the user's
ΔfH° that other calls accept, and refusals with exit code 2 and the reason."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from feasibly.cli import main
from feasibly.estimation import ionic_entropy, neumann_kopp


def test_json_gives_s_its_u_the_terms_and_cp(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["estimate", "--solid", "CdCO3", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    est, nk = ionic_entropy("CdCO3"), neumann_kopp("CdCO3")
    assert out["S298_J_per_mol_K"] == est.S298
    assert out["u_S298_J_per_mol_K"] == est.u_S298
    assert [(t["ion"], t["count"]) for t in out["terms"]] == [("Cd2+", 1), ("CO3 2-", 1)]
    assert out["cp_298"]["cp_J_per_mol_K"] == nk.cp298
    assert out["cp_298"]["u_cp_J_per_mol_K"] == nk.u_cp298
    assert "not estimated" in out["dHf_298"]


def test_text_names_the_terms_and_the_rule(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["estimate", "--solid", "CdCO3"]) == 0
    out = capsys.readouterr().out
    assert "Cd2+" in out and "CO3 2-" in out and "training salts" in out
    assert "ΔfH° is not estimated" in out


def test_written_species_file_is_used_by_assess(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = tmp_path / "cdco3.json"
    args = ["estimate", "--solid", "CdCO3", "--write", str(path), "--source", "invented"]
    # ΔfH° invented for this test (kJ/mol, standard u).
    assert main([*args, "--dHf", "-750.6", "1.5"]) == 0
    entry = json.loads(path.read_text("utf-8"))["species"][0]
    assert entry["S_298"]["value"] == ionic_entropy("CdCO3").S298
    assert entry["dHf_298"]["value"] == -750_600.0
    capsys.readouterr()
    code = main(
        ["assess", "CdCO3(cr,estimated) -> CdO + CO2", "--T", "450 K", "--species-file", str(path)]
    )
    out = capsys.readouterr().out
    assert code == 0, out
    assert "CdCO₃(cr,estimated)" in out


def test_write_needs_the_users_dhf(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["estimate", "--solid", "CdCO3", "--write", str(tmp_path / "x.json")]) == 2
    assert "--dHf" in capsys.readouterr().err
    assert not (tmp_path / "x.json").exists()


@pytest.mark.parametrize(
    ("formula", "says"), [("Fe3O4", "mixed-valence"), ("SiO2", "no metal cation")]
)
def test_refusals_exit_2_with_the_reason(
    formula: str, says: str, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["estimate", "--solid", formula]) == 2
    err = capsys.readouterr().err
    assert says in err and "Traceback" not in err


def test_a_record_with_an_estimated_salt_verifies(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path, record = tmp_path / "cdco3.json", tmp_path / "call.json"
    args = ["estimate", "--solid", "CdCO3", "--write", str(path), "--source", "invented"]
    assert main([*args, "--dHf", "-750.6", "1.5"]) == 0  # ΔfH° invented for this test
    code = main(
        [
            "assess",
            "CdCO3(cr,estimated) -> CdO + CO2",
            "--T",
            "450 K",
            "--species-file",
            str(path),
            "--samples",
            "4096",  # small for speed: verification is bitwise at any N
            "--seed",
            "5",
            "--record",
            str(record),
        ]
    )
    assert code == 0, capsys.readouterr()
    rows = json.loads(record.read_text("utf-8"))["results"]["uncertainty"]["sensitivity"]
    # The estimated S° is among the ranked inputs, named as estimated.
    assert any(r["source"].startswith("estimated (ionic") for r in rows)
    path.unlink()  # verification needs only the record
    capsys.readouterr()
    assert main(["verify", str(record)]) == 0, capsys.readouterr().out
