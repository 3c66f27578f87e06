"""The strongly exothermic caution with the adiabatic temperature's 95 % interval from the draws
of the call it belongs to (the thermo wing, which has no draws, quotes the nominal value only).

It still says what the number is — the temperature an undiluted stoichiometric feed reaches
when fully converted with no heat removed — and still defers to process-safety review.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from ..errors import InvalidInput, OutsideDataRange
from ..thermo.safety import (
    DEFERRAL,
    Caution,
    cautions_for,
    exotherm_caution,
    exotherm_temperature,
    stoichiometric_feed,
)
from ..uncertainty import UncertainAssessment
from .adiabatic import adiabatic_temperature

__all__ = ["cautions_with_draws", "result_cautions"]

#: Recent banded cautions by (draws, equation, temperature, pressures): the band costs a
#: bisection over every draw (about a second for 20,000), and a worksheet redraws its cautions
#: on every change of a slider, mostly with the same draws. A few entries cover going back and
#: forth between equations.
_RECENT: dict[tuple[int, str, float, tuple[tuple[str, float], ...]], tuple[Any, list[str]]] = {}
_RECENT_MAX = 8


def cautions_with_draws(
    cautions: Sequence[Caution], call: UncertainAssessment, T: np.ndarray, dH: np.ndarray
) -> list[Caution]:
    """``cautions`` (of ``call``'s reaction at temperatures ``T`` with ΔrH° ``dH``) with the
    strongly exothermic one, if any, quoting the adiabatic temperature with its 95 % interval
    from ``call``'s draws; the others unchanged.

    Where some draws take the products past the upper end of their data, the nominal value is
    quoted with that said instead of an interval.
    """
    out = list(cautions)
    where = [i for i, c in enumerate(out) if c.kind == "strongly exothermic"]
    rxn = call.reaction
    t_at = exotherm_temperature(rxn, T, dH)
    if not where or t_at is None:
        return out
    feed = stoichiometric_feed(rxn)
    try:
        hot = adiabatic_temperature(rxn, feed, (t_at, "K"), call=call)
        given = (hot.T_K, hot.interval, "")
    except OutsideDataRange as exc:
        try:
            nominal = adiabatic_temperature(rxn, feed, (t_at, "K"))
        except (OutsideDataRange, InvalidInput):
            return out  # the nominal caution already says the products pass their data
        given = (
            nominal.T_K,
            None,
            f"(No interval: in some of the {call.samples.n:,} draws of the data the products "
            f"pass {exc.T_max:.0f} K, the upper end of their data.)",
        )
    except InvalidInput:
        return out
    banded = exotherm_caution(rxn, T, dH, given)
    if banded is not None:
        out[where[0]] = banded
    return out


def result_cautions(result: UncertainAssessment) -> list[str]:
    """The plain-words cautions of a Monte Carlo result over its grid (the exotherm caution with
    its interval from the result's own draws) and the deferral; empty when none applies (which
    does not mean the step is safe)."""
    rxn = result.reaction
    found = cautions_for(rxn, result.T, result.H.mean, result.library, result.partial_pressures_Pa)
    t_at = exotherm_temperature(rxn, result.T, result.H.mean)
    if t_at is not None:
        pressures = tuple(sorted((result.partial_pressures_Pa or {}).items()))
        key = (id(result.samples), rxn.equation(), t_at, pressures)
        hit = _RECENT.get(key)
        if hit is not None and hit[0] is result.samples:  # the very same draws, not a reused id
            return list(hit[1])
        found = cautions_with_draws(found, result, result.T, result.H.mean)
    messages = [c.message for c in found] + ([DEFERRAL] if found else [])
    if t_at is not None:
        if len(_RECENT) >= _RECENT_MAX:
            _RECENT.pop(next(iter(_RECENT)))
        _RECENT[key] = (result.samples, messages)
    return messages
