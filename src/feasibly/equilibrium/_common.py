"""Shared pieces of the equilibrium modules: input reading, the non-convergence error, bands."""

from __future__ import annotations

from ..conditions import STANDARD_PRESSURE_PA, read_feed
from ..thermo.reaction import split_phase_label

__all__ = ["BAND_PROBS", "parse_feed"]

#: Feeds are read by the one reader of conditions; the name stays for callers of this wing.
parse_feed = read_feed

#: The bands reported: the probabilistically symmetric 95 % interval and the median (JCGM 101 §7.7).
BAND_PROBS = (0.025, 0.5, 0.975)
_P_STD = STANDARD_PRESSURE_PA


# --- input reading ------------------------------------------------------------------------------
def _split_label(text: str) -> tuple[str, str | None, str | None]:
    """Formula, phase and form of a species written with an optional label (the parser's rule)."""
    return split_phase_label(text)


def _fmt_state(T: float, P: float) -> str:
    return f"T = {T:.6g} K, P = {P / 1e5:.6g} bar"
