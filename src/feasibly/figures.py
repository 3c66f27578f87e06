"""Plotly figures of a feasibility result: pure functions from results to figures.

Two steps keep the browser light and the widgets fast:

- :func:`curves` reads what does not depend on the selected temperature from an
  :class:`~feasibly.uncertainty.UncertainAssessment` (ΔrG bands over the grid, P(feasible), the
  crossover-temperature distribution), once per result;
- :func:`snapshot` reads one temperature from the kept draws (no re-sampling): the summary, a
  histogram of ΔrG and the ranked variance shares;
- :func:`feasibility_figure` turns both, plain data, into one four-panel figure.

Only binned counts and summary lines reach the figure; the sampled arrays never do. Colours are the
Okabe–Ito palette (distinguishable with the common colour-vision deficiencies). This module calls
the kernel and is called by :mod:`feasibly.widgets`; the kernel never imports it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ._palette import OKABE_ITO
from .thermo.safety import DEFERRAL, cautions_for
from .uncertainty import UncertainAssessment
from .uncertainty.linear import summarise
from .units import TEMPERATURE_UNITS, from_kelvin

__all__ = [
    "PALETTE",
    "TEMPERATURE_UNITS",
    "TRACES",
    "Curves",
    "Snapshot",
    "cautions",
    "curves",
    "feasibility_figure",
    "formation_figure",
    "from_kelvin",
    "route_figure",
    "snapshot",
    "snapshot_patch",
    "sweep_figure",
]

#: Okabe & Ito (2008), "Color Universal Design": safe for deuteranopia, protanopia, tritanopia.
PALETTE = OKABE_ITO
#: Display units of temperature and their pint spelling.
# 68 % is the one-standard-deviation band of a normal output (68.27 %, rounded as usually quoted).
_INNER_COVERAGE = 0.68
# Histogram bins: ~√N would be 140 at N = 20 000; 40 keep each bar readable at panel width.
_BINS = 40
# Variance shares shown: the largest eight; the rest are summed into one bar.
_TOP_SHARES = 8
_QUANTITY_LABEL = {"dHf": "ΔfH°", "S298": "S°", "cp": "Cp"}


@dataclass(frozen=True)
class Curves:
    """What one result shows over its temperature grid (ΔrG in kJ/mol, T in K)."""

    equation: str
    T_K: np.ndarray
    median: np.ndarray
    lo95: np.ndarray
    hi95: np.ndarray
    lo68: np.ndarray
    hi68: np.ndarray
    p_feasible: np.ndarray
    confidence: float
    threshold_kJ: float
    standard_state: bool
    crossing_edges_K: np.ndarray
    crossing_percent: np.ndarray
    crossing_none_percent: float


@dataclass(frozen=True)
class Snapshot:
    """One temperature read from the kept draws."""

    T_K: float
    median_kJ: float
    lo95_kJ: float
    hi95_kJ: float
    p_feasible: float
    p_feasible_se: float
    verdict: str
    hist_edges_kJ: np.ndarray
    hist_percent: np.ndarray
    shares: tuple[tuple[str, float], ...]


def curves(result: UncertainAssessment) -> Curves:
    """The temperature-independent part of the figure, from one result (computed once)."""
    inner = summarise(
        result.model,
        result.samples,
        "G",
        result.threshold_J_per_mol,
        coverage=_INNER_COVERAGE,
    )
    thr = np.atleast_1d(result.threshold_J_per_mol)
    edges = np.linspace(float(result.T[0]), float(result.T[-1]), 41)
    percent = np.zeros(edges.size - 1)
    none = 100.0
    if result.crossing_range is not None:
        summary = result.crossover()
        none = 100.0 * summary["fraction_none"]
        crossings = result.crossing_temperatures()
        counts, _ = np.histogram(crossings[np.isfinite(crossings)], bins=edges)
        percent = 100.0 * counts / result.trials
    return Curves(
        equation=result.reaction.equation(pretty=True),
        T_K=np.asarray(result.T, dtype=float),
        median=result.G.median / 1000,
        lo95=result.G.lo / 1000,
        hi95=result.G.hi / 1000,
        lo68=inner.lo / 1000,
        hi68=inner.hi / 1000,
        p_feasible=np.asarray(result.p_feasible, dtype=float),
        confidence=float(result.confidence),
        threshold_kJ=float(thr[0]) / 1000,
        standard_state=not (result.partial_pressures_Pa or result.at_conversion),
        crossing_edges_K=edges,
        crossing_percent=percent,
        crossing_none_percent=float(none),
    )


def snapshot(result: UncertainAssessment, T_K: float, bins: int = _BINS) -> Snapshot:
    """The state at one temperature (K) from the kept draws, without re-sampling."""
    row = result.at((float(T_K), "K"))
    draws = result.samples_at(float(T_K)) / 1000
    counts, edges = np.histogram(draws, bins=bins)
    rows = result.sensitivity((float(T_K), "K"))
    rows = sorted(rows, key=lambda r: -r["share"])
    shares = [
        (f"{r['species']} {_QUANTITY_LABEL.get(r['quantity'], r['quantity'])}", r["share"])
        for r in rows[:_TOP_SHARES]
    ]
    rest = sum(r["share"] for r in rows[_TOP_SHARES:])
    if rest > 0:
        others = len(rows) - _TOP_SHARES
        shares.append((f"{others} other{'s' if others > 1 else ''}", rest))
    return Snapshot(
        T_K=float(T_K),
        median_kJ=row["dG_median_J_per_mol"] / 1000,
        lo95_kJ=row["dG_lo_J_per_mol"] / 1000,
        hi95_kJ=row["dG_hi_J_per_mol"] / 1000,
        p_feasible=row["P_feasible"],
        p_feasible_se=row["P_feasible_se"],
        verdict=row["verdict"],
        hist_edges_kJ=edges,
        hist_percent=100.0 * counts / draws.size,
        shares=tuple(shares),
    )


def cautions(result: UncertainAssessment) -> list[str]:
    """The kernel's plain-words cautions for this result's reaction over its grid, and the deferral.

    Empty when no caution applies (which does not mean the step is safe; see the README).
    """
    found = cautions_for(
        result.reaction, result.T, result.H.mean, result.library, result.partial_pressures_Pa
    )
    return [c.message for c in found] + ([DEFERRAL] if found else [])


def _gibbs_symbol(c: Curves) -> str:
    return "ΔrG°" if c.standard_state else "ΔrG"


# Fixed trace order of :func:`feasibility_figure`; the ones after _FIRST_SNAPSHOT_TRACE follow the
# selected temperature and are what :func:`snapshot_patch` replaces.
TRACES = (
    "95 % upper",
    "95 % interval",
    "68 % upper",
    "68 % interval",
    "median",
    "zero line",
    "crossover temperature",
    "P(feasible)",
    "confidence level",
    "selected temperature",
    "P at the selected temperature",
    "histogram",
    "zero line (histogram)",
    "variance shares",
)
_FIRST_SNAPSHOT_TRACE = TRACES.index("selected temperature")
# In the ΔrG panel the ΔrG traces sit on plotly's overlaying ("secondary") y axis and the crossover
# histogram on the one below it: an overlaying axis is drawn on top, so the bars never hide the
# selected-temperature marker or the median line. The ΔrG axis is still shown on the left.
_GIBBS_AXIS = True


def snapshot_patch(c: Curves, s: Snapshot, temperature_unit: str = "K") -> dict[str, Any]:
    """What changes with the selected temperature: trace updates by index, titles, axis ranges.

    ``{"traces": {index: properties}, "titles": {annotation index: text}, "layout": {...}}``;
    a widget applies it inside one ``batch_update`` without rebuilding the figure.
    """
    u = temperature_unit
    g = _gibbs_symbol(c)
    t_sel = float(from_kelvin(s.T_K, u))
    centres = 0.5 * (s.hist_edges_kJ[1:] + s.hist_edges_kJ[:-1])
    top = max(float(np.max(s.hist_percent)) if s.hist_percent.size else 1.0, 1e-9)
    span = (
        min(float(s.hist_edges_kJ[0]), c.threshold_kJ),
        max(float(s.hist_edges_kJ[-1]), c.threshold_kJ),
    )
    pad = 0.05 * (span[1] - span[0] or 1.0)
    shares = list(reversed(s.shares))
    i = TRACES.index
    return {
        "traces": {
            i("selected temperature"): {
                "x": [t_sel],
                "y": [s.median_kJ],
                "error_y": {
                    "array": [s.hi95_kJ - s.median_kJ],
                    "arrayminus": [s.median_kJ - s.lo95_kJ],
                },
            },
            i("P at the selected temperature"): {"x": [t_sel], "y": [100 * s.p_feasible]},
            i("histogram"): {
                "x": centres,
                "y": s.hist_percent,
                "width": float(np.diff(s.hist_edges_kJ).mean()),
            },
            i("zero line (histogram)"): {"y": [0, 1.1 * top]},
            i("variance shares"): {
                "x": [100 * v for _, v in shares],
                "y": [name for name, _ in shares],
            },
        },
        "titles": {
            2: f"{g} at {t_sel:.6g} {u}: spread of the trials",
            3: f"Share of the variance of {g} at {t_sel:.6g} {u}",
        },
        "layout": {
            "xaxis3": {"range": [span[0] - pad, span[1] + pad]},
            "yaxis4": {"range": [0, 1.1 * top]},
        },
    }


def curves_patch(c: Curves, temperature_unit: str = "K") -> dict[str, Any]:
    """What changes with a new result (equation, pressures, sampling): the curve traces by
    index, the titles that name ΔrG or ΔrG°, and the main title.

    ``{"traces": {index: properties}, "titles": {annotation index: text}, "layout": {...}}``,
    like :func:`snapshot_patch`; together they turn a figure drawn for one result into the
    figure of another (same display unit) inside one ``batch_update``, with no rebuild.
    """
    u = temperature_unit
    g = _gibbs_symbol(c)
    T = from_kelvin(c.T_K, u)
    thr = c.threshold_kJ
    zero_name = f"{g} = {thr:g} kJ/mol" if thr else f"{g} = 0"
    mid = 0.5 * (c.crossing_edges_K[1:] + c.crossing_edges_K[:-1])
    i = TRACES.index
    return {
        "traces": {
            i("95 % upper"): {"x": T, "y": c.hi95},
            i("95 % interval"): {"x": T, "y": c.lo95},
            i("68 % upper"): {"x": T, "y": c.hi68},
            i("68 % interval"): {"x": T, "y": c.lo68},
            i("median"): {"x": T, "y": c.median, "name": f"median {g}"},
            i("zero line"): {"x": [T[0], T[-1]], "y": [thr, thr], "name": zero_name},
            i("crossover temperature"): {"x": from_kelvin(mid, u), "y": c.crossing_percent},
            i("P(feasible)"): {"x": T, "y": 100 * c.p_feasible},
            i("confidence level"): {
                "x": [T[0], T[-1], None, T[0], T[-1]],
                "y": [100 * c.confidence] * 2 + [None] + [100 * (1 - c.confidence)] * 2,
                "name": (
                    f"confidence level {100 * c.confidence:g} % / {100 * (1 - c.confidence):g} %"
                ),
            },
            i("zero line (histogram)"): {"x": [thr, thr], "name": zero_name + " (histogram)"},
        },
        "titles": {0: f"{g} against temperature"},
        "layout": {
            "title": {"text": c.equation},
            "xaxis3": {"title": {"text": f"{g} (kJ/mol)"}},
            # The ΔrG axis of the first panel: plotly's overlaying axis (yaxis2), see _GIBBS_AXIS.
            ("yaxis2" if _GIBBS_AXIS else "yaxis"): {"title": {"text": f"{g} (kJ/mol)"}},
        },
    }


def apply_patch(fig: Any, patch: dict[str, Any]) -> None:
    """Apply a :func:`curves_patch` or :func:`snapshot_patch` to ``fig`` (call inside a
    ``batch_update`` for a FigureWidget, so the browser gets one message)."""
    for index, props in patch["traces"].items():
        fig.data[index].update(props)
    for index, text in patch["titles"].items():
        fig.layout.annotations[index].text = text
    fig.update_layout(patch["layout"])


def feasibility_figure(
    c: Curves,
    s: Snapshot,
    temperature_unit: str = "K",
    width: int | None = None,
    height: int = 660,
) -> Any:
    """Four panels: ΔrG bands over T, P(feasible) over T, ΔrG at T, and the variance shares.

    The trace list is fixed (:data:`TRACES`), so a widget can update it in place with
    :func:`snapshot_patch`. ``temperature_unit`` is the display unit of every temperature axis.
    """
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots

    u = temperature_unit
    g = _gibbs_symbol(c)
    T = from_kelvin(c.T_K, u)
    fig = make_subplots(
        rows=2,
        cols=2,
        specs=[[{"secondary_y": True}, {}], [{}, {}]],
        subplot_titles=(
            f"{g} against temperature",
            "Chance that the step is feasible",
            " ",  # replaced by the selected temperature's titles below
            " ",
        ),
        horizontal_spacing=0.2,
        vertical_spacing=0.22,
    )
    band = dict(mode="lines", line={"width": 0}, hoverinfo="skip", showlegend=False)

    def interval(hi: np.ndarray, lo: np.ndarray, label: str, fill: str) -> list[Any]:
        """An invisible upper edge, then the lower edge filled up to it (one legend entry)."""
        upper = go.Scatter(x=T, y=hi, name=f"{label} upper", **band)
        lower = go.Scatter(
            x=T,
            y=lo,
            name=f"{label} interval",
            fill="tonexty",
            fillcolor=fill,
            **{**band, "showlegend": True},
        )
        return [(upper, 1, 1, _GIBBS_AXIS), (lower, 1, 1, _GIBBS_AXIS)]

    thr = c.threshold_kJ
    zero_name = f"{g} = {thr:g} kJ/mol" if thr else f"{g} = 0"
    mid = 0.5 * (c.crossing_edges_K[1:] + c.crossing_edges_K[:-1])
    traces: list[tuple[Any, int, int, bool]] = [
        *interval(c.hi95, c.lo95, "95 %", "rgba(86,180,233,0.30)"),
        *interval(c.hi68, c.lo68, "68 %", "rgba(0,114,178,0.40)"),
        (
            go.Scatter(
                x=T,
                y=c.median,
                name=f"median {g}",
                mode="lines",
                line={"color": PALETTE["blue"], "width": 2.5},
            ),
            1,
            1,
            _GIBBS_AXIS,
        ),
        (
            go.Scatter(
                x=[T[0], T[-1]],
                y=[thr, thr],
                name=zero_name,
                mode="lines",
                line={"color": PALETTE["black"], "width": 1.5, "dash": "dash"},
            ),
            1,
            1,
            _GIBBS_AXIS,
        ),
        (
            go.Bar(
                x=from_kelvin(mid, u),
                y=c.crossing_percent,
                name="crossover temperature (right axis)",
                marker={"color": PALETTE["orange"], "line": {"width": 0}},
                opacity=0.7,
            ),
            1,
            1,
            not _GIBBS_AXIS,
        ),
        (
            go.Scatter(
                x=T,
                y=100 * c.p_feasible,
                name="P(feasible)",
                mode="lines",
                line={"color": PALETTE["green"], "width": 2.5},
                showlegend=False,
            ),
            1,
            2,
            False,
        ),
        (
            go.Scatter(
                x=[T[0], T[-1], None, T[0], T[-1]],
                y=[100 * c.confidence] * 2 + [None] + [100 * (1 - c.confidence)] * 2,
                name=f"confidence level {100 * c.confidence:g} % / {100 * (1 - c.confidence):g} %",
                mode="lines",
                line={"color": PALETTE["black"], "width": 1.5, "dash": "dot"},
                showlegend=False,
            ),
            1,
            2,
            False,
        ),
        (
            go.Scatter(
                x=[None],
                y=[None],
                error_y={"type": "data", "symmetric": False, "color": PALETTE["vermillion"]},
                name="selected temperature (95 % interval)",
                mode="markers",
                marker={"color": PALETTE["vermillion"], "size": 11, "symbol": "diamond"},
            ),
            1,
            1,
            _GIBBS_AXIS,
        ),
        (
            go.Scatter(
                x=[None],
                y=[None],
                name="P at the selected temperature",
                mode="markers",
                marker={"color": PALETTE["vermillion"], "size": 11, "symbol": "diamond"},
                showlegend=False,
            ),
            1,
            2,
            False,
        ),
        (
            go.Bar(
                x=[],
                y=[],
                name="trials at the selected temperature",
                marker={"color": PALETTE["sky"], "line": {"width": 0}},
                showlegend=False,
            ),
            2,
            1,
            False,
        ),
        (
            go.Scatter(
                x=[thr, thr],
                y=[0, 1],
                name=zero_name + " (histogram)",
                mode="lines",
                line={"color": PALETTE["black"], "width": 1.5, "dash": "dash"},
                showlegend=False,
            ),
            2,
            1,
            False,
        ),
        (
            go.Bar(
                x=[],
                y=[],
                orientation="h",
                name="share of the variance",
                marker={"color": PALETTE["purple"]},
                showlegend=False,
            ),
            2,
            2,
            False,
        ),
    ]
    for trace, row, col, secondary in traces:
        fig.add_trace(trace, row, col, secondary_y=secondary)
    fig.update_xaxes(title_text=f"temperature ({u})", row=1, col=1)
    fig.update_xaxes(title_text=f"temperature ({u})", row=1, col=2)
    fig.update_xaxes(title_text=f"{g} (kJ/mol)", row=2, col=1)
    fig.update_xaxes(title_text="share of the variance (%)", range=[0, 100], row=2, col=2)
    # The overlaying axis would otherwise take its ticks from the histogram's axis ("sync"),
    # which gave ΔrG ticks such as −30.7, 3.4, 37.4; it keeps its own round ticks and grid.
    fig.update_yaxes(
        title_text=f"{g} (kJ/mol)",
        row=1,
        col=1,
        secondary_y=_GIBBS_AXIS,
        side="left",
        tickmode="auto",
        showgrid=True,
    )
    # No fixed tick format: the crossing shares are often below 1 %, where a whole-number format
    # printed every tick as "0"; plotly's own format keeps the significant digits.
    fig.update_yaxes(
        title_text="trials crossing here (%)",
        row=1,
        col=1,
        secondary_y=not _GIBBS_AXIS,
        side="right",
        showgrid=False,
        zeroline=False,
        rangemode="tozero",
        nticks=4,
    )
    fig.update_yaxes(title_text="P(feasible) (%)", range=[-2, 102], row=1, col=2)
    fig.update_yaxes(title_text="trials (%)", row=2, col=1)
    fig.update_yaxes(automargin=True, row=2, col=2)
    fig.update_layout(
        height=height,
        width=width,
        margin={"l": 70, "r": 40, "t": 135, "b": 60},
        template="plotly_white",
        font={"size": 12},
        bargap=0.05,
        legend={"orientation": "h", "y": 1.2, "x": 0, "font": {"size": 11}},
        title={"text": c.equation, "x": 0.5, "y": 0.99, "yanchor": "top", "font": {"size": 15}},
    )
    for ann in fig.layout.annotations:  # subplot titles a little smaller than the main title
        ann.font = {"size": 12}
    apply_patch(fig, snapshot_patch(c, s, u))
    return fig


def sweep_figure(
    x: Sequence[float],
    series: Sequence[tuple[str, Sequence[float]]],
    x_title: str,
    y_title: str,
    title: str,
    y_line: float | None = None,
    log_x: bool = False,
) -> Any:
    """One or more lines against one swept condition (e.g. P(feasible) against a partial pressure).

    ``x_title`` and ``y_title`` carry their units; ``y_line`` draws a dashed reference level.
    """
    import plotly.graph_objects as go

    colours = [PALETTE[k] for k in ("blue", "vermillion", "green", "orange", "purple", "sky")]
    fig = go.Figure(
        layout={
            "template": "plotly_white",
            "height": 380,
            "title": {"text": title, "x": 0.5},
            "xaxis": {"title": {"text": x_title}, "type": "log" if log_x else "linear"},
            "yaxis": {"title": {"text": y_title}},
            "legend": {"orientation": "h", "y": -0.25},
        }
    )
    for i, (name, y) in enumerate(series):
        fig.add_trace(
            go.Scatter(
                x=list(x),
                y=list(y),
                name=name,
                mode="lines+markers",
                line={"color": colours[i % len(colours)], "width": 2.5},
            )
        )
    if y_line is not None:
        fig.add_trace(
            go.Scatter(
                x=[min(x), max(x)],
                y=[y_line, y_line],
                name="reference level",
                mode="lines",
                line={"color": PALETTE["black"], "dash": "dot", "width": 1.5},
            )
        )
    return fig


def route_figure(routes: Sequence[tuple[str, Sequence[float], float, float]]) -> Any:
    """Grouped bars per route: each step's P(feasible), P(all steps) and the independence product.

    ``routes`` holds (route name, step probabilities, P(all), P(all) if the steps were independent).
    """
    import plotly.graph_objects as go

    fig = go.Figure(
        layout={
            "template": "plotly_white",
            "height": 380,
            "barmode": "group",
            "title": {"text": "Chance that each route works", "x": 0.5},
            "yaxis": {"title": {"text": "probability (%)"}, "range": [0, 105]},
            "xaxis": {"title": {"text": "route"}},
            "legend": {"orientation": "h", "y": -0.25},
        }
    )
    names = [r[0] for r in routes]
    longest = max(len(r[1]) for r in routes)
    shades = ["sky", "blue", "green", "yellow"]
    for k in range(longest):
        fig.add_trace(
            go.Bar(
                x=names,
                y=[100 * r[1][k] if k < len(r[1]) else None for r in routes],
                name=f"step {k + 1} alone",
                marker={"color": PALETTE[shades[k % len(shades)]]},
            )
        )
    fig.add_trace(
        go.Bar(
            x=names,
            y=[100 * r[2] for r in routes],
            name="all steps (shared draws)",
            marker={"color": PALETTE["vermillion"]},
        )
    )
    fig.add_trace(
        go.Bar(
            x=names,
            y=[100 * r[3] for r in routes],
            name="all steps if independent",
            marker={"color": PALETTE["orange"], "pattern": {"shape": "/"}},
        )
    )
    return fig


def formation_figure(lines: Any, temperature_unit: str = "K") -> Any:
    """Formation lines (the Ellingham diagram) of a :class:`~feasibly.comparison.FormationLines`:
    top, ΔrG° per mole of reagent with the 95 % band of each line and its phase changes marked;
    below, for oxides, the CO/CO2 (solid) and H2/H2O (dashed) ratio each reduction needs, on a
    log scale — where a line sits below the reductant's own, that gas reduces the oxide there.
    """
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots

    colours = [PALETTE[k] for k in ("blue", "vermillion", "green", "orange", "purple", "sky")]
    x = from_kelvin(lines.T, temperature_unit).tolist()
    rows = 2 if lines.ratios else 1
    fig = make_subplots(
        rows=rows,
        cols=1,
        shared_xaxes=True,
        vertical_spacing=0.08,
        row_heights=[0.62, 0.38][:rows] if rows == 2 else [1.0],
    )
    for i, label in enumerate(lines.labels):
        colour = colours[i % len(colours)]
        y = (lines.G[i] / 1000).tolist()
        if lines.bands is not None:
            lo = (lines.bands[0, i] / 1000).tolist()
            hi = (lines.bands[-1, i] / 1000).tolist()
            fig.add_trace(
                go.Scatter(
                    x=x + x[::-1],
                    y=hi + lo[::-1],
                    fill="toself",
                    fillcolor=colour,
                    opacity=0.18,
                    line={"width": 0},
                    hoverinfo="skip",
                    showlegend=False,
                    name=f"{label} 95 %",
                ),
                row=1,
                col=1,
            )
        fig.add_trace(
            go.Scatter(x=x, y=y, name=label, mode="lines", line={"color": colour, "width": 2.5}),
            row=1,
            col=1,
        )
        for species, t, _, after in lines.phase_changes[i]:
            g = float(np.interp(t, lines.T, lines.G[i])) / 1000
            fig.add_trace(
                go.Scatter(
                    x=from_kelvin([t], temperature_unit).tolist(),
                    y=[g],
                    mode="markers",
                    marker={"symbol": "diamond-open", "size": 10, "color": colour},
                    name=f"{species} → {after}",
                    showlegend=False,
                    hovertext=f"{species} becomes {after} at {t:.0f} K",
                ),
                row=1,
                col=1,
            )
        for name, dash in (("CO/CO2", "solid"), ("H2/H2O", "dash")):
            if name not in lines.ratios:
                continue
            fig.add_trace(
                go.Scatter(
                    x=x,
                    y=(10 ** lines.ratios[name]["nominal"][i]).tolist(),
                    mode="lines",
                    line={"color": colour, "dash": dash, "width": 1.8},
                    name=f"{label}: {name} needed",
                    showlegend=False,
                ),
                row=2,
                col=1,
            )
    per = lines.reagent
    fig.update_layout(
        template="plotly_white",
        height=620 if rows == 2 else 420,
        title={"text": f"Formation lines per mole of {per} (lower = more stable)", "x": 0.5},
        legend={"orientation": "h", "y": -0.12},
    )
    fig.update_yaxes(title_text=f"ΔrG° (kJ per mol {per})", row=1, col=1)
    if rows == 2:
        fig.update_yaxes(
            title_text="ratio needed (CO/CO2 solid, H2/H2O dashed)",
            type="log",
            exponentformat="power",
            row=2,
            col=1,
        )
    fig.update_xaxes(title_text=f"temperature ({temperature_unit})", row=rows, col=1)
    return fig
