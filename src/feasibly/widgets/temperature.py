"""Temperature control: slider plus exact entry, in K, °C or °F, inside the data's valid range."""

from __future__ import annotations

import math
from typing import Any

import ipywidgets as w
from traitlets import Enum, Float, TraitError, Tuple, Unicode, validate

from ..errors import FeasiblyError
from ._common import TEMPERATURE_UNITS, error_html, fmt_T, guarded, kelvin, shown

__all__ = ["TemperatureControl"]

# Slider steps per range: 400 gives about 1 K steps over a typical 300–700 K span and 5 K over
# 2000 K; the exact entry takes any value.
_STEPS = 400


class TemperatureControl(w.VBox):
    """The selected temperature; ``value`` in K is the one source of truth.

    Traits: ``value`` (K), ``unit`` (display unit: "K", "°C", "°F"), ``valid_range`` ((lo, hi)
    in K, the reaction's data range), ``error`` (why the last typed value was refused).
    Values outside ``valid_range`` are refused: typed ones inline (the value is kept), set ones
    with a :class:`traitlets.TraitError`.
    """

    value = Float(298.15, help="selected temperature, K")
    unit = Enum(list(TEMPERATURE_UNITS), "K", help="display unit")
    valid_range = Tuple(Float(), Float(), default_value=(298.15, 6000.0), help="(lo, hi), K")
    error = Unicode("", help="why the last typed temperature was refused, '' when none")

    def __init__(
        self,
        value: float = 298.15,
        valid_range: tuple[float, float] = (298.15, 6000.0),
        unit: str = "K",
        **kwargs: Any,
    ) -> None:
        self._slider = w.FloatSlider(
            description="temperature",
            continuous_update=False,
            readout=False,
            style={"description_width": "initial"},
            layout=w.Layout(width="60%"),
        )
        self._entry = w.Text(continuous_update=False, layout=w.Layout(width="9em"))
        self._unit = w.ToggleButtons(
            options=list(TEMPERATURE_UNITS), style={"button_width": "3.2em"}
        )
        self._range = w.HTML()
        self._feedback = w.HTML()
        self._syncing = False
        super().__init__(**kwargs)
        self.children = [
            w.HBox([self._slider, self._entry, self._unit]),
            self._range,
            self._feedback,
        ]
        self.valid_range = valid_range
        self.value = value
        self.unit = unit
        self._entry.add_class("feasibly-temperature-entry")  # a stable hook for browser tests
        w.link((self._unit, "value"), (self, "unit"))
        self._slider.observe(self._typed, names="value")
        self._entry.observe(self._typed, names="value")
        self._update(None)
        self.observe(self._update, names=["value", "unit", "valid_range", "error"])

    @validate("value")
    def _inside(self, proposal: Any) -> float:
        t = float(proposal["value"])
        lo, hi = self.valid_range
        # 1e-9 relative: the same slack the kernel allows at range ends (°C round trips).
        if not (math.isfinite(t) and lo * (1 - 1e-9) <= t <= hi * (1 + 1e-9)):
            raise TraitError(f"{t:g} K is outside the data range of this reaction, {lo:g}–{hi:g} K")
        return min(max(t, lo), hi)

    @validate("valid_range")
    def _ordered(self, proposal: Any) -> tuple[float, float]:
        lo, hi = (float(x) for x in proposal["value"])
        if not 0 < lo < hi:
            raise TraitError(f"valid range ({lo:g}, {hi:g}) K must be ascending and above 0 K")
        return lo, hi

    def set_range(self, valid_range: tuple[float, float]) -> None:
        """A new data range; a value outside it moves to the nearer end."""
        lo, hi = valid_range
        with self.hold_trait_notifications():
            self.valid_range = (lo, hi)
            if not lo <= self.value <= hi:
                self.value = min(max(self.value, lo), hi)

    @guarded
    def _typed(self, change: dict[str, Any]) -> None:
        """A child changed: read it (through the kernel's units), refuse it inline if outside."""
        if self._syncing:
            return
        text = str(change["new"]).strip()
        if change["owner"] is self._entry and text.endswith(self.unit):
            text = text[: -len(self.unit)].strip()
        try:
            t = kelvin(float(text), self.unit)
        except ValueError as exc:
            msg = str(exc) if isinstance(exc, FeasiblyError) else f"{text!r} is not a number"
            self.error = msg
            return
        lo, hi = self.valid_range
        if not lo * (1 - 1e-9) <= t <= hi * (1 + 1e-9):
            self.error = (
                f"{fmt_T(t, self.unit)} is outside the range in which this reaction's data are "
                f"valid ({fmt_T(lo, self.unit)} to {fmt_T(hi, self.unit)}); the temperature "
                f"stays at {fmt_T(self.value, self.unit)}."
            )
            self._update(None)
            return
        self.error = ""
        if abs(t - self.value) > 1e-9:
            self.value = t

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        u = self.unit
        lo, hi = (shown(x, u) for x in self.valid_range)
        self._syncing = True
        try:
            s = self._slider
            if (lo, hi) != (s.min, s.max):
                if lo > s.max:
                    s.max, s.min = hi, lo
                else:
                    s.min, s.max = lo, hi
            s.step = (hi - lo) / _STEPS
            s.value = shown(self.value, u)
            self._entry.value = f"{shown(self.value, u):.6g}"
        finally:
            self._syncing = False
        self._range.value = (
            f"<span style='font-size:12px'><b>{fmt_T(self.value, u)}</b> "
            f"(= {self.value:.2f} K); data valid from {fmt_T(self.valid_range[0], u)} "
            f"to {fmt_T(self.valid_range[1], u)}</span>"
        )
        self._feedback.value = error_html(self.error)

    def __repr__(self) -> str:
        lo, hi = self.valid_range
        return (
            f"<TemperatureControl {self.value:.2f} K shown in {self.unit}; valid {lo:g}–{hi:g} K>"
        )
