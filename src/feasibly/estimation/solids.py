"""Heat capacity of an inorganic solid by the Neumann–Kopp rule, with calibrated uncertainty.

Cp°(compound, 298.15 K) ≈ Σ n_e · Cp°(element e in its reference state, 298.15 K), the elements'
Cp taken from the shipped library's reference-state entries (per atom: ½ O2(g) for O). The
relative standard uncertainty comes from the comparison with the CRC Handbook's Cp° of the
inorganic solids in ``chemicals`` (``data/calibrate_neumann_kopp.py`` writes the table and
``neumann-kopp-uncertainty.json``). The rule is calibrated at 298.15 K only, so an entry made
from it is constant-Cp and limited to a short range above room temperature (see
:func:`estimate_solid`).

When the user gives no S°, :func:`estimate_solid` takes it from the fitted ionic
contributions of :mod:`feasibly.estimation.ionic` (Latimer's form, fitted to the library's
salts, leave-one-out calibrated uncertainty); ΔfH° is always the user's, with its source.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from functools import cache
from typing import Any

import numpy as np

from .._files import data_text
from ..errors import InvalidInput, NotEstimable
from ..library import Library, default_library
from ..library.cp_models import T_REF
from ..library.formula import parse_formula
from .ionic import IONIC_ORIGIN, ionic_entropy

__all__ = ["NK_ORIGIN", "NeumannKopp", "estimate_solid", "neumann_kopp", "neumann_kopp_rule"]

NK_ORIGIN = "estimated (Neumann–Kopp)"
#: Origin of an entry whose S° is the fitted ionic-contribution estimate as well.
NK_IONIC_ORIGIN = "estimated (Neumann–Kopp Cp, fitted ionic-contribution S°)"
#: Highest temperature an entry made from the 298.15 K rule is given for: Cp of solids rises
#: by typically 10–20 % from 298 K to 600 K, beyond the calibrated 298 K spread (common
#: practice, no source); the user may choose lower, not higher.
MAX_T_SOLID = 600.0


@cache
def neumann_kopp_rule() -> dict[str, Any]:
    """The calibrated relative uncertainty of the rule and its figures."""
    return dict(json.loads(data_text("neumann-kopp-uncertainty.json")))


@dataclass(frozen=True)
class NeumannKopp:
    """A Neumann–Kopp sum: Cp°(298.15 K), its standard uncertainty and the element terms."""

    formula: str
    cp298: float
    u_cp298: float
    u_rel: float
    contributions: tuple[tuple[str, float, str, float], ...]  # (element, count, entry, Cp/atom)


def _element_cp(library: Library) -> dict[str, tuple[str, float]]:
    out = {}
    for sp in library:
        el = sp.reference_state_of
        if el is None or sp.origin != "library":
            continue
        atoms = sp.elements.get(el, 1.0)
        out[el] = (sp.id, float(sp.cp(np.array([T_REF]))[0]) / atoms)
    return out


def neumann_kopp(formula: str, library: Library | None = None) -> NeumannKopp:
    """Cp°(298.15 K) of a solid of this formula by the Neumann–Kopp rule."""
    parsed = parse_formula(formula)
    if parsed.charge:
        raise NotEstimable(formula, "Neumann–Kopp", ["it is charged; the rule is for compounds"])
    if len(parsed.elements) < 2:
        raise NotEstimable(formula, "Neumann–Kopp", ["it is an element; use its library entry"])
    table = _element_cp(library or default_library())
    missing = sorted(el for el in parsed.elements if el not in table)
    if missing:
        raise NotEstimable(
            formula,
            "Neumann–Kopp",
            [f"the library has no reference-state entry for {', '.join(missing)}"],
            missing,
        )
    terms = tuple(
        (el, float(n), table[el][0], table[el][1]) for el, n in sorted(parsed.elements.items())
    )
    cp = float(sum(n * c for _, n, _, c in terms))
    u_rel = float(neumann_kopp_rule()["u_rel"])
    return NeumannKopp(formula, cp, u_rel * cp, u_rel, terms)


def _pair(value: Any, name: str, limit: float) -> tuple[float, float]:
    ok = (
        isinstance(value, tuple)
        and len(value) == 2
        and all(isinstance(v, (int, float)) and math.isfinite(v) for v in value)
        and abs(value[0]) <= limit
        and value[1] >= 0
    )
    if not ok:
        raise InvalidInput(
            name,
            "estimate_solid",
            "a pair (value, standard uncertainty) of finite numbers in SI units, u ≥ 0",
            value,
        )
    return float(value[0]), float(value[1])


def estimate_solid(
    formula: str,
    *,
    dHf_J_per_mol: tuple[float, float],
    S298_J_per_mol_K: tuple[float, float] | None = None,
    source: str,
    T_max: float = 500.0,
    name: str = "",
    label: str = "estimated",
    library: Library | None = None,
) -> Library:
    """``library`` (the shipped one by default) with a solid entry ``FORMULA(cr,LABEL)`` whose
    ΔfH° (value, standard u) is the user's, named by ``source``, whose S° is the user's too or,
    when ``S298_J_per_mol_K`` is None, the fitted ionic-contribution estimate with its
    calibrated uncertainty (refused with :class:`~feasibly.errors.NotEstimable` outside the
    method), and whose Cp is the constant Neumann–Kopp value with its calibrated uncertainty,
    valid 298.15 K to ``T_max`` (at most 600 K)."""
    dHf = _pair(dHf_J_per_mol, "dHf_J_per_mol", 1e7)
    if not isinstance(source, str) or not source.strip():
        raise InvalidInput("source", "estimate_solid", "where ΔfH° (and S°) came from", source)
    if S298_J_per_mol_K is None:
        ion = ionic_entropy(formula)
        ion_terms = "; ".join(f"{t} × {c}: {v:.3f}" for t, c, v, _ in ion.terms)
        S_block: dict[str, Any] = {
            "value": ion.S298,
            "u": ion.u_S298,
            "source": IONIC_ORIGIN,
            "entry": f"Σ ion contributions [J/(mol·K)]: {ion_terms}",
            "uncertainty": {
                "stated": ion.u_S298,
                "convention": "standard",
                "source": f"{IONIC_ORIGIN}; {ion.rule}; ionic-entropy-uncertainty.json",
                "assumed": False,
            },
        }
        S_note = f"S° from fitted ionic contributions ({ion_terms})"
    else:
        S = _pair(S298_J_per_mol_K, "S298_J_per_mol_K", 1e4)
        S_block = {"value": S[0], "u": S[1], "source": source, "entry": formula}
        S_note = f"S° from: {source}"
    if not isinstance(T_max, (int, float)) or not T_REF < T_max <= MAX_T_SOLID:
        raise InvalidInput(
            "T_max",
            "estimate_solid",
            f"a temperature in K above 298.15 and ≤ {MAX_T_SOLID:g}",
            T_max,
        )
    base = library or default_library()
    nk = neumann_kopp(formula, base)
    terms = "; ".join(f"{el} × {n:g} from {entry}: {c:.2f}" for el, n, entry, c in nk.contributions)
    entry = {
        "id": f"{formula}(cr,{label})",
        "formula": formula,
        "phase": "cr",
        "form": label,
        "names": [name] if name else [],
        "T_range_K": [T_REF, float(T_max)],
        "dHf_298": {"value": dHf[0], "u": dHf[1], "source": source, "entry": formula},
        "S_298": S_block,
        "cp": {
            "model": "constant",
            "cp_J_per_mol_K": nk.cp298,
            "u_rel": nk.u_rel,
            "source": NK_ORIGIN,
            "entry": f"Σ element Cp°(298.15 K): {terms}",
            "uncertainty": {
                "stated": nk.u_rel,
                "convention": "standard",
                "source": f"{NK_ORIGIN}; u calibrated in neumann-kopp-uncertainty.json",
                "assumed": False,
            },
        },
        "notes": [
            f"Cp° by the Neumann–Kopp rule ({terms} J/(mol·K) per atom), constant over the "
            f"range; ΔfH° from: {source}; {S_note}",
        ],
    }
    doc = {"schema": "feasibly-species", "schema_version": 1, "species": [entry]}
    origin = NK_ORIGIN if S298_J_per_mol_K is not None else NK_IONIC_ORIGIN
    mine = Library.from_text(json.dumps(doc, ensure_ascii=False), f"estimate of {formula}", origin)
    return base.with_species(mine)
