"""Static images (PNG, SVG) of plotly figures, drawn by a local Chromium with no network.

plotly.js itself draws the figure (the copy bundled with the installed plotly package, written
inline into a temporary page) and exports it with its own ``Plotly.toImage``, so the image is the
figure the widgets show. The browser is Debian's ``chromium`` (or the one named by the
``FEASIBLY_CHROMIUM`` environment variable), run headless in a throw-away profile with every host
name unresolvable: nothing is downloaded, nothing leaves the machine. plotly's ``kaleido`` 1.5
(through ``choreographer``) also finds ``/usr/bin/chromium`` on Debian and wrote a PNG here without
a download, but it adds four packages (kaleido, choreographer, logistro, simplejson) for the same
result.

Beside :mod:`feasibly.figures`; the kernel never imports this module.
"""

from __future__ import annotations

import base64
import html
import json
import os
import re
import shutil
import subprocess
import tempfile
import urllib.parse
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from .errors import ExportError, InvalidInput

__all__ = ["FORMATS", "export_result", "figure_images", "find_chromium", "render_figure"]

#: The image formats written.
FORMATS = ("png", "svg")
# Two device pixels per CSS pixel: a PNG that stays sharp on a slide or a high-density screen.
_PNG_SCALE = 2
# Chromium's virtual clock budget for drawing and exporting (ms); plotly finishes in < 1 s of it.
_VIRTUAL_TIME_MS = 20_000
# Wall-clock limit of one browser run (s): a cold start on a slow 2-core machine takes about 5 s.
_TIMEOUT_S = 120
# The same flags as the browser tests, plus no host name resolving at all (strictly offline).
_FLAGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-extensions",
    "--host-resolver-rules=MAP * ~NOTFOUND",
)


def find_chromium() -> str | None:
    """Path of the Chromium used for images: ``$FEASIBLY_CHROMIUM``, else ``chromium`` on PATH."""
    named = os.environ.get("FEASIBLY_CHROMIUM")
    if named:
        return named if Path(named).exists() else None
    for name in ("chromium", "chromium-browser"):
        found = shutil.which(name)
        if found:
            return found
    return "/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None


def _page(fig: Any, width: int, height: int) -> str:
    from plotly.offline import get_plotlyjs

    spec = fig.to_json()
    opts = json.dumps({"width": width, "height": height})
    png = json.dumps({"format": "png", "width": width, "height": height, "scale": _PNG_SCALE})
    return f"""<!doctype html><html><head><meta charset="utf-8"></head><body>
<div id="figure"></div><pre id="svg"></pre><pre id="png"></pre><pre id="error"></pre>
<script>{get_plotlyjs()}</script>
<script>
const spec = {spec};
const done = () => document.querySelectorAll('script').forEach(s => s.remove());
Plotly.newPlot('figure', spec.data, spec.layout, {{staticPlot: true}})
  .then(gd => Promise.all([
      Plotly.toImage(gd, Object.assign({{format: 'svg'}}, {opts})),
      Plotly.toImage(gd, {png})]))
  .then(([svg, png]) => {{
      document.getElementById('svg').textContent = svg;
      document.getElementById('png').textContent = png;
      document.getElementById('figure').remove();
      done();
  }})
  .catch(e => {{ document.getElementById('error').textContent = String(e); done(); }});
</script></body></html>"""


def _pre(dom: str, name: str) -> str:
    m = re.search(rf'<pre id="{name}">(.*?)</pre>', dom, re.DOTALL)
    return html.unescape(m.group(1)) if m else ""


def render_figure(
    fig: Any, width: int | None = None, height: int | None = None
) -> dict[str, bytes]:
    """``{"png": bytes, "svg": bytes}`` of a plotly figure, drawn offline by Chromium.

    ``width`` and ``height`` (CSS pixels) default to the figure's own layout size, else
    900 × 600. Raises :class:`~feasibly.errors.ExportError` when no Chromium is found or it
    cannot draw the figure.
    """
    browser = find_chromium()
    if browser is None:
        raise ExportError(
            "a figure as PNG/SVG",
            "no Chromium browser was found",
            "Install Debian's chromium (apt-get install chromium) or set FEASIBLY_CHROMIUM to "
            "a Chromium executable. Tables export without it.",
        )
    w = int(width or fig.layout.width or 900)
    h = int(height or fig.layout.height or 600)
    with tempfile.TemporaryDirectory(prefix="feasibly-image-") as tmp:
        page = Path(tmp) / "figure.html"
        page.write_text(_page(fig, w, h), encoding="utf-8")
        env = dict(os.environ, HOME=tmp, XDG_CONFIG_HOME=tmp, XDG_CACHE_HOME=tmp)
        cmd = [
            browser,
            *_FLAGS,
            f"--user-data-dir={Path(tmp) / 'profile'}",
            f"--virtual-time-budget={_VIRTUAL_TIME_MS}",
            "--dump-dom",
            page.as_uri(),
        ]
        try:
            run = subprocess.run(
                cmd, capture_output=True, text=True, timeout=_TIMEOUT_S, env=env, check=False
            )
        except (OSError, subprocess.TimeoutExpired) as exc:
            raise ExportError(
                "a figure as PNG/SVG", f"{browser} could not be run ({exc})", "Check the browser."
            ) from None
    dom = run.stdout
    error = _pre(dom, "error")
    svg_url, png_url = _pre(dom, "svg"), _pre(dom, "png")
    if (
        error
        or not svg_url.startswith("data:image/svg+xml")
        or not png_url.startswith("data:image/png;base64,")
    ):
        detail = error or (run.stderr.strip().splitlines() or ["no output"])[-1]
        raise ExportError(
            "a figure as PNG/SVG",
            f"{browser} did not draw it ({detail[:300]})",
            "Check that the browser starts headless on this machine.",
        )
    svg = urllib.parse.unquote(svg_url.split(",", 1)[1]).encode("utf-8")
    png = base64.b64decode(png_url.split(",", 1)[1])
    return {"png": png, "svg": svg}


def figure_images(
    fig: Any,
    stem: str | Path,
    formats: Sequence[str] = FORMATS,
    width: int | None = None,
    height: int | None = None,
) -> list[Path]:
    """Write ``stem.png`` and/or ``stem.svg`` of a plotly figure; returns the paths written."""
    unknown = [f for f in formats if f not in FORMATS]
    if unknown or not formats:
        raise InvalidInput("formats", "figure_images", "some of 'png', 'svg'", list(formats))
    images = render_figure(fig, width, height)
    stem = Path(stem)
    written = []
    try:
        stem.parent.mkdir(parents=True, exist_ok=True)
        for fmt in formats:
            target = stem.with_name(f"{stem.name}.{fmt}")
            target.write_bytes(images[fmt])
            written.append(target)
    except OSError as exc:
        raise ExportError(
            "a figure", f"{stem} cannot be written ({exc.strerror})", "Choose a writable folder."
        ) from None
    return written


def export_result(
    result: Any,
    folder: str | Path,
    stem: str = "feasibility",
    T_K: float | None = None,
    temperature_unit: str = "K",
    figures_too: bool = True,
) -> list[Path]:
    """Every table of a result as CSV and its figure as PNG and SVG, in ``folder``.

    ``result`` is an :class:`~feasibly.UncertainAssessment` (tables ``temperatures``, ``window``,
    ``sensitivity`` and the four-panel feasibility figure at ``T_K``, default the middle of the
    grid) or an :class:`~feasibly.Assessment` (table ``temperatures`` and ΔrG° against T).
    Returns the paths written; raises :class:`~feasibly.errors.ExportError` when a figure cannot
    be drawn (the tables are written first).
    """
    from .uncertainty import UncertainAssessment

    if isinstance(result, UncertainAssessment) and T_K is not None:
        result.sensitivity_T_K = float(T_K)
    written = list(result.write_tables(folder, stem))
    if not figures_too:
        return written
    try:
        from . import figures
    except ImportError:  # pragma: no cover - plotly is in the widgets extra
        raise ExportError(
            "the figure", "plotly is not installed", "Install feasibly[widgets]."
        ) from None
    if isinstance(result, UncertainAssessment):
        t = float(T_K) if T_K is not None else float(result.T[len(result.T) // 2])
        fig = figures.feasibility_figure(
            figures.curves(result), figures.snapshot(result, t), temperature_unit, width=900
        )
    else:
        s = result.standard
        g = "ΔrG°"
        fig = figures.sweep_figure(
            figures.from_kelvin(s.T, temperature_unit).tolist(),
            [(f"{g} (standard state)", (s.dG / 1000).tolist())]
            + (
                [("ΔrG at the partial pressures", (result.dG_actual / 1000).tolist())]
                if result.dG_actual is not None
                else []
            ),
            f"temperature ({temperature_unit})",
            f"{g} (kJ/mol)",
            result.reaction.equation(pretty=True),
            y_line=0.0,
        )
        fig.update_layout(width=800)
    written += figure_images(fig, Path(folder) / stem)
    return written
