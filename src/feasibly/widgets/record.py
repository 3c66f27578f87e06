"""Export control: write the call on screen as a decision record (JSON) and its HTML report."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import ipywidgets as w
from traitlets import Bool, List, Unicode

from ..errors import FeasiblyError
from ..records import record_from, write_record
from ..thermo.assessment import assess
from ..uncertainty import UncertainAssessment
from ._common import error_html, guarded, note_html

__all__ = ["RecordExport"]


class RecordExport(w.VBox):
    """Author, reviewer, rationale and a file name; the button writes ``NAME.json`` and
    ``NAME.html`` for the result that ``source()`` returns (the one on screen).

    Traits: ``author``, ``reviewer``, ``rationale``, ``path`` (the JSON file), ``overwrite``,
    ``written`` (paths of the last export), ``error`` (the message when it could not be written).
    The record is made by the kernel (:func:`feasibly.record_from`) from a standard assessment on
    the same temperatures and pressures as the Monte Carlo result.
    """

    author = Unicode("", help="who made the call")
    reviewer = Unicode("", help="who reviews it")
    rationale = Unicode("", help="why this step, in the author's words")
    path = Unicode("feasibility-record.json", help="where the JSON goes; the report beside it")
    overwrite = Bool(False, help="replace existing files")
    written: List[str] = List(help="paths written by the last export")
    error = Unicode("", help="why the last export failed, '' when it did not")

    def __init__(
        self,
        source: Callable[[], UncertainAssessment | None],
        stale: Callable[[], str] | None = None,
        context: Callable[[], dict[str, Any]] | None = None,
        **kwargs: Any,
    ) -> None:
        """``stale()`` returns why the result on screen no longer matches the inputs ('' when
        it does): the button then refuses. ``context()`` returns what else is on screen and
        goes into the record: ``selected_T_K``, and ``conversion`` with ``conversion_inputs``.
        """
        super().__init__(**kwargs)
        self._source = source
        self._stale = stale or (lambda: "")
        self._context = context or dict
        style = {"description_width": "70px"}
        fields = [
            w.Text(description="author", style=style),
            w.Text(description="reviewer", style=style),
            w.Textarea(
                description="rationale", style=style, layout=w.Layout(width="520px", height="48px")
            ),
            w.Text(description="file", style=style, layout=w.Layout(width="520px")),
            w.Checkbox(description="replace existing files", indent=False),
        ]
        for field, name in zip(
            fields, ("author", "reviewer", "rationale", "path", "overwrite"), strict=True
        ):
            w.link((self, name), (field, "value"))
        self._button = w.Button(description="write record", icon="file")
        self._button.on_click(lambda _: self.export())
        self._message = w.HTML()
        self.children = [
            w.HTML("<b>Decision record</b> (JSON to verify later, HTML to attach to a report)"),
            *fields,
            self._button,
            self._message,
        ]

    @guarded
    def export(self) -> list[str]:
        """Write the record of the result on screen; returns the paths ([] on failure)."""
        u = self._source()
        self.written = []
        why_stale = self._stale()
        if u is None:
            self.error = "Nothing to record yet: no result on screen."
        elif why_stale:
            self.error = (
                "Not written: the result on screen is from earlier inputs, not the ones shown "
                f"now ({why_stale}). Fix the input, or undo the change, then write the record."
            )
        else:
            try:
                lo, hi = float(u.T[0]), float(u.T[-1])
                ctx = self._context()
                a = assess(
                    u.reaction,
                    T_range=((lo, "K"), (hi, "K")),
                    points=int(u.T.size),
                    partial_pressures={k: (v, "Pa") for k, v in u.partial_pressures_Pa.items()},
                    standard_pressure=(u.standard_pressure, "Pa"),
                    library=u.library,
                    at_conversion=u.at_conversion,
                    gas_model=u.gas_model,
                )
                extra: dict[str, Any] = {}
                if ctx.get("conversion"):
                    extra = {
                        "conversion": ctx["conversion"],
                        "conversion_inputs": ctx["conversion_inputs"],
                    }
                t_sel = ctx.get("selected_T_K")
                record = record_from(
                    a,
                    u,
                    author=self.author,
                    reviewer=self.reviewer,
                    rationale=self.rationale,
                    sensitivity_at=(t_sel, "K") if t_sel is not None else None,
                    **extra,
                )
                json_path = Path(self.path)
                paths = write_record(
                    record, json_path, json_path.with_suffix(".html"), overwrite=self.overwrite
                )
                self.written = [str(p) for p in paths]
                self.error = ""
            except FeasiblyError as exc:
                self.error = str(exc)
        self._message.value = error_html(self.error) or note_html(
            "Written: " + ", ".join(self.written) + ". Check it later with "
            "`feasibly verify " + (self.written[0] if self.written else "") + "`."
        )
        return list(self.written)
