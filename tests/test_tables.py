"""Result tables as pandas DataFrames and CSV files.

Outside references: Python's ``csv`` reader and ``pandas.read_csv`` read the files back; every
cell must equal the result's own rows (floats to the last bit: CSV carries ``repr``).
"""

from __future__ import annotations

import csv
import sys
from pathlib import Path

import pytest

import feasibly
from feasibly.errors import ExportError

pd = pytest.importorskip("pandas", reason="DataFrames need the frames extra (pandas)")


@pytest.fixture(scope="module")
def uncertain() -> feasibly.UncertainAssessment:
    # 4096 trials: enough for a window and ranked shares; the tables are what is tested.
    return feasibly.assess_uncertainty(
        "MgCO3 -> MgO + CO2", T_range=("500 K", "900 K"), points=9, samples=4096, seed=5
    )


def _read(path: Path) -> list[dict[str, str]]:
    with path.open(newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


def test_assessment_csv_reads_back_to_the_rows(tmp_path: Path) -> None:
    a = feasibly.assess("MgCO3 -> MgO + CO2", T_range=("400 K", "1000 K"), points=4)
    path = a.to_csv(tmp_path / "screen.csv")
    back = _read(path)
    rows = a.to_dict()["rows"]
    assert len(back) == len(rows) == 4
    for got, want in zip(back, rows, strict=True):
        assert float(got["T_K"]) == want["T_K"]
        assert float(got["dG_J_per_mol"]) == want["dG_J_per_mol"]  # exact: repr round-trips
        assert float(got["log10_K"]) == want["log10_K"]
        assert got["phases"] == "; ".join(want["phases"])
    # ΔrG° of MgCO3 -> MgO + CO2 changes sign near 577 K (README doctest; NASA 2002 data):
    # between rows 1 (400 K) and 2 (600 K).
    assert float(back[0]["dG_J_per_mol"]) > 0 > float(back[1]["dG_J_per_mol"])


def test_assessment_frame_has_a_column_per_key() -> None:
    a = feasibly.assess("MgCO3 -> MgO + CO2", T_range=("400 K", "1000 K"), points=4)
    frame = a.to_frame()
    rows = a.to_dict()["rows"]
    assert list(frame.columns) == list(rows[0])
    assert frame["dH_J_per_mol"].tolist() == [r["dH_J_per_mol"] for r in rows]
    assert frame.attrs["table"] == "temperatures"


def test_uncertain_tables_frames_and_csv(uncertain, tmp_path: Path) -> None:
    assert set(uncertain.tables()) == {"temperatures", "window", "sensitivity"}
    frame = uncertain.to_frame()
    assert frame["P_feasible"].tolist() == [r["P_feasible"] for r in uncertain.rows()]
    shares = uncertain.to_frame("sensitivity")
    assert shares["share"].sum() == pytest.approx(1.0, abs=1e-9)  # shares of one variance
    assert (shares["T_K"] == float(uncertain.T[4])).all()
    uncertain.sensitivity_T_K = 850.0
    try:
        assert (uncertain.to_frame("sensitivity")["T_K"] == 850.0).all()
    finally:
        uncertain.sensitivity_T_K = None
    paths = uncertain.write_tables(tmp_path, "mgco3")
    assert [p.name for p in paths] == [
        "mgco3-temperatures.csv",
        "mgco3-window.csv",
        "mgco3-sensitivity.csv",
    ]
    back = pd.read_csv(paths[0])
    assert back["dG_median_J_per_mol"].tolist() == frame["dG_median_J_per_mol"].tolist()
    assert back["verdict"].tolist() == uncertain.verdicts
    window = _read(paths[1])
    assert float(window[0]["T_lo_K"]) == uncertain.window()[0]["T_lo_K"]


def test_equilibrium_and_conversion_tables(tmp_path: Path) -> None:
    eq = feasibly.equilibrate(
        ["CH4", "H2O", "CO", "CO2", "H2"], T=([900, 1100], "K"), feed="CH4:1, H2O:2"
    )
    amounts = eq.to_frame()
    assert len(amounts) == eq.T.size * len(eq.species)
    first = amounts[amounts["species"] == eq.species[0]]["amount_mol"].tolist()
    assert first == eq.amounts[:, 0].tolist()
    bands = feasibly.conversion_bands(
        "CH4 + H2O -> CO + 3 H2",
        ([900, 1000], "K"),
        "1 bar",
        "CH4:1, H2O:2",
        "CH4",
        required="50%",
        samples=1024,
        seed=1,
    )
    path = bands.to_csv(tmp_path / "conv.csv")
    back = _read(path)
    assert [float(r["conversion_median"]) for r in back] == bands.median.tolist()
    assert [float(r["P_meets"]) for r in back] == bands.p_meets.tolist()


def test_missing_pandas_and_unknown_tables_are_refused(uncertain, monkeypatch, tmp_path) -> None:
    monkeypatch.setitem(sys.modules, "pandas", None)  # import pandas now raises ImportError
    with pytest.raises(ExportError, match=r"pandas is not installed.*to_csv\(\)"):
        uncertain.to_frame()
    assert uncertain.to_csv(tmp_path / "still.csv").stat().st_size > 0  # CSV needs no pandas
    with pytest.raises(ExportError, match="has the tables temperatures, window, sensitivity"):
        uncertain.to_csv(tmp_path / "x.csv", table="histogram")
    (tmp_path / "kept.csv").write_text("keep")
    with pytest.raises(ExportError, match="exists"):
        uncertain.to_csv(tmp_path / "kept.csv", overwrite=False)
    assert (tmp_path / "kept.csv").read_text() == "keep"
