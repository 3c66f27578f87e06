"""Standard reaction properties as functions of temperature: ΔrH°, ΔrS°, ΔrG°, ΔrCp°, K, the
crossover temperatures where ΔrG° changes sign, and the reaction quotient Q at given partial
pressures. Plain SI float arrays in and out; :mod:`feasibly.thermo.assessment` is the
unit-aware entry point."""

from __future__ import annotations

import math
import weakref
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any, NamedTuple

import numpy as np

from ..conditions import (
    ONE_ATM_PA,
    STANDARD_PRESSURE_PA,
)
from ..errors import InvalidInput, InvalidTemperature, UnitError
from ..library.cp_models import Nasa7, Nasa9, R
from ..library.species import Species
from .fugacity import reaction_fugacity_term
from .reaction import Reaction

__all__ = [
    "StandardProperties",
    "crossover_temperatures",
    "fugacity_term",
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


class _ReactionPolynomial(NamedTuple):
    """A reaction whose every term has one NASA polynomial entry, folded into one polynomial per
    segment.

    ΔrH°/RT, ΔrS°/R and ΔrCp°/R are linear in the coefficients, so Σν·a over the terms gives one
    polynomial per stretch of temperature between the union of all species' breaks. The fold is
    in the NASA-9 form; a NASA-7 interval is the NASA-9 one with a1 = a2 = 0 (its a1…a7 become
    a3…a7, b1, b2), and when no term has the T⁻² and T⁻¹ terms they are left out of the sums.
    """

    inner: np.ndarray  # the union of the species' inner breaks, K (ascending)
    h: np.ndarray  # (6, segments): a3, a4/2, a5/3, a6/4, a7/5, b1 (H/RT form)
    s: np.ndarray  # (6, segments): a3, a4, a5/2, a6/3, a7/4, b2 (S/R form)
    cp: np.ndarray  # (5, segments): a3 … a7 (Cp/R form)
    low: np.ndarray | None  # (2, segments): a1, a2 (the T⁻² and T⁻¹ terms), None when all zero
    offset_h: float  # Σν (ΔfH°(298.15) − H_poly(298.15)), J/mol
    offset_s: float  # Σν (S°(298.15) − S_poly(298.15)), J/(mol·K)
    T_low: float  # the range every species covers, K
    T_high: float
    gas_change: float
    ids: tuple[str, ...]


def _nine(model: Nasa7) -> np.ndarray:
    """The intervals' coefficients in the NASA-9 form (n, 9)."""
    c = np.asarray(model.coeffs, dtype=float)
    if isinstance(model, Nasa9):
        return c
    return np.concatenate([np.zeros((c.shape[0], 2)), c], axis=1)


# One folded polynomial per Reaction object (reactions are immutable once parsed).
_FOLDED: weakref.WeakKeyDictionary[Reaction, _ReactionPolynomial | None] = (
    weakref.WeakKeyDictionary()
)


def _fold(rxn: Reaction) -> _ReactionPolynomial | None:
    """The folded polynomial of ``rxn``, or None when a term has several phases or no NASA
    polynomial (NASA-7 or NASA-9)."""
    if rxn in _FOLDED:
        return _FOLDED[rxn]
    folded = None
    entries = [t.candidates[0] for t in rxn.terms if len(t.candidates) == 1]
    if len(entries) == len(rxn.terms) and all(
        type(sp.cp_model) in (Nasa7, Nasa9) for sp in entries
    ):
        inner = np.unique(
            np.concatenate([np.asarray(sp.cp_model.breaks[1:-1]) for sp in entries])  # type: ignore[attr-defined]
        )
        edges = np.append(inner, np.inf)
        a = np.zeros((edges.size, 9))
        off_h = off_s = dn = 0.0
        for term, sp in zip(rxn.terms, entries, strict=True):
            model: Nasa7 = sp.cp_model  # type: ignore[assignment]
            # A temperature on a break belongs to the lower interval (Nasa7._interval): the
            # segment (u[s-1], u[s]] sits in the interval holding u[s] with side="left".
            k = np.searchsorted(np.asarray(model.breaks[1:-1]), edges, side="left")
            nu = term.nu * term.scale(0)  # amount of the entry per amount of the term
            a += nu * _nine(model)[k]
            h_ref, s_ref = model.absolute_298()
            off_h += nu * (sp.dHf.value - h_ref)
            off_s += nu * (sp.S298.value - s_ref)
            dn += nu * (sp.phase == "g")
        c = a.T
        low = np.array(c[:2]) if np.any(c[:2] != 0.0) else None
        folded = _ReactionPolynomial(
            inner,
            np.array([c[2], c[3] / 2, c[4] / 3, c[5] / 4, c[6] / 5, c[7]]),
            np.array([c[2], c[3], c[4] / 2, c[5] / 3, c[6] / 4, c[8]]),
            np.array(c[2:7]),
            low,
            off_h,
            off_s,
            max(sp.T_range[0] for sp in entries),
            min(sp.T_range[1] for sp in entries),
            dn,
            tuple(sp.id for sp in entries),
        )
    _FOLDED[rxn] = folded
    return folded


# The same relative slack on range ends as Species.covers (a range end typed in °C is inside).
_RANGE_SLACK = 1e-9


def _folded_properties(
    f: _ReactionPolynomial, T: np.ndarray, standard_pressure: float
) -> StandardProperties:
    first, last = np.searchsorted(f.inner, [T.min(), T.max()], side="left")
    if first == last:  # one segment: its coefficients broadcast as scalars, no gather
        h, s, cp = f.h[:, first], f.s[:, first], f.cp[:, first]
    else:
        seg = np.searchsorted(f.inner, T, side="left")
        h, s, cp = (np.take(c, seg, axis=1) for c in (f.h, f.s, f.cp))
    log_t = np.log(T)
    h_rt = h[0] + T * (h[1] + T * (h[2] + T * (h[3] + T * h[4]))) + h[5] / T
    s_r = s[0] * log_t + T * (s[1] + T * (s[2] + T * (s[3] + T * s[4]))) + s[5]
    cp_r = cp[0] + T * (cp[1] + T * (cp[2] + T * (cp[3] + T * cp[4])))
    if f.low is not None:  # the NASA-9 T⁻² and T⁻¹ terms (TP-2002-211556, eqs. 1–3)
        a1, a2 = f.low[:, first] if first == last else np.take(f.low, seg, axis=1)
        inv = 1.0 / T
        h_rt = h_rt + inv * (a2 * log_t - a1 * inv)
        s_r = s_r - inv * (a2 + 0.5 * a1 * inv)
        cp_r = cp_r + inv * (a2 + a1 * inv)
    dH = (R * T) * h_rt + f.offset_h
    dS = R * s_r + f.offset_s
    dCp = R * cp_r
    dn = np.full(T.shape, f.gas_change)
    if standard_pressure != STANDARD_PRESSURE_PA:
        dS = dS - dn * R * math.log(standard_pressure / STANDARD_PRESSURE_PA)
    dG = dH - T * dS
    return StandardProperties(T, dH, dS, dG, dCp, dn, standard_pressure, (f.ids,) * T.size)


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
    folded = _fold(rxn)
    if (
        folded is not None
        and T.size
        and T.min() >= folded.T_low * (1 - _RANGE_SLACK)
        and T.max() <= folded.T_high * (1 + _RANGE_SLACK)
    ):
        return _folded_properties(folded, T, standard_pressure)
    plan = rxn.phase_plan(T)
    dH = np.zeros(T.shape)
    dS = np.zeros(T.shape)
    dCp = np.zeros(T.shape)
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
    # The ids used at each T, without a Python loop over temperatures.
    ids = [
        np.array([sp.id for sp in t.candidates], dtype=object)[k]
        for t, k in zip(rxn.terms, plan, strict=True)
    ]
    phases: tuple[tuple[str, ...], ...] = (
        tuple(zip(*(i.ravel().tolist() for i in ids), strict=True)) if ids else ((),) * T.size
    )
    dn = rxn.gas_change(T)
    if standard_pressure != STANDARD_PRESSURE_PA:
        dS = dS - dn * R * math.log(standard_pressure / STANDARD_PRESSURE_PA)
    dG = dH - T * dS
    return StandardProperties(T, dH, dS, dG, dCp, dn, standard_pressure, phases)


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
    from scipy.optimize import brentq  # loaded on first use: it costs start-up for every command

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
    rxn: Reaction,
    pressures: Mapping[str, float],
    standard_pressure: float,
    T: np.ndarray,
    molalities: Mapping[str, float] | None = None,
) -> tuple[np.ndarray, list[str]]:
    """ln Q per T for ideal gases at given partial pressures and aqueous species at given
    molalities (mol/kg; ideal dilute solution, activity = m / 1 mol/kg, γ = 1); pure condensed
    phases, the solvent water among them, at activity 1. Species left out are at their standard
    state and listed in the second return value."""
    molalities = molalities or {}
    known = {t.formula: t for t in rxn.terms} | {t.label(): t for t in rxn.terms}
    for name in [*pressures, *molalities]:
        if name not in known:
            raise UnitError(
                name,
                "species of this reaction",
                f"a partial pressure or molality was given for {name}, which is not in the "
                "equation",
            )
    for name in molalities:
        term = known[name]
        if not all(sp.phase == "aq" for sp in term.candidates):
            raise UnitError(
                name,
                "aqueous species",
                "a molality was given, but this species is not aqueous in the equation; "
                "label it (aq)",
            )
    plan = rxn.phase_plan(T)
    lnQ = np.zeros(T.shape)
    assumed = []
    for term, idx in zip(rxn.terms, plan, strict=True):
        if all(sp.phase == "aq" for sp in term.candidates):
            m = molalities.get(term.label(), molalities.get(term.formula))
            if m is None:
                assumed.append(term.label())
            else:
                lnQ += term.nu * math.log(m)  # m / (1 mol/kg)
            continue
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
    (:func:`fugacity_term` gives what Peng–Robinson fugacity coefficients add to it.)
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    state = _conversion_state(rxn, feed, key, required, T)
    if state is None:
        return np.full(T.shape, np.inf)
    n, nu, gas, inerts = state
    n_gas = np.sum(gas * n, axis=1) + sum(a for _, a in inerts)
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


def _conversion_state(
    rxn: Reaction, feed: Mapping[str, float], key: str, required: float, T: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[tuple[Species, float]]] | None:
    """Amounts (T × terms, of the form used), ν of that form, the gas mask and the inert gases
    with their amounts at the required conversion; None when the feed cannot reach it."""
    from .reaction import resolve_species, split_phase_label

    n0 = np.zeros(len(rxn.terms))
    inerts: list[tuple[Species, float]] = []

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
        gases = [sp for sp in found if sp.phase == "g"]
        if gases:
            inerts.append((gases[0], float(amount)))  # a condensed inert changes no activity
    k = index(key)
    nu = np.array([t.nu for t in rxn.terms])
    if k is None or nu[k] >= 0 or n0[k] <= 0:
        raise UnitError(key, "key reactant", "name a reactant of the equation that the feed holds")
    xi = required * n0[k] / -nu[k]
    n = n0 + nu * xi
    # A relative 1e-12 absorbs rounding in n0 + ν ξ for a reactant used up exactly.
    n = np.where(np.abs(n) < 1e-12 * max(float(n0.max()), 1.0), 0.0, n)
    if np.any(n < 0):
        return None
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
    return n * scale, nu * scale, gas, inerts


def fugacity_term(
    rxn: Reaction,
    T: np.ndarray,
    pressures: Mapping[str, float] | None = None,
    at_conversion: Mapping[str, Any] | None = None,
    function: str = "assess",
) -> np.ndarray:
    """Σ ν_i ln φ_i per T (Peng–Robinson, k_ij = 0): what fugacities f_i = φ_i y_i P add to the
    ideal-gas ln Q at the call's conditions, so ΔrG moves by RT times it.

    At ``pressures`` (Pa, by species as in the equation) the gas is the mixture of the gases
    given, at the sum of their partial pressures: every gas of the equation must then have one
    (a gas "at its standard state" has activity 1 whatever the model, but its place in the
    mixture would be unknown). At ``at_conversion`` (``feed``, ``key``, ``required``, ``P_Pa``)
    the gas is the composition of the required conversion, inerts included, at ``P_Pa``.
    Refused (:class:`~feasibly.errors.InvalidInput`) when a gas lacks critical constants, when
    the mixture would be a liquid, or when the conditions leave the mixture unknown.
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    if at_conversion:
        c = at_conversion
        state = _conversion_state(rxn, c["feed"], c["key"], c["required"], T)
        if state is None:  # the feed cannot reach the requirement: ln Q is +inf either way
            return np.zeros(T.shape)
        n, nu, gas, inerts = state
        P = np.full(T.shape, float(c["P_Pa"]))
        return reaction_fugacity_term(rxn, T, P, n, nu, gas, inerts, function)
    pressures = pressures or {}
    plan = rxn.phase_plan(T)
    J = len(rxn.terms)
    amounts = np.zeros((T.size, J))
    gas = np.zeros((T.size, J), dtype=bool)
    missing = []
    for j, (term, idx) in enumerate(zip(rxn.terms, plan, strict=True)):
        is_gas = np.array([sp.phase == "g" for sp in term.candidates])[idx]
        p = pressures.get(term.label(), pressures.get(term.formula))
        if p is None:
            if np.any(is_gas):
                missing.append(term.label())
            continue
        amounts[:, j] = p
        gas[:, j] = is_gas
    if missing:
        raise InvalidInput(
            "gas_model",
            function,
            "'ideal' here, or give the partial pressure of every gas of the equation: "
            "Peng–Robinson fugacity coefficients need the whole gas mixture, and "
            f"{', '.join(missing)} {'has' if len(missing) == 1 else 'have'} none",
            "peng-robinson",
        )
    nu = np.broadcast_to(np.array([t.nu for t in rxn.terms], dtype=float), (T.size, J))
    total = np.sum(np.where(gas, amounts, 0.0), axis=1)
    return reaction_fugacity_term(rxn, T, total, amounts, nu, gas, (), function)
