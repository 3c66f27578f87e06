"""The headless HTML copy of the main worksheet (what ``bin/worksheet --headless`` writes), opened
in Debian's chromium with every host name unresolvable.

Outside reference: Chromium's own HTML/SVG rendering. The copy must show the call and the figure
with no network: the worksheet adds a static copy of itself to its output when
``FEASIBLY_STATIC_COPY`` is set, and nbconvert shows that where no widget state is stored.
"""

from __future__ import annotations

import importlib.util
import os
import shutil
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

ROOT = Path(__file__).resolve().parents[2]
SHEET = ROOT / "worksheets" / "01-screening-a-temperature-window.ipynb"
ARTIFACTS = ROOT / "test-artifacts"

pytestmark = [
    pytest.mark.browser,
    pytest.mark.slow,
    pytest.mark.skipif(
        importlib.util.find_spec("playwright") is None, reason="playwright is not installed"
    ),
    pytest.mark.skipif(
        importlib.util.find_spec("nbconvert") is None, reason="nbconvert is not installed"
    ),
]


def test_headless_copy_shows_the_call_and_figure_offline(
    tmp_path: Path, chromium: dict[str, Any]
) -> None:
    from playwright.sync_api import sync_playwright

    home = tmp_path / "home"
    home.mkdir()
    shutil.copy(SHEET, tmp_path / SHEET.name)
    env = dict(os.environ, HOME=str(home), FEASIBLY_STATIC_COPY="1", JUPYTER_PLATFORM_DIRS="1")
    if "PYTHONPATH" in env:  # a source-tree run: the kernel starts in tmp_path
        env["PYTHONPATH"] = os.pathsep.join(
            str(Path(p).resolve()) for p in env["PYTHONPATH"].split(os.pathsep) if p
        )
    # The same command as bin/worksheet --headless.
    run = subprocess.run(
        [
            sys.executable, "-m", "nbconvert", "--to", "html", "--execute",
            "--ExecutePreprocessor.timeout=300",
            "--ExecutePreprocessor.store_widget_state=False",
            "--output-dir", str(tmp_path / "out"), str(tmp_path / SHEET.name),
        ],
        env=env, capture_output=True, text=True, timeout=600, check=False,
    )  # fmt: skip
    assert run.returncode == 0, run.stderr[-2000:]
    page_file = tmp_path / "out" / SHEET.with_suffix(".html").name
    text = page_file.read_text("utf-8")
    # No plotly or widget code is embedded: the copy stays small.
    assert len(text) < 2_000_000 and "application/vnd.jupyter.widget-state" not in text
    outside: list[str] = []
    with sync_playwright() as pw:
        context = pw.chromium.launch_persistent_context(
            str(tmp_path / "profile"),
            **{**chromium, "args": [*chromium["args"], "--host-resolver-rules=MAP * ~NOTFOUND"]},
            viewport={"width": 1200, "height": 1000},
        )
        try:
            context.route(
                "**/*",
                lambda route: (
                    route.continue_()
                    if route.request.url.startswith(("file://", "data:"))
                    else (outside.append(route.request.url), route.abort())
                ),
            )
            page = context.new_page()
            page.goto(page_file.as_uri())
            copy = page.locator(".feasibly-static-copy")
            assert copy.is_visible()
            assert "Static copy of the worksheet" in copy.inner_text()
            verdict = page.locator(".feasibly-static-copy .feasibly-verdict")
            assert _expected_call_at_900_k() in verdict.inner_text()
            figure = page.locator("img.feasibly-static-figure")
            figure.scroll_into_view_if_needed()
            page.wait_for_function(
                "() => { const i = document.querySelector('img.feasibly-static-figure');"
                " return i && i.complete && i.naturalWidth > 0; }"
            )
            size = page.evaluate(
                "() => { const i = document.querySelector('img.feasibly-static-figure');"
                " return [i.naturalWidth, i.naturalHeight]; }"
            )
            assert size[0] >= 800 and size[1] >= 600, size
            assert "Cautions" in copy.inner_text() and "flammable" in copy.inner_text()
            # The plain-text cells around it are there too.
            assert _window_line_of_the_committed_worksheet() in page.content()
            ARTIFACTS.mkdir(exist_ok=True)
            copy.screenshot(path=str(ARTIFACTS / "headless-copy.png"))
        finally:
            context.close()
    # Only the template's optional scripts (MathJax, require.js) were asked for, and refused.
    assert all("cdnjs.cloudflare.com" in url for url in outside), outside


def _expected_call_at_900_k() -> str:
    """The main worksheet's headline at 900 K as the kernel computes it (the worksheet's own
    defaults: 600–1100 K, 20 000 trials, seed 2026), so the test follows the data, not a copy."""
    from feasibly.uncertainty import assess_uncertainty

    u = assess_uncertainty(
        "C3H8 -> C3H6 + H2", T_range=("600 K", "1100 K"), points=11, samples=20_000, seed=2026
    )
    words = {"feasible": "Feasible", "not feasible": "Not feasible"}
    return f"{words.get(u.at('900 K')['verdict'], 'Too close to call')} at 900 K"


def _window_line_of_the_committed_worksheet() -> str:
    """The window the committed (nbval-checked) main worksheet prints, e.g. 'feasible at 95 %
    confidence from 994 K', which the headless copy must show too."""
    import json

    sheet = (
        Path(__file__).resolve().parents[2]
        / "worksheets"
        / ("01-screening-a-temperature-window.ipynb")
    )
    for cell in json.loads(sheet.read_text("utf-8"))["cells"]:
        for out in cell.get("outputs", []):
            text = "".join(out.get("text", []))
            if "feasible at 95 % confidence from" in text:
                line = next(x for x in text.splitlines() if "confidence from" in x)
                return line.split(" to ")[0]
    raise AssertionError("the main worksheet prints no window line")
