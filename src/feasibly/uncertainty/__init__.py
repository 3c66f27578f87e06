"""How sure is the call: uncertain inputs, draws, linear propagation, summaries and the verdict.

- :mod:`~feasibly.uncertainty.inputs` — uncertain inputs, overrides, correlations, reproducible
  draws;
- :mod:`~feasibly.uncertainty.linear` — linear rows, Monte Carlo summaries, GUM result,
  sensitivity, windows;
- :mod:`~feasibly.uncertainty.assessment` — the call: probability, verdict, window, routes;
- ``_quantiles`` and ``_scan`` (+ ``_scan.c``) — the streamed order statistics behind the
  summaries (private).

Layer rule: imports :mod:`feasibly.thermo` and the levels below it; never equilibrium, records,
figures or widgets.
"""

from .assessment import (
    VERDICTS,
    Route,
    UncertainAssessment,
    assess_route,
    assess_uncertainty,
    verdict,
)
from .inputs import (
    QUANTITIES,
    Correlations,
    InputKey,
    Override,
    SampleSet,
    UncertainInput,
    build_inputs,
    correlation_matrix,
    draw_samples,
    extend_samples,
    parse_override,
)
from .linear import (
    LinearModel,
    anchor_temperature,
    level_window,
    linear_model,
    numerical_tolerance,
    summarise,
    window_phrase,
)

__all__ = [
    "QUANTITIES",
    "VERDICTS",
    "Correlations",
    "InputKey",
    "LinearModel",
    "Override",
    "Route",
    "SampleSet",
    "UncertainAssessment",
    "UncertainInput",
    "anchor_temperature",
    "assess_route",
    "assess_uncertainty",
    "build_inputs",
    "correlation_matrix",
    "draw_samples",
    "extend_samples",
    "level_window",
    "linear_model",
    "numerical_tolerance",
    "parse_override",
    "summarise",
    "verdict",
    "window_phrase",
]
