"""feasibly: is this reaction thermodynamically feasible where we will run it, and how sure are we?

The kernel (this package's top level) holds one job per module:

- :mod:`feasibly.formula` — formula text → elements and charge, and display forms;
- :mod:`feasibly.thermo_functions` — heat-capacity models (NASA 7-coefficient and friends);
- :mod:`feasibly.species` and :mod:`feasibly.library` — species entries, the shipped data library,
  user species files and look-up;
- :mod:`feasibly.reaction` — equations: parse, check and find the balance, choose phases;
- :mod:`feasibly.assessment` — Δr quantities, K, crossover temperatures, non-standard ΔrG;
- :mod:`feasibly.uncertainty` — uncertain inputs, overrides, correlations, reproducible draws;
- :mod:`feasibly.uncertainty.linear` — linear rows, Monte Carlo summaries, GUM result, sensitivity;
- :mod:`feasibly.confidence` — the call: probability, verdict, window, routes;
- :mod:`feasibly.equilibrium` — equilibrium extent and conversion, Gibbs minimisation, bands;
- :mod:`feasibly.records` — reproducible decision records (JSON, HTML, Markdown) and verification;
- :mod:`feasibly.safety` — plain-language cautions;
- :mod:`feasibly.units` — pint at the edges, SI floats inside;
- :mod:`feasibly.cli` — the ``feasibly`` command.

Beside the kernel: :mod:`feasibly.figures` (pure functions from results to plotly figures) and
:mod:`feasibly.widgets` (notebook views and their state; install the ``widgets`` extra).

Architecture rule: the kernel never imports ``feasibly.widgets`` or ``feasibly.figures``; widgets
call the kernel and the figure builders.
"""

from .__about__ import __version__
from .equilibrium.conversion import (
    ConversionBands,
    Equilibrium,
    ExtentEquilibrium,
    conversion_assessment,
    conversion_bands,
    equilibrate,
    equilibrium_extent,
)
from .errors import (
    AmbiguousBalance,
    DataFileError,
    EquilibriumNotConverged,
    FeasiblyError,
    InvalidInput,
    InvalidTemperature,
    InvalidUncertainty,
    OutsideDataRange,
    ReactionSyntaxError,
    RecordError,
    UnbalancedReaction,
    UnitError,
    UnknownSpecies,
)
from .library.catalogue import Library, default_library, standard_uncertainty
from .library.formula import parse_formula, pretty_formula
from .library.species import Species
from .records import (
    VerifyResult,
    load_record,
    make_record,
    record_from,
    verify_record,
    write_record,
)
from .thermo.assessment import Assessment, assess
from .thermo.properties import StandardProperties, crossover_temperatures, standard_properties
from .thermo.reaction import Reaction
from .thermo.safety import Caution
from .uncertainty import Route, UncertainAssessment, assess_route, assess_uncertainty
from .uncertainty.inputs import Override, parse_override
from .units import Q_, ureg

__all__ = [
    "Q_",
    "AmbiguousBalance",
    "Assessment",
    "Caution",
    "ConversionBands",
    "DataFileError",
    "Equilibrium",
    "EquilibriumNotConverged",
    "ExtentEquilibrium",
    "FeasiblyError",
    "InvalidInput",
    "InvalidTemperature",
    "InvalidUncertainty",
    "Library",
    "OutsideDataRange",
    "Override",
    "Reaction",
    "ReactionSyntaxError",
    "RecordError",
    "Route",
    "Species",
    "StandardProperties",
    "UnbalancedReaction",
    "UncertainAssessment",
    "UnitError",
    "UnknownSpecies",
    "VerifyResult",
    "__version__",
    "assess",
    "assess_route",
    "assess_uncertainty",
    "conversion_assessment",
    "conversion_bands",
    "crossover_temperatures",
    "default_library",
    "equilibrate",
    "equilibrium_extent",
    "load_record",
    "make_record",
    "parse_formula",
    "parse_override",
    "pretty_formula",
    "record_from",
    "standard_properties",
    "standard_uncertainty",
    "ureg",
    "verify_record",
    "write_record",
]
