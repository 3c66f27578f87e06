"""The species data: formulas, heat-capacity models, species entries and the library of them.

- :mod:`~feasibly.library.formula` — formula text → elements and charge, and display forms;
- :mod:`~feasibly.library.cp_models` — heat-capacity models (NASA 7-coefficient and friends);
- :mod:`~feasibly.library.species` — one species-phase entry with its sourced values;
- :mod:`~feasibly.library.catalogue` — the shipped library, user species files and look-up.

Layer rule: this wing imports only :mod:`feasibly.errors` and :mod:`feasibly._files` below it;
nothing here knows about reactions, uncertainty or widgets.
"""

from .catalogue import (
    COVERAGE_DIVISORS,
    Library,
    canonical_hash,
    default_library,
    standard_uncertainty,
)
from .cp_models import T_REF, ConstantCp, CpModel, MaierKelleyCp, Nasa7, Nasa9, R
from .formula import ParsedFormula, element_table, parse_formula, pretty_formula
from .species import PHASES, SourcedValue, Species, gibbs_rt

__all__ = [
    "COVERAGE_DIVISORS",
    "PHASES",
    "T_REF",
    "ConstantCp",
    "CpModel",
    "Library",
    "MaierKelleyCp",
    "Nasa7",
    "Nasa9",
    "ParsedFormula",
    "R",
    "SourcedValue",
    "Species",
    "canonical_hash",
    "default_library",
    "element_table",
    "gibbs_rt",
    "parse_formula",
    "pretty_formula",
    "standard_uncertainty",
]
