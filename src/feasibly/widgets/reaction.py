"""Reaction builder: equation text (or rows of species) with live balance feedback."""

from __future__ import annotations

import html
import re
from fractions import Fraction
from typing import Any

import ipywidgets as w
from traitlets import Bool, Enum, List, Unicode

from ..errors import FeasiblyError, UnbalancedReaction, UnknownSpecies
from ..library.catalogue import Library, default_library
from ..library.formula import parse_formula
from ..thermo.reaction import Reaction, parse_equation
from ._common import error_html, guarded
from .species import SpeciesPicker

__all__ = ["ReactionBuilder"]


def _count_table(text: str, library: Library) -> list[tuple[str, float, float]]:
    """Atoms per element on each side (for unbalanced equations); a species typed by name
    (``water``) counts with its library entry's composition."""
    left: dict[str, float] = {}
    right: dict[str, float] = {}
    for coef, formula, _phase, _form, side in parse_equation(text):
        try:
            elements = dict(parse_formula(formula).elements)
        except FeasiblyError:
            hits = library.find(formula)
            if not hits:
                return []
            elements = dict(hits[0].elements)
        for el, n in elements.items():
            target = left if side < 0 else right
            target[el] = target.get(el, 0.0) + float(coef) * n
    return [(el, left.get(el, 0.0), right.get(el, 0.0)) for el in dict.fromkeys([*left, *right])]


def _table_html(rows: list[tuple[str, float, float]]) -> str:
    cells = []
    for el, a, b in rows:
        ok = abs(a - b) < 1e-9
        mark = "✓" if ok else "✗ differs"
        colour = "#009E73" if ok else "#D55E00"
        cells.append(
            f"<tr><td style='padding:0 8px'>{html.escape(el)}</td>"
            f"<td style='padding:0 8px;text-align:right'>{a:g}</td>"
            f"<td style='padding:0 8px;text-align:right'>{b:g}</td>"
            f"<td style='padding:0 8px;color:{colour}'>{mark}</td></tr>"
        )
    return (
        "<table style='font-size:12px'><tr><th style='text-align:left'>element</th>"
        "<th>reactant side</th><th>product side</th><th></th></tr>" + "".join(cells) + "</table>"
    )


def _coef_text(c: Fraction) -> str:
    return "" if c == 1 else (str(c.numerator) if c.denominator == 1 else str(c))


class _Row(w.HBox):
    """One species of the row mode: side, coefficient and a compact species picker."""

    def __init__(self, library: Library, side: str, coef: str, query: str, value: str) -> None:
        self.side = w.Dropdown(options=["reactant", "product"], value=side, layout={"width": "8em"})
        self.coef = w.Text(value=coef, placeholder="1", layout={"width": "4em"})
        self.picker = SpeciesPicker(query=query, value=value, library=library, compact=True)
        self.remove = w.Button(description="remove", layout={"width": "6em"})
        super().__init__([self.side, self.coef, self.picker, self.remove])

    def term(self) -> tuple[str, str]:
        species = self.picker.value or self.picker.query.strip()
        return self.side.value, f"{self.coef.value.strip()} {species}".strip()


class ReactionBuilder(w.VBox):
    """An equation with live feedback on its balance and species, rendered when it reads well.

    Traits: ``equation`` (as typed), ``mode`` ("text" or "rows"), ``balanced`` (the text reads as
    a balanced reaction of known species), ``error`` (the kernel's message, '' when none),
    ``suggestions`` (close matches for an unknown species), ``reaction_text`` (the last good
    balanced equation; changes only when a new equation reads well). :attr:`reaction` is the last
    good :class:`~feasibly.Reaction`.
    """

    equation = Unicode("", help="equation text as typed")
    mode = Enum(["text", "rows"], "text", help="type the equation, or build it from species rows")
    balanced = Bool(False, help="the equation reads as a balanced reaction of known species")
    error = Unicode("", help="the kernel's message about the equation, '' when none")
    suggestions = List(Unicode(), help="close matches for an unknown species")
    reaction_text = Unicode("", help="the last good equation (plain text)")

    def __init__(self, equation: str = "", library: Library | None = None, **kwargs: Any) -> None:
        self.library = library or default_library()
        self.reaction: Reaction | None = None
        self._text = w.Text(
            placeholder="e.g. TiO2 + 2 Cl2 + C -> TiCl4 + CO2",
            description="equation",
            continuous_update=False,
            layout=w.Layout(width="98%"),
        )
        self._balance = w.Button(
            description="balance it", tooltip="find the smallest whole-number coefficients"
        )
        self._mode = w.ToggleButtons(
            options=[("type the equation", "text"), ("pick species", "rows")],
            layout={"width": "auto"},
        )
        self._rows = w.VBox()
        self._add = w.Button(description="add species")
        self._rows_box = w.VBox([self._rows, self._add])
        self._shown = w.HTML()
        self._feedback = w.HTML()
        self._fix = w.HBox()
        self._table = w.HTML()
        super().__init__(**kwargs)
        self.children = [
            w.HBox([self._mode, self._balance]),
            self._text,
            self._rows_box,
            self._shown,
            self._feedback,
            self._fix,
            self._table,
        ]
        self._text.add_class("feasibly-equation")  # a stable hook for browser tests
        w.link((self._text, "value"), (self, "equation"))
        w.link((self._mode, "value"), (self, "mode"))
        self._balance.on_click(lambda _b: self.auto_balance())
        self._add.on_click(lambda _b: self._add_row("reactant", "", "", ""))
        self.equation = equation
        self._update(None)
        self.observe(self._update, names=["equation", "mode"])

    # --- actions ------------------------------------------------------------------------------
    def auto_balance(self) -> None:
        """Replace the equation by its balanced form (the kernel's balance), or show why not."""
        try:
            rxn = Reaction.parse(self.equation, self.library, balance=True)
        except FeasiblyError as exc:
            self.error = str(exc)
            self._feedback.value = error_html(self.error)
            return
        self.equation = rxn.equation()

    def use_suggestion(self, unknown: str, replacement: str) -> None:
        """Put a suggested species in place of an unknown one in the equation."""
        pattern = r"(?<![A-Za-z0-9])" + re.escape(unknown) + r"(?![a-z0-9])"
        self.equation = re.sub(pattern, replacement, self.equation, count=1)

    def _add_row(self, side: str, coef: str, query: str, value: str) -> None:
        row = _Row(self.library, side, coef, query, value)
        row.remove.on_click(lambda _b: self._remove_row(row))
        for child in (row.side, row.coef, row.picker):
            child.observe(lambda _c: self._from_rows(), names="value")
        self._rows.children = [*self._rows.children, row]

    def _remove_row(self, row: _Row) -> None:
        self._rows.children = [r for r in self._rows.children if r is not row]
        self._from_rows()

    def _from_rows(self) -> None:
        terms = [r.term() for r in self._rows.children if isinstance(r, _Row)]
        left = [t for s, t in terms if s == "reactant" and t]
        right = [t for s, t in terms if s == "product" and t]
        self.equation = " + ".join(left) + " -> " + " + ".join(right)

    def _rows_from_equation(self) -> None:
        self._rows.children = []
        try:
            parsed = parse_equation(self.equation)
        except FeasiblyError:
            parsed = []
        for coef, formula, phase, form, side in parsed:
            label = formula + (f"({phase}{',' + form if form else ''})" if phase else "")
            value = label if label in self.library else ""
            self._add_row("reactant" if side < 0 else "product", _coef_text(coef), formula, value)
        if not parsed:
            self._add_row("reactant", "", "", "")
            self._add_row("product", "", "", "")

    # --- the one observer ---------------------------------------------------------------------
    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        if change is None or change["name"] == "mode":
            rows = self.mode == "rows"
            self._text.layout.display = "none" if rows else None
            self._rows_box.layout.display = None if rows else "none"
            if rows:
                self._rows_from_equation()
            if change is not None:
                return
        self.suggestions = []
        self._fix.children = []
        table: list[tuple[str, float, float]] = []
        try:
            rxn = Reaction.parse(self.equation, self.library)
        except UnbalancedReaction as exc:
            self.balanced, self.error = False, str(exc)
            table = _count_table(self.equation, self.library)
        except UnknownSpecies as exc:
            self.balanced, self.error = False, str(exc)
            self.suggestions = list(exc.suggestions)
            buttons = []
            described = dict(zip(exc.suggestions, exc.candidates, strict=False))
            for s in exc.suggestions:
                b = w.Button(description=f"use {described.get(s, s)}", layout={"width": "auto"})
                b.on_click(lambda _b, q=exc.query, s=s: self.use_suggestion(q, s))
                buttons.append(b)
            self._fix.children = buttons
        except FeasiblyError as exc:
            self.balanced, self.error = False, str(exc)
        else:
            self.reaction = rxn
            self.balanced, self.error = True, ""
            self.reaction_text = rxn.equation()
            table = rxn.element_table()
        shown = self.reaction.equation(pretty=True, html=True) if self.reaction else ""
        stale = " (last good equation)" if self.error and self.reaction else ""
        self._shown.value = (
            f"<div style='font-size:16px;margin:4px 0'>{shown}"
            f"<span style='font-size:12px;color:#555'>{stale}</span></div>"
            + (self._phases_html() if self.reaction else "")
        )
        self._feedback.value = error_html(self.error)
        self._table.value = _table_html(table) if table else ""

    def _phases_html(self) -> str:
        assert self.reaction is not None
        parts = []
        for t in self.reaction.terms:
            ids = ", ".join(sp.id for sp in t.candidates)
            how = "fixed" if len(t.candidates) == 1 else "stable phase at each T among"
            who = t.identity()
            parts.append(
                f"{html.escape(t.label())} = {html.escape(who['name'] or 'unnamed')} "
                f"(CAS {html.escape(who['cas'] or 'not recorded')}): {how} {html.escape(ids)}"
            )
        return "<div style='font-size:12px;color:#333'>" + "; ".join(parts) + "</div>"

    def __repr__(self) -> str:
        state = "balanced" if self.balanced else "not usable"
        return f"<ReactionBuilder {self.equation!r}: {state}; last good {self.reaction_text!r}>"
