"""Private parts of :mod:`feasibly.records`: kernel results turned into record sections.

Pure functions from the kernel's objects to plain JSON-ready data; no file access, no validation.
"""

from __future__ import annotations

import math
import platform
from collections.abc import Mapping
from typing import Any

import numpy as np

from .. import __about__
from ..library.species import Species
from ..thermo.assessment import Assessment
from ..thermo.reaction import Reaction
from ..uncertainty.assessment import UncertainAssessment
from ..uncertainty.linear import uncertain_species


def plain(x: Any) -> Any:
    """JSON-ready copy: numpy scalars to Python, tuples to lists, non-finite floats to text."""
    if isinstance(x, Mapping):
        return {str(k): plain(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [plain(v) for v in x]
    if isinstance(x, np.ndarray):
        return [plain(v) for v in x.tolist()]
    if isinstance(x, (bool, np.bool_)):
        return bool(x)
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        f = float(x)
        if math.isfinite(f):
            return f
        return "nan" if math.isnan(f) else ("inf" if f > 0 else "-inf")
    if x is None or isinstance(x, str):
        return x
    return str(x)


def environment() -> dict[str, str]:
    import pint
    import scipy

    return {
        "feasibly": __about__.__version__,
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "pint": str(pint.__version__),
        "platform": platform.platform(),
        "machine": platform.machine(),
    }


def record_species(rxn: Reaction) -> list[Species]:
    """Entries the call may use: candidate phases, their transition neighbours, and any user entry
    of the same formula (which decides the metastability notes)."""
    found = {sp.id: sp for sp in uncertain_species(rxn)}
    for term in rxn.terms:
        for sp in rxn.library.by_formula(term.formula):
            if sp.origin != "library":
                found.setdefault(sp.id, sp)
    return [found[k] for k in sorted(found)]


def species_section(rxn: Reaction) -> list[dict[str, Any]]:
    return [
        {
            "id": sp.id,
            "origin": sp.origin,
            "provenance": plain(sp.provenance()),
            "entry": plain(sp.raw),
        }
        for sp in record_species(rxn)
    ]


def correlations(u: UncertainAssessment) -> list[dict[str, Any]]:
    m = u.samples.correlation
    if m is None:
        return []
    keys = u.samples.keys
    out = [
        {"a": list(keys[i]), "b": list(keys[j]), "rho": float(m[i, j])}
        for i in range(len(keys))
        for j in range(i + 1, len(keys))
        if m[i, j] != 0
    ]
    if not out and len(keys) > 1:  # correlated sampling with all ρ = 0 still takes that path
        out.append({"a": list(keys[0]), "b": list(keys[1]), "rho": 0.0})
    return out


def summary(a: Assessment, u: UncertainAssessment | None) -> dict[str, str]:
    if u is not None:
        calls = u.verdicts
        level = f"{u.confidence:.0%}"
        windows = u.window()
        if len(set(calls)) == 1:
            verdict = calls[0]
            where = f"at {u.T[0]:.0f} K" if u.T.size == 1 else f"over {u.T[0]:.0f}–{u.T[-1]:.0f} K"
            headline = f"{verdict.capitalize()} at {level} confidence {where}."
        elif windows:
            verdict = "feasible in part of the range"
            parts = []
            for w in windows:
                lo = f"{w['T_lo_K']:.0f} K" + (" (range start)" if w["lo_open"] else "")
                hi = f"{w['T_hi_K']:.0f} K" + (" (range end)" if w["hi_open"] else "")
                parts.append(f"from {lo} to {hi}")
            headline = f"Feasible at {level} confidence {' and '.join(parts)}."
        else:
            verdict = "not shown feasible"
            headline = f"Nowhere in this range feasible at {level} confidence."
        return {"verdict": verdict, "headline": headline, "basis": "monte carlo"}
    dG = a.dG_actual if a.dG_actual is not None else a.standard.dG
    sym = "ΔrG" if a.dG_actual is not None else "ΔrG°"
    neg = dG < 0
    if bool(np.all(neg)):
        verdict, headline = "favourable", f"{sym} < 0 at every temperature assessed."
    elif not bool(np.any(neg)):
        verdict, headline = "not favourable", f"{sym} ≥ 0 at every temperature assessed."
    else:
        verdict = "favourable in part of the range"
        headline = f"{sym} < 0 at {int(np.count_nonzero(neg))} of {neg.size} temperatures."
    headline += " No uncertainty run: this is not a confident call."
    return {"verdict": verdict, "headline": headline, "basis": "standard values only"}


def results_section(a: Assessment, u: UncertainAssessment | None, t_sens: float) -> dict[str, Any]:
    return {
        "summary": summary(a, u),
        "assessment": plain(a.to_dict()),
        "uncertainty": plain(u.to_dict(t_sens)) if u is not None else None,
    }


def temperature_section(a: Assessment) -> dict[str, Any]:
    T = a.standard.T
    if a.crossover_K is not None:  # a range was asked for (assess searches it for crossovers)
        return {
            "kind": "range",
            "T_K": plain(T),
            "T_lo_K": float(T[0]),
            "T_hi_K": float(T[-1]),
            "points": int(T.size),
        }
    return {"kind": "point", "T_K": plain(T)}
