"""A species estimated from its structure: SMILES in, the estimate (or the reason it is refused)
out, as an entry of this worksheet's library."""

from __future__ import annotations

import html
from typing import Any

import ipywidgets as w
from traitlets import Unicode

from ..errors import FeasiblyError
from ..estimation import GasEstimate, estimate_gas
from ..library.catalogue import Library, default_library
from ._common import error_html, guarded, note_html, sync


class StructureEstimate(w.VBox):
    """ΔfH°, S° and Cp of a gas from its SMILES by group additivity, with calibrated standard
    uncertainties, the groups and their contributions.

    Traits: ``smiles``, ``name``, ``label`` (form label of the entry id), ``error`` (the refusal
    or problem, '' when valid) and ``species_id`` (the last valid entry). :attr:`library` is the
    base library with the entry added, :attr:`estimate` the last valid
    :class:`~feasibly.estimation.GasEstimate`. A structure the group set does not cover shows
    the kernel's reasons inline; the last valid estimate stays, marked as such.
    """

    smiles = Unicode("", help="the structure as SMILES")
    name = Unicode("", help="a name for the entry")
    label = Unicode("estimated", help="form label of the entry id")
    error = Unicode("", help="the kernel's message, '' when valid")
    species_id = Unicode("", help="id of the last valid entry")

    def __init__(self, base: Library | None = None, **kwargs: Any) -> None:
        self.base = base or default_library()
        self.library: Library = self.base
        self.estimate: GasEstimate | None = None
        self._smiles = w.Text(description="SMILES", layout={"width": "24em"})
        self._name = w.Text(description="name", layout={"width": "20em"})
        self._shown = w.HTML()
        self._feedback = w.HTML()
        super().__init__(**kwargs)
        self.children = [w.HBox([self._smiles, self._name]), self._shown, self._feedback]
        for child, trait in ((self._smiles, "smiles"), (self._name, "name")):
            child.value = getattr(self, trait)
            sync(child, self, trait)
        self._update(None)
        self.observe(self._update, names=["smiles", "name", "label"])

    @guarded
    def _update(self, change: dict[str, Any] | None) -> None:
        if not self.smiles.strip():
            self.error = ""
            self._shown.value = ""
            self._feedback.value = ""
            return
        try:
            est = estimate_gas(self.smiles, name=self.name, label=self.label)
            library = est.library(self.base)
        except FeasiblyError as exc:
            self.error = str(exc)
        else:
            self.estimate, self.library, self.species_id, self.error = est, library, est.id, ""
        self._shown.value = self._table(stale=bool(self.error))
        self._feedback.value = error_html(self.error)

    def _table(self, stale: bool) -> str:
        est = self.estimate
        if est is None:
            return ""
        e = html.escape
        rows = "".join(
            f"<tr><td>{e(g['kind'])}</td><td>{e(g['name'])}</td><td>{g['count']:g}</td>"
            f"<td>{g['dHf'] / 1000:+.2f}</td><td>{g['S']:+.2f}</td></tr>"
            for g in (*est.groups, *est.corrections)
        )
        head = (
            f"entry {e(est.id)}{' (last valid estimate)' if stale else ''} from {e(est.smiles)}: "
            f"ΔfH° = {est.dHf / 1000:.2f} ± {est.u_dHf / 1000:.2f} kJ/mol, "
            f"S° = {est.S298:.2f} ± {est.u_S298:.2f} J/(mol·K), Cp(300 K) = "
            f"{est.cp_values[0]:.1f} J/(mol·K) ± {est.cp_u_rel:.1%} (standard uncertainties; "
            f"{e(est.structure_class)} class, σ = {est.symmetry_number})"
        )
        table = (
            "<table><tr><th></th><th>group</th><th>×</th><th>ΔfH° kJ/mol</th>"
            f"<th>S° J/(mol·K)</th></tr>{rows}</table>"
        )
        return note_html(f"{head}{table}<div>{e(est.rule)}</div>", raw=True)

    def __repr__(self) -> str:
        state = self.error or (f"{self.species_id}" if self.species_id else "empty")
        return f"<StructureEstimate {self.smiles!r}: {state}>"
