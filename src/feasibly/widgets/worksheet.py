"""The composed worksheet: reaction, temperature, conditions and the feasibility panel, wired."""

from __future__ import annotations

import html
from typing import Any

import ipywidgets as w
import numpy as np
from traitlets import Bool, Float, Instance, Int, List, Tuple, Unicode

from ..conditions import read_feed as parse_feed_text
from ..conditions import read_temperature
from ..errors import FeasiblyError, InvalidInput, OutsideDataRange
from ..library.catalogue import Library, default_library
from ..thermo.missing_phases import missing_stable_phases
from ..thermo.reaction import Reaction
from ..uncertainty import assess_uncertainty, gas_model_warning
from ._common import error_html, guarded, note_html, static_copy_wanted
from .conditions import Conditions
from .conversion import ConversionTarget
from .export import ResultExport
from .panel import FeasibilityPanel
from .reaction import ReactionBuilder
from .record import RecordExport
from .temperature import TemperatureControl
from .uncertainty import UncertaintyInput

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
    ``seed``, ``points``, ``confidence``, ``overrides``, ``library``, ``error``, ``stale``,
    ``window_note`` and the counter ``resamples``. Changing the equation, window, conditions,
    required conversion or sampling settings draws new samples once; changing the temperature
    only re-reads the kept draws. On bad input the kernel's message shows inline, the last good
    result stays on screen marked as stale (``stale`` is true, the panel is dimmed and labelled)
    and the record button refuses to write it.

    Controls on screen: the temperature window (K; clipped to the reaction's data range, with a
    note), the confidence level, the number of trials, one total pressure (under Conditions; the
    required conversion uses it too) and species overrides (each active one is marked).
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
    stale = Bool(False, help="true when the result on screen is from earlier inputs")
    window_note = Unicode("", help="how the window was fitted to the data range, '' when not")

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
        self.export = RecordExport(
            lambda: self.panel.result, stale=self._stale_reason, context=self._record_context
        )
        self.files = ResultExport(self.panel.on_screen)
        self.conversion = ConversionTarget(embedded=True)
        self._status = w.HTML()
        self._feedback = w.HTML()
        self._settings = self._settings_box()
        self._phase_notes = w.HTML()
        self.override_input = UncertaintyInput(library=self.library)
        self._overrides_shown = w.HTML()
        apply_b = w.Button(description="apply override", icon="check")
        clear_b = w.Button(description="clear overrides", icon="times")
        apply_b.on_click(lambda _b: self.apply_override())
        clear_b.on_click(lambda _b: self.clear_overrides())
        overrides_box = w.VBox(
            [
                w.HTML(
                    "<b>Your own value or uncertainty</b> for one input of one species "
                    "(applies to the call, the conversion and the record)"
                ),
                self.override_input,
                w.HBox([apply_b, clear_b]),
            ]
        )
        self.children = [
            w.HTML(
                "<b style='font-size:16px'>Is this step thermodynamically feasible?</b>"
                "<div style='font-size:12px'>Monte Carlo over the uncertainty of the property "
                "data. Thermodynamics only: nothing here speaks to rate, hazards or "
                "scale-up.</div>"
            ),
            self.reaction,
            self.temperature,
            self._settings,
            self.conditions,
            self._overrides_shown,
            self._feedback,
            self._status,
            self._phase_notes,
            self.panel,
            w.Accordion(
                children=[self.conversion, overrides_box, self.export, self.files],
                titles=(
                    "Required conversion",
                    "Overrides",
                    "Write a decision record",
                    "Export tables and figure",
                ),
            ),
        ]
        # One total pressure: the conversion reads the one under Conditions.
        w.dlink((self.conditions, "total_pressure"), (self.conversion, "pressure"))
        if partial_pressures:
            self._set_gases()
            self.conditions.entries = dict(partial_pressures)
        self._update(None)
        self.observe(
            self._update,
            names=["T_window", "samples", "seed", "points", "confidence", "overrides", "library"],
        )
        self.reaction.observe(self._update, names=["reaction_text", "error"])
        self.conditions.observe(
            self._update, names=["partial_pressures_Pa", "total_pressure", "error"]
        )
        self.conversion.observe(self._update, names=["feed", "key", "required"])
        self.temperature.observe(self._update, names=["value", "unit"])

    # --- controls ------------------------------------------------------------------------------
    def _settings_box(self) -> w.HBox:
        lo = w.FloatText(description="window from (K)", style={"description_width": "8em"})
        hi = w.FloatText(description="to (K)", style={"description_width": "3em"})
        conf = w.BoundedFloatText(
            min=0.0, max=1.0, step=0.01, description="confidence", layout={"width": "12em"}
        )
        trials = w.IntText(description="trials", layout={"width": "14em"})
        for box in (lo, hi, conf, trials):
            box.continuous_update = False
        lo.value, hi.value = self.T_window
        conf.value, trials.value = self.confidence, self.samples
        lo.observe(lambda c: self._typed_window(c["new"], None), names="value")
        hi.observe(lambda c: self._typed_window(None, c["new"]), names="value")
        w.link((conf, "value"), (self, "confidence"))
        w.link((trials, "value"), (self, "samples"))
        self._window_boxes = (lo, hi)
        return w.HBox([lo, hi, conf, trials])

    def _typed_window(self, lo: float | None, hi: float | None) -> None:
        old_lo, old_hi = self.T_window
        self.T_window = (old_lo if lo is None else float(lo), old_hi if hi is None else float(hi))

    def apply_override(self) -> None:
        """Add the override in the Overrides section (if valid) to the call."""
        ov = self.override_input.override
        if self.override_input.error or ov is None:
            self.error = self.override_input.error or "Fill in the override first."
            self._show_status()
            return
        keep = [o for o in self.overrides if (o.target, o.quantity) != (ov.target, ov.quantity)]
        self.overrides = [*keep, ov]

    def clear_overrides(self) -> None:
        """Remove every override: the call goes back to the library's values."""
        self.overrides = []

    @staticmethod
    def _notes_html(rxn: Reaction, T: np.ndarray) -> str:
        """Phase notes for the temperatures on screen: metastable phases named in the
        equation, and stable phases missing from the data."""
        notes = [
            f"{used} is metastable at {t:.0f} K ({stable} has lower G°); it is used because the "
            "equation names that phase."
            for used, t, stable in rxn.metastable(T)
        ]
        notes += missing_stable_phases(rxn, T)
        if not notes:
            return ""
        items = "".join(f"<li>{html.escape(n)}</li>" for n in notes)
        return note_html(f"<b>Phases</b><ul style='margin:2px 0'>{items}</ul>", raw=True)

    def _stale_reason(self) -> str:
        if self.panel.result is None:
            return ""
        for what, err in (
            ("equation", self.reaction.error),
            ("conditions", self.conditions.error),
            ("required conversion", self.conversion.error),
            ("call", self.error),
        ):
            if err:
                return f"{what}: {err}"
        return ""

    def _record_context(self) -> dict[str, Any]:
        ctx: dict[str, Any] = {"selected_T_K": float(self.temperature.value)}
        res = self.conversion.result
        if self.conversion.active and res:
            ctx["conversion"] = dict(res)
            ctx["conversion_inputs"] = {
                "feed": {k: float(v) for k, v in parse_feed_text(self.conversion.feed).items()},
                "key": self.conversion.key.strip(),
                "required": res["required_conversion"],
                "P_Pa": res["P_Pa"],
                "samples": res["trials"] or None,
                "seed": res["seed"],
                "confidence": res["confidence"],
                "shared_draws": bool(res.get("shared_draws")),
            }
        return ctx

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
        """The sampled window: the one asked for, fitted into the reaction's data range."""
        lo, hi = rxn.valid_range()
        self.window_note = ""
        if self.T_window == (0.0, 0.0):
            return lo, min(hi, lo + _WINDOW_SPAN_K)
        want_lo, want_hi = self.T_window
        if not want_hi > want_lo:
            raise InvalidInput(
                "T_window",
                "FeasibilityWorksheet",
                "(low, high) in K with high above low",
                self.T_window,
            )
        a, b = max(want_lo, lo), min(want_hi, hi)
        if not b > a:
            raise OutsideDataRange(
                "this reaction (every species)",
                want_lo if want_hi <= lo else want_hi,
                lo,
                hi,
                phase_given=False,
            )
        if (a, b) != (want_lo, want_hi):
            self.window_note = (
                f"Window {want_lo:g}–{want_hi:g} K fitted to the data of this reaction: "
                f"{a:g}–{b:g} K (its species have data from {lo:g} to {hi:g} K)."
            )
        return a, b

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
        pressures = self.conditions.partial_pressures_Pa
        at_conversion = None
        if self.conversion.active and not pressures:
            # The call is on ΔrG at the composition the required conversion gives.
            at_conversion = {
                "feed": self.conversion.feed,
                "key": self.conversion.key.strip(),
                "required": self.conversion.required,
                "P": self.conditions.total_pressure,
            }
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
                at_conversion=at_conversion,
            )
        except FeasiblyError as exc:
            self.error = str(exc)
            if self.conversion.active:
                self.conversion.invalidate(self.error)
            return
        self.resamples += 1
        self.error = ""
        gas_warning = gas_model_warning(result)
        self._phase_notes.value = self._notes_html(rxn, result.T) + (
            note_html(gas_warning) if gas_warning else ""
        )
        with self.panel.hold():
            self.temperature.set_range(rxn.valid_range())
            if self.panel.result is None and self._requested_T is not None:
                self.temperature.value = self._requested_T  # refused if outside the data
            elif self.panel.result is None or not lo <= self.temperature.value <= hi:
                self.temperature.value = 0.5 * (lo + hi)
            self.panel.result = result
            self.panel.temperature = self.temperature.value
            self.panel.temperature_unit = self.temperature.unit
        self.conversion.evaluate(
            rxn, result.T, self.seed, self.confidence, self.library, sample_set=result.samples
        )

    def _show_status(self) -> None:
        self._feedback.value = error_html(self.error)
        lo_box, hi_box = self._window_boxes
        lo_box.value, hi_box.value = self.T_window
        shown = self.panel.result
        active = ", ".join(
            f"{o.target}:{o.quantity}"
            + (f" = {o.value}" if o.value else "")
            + (f" ± {o.uncertainty}" if o.uncertainty else "")
            for o in self.overrides
        )
        self._overrides_shown.value = (
            "<div class='feasibly-override' style='background:#FFF3D6;border-left:6px solid "
            f"#E69F00;padding:2px 8px'><b>override active</b>: {html.escape(active)}</div>"
            if active
            else ""
        )
        if shown is None:
            self.stale = False
            self._status.value = ""
            return
        reason = self._stale_reason()
        self.stale = bool(reason)
        lo, hi = float(shown.T[0]), float(shown.T[-1])
        text = (
            f"Showing {shown.reaction.equation(pretty=True)}, sampled {lo:g}–{hi:g} K "
            f"({shown.trials:,} trials, seed {shown.samples.seed})."
        )
        if self.window_note:
            text += " " + self.window_note
        if self.stale:
            self._status.value = (
                "<div class='feasibly-stale' style='background:#FBE3D6;border-left:6px solid "
                "#D55E00;padding:2px 8px'><b>STALE: this result is from earlier inputs</b> "
                "(fix the input above; the record button will not write it). "
                + html.escape(text)
                + "</div>"
            )
            self.panel.layout.opacity = "0.45"
        else:
            self._status.value = note_html(text)
            self.panel.layout.opacity = "1"

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
