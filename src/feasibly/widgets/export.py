"""Export control: every table of the result on screen as CSV, its figure as PNG and SVG."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import ipywidgets as w
from traitlets import List, Unicode

from ..errors import FeasiblyError
from ..images import figure_images
from ..uncertainty import UncertainAssessment
from ._common import error_html, note_html

__all__ = ["ResultExport"]


class ResultExport(w.VBox):
    """A folder and a name; the button writes ``NAME-temperatures.csv``, ``NAME-window.csv``,
    ``NAME-sensitivity.csv`` and ``NAME.png``/``NAME.svg`` of the result and figure on screen.

    ``source()`` returns (result, temperature K, plotly figure) or None. Traits: ``folder``,
    ``name``, ``written`` (paths of the last export) and ``error`` (why part of it failed; the
    tables are written even when the figure cannot be drawn, e.g. without a local chromium).
    """

    folder = Unicode("feasibility-export", help="folder the files go into")
    name = Unicode("feasibility", help="start of every file name")
    written: List[str] = List(help="paths written by the last export")
    error = Unicode("", help="why the last export failed in part, '' when it did not")

    def __init__(
        self, source: Callable[[], tuple[UncertainAssessment, float, Any] | None], **kwargs: Any
    ) -> None:
        super().__init__(**kwargs)
        self._source = source
        style = {"description_width": "70px"}
        folder = w.Text(description="folder", style=style, layout=w.Layout(width="520px"))
        name = w.Text(description="name", style=style)
        w.link((self, "folder"), (folder, "value"))
        w.link((self, "name"), (name, "value"))
        self._button = w.Button(description="export tables and figure", icon="download")
        self._button.layout.width = "220px"
        self._button.add_class("feasibly-export-button")
        self._button.on_click(lambda _: self.export())
        self._message = w.HTML()
        self.children = [
            w.HTML(
                "<b>Tables and figure</b> (CSV for a spreadsheet; PNG and SVG of the figure on "
                "screen, drawn by the local chromium)"
            ),
            folder,
            name,
            self._button,
            self._message,
        ]

    def export(self) -> list[str]:
        """Write the tables and the figure on screen; returns the paths written."""
        shown = self._source()
        self.written, self.error = [], ""
        if shown is None:
            self.error = "Nothing to export yet: no result on screen."
        else:
            result, T_K, fig = shown
            result.sensitivity_T_K = float(T_K)
            written: list[Path] = []
            try:
                written += result.write_tables(self.folder, self.name)
                written += figure_images(fig, Path(self.folder) / self.name)
            except FeasiblyError as exc:
                self.error = str(exc)
            self.written = [str(p) for p in written]
        done = note_html("Written: " + ", ".join(self.written) + ".") if self.written else ""
        self._message.value = done + error_html(self.error)
        return list(self.written)
