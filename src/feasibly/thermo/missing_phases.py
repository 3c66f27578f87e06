"""Where the stable phase of a species at T is missing from the data, say so.

A species of the equation is used in the phases its data hold. When tabulated melting and
boiling points (at 1 atm, from the ``chemicals`` package: CRC Handbook and other compilations it
names) show that another phase is the stable one at a temperature of the call, the call is made
on a form that is not the stable one, and the user is told which phase is missing and where.
The ``chemicals`` package is optional: without it the check is not made, and the note says so.
"""

from __future__ import annotations

from collections.abc import Sequence
from functools import cache

import numpy as np

from ..errors import MissingCondensedPhase
from .reaction import Reaction

__all__ = ["missing_stable_phases"]


@cache
def _transitions(cas: str) -> tuple[float | None, float | None, str] | None:
    """(melting point, boiling point, source methods) in K for a CAS number, or None."""
    try:
        from chemicals.phase_change import Tb, Tb_methods, Tm, Tm_methods
    except ImportError:
        return None
    t_m = Tm(cas)
    t_b = Tb(cas)
    # chemicals picks the first method in its order of preference; name the ones it had.
    how = ", ".join(
        x
        for x in (
            f"Tm: {Tm_methods(cas)[0]}" if t_m is not None else "",
            f"Tb: {Tb_methods(cas)[0]}" if t_b is not None else "",
        )
        if x
    )
    return (
        float(t_m) if t_m is not None else None,
        float(t_b) if t_b is not None else None,
        how,
    )


@cache
def _cas_by_formula(formula: str) -> str | None:
    """CAS of the compound ``chemicals`` files under a carbon-free formula, or None.

    Used only for a formula whose entries carry no CAS and whose only data are gas, so that its
    tabulated melting and boiling points can still say whether it is condensed. Formulas with
    carbon are not looked up: one formula can name several organic isomers.
    """
    try:
        from chemicals.identifiers import pubchem_db
    except ImportError:
        return None
    found = pubchem_db.search_formula(formula)
    return str(found.CASs) if found else None


def _chemicals_available() -> bool:
    try:
        import chemicals.phase_change  # noqa: F401
    except ImportError:
        return False
    return True


def missing_stable_phases(rxn: Reaction, T: Sequence[float] | np.ndarray) -> list[str]:
    """Notes for terms whose stable phase at some T (by tabulated Tm/Tb at 1 atm) has no data.

    A term given without a phase whose only data are gas, at temperatures where the tabulated
    points say the compound is a solid or liquid, is refused (:class:`MissingCondensedPhase`):
    the gas is not a form the user asked for, and a call on it would be confidently wrong (FeO at
    1000 K). Written as ``FORMULA(g)`` the gas is used, with a note.

    Elements, and terms whose entries have no CAS number (gas-only carbon-free formulas are
    looked up by formula in ``chemicals``), are not checked. A melting or boiling
    point is a 1 atm property; within a few kelvin of it the stable phase is not decided by
    this check, so only temperatures more than 5 K away are judged (common practice, no source).
    """
    temps = np.atleast_1d(np.asarray(T, dtype=float))
    notes: list[str] = []
    unchecked: list[str] = []
    margin = 5.0  # K: see the docstring
    for term in rxn.terms:
        own = [sp for sp in term.candidates if sp.formula == term.formula]
        if len(own[0].elements) == 1:
            continue  # elements: their forms are compared by G° directly
        have = {sp.phase for sp in rxn.library.by_formula(term.formula)}
        only_gas = have == {"g"}
        gas_only = term.phase is None and only_gas  # given without a phase: refused, not noted
        cas = next((sp.cas for sp in own if sp.cas), None)
        if cas is None and only_gas and "C" not in own[0].elements and _chemicals_available():
            cas = _cas_by_formula(term.formula)
        if cas is None:
            continue
        if not _chemicals_available():
            unchecked.append(term.label())
            continue
        found = _transitions(cas)
        if found is None:
            continue
        t_m, t_b, how = found
        if term.phase not in (None, "g"):
            continue  # an explicit condensed phase is the user's choice (metastability is noted)
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
            elif t_b is None and only_gas and t_m is not None and t < t_m - margin:
                # no boiling point tabulated (NiO): below its melting point the compound is
                # condensed unless it sublimes first, so the gas-only call is refused, not made
                stable = "cr"
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
                f"tabulated 1 atm transitions from the chemicals package: {points}; {how}",
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
                f"missing from the data (1 atm transitions from the chemicals package: "
                f"{points}; {how}); the call uses {used} there, a form that is not the stable "
                "one, so ΔrG is not that of the stable substance. Add the missing phase in a "
                "species file for a call on it."
            )
    if unchecked:
        notes.append(
            "Whether the stable phase of "
            + ", ".join(unchecked)
            + " is in the data was not checked: that check reads tabulated melting and boiling "
            "points from the optional chemicals package (pip install 'feasibly[phases]')."
        )
    return notes
