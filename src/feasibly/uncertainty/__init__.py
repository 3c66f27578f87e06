"""How sure is the call: uncertain inputs, draws, linear propagation, summaries and the verdict.

- :mod:`~feasibly.uncertainty.inputs` — uncertain inputs, overrides, correlations;
- :mod:`~feasibly.uncertainty.sampling` — the call's reproducible, read-only draws;
- :mod:`~feasibly.uncertainty.linear` — linear rows, Monte Carlo summaries, GUM result,
  sensitivity, windows;
- :mod:`~feasibly.uncertainty.assessment` — the call: probability, verdict, window, sensitivity;
- :mod:`~feasibly.uncertainty.adaptive` — adaptive trial counts (JCGM 101 §7.9);
- :mod:`~feasibly.uncertainty.route` — several steps over one shared set of draws;
- ``_quantiles`` and ``_scan`` (+ ``_scan.c``) — the streamed order statistics behind the
  summaries (private).

Layer rule: imports :mod:`feasibly.thermo` and the levels below it; never equilibrium, records,
figures or widgets.
"""

from .adaptive import ADAPTIVE_MAX_TRIALS, AdaptiveReport
from .assessment import (
    VERDICTS,
    UncertainAssessment,
    assess_uncertainty,
    gas_model_warning,
    verdict,
    with_gas_model_warning,
)
from .inputs import (
    QUANTITIES,
    Correlations,
    InputKey,
    Override,
    UncertainInput,
    build_inputs,
    correlation_matrix,
    parse_override,
)
from .linear import (
    LinearModel,
    anchor_temperature,
    deviation_rows,
    level_window,
    linear_model,
    numerical_tolerance,
    summarise,
    uncertain_species,
    window_phrase,
    with_transition_parents,
)
from .route import Route, assess_route
from .sampling import SampleSet, draw_samples, extend_samples

__all__ = [
    "ADAPTIVE_MAX_TRIALS",
    "QUANTITIES",
    "VERDICTS",
    "AdaptiveReport",
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
    "deviation_rows",
    "draw_samples",
    "extend_samples",
    "gas_model_warning",
    "level_window",
    "linear_model",
    "numerical_tolerance",
    "parse_override",
    "summarise",
    "uncertain_species",
    "verdict",
    "window_phrase",
    "with_gas_model_warning",
    "with_transition_parents",
]
