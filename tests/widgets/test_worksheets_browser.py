"""The main worksheet in a real browser: JupyterLab on 127.0.0.1, Debian's Chromium via Playwright.

One server start. The worksheet runs in the page; the test waits for the widgets and the plot,
changes the temperature and then the equation, and checks that the verdict text and the plotted
data change each time. Screenshots go to ``test-artifacts/`` (gitignored).
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
SHEET = ROOT / "worksheets" / "01-screening-a-temperature-window.ipynb"
ARTIFACTS = ROOT / "test-artifacts"

try:
    import playwright.sync_api as pw
except ImportError:  # pragma: no cover - depends on the environment
    pw = None
try:
    import jupyterlab  # noqa: F401

    HAVE_LAB = True
except ImportError:  # pragma: no cover
    HAVE_LAB = False

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(pw is None, reason="Python Playwright is not installed"),
    pytest.mark.skipif(not HAVE_LAB, reason="JupyterLab is not installed"),
]

# Generous waits: a cold kernel imports plotly and draws 20 000 trials on 2 slow cores.
RUN_TIMEOUT_MS = 120_000
CHANGE_TIMEOUT_MS = 30_000


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


@pytest.fixture
def lab(tmp_path):
    """JupyterLab on 127.0.0.1 in its own process group, with every Jupyter dir under tmp_path."""
    home = tmp_path / "home"
    root = tmp_path / "root"
    for d in (home, root):
        d.mkdir()
    shutil.copy(SHEET, root / SHEET.name)  # the page autosaves: never into the checkout
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
    if "PYTHONPATH" in env:  # a source-tree run: the kernel starts in root/, so make it absolute
        env["PYTHONPATH"] = os.pathsep.join(
            str(Path(p).resolve()) for p in env["PYTHONPATH"].split(os.pathsep) if p
        )
    news = home / "config" / "lab" / "user-settings" / "@jupyterlab" / "apputils-extension"
    news.mkdir(parents=True)
    (news / "notification.jupyterlab-settings").write_text(
        json.dumps({"fetchNews": "false", "checkForUpdates": False})
    )
    port, token = _free_port(), "feasibly-test"
    log = (tmp_path / "lab.log").open("w")
    proc = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "jupyterlab",
            "--no-browser",
            "--allow-root",
            "--ServerApp.ip=127.0.0.1",
            f"--ServerApp.port={port}",
            f"--IdentityProvider.token={token}",
            f"--ServerApp.root_dir={root}",
            "--LabApp.expose_app_in_browser=True",
        ],
        env=env,
        stdout=log,
        stderr=subprocess.STDOUT,
        start_new_session=True,
    )
    base = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 60
        while True:
            try:
                urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=2)
                break
            except OSError:
                if proc.poll() is not None or time.monotonic() > deadline:
                    log.flush()
                    raise RuntimeError(
                        "JupyterLab did not start:\n" + (tmp_path / "lab.log").read_text()
                    ) from None
                time.sleep(0.5)
        yield {"url": f"{base}/lab/tree/{SHEET.name}?token={token}", "home": home}
    finally:
        os.killpg(proc.pid, signal.SIGTERM)
        try:
            proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
        log.close()


def _plot_data(page, trace: int) -> list:
    return page.evaluate(
        "(i) => Array.from(document.querySelector('.js-plotly-plot').data[i].x)", trace
    )


def test_main_worksheet_in_the_browser(chromium, lab):
    from feasibly.figures import TRACES

    hist = TRACES.index("histogram")
    ARTIFACTS.mkdir(exist_ok=True)
    with pw.sync_playwright() as p:
        ctx = p.chromium.launch_persistent_context(
            str(lab["home"] / "chromium"),
            **chromium,
            viewport={"width": 1300, "height": 2600},  # the whole worksheet output fits
        )
        try:
            page = ctx.new_page()
            page.goto(lab["url"])
            page.wait_for_selector(".jp-Notebook", timeout=RUN_TIMEOUT_MS)
            page.wait_for_function(
                "() => window.jupyterapp && window.jupyterapp.shell.currentWidget"
                " && window.jupyterapp.shell.currentWidget.sessionContext"
                " && window.jupyterapp.shell.currentWidget.sessionContext.isReady",
                timeout=RUN_TIMEOUT_MS,
            )
            page.evaluate("window.jupyterapp.commands.execute('notebook:run-all-cells')")
            page.wait_for_selector(".noUi-handle", timeout=RUN_TIMEOUT_MS)
            page.wait_for_selector(".js-plotly-plot .main-svg", timeout=RUN_TIMEOUT_MS)
            page.wait_for_function(
                "(i) => { const p = document.querySelector('.js-plotly-plot');"
                " return p && p.data && p.data.length > i && p.data[i].x.length > 0; }",
                arg=hist,
                timeout=RUN_TIMEOUT_MS,
            )
            verdict = page.locator(".feasibly-verdict").first
            output = page.locator(".jp-OutputArea-output", has=page.locator(".feasibly-verdict"))
            first_text, first_x = verdict.inner_text(), _plot_data(page, hist)
            assert _expected_call_at_900_k() in first_text
            output.first.screenshot(path=str(ARTIFACTS / "worksheet-1-initial.png"))

            entry = page.locator(".feasibly-temperature-entry input")
            entry.fill("1000")
            entry.press("Enter")
            page.wait_for_function(
                "() => document.querySelector('.feasibly-verdict').innerText.includes('1000 K')",
                timeout=CHANGE_TIMEOUT_MS,
            )
            second_text = verdict.inner_text()
            page.wait_for_function(
                "([i, old]) => JSON.stringify(Array.from("
                "document.querySelector('.js-plotly-plot').data[i].x)) !== old",
                arg=[hist, json.dumps(first_x)],
                timeout=CHANGE_TIMEOUT_MS,
            )
            second_x = _plot_data(page, hist)
            assert second_text != first_text and "Feasible at 1000 K" in second_text
            assert second_x != first_x
            output.first.screenshot(path=str(ARTIFACTS / "worksheet-2-temperature.png"))

            equation = page.locator(".feasibly-equation input")
            equation.fill("C4H10 -> C4H8 + H2")
            equation.press("Enter")
            page.wait_for_function(
                "() => document.querySelector('.js-plotly-plot .gtitle')"
                " && document.querySelector('.js-plotly-plot .gtitle').textContent"
                ".includes('C₄H₁₀')",
                timeout=CHANGE_TIMEOUT_MS,
            )
            page.wait_for_timeout(500)  # let the verdict line follow the redraw
            third_text, third_x = verdict.inner_text(), _plot_data(page, hist)
            median = TRACES.index("median")
            assert third_x != second_x
            assert third_text != second_text
            assert page.evaluate(
                "(i) => document.querySelector('.js-plotly-plot').data[i].name", median
            ).startswith("median")
            output.first.screenshot(path=str(ARTIFACTS / "worksheet-3-equation.png"))

            # Required conversion as the criterion: open its section, state the need, read it.
            page.get_by_text("Required conversion", exact=True).first.click()
            for placeholder, value in (
                ("e.g. C3H8:1, N2:4", "C4H10:1, N2:4"),
                ("e.g. C3H8", "C4H10"),
                ("e.g. 40%", "40%"),
            ):
                box = page.locator(f"input[placeholder='{placeholder}']")
                box.fill(value)
                box.press("Enter")
            page.wait_for_function(
                "() => [...document.querySelectorAll('.feasibly-note')]"
                ".some(e => e.textContent.includes('conversion of C4H10'))",
                timeout=CHANGE_TIMEOUT_MS,
            )
            assert page.locator("text=P(meets)").count() >= 1
            output.first.screenshot(path=str(ARTIFACTS / "worksheet-4-conversion.png"))
        finally:
            ctx.close()


def _expected_call_at_900_k() -> str:
    """The main worksheet's headline at 900 K as the kernel computes it (the worksheet's own
    defaults: 600–1100 K, 20 000 trials, seed 2026), so the test follows the data, not a copy."""
    from feasibly.uncertainty import assess_uncertainty

    u = assess_uncertainty(
        "C3H8 -> C3H6 + H2", T_range=("600 K", "1100 K"), points=11, samples=20_000, seed=2026
    )
    words = {"feasible": "Feasible", "not feasible": "Not feasible"}
    return f"{words.get(u.at('900 K')['verdict'], 'Too close to call')} at 900 K"
