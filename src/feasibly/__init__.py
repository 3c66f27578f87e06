"""feasibly: is this reaction thermodynamically feasible where we will run it, and how sure are we?

The kernel (this package's top level) holds one job per module:

- :mod:`feasibly.formula` — formula text → elements and charge, and display forms;
- :mod:`feasibly.thermo_functions` — heat-capacity models (NASA 7-coefficient and friends);
- :mod:`feasibly.species` and :mod:`feasibly.library` — species entries, the shipped data library,
  user species files and look-up;
- :mod:`feasibly.reaction` — equations: parse, check and find the balance, choose phases;
- :mod:`feasibly.assessment` — Δr quantities, K, crossover temperatures, non-standard ΔrG;
- :mod:`feasibly.safety` — plain-language cautions;
- :mod:`feasibly.units` — pint at the edges, SI floats inside;
- :mod:`feasibly.cli` — the ``feasibly`` command.

Architecture rule: the kernel never imports ``feasibly.widgets`` or any figure code; widgets call
the kernel.
"""

from .__about__ import __version__
from .assessment import (
    Assessment,
    StandardProperties,
    assess,
    crossover_temperatures,
    standard_properties,
)
from .errors import (
    AmbiguousBalance,
    DataFileError,
    FeasiblyError,
    InvalidTemperature,
    InvalidUncertainty,
    OutsideDataRange,
    ReactionSyntaxError,
    UnbalancedReaction,
    UnitError,
    UnknownSpecies,
)
from .formula import parse_formula, pretty_formula
from .library import Library, default_library, standard_uncertainty
from .reaction import Reaction
from .safety import Caution
from .species import Species
from .units import Q_, ureg

__all__ = [
    "Q_",
    "AmbiguousBalance",
    "Assessment",
    "Caution",
    "DataFileError",
    "FeasiblyError",
    "InvalidTemperature",
    "InvalidUncertainty",
    "Library",
    "OutsideDataRange",
    "Reaction",
    "ReactionSyntaxError",
    "Species",
    "StandardProperties",
    "UnbalancedReaction",
    "UnitError",
    "UnknownSpecies",
    "__version__",
    "assess",
    "crossover_temperatures",
    "default_library",
    "parse_formula",
    "pretty_formula",
    "standard_properties",
    "standard_uncertainty",
    "ureg",
]
