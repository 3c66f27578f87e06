"""One species in one phase: its 298.15 K values, heat-capacity model, uncertainties and sources.

``H(T) = ΔfH°(298.15 K) + h(T)`` and ``S(T) = S°(298.15 K) + s(T)``, where h and s come from the
heat-capacity model (:mod:`feasibly.thermo_functions`). All arrays are SI floats; temperatures are
checked against the entry's validity range and never extrapolated.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any, cast

import numpy as np

from .._pickling import ProxyPickling
from ..errors import OutsideDataRange
from .cp_models import CpModel, Nasa7, R, gibbs_basis

__all__ = ["PHASES", "SourcedValue", "Species", "gibbs_rt"]

#: Phase codes and what they mean in a report.
PHASES = MappingProxyType(
    {"g": "gas", "l": "liquid", "cr": "crystalline solid", "aq": "aqueous solution"}
)

# Relative slack on range ends so that a range end typed in °C (e.g. 25 °C = 298.15 K) is inside;
# 1e-9 of a few hundred kelvin is far below any meaningful temperature difference.
_RANGE_SLACK = 1e-9


@dataclass(frozen=True)
class SourcedValue(ProxyPickling):
    """A number with its standard uncertainty and where both came from."""

    value: float
    u: float
    source: str
    entry: str
    uncertainty: MappingProxyType[str, Any]
    replaced: MappingProxyType[str, Any] | None = None

    @property
    def assumed(self) -> bool:
        """True when no source stated the uncertainty and a written policy set it."""
        return bool(self.uncertainty.get("assumed", False))


@dataclass(frozen=True, eq=False)
class Species(ProxyPickling):
    """A species-phase entry of the data library (shipped or user-supplied)."""

    id: str
    formula: str
    elements: MappingProxyType[str, float]
    charge: int
    phase: str
    form: str | None
    names: tuple[str, ...]
    cas: str | None
    molar_mass: float
    T_range: tuple[float, float]
    reference_state_of: str | None
    dHf: SourcedValue
    S298: SourcedValue
    cp_model: CpModel
    cp_u_rel: float
    cp_source: MappingProxyType[str, Any]
    hypothetical_298: bool = False
    notes: tuple[str, ...] = ()
    origin: str = "library"
    raw: MappingProxyType[str, Any] = field(default_factory=lambda: MappingProxyType({}))

    def __repr__(self) -> str:
        return f"<Species {self.id} {self.T_range[0]:g}–{self.T_range[1]:g} K ({self.origin})>"

    @property
    def label(self) -> str:
        """Formula with phase (and form) as written in equations, e.g. ``CaCO3(cr,calcite)``."""
        return self.id

    def covers(self, T: np.ndarray) -> np.ndarray:
        """Boolean mask of temperatures inside this entry's validity range."""
        T = np.asarray(T, dtype=float)
        lo, hi = self.T_range
        return (T >= lo * (1 - _RANGE_SLACK)) & (T <= hi * (1 + _RANGE_SLACK))

    def check_range(self, T: np.ndarray) -> np.ndarray:
        """Return T as a float array, or raise :class:`OutsideDataRange` for the first bad value."""
        T = np.asarray(T, dtype=float)
        inside = self.covers(T)
        if not np.all(inside):
            bad = float(np.atleast_1d(T)[~np.atleast_1d(inside)][0])
            raise OutsideDataRange(self.id, bad, *self.T_range)
        return T

    def cp(self, T: np.ndarray) -> np.ndarray:
        """Cp°(T) in J/(mol·K)."""
        return self.cp_model.cp(self.check_range(T))

    def enthalpy(self, T: np.ndarray) -> np.ndarray:
        """H°(T) on the ΔfH°(298.15 K) scale, J/mol."""
        return self.dHf.value + self.cp_model.h_inc(self.check_range(T))

    def entropy(self, T: np.ndarray) -> np.ndarray:
        """S°(T) in J/(mol·K)."""
        return self.S298.value + self.cp_model.s_inc(self.check_range(T))

    def gibbs(self, T: np.ndarray) -> np.ndarray:
        """G°(T) = H°(T) − T·S°(T) on the same scale, J/mol."""
        return self._gibbs(self.check_range(T))

    def _gibbs(self, T: np.ndarray) -> np.ndarray:
        # G° = ΔfH° + ΔH(298.15 → T) − T (S° + ΔS(298.15 → T)), without the range check
        cp = self.cp_model
        return self.dHf.value + cp.h_inc(T) - T * (self.S298.value + cp.s_inc(T))

    def provenance(self) -> dict[str, Any]:
        """Where each number of this entry came from, as plain data for reports."""

        def block(v: SourcedValue) -> dict[str, Any]:
            out = {
                "value": v.value,
                "u": v.u,
                "source": v.source,
                "entry": v.entry,
                "uncertainty": dict(v.uncertainty),
            }
            if v.replaced is not None:
                out["replaced"] = dict(v.replaced)
            return out

        return {
            "id": self.id,
            "origin": self.origin,
            "T_range_K": list(self.T_range),
            "dHf_298_J_per_mol": block(self.dHf),
            "S_298_J_per_mol_K": block(self.S298),
            "cp": {"u_rel": self.cp_u_rel, **dict(self.cp_source)},
            "hypothetical_298": self.hypothetical_298,
            "notes": list(self.notes),
        }


def gibbs_rt(entries: Sequence[Species], T: np.ndarray) -> np.ndarray:
    """G°/RT of every entry at every temperature (len(T) × entries), without range checks.

    The NASA-7 and NASA-9 entries are evaluated together: the functions of T their G°/RT
    combines are formed once (``gibbs_basis``) and one matrix product gives every entry on every
    interval, of which each temperature takes its own interval. The same values as
    ``entry.gibbs(T) / (R T)`` to rounding: the two cancel the polynomial's terms in different
    orders, within 1e-10 of the size of G°/RT over every library entry's range (measured worst
    9.6e-11, NaCN(cr,II); tests/reference/test_gibbs_table_vs_cantera.py). Other heat-capacity
    models are evaluated entry by entry. Values outside an entry's range are the polynomial's
    extrapolation: the caller masks them (``Species.covers``).
    """
    T = np.asarray(T, dtype=float)
    out = np.empty((T.size, len(entries)))
    poly = [j for j, sp in enumerate(entries) if isinstance(sp.cp_model, Nasa7)]
    if poly:
        models = [cast(Nasa7, entries[j].cp_model) for j in poly]
        blocks = [
            m.gibbs_coefficients(entries[j].dHf.value, entries[j].S298.value)
            for m, j in zip(models, poly, strict=True)
        ]
        first = np.cumsum([0] + [b.shape[0] for b in blocks[:-1]])
        # (len(T), all intervals). einsum's own loop, not BLAS: a multi-threaded BLAS call here
        # leaves its threads spinning beside the solver's (measured: 24 → 38 ms of CPU time for
        # 10^4 equilibrium states).
        values = np.einsum("kn,ck->nc", gibbs_basis(T), np.vstack(blocks), optimize=False)
        rows = np.arange(T.size)
        for j, m, start in zip(poly, models, first, strict=True):
            out[:, j] = values[rows, start + m.interval(T)]
    for j, sp in enumerate(entries):
        if not isinstance(sp.cp_model, Nasa7):
            out[:, j] = sp._gibbs(T) / (R * T)
    return out
