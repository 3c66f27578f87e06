"""The HTML report of a decision record in a real browser (headless Chromium, networking off).

Outside reference: Chromium's own HTML/SVG rendering. The page must show the verdict, the
equation and an SVG figure with no network at all; a screenshot is kept under test-artifacts/.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path
from typing import Any

import pytest

from feasibly.records import make_record, write_record
from feasibly.uncertainty.inputs import parse_override

HAVE_PLAYWRIGHT = importlib.util.find_spec("playwright") is not None
ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts"

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not HAVE_PLAYWRIGHT, reason="playwright (Python) is not installed"),
]


@pytest.fixture(autouse=True)
def _private_home(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    home = tmp_path / "home"
    home.mkdir()
    for var in ("HOME", "XDG_CONFIG_HOME", "XDG_CACHE_HOME", "XDG_DATA_HOME"):
        monkeypatch.setenv(var, str(home))


def test_report_opens_offline_and_shows_verdict_equation_and_figure(
    tmp_path: Path, chromium: dict[str, Any]
) -> None:
    from playwright.sync_api import sync_playwright

    record = make_record(
        "Fe3O4 + H2 -> Fe + H2O",
        T_range=("500 K", "1300 K"),
        points=9,
        balance=True,
        samples=8192,
        seed=7,
        partial_pressures={"H2O": "0.1 bar"},
        overrides=[parse_override("Fe3O4(cr):dHf ± 6 kJ/mol 95%; our own DSC, run 12")],
        author="A. Chemist",
        reviewer="B. Reviewer",
        rationale="Pilot reduction of a magnetite charge.",
    )
    html = tmp_path / "record.html"
    write_record(record, tmp_path / "record.json", html)
    requests: list[str] = []
    with sync_playwright() as pw:
        context = pw.chromium.launch_persistent_context(
            str(tmp_path / "profile"),
            # No name resolves at all: the report must need no network.
            **{**chromium, "args": [*chromium["args"], "--host-resolver-rules=MAP * ~NOTFOUND"]},
            viewport={"width": 1100, "height": 900},
        )
        try:
            context.route(
                "**/*",
                lambda route: (
                    route.continue_()
                    if route.request.url.startswith("file://")
                    else (requests.append(route.request.url), route.abort())
                ),
            )
            page = context.new_page()
            page.goto(html.as_uri())
            verdict = page.locator("#verdict")
            assert verdict.is_visible()
            assert "feasible in part of the range" in verdict.inner_text().lower()
            assert "Feasible at 95% confidence from" in verdict.inner_text()
            equation = page.locator("#equation")
            assert equation.is_visible()
            assert equation.inner_text() == "Fe₃O₄ + 4 H₂ → 3 Fe + 4 H₂O"
            figures = page.locator("svg.figure")
            assert figures.count() == 2
            box = figures.first.bounding_box()
            assert box is not None and box["width"] > 300 and box["height"] > 150
            assert figures.first.is_visible()
            # The band and lines are drawn (the polygon of the 95 % interval, the mean line).
            assert page.locator("svg.figure polygon").count() == 1
            assert page.locator("svg.figure polyline").count() >= 2
            assert "process-safety review" in page.locator(".caution").inner_text()
            ARTIFACTS.mkdir(exist_ok=True)
            page.screenshot(path=str(ARTIFACTS / "record-report.png"), full_page=True)
            page.emulate_media(media="print")
            page.screenshot(path=str(ARTIFACTS / "record-report-print.png"), full_page=True)
        finally:
            context.close()
    # The report needs nothing from outside: no request other than the file itself was made.
    assert requests == []


def test_report_shows_heat_balance_and_formation_lines_offline(
    tmp_path: Path, chromium: dict[str, Any]
) -> None:
    """The heat section (duty per temperature with its intervals, its figure, the adiabatic
    temperature with its band) and the compared formation lines (one line and one 95 % band per
    compound, the table of P(a below b)) render in Chromium with no network."""
    from playwright.sync_api import sync_playwright

    import feasibly
    from feasibly.records import record_from

    a = feasibly.assess("CH4 + 2 O2 -> CO2 + 2 H2O", T_range=("400 K", "1000 K"), points=4)
    u = feasibly.assess_uncertainty(
        a.reaction, T_range=("400 K", "1000 K"), points=4, samples=4096, seed=5
    )
    record = record_from(
        a,
        u,
        heat={"feed": "CH4:1, O2:2.5, N2:9", "T_feed": "25 degC"},
        comparison={
            "compounds": ["Cu2O", "Fe3O4", "Cr2O3"],
            "T_range": ("600 K", "1400 K"),
            "points": 9,
            "samples": 4096,
            "seed": 3,
        },
    )
    html = tmp_path / "record.html"
    write_record(record, tmp_path / "record.json", html)
    requests: list[str] = []
    with sync_playwright() as pw:
        context = pw.chromium.launch_persistent_context(
            str(tmp_path / "profile"),
            **{**chromium, "args": [*chromium["args"], "--host-resolver-rules=MAP * ~NOTFOUND"]},
            viewport={"width": 1100, "height": 900},
        )
        try:
            context.route(
                "**/*",
                lambda route: (
                    route.continue_()
                    if route.request.url.startswith("file://")
                    else (requests.append(route.request.url), route.abort())
                ),
            )
            page = context.new_page()
            page.goto(html.as_uri())
            caution = page.locator(".caution")
            # The exotherm caution quotes the adiabatic temperature with its band, and defers.
            assert "95 % interval" in caution.inner_text()
            assert "process-safety review" in caution.inner_text()
            ARTIFACTS.mkdir(exist_ok=True)
            caution.screenshot(path=str(ARTIFACTS / "record-report-exotherm-caution.png"))
            heat = page.locator("#heat")
            assert heat.is_visible()
            adiabatic = page.locator("#adiabatic").inner_text()
            hot = record["results"]["heat"]["adiabatic"]
            lo, hi = hot["adiabatic_T_K_interval_95"]
            assert f"{hot['adiabatic_T_K']:,.0f} K" in adiabatic
            assert f"95 % interval {lo:,.0f}–{hi:,.0f} K" in adiabatic
            # Figures: ΔrG, P(feasible), the heat duty and the formation lines.
            figures = page.locator("svg.figure")
            assert figures.count() == 4
            lines_figure = figures.nth(3)
            assert "Formation lines per mole of O2" in lines_figure.inner_html()
            assert lines_figure.locator("polygon").count() == 3  # one 95 % band per line
            assert lines_figure.locator("polyline").count() == 3
            box = lines_figure.bounding_box()
            assert box is not None and box["width"] > 300 and box["height"] > 150
            assert page.get_by_text("P(Fe3O4 below Cr2O3)").is_visible()
            ARTIFACTS.mkdir(exist_ok=True)
            y = page.evaluate(
                "document.querySelector('#heat').getBoundingClientRect().top + window.scrollY"
            )
            page.screenshot(
                path=str(ARTIFACTS / "record-report-heat-comparison.png"),
                full_page=True,
                clip={"x": 0, "y": y - 10, "width": 1100, "height": 1900},
            )
        finally:
            context.close()
    assert requests == []
