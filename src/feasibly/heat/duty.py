"""Heat duty of a reaction step with its uncertainty: the heat to put in (positive) or take out
(negative) so that the feed, entering at its own temperature(s), leaves as products at the
reaction temperature, at a given conversion or at equilibrium.

duty = Σ n_out·H°(T) − Σ n_in·H°(T_in), each species in its stable phase at its temperature,
so phase changes on the way (water condensing, a salt melting) are in the number. The duty is
exactly linear in the data's uncertain inputs (ΔfH° shifts and heat-capacity factors), so its
Monte Carlo values come from the same draws as the call they belong to.
"""

from __future__ import annotations

import zlib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..conditions import read_feed, read_pressure, read_temperature
from ..equilibrium import equilibrium_extent, extents_at
from ..errors import InvalidInput
from ..library import Library, Species, default_library
from ..thermo import Reaction
from ..thermo.energy import (
    StreamItem,
    reaction_streams,
    stable_choice,
    stream_enthalpy,
    term_index,
)
from ..uncertainty import (
    SampleSet,
    UncertainAssessment,
    build_inputs,
    deviation_rows,
    draw_samples,
    linear_model,
    uncertain_species,
    with_transition_parents,
)

__all__ = [
    "HeatDuty",
    "enthalpy_rows",
    "heat_duty",
    "read_conversion_choice",
    "stream_samples",
]

#: Coverage of the reported interval (JCGM 101:2008 §7.7: 95 %, probabilistically symmetric).
_COVERAGE = 0.95


@dataclass
class HeatDuty:
    """The heat a step needs (J; positive: heat in, negative: heat out).

    ``J`` is for the feed as given; ``J_per_mol_reaction`` divides by the extent;
    ``J_per_kg_product`` by the mass of ``product`` formed and ``J_per_kg_feed`` by the mass fed.
    ``interval`` is the 95 % interval of ``J_per_mol_reaction`` over ``samples`` draws (None
    without sampling); ``draws`` holds those values (J/mol). ``interval_per_kg_product`` and
    ``interval_per_kg_feed`` are the 95 % intervals of the per-kg figures over the same draws.
    At the equilibrium conversion each draw has its own extent: ``extent_interval`` and
    ``extent_draws`` hold them (mol; None at a given conversion).
    """

    equation: str
    T_K: float
    T_feed_K: dict[str, float]
    P_Pa: float
    conversion: float | None
    key: str | None
    extent: float
    J: float
    J_per_mol_reaction: float
    J_per_kg_product: float | None
    product: str | None
    J_per_kg_feed: float
    interval: tuple[float, float] | None = None
    draws: np.ndarray | None = field(default=None, repr=False)
    notes: list[str] = field(default_factory=list)
    interval_per_kg_product: tuple[float, float] | None = None
    interval_per_kg_feed: tuple[float, float] | None = None
    extent_interval: tuple[float, float] | None = None
    extent_draws: np.ndarray | None = field(default=None, repr=False)

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready data (SI units in the key names)."""
        out: dict[str, Any] = {
            "equation": self.equation,
            "T_K": self.T_K,
            "T_feed_K": dict(self.T_feed_K),
            "P_Pa": self.P_Pa,
            "conversion": self.conversion,
            "key": self.key,
            "extent_mol": self.extent,
            "duty_J": self.J,
            "duty_J_per_mol": self.J_per_mol_reaction,
            "duty_J_per_kg_product": self.J_per_kg_product,
            "product": self.product,
            "duty_J_per_kg_feed": self.J_per_kg_feed,
            "notes": list(self.notes),
        }
        if self.interval is not None:
            out["duty_J_per_mol_interval_95"] = list(self.interval)
        if self.interval_per_kg_product is not None:
            out["duty_J_per_kg_product_interval_95"] = list(self.interval_per_kg_product)
        if self.interval_per_kg_feed is not None:
            out["duty_J_per_kg_feed_interval_95"] = list(self.interval_per_kg_feed)
        if self.extent_interval is not None:
            out["extent_mol_interval_95"] = list(self.extent_interval)
        return out


def read_conversion_choice(value: Any) -> float | str:
    """A conversion: 'equilibrium', or a fraction such as 0.9 / '90%' (0 < x ≤ 1)."""
    if isinstance(value, str) and value.strip().lower() == "equilibrium":
        return "equilibrium"
    text = str(value).strip()
    try:
        x = float(text[:-1]) / 100.0 if text.endswith("%") else float(text)
    except ValueError:
        x = float("nan")
    if not 0.0 < x <= 1.0:
        raise InvalidInput(
            "conversion", "heat_duty", "'equilibrium' or a fraction above 0 and at most 1", value
        )
    return x


def stream_samples(
    rxn: Reaction,
    entries: Sequence[Species],
    *,
    samples: int | None,
    seed: int | None,
    call: UncertainAssessment | None,
) -> SampleSet | None:
    """Draws covering ``entries``: the call's own draws, extended by independent draws for
    entries the call did not sample (inerts), seeded from the call's seed so that they repeat."""
    needed = with_transition_parents(entries, rxn.library)
    if call is None:
        if samples is None:
            return None
        return draw_samples(build_inputs(needed), samples, seed=seed)
    have = set(call.samples.keys)
    extra = [sp for sp in needed if (sp.id, "dHf") not in have]
    if not extra:
        return call.samples
    base = call.samples
    # A seed of their own for the extra inputs, derived from the call's seed and their ids
    # (CRC32), so a recomputation draws the same values and the call's own draws are untouched.
    tag = zlib.crc32(f"{base.seed}|{','.join(sp.id for sp in extra)}".encode())
    more = draw_samples(build_inputs(extra), base.n, seed=tag)
    corr = None
    if base.correlation is not None or more.correlation is not None:
        n1, n2 = len(base.inputs), len(more.inputs)
        corr = np.eye(n1 + n2)
        if base.correlation is not None:
            corr[:n1, :n1] = base.correlation
    return SampleSet(
        base.inputs + more.inputs,
        np.vstack([base.values, more.values]),
        base.method,
        base.seed,
        corr,
        [base.n],
        None,
    )


def enthalpy_rows(
    rxn: Reaction, items: Sequence[StreamItem], T: Any, samples: SampleSet, sign: float = 1.0
) -> np.ndarray:
    """∂(sign·Σ n·H°(T))/∂x at each T: rows (len(T), inputs of the sample set), J per unit."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    keys = {k: i for i, k in enumerate(samples.keys)}
    out_h = np.zeros((T.size, len(keys)))
    out_s = np.zeros((T.size, len(keys)))
    for item in items:
        if item.amount == 0.0:
            continue
        idx = stable_choice(item.candidates, T)
        for k, sp in enumerate(item.candidates):
            mask = idx == k
            if np.any(mask):
                deviation_rows(sp, T[mask], rxn, keys, out_h, out_s, sign * item.amount, mask)
    return out_h


def _stable_entries(items: Sequence[StreamItem], T: float) -> list[Species]:
    T_arr = np.array([T])
    return [it.candidates[int(stable_choice(it.candidates, T_arr)[0])] for it in items if it.amount]


def heat_duty(
    equation: str | Reaction,
    T: Any,
    feed: str | Mapping[str, Any],
    *,
    T_feed: Any = None,
    conversion: Any = 1.0,
    key: str | None = None,
    P: Any = "1 bar",
    product: str | None = None,
    samples: int | None = None,
    seed: int | None = None,
    call: UncertainAssessment | None = None,
    library: Library | None = None,
) -> HeatDuty:
    """Heat duty of one step: feed in at ``T_feed`` (default: at ``T``), products out at ``T``.

    ``conversion`` is the fraction of ``key`` converted (default: all of the limiting reactant)
    or ``"equilibrium"`` (ideal gases at total pressure ``P``). With ``samples`` (and ``seed``), or
    with ``call`` (an :class:`~feasibly.uncertainty.UncertainAssessment` of the same reaction,
    whose draws are then used), the duty per mole of reaction gets its 95 % interval; at the
    equilibrium conversion each draw's ΔrG° sets its own extent, so the interval includes the
    doubt about how far the reaction goes.

    >>> d = heat_duty("CaCO3 -> CaO + CO2", "1173 K", "CaCO3:1", T_feed="298.15 K")
    >>> round(d.J_per_mol_reaction / 1000)  # heat to warm the charge and calcine it
    265
    """
    if call is not None:
        library = call.library
        rxn = call.reaction
    else:
        library = library or default_library()
        rxn = equation if isinstance(equation, Reaction) else Reaction.parse(equation, library)
    T_K = read_temperature(T)
    P_Pa = read_pressure(P)
    amounts = {k: float(np.squeeze(v)) for k, v in read_feed(feed).items()}
    t_in = _feed_temperatures(rxn, T_feed, amounts, T_K)
    choice = read_conversion_choice(conversion)
    notes: list[str] = []
    limiting = _limiting_extent(rxn, amounts)
    if choice == "equilibrium":
        eq = equilibrium_extent(rxn, (T_K, "K"), (P_Pa, "Pa"), amounts)
        extent = float(eq.extent[0])
        conv_value: float | None = None
        notes.append("Conversion: the equilibrium extent of this reaction at T and P.")
    elif key is None:
        extent = float(choice) * limiting
        conv_value = float(choice)
        if choice != 1.0:
            notes.append("Conversion counted on the limiting reactant (no key was given).")
    else:
        j = _key_term(rxn, key)
        extent = float(choice) * amounts_of(rxn, amounts)[j] / -rxn.terms[j].nu
        conv_value = float(choice)
    if extent <= 0.0:
        raise InvalidInput("feed", "heat_duty", "a feed in which the reaction can proceed", feed)
    inlet, outlet = reaction_streams(rxn, amounts, extent)
    h_out = float(stream_enthalpy(outlet, T_K)[0])
    h_in = sum(float(stream_enthalpy([it], t_in[it.label])[0]) for it in inlet if it.amount)
    total = h_out - h_in
    feed_mass = sum(it.amount * it.molar_mass for it in inlet) / 1000.0
    prod_label, kg_product = _per_product(rxn, product, extent)
    per_kg_product = None if kg_product is None else total / kg_product
    result = HeatDuty(
        rxn.equation(),
        T_K,
        t_in,
        P_Pa,
        conv_value,
        key,
        extent,
        total,
        total / extent,
        per_kg_product,
        prod_label,
        total / feed_mass,
        notes=notes,
    )
    entries = _stable_entries(outlet, T_K) + [
        sp for it in inlet if it.amount for sp in _stable_entries([it], t_in[it.label])
    ]
    if choice == "equilibrium":
        # every phase the equilibrium may use: ΔrG° of each draw sets that draw's extent
        entries += list(uncertain_species(rxn))
    drawn = stream_samples(rxn, entries, samples=samples, seed=seed, call=call)
    if drawn is not None and choice == "equilibrium":
        _equilibrium_draws(result, rxn, amounts, t_in, h_in, drawn, kg_product, feed_mass)
    elif drawn is not None:
        row = enthalpy_rows(rxn, outlet, T_K, drawn)[0]
        for it in inlet:
            if it.amount:
                row = row + enthalpy_rows(rxn, [it], t_in[it.label], drawn, -1.0)[0]
        totals = total + row @ drawn.values
        values = totals / extent
        result.interval = _interval(values)
        result.draws = values
        if kg_product is not None:
            result.interval_per_kg_product = _interval(totals / kg_product)
        result.interval_per_kg_feed = _interval(totals / feed_mass)
    return result


def _equilibrium_draws(
    result: HeatDuty,
    rxn: Reaction,
    amounts: Mapping[str, float],
    t_in: Mapping[str, float],
    h_in: float,
    drawn: SampleSet,
    kg_product: float | None,
    feed_mass: float,
) -> None:
    """Intervals at the equilibrium conversion: each draw's ΔrG° gives its own extent ξ, and
    its duty is that draw's enthalpy balance at that ξ.

    With the phases fixed at T, the outlet enthalpy is linear in the extent,
    H_out(ξ) = H(feed at T) + ξ·Σ ν_j H_j(T), so each draw's duty is
    A + a·x + ξ(x)·(B + b·x): A, B nominal, a, b their rows in the inputs x.
    """
    T_K, P_Pa = result.T_K, result.P_Pa
    x = drawn.values
    inlet0, outlet0 = reaction_streams(rxn, amounts, 0.0)
    a_nom = float(stream_enthalpy(outlet0, T_K)[0]) - h_in
    a_row = enthalpy_rows(rxn, outlet0, T_K, drawn)[0]
    for it in inlet0:
        if it.amount:
            a_row = a_row + enthalpy_rows(rxn, [it], t_in[it.label], drawn, -1.0)[0]
    per_mole = [StreamItem(t.label(), t.own_candidates(), float(t.nu)) for t in rxn.terms]
    b_nom = float(stream_enthalpy(per_mole, T_K)[0])
    b_row = enthalpy_rows(rxn, per_mole, T_K, drawn)[0]
    T = np.array([T_K])
    xi = extents_at(rxn, T, P_Pa, amounts, linear_model(rxn, T, drawn).values("G", drawn))[0]
    if np.any(xi <= 0.0):
        raise InvalidInput(
            "feed",
            "heat_duty",
            "a feed in which the reaction proceeds at equilibrium in every draw of the data "
            f"(in {int(np.count_nonzero(xi <= 0))} of {xi.size} it does not run forward at "
            f"{T_K:.2f} K)",
            dict(amounts),
        )
    totals = a_nom + a_row @ x + xi * (b_nom + b_row @ x)
    values = totals / xi
    result.interval = _interval(values)
    result.draws = values
    result.extent_interval = _interval(xi)
    result.extent_draws = xi
    if kg_product is not None:
        # the product formed grows with each draw's extent
        result.interval_per_kg_product = _interval(totals / (kg_product * xi / result.extent))
    result.interval_per_kg_feed = _interval(totals / feed_mass)


def _interval(values: np.ndarray) -> tuple[float, float]:
    """The probabilistically symmetric 95 % interval of ``values`` (JCGM 101 §7.7)."""
    lo, hi = np.quantile(values, [(1 - _COVERAGE) / 2, (1 + _COVERAGE) / 2])
    return (float(lo), float(hi))


def amounts_of(rxn: Reaction, amounts: Mapping[str, float]) -> np.ndarray:
    """Feed amount of each term of the reaction (0 for terms not fed), mol."""
    inlet, _ = reaction_streams(rxn, amounts, 0.0)
    return np.array([it.amount for it in inlet[: len(rxn.terms)]])


def _limiting_extent(rxn: Reaction, amounts: Mapping[str, float]) -> float:
    fed = amounts_of(rxn, amounts)
    limits = [fed[j] / -t.nu for j, t in enumerate(rxn.terms) if t.nu < 0]
    return float(min(limits))


def _key_term(rxn: Reaction, key: str) -> int:
    for j, t in enumerate(rxn.terms):
        if t.nu < 0 and key in (t.label(), t.text, t.formula, *(sp.id for sp in t.candidates)):
            return j
    raise InvalidInput(
        "key",
        "heat_duty",
        "a reactant of the equation: " + ", ".join(t.label() for t in rxn.terms if t.nu < 0),
        key,
    )


def _feed_temperatures(
    rxn: Reaction, T_feed: Any, amounts: Mapping[str, float], T_K: float
) -> dict[str, float]:
    """Temperature of each inlet stream item (by its label): one for all, a mapping by feed
    species, or the reaction temperature itself."""
    if isinstance(T_feed, Mapping):
        given = {str(k): read_temperature(v) for k, v in T_feed.items()}
        missing = [n for n in amounts if n not in given]
        if missing:
            raise InvalidInput(
                "T_feed",
                "heat_duty",
                "a temperature for every feed species (" + ", ".join(amounts) + ")",
                T_feed,
            )
    else:
        t = T_K if T_feed is None else read_temperature(T_feed)
        given = {name: t for name in amounts}
    out: dict[str, float] = {}
    for name, t in given.items():
        j = term_index(rxn, name)
        label = rxn.terms[j].label() if j is not None else name
        if label in out and out[label] != t:
            raise InvalidInput(
                "T_feed", "heat_duty", f"one temperature for {label} (it is fed twice)", T_feed
            )
        out[label] = t
    return out


def _per_product(
    rxn: Reaction, product: str | None, extent: float
) -> tuple[str | None, float | None]:
    """The product the per-kg figure counts (given, or the heaviest formed) and its kg."""
    prods = [t for t in rxn.terms if t.nu > 0]
    if product is None:
        if not prods:
            return None, None
        term = max(prods, key=lambda t: t.nu * t.candidates[0].molar_mass)
    else:
        found = [t for t in prods if product in (t.label(), t.text, t.formula)]
        if not found:
            raise InvalidInput(
                "product",
                "heat_duty",
                "a product of the equation: " + ", ".join(t.label() for t in prods),
                product,
            )
        term = found[0]
    kg = term.nu * extent * term.candidates[0].molar_mass / 1000.0
    return term.label(), kg
