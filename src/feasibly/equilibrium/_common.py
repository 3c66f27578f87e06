"""Shared pieces of the equilibrium modules: input reading, the non-convergence error, bands."""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

import numpy as np

from ..errors import UnitError
from ..thermo.reaction import split_phase_label
from ..units import to_kelvin, to_pascal

__all__ = ["BAND_PROBS", "parse_feed"]

#: The bands reported: the probabilistically symmetric 95 % interval and the median (JCGM 101 §7.7).
BAND_PROBS = (0.025, 0.5, 0.975)
_P_STD = 1e5  # the library's standard pressure, Pa (1 bar)


# --- input reading ------------------------------------------------------------------------------
def _split_label(text: str) -> tuple[str, str | None, str | None]:
    """Formula, phase and form of a species written with an optional label (the parser's rule)."""
    return split_phase_label(text)


def parse_feed(feed: str | Mapping[str, Any]) -> dict[str, Any]:
    """Feed amounts by species name: ``"CH4:1, H2O:2"`` or a mapping (values in mol, or arrays).

    >>> parse_feed("CH4:1, H2O: 2.5")
    {'CH4': 1.0, 'H2O': 2.5}
    """
    if isinstance(feed, Mapping):
        items = list(feed.items())
    elif isinstance(feed, str):
        items = []
        for part in filter(None, (p.strip() for p in re.split(r"[,;]", feed))):
            if ":" not in part:
                raise UnitError(part, "feed amount", "write SPECIES:AMOUNT, e.g. 'CH4:1, H2O:2'")
            name, value = part.rsplit(":", 1)
            try:
                items.append((name.strip(), float(value)))
            except ValueError:
                raise UnitError(part, "feed amount", "the amount must be a number") from None
    else:
        raise UnitError(feed, "feed", "give 'SPECIES:AMOUNT, …' or a mapping of amounts")
    out: dict[str, Any] = {}
    for name, value in items:
        arr = np.asarray(value, dtype=float)
        if not np.all(np.isfinite(arr)) or np.any(arr < 0):
            raise UnitError(value, f"feed amount of {name}", "amounts must be finite and ≥ 0")
        if name in out:
            raise UnitError(name, "feed", "a species is named twice; give it once")
        out[name] = float(arr) if arr.ndim == 0 else arr
    if not out or all(np.all(np.asarray(v) == 0) for v in out.values()):
        raise UnitError(feed, "feed", "the feed is empty; give at least one positive amount")
    return out


def _kelvin_pascal(T: Any, P: Any) -> tuple[np.ndarray, np.ndarray]:
    T_K = np.atleast_1d(to_kelvin(T)).astype(float).ravel()
    P_Pa = np.atleast_1d(to_pascal(P)).astype(float).ravel()
    if P_Pa.size not in (1, T_K.size) and T_K.size != 1:
        raise UnitError(P, "pressure", f"give one pressure or one per temperature ({T_K.size})")
    size = max(T_K.size, P_Pa.size)
    return np.broadcast_to(T_K, size).copy(), np.broadcast_to(P_Pa, size).copy()


def _fmt_state(T: float, P: float) -> str:
    return f"T = {T:.6g} K, P = {P / 1e5:.6g} bar"
