"""Reactions and their standard thermodynamics: equations, Δr quantities, K, crossovers, cautions.

- :mod:`~feasibly.thermo.reaction` — equations: parse, check and find the balance, choose phases;
- :mod:`~feasibly.thermo.properties` — ΔrX°(T), K, crossover temperatures, the reaction quotient;
- :mod:`~feasibly.thermo.assessment` — the unit-aware screen of one reaction at the conditions
  given;
- :mod:`~feasibly.thermo.missing_phases` — where the stable phase of a species at T is missing
  from the data (tabulated melting and boiling points);
- :mod:`~feasibly.thermo.energy` — stream enthalpies and the adiabatic temperature (no
  uncertainty; :mod:`feasibly.heat` adds it);
- :mod:`~feasibly.thermo.safety` — plain-language cautions;
- :mod:`~feasibly.thermo.fugacity` — fugacity coefficients (ideal gas or Peng–Robinson).

Layer rule: imports :mod:`feasibly.library`, :mod:`feasibly.units` and
:mod:`feasibly.conditions` below it; never uncertainty, equilibrium, records or widgets.
"""

from ..conditions import GAS_MODELS, read_gas_model
from .assessment import (
    NO_UNCERTAINTY,
    Assessment,
    assess,
    conditions_label,
    read_at_conversion,
)
from .fugacity import (
    Critical,
    critical_constants,
    ln_fugacity_coefficients,
    reaction_fugacity_term,
)
from .missing_phases import missing_stable_phases
from .properties import (
    StandardProperties,
    crossover_temperatures,
    fugacity_term,
    quotient_at_conversion,
    reaction_quotient,
    standard_properties,
)
from .reaction import (
    Reaction,
    ReactionTerm,
    describe_compound,
    parse_equation,
    resolve_species,
    split_phase_label,
)
from .safety import (
    DEFERRAL,
    EXOTHERM_J_PER_G,
    PRESSURE_CAUTION_PA,
    Caution,
    cautions_for,
    pressure_caution,
)

__all__ = [
    "DEFERRAL",
    "EXOTHERM_J_PER_G",
    "GAS_MODELS",
    "NO_UNCERTAINTY",
    "PRESSURE_CAUTION_PA",
    "Assessment",
    "Caution",
    "Critical",
    "Reaction",
    "ReactionTerm",
    "StandardProperties",
    "assess",
    "cautions_for",
    "conditions_label",
    "critical_constants",
    "crossover_temperatures",
    "describe_compound",
    "fugacity_term",
    "ln_fugacity_coefficients",
    "missing_stable_phases",
    "parse_equation",
    "pressure_caution",
    "quotient_at_conversion",
    "reaction_fugacity_term",
    "reaction_quotient",
    "read_at_conversion",
    "read_gas_model",
    "resolve_species",
    "split_phase_label",
    "standard_properties",
]
