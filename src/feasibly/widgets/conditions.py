"""Conditions: total pressure and the partial pressures of the reaction's gases."""

from __future__ import annotations

from typing import Any

import ipywidgets as w
from traitlets import Dict, List, Unicode

from ..conditions import read_pressure
from ..errors import FeasiblyError, UnitError
from ._common import error_html, guarded, note_html

__all__ = ["Conditions"]


def _bar(pa: float) -> str:
    return f"{pa / 1e5:.4g} bar"


class Conditions(w.VBox):
    """Total pressure and partial pressures; ``partial_pressures_Pa`` is what the kernel gets.

    Traits: ``total_pressure`` (text with unit, e.g. "1 bar"), ``gases`` (species of the reaction
    that can be given a partial pressure), ``entries`` (gas → text: a pressure with unit such as
    "0.05 bar", or a bare mole fraction such as "0.05" meaning 0.05 × the total; '' for the
    standard pressure), ``error``, and the derived ``partial_pressures_Pa`` (gas → Pa; changes
    only when every entry is valid).
    """

    total_pressure = Unicode("1 bar", help="total pressure with unit")
    gases = List(Unicode(), help="gases of the reaction")
    entries = Dict(help="gas → partial pressure with unit, or a mole fraction; '' = standard")
    error = Unicode("", help="what is wrong with an entry, '' when none")
    partial_pressures_Pa = Dict(help="gas → partial pressure in Pa (the last valid set)")

    def __init__(self, **kwargs: Any) -> None:
        self._total = w.Text(description="total", layout={"width": "14em"}, continuous_update=False)
        self._boxes: dict[str, w.Text] = {}
        self._rows = w.VBox()
        self._readout = w.HTML()
        self._feedback = w.HTML()
        super().__init__(**kwargs)
        self.children = [
            w.HTML("<b>Conditions</b> (pressures with units; a bare number is a mole fraction)"),
            self._total,
            self._rows,
            self._readout,
            self._feedback,
        ]
        self._total.value = self.total_pressure
        w.link((self._total, "value"), (self, "total_pressure"))
        self._update(None)
        self.observe(self._update, names=["total_pressure", "gases", "entries"])

    @guarded
    def _typed(self, gas: str, text: str) -> None:
        self.entries = {**self.entries, gas: text}

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        if change is None or change["name"] == "gases":
            boxes = {}
            for gas in self.gases:
                box = self._boxes.get(gas) or w.Text(
                    description=f"p({gas})",
                    placeholder="standard (1 bar)",
                    continuous_update=False,
                    style={"description_width": "7em"},
                    layout={"width": "20em"},
                )
                if gas not in self._boxes:
                    box.observe(lambda c, g=gas: self._typed(g, c["new"]), names="value")
                boxes[gas] = box
            self._boxes = boxes
            self._rows.children = list(boxes.values())
        for gas, box in self._boxes.items():
            box.value = self.entries.get(gas, "")
        try:
            total = read_pressure(self.total_pressure)
            out: dict[str, float] = {}
            for gas, text in self.entries.items():
                text = str(text).strip()
                if not text or gas not in self.gases:
                    continue
                try:
                    y = float(text)
                except ValueError:
                    out[gas] = read_pressure(text)
                    continue
                if not 0 < y <= 1:
                    raise UnitError(text, f"mole fraction of {gas}", "must lie in (0, 1]")
                out[gas] = y * total
            if sum(out.values()) > total * (1 + 1e-9):
                raise UnitError(
                    self.total_pressure,
                    "total pressure",
                    f"the partial pressures add up to {_bar(sum(out.values()))}, more than the "
                    f"total {_bar(total)}",
                )
        except FeasiblyError as exc:
            self.error = str(exc)
        else:
            self.error = ""
            self.partial_pressures_Pa = out
        given = ", ".join(f"{g} {_bar(p)}" for g, p in self.partial_pressures_Pa.items())
        rest = [g for g in self.gases if g not in self.partial_pressures_Pa]
        text = f"partial pressures: {given or 'none given'}"
        if rest:
            text += f"; at the standard pressure (1 bar): {', '.join(rest)}"
        self._readout.value = note_html(text)
        self._feedback.value = error_html(self.error)

    def __repr__(self) -> str:
        given = ", ".join(f"{g}={_bar(p)}" for g, p in self.partial_pressures_Pa.items())
        return f"<Conditions total {self.total_pressure}; {given or 'standard state'}>"
