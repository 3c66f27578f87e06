"""Reaction thermodynamics at temperature: Δr quantities, K, crossover and non-standard ΔrG.

All functions take and return SI float arrays (K, Pa, J/mol, J/(mol·K)); :func:`assess` is the
unit-aware entry point that reads user quantities through :mod:`feasibly.units`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import brentq

from .. import __about__
from ..conditions import (
    ONE_ATM_PA,
    STANDARD_PRESSURE_PA,
    read_partial_pressures,
    read_standard_pressure,
    read_temperatures,
)
from ..errors import FeasiblyError, UnitError
from ..library.catalogue import Library, default_library
from ..library.cp_models import T_REF, R
from .reaction import Reaction
from .safety import DEFERRAL, Caution, cautions_for

__all__ = [
    "Assessment",
    "StandardProperties",
    "assess",
    "crossover_temperatures",
    "standard_properties",
]

_LN10 = math.log(10.0)


@dataclass(frozen=True)
class StandardProperties:
    """Standard reaction properties per temperature (arrays of the same shape as ``T``).

    Units: ``T`` K; ``dH``, ``dG`` J/mol; ``dS``, ``dCp``, ``dS_surroundings``, ``dS_universe``
    J/(mol·K); ``log10_K`` and ``K`` dimensionless; ``phases`` the library ids used at each T.
    """

    T: np.ndarray
    dH: np.ndarray
    dS: np.ndarray
    dG: np.ndarray
    dCp: np.ndarray
    gas_change: np.ndarray
    standard_pressure: float
    phases: tuple[tuple[str, ...], ...]

    @property
    def log10_K(self) -> np.ndarray:
        """log10 of the standard equilibrium constant, −ΔrG°/(RT ln 10)."""
        return -self.dG / (R * self.T * _LN10)

    @property
    def K(self) -> np.ndarray:
        """Standard equilibrium constant (inf where it overflows a float)."""
        with np.errstate(over="ignore"):
            return np.power(10.0, self.log10_K)

    @property
    def dS_surroundings(self) -> np.ndarray:
        """Entropy change of the surroundings at T, −ΔrH°/T."""
        return -self.dH / self.T

    @property
    def dS_universe(self) -> np.ndarray:
        """ΔrS° + ΔS(surroundings) = −ΔrG°/T."""
        return self.dS + self.dS_surroundings


def standard_properties(
    rxn: Reaction, T: Any, standard_pressure: float = STANDARD_PRESSURE_PA
) -> StandardProperties:
    """ΔrH°, ΔrS°, ΔrG°, ΔrCp° of ``rxn`` at temperatures ``T`` (K, float or array).

    Gas standard states are at ``standard_pressure`` (1 bar or 1 atm): the data are on 1 bar, and
    a 1 atm standard state shifts each gas's S° by −R ln(p°/1 bar).
    """
    if standard_pressure not in (STANDARD_PRESSURE_PA, ONE_ATM_PA):
        raise UnitError(standard_pressure, "standard pressure", "use 1 bar (100000 Pa) or 1 atm")
    T = np.atleast_1d(np.asarray(T, dtype=float))
    if np.any(~np.isfinite(T)) or np.any(T <= 0):
        raise FeasiblyError("temperatures must be finite and above 0 K")
    plan = rxn.phase_plan(T)
    dH = np.zeros(T.shape)
    dS = np.zeros(T.shape)
    dCp = np.zeros(T.shape)
    phases: list[list[str]] = [[] for _ in range(T.size)]
    for term, idx in zip(rxn.terms, plan, strict=True):
        for k, sp in enumerate(term.candidates):
            mask = idx == k
            if not np.any(mask):
                continue
            Tm = T[mask]
            dH[mask] += term.nu * sp.enthalpy(Tm)
            dS[mask] += term.nu * sp.entropy(Tm)
            dCp[mask] += term.nu * sp.cp(Tm)
            for i in np.nonzero(mask)[0]:
                phases[i].append(sp.id)
    dn = rxn.gas_change(T)
    if standard_pressure != STANDARD_PRESSURE_PA:
        dS = dS - dn * R * math.log(standard_pressure / STANDARD_PRESSURE_PA)
    dG = dH - T * dS
    return StandardProperties(
        T, dH, dS, dG, dCp, dn, standard_pressure, tuple(tuple(p) for p in phases)
    )


def crossover_temperatures(
    rxn: Reaction, T_min: float, T_max: float, standard_pressure: float = STANDARD_PRESSURE_PA
) -> list[float]:
    """Temperatures in [T_min, T_max] where ΔrG°(T) = 0, by root-finding on the real function.

    ΔrG° is sampled on a grid fine enough to separate roots (2001 points, plus the range ends),
    then each sign change is refined with Brent's method to 1e-6 K.
    """
    grid = np.linspace(T_min, T_max, 2001)
    g = standard_properties(rxn, grid, standard_pressure).dG

    def f(t: float) -> float:
        return float(standard_properties(rxn, np.array([t]), standard_pressure).dG[0])

    roots = []
    for i in range(grid.size - 1):
        if g[i] == 0.0:
            roots.append(float(grid[i]))
        elif g[i] * g[i + 1] < 0:
            roots.append(float(brentq(f, grid[i], grid[i + 1], xtol=1e-6)))
    if g[-1] == 0.0:
        roots.append(float(grid[-1]))
    return roots


@dataclass
class Assessment:
    """Everything a feasibility screen of one reaction reports (standard and actual conditions)."""

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


def _reaction_quotient(
    rxn: Reaction, pressures: Mapping[str, float], standard_pressure: float, T: np.ndarray
) -> tuple[np.ndarray, list[str]]:
    """ln Q per T for ideal gases at given partial pressures; condensed phases at activity 1."""
    known = {t.formula: t for t in rxn.terms} | {t.label(): t for t in rxn.terms}
    for name in pressures:
        if name not in known:
            raise UnitError(
                name,
                "species of this reaction",
                f"partial pressure given for {name}, which is not in the equation",
            )
    plan = rxn.phase_plan(T)
    lnQ = np.zeros(T.shape)
    assumed = []
    for term, idx in zip(rxn.terms, plan, strict=True):
        is_gas = np.array([sp.phase == "g" for sp in term.candidates])[idx]
        p = pressures.get(term.label(), pressures.get(term.formula))
        if p is None:
            if np.any(is_gas):
                assumed.append(term.label())
            continue
        if not np.all(is_gas):
            raise UnitError(
                term.label(),
                "gas",
                "a partial pressure was given, but this species "
                "is condensed at some of the temperatures; label it (g) to treat it "
                "as a gas throughout",
            )
        lnQ += term.nu * math.log(p / standard_pressure)
    return lnQ, assumed


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
        lnQ, assumed = _reaction_quotient(rxn, pressures, p_std, temps)
        dG_actual = std.dG + R * temps * lnQ
        log10_Q = float(lnQ[0] / _LN10)
    lo_T, hi_T = float(temps.min()), float(temps.max())
    changes = rxn.phase_changes(lo_T, hi_T) if hi_T > lo_T else []
    meta = rxn.metastable(temps)
    cautions = cautions_for(rxn, temps, std.dH, library)
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
