"""The worksheet's export button and its static copy, without a browser where possible."""

from __future__ import annotations

import csv
import shutil
from pathlib import Path

import pytest

pytest.importorskip("ipywidgets", reason="widgets need the widgets extra (ipywidgets)")
pytest.importorskip("plotly", reason="widgets need the widgets extra (plotly)")
pytest.importorskip("anywidget", reason="plotly's FigureWidget needs anywidget")

from feasibly.widgets import FeasibilityWorksheet, ResultExport

HAVE_CHROMIUM = bool(shutil.which("chromium")) or Path("/usr/bin/chromium").exists()
# 2048 trials: these tests check what is written, not statistics.
N = 2048


@pytest.fixture
def sheet(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> FeasibilityWorksheet:
    home = tmp_path / "home"
    home.mkdir()
    monkeypatch.setenv("HOME", str(home))
    ws = FeasibilityWorksheet(
        "MgCO3 -> MgO + CO2", T="650 K", T_window=("500 K", "900 K"), samples=N
    )
    ws.files.folder = str(tmp_path / "out")
    ws.files.name = "calcination"
    return ws


def test_export_without_a_browser_writes_the_tables_and_says_why_no_figure(
    sheet, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("FEASIBLY_CHROMIUM", str(tmp_path / "no-browser"))
    written = sheet.files.export()
    assert [Path(p).name for p in written] == [
        "calcination-temperatures.csv",
        "calcination-window.csv",
        "calcination-sensitivity.csv",
    ]
    assert "no Chromium browser was found" in sheet.files.error
    with open(written[2], newline="", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    # The sensitivity table is read at the temperature on screen.
    assert {r["T_K"] for r in rows} == {"650.0"}
    assert {r["species"] for r in rows} >= {"MgCO3(cr)", "MgO(cr)"}


def test_nothing_on_screen_is_said() -> None:
    box = ResultExport(lambda: None)
    assert box.export() == []
    assert box.error == "Nothing to export yet: no result on screen."


@pytest.mark.browser
@pytest.mark.skipif(not HAVE_CHROMIUM, reason="Debian's chromium is not installed")
def test_export_button_writes_tables_and_figure(sheet, tmp_path: Path) -> None:
    sheet.temperature.value = 700.0
    sheet.files._button.click()
    names = sorted(Path(p).name for p in sheet.files.written)
    assert names == [
        "calcination-sensitivity.csv",
        "calcination-temperatures.csv",
        "calcination-window.csv",
        "calcination.png",
        "calcination.svg",
    ]
    assert sheet.files.error == ""
    assert "ΔrG° at 700 K" in (tmp_path / "out" / "calcination.svg").read_text("utf-8")
    assert (tmp_path / "out" / "calcination.png").read_bytes()[:4] == b"\x89PNG"


def test_static_copy_only_when_asked(sheet, monkeypatch: pytest.MonkeyPatch, tmp_path) -> None:
    monkeypatch.delenv("FEASIBLY_STATIC_COPY", raising=False)
    assert "text/html" not in sheet._repr_mimebundle_()
    monkeypatch.setenv("FEASIBLY_STATIC_COPY", "1")
    monkeypatch.setenv("FEASIBLY_CHROMIUM", str(tmp_path / "no-browser"))
    page = sheet._repr_mimebundle_()["text/html"]
    assert "Static copy of the worksheet" in page
    assert "MgCO₃ → MgO + CO₂" in page and "2,048 trials" in page
    assert sheet.panel.summary.startswith("Too close to call at 650 K")
    assert sheet.panel.summary in page  # the call on screen
    assert "The figure is missing from this copy" in page  # and why, without a browser
