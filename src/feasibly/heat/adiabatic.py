"""Adiabatic temperature of a step with its uncertainty: how hot the products get when the heat
of reaction stays in the stream (no heat removed), at full or a given conversion, with the feed's
inerts and excess reactants taking their share.

For each draw of the data the energy balance Σ n_out·H°(T_ad) = Σ n_in·H°(T_in) is solved for
T_ad by bisection (H°(T) of a stream rises monotonically, with upward jumps at phase changes),
all draws at once. This is the upper bound a runaway approaches when the step is fast and
cooling fails; it says nothing of rate, and no decision about safety rests on it alone.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..conditions import read_feed, read_pressure, read_temperature
from ..equilibrium import extents_at
from ..errors import InvalidInput, OutsideDataRange
from ..library import Library, default_library
from ..thermo import Reaction
from ..thermo.energy import StreamItem, reaction_streams, stream_enthalpy, term_index
from ..thermo.energy import adiabatic_temperature as _nominal_adiabatic
from ..uncertainty import SampleSet, UncertainAssessment, linear_model, uncertain_species
from .duty import (
    _limiting_extent,
    amounts_of,
    enthalpy_rows,
    read_conversion_choice,
    stream_samples,
)

__all__ = ["AdiabaticTemperature", "adiabatic_temperature"]

#: Coverage of the reported interval (JCGM 101:2008 §7.7).
_COVERAGE = 0.95
#: Half-width of the first bracket around the nominal answer, K: the data's doubt moves an
#: adiabatic temperature by tens of kelvin, so most draws' roots lie inside it; the others widen
#: their own bracket (threefold each time) until it holds the root or reaches the data's range.
_START_K = 64.0
#: Bracket width at which bisection stops, K (as the nominal balance in thermo.energy).
_T_TOL = 1e-7


@dataclass
class AdiabaticTemperature:
    """The outlet temperature with no heat exchanged (K), its 95 % interval and draws."""

    equation: str
    T_feed_K: float
    conversion: float | None
    extent: float
    T_K: float
    interval: tuple[float, float] | None = None
    draws: np.ndarray | None = field(default=None, repr=False)
    rise_K: float = 0.0
    notes: list[str] = field(default_factory=list)
    extent_interval: tuple[float, float] | None = None

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready data."""
        out: dict[str, Any] = {
            "equation": self.equation,
            "T_feed_K": self.T_feed_K,
            "conversion": self.conversion,
            "extent_mol": self.extent,
            "adiabatic_T_K": self.T_K,
            "temperature_rise_K": self.rise_K,
            "notes": list(self.notes),
        }
        if self.interval is not None:
            out["adiabatic_T_K_interval_95"] = list(self.interval)
        if self.extent_interval is not None:
            out["extent_mol_interval_95"] = list(self.extent_interval)
        return out


def adiabatic_temperature(
    equation: str | Reaction,
    feed: str | Mapping[str, Any],
    T_feed: Any,
    *,
    conversion: Any = 1.0,
    key: str | None = None,
    P: Any = "1 bar",
    samples: int | None = None,
    seed: int | None = None,
    call: UncertainAssessment | None = None,
    library: Library | None = None,
) -> AdiabaticTemperature:
    """Adiabatic outlet temperature of a step whose feed enters at ``T_feed``.

    ``conversion`` is the fraction of ``key`` (default: of the limiting reactant) converted, or
    ``"equilibrium"``: the outlet is at equilibrium at its own temperature (ideal gases at total
    pressure ``P``), which couples the two — an exothermic step heats up until its equilibrium
    stops it, an endothermic one cools. With draws, each draw finds its own temperature and
    extent.

    >>> a = adiabatic_temperature("CH4 + 2 O2 -> CO2 + 2 H2O", "CH4:1, O2:2, N2:7.52", "298.15 K")
    >>> round(a.T_K)  # methane in air, complete combustion, no dissociation
    2326
    """
    if call is not None:
        library, rxn = call.library, call.reaction
    else:
        library = library or default_library()
        rxn = equation if isinstance(equation, Reaction) else Reaction.parse(equation, library)
    t_in = read_temperature(T_feed)
    amounts = {k: float(np.squeeze(v)) for k, v in read_feed(feed).items()}
    choice = read_conversion_choice(conversion)
    if choice == "equilibrium":
        return _at_equilibrium(rxn, amounts, t_in, read_pressure(P), samples, seed, call)
    x = float(choice)
    if key is None:
        extent = x * _limiting_extent(rxn, amounts)
    else:
        j = term_index(rxn, key)
        if j is None or rxn.terms[j].nu >= 0:
            raise InvalidInput("key", "adiabatic_temperature", "a reactant of the equation", key)
        extent = x * amounts_of(rxn, amounts)[j] / -rxn.terms[j].nu
    inlet, outlet = reaction_streams(rxn, amounts, extent)
    h_in = float(stream_enthalpy(inlet, t_in)[0])
    h_out_at_feed = float(stream_enthalpy(outlet, t_in)[0])
    if h_out_at_feed > h_in:
        raise InvalidInput(
            "equation",
            "adiabatic_temperature",
            "a step that releases heat: this one takes in "
            f"{(h_out_at_feed - h_in) / 1000:,.1f} kJ for this feed at {t_in:.2f} K, so without "
            "heat input it cools and stops short of that conversion",
            rxn.equation(),
        )
    T_ad = _nominal_adiabatic(outlet, h_in)
    result = AdiabaticTemperature(rxn.equation(), t_in, x, extent, T_ad, rise_K=T_ad - t_in)
    result.notes.append(
        "No heat lost, no dissociation beyond the stated conversion: an upper bound for a fast "
        "step whose cooling fails, not a prediction of what a reactor does."
    )
    entries = [sp for it in inlet + outlet if it.amount for sp in it.candidates]
    drawn = stream_samples(rxn, entries, samples=samples, seed=seed, call=call)
    if drawn is None:
        return result
    x_draws = drawn.values  # (inputs, N)
    target = h_in + enthalpy_rows(rxn, inlet, t_in, drawn)[0] @ x_draws
    lo_T = max(min(sp.T_range[0] for sp in it.candidates) for it in outlet if it.amount)
    hi_T = min(max(sp.T_range[1] for sp in it.candidates) for it in outlet if it.amount)

    def h_out(T: np.ndarray) -> np.ndarray:
        rows = enthalpy_rows(rxn, outlet, T, drawn)
        return stream_enthalpy(outlet, T) + np.einsum("ij,ji->i", rows, x_draws)

    values = _roots(h_out, target, T_ad, lo_T, hi_T, "the outlet stream in some draws of the data")
    q = np.quantile(values, [(1 - _COVERAGE) / 2, (1 + _COVERAGE) / 2])
    result.interval = (float(q[0]), float(q[1]))
    result.draws = values
    return result


def _at_equilibrium(
    rxn: Reaction,
    amounts: Mapping[str, float],
    t_in: float,
    P_Pa: float,
    samples: int | None,
    seed: int | None,
    call: UncertainAssessment | None,
) -> AdiabaticTemperature:
    """The outlet temperature at which the stream, at its own equilibrium extent there, holds
    the feed's enthalpy: H(feed at T) + ξ_eq(T)·Σ ν_j H_j(T) = H_in.

    Both terms rise with T (sensible heat; and ξ_eq falls with T for an exothermic step, whose
    Σ ν_j H_j < 0, and rises for an endothermic one), so the root is unique and bisection finds
    it — for the nominal data and, all at once, for every draw.
    """
    from ..thermo import standard_properties

    inlet0, outlet0 = reaction_streams(rxn, amounts, 0.0)
    per_mole = [StreamItem(t.label(), t.own_candidates(), float(t.nu)) for t in rxn.terms]
    h_in = float(stream_enthalpy(inlet0, t_in)[0])
    present = [it for it in outlet0 + per_mole if it.amount]
    lo_T = max(min(sp.T_range[0] for sp in it.candidates) for it in present)
    hi_T = min(max(sp.T_range[1] for sp in it.candidates) for it in present)

    def nominal(T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        xi = extents_at(rxn, T, P_Pa, amounts, standard_properties(rxn, T).dG)
        return stream_enthalpy(outlet0, T) + xi * stream_enthalpy(per_mole, T), xi

    what = "the equilibrium outlet stream (" + ", ".join(it.label for it in present) + ")"
    T_ad = float(_roots(lambda T: nominal(T)[0], np.array([h_in]), t_in, lo_T, hi_T, what)[0])
    extent = float(nominal(np.array([T_ad]))[1][0])
    result = AdiabaticTemperature(rxn.equation(), t_in, None, extent, T_ad, rise_K=T_ad - t_in)
    result.notes.append(
        "No heat lost; the outlet at chemical equilibrium at its own temperature (this "
        "reaction only, ideal gases): the temperature a fast step approaches when cooling "
        "fails, not a prediction of what a reactor does."
    )
    entries = [sp for it in present for sp in it.candidates] + list(uncertain_species(rxn))
    entries += [sp for it in inlet0 if it.amount for sp in it.candidates]
    drawn = stream_samples(rxn, entries, samples=samples, seed=seed, call=call)
    if drawn is None:
        return result
    x = drawn.values
    target = h_in + enthalpy_rows(rxn, inlet0, t_in, drawn)[0] @ x
    values = _roots(
        lambda T: _sampled(rxn, amounts, P_Pa, outlet0, per_mole, drawn, T)[0],
        target,
        T_ad,
        lo_T,
        hi_T,
        what + " in some draws of the data",
    )
    xi = _sampled(rxn, amounts, P_Pa, outlet0, per_mole, drawn, values)[1]
    q = np.quantile(values, [(1 - _COVERAGE) / 2, (1 + _COVERAGE) / 2])
    result.interval = (float(q[0]), float(q[1]))
    result.draws = values
    e = np.quantile(xi, [(1 - _COVERAGE) / 2, (1 + _COVERAGE) / 2])
    result.extent_interval = (float(e[0]), float(e[1]))
    return result


def _roots(
    h: Any, target: np.ndarray, centre: float, lo_T: float, hi_T: float, what: str
) -> np.ndarray:
    """T with h(T) = target for each state, by bisection: h is increasing in T (it may jump up at a
    phase change; a target inside a jump gives the transition temperature). Brackets start at
    ``centre`` ± :data:`_START_K` and widen per state; a root beyond the data's range
    [``lo_T``, ``hi_T``] is refused."""
    n = target.size
    a = np.full(n, max(lo_T, centre - _START_K))
    b = np.full(n, min(hi_T, centre + _START_K))
    while True:
        low = h(a) > target  # the root lies below a
        high = h(b) < target  # the root lies above b
        if not (np.any(low) or np.any(high)):
            break
        if np.any(low & (a <= lo_T)) or np.any(high & (b >= hi_T)):
            raise OutsideDataRange(what, centre, lo_T, hi_T)
        width = b - a
        a, b = (
            np.where(low, np.maximum(lo_T, a - 2 * width), np.where(high, b, a)),
            np.where(high, np.minimum(hi_T, b + 2 * width), np.where(low, a, b)),
        )
    # enough halvings for the widest bracket to shrink below the tolerance
    halvings = int(np.ceil(np.log2(max(float(np.max(b - a)), _T_TOL) / _T_TOL)))
    for _ in range(halvings):
        mid = 0.5 * (a + b)
        below = h(mid) < target
        a = np.where(below, mid, a)
        b = np.where(below, b, mid)
    return 0.5 * (a + b)


def _sampled(
    rxn: Reaction,
    amounts: Mapping[str, float],
    P_Pa: float,
    outlet0: list[StreamItem],
    per_mole: list[StreamItem],
    drawn: SampleSet,
    T: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Each draw's outlet enthalpy at its own temperature T[i] and equilibrium extent there."""
    x = drawn.values
    model = linear_model(rxn, T, drawn)
    dG = model.G0 + np.einsum("ij,ji->i", model.aG, x)
    xi = extents_at(rxn, T, P_Pa, amounts, dG)
    h0 = stream_enthalpy(outlet0, T) + np.einsum(
        "ij,ji->i", enthalpy_rows(rxn, outlet0, T, drawn), x
    )
    dh = stream_enthalpy(per_mole, T) + np.einsum(
        "ij,ji->i", enthalpy_rows(rxn, per_mole, T, drawn), x
    )
    return h0 + xi * dh, xi
