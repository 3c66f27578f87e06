"""feasibly: is this reaction thermodynamically feasible where we will run it, and how sure are we?

The package is a house of wings. Each wing has a face (its ``__init__`` with ``__all__``) over
public step modules and private solvers, and imports only the wings below it:

====  ==========================================================================================
1     :mod:`feasibly.errors` (every exception), ``_files`` (the shipped data files), ``_palette``
2     :mod:`feasibly.units` (pint at the edges) · :mod:`feasibly.library` (formulas, heat-capacity
      models, species entries, the shipped library and users' species files)
3     :mod:`feasibly.conditions` — the one reader of temperatures, pressures, feeds and settings
4     :mod:`feasibly.thermo` — equations, ΔrX°(T), K, crossovers, the screen of one reaction,
      cautions
5     :mod:`feasibly.uncertainty` — uncertain inputs, draws, linear propagation, summaries, the
      call with its probability, routes · :mod:`feasibly.estimation` (group-additivity
      estimates of species no table has, with calibrated uncertainty)
6     :mod:`feasibly.equilibrium` (extent, conversion, Gibbs minimisation) ·
      :mod:`feasibly.figures` (pure functions from results to plotly figures)
7     :mod:`feasibly.heat` (heat duty and adiabatic temperature with their intervals) ·
      :mod:`feasibly.comparison` (formation lines on one scale: the Ellingham diagram)
8     :mod:`feasibly.records` — decision records: build, write, read, verify, report
9     :mod:`feasibly.cli` (the ``feasibly`` command) · :mod:`feasibly.widgets` (the notebook
      worksheet; install the ``widgets`` extra)
10    this face: the names a user needs, importable as ``feasibly.X``
====  ==========================================================================================

Layer rule: a wing imports its own modules and the wings on lower levels only, and never a
``_private`` name of another wing; the kernel (levels 1–8 without figures) never loads widget or
plotting code. ``tests/test_layers.py`` checks both.
"""

import importlib
from typing import TYPE_CHECKING, Any

from .__about__ import __version__

if TYPE_CHECKING:
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
        ExportError,
        FeasiblyError,
        InvalidInput,
        InvalidTemperature,
        InvalidUncertainty,
        MissingCondensedPhase,
        NotEstimable,
        OutsideDataRange,
        ReactionSyntaxError,
        RecordError,
        UnbalancedReaction,
        UnitError,
        UnknownSpecies,
    )
    from .estimation import GasEstimate, estimate_gas
    from .library.catalogue import Library, default_library, standard_uncertainty
    from .library.formula import parse_formula, pretty_formula
    from .library.species import Species
    from .records import (
        VerifyResult,
        load_record,
        make_record,
        record_from,
        sign_record,
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


#: Where each public name lives; the module is imported on first access (PEP 562), so
#: ``import feasibly`` and ``feasibly --version`` do not load scipy, pint or the data.
_LAZY = {
    "AmbiguousBalance": ".errors",
    "Assessment": ".thermo.assessment",
    "Caution": ".thermo.safety",
    "ConversionBands": ".equilibrium.conversion",
    "DataFileError": ".errors",
    "Equilibrium": ".equilibrium.conversion",
    "EquilibriumNotConverged": ".errors",
    "ExportError": ".errors",
    "ExtentEquilibrium": ".equilibrium.conversion",
    "FeasiblyError": ".errors",
    "InvalidInput": ".errors",
    "InvalidTemperature": ".errors",
    "InvalidUncertainty": ".errors",
    "Library": ".library.catalogue",
    "MissingCondensedPhase": ".errors",
    "NotEstimable": ".errors",
    "GasEstimate": ".estimation",
    "estimate_gas": ".estimation",
    "OutsideDataRange": ".errors",
    "Override": ".uncertainty.inputs",
    "Q_": ".units",
    "Reaction": ".thermo.reaction",
    "ReactionSyntaxError": ".errors",
    "RecordError": ".errors",
    "Route": ".uncertainty",
    "Species": ".library.species",
    "StandardProperties": ".thermo.properties",
    "UnbalancedReaction": ".errors",
    "UncertainAssessment": ".uncertainty",
    "UnitError": ".errors",
    "UnknownSpecies": ".errors",
    "VerifyResult": ".records",
    "assess": ".thermo.assessment",
    "assess_route": ".uncertainty",
    "assess_uncertainty": ".uncertainty",
    "conversion_assessment": ".equilibrium.conversion",
    "conversion_bands": ".equilibrium.conversion",
    "crossover_temperatures": ".thermo.properties",
    "default_library": ".library.catalogue",
    "equilibrate": ".equilibrium.conversion",
    "equilibrium_extent": ".equilibrium.conversion",
    "load_record": ".records",
    "make_record": ".records",
    "parse_formula": ".library.formula",
    "parse_override": ".uncertainty.inputs",
    "pretty_formula": ".library.formula",
    "record_from": ".records",
    "sign_record": ".records",
    "standard_properties": ".thermo.properties",
    "standard_uncertainty": ".library.catalogue",
    "ureg": ".units",
    "verify_record": ".records",
    "write_record": ".records",
}

__all__ = [
    "Q_",
    "AmbiguousBalance",
    "Assessment",
    "Caution",
    "ConversionBands",
    "DataFileError",
    "Equilibrium",
    "EquilibriumNotConverged",
    "ExportError",
    "ExtentEquilibrium",
    "FeasiblyError",
    "GasEstimate",
    "InvalidInput",
    "InvalidTemperature",
    "InvalidUncertainty",
    "Library",
    "MissingCondensedPhase",
    "NotEstimable",
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
    "estimate_gas",
    "load_record",
    "make_record",
    "parse_formula",
    "parse_override",
    "pretty_formula",
    "record_from",
    "sign_record",
    "standard_properties",
    "standard_uncertainty",
    "ureg",
    "verify_record",
    "write_record",
]


def __getattr__(name: str) -> Any:
    try:
        module = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'feasibly' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(module, __name__), name)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
