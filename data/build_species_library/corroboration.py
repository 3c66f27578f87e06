"""Corroborated values and compared Cp factors: the per-entry evidence of the calibration.

A value that independent compilations reproduce gets the smaller uncertainty such reproduction
supports, measured held out (see :func:`corroborate`); a Cp factor compared with a NIST-JANAF
table gets one from its own differences (:mod:`.calibration` applies both).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

from .comparisons import CLASSES, Comparison

if TYPE_CHECKING:
    from .entries import Entry

#: Fewest held-out pairs for a corroborated u (as calibration.MIN_PER_SOURCE).
MIN_PAIRS = 20
#: Policy id suffixes: a corroborated value's class, a compared Cp factor's class.
CORROBORATED = "-corroborated"
COMPARED = "-compared"


class Corroboration(NamedTuple):
    """u of a class's values that an independent compilation reproduces, and its evidence."""

    cls: str
    n_pairs: int
    u: float
    coverage: float


def corroborate(
    comparisons: Iterable[Comparison], cal: Mapping[str, Any]
) -> dict[str, Corroboration]:
    """Per ΔfH°/S° class: u of a value one compilation reproduces, tested on another.

    For every entry compared with at least two compilations and every ordered pair (A, B) of
    them: when A reproduces the value within 2u, |value − B| is a held-out error of a
    corroborated value. u = ½ × the 95th percentile of those errors, solved as a fixed point
    from the class u (the set of corroborated values depends on u). Compilations that copy
    each other make this optimistic; the 95th percentile over many pairs and the disagreement
    rule for every value that some compilation does not reproduce limit that.
    """
    by: dict[tuple[str, str], dict[str, Comparison]] = {}
    for c in comparisons:
        if c.cls.startswith("cp-"):
            continue
        by.setdefault((c.cls, c.entry), {})[c.against] = c
    out = {}
    for cls in CLASSES:
        if cls.startswith("cp-"):
            continue
        groups = [g for (k, _), g in sorted(by.items()) if k == cls and len(g) >= 2]
        scale = cal[cls].u
        u = scale
        for _ in range(50):
            held = [
                abs(b.diff)
                for g in groups
                for a in g.values()
                for b in g.values()
                if a is not b and abs(a.diff) <= 2.0 * u
            ]
            if len(held) < MIN_PAIRS:
                break
            new = min(float(np.quantile(np.array(held), 0.95)) / 2.0, scale)
            if abs(new - u) <= 1e-9 * max(scale, 1e-12):
                u = new
                break
            u = new
        if len(held) < MIN_PAIRS:
            continue
        cover = float(np.mean(np.array(held) <= 2.0 * u))
        out[cls] = Corroboration(cls, len(held), float(u), cover)
    return out


def set_cp(e: Entry, u_rel: float, pid: str) -> None:
    """Set an entry's Cp factor u_rel and its uncertainty block (policy ``pid``)."""
    e["cp"]["u_rel"] = u_rel
    e["cp"]["uncertainty"] = {
        "stated": u_rel,
        "convention": "standard",
        "divisor": 1.0,
        "source": f"policy:{pid}",
        "assumed": True,
    }
