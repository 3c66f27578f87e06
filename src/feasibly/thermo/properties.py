"""Standard reaction properties as functions of temperature: ΔrH°, ΔrS°, ΔrG°, ΔrCp°, K, the
crossover temperatures where ΔrG° changes sign, and the reaction quotient Q at given partial
pressures. Plain SI float arrays in and out; :mod:`feasibly.thermo.assessment` is the
unit-aware entry point."""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
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
    "quotient_at_conversion",
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
            nu = term.nu * term.scale(k)
            dH[mask] += nu * sp.enthalpy(Tm)
            dS[mask] += nu * sp.entropy(Tm)
            dCp[mask] += nu * sp.cp(Tm)
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
    rxn: Reaction,
    T_min: float,
    T_max: float,
    standard_pressure: float = STANDARD_PRESSURE_PA,
    ln_q: Callable[[np.ndarray], np.ndarray] | None = None,
) -> list[float]:
    """Temperatures in [T_min, T_max] where ΔrG°(T) = 0, by root-finding on the real function.

    With ``ln_q`` (ln Q as a function of T) the roots are those of ΔrG = ΔrG° + RT ln Q, the
    crossover at the user's conditions (e.g. a decomposition temperature at p(CO2) = 0.15 bar).
    ΔrG is sampled on a grid fine enough to separate roots (2001 points, plus the range ends),
    then each sign change is refined with Brent's method to 1e-6 K.
    """
    grid = np.linspace(T_min, T_max, 2001)

    def g_of(t: np.ndarray) -> np.ndarray:
        g = standard_properties(rxn, t, standard_pressure).dG
        if ln_q is None:
            return g
        with np.errstate(invalid="ignore"):
            return g + R * t * ln_q(t)

    g = g_of(grid)

    def f(t: float) -> float:
        return float(g_of(np.array([t]))[0])

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
        if p is not None and np.any(term.scale_array()[idx] != 1.0):
            raise UnitError(
                term.label(),
                "gas",
                "a partial pressure was given for an element whose stable form here is another "
                "molecule (e.g. S2(g) for S); write that molecule with its phase in the equation",
            )
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


def quotient_at_conversion(
    rxn: Reaction,
    feed: Mapping[str, float],
    key: str,
    required: float,
    total_pressure: float,
    standard_pressure: float,
    T: np.ndarray,
) -> np.ndarray:
    """ln Q per T at the composition the feed reaches at the ``required`` conversion of ``key``.

    Gases are an ideal mixture at ``total_pressure`` with the feed's species that are not in the
    equation (inerts); condensed species are pure. ΔrG = ΔrG° + RT ln Q at that composition is
    negative exactly where the equilibrium conversion exceeds ``required`` (G falls along the
    extent up to equilibrium), so its sign is the call on the conversion the user needs. A
    requirement the feed cannot reach by stoichiometry (another reactant runs out) gives +inf.
    """
    from .reaction import resolve_species, split_phase_label

    T = np.atleast_1d(np.asarray(T, dtype=float))
    n0 = np.zeros(len(rxn.terms))
    inert = 0.0

    def index(name: str) -> int | None:
        formula, phase, _ = split_phase_label(name)
        for j, t in enumerate(rxn.terms):
            if name in (t.label(), t.text, *(sp.id for sp in t.candidates)):
                return j
        hits = [
            j
            for j, t in enumerate(rxn.terms)
            if formula in (t.formula, t.text) and phase in (None, t.phase)
        ]
        return hits[0] if len(hits) == 1 else None

    for name, amount in feed.items():
        j = index(name)
        if j is not None:
            n0[j] += float(amount)
            continue
        formula, phase, form = split_phase_label(name)
        _, found = resolve_species(rxn.library, formula, phase, form, name)
        if any(sp.phase == "g" for sp in found):
            inert += float(amount)  # a condensed inert does not change any activity
    k = index(key)
    nu = np.array([t.nu for t in rxn.terms])
    if k is None or nu[k] >= 0 or n0[k] <= 0:
        raise UnitError(key, "key reactant", "name a reactant of the equation that the feed holds")
    xi = required * n0[k] / -nu[k]
    n = n0 + nu * xi
    # A relative 1e-12 absorbs rounding in n0 + ν ξ for a reactant used up exactly.
    n = np.where(np.abs(n) < 1e-12 * max(float(n0.max()), 1.0), 0.0, n)
    if np.any(n < 0):
        return np.full(T.shape, np.inf)
    plan = rxn.phase_plan(T)
    gas = np.stack(
        [
            np.array([sp.phase == "g" for sp in t.candidates])[idx]
            for t, idx in zip(rxn.terms, plan, strict=True)
        ],
        axis=1,
    )
    # Molecules of the form used per amount of the term (S2(g) standing for S: 1/2).
    scale = np.stack([t.scale_array()[idx] for t, idx in zip(rxn.terms, plan, strict=True)], axis=1)
    n = n * scale
    nu = nu * scale
    n_gas = np.sum(gas * n, axis=1) + inert
    out = np.zeros(T.shape)
    with np.errstate(divide="ignore", invalid="ignore"):
        for j in range(len(rxn.terms)):
            y = np.where(gas[:, j], n[:, j] / np.where(n_gas > 0, n_gas, 1.0), 1.0)
            term = nu[:, j] * np.log(
                np.where(gas[:, j], y * total_pressure / standard_pressure, 1.0)
            )
            # A condensed reactant used up ends the reaction: no further extent is possible.
            term = np.where(~gas[:, j] & (n[:, j] <= 0) & (nu[:, j] < 0), np.inf, term)
            out = out + np.where(np.isnan(term), np.inf, term)
    return out
