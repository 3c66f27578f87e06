"""Routes: several steps, each at its own temperature, judged over one shared set of draws, so
species that two steps share stay correlated."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..conditions import read_temperature
from ..errors import InvalidInput
from ..library.catalogue import Library, default_library
from ..thermo.reaction import Reaction
from .assessment import _threshold_fn
from .inputs import Correlations, Method, Override, build_inputs, correlation_matrix
from .linear import linear_model, route_probability, uncertain_species
from .sampling import SampleSet, draw_samples

__all__ = ["Route", "assess_route"]


@dataclass
class Route:
    """Several steps, each at its own temperature, over one shared set of draws."""

    steps: list[tuple[Reaction, float]]
    samples: SampleSet
    thresholds: list[float]
    p_steps: list[float]
    p_steps_se: list[float]
    p_all: float
    p_all_se: float

    @property
    def p_independent(self) -> float:
        """What P(all) would be if the steps shared no species: the product of the step P's."""
        return float(np.prod(self.p_steps))


def assess_route(
    steps: Sequence[tuple[str | Reaction, Any]],
    *,
    samples: int = 100_000,
    seed: int | None = None,
    method: Method = "mc",
    threshold: Any = "0 J/mol",
    overrides: Sequence[Override] = (),
    correlations: Correlations | None = None,
    library: Library | None = None,
) -> Route:
    """P(every step is feasible) for a route of (equation, temperature) steps, shared draws.

    >>> r = assess_route([("MgCO3 -> MgO + CO2", "800 K"), ("MgO + 2 HCl -> MgCl2 + H2O", "400 K")],
    ...                  samples=4096, seed=3)
    >>> r.p_all <= min(r.p_steps)
    True
    """
    library = library or default_library()
    rxns = [(s if isinstance(s, Reaction) else Reaction.parse(s, library), t) for s, t in steps]
    if not rxns:
        raise InvalidInput(
            "steps", "assess_route", "at least one (equation, temperature) step", steps
        )
    species = {sp.id: sp for rxn, _ in rxns for sp in uncertain_species(rxn)}
    inputs = build_inputs(species.values(), overrides)
    corr = correlation_matrix(inputs, correlations)
    drawn = draw_samples(inputs, samples, method=method, seed=seed, correlation=corr)
    thr_fn, _ = _threshold_fn(threshold, None)
    models, thrs, temps = [], [], []
    for rxn, t in rxns:
        tk = read_temperature(t)
        models.append(linear_model(rxn, np.array([tk]), drawn))
        thrs.append(float(thr_fn(np.array([tk]))[0]))
        temps.append(tk)
    p_steps, p_se = [], []
    for m, thr in zip(models, thrs, strict=True):
        p, se = route_probability([m], drawn, [thr])
        p_steps.append(p)
        p_se.append(se)
    p_all, p_all_se = route_probability(models, drawn, thrs)
    return Route(
        [(r, t) for (r, _), t in zip(rxns, temps, strict=True)],
        drawn,
        thrs,
        p_steps,
        p_se,
        p_all,
        p_all_se,
    )
