"""Where the stable phase of a species at T is missing from the data, say so.

A species of the equation is used in the phases its data hold. When its tabulated melting and
boiling points (at 1 atm; shipped in the entries' ``phase_points``, which the data build takes
from the ``chemicals`` package's tabulated methods, CRC Handbook first, with the source named)
show that another phase is the stable one at a temperature of the call, the call is made on a
form that is not the stable one, and the user is told which phase is missing and where. Nothing
is imported at run time for this: entries without ``phase_points`` are not checked.

A term given without a phase whose only data are gas, at temperatures where the tabulated points
say the compound is a solid or liquid, is refused (:class:`~feasibly.errors.MissingCondensedPhase`):
the gas is not a form the user asked for, and a call on it would be confidently wrong (FeO at
1000 K). Written as ``FORMULA(g)`` the gas is used, with a note.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from ..errors import MissingCondensedPhase
from ..library import Species
from .reaction import Reaction

__all__ = ["missing_stable_phases"]


def _transitions(entries: Sequence[Species]) -> tuple[float | None, float | None, str] | None:
    """(melting point, boiling point, source) in K from the first entry that ships them."""
    for sp in sorted(entries, key=lambda s: s.id):
        pts: Any = sp.raw.get("phase_points") if sp.raw else None
        if pts:
            t_m, t_b = pts.get("T_melt_K"), pts.get("T_boil_K")
            return (
                float(t_m) if t_m is not None else None,
                float(t_b) if t_b is not None else None,
                str(pts.get("source", "")),
            )
    return None


def missing_stable_phases(rxn: Reaction, T: Sequence[float] | np.ndarray) -> list[str]:
    """Notes for terms whose stable phase at some T (by tabulated Tm/Tb at 1 atm) has no data.

    Elements, solutes and terms whose entries ship no ``phase_points`` are not checked. A
    melting or boiling point is a 1 atm property; within a few kelvin of it the stable phase is
    not decided by this check, so only temperatures more than 5 K away are judged (common
    practice, no source).
    """
    temps = np.atleast_1d(np.asarray(T, dtype=float))
    notes: list[str] = []
    margin = 5.0  # K: see the docstring
    for term in rxn.terms:
        own = [sp for sp in term.candidates if sp.formula == term.formula]
        if len(own[0].elements) == 1:
            continue  # elements: their forms are compared by G° directly
        if any(sp.phase == "aq" for sp in own):
            continue  # a solute at 1 mol/kg: not a phase of the pure substance
        pure = [sp for sp in rxn.library.by_formula(term.formula) if sp.phase != "aq"]
        found = _transitions(pure)
        if found is None:
            continue
        t_m, t_b, how = found
        if term.phase not in (None, "g"):
            continue  # an explicit condensed phase is the user's choice (metastability is noted)
        have = {sp.phase for sp in pure}
        only_gas = have == {"g"}
        gas_only = term.phase is None and only_gas  # given without a phase: refused, not noted
        problems = []
        for t in temps:
            stable = None
            if t_b is not None and t > t_b + margin:
                stable = "g"
            elif t_b is not None and t < t_b - margin:
                if t_m is not None and t_m < t_b and t > t_m + margin:
                    stable = "l"
                elif t_m is not None and t < t_m - margin:
                    stable = "cr"
                elif t_m is not None and t_m >= t_b:
                    stable = "cr"  # sublimes at 1 atm (e.g. CO2)
            elif t_b is None and only_gas and t_m is not None:
                # no boiling point tabulated (FeO, NiO): nothing shows the gas to be the stable
                # form at any T. Below its melting point the compound is a solid, above it a
                # liquid unless it boils (FeO at 1700 K was once called on its vapour), so the
                # gas-only call is refused, not made
                stable = "cr" if t < t_m else "l"
            if stable is not None and stable not in have:
                problems.append((float(t), stable))
        names = {"g": "gas", "l": "liquid", "cr": "solid"}
        condensed = [(t, s) for t, s in problems if s in ("cr", "l")]
        if gas_only and condensed:
            points = ", ".join(
                x for x in (f"Tm {t_m:.1f} K" if t_m else "", f"Tb {t_b:.1f} K" if t_b else "") if x
            )
            raise MissingCondensedPhase(
                term.formula,
                " or ".join(sorted({names[s] for _, s in condensed})),
                [t for t, _ in condensed],
                f"tabulated 1 atm transitions: {points}; {how}",
                own[0].id,
            )
        if problems:
            kinds = sorted({names[s] for _, s in problems})
            lo = min(t for t, _ in problems)
            hi = max(t for t, _ in problems)
            used = ", ".join(sp.id for sp in own)
            points = ", ".join(
                x for x in (f"Tm {t_m:.1f} K" if t_m else "", f"Tb {t_b:.1f} K" if t_b else "") if x
            )
            notes.append(
                f"{term.label()}: the stable {' or '.join(kinds)} at {lo:.0f}–{hi:.0f} K is "
                f"missing from the data (1 atm transitions: "
                f"{points}; {how}); the call uses {used} there, a form that is not the stable "
                "one, so ΔrG is not that of the stable substance. Add the missing phase in a "
                "species file for a call on it."
            )
    return notes
