"""Small inline SVG line charts for the decision-record report (no scripts, no network).

Colours are the Okabe–Ito palette (Okabe & Ito 2008, "Color Universal Design"), which stays
distinguishable under the common colour-vision deficiencies; lines also differ by dash pattern
so that a black-and-white print keeps them apart.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from html import escape

from .._palette import OKABE_ITO

__all__ = ["OKABE_ITO", "Band", "HLine", "Line", "chart", "nice_ticks"]


@dataclass(frozen=True)
class Line:
    x: Sequence[float]
    y: Sequence[float]
    label: str
    color: str = OKABE_ITO["blue"]
    dash: str = ""
    markers: bool = True


@dataclass(frozen=True)
class Band:
    x: Sequence[float]
    lo: Sequence[float]
    hi: Sequence[float]
    label: str
    color: str = OKABE_ITO["sky"]


@dataclass(frozen=True)
class HLine:
    y: float
    label: str
    color: str = OKABE_ITO["vermillion"]
    dash: str = "6 4"


def nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """About ``n`` round tick values covering [lo, hi] (steps of 1, 2 or 5 × 10^k)."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo]
    raw = (hi - lo) / max(n, 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw)
    first = math.ceil(lo / step - 1e-9) * step
    ticks = []
    t = first
    while t <= hi + step * 1e-9:
        ticks.append(0.0 if abs(t) < step * 1e-9 else t)
        t += step
    return ticks


def _fmt(v: float) -> str:
    # Thin space groups thousands (SI style); a true minus sign, not a hyphen.
    return f"{v:,.6g}".replace(",", "\u2009").replace("-", "\u2212")


def _finite(values: Sequence[float]) -> list[float]:
    return [float(v) for v in values if isinstance(v, (int, float)) and math.isfinite(v)]


def chart(
    *,
    title: str,
    x_label: str,
    y_label: str,
    lines: Sequence[Line] = (),
    bands: Sequence[Band] = (),
    hlines: Sequence[HLine] = (),
    y_limits: tuple[float, float] | None = None,
    width: int = 640,
    height: int = 300,
) -> str:
    """An SVG line chart: bands under lines, horizontal reference lines, axes with units."""
    legend: list[tuple[str, str, str]] = [(b.color, "band", b.label) for b in bands]
    legend += [(h.color, h.dash, h.label) for h in hlines]
    legend += [(s.color, s.dash or "solid", s.label) for s in lines]
    left, right, top = 78, 16, 34
    rows, lx = 1, float(left)
    for _, _, label in legend:
        w = 40 + 6.6 * len(label)
        if lx + w > width and lx > left:
            rows, lx = rows + 1, float(left)
        lx += w
    pw, ph = width - left - right, height - top - 70
    height += 18 * (rows - 1)
    xs = _finite([x for s in lines for x in s.x] + [x for b in bands for x in b.x])
    ys = _finite(
        [y for s in lines for y in s.y]
        + [y for b in bands for y in (*b.lo, *b.hi)]
        + [h.y for h in hlines]
    )
    if not xs:
        xs = [0.0, 1.0]
    if not ys:
        ys = [0.0, 1.0]
    x0, x1 = min(xs), max(xs)
    if x1 - x0 < 1e-9:  # one temperature: show ±50 K around it
        x0, x1 = x0 - 50.0, x1 + 50.0
    else:  # 2 %: end markers are drawn whole, not cut by the frame
        x0, x1 = x0 - 0.02 * (x1 - x0), x1 + 0.02 * (x1 - x0)
    y0, y1 = y_limits if y_limits is not None else (min(ys), max(ys))
    if y1 - y0 < 1e-12:
        y0, y1 = y0 - 1.0, y1 + 1.0
    if y_limits is None:
        pad = 0.06 * (y1 - y0)  # 6 %: keeps markers and band edges off the frame
        y0, y1 = y0 - pad, y1 + pad

    def px(x: float) -> float:
        return left + (x - x0) / (x1 - x0) * pw

    def py(y: float) -> float:
        return top + (y1 - y) / (y1 - y0) * ph

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="figure" viewBox="0 0 {width} {height}" '
        f'width="{width}" height="{height}" role="img" aria-label="{escape(title)}" '
        'font-family="sans-serif" font-size="12">',
        f"<title>{escape(title)}</title>",
        f'<text x="{left}" y="18" font-size="14" font-weight="bold">{escape(title)}</text>',
        f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="#fff" stroke="#444"/>',
    ]
    for t in nice_ticks(y0, y1):
        y = py(t)
        out.append(
            f'<line x1="{left}" y1="{y:.1f}" x2="{left + pw}" y2="{y:.1f}" stroke="#ddd"/>'
            f'<text x="{left - 6}" y="{y + 4:.1f}" text-anchor="end">{_fmt(t)}</text>'
        )
    for t in nice_ticks(x0, x1, 6):
        x = px(t)
        out.append(
            f'<line x1="{x:.1f}" y1="{top + ph}" x2="{x:.1f}" y2="{top + ph + 5}" stroke="#444"/>'
            f'<text x="{x:.1f}" y="{top + ph + 18}" text-anchor="middle">{_fmt(t)}</text>'
        )
    out.append(
        f'<text x="{left + pw / 2:.1f}" y="{top + ph + 36}" text-anchor="middle">'
        f"{escape(x_label)}</text>"
        f'<text transform="translate(16 {top + ph / 2:.1f}) rotate(-90)" text-anchor="middle">'
        f"{escape(y_label)}</text>"
    )
    # Series are drawn inside a nested <svg>, which clips them to the plot area.
    out.append(f'<svg x="{left}" y="{top}" width="{pw}" height="{ph}">')
    shift = f'transform="translate({-left} {-top})"'
    for b in bands:
        pts = [
            (px(x), py(lo), py(hi))
            for x, lo, hi in zip(b.x, b.lo, b.hi, strict=True)
            if all(math.isfinite(v) for v in (x, lo, hi))
        ]
        if len(pts) == 1:
            x, a, c = pts[0]
            out.append(
                f'<g {shift} stroke="{b.color}" stroke-width="3"><line x1="{x:.1f}" y1="{a:.1f}" '
                f'x2="{x:.1f}" y2="{c:.1f}"/><line x1="{x - 8:.1f}" y1="{a:.1f}" x2="{x + 8:.1f}" '
                f'y2="{a:.1f}"/><line x1="{x - 8:.1f}" y1="{c:.1f}" x2="{x + 8:.1f}" '
                f'y2="{c:.1f}"/></g>'
            )
        elif pts:
            ring = [f"{x:.1f},{a:.1f}" for x, a, _ in pts] + [
                f"{x:.1f},{c:.1f}" for x, _, c in reversed(pts)
            ]
            out.append(
                f'<polygon {shift} points="{" ".join(ring)}" fill="{b.color}" '
                'fill-opacity="0.35" stroke="none"/>'
            )
    for h in hlines:
        y = py(h.y)
        out.append(
            f'<line {shift} x1="{left}" y1="{y:.1f}" x2="{left + pw}" y2="{y:.1f}" '
            f'stroke="{h.color}" stroke-width="1.5" stroke-dasharray="{h.dash}"/>'
        )
    for s in lines:
        pts2 = [
            (px(x), py(y))
            for x, y in zip(s.x, s.y, strict=True)
            if math.isfinite(x) and math.isfinite(y)
        ]
        if len(pts2) > 1:
            path = " ".join(f"{x:.1f},{y:.1f}" for x, y in pts2)
            dash = f' stroke-dasharray="{s.dash}"' if s.dash else ""
            out.append(
                f'<polyline {shift} points="{path}" fill="none" stroke="{s.color}" '
                f'stroke-width="2"{dash}/>'
            )
        if s.markers or len(pts2) == 1:
            out.extend(
                f'<circle {shift} cx="{x:.1f}" cy="{y:.1f}" r="3.5" fill="{s.color}"/>'
                for x, y in pts2
            )
    out.append("</svg>")
    # Legend below the x-axis label, one entry per series, wrapped onto as many rows as needed.
    lx, ly = float(left), top + ph + 58.0
    for color, style, label in legend:
        w = 40 + 6.6 * len(label)  # 6.6 px per character of 12 px sans-serif, generously
        if lx + w > width and lx > left:
            lx, ly = float(left), ly + 18
        if style == "band":
            out.append(
                f'<rect x="{lx}" y="{ly - 9}" width="22" height="10" fill="{color}" '
                'fill-opacity="0.35"/>'
            )
        else:
            dash = "" if style == "solid" else f' stroke-dasharray="{style}"'
            out.append(
                f'<line x1="{lx}" y1="{ly - 4}" x2="{lx + 22}" y2="{ly - 4}" stroke="{color}" '
                f'stroke-width="2"{dash}/>'
            )
        out.append(f'<text x="{lx + 27}" y="{ly}">{escape(label)}</text>')
        lx += w
    out.append("</svg>")
    return "".join(out)
