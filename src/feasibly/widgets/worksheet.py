"""The composed worksheet: reaction, temperature, conditions and the feasibility panel, wired."""

from __future__ import annotations

from typing import Any

import ipywidgets as w
import numpy as np
from traitlets import Float, Instance, Int, List, Tuple, Unicode

from ..conditions import read_temperature
from ..errors import FeasiblyError
from ..library.catalogue import Library, default_library
from ..thermo.reaction import Reaction
from ..uncertainty import assess_uncertainty
from ._common import error_html, guarded, note_html, static_copy_wanted
from .conditions import Conditions
from .conversion import ConversionTarget
from .export import ResultExport
from .panel import FeasibilityPanel
from .reaction import ReactionBuilder
from .record import RecordExport
from .temperature import TemperatureControl

__all__ = ["FeasibilityWorksheet"]

# Default sampled window: the reaction's data range, capped at 2000 K above its lower end —
# wide enough for any bench or furnace step, narrow enough to keep the curves readable.
_WINDOW_SPAN_K = 2000.0
# 20 000 trials: P(feasible) near a 95 % level has a Monte Carlo standard error of 0.15 %, and a
# temperature change re-evaluates in about 20 ms.
_SAMPLES = 20_000
# 41 grid temperatures: curves smooth at panel width; the selected temperature is exact anyway.
_POINTS = 41


def _kelvin(x: Any) -> float:
    return read_temperature(x)


class FeasibilityWorksheet(w.VBox):
    """Everything in one widget: ``FeasibilityWorksheet("MgCO3 -> MgO + CO2", T="650 K")``.

    Parts (each a widget with its own traits): :attr:`reaction` (:class:`ReactionBuilder`),
    :attr:`temperature` (:class:`TemperatureControl`), :attr:`conditions`
    (:class:`Conditions`), :attr:`panel` (:class:`FeasibilityPanel`). Traits of the worksheet:
    ``T_window`` ((lo, hi) K sampled for the curves; (0, 0) for automatic), ``samples``,
    ``seed``, ``points``, ``confidence``, ``overrides``, ``library``, ``error`` and the counter
    ``resamples``. Changing the equation, window, conditions or sampling settings draws new
    samples once; changing the temperature only re-reads the kept draws. On bad input the
    kernel's message shows inline and the last good result stays on screen.
    """

    T_window = Tuple(Float(), Float(), default_value=(0.0, 0.0), help="(lo, hi) K; (0, 0) = auto")
    samples = Int(_SAMPLES, help="Monte Carlo trials")
    seed = Int(2026, help="seed of the draws (results are reproducible)")
    points = Int(_POINTS, help="grid temperatures of the curves")
    confidence = Float(0.95, help="confidence level of the call")
    overrides: List[Any] = List(help="feasibly.uncertainty.Override objects applied to the draws")
    library = Instance(Library, help="species library (default: the shipped one)")
    error = Unicode("", help="the kernel's message about the last change, '' when none")
    resamples = Int(0, help="how many times samples have been drawn")

    def __init__(
        self,
        equation: str = "MgCO3 -> MgO + CO2",
        T: Any = None,
        T_window: Any = None,
        partial_pressures: dict[str, str] | None = None,
        library: Library | None = None,
        **kwargs: Any,
    ) -> None:
        self._busy = False
        self._requested_T = _kelvin(T) if T is not None else None
        super().__init__(**kwargs)
        self.library = library or default_library()
        if T_window is not None:
            self.T_window = (_kelvin(T_window[0]), _kelvin(T_window[1]))
        self.reaction = ReactionBuilder(equation, library=self.library)
        self.temperature = TemperatureControl()
        self.conditions = Conditions()
        self.panel = FeasibilityPanel()
        self.export = RecordExport(lambda: self.panel.result)
        self.files = ResultExport(self.panel.on_screen)
        self.conversion = ConversionTarget()
        self._status = w.HTML()
        self._feedback = w.HTML()
        self.children = [
            w.HTML(
                "<b style='font-size:16px'>Is this step thermodynamically feasible?</b>"
                "<div style='font-size:12px'>Monte Carlo over the uncertainty of the property "
                "data. Thermodynamics only: nothing here speaks to rate, hazards or "
                "scale-up.</div>"
            ),
            self.reaction,
            self.temperature,
            self.conditions,
            self._feedback,
            self._status,
            self.panel,
            w.Accordion(
                children=[self.conversion, self.export, self.files],
                titles=(
                    "Required conversion",
                    "Write a decision record",
                    "Export tables and figure",
                ),
            ),
        ]
        if partial_pressures:
            self._set_gases()
            self.conditions.entries = dict(partial_pressures)
        self._update(None)
        self.observe(
            self._update,
            names=["T_window", "samples", "seed", "points", "confidence", "overrides", "library"],
        )
        self.reaction.observe(self._update, names=["reaction_text", "error"])
        self.conditions.observe(self._update, names=["partial_pressures_Pa", "error"])
        self.temperature.observe(self._update, names=["value", "unit"])

    @property
    def result(self) -> Any:
        """The :class:`~feasibly.uncertainty.UncertainAssessment` on screen (last good)."""
        return self.panel.result

    def _set_gases(self) -> None:
        """Offer a partial pressure for every term that is a gas throughout the window."""
        rxn = self.reaction.reaction
        if rxn is None:
            return
        try:
            lo, hi = self._window(rxn)
            plan = rxn.phase_plan(np.linspace(lo, hi, self.points))
        except FeasiblyError:
            return
        gases = [
            t.label()
            for t, idx in zip(rxn.terms, plan, strict=True)
            if all(t.candidates[k].phase == "g" for k in set(idx.tolist()))
        ]
        self.conditions.gases = gases
        self.conditions.entries = {g: v for g, v in self.conditions.entries.items() if g in gases}

    def _window(self, rxn: Reaction) -> tuple[float, float]:
        lo, hi = rxn.valid_range()
        if self.T_window != (0.0, 0.0):
            return self.T_window
        return lo, min(hi, lo + _WINDOW_SPAN_K)

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        if self._busy:
            return
        owner = change["owner"] if change else None
        name = change["name"] if change else None
        if owner is self.temperature:
            with self.panel.hold():
                self.panel.temperature = self.temperature.value
                self.panel.temperature_unit = self.temperature.unit
            return
        if name == "error":
            self._show_status()
            return
        self._busy = True
        try:
            self._resample()
        finally:
            self._busy = False
        self._show_status()

    def _resample(self) -> None:
        rxn = self.reaction.reaction
        if rxn is None:
            self.error = "Enter an equation to begin."
            return
        self._set_gases()
        try:
            lo, hi = self._window(rxn)
            result = assess_uncertainty(
                rxn,
                T_range=((lo, "K"), (hi, "K")),
                points=self.points,
                samples=self.samples,
                seed=self.seed,
                confidence=self.confidence,
                overrides=self.overrides,
                partial_pressures={
                    gas: (pa, "Pa") for gas, pa in self.conditions.partial_pressures_Pa.items()
                },
                library=self.library,
                progress=False,
            )
        except FeasiblyError as exc:
            self.error = str(exc)
            return
        self.resamples += 1
        self.error = ""
        with self.panel.hold():
            self.temperature.set_range(rxn.valid_range())
            if self.panel.result is None and self._requested_T is not None:
                self.temperature.value = self._requested_T  # refused if outside the data
            elif self.panel.result is None or not lo <= self.temperature.value <= hi:
                self.temperature.value = 0.5 * (lo + hi)
            self.panel.result = result
            self.panel.temperature = self.temperature.value
            self.panel.temperature_unit = self.temperature.unit
        self.conversion.evaluate(rxn, result.T, self.seed, self.confidence, self.library)

    def _show_status(self) -> None:
        self._feedback.value = error_html(self.error)
        shown = self.panel.result
        if shown is None:
            self._status.value = ""
            return
        stale = bool(self.error or self.reaction.error or self.conditions.error)
        lo, hi = float(shown.T[0]), float(shown.T[-1])
        text = (
            f"Showing {shown.reaction.equation(pretty=True)}, sampled {lo:g}–{hi:g} K "
            f"({shown.trials:,} trials, seed {shown.samples.seed})."
        )
        if stale:
            text = "Input above has a problem; still showing the last good result. " + text
        self._status.value = note_html(text)

    def static_html(self) -> str:
        """The worksheet as plain HTML for a copy without live widgets: what was computed (the
        reaction, conditions, sampling), the call at the selected temperature, the figure as an
        SVG image and the cautions, under a line saying that this is a static copy."""
        r = self.panel.result
        if r is None:
            return error_html(self.error or "No result was computed.")
        pressures = ", ".join(
            f"{gas} {pa / 1e5:.4g} bar" for gas, pa in sorted(r.partial_pressures_Pa.items())
        )
        conditions = (
            f"partial pressures: {pressures}" if pressures else "every species at 1 bar (standard)"
        )
        head = note_html(
            "Static copy of the worksheet as it was computed; the controls are not live here. "
            f"Reaction {r.reaction.equation(pretty=True)}; {conditions}; "
            f"sampled {float(r.T[0]):g}–{float(r.T[-1]):g} K with {r.trials:,} trials, "
            f"seed {r.samples.seed}. To change the inputs, open the worksheet in JupyterLab "
            "(bin/worksheet)."
        )
        return f'<div class="feasibly-static-copy">{head}{self.panel.static_html()}</div>'

    def _repr_mimebundle_(self, **kwargs: Any) -> Any:
        bundle = super()._repr_mimebundle_(**kwargs)
        if static_copy_wanted() and isinstance(bundle, dict):
            bundle["text/html"] = self.static_html()
        return bundle

    def __repr__(self) -> str:
        r = self.panel.result
        if r is None:
            return f"<FeasibilityWorksheet {self.reaction.equation!r}: no result ({self.error})>"
        return (
            f"<FeasibilityWorksheet {r.reaction.equation()} at {self.temperature.value:.2f} K: "
            f"{self.panel.verdict}, P(feasible) = {self.panel.probability:.3f}>"
        )
