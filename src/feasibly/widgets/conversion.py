"""Required conversion: the feed, the key reactant and the conversion needed, and the answer."""

from __future__ import annotations

import html
from typing import Any

import ipywidgets as w
import numpy as np
from traitlets import Dict, Unicode

from ..equilibrium.conversion import conversion_assessment
from ..errors import FeasiblyError
from ..library.catalogue import Library
from ..thermo.reaction import Reaction
from ..uncertainty.linear import window_phrase
from ..uncertainty.sampling import SampleSet
from ._common import error_html, guarded, note_html

__all__ = ["ConversionTarget"]

# Trials of the equilibrium bands when used on its own (no call's draws to share): the extent
# solve is per trial and temperature; 4000 gives P(meets) near 95 % to about ±0.35 %.
_SAMPLES = 4000


class ConversionTarget(w.VBox):
    """State the conversion you need; see where and how surely the equilibrium reaches it.

    Traits: ``feed`` (e.g. "C3H8:1, N2:4"; inerts allowed), ``key`` (the reactant whose
    conversion counts), ``required`` ("90%" or "0.9"; '' switches the criterion off),
    ``pressure`` (total, with unit), ``error`` and ``result`` (the kernel's
    :func:`~feasibly.equilibrium.conversion_assessment` output; not synced to the browser).
    :meth:`evaluate` is called by the worksheet with the reaction and temperatures on screen.
    """

    feed = Unicode("", help="feed amounts, SPECIES:AMOUNT separated by commas")
    key = Unicode("", help="key reactant")
    required = Unicode("", help="required conversion, e.g. 90%")
    pressure = Unicode("1 bar", help="total pressure with unit")
    error = Unicode("", help="why the last evaluation failed, '' when it did not")
    result = Dict(help="conversion_assessment output (not synced)").tag(sync=False)

    def __init__(self, embedded: bool = False, **kwargs: Any) -> None:
        """``embedded``: a worksheet owns it; the worksheet's total pressure is the only one
        shown, and the worksheet re-evaluates (with the call's own draws) when an input changes.
        """
        super().__init__(**kwargs)
        self._embedded = embedded
        style = {"description_width": "80px"}
        boxes = {
            "feed": w.Text(
                description="feed (mol)",
                placeholder="e.g. C3H8:1, N2:4",
                style=style,
                continuous_update=False,
            ),
            "key": w.Text(
                description="key", placeholder="e.g. C3H8", style=style, continuous_update=False
            ),
            "required": w.Text(
                description="needed", placeholder="e.g. 40%", style=style, continuous_update=False
            ),
            "pressure": w.Text(description="total P", style=style, continuous_update=False),
        }
        for name, box in boxes.items():
            w.link((self, name), (box, "value"))
        self._out = w.HTML()
        self._context: tuple[Reaction, np.ndarray, int, float, Library, SampleSet | None] | None = (
            None
        )
        shown = [b for n, b in boxes.items() if not (embedded and n == "pressure")]
        self.children = [
            w.HTML(
                "<b>Required conversion</b> (equilibrium of this reaction: ideal gases, "
                "pure condensed phases"
                + ("; at the total pressure under Conditions)" if embedded else ")")
            ),
            *shown,
            self._out,
        ]
        if not embedded:
            self.observe(self._changed, names=["feed", "key", "required", "pressure"])

    @property
    def active(self) -> bool:
        return bool(self.feed.strip() and self.key.strip() and self.required.strip())

    def evaluate(
        self,
        reaction: Reaction,
        temps: np.ndarray,
        seed: int,
        confidence: float,
        library: Library,
        sample_set: SampleSet | None = None,
    ) -> None:
        """Recompute for the reaction and temperatures on screen (no-op when inactive).

        ``sample_set``: the draws of the call on screen; the bands then use exactly those draws,
        overrides and correlations.
        """
        self._context = (
            reaction,
            np.asarray(temps, dtype=float),
            seed,
            confidence,
            library,
            sample_set,
        )
        self._changed(None)

    @guarded
    def _changed(self, change: dict[str, Any] | None) -> None:
        if not self.active or self._context is None:
            self._out.value = note_html(
                "Give the feed, the key reactant and the conversion "
                "needed to use it as the criterion."
            )
            return
        rxn, temps, seed, confidence, lib, drawn = self._context
        try:
            res = conversion_assessment(
                rxn,
                (temps, "K"),
                self.feed,
                self.key.strip(),
                self.required,
                self.pressure,
                samples=None if drawn is not None else _SAMPLES,
                seed=None if drawn is not None else seed,
                confidence=confidence,
                library=lib,
                sample_set=drawn,
            )
        except FeasiblyError as exc:
            self.error = str(exc)
            self.result = {}  # a failed input never leaves an old answer to be recorded
            self._out.value = error_html(self.error)
            return
        self.error = ""
        self.result = res
        self._out.value = self._table(res)

    def invalidate(self, reason: str) -> None:
        """The call it belongs to could not be made: drop the old answer and say why."""
        self.result = {}
        self._out.value = error_html(f"No conversion result for the inputs shown: {reason}")

    @staticmethod
    def _table(res: dict[str, Any]) -> str:
        if not res:
            return ""
        rows = res["rows"]
        step = max(1, len(rows) // 8)  # about eight rows: enough to read the trend at a glance
        body = "".join(
            f"<tr><td>{r['T_K']:.0f} K</td><td>{r['conversion']:.1%}</td>"
            f"<td>{r['conversion_lo']:.1%} – {r['conversion_hi']:.1%}</td>"
            f"<td>{r['P_meets_required']:.1%}</td></tr>"
            for r in rows[::step]
        )
        if res["window"]:
            spans = window_phrase(res["window"])
            say = (
                f"{res['required_conversion']:.0%} conversion of {res['key']} is reached at "
                f"{res['confidence']:.0%} confidence {spans}."
            )
        else:
            say = (
                f"{res['required_conversion']:.0%} conversion of {res['key']} is not reached "
                f"at {res['confidence']:.0%} confidence anywhere on screen."
            )
        return (
            note_html(html.escape(say))
            + "".join(note_html(html.escape(n)) for n in res.get("notes", []))
            + "<table style='font-size:12px;border-spacing:14px 2px'><tr><th>T</th>"
            "<th>conversion</th><th>95 % interval</th><th>P(meets)</th></tr>" + body + "</table>"
        )
