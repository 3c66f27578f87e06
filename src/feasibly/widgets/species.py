"""Species picker: type a formula, name or CAS number and choose a library entry."""

from __future__ import annotations

import html
from typing import Any

import ipywidgets as w
from traitlets import Bool, Int, List, Unicode

from ..errors import FeasiblyError
from ..library.catalogue import Library, default_library
from ..library.species import PHASES, Species
from ._common import error_html, guarded

__all__ = ["SpeciesPicker", "describe"]


def describe(sp: Species) -> str:
    """One line per match: id, phase, temperature range, data source and ΔfH° uncertainty."""
    name = f" ({sp.names[0]})" if sp.names else ""
    assumed = ", assumed" if sp.dHf.assumed else ""
    return (
        f"{sp.id}{name} — {PHASES.get(sp.phase, sp.phase)}, "
        f"{sp.T_range[0]:g}–{sp.T_range[1]:g} K, {sp.dHf.source}, "
        f"u(ΔfH°) = {sp.dHf.u / 1000:.2g} kJ/mol{assumed}"
    )


def provenance_html(sp: Species) -> str:
    """The entry's sources and uncertainties as a small table."""
    p = sp.provenance()
    rows = []
    for label, key, unit, scale in (
        ("ΔfH°(298.15 K)", "dHf_298_J_per_mol", "kJ/mol", 1000.0),
        ("S°(298.15 K)", "S_298_J_per_mol_K", "J/(mol·K)", 1.0),
    ):
        b = p[key]
        unc = b["uncertainty"]
        rows.append(
            (
                label,
                f"{b['value'] / scale:.6g} {unit}",
                f"{b['u'] / scale:.3g} {unit} (stated {unc.get('stated', b['u']) / scale:.3g}, "
                f"{unc.get('convention', 'standard')})",
                f"{b['source']} — {b['entry']}; uncertainty from {unc.get('source', b['source'])}",
            )
        )
    cp = p["cp"]
    rows.append(
        (
            "Cp(T)",
            str(cp.get("model", "")),
            f"{100 * cp['u_rel']:.3g} % (relative, standard)",
            f"{cp.get('source', '')} — {cp.get('entry', '')}",
        )
    )
    body = "".join(
        "<tr>" + "".join(f"<td style='padding:1px 6px'>{html.escape(x)}</td>" for x in r) + "</tr>"
        for r in rows
    )
    head = "".join(
        f"<th style='text-align:left;padding:1px 6px'>{h}</th>"
        for h in ("quantity", "value", "standard uncertainty", "source")
    )
    notes = "".join(f"<li>{html.escape(n)}</li>" for n in p["notes"])
    return (
        f"<div style='font-size:12px'><b>{html.escape(sp.id)}</b> ({html.escape(sp.origin)}, "
        f"{sp.T_range[0]:g}–{sp.T_range[1]:g} K"
        f"{', CAS ' + html.escape(sp.cas) if sp.cas else ''})"
        f"<table><tr>{head}</tr>{body}</table>"
        + (f"<ul style='margin:2px 0'>{notes}</ul>" if notes else "")
        + "</div>"
    )


class SpeciesPicker(w.VBox):
    """Live look-up of library entries; ``value`` is the chosen entry's id ("" for none).

    Traits: ``query`` (text typed), ``value`` (entry id), ``matches`` (ids found, read from the
    library), ``show_provenance``, ``limit``, ``error``. :attr:`species` is the chosen
    :class:`~feasibly.Species`.
    """

    query = Unicode("", help="formula, name or CAS number typed")
    value = Unicode("", help="id of the chosen library entry, '' when none")
    matches = List(Unicode(), help="ids of the entries matching the query, best first")
    show_provenance = Bool(False, help="show where the chosen entry's numbers come from")
    limit = Int(12, help="most matches listed")
    error = Unicode("", help="the problem with the query, '' when none")

    def __init__(
        self,
        query: str = "",
        value: str = "",
        library: Library | None = None,
        compact: bool = False,
        **kwargs: Any,
    ) -> None:
        self.library = library or default_library()
        self._text = w.Text(
            placeholder="formula, name or CAS number",
            description="species" if not compact else "",
            continuous_update=True,
            layout=w.Layout(width="95%" if not compact else "14em"),
        )
        self._list = w.Select(
            options=[],
            rows=3 if compact else 6,
            layout=w.Layout(width="95%" if not compact else "26em"),
        )
        self._toggle = w.ToggleButton(
            description="sources", tooltip="show where this entry's numbers come from"
        )
        self._info = w.HTML()
        self._feedback = w.HTML()
        super().__init__(**kwargs)
        self.children = [self._text, self._list, w.HBox([self._toggle]), self._feedback, self._info]
        w.link((self._text, "value"), (self, "query"))
        w.link((self._toggle, "value"), (self, "show_provenance"))
        self._list.observe(self._chosen, names="value")
        self.query = query
        self._update(None)
        if value:
            self.value = value
        self.observe(self._update, names=["query", "value", "show_provenance", "limit"])

    @property
    def species(self) -> Species | None:
        """The chosen library entry, or None."""
        return self.library[self.value] if self.value else None

    @guarded
    def _chosen(self, change: dict[str, Any]) -> None:
        self.value = change["new"] or ""

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        name = change["name"] if change else None
        if name in (None, "query", "limit"):
            found = self.library.search(self.query, self.limit) if self.query.strip() else []
            self.matches = [sp.id for sp in found]
            self._list.options = [(describe(sp), sp.id) for sp in found]
            if self.query.strip() and not found:
                self.error = f"No species matches {self.query!r}."
            else:
                self.error = ""
            if self.value not in self.matches:
                self.value = found[0].id if len(found) == 1 else ""
        if self.value and self.value not in self.library:
            try:
                self.library[self.value]
            except FeasiblyError as exc:
                self.error = str(exc)
                self.value = ""
        self._list.value = self.value or None if self.value in self.matches else None
        self._feedback.value = error_html(self.error)
        sp = self.species
        self._info.value = provenance_html(sp) if sp is not None and self.show_provenance else ""

    def __repr__(self) -> str:
        return (
            f"<SpeciesPicker query={self.query!r} value={self.value!r} {len(self.matches)} matches>"
        )
