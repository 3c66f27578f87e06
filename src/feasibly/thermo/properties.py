"""Standard reaction properties as functions of temperature: ΔrH°, ΔrS°, ΔrG°, ΔrCp°, K, the
crossover temperatures where ΔrG° changes sign, and the reaction quotient Q at given partial
pressures. Plain SI float arrays in and out; :mod:`feasibly.thermo.assessment` is the
unit-aware entry point."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import brentq

from ..conditions import (
    ONE_ATM_PA,
    STANDARD_PRESSURE_PA,
)
from ..errors import InvalidTemperature, UnitError
from ..library.cp_models import R
from .reaction import Reaction

__all__ = [
    "StandardProperties",
    "crossover_temperatures",
    "reaction_quotient",
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
        raise InvalidTemperature(T, "temperatures must be finite and above 0 K")
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


def reaction_quotient(
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
