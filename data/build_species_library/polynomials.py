"""NASA 7- and 9-coefficient polynomials as the build evaluates them (McBride, Gordon & Reno 1993;
McBride, Zehe & Gordon, NASA TP-2002-211556 for NASA-9).

``h_RT`` and ``s_R`` are the published H/RT and S/R expressions in power form, with Cantera's
molar gas constant, so H(298.15) = R·T·(H/RT) is the value Cantera (the test reference) gives.
This is deliberately not the kernel's ``Nasa7`` (see :mod:`._kernel`): its Horner form and its
R = 8.314462618 change the last digits of the written values, and the build's acceptance test is
byte identity with the committed library. The interval rule is the kernel's: a temperature on a
break belongs to the lower interval; below the range the first interval, above it the last.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import cantera

from ._kernel import T_REF

# Molar gas constant, J/(mol K): taken from Cantera (CODATA 2018 exact value) so that
# H = R T (H/RT) is evaluated with the same constant the test reference (Cantera) uses.
R = cantera.gas_constant / 1000.0

Coeffs = Sequence[float]


def interval(breaks: Sequence[float], T: float) -> int:
    """Interval index used for T: the one containing it; the first when T is below the range, the
    last when above (SCHEMA.md: 298.15 K is taken in the first interval when it lies below)."""
    n = len(breaks) - 1
    for i in range(n):
        if breaks[i] <= T <= breaks[i + 1]:
            return i
    return 0 if T < breaks[0] else n - 1


def h_RT(c: Coeffs, T: float) -> float:
    """H/(RT) of one interval's coefficients (NASA-7, or NASA-9 when there are 9)."""
    if len(c) == 9:
        return (
            -c[0] / T**2 + c[1] * math.log(T) / T + c[2] + c[3] * T / 2 + c[4] * T**2 / 3
            + c[5] * T**3 / 4 + c[6] * T**4 / 5 + c[7] / T
        )  # fmt: skip
    return c[0] + c[1] * T / 2 + c[2] * T**2 / 3 + c[3] * T**3 / 4 + c[4] * T**4 / 5 + c[5] / T


def s_R(c: Coeffs, T: float) -> float:
    """S/R of one interval's coefficients (NASA-7, or NASA-9 when there are 9)."""
    if len(c) == 9:
        return (
            -c[0] / (2 * T**2) - c[1] / T + c[2] * math.log(T) + c[3] * T + c[4] * T**2 / 2
            + c[5] * T**3 / 3 + c[6] * T**4 / 4 + c[8]
        )  # fmt: skip
    return (
        c[0] * math.log(T) + c[1] * T + c[2] * T**2 / 2 + c[3] * T**3 / 3 + c[4] * T**4 / 4 + c[6]
    )


def cp_R(c: Coeffs, T: float) -> float:
    """Cp/R of one interval's coefficients (NASA-7, or NASA-9 when there are 9)."""
    if len(c) == 9:
        return c[0] / T**2 + c[1] / T + c[2] + c[3] * T + c[4] * T**2 + c[5] * T**3 + c[6] * T**4
    return c[0] + c[1] * T + c[2] * T**2 + c[3] * T**3 + c[4] * T**4


def poly_298(breaks: Sequence[float], coeffs: Sequence[Coeffs]) -> tuple[float, float]:
    """The polynomial's own H(298.15) in J/mol and S(298.15) in J/(mol K)."""
    c = coeffs[interval(breaks, T_REF)]
    return R * T_REF * h_RT(c, T_REF), R * s_R(c, T_REF)


def extend_300(breaks: Sequence[float]) -> list[float]:
    """Old-format NASA/Burcat fits label their lower limit 300 K; extend the first interval to
    298.15 K (see ``entries.RANGE_300_NOTE``)."""
    out = [float(t) for t in breaks]
    if out[0] == 300.0:
        out[0] = T_REF
    return out


def h_on_dhf_scale(e: dict[str, Any], T: float) -> float | None:
    """H(T) on the ΔfH scale from an entry's nasa7 block (J/mol); None for other Cp models."""
    cp = e["cp"]
    if cp["model"] not in ("nasa7", "nasa9"):
        return None
    br, co = cp["T_breaks_K"], cp["coefficients"]
    h = R * T * h_RT(co[interval(br, T)], T)
    return e["dHf_298"]["value"] + h - poly_298(br, co)[0]
