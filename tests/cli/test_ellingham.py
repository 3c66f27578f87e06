"""The ``feasibly ellingham`` command: table, JSON, CSV and figure files, and errors exit 2."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pytest

from feasibly.cli import main


def test_table_names_the_most_stable_and_the_ratios(capsys: pytest.CaptureFixture[str]) -> None:
    code = main(["ellingham", "Cu2O", "Cr2O3", "--T-range", "700", "900", "K", "--points", "3"])
    out = capsys.readouterr().out
    assert code == 0
    assert "most stable" in out and out.count("Cr2O3") >= 3
    assert "CO/CO2 ratio needed" in out and "H2/H2O ratio needed" in out
    assert "says nothing about" in out


def test_json_csv_and_figure(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    table, fig = tmp_path / "lines.csv", tmp_path / "lines.html"
    args = ["ellingham", "MgO", "CuO", "--points", "2", "--samples", "256", "--seed", "1"]
    code = main([*args, "--json", "--csv", str(table), "--figure", str(fig)])
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reagent"] == "O2" and len(doc["rows"]) == 4
    with table.open(encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    assert [r["line"] for r in rows] == ["MgO", "MgO", "CuO", "CuO"]
    assert float(rows[0]["lo95_J_per_mol"]) < float(rows[0]["dG_J_per_mol_O2"])
    assert fig.stat().st_size > 100_000 and "Formation lines" in fig.read_text("utf-8")


@pytest.mark.parametrize(
    "extra", [["CaCO3"], ["MgO", "--per", "Xe"], ["MgO", "--T-range", "500", "400", "K"]]
)
def test_errors_exit_2(capsys: pytest.CaptureFixture[str], extra: list[str]) -> None:
    assert main(["ellingham", *extra]) == 2
    assert "Traceback" not in capsys.readouterr().err
