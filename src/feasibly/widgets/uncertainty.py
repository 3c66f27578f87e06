"""Uncertainty input (value ± uncertainty with its statement) and a species from an estimate."""

from __future__ import annotations

import html
import json
from typing import Any

import ipywidgets as w
from traitlets import Bool, Enum, Float, Unicode

from ..errors import FeasiblyError, InvalidUncertainty
from ..library.catalogue import Library, default_library
from ..library.species import PHASES
from ..uncertainty.inputs import Override, build_inputs
from ._common import error_html, guarded, note_html, sync

__all__ = ["SpeciesEstimate", "UncertaintyInput"]

#: Units offered per quantity (pint spellings); Cp is a relative factor with a relative uncertainty.
UNITS = {
    "dHf": ["kJ/mol", "J/mol", "kcal/mol"],
    "S298": ["J/(mol*K)", "cal/(mol*K)"],
    "cp": ["%"],
}
#: How the uncertainty is stated, as the kernel reads it.
COVERAGES = {"standard": "standard", "k = 2": "k=2", "95 %": "95%"}
_LABEL = {"dHf": "ΔfH°(298.15 K)", "S298": "S°(298.15 K)", "cp": "Cp factor"}
_SI = {"dHf": ("kJ/mol", 1000.0), "S298": ("J/(mol·K)", 1.0), "cp": ("%", 0.01)}


class UncertaintyInput(w.VBox):
    """A user's value ± uncertainty for one input of one species, with the reason for it.

    Traits: ``target`` (species id), ``quantity`` ("dHf", "S298", "cp"), ``value`` (text, ''
    keeps the library value; for cp a factor such as 1.05), ``uncertainty`` (text), ``unit``,
    ``coverage`` ("standard", "k = 2", "95 %"), ``distribution``, ``reason`` (required),
    ``error``, and the derived ``standard_u`` (SI) the kernel will use. :attr:`override` is the
    last valid :class:`~feasibly.uncertainty.Override`, checked by the kernel against the target.
    """

    target = Unicode("", help="species id the value belongs to")
    quantity = Enum(list(UNITS), "dHf", help="which input: dHf, S298 or cp")
    value = Unicode("", help="the value, '' to keep the library's (cp: a factor)")
    uncertainty = Unicode("", help="the uncertainty as stated")
    unit = Unicode("kJ/mol", help="unit of value and uncertainty")
    coverage = Enum(list(COVERAGES), "standard", help="how the uncertainty is stated")
    distribution = Enum(["normal", "uniform", "triangular"], "normal", help="shape")
    reason = Unicode("", help="source or reason (required; goes into every record)")
    error = Unicode("", help="the kernel's message, '' when valid")
    standard_u = Float(0.0, help="standard uncertainty the kernel will use, SI units")

    def __init__(self, library: Library | None = None, **kwargs: Any) -> None:
        self.library = library or default_library()
        self.override: Override | None = None
        q = kwargs.get("quantity", "dHf")
        self._value = w.Text(description="value", layout={"width": "14em"})
        self._u = w.Text(description="±", layout={"width": "11em"})
        self._unit = w.Dropdown(options=UNITS[q], layout={"width": "9em"})
        self._coverage = w.Dropdown(
            options=list(COVERAGES), description="stated as", layout={"width": "14em"}
        )
        self._dist = w.Dropdown(
            options=["normal", "uniform", "triangular"],
            description="shape",
            layout={"width": "14em"},
        )
        self._reason = w.Text(
            description="source",
            placeholder="where the number comes from (required)",
            layout={"width": "95%"},
        )
        self._title = w.HTML()
        self._readout = w.HTML()
        self._feedback = w.HTML()
        super().__init__(**kwargs)
        self.children = [
            self._title,
            w.HBox([self._value, self._u, self._unit]),
            w.HBox([self._coverage, self._dist]),
            self._reason,
            self._readout,
            self._feedback,
        ]
        if "unit" not in kwargs:
            self.unit = UNITS[self.quantity][0]
        for child, name in (
            (self._value, "value"),
            (self._u, "uncertainty"),
            (self._unit, "unit"),
            (self._coverage, "coverage"),
            (self._dist, "distribution"),
            (self._reason, "reason"),
        ):
            child.value = getattr(self, name)
            sync(child, self, name)
        self._update(None)
        self.observe(
            self._update,
            names=[
                "target",
                "quantity",
                "value",
                "uncertainty",
                "unit",
                "coverage",
                "distribution",
                "reason",
            ],
        )

    def _text(self, which: str) -> Any:
        text = getattr(self, which).strip()
        if not text:
            return None
        if self.quantity == "cp":
            return f"{text} %" if which == "uncertainty" else float(text)
        return f"{text} {self.unit}"

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        if change is not None and change["name"] == "quantity":
            self._unit.options = UNITS[self.quantity]
            self.unit = UNITS[self.quantity][0]
            return  # the unit change comes back here
        self._title.value = (
            f"<b>{_LABEL[self.quantity]} of {html.escape(self.target) if self.target else '…'}</b>"
        )
        try:
            if not self.target:
                raise InvalidUncertainty("choose the species this value belongs to")
            sp = self.library[self.target]
            try:
                value, unc = self._text("value"), self._text("uncertainty")
            except ValueError:
                raise InvalidUncertainty(
                    f"the Cp factor {self.value!r} is not a number (e.g. 1.05)"
                ) from None
            ov = Override(
                self.target,
                self.quantity,
                self.reason,
                value=value,
                uncertainty=unc,
                coverage=COVERAGES[self.coverage],
                distribution=self.distribution,
            )
            inp = next(i for i in build_inputs([sp], [ov]) if i.key == (sp.id, self.quantity))
        except FeasiblyError as exc:
            self.error = str(exc)
        else:
            self.override, self.error, self.standard_u = ov, "", inp.u
        unit, scale = _SI[self.quantity]
        if self.override is not None:
            stale = " (last valid entry)" if self.error else ""
            self._readout.value = note_html(
                f"standard uncertainty used: {self.standard_u / scale:.4g} {unit}, "
                f"{self.override.distribution}{stale}"
            )
        else:
            self._readout.value = ""
        self._feedback.value = error_html(self.error)

    def __repr__(self) -> str:
        ok = "valid" if not self.error else f"invalid ({self.error})"
        return (
            f"<UncertaintyInput {self.target}:{self.quantity} = {self.value or 'library'} ± "
            f"{self.uncertainty} {self.unit} {self.coverage}, {self.distribution}; {ok}>"
        )


def _entry_block(inp: UncertaintyInput, si: float, scale: float) -> dict[str, Any]:
    return {
        "value": si,
        "source": inp.reason.strip() or "estimate",
        "uncertainty": {
            "stated": float(inp.uncertainty) * scale,
            "convention": {"standard": "standard", "k = 2": "k=2", "95 %": "expanded-95"}[
                inp.coverage
            ],
        },
    }


class SpeciesEstimate(w.VBox):
    """A species no table has, from an estimate: formula, phase, range, ΔfH°, S°, Cp, each ± u.

    The entry is written in the documented user-species schema and read by the kernel
    (:meth:`~feasibly.Library.from_text`), which validates it. Traits: ``formula``, ``phase``,
    ``name``, ``T_min``/``T_max`` (K), ``cp`` (constant Cp, J/(mol·K)), ``error``, ``species_id``
    (the id of the last valid entry). :attr:`library` is the default library with the entry
    added; :attr:`dHf`, :attr:`S298` and :attr:`cp_input` are the :class:`UncertaintyInput` parts
    (their ``target`` follows the entry), and :attr:`overrides` carries a non-normal shape.
    """

    formula = Unicode("", help="formula of the new species")
    phase = Enum(list(PHASES), "cr", help="phase code: g, l, cr, aq")
    name = Unicode("", help="a name for it")
    T_min = Float(298.15, help="lowest temperature of the estimate, K")
    T_max = Float(1000.0, help="highest temperature of the estimate, K")
    cp = Float(100.0, help="constant heat capacity, J/(mol·K)")
    error = Unicode("", help="the kernel's message, '' when valid")
    species_id = Unicode("", help="id of the last valid entry")
    replace_shipped = Bool(False, help="let the estimate replace a shipped entry of the same id")

    def __init__(self, base: Library | None = None, **kwargs: Any) -> None:
        self.base = base or default_library()
        self.library: Library = self.base
        parts: dict[str, dict[str, Any]] = {
            k: kwargs.pop(k) for k in ("dHf", "S298", "cp_u") if k in kwargs
        }
        self.dHf = UncertaintyInput(library=self.base, quantity="dHf")
        self.S298 = UncertaintyInput(library=self.base, quantity="S298")
        self.cp_input = UncertaintyInput(library=self.base, quantity="cp")
        for inp, key in ((self.dHf, "dHf"), (self.S298, "S298"), (self.cp_input, "cp_u")):
            for trait, v in parts.get(key, {}).items():
                setattr(inp, trait, v)
        self._formula = w.Text(description="formula", layout={"width": "16em"})
        self._phase = w.Dropdown(options=list(PHASES), description="phase")
        self._name = w.Text(description="name", layout={"width": "24em"})
        self._tmin = w.FloatText(description="from (K)", layout={"width": "12em"})
        self._tmax = w.FloatText(description="to (K)", layout={"width": "12em"})
        self._cp = w.FloatText(description="Cp (J/(mol·K))", layout={"width": "16em"})
        self._feedback = w.HTML()
        self._shown = w.HTML()
        super().__init__(**kwargs)
        self.children = [
            w.HBox([self._formula, self._phase, self._name]),
            w.HBox([self._tmin, self._tmax, self._cp]),
            self.dHf,
            self.S298,
            self.cp_input,
            self._shown,
            self._feedback,
        ]
        for child, trait in (
            (self._formula, "formula"),
            (self._phase, "phase"),
            (self._name, "name"),
            (self._tmin, "T_min"),
            (self._tmax, "T_max"),
            (self._cp, "cp"),
        ):
            child.value = getattr(self, trait)
            sync(child, self, trait)
        self.overrides: list[Override] = []
        self._update(None)
        self.observe(
            self._update,
            names=["formula", "phase", "name", "T_min", "T_max", "cp", "replace_shipped"],
        )
        for inp in (self.dHf, self.S298, self.cp_input):
            inp.observe(self._update, names=["value", "uncertainty", "unit", "coverage", "reason"])

    def document(self) -> dict[str, Any]:
        """The entry in the user-species schema (data/SCHEMA.md), SI units."""
        from ..units import Q_, to_energy_per_mol

        def number(inp: UncertaintyInput) -> float:
            try:
                return float(inp.value)
            except ValueError:
                raise InvalidUncertainty(
                    f"{_LABEL[inp.quantity]}: {inp.value!r} is not a number"
                ) from None

        for inp in (self.dHf, self.S298, self.cp_input):
            if not inp.reason.strip():
                raise InvalidUncertainty(
                    f"{_LABEL[inp.quantity]} of {self.formula}: say where the estimate comes from "
                    "(a source or reason is required)"
                )
            try:
                float(inp.uncertainty)
            except ValueError:
                raise InvalidUncertainty(
                    f"{_LABEL[inp.quantity]}: uncertainty {inp.uncertainty!r} is not a number"
                ) from None
        h = float(to_energy_per_mol(f"{number(self.dHf)} {self.dHf.unit}"))
        h_scale = float(to_energy_per_mol(f"1 {self.dHf.unit}"))
        s_q = Q_(number(self.S298), self.S298.unit.replace("·", "*"))
        s = float(s_q.to("J/(mol*K)").magnitude)
        s_scale = float(Q_(1.0, self.S298.unit).to("J/(mol*K)").magnitude)
        entry = {
            "formula": self.formula.strip(),
            "phase": self.phase,
            "names": [self.name] if self.name else [],
            "T_range_K": [self.T_min, self.T_max],
            "notes": ["Estimate entered in a feasibly worksheet."],
            "dHf_298": _entry_block(self.dHf, h, h_scale),
            "S_298": _entry_block(self.S298, s, s_scale),
            "cp": {
                "model": "constant",
                "cp_J_per_mol_K": self.cp,
                "u_rel": float(self.cp_input.uncertainty) / 100,
                "source": self.cp_input.reason.strip(),
            },
        }
        return {"schema": "feasibly-species", "schema_version": 1, "species": [entry]}

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        try:
            doc = self.document()
            extra = Library.from_text(json.dumps(doc), "estimate.json", origin="estimate")
            (sp,) = list(extra)
            library = self.base.with_species(extra, replace_shipped=self.replace_shipped)
        except FeasiblyError as exc:
            self.error = str(exc)
        else:
            self.library, self.error, self.species_id = library, "", sp.id
            shapes = []
            for inp in (self.dHf, self.S298, self.cp_input):
                inp.library, inp.target = library, sp.id
                if inp.distribution != "normal" and inp.override is not None:
                    shapes.append(inp.override)
            self.overrides = shapes
        stale = " (last valid entry)" if self.error and self.species_id else ""
        replaces = any(sid == self.species_id for sid, _, _ in self.library.replaced)
        what = "REPLACES the shipped entry in" if replaces else "added to"
        self._shown.value = (
            note_html(
                f"entry {self.species_id}{stale} (your estimate) {what} this worksheet's library"
            )
            if self.species_id
            else ""
        )
        self._feedback.value = error_html(self.error)

    def __repr__(self) -> str:
        ok = "valid" if not self.error else f"invalid ({self.error})"
        return f"<SpeciesEstimate {self.species_id or self.formula!r}; {ok}>"
