"""Reaction thermodynamics at temperature: Δr quantities, K, crossover and non-standard ΔrG.

All functions take and return SI float arrays (K, Pa, J/mol, J/(mol·K)); :func:`assess` is the
unit-aware entry point that reads user quantities through :mod:`feasibly.units`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .. import __about__
from .._tables import TableExport
from ..conditions import (
    read_partial_pressures,
    read_standard_pressure,
    read_temperatures,
)
from ..errors import FeasiblyError
from ..library.catalogue import Library, default_library
from ..library.cp_models import T_REF, R
from .properties import (
    _LN10,
    StandardProperties,
    crossover_temperatures,
    reaction_quotient,
    standard_properties,
)
from .reaction import Reaction
from .safety import DEFERRAL, Caution, cautions_for

__all__ = [
    "Assessment",
    "assess",
]


@dataclass
class Assessment(TableExport):
    """Everything a feasibility screen of one reaction reports (standard and actual conditions).

    Its table ``temperatures`` (one row per temperature, the keys of :meth:`to_dict`) is available
    as a DataFrame (:meth:`to_frame`) or CSV (:meth:`to_csv`, :meth:`write_tables`).
    """

    reaction: Reaction
    standard: StandardProperties
    crossover_K: list[float] | None
    crossover_298_estimate_K: float | None
    partial_pressures_Pa: dict[str, float]
    assumed_standard: list[str]
    dG_actual: np.ndarray | None
    log10_Q: float | None
    cautions: list[Caution]
    phase_changes: list[tuple[str, float, str, str]]
    metastable: list[tuple[str, float, str]]
    library_version: str
    library_hash: str
    notes: list[str] = field(default_factory=list)

    @property
    def feasible_standard(self) -> np.ndarray:
        """True where ΔrG° < 0 (favourable at standard state, thermodynamics only)."""
        return self.standard.dG < 0

    def tables(self) -> dict[str, list[dict[str, Any]]]:
        """The result's tables by name: ``temperatures`` (one row per temperature)."""
        return {"temperatures": self.to_dict()["rows"]}

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON output (SI units in every key name)."""
        s = self.standard
        rows = []
        for i in range(s.T.size):
            row: dict[str, Any] = {
                "T_K": float(s.T[i]),
                "dH_J_per_mol": float(s.dH[i]),
                "dS_J_per_mol_K": float(s.dS[i]),
                "dG_J_per_mol": float(s.dG[i]),
                "dCp_J_per_mol_K": float(s.dCp[i]),
                "log10_K": float(s.log10_K[i]),
                "K": float(s.K[i]) if np.isfinite(s.K[i]) else None,
                "dS_surroundings_J_per_mol_K": float(s.dS_surroundings[i]),
                "dS_universe_J_per_mol_K": float(s.dS_universe[i]),
                "gas_change_mol": float(s.gas_change[i]),
                "phases": list(s.phases[i]),
            }
            if self.dG_actual is not None:
                row["dG_actual_J_per_mol"] = float(self.dG_actual[i])
            rows.append(row)
        out: dict[str, Any] = {
            "equation": self.reaction.text,
            "balanced_equation": self.reaction.equation(),
            "standard_pressure_Pa": s.standard_pressure,
            "data_version": self.library_version,
            "data_sha256": self.library_hash,
            "feasibly_version": __about__.__version__,
            "rows": rows,
            "valid_range_K": list(self.reaction.valid_range()),
            "phase_changes": [
                {"term": t, "T_K": temp, "from": a, "to": b} for t, temp, a, b in self.phase_changes
            ],
            "metastable": [
                {"used": u, "T_K": temp, "stable": st} for u, temp, st in self.metastable
            ],
            "cautions": [c.as_dict() for c in self.cautions],
            "notes": list(self.notes),
        }
        if self.crossover_K is not None:
            out["crossover_K"] = list(self.crossover_K)
            out["crossover_298_estimate_K"] = self.crossover_298_estimate_K
        if self.dG_actual is not None:
            out["partial_pressures_Pa"] = dict(self.partial_pressures_Pa)
            out["at_standard_pressure"] = list(self.assumed_standard)
            out["log10_Q"] = self.log10_Q
        return out


def assess(
    equation: str | Reaction,
    T: Any = None,
    T_range: Any = None,
    points: int = 12,
    partial_pressures: Mapping[str, Any] | None = None,
    standard_pressure: Any = "1 bar",
    library: Library | None = None,
    balance: bool = False,
) -> Assessment:
    """Screen one reaction: standard Δr quantities and K at ``T`` or over ``T_range``.

    ``T`` is a temperature or array of temperatures with units (``"800 degC"``,
    ``feasibly.Q_([700, 900], "K")``); ``T_range`` is ``(T_lo, T_hi)`` with units, evaluated at
    ``points`` evenly spaced temperatures and searched for crossover temperatures.
    ``partial_pressures`` maps species (as written in the equation) to pressures with units; the
    other gases are at the standard pressure and listed as such.

    >>> a = assess("CaCO3 -> CaO + CO2", T="900 degC")
    >>> a.reaction.equation()
    'CaCO3 -> CaO + CO2'
    >>> bool(a.standard.dG[0] < 0)
    True
    """
    library = library or default_library()
    rxn = equation if isinstance(equation, Reaction) else Reaction.parse(equation, library, balance)
    p_std = read_standard_pressure(standard_pressure)
    temps, _ = read_temperatures(T, T_range, points, "assess")
    crossover = estimate = None
    std = standard_properties(rxn, temps, p_std)
    notes: list[str] = []
    if T_range is not None:
        crossover = crossover_temperatures(rxn, float(temps[0]), float(temps[-1]), p_std)
        try:
            at_ref = standard_properties(rxn, np.array([T_REF]), p_std)
            if at_ref.dS[0] != 0:
                t_est = float(at_ref.dH[0] / at_ref.dS[0])
                estimate = t_est if t_est > 0 else None
        except FeasiblyError:
            notes.append(
                "The 298.15 K estimate ΔrH°/ΔrS° is not shown: 298.15 K is outside the "
                "data range of at least one species."
            )
    pressures = read_partial_pressures(partial_pressures)
    dG_actual = log10_Q = None
    assumed: list[str] = []
    if pressures:
        lnQ, assumed = reaction_quotient(rxn, pressures, p_std, temps)
        dG_actual = std.dG + R * temps * lnQ
        log10_Q = float(lnQ[0] / _LN10)
    lo_T, hi_T = float(temps.min()), float(temps.max())
    changes = rxn.phase_changes(lo_T, hi_T) if hi_T > lo_T else []
    meta = rxn.metastable(temps)
    cautions = cautions_for(rxn, temps, std.dH, library, pressures)
    if cautions:
        notes.append(DEFERRAL)
    return Assessment(
        rxn,
        std,
        crossover,
        estimate,
        pressures,
        assumed,
        dG_actual,
        log10_Q,
        cautions,
        changes,
        meta,
        library.version,
        library.content_hash,
        notes,
    )
