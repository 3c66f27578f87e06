"""Energy balances without uncertainty: the enthalpy of a stream of species at a temperature, the
streams in and out of a reaction step, and the adiabatic temperature they reach.

Every species takes its stable phase at each temperature (lowest G° among the entries the stream
allows), so a product leaving above its boiling point leaves as gas and the enthalpy includes the
heat of that phase change. Enthalpies are on the ΔfH°(298.15 K) scale, so a balance of formation
enthalpies and sensible heats is one subtraction. Plain SI floats: J, K, mol.

>>> from feasibly.thermo import Reaction
>>> rxn = Reaction.parse("CO + 1/2 O2 -> CO2")
>>> inlet, outlet = reaction_streams(rxn, {"CO": 1.0, "O2": 0.5}, extent=1.0)
>>> round(float((stream_enthalpy(outlet, 298.15) - stream_enthalpy(inlet, 298.15))[0]) / 1000, 1)
-282.9
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import InvalidInput, OutsideDataRange
from ..library.species import Species
from .reaction import Reaction, resolve_species, split_phase_label

__all__ = [
    "StreamItem",
    "adiabatic_temperature",
    "reaction_streams",
    "stable_choice",
    "stream_enthalpy",
    "term_index",
]

#: Bisection stops when the bracket is this narrow, K (far below any data's meaning; 60 halvings
#: of a 6000 K bracket reach it).
_T_TOLERANCE = 1e-7


@dataclass(frozen=True)
class StreamItem:
    """An amount (mol) of one species, which may take any of its ``candidates`` phases."""

    label: str
    candidates: tuple[Species, ...]
    amount: float

    @property
    def molar_mass(self) -> float:
        """g/mol (the same for every phase of a species)."""
        return self.candidates[0].molar_mass


def stable_choice(candidates: Sequence[Species], T: np.ndarray) -> np.ndarray:
    """Index of the stable candidate (lowest G°) at each T among those whose data cover it."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    if len(candidates) == 1:
        candidates[0].check_range(T)
        return np.zeros(T.shape, dtype=np.intp)
    g = np.full((len(candidates), *T.shape), np.inf)
    for k, sp in enumerate(candidates):
        mask = sp.covers(T)
        if np.any(mask):
            g[k, mask] = sp.gibbs(T[mask])
    uncovered = ~np.isfinite(np.min(g, axis=0))
    if np.any(uncovered):
        lo = min(sp.T_range[0] for sp in candidates)
        hi = max(sp.T_range[1] for sp in candidates)
        raise OutsideDataRange(
            candidates[0].formula + " (all allowed phases)", float(T[uncovered][0]), lo, hi
        )
    return np.argmin(g, axis=0)


def stream_enthalpy(items: Sequence[StreamItem], T: np.ndarray | float) -> np.ndarray:
    """Σ n·H°(T) of a stream, J, each species in its stable allowed phase at each T."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    total = np.zeros(T.shape)
    for item in items:
        if item.amount == 0.0:
            continue
        idx = stable_choice(item.candidates, T)
        for k, sp in enumerate(item.candidates):
            mask = idx == k
            if np.any(mask):
                total[mask] += item.amount * sp.enthalpy(T[mask])
    return total


def term_index(rxn: Reaction, name: str) -> int | None:
    """Index of the reaction term a species name (as in a feed) refers to, or None (an inert)."""
    formula, phase, _ = split_phase_label(name)
    for j, t in enumerate(rxn.terms):
        if name in (t.label(), t.text, *(sp.id for sp in t.candidates)):
            return j
    hits = [j for j, t in enumerate(rxn.terms) if t.formula == formula and phase in (None, t.phase)]
    return hits[0] if len(hits) == 1 else None


def reaction_streams(
    rxn: Reaction, feed: Mapping[str, float], extent: float
) -> tuple[list[StreamItem], list[StreamItem]]:
    """The stream entering (the feed) and leaving (feed + ν·extent) a reaction step, mol.

    Feed species that are not in the equation are inerts: they enter and leave unchanged. An
    extent that would use up more of a reactant than the feed holds is refused.
    """
    inlet: list[StreamItem] = []
    amounts = np.zeros(len(rxn.terms))
    inerts: list[StreamItem] = []
    for name, amount in feed.items():
        j = term_index(rxn, name)
        if j is not None:
            amounts[j] += float(amount)
            continue
        formula, phase, form = split_phase_label(name)
        _, found = resolve_species(rxn.library, formula, phase, form, name)
        inerts.append(StreamItem(name, tuple(found), float(amount)))
    for j, t in enumerate(rxn.terms):
        inlet.append(StreamItem(t.label(), t.own_candidates(), float(amounts[j])))
    out_amounts = amounts + np.array([t.nu for t in rxn.terms]) * extent
    if np.any(out_amounts < -1e-12 * max(1.0, float(np.max(amounts)))):
        short = [rxn.terms[j].label() for j in np.nonzero(out_amounts < 0)[0]]
        raise InvalidInput(
            "extent",
            "reaction_streams",
            f"at most what the feed allows (it runs out of {', '.join(short)})",
            extent,
        )
    outlet = [
        StreamItem(t.label(), t.own_candidates(), max(float(n), 0.0))
        for t, n in zip(rxn.terms, out_amounts, strict=True)
    ]
    return inlet + inerts, outlet + inerts


def _data_range(items: Sequence[StreamItem]) -> tuple[float, float]:
    present = [it for it in items if it.amount > 0]
    lo = max(min(sp.T_range[0] for sp in it.candidates) for it in present)
    hi = min(max(sp.T_range[1] for sp in it.candidates) for it in present)
    return lo, hi


def adiabatic_temperature(outlet: Sequence[StreamItem], enthalpy_in: float) -> float:
    """The temperature at which the outlet stream holds ``enthalpy_in`` (J), by bisection.

    H(T) of a stream rises with T (it jumps up at phase changes), so the root is unique; when the
    target lies inside a jump, the answer is the transition temperature (the stream leaves
    partly melted or boiled). A target beyond the data range of the outlet species is refused
    with that range.
    """
    lo, hi = _data_range(outlet)
    h_lo, h_hi = stream_enthalpy(outlet, np.array([lo, hi]))
    if not h_lo <= enthalpy_in <= h_hi:
        T_guess = lo if enthalpy_in < h_lo else hi
        raise OutsideDataRange(
            "the outlet stream (" + ", ".join(it.label for it in outlet if it.amount > 0) + ")",
            T_guess,
            lo,
            hi,
        )
    a, b = lo, hi
    while b - a > _T_TOLERANCE * max(1.0, b):
        mid = 0.5 * (a + b)
        if stream_enthalpy(outlet, mid)[0] < enthalpy_in:
            a = mid
        else:
            b = mid
    return 0.5 * (a + b)
