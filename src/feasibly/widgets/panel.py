"""Feasibility panel: the figures, the call in words and the cautions, for one result."""

from __future__ import annotations

import html
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

import ipywidgets as w
from traitlets import Enum, Float, Instance, Int, Unicode

from .. import figures
from ..errors import FeasiblyError
from ..heat import result_cautions
from ..uncertainty import UncertainAssessment
from ._common import (
    TEMPERATURE_UNITS,
    error_html,
    figure_html,
    fmt_T,
    guarded,
    note_html,
    static_copy_wanted,
)

__all__ = ["FeasibilityPanel", "in_words", "percent"]

# Figure width in px: plotly's FigureWidget does not follow its container; 840 px fits the
# output area of a JupyterLab notebook at its default width, with every label legible.
_WIDTH = 840


def percent(p: float, trials: int) -> str:
    """A probability as a percentage, without claiming more than the trials resolve."""
    floor = 1.0 / trials
    if p >= 1.0 - floor / 2:
        return f"> {100 * (1 - floor):.6g} %"
    if p <= floor / 2:
        return f"< {100 * floor:.2g} %"
    return f"{100 * p:.1f} %"


def in_words(verdict: str, p: float, confidence: float, trials: int, T: str, g: str) -> str:
    """The verdict with its probability, in plain words."""
    chance = percent(p, trials)
    level = f"{100 * confidence:g} %"
    if verdict == "feasible":
        return (
            f"Feasible at {T}: {g} is below zero in {chance} of the trials, which meets the "
            f"{level} confidence asked for."
        )
    if verdict == "not feasible":
        return (
            f"Not feasible at {T}: {g} is below zero in only {chance} of the trials; at "
            f"{level} confidence the data rule the step out."
        )
    return (
        f"Too close to call at {T}: {g} is below zero in {chance} of the trials. The data "
        f"cannot decide at {level} confidence; better data on the leading inputs (right-hand "
        "panel) would."
    )


class FeasibilityPanel(w.VBox):
    """Figures and the verdict for one :class:`~feasibly.uncertainty.UncertainAssessment`.

    Traits: ``result`` (kept in the kernel, never synced), ``temperature`` (selected, K),
    ``temperature_unit``, and the outputs ``verdict`` ("feasible", "not feasible", "too close to
    call"), ``probability``, ``summary`` (the verdict in words), ``error``, ``evaluations``
    (how many times the panel has been evaluated: one per change). A new temperature is read from
    the kept draws (``result.at``), never re-sampled.
    """

    result = Instance(UncertainAssessment, allow_none=True, help="the result shown (not synced)")
    temperature = Float(298.15, help="selected temperature, K")
    temperature_unit = Enum(list(TEMPERATURE_UNITS), "K", help="display unit")
    verdict = Unicode("", help="the call at the selected temperature")
    probability = Float(float("nan"), help="P(feasible) at the selected temperature")
    summary = Unicode("", help="the verdict with its probability, in words")
    error = Unicode("", help="why the last change could not be shown, '' when none")
    evaluations = Int(0, help="number of evaluations so far")

    def __init__(
        self,
        result: UncertainAssessment | None = None,
        temperature: float | None = None,
        **kwargs: Any,
    ) -> None:
        self._verdict = w.HTML()
        self._cautions = w.HTML()
        self._feedback = w.HTML()
        self._plot = w.Box(layout=w.Layout(width="100%"))
        self.figure: Any = None
        self._curves: figures.Curves | None = None
        self._curves_of: UncertainAssessment | None = None
        self._held = 0
        self._pending = False
        self._shown: tuple[Any, float, str] | None = None
        super().__init__(**kwargs)
        self.children = [self._verdict, self._feedback, self._plot, self._cautions]
        if result is not None:
            self.result = result
            self.temperature = (
                temperature if temperature is not None else float(result.T[len(result.T) // 2])
            )
        self._update(None)
        self.observe(self._update, names=["result", "temperature", "temperature_unit"])

    @contextmanager
    def hold(self) -> Iterator[None]:
        """Change several traits and evaluate once at the end."""
        self._held += 1
        try:
            yield
        finally:
            self._held -= 1
            if self._held == 0 and self._pending:
                self._pending = False
                self._update(None)

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        if self._held:
            self._pending = True
            return
        r = self.result
        if r is None:
            return
        key = (r, self.temperature, self.temperature_unit)
        if key == self._shown:
            return
        self.evaluations += 1
        try:
            if self._curves_of is not r:
                self._curves, self._curves_of = figures.curves(r), r
            assert self._curves is not None
            snap = figures.snapshot(r, self.temperature)
        except FeasiblyError as exc:
            self.error = f"{exc} Still showing {self._last_label()}."
            self._feedback.value = error_html(self.error)
            return
        c = self._curves
        u = self.temperature_unit
        if self.figure is None or self._shown is None or self._shown[2] != u:
            # First drawing, or a new display unit (every axis and title changes): draw whole.
            self._draw(figures.feasibility_figure(c, snap, u, width=_WIDTH))
        else:
            # Same figure, same traces: a new result patches the curves, a new temperature
            # the selected-temperature traces, in one message to the browser.
            with self.figure.batch_update():
                if self._shown[0] is not r:
                    figures.apply_patch(self.figure, figures.curves_patch(c, u))
                figures.apply_patch(self.figure, figures.snapshot_patch(c, snap, u))
        self._shown = key
        g = "ΔrG°" if c.standard_state else "ΔrG"
        self.verdict, self.probability, self.error = snap.verdict, snap.p_feasible, ""
        self.summary = in_words(
            snap.verdict, snap.p_feasible, c.confidence, r.trials, fmt_T(self.temperature, u), g
        )
        se = (
            f"{100 * snap.p_feasible_se:.2g} %"
            if snap.p_feasible_se > 0
            else f"< {100 / r.trials:.2g} %"
        )
        colour = {"feasible": "#009E73", "not feasible": "#D55E00"}.get(snap.verdict, "#E69F00")
        self._verdict.value = (
            "<div class='feasibly-verdict' "
            f"style='border-left:6px solid {colour};padding:4px 10px;font-size:15px'>"
            f"<b>{html.escape(self.summary)}</b><br><span style='font-size:12px'>"
            + html.escape(
                f"{g} at {r.conditions}; " if r.conditions else "ΔrG° at standard state; "
            )
            + f"median {g} = {snap.median_kJ:.1f} kJ/mol, 95 % interval {snap.lo95_kJ:.1f} to "
            f"{snap.hi95_kJ:.1f} kJ/mol; {r.trials:,} trials, seed {r.samples.seed}; "
            f"Monte Carlo standard error of P: {se}</span></div>"
        )
        self._feedback.value = ""
        self._cautions.value = self._caution_html(r)

    def static_html(self) -> str:
        """The call, the figure (as an SVG image) and the cautions as plain HTML: what a copy
        without live widgets shows. Empty when there is no result."""
        if self.result is None or self.figure is None:
            return ""
        alt = f"Feasibility figure of {self.result.reaction.equation()}"
        return self._verdict.value + figure_html(self.figure, alt) + self._cautions.value

    def _repr_mimebundle_(self, **kwargs: Any) -> Any:
        bundle = super()._repr_mimebundle_(**kwargs)
        if static_copy_wanted() and isinstance(bundle, dict) and self.result is not None:
            bundle["text/html"] = self.static_html()
        return bundle

    def on_screen(self) -> tuple[UncertainAssessment, float, Any] | None:
        """(result, selected temperature in K, the plotly figure) shown, or None."""
        if self.result is None or self.figure is None:
            return None
        return self.result, float(self.temperature), self.figure

    def _draw(self, fig: Any) -> None:
        import plotly.graph_objects as go

        # layout= in the constructor: layout changed before the first display is lost otherwise.
        if self.figure is None:
            self.figure = go.FigureWidget(data=fig.data, layout=fig.layout)
            self._plot.children = [self.figure]
            return
        with self.figure.batch_update():
            for old, new in zip(self.figure.data, fig.data, strict=True):
                props = new.to_plotly_json()
                props.pop("type", None)
                props.pop("uid", None)
                old.update(props, overwrite=True)
            self.figure.layout = fig.layout

    def _last_label(self) -> str:
        if self._shown is None:
            return "nothing yet"
        return f"{fmt_T(self._shown[1], self._shown[2])}"

    @staticmethod
    def _caution_html(r: UncertainAssessment) -> str:
        found = result_cautions(r)  # the exotherm caution with its interval from r's draws
        if not found:
            return ""
        items = "".join(f"<li>{html.escape(m)}</li>" for m in found)
        return note_html(
            f"<b>Cautions</b> (not a hazard assessment)<ul style='margin:2px 0'>{items}</ul>",
            raw=True,
        )

    def __repr__(self) -> str:
        if self.result is None:
            return "<FeasibilityPanel: no result>"
        return (
            f"<FeasibilityPanel {self.result.reaction.equation()} at {self.temperature:.2f} K: "
            f"{self.verdict}, P(feasible) = {self.probability:.3f}>"
        )
