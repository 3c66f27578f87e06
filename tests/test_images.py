"""Figures as PNG and SVG, drawn by Debian's chromium with no network; tables and figures from
the API and the command line.

Outside references: the PNG format (signature, IHDR size, zlib-compressed scanlines: RFC 2083)
read with ``struct``/``zlib``, and the SVG read as XML by ``xml.etree``. Each image must be
non-trivial: the figure's own text in the SVG, and many distinct pixel values in the PNG.
"""

from __future__ import annotations

import dataclasses
import re
import shutil
import struct
import zlib
from pathlib import Path
from typing import Any
from xml.etree import ElementTree

import numpy as np
import pytest

pytest.importorskip("plotly", reason="figures need the widgets extra (plotly)")

from feasibly import figures
from feasibly.cli import main
from feasibly.errors import ExportError
from feasibly.images import export_result, figure_images, render_figure
from feasibly.uncertainty import assess_uncertainty

HAVE_CHROMIUM = bool(shutil.which("chromium")) or Path("/usr/bin/chromium").exists()
ARTIFACTS = Path(__file__).resolve().parents[1] / "test-artifacts"


@pytest.fixture(autouse=True)
def _private_home(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    home = tmp_path / "home"
    home.mkdir()
    for var in ("HOME", "XDG_CONFIG_HOME", "XDG_CACHE_HOME", "XDG_DATA_HOME"):
        monkeypatch.setenv(var, str(home))


@pytest.fixture(scope="module")
def result() -> Any:
    # 4096 trials: a visible histogram and crossover distribution; the images are what is tested.
    return assess_uncertainty(
        "MgCO3 -> MgO + CO2", T_range=("500 K", "900 K"), points=21, samples=4096, seed=3
    )


def png_facts(data: bytes) -> tuple[int, int, int]:
    """(width, height, distinct byte values of the decompressed scanlines) of a PNG."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    pos, idat, size = 8, b"", (0, 0)
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos : pos + 4])
        kind = data[pos + 4 : pos + 8]
        body = data[pos + 8 : pos + 8 + length]
        if kind == b"IHDR":
            size = struct.unpack(">II", body[:8])
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    raw = zlib.decompress(idat)
    return size[0], size[1], len(set(raw))


def svg_root(data: bytes) -> ElementTree.Element:
    root = ElementTree.fromstring(data)
    assert root.tag.endswith("svg")
    return root


@pytest.mark.browser
@pytest.mark.skipif(not HAVE_CHROMIUM, reason="Debian's chromium is not installed")
def test_png_and_svg_of_the_feasibility_figure(result, tmp_path: Path) -> None:
    fig = figures.feasibility_figure(
        figures.curves(result), figures.snapshot(result, 680.0), width=900
    )
    paths = figure_images(fig, tmp_path / "mgco3")
    assert [p.name for p in paths] == ["mgco3.png", "mgco3.svg"]
    width, height, values = png_facts(paths[0].read_bytes())
    assert (width, height) == (2 * 900, 2 * 660)  # drawn at twice the CSS size
    assert values > 100  # a drawing, not a blank canvas
    svg = paths[1].read_text("utf-8")
    svg_root(paths[1].read_bytes())
    assert "MgCO₃ → MgO + CO₂" in svg  # the figure's title
    assert "ΔrG° at 680 K: spread of the trials" in svg
    assert len(re.findall(r"<path", svg)) > 50
    ARTIFACTS.mkdir(exist_ok=True)
    shutil.copy(paths[0], ARTIFACTS / "figure-export.png")


@pytest.mark.browser
@pytest.mark.skipif(not HAVE_CHROMIUM, reason="Debian's chromium is not installed")
def test_small_crossing_shares_get_distinct_tick_labels(result) -> None:
    """Shares below 1 % once all read "0" on the right axis; chromium draws the real labels."""
    c = figures.curves(result)
    tiny = dataclasses.replace(c, crossing_percent=c.crossing_percent / c.crossing_percent.max())
    assert 0 < tiny.crossing_percent.max() <= 1.0
    svg = render_figure(figures.feasibility_figure(tiny, figures.snapshot(result, 680.0)))["svg"]
    labels = re.findall(r'class="ytick"><text[^>]*>([^<]*)</text>', svg.decode())
    assert len(labels) >= 3 and len(set(labels)) == len(labels), labels
    gibbs = re.findall(r'class="y2tick"><text[^>]*>([^<]*)</text>', svg.decode())
    # The ΔrG axis keeps round ticks (multiples of 10 kJ/mol here), not ones synced to the bars.
    assert gibbs and all(float(t.replace("−", "-")) % 10 == 0 for t in gibbs), gibbs


@pytest.mark.browser
@pytest.mark.skipif(not HAVE_CHROMIUM, reason="Debian's chromium is not installed")
def test_export_result_writes_tables_and_figures(result, tmp_path: Path) -> None:
    paths = export_result(result, tmp_path, "mc", T_K=700.0)
    names = sorted(p.name for p in paths)
    assert names == [
        "mc-sensitivity.csv",
        "mc-temperatures.csv",
        "mc-window.csv",
        "mc.png",
        "mc.svg",
    ]
    assert "ΔrG° at 700 K" in (tmp_path / "mc.svg").read_text("utf-8")
    text = (tmp_path / "mc-sensitivity.csv").read_text("utf-8").splitlines()
    assert text[0].startswith("T_K,species,quantity,share")
    assert all(line.startswith("700.0,") for line in text[1:])


def test_missing_browser_is_an_export_error(result, monkeypatch, tmp_path: Path) -> None:
    monkeypatch.setenv("FEASIBLY_CHROMIUM", str(tmp_path / "no-such-browser"))
    fig = figures.feasibility_figure(figures.curves(result), figures.snapshot(result, 680.0))
    with pytest.raises(ExportError, match=r"no Chromium browser was found.*apt-get install"):
        figure_images(fig, tmp_path / "x")
    assert not list(tmp_path.glob("x.*"))


def test_cli_export_tables_only(tmp_path: Path, capsys) -> None:
    code = main(
        [
            "assess",
            "MgCO3 -> MgO + CO2",
            "--T-range", "500", "900", "K",
            "--points", "5",
            "--export", str(tmp_path),
            "--no-figures",
        ]
    )  # fmt: skip
    assert code == 0
    assert "exported:" in capsys.readouterr().err
    rows = (tmp_path / "standard-temperatures.csv").read_text("utf-8").splitlines()
    assert rows[0].startswith("T_K,dH_J_per_mol,dS_J_per_mol_K,dG_J_per_mol")
    assert [float(r.split(",")[0]) for r in rows[1:]] == list(np.linspace(500, 900, 5))
    assert not list(tmp_path.glob("*.png"))


@pytest.mark.browser
@pytest.mark.skipif(not HAVE_CHROMIUM, reason="Debian's chromium is not installed")
def test_cli_export_with_monte_carlo(tmp_path: Path) -> None:
    out = tmp_path / "out"
    args = ["assess", "MgCO3 -> MgO + CO2", "--T-range", "500", "900", "K", "--points", "5"]
    code = main([*args, "--samples", "2048", "--seed", "4", "--export", str(out)])
    assert code == 0
    tmp_path = out
    names = sorted(p.name for p in tmp_path.iterdir())
    assert names == sorted(
        [
            "standard-temperatures.csv",
            "standard.png",
            "standard.svg",
            "monte-carlo-temperatures.csv",
            "monte-carlo-window.csv",
            "monte-carlo-sensitivity.csv",
            "monte-carlo.png",
            "monte-carlo.svg",
        ]
    )
    for name in ("standard.png", "monte-carlo.png"):
        assert png_facts((tmp_path / name).read_bytes())[2] > 100
    assert "MgCO₃ → MgO + CO₂" in (tmp_path / "standard.svg").read_text("utf-8")
