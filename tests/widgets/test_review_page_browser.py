"""The review page (``bin/worksheet --review``): the main worksheet served by Voilà with its code
hidden, driven by Debian's chromium through Playwright.

A reviewer changes an input, sees the call follow, and writes a decision record from the page;
the record is then checked by :func:`feasibly.verify_record`. No code cell is shown, and the page
offers no way to run code. Screenshots go to ``test-artifacts/``.
"""

from __future__ import annotations

import importlib.util
import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.request
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
        importlib.util.find_spec("voila") is None, reason="Voilà is not installed (review extra)"
    ),
]

# Generous waits: Voilà returns the page only after the notebook ran (about 10 s on 2 cores).
PAGE_TIMEOUT_MS = 180_000
CHANGE_TIMEOUT_MS = 30_000


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


@pytest.fixture
def review(tmp_path: Path):
    """Voilà on 127.0.0.1 in its own process group, serving a copy of the main worksheet."""
    home, folder = tmp_path / "home", tmp_path / "review"
    home.mkdir()
    folder.mkdir()
    shutil.copy(SHEET, folder / SHEET.name)
    env = dict(os.environ)
    env.update(
        HOME=str(home),
        JUPYTER_CONFIG_DIR=str(home / "config"),
        JUPYTER_DATA_DIR=str(home / "data"),
        JUPYTER_RUNTIME_DIR=str(home / "runtime"),
        IPYTHONDIR=str(home / "ipython"),
        XDG_CONFIG_HOME=str(home / "xdg-config"),
        XDG_CACHE_HOME=str(home / "xdg-cache"),
        XDG_DATA_HOME=str(home / "xdg-data"),
        JUPYTER_PLATFORM_DIRS="1",
    )
    if "PYTHONPATH" in env:  # a source-tree run: the kernel starts in the review folder
        env["PYTHONPATH"] = os.pathsep.join(
            str(Path(p).resolve()) for p in env["PYTHONPATH"].split(os.pathsep) if p
        )
    port = _free_port()
    log = (tmp_path / "voila.log").open("w")
    # The same options as bin/worksheet --review.
    proc = subprocess.Popen(
        [
            sys.executable, "-m", "voila", str(folder / SHEET.name), "--no-browser",
            f"--port={port}", "--Voila.ip=127.0.0.1", "--strip_sources=True",
        ],
        env=env, stdout=log, stderr=subprocess.STDOUT, start_new_session=True,
    )  # fmt: skip
    base = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 60
        while True:
            try:
                urllib.request.urlopen(f"{base}/voila/static/", timeout=2)
                break
            except urllib.error.HTTPError:
                break  # the server answers
            except OSError:
                if proc.poll() is not None or time.monotonic() > deadline:
                    log.flush()
                    raise RuntimeError(
                        "Voilà did not start:\n" + (tmp_path / "voila.log").read_text()
                    ) from None
                time.sleep(0.5)
        yield {"url": base + "/", "folder": folder, "home": home}
    finally:
        os.killpg(proc.pid, signal.SIGTERM)
        try:
            proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
        log.close()


def test_reviewer_changes_an_input_and_writes_a_record(review, chromium: dict[str, Any]) -> None:
    from playwright.sync_api import sync_playwright

    import feasibly

    ARTIFACTS.mkdir(exist_ok=True)
    with sync_playwright() as pw:
        ctx = pw.chromium.launch_persistent_context(
            str(review["home"] / "chromium"), **chromium, viewport={"width": 1200, "height": 2400}
        )
        try:
            # Only the local server: Voilà's icon font from a CDN is refused.
            ctx.route(
                "**/*",
                lambda route: (
                    route.continue_()
                    if route.request.url.startswith(("http://127.0.0.1", "data:"))
                    else route.abort()
                ),
            )
            page = ctx.new_page()
            page.goto(review["url"], timeout=PAGE_TIMEOUT_MS)
            page.wait_for_selector(".feasibly-verdict", timeout=PAGE_TIMEOUT_MS)
            page.wait_for_selector(".js-plotly-plot .main-svg", timeout=PAGE_TIMEOUT_MS)
            verdict = page.locator(".feasibly-verdict").first
            assert _expected_call_at_900_k() in verdict.inner_text()
            # Code hidden: no source of any code cell, no editor, no run button.
            content = page.content()
            assert "from feasibly.widgets import FeasibilityWorksheet" not in content
            assert "assess_uncertainty(" not in content
            assert page.locator(".jp-InputArea-editor, .CodeMirror, .cm-editor").count() == 0
            page.screenshot(path=str(ARTIFACTS / "review-1-opened.png"))

            entry = page.locator(".feasibly-temperature-entry input")
            entry.fill("1000")
            entry.press("Enter")
            page.wait_for_function(
                "() => document.querySelector('.feasibly-verdict').innerText"
                ".includes('Feasible at 1000 K')",
                timeout=CHANGE_TIMEOUT_MS,
            )
            # The figure follows: the histogram panel's title names the new temperature.
            page.wait_for_function(
                "() => [...document.querySelectorAll('.js-plotly-plot .annotation-text')]"
                ".some(e => e.textContent.includes('at 1000 K: spread of the trials'))",
                timeout=CHANGE_TIMEOUT_MS,
            )

            page.get_by_text("Write a decision record", exact=True).first.click()
            for label, value in (("author", "A. Chemist"), ("reviewer", "R. Viewer")):
                box = page.locator(f".widget-text:has(label:text-is('{label}')) input").first
                box.fill(value)
                box.press("Tab")
            name = page.locator(".widget-text:has(label:text-is('file')) input").first
            name.fill("reviewed.json")
            name.press("Tab")
            page.get_by_role("button", name="write record").click()
            page.wait_for_function(
                "() => [...document.querySelectorAll('.feasibly-note')]"
                ".some(e => e.textContent.includes('reviewed.json'))",
                timeout=CHANGE_TIMEOUT_MS,
            )
            page.screenshot(path=str(ARTIFACTS / "review-2-record.png"))

            # The export button: tables as CSV and the figure on screen as PNG and SVG.
            page.get_by_text("Export tables and figure", exact=True).first.click()
            page.get_by_role("button", name="export tables and figure").click()
            page.wait_for_function(
                "() => [...document.querySelectorAll('.feasibly-note')]"
                ".some(e => e.textContent.includes('feasibility.svg'))",
                timeout=CHANGE_TIMEOUT_MS,
            )
            section = page.locator(".widget-vbox", has=page.locator(".feasibly-export-button"))
            section.last.screenshot(path=str(ARTIFACTS / "review-3-export.png"))
        finally:
            ctx.close()
    exported = review["folder"] / "feasibility-export"
    assert sorted(p.name for p in exported.iterdir()) == [
        "feasibility-sensitivity.csv",
        "feasibility-temperatures.csv",
        "feasibility-window.csv",
        "feasibility.png",
        "feasibility.svg",
    ]
    # The figure exported is the one on screen: at the temperature the reviewer chose.
    assert "at 1000 K: spread of the trials" in (exported / "feasibility.svg").read_text("utf-8")
    record = review["folder"] / "reviewed.json"
    assert record.exists() and (review["folder"] / "reviewed.html").exists()
    doc = feasibly.load_record(record)
    assert doc["review"]["author"] == "A. Chemist"
    assert doc["review"]["reviewer"] == "R. Viewer"
    # Recomputing the record from its own inputs gives the same results, bit for bit.
    assert feasibly.verify_record(record).identical


def _expected_call_at_900_k() -> str:
    """The main worksheet's headline at 900 K as the kernel computes it (the worksheet's own
    defaults: 600–1100 K, 20 000 trials, seed 2026), so the test follows the data, not a copy."""
    from feasibly.uncertainty import assess_uncertainty

    u = assess_uncertainty(
        "C3H8 -> C3H6 + H2", T_range=("600 K", "1100 K"), points=11, samples=20_000, seed=2026
    )
    words = {"feasible": "Feasible", "not feasible": "Not feasible"}
    return f"{words.get(u.at('900 K')['verdict'], 'Too close to call')} at 900 K"
