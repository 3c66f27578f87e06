"""Estimates for species no table has, with calibrated uncertainty and the reasons for refusals.

- :mod:`~feasibly.estimation.gas` — ΔfH°, S° and Cp(T) of a C/H/O gas from its SMILES by
  Benson group additivity (needs RDKit: the ``estimate`` extra), with symmetry and
  stereoisomer terms, a NASA-7 fit of Cp, and standard uncertainties from the calibration
  against ATcT and NIST WebBook values in ``data/``; the estimate becomes a species entry with
  ``estimated`` provenance that every call accepts;
- :mod:`~feasibly.estimation.solids` — Cp of an inorganic solid by the Neumann–Kopp rule, with
  its uncertainty calibrated against the library's tabulated solids; ΔfH° and S° stay the
  user's (no ionic-contribution S° table with shippable terms was available).

Layer rule: imports the foundation modules and :mod:`feasibly.library`; never thermo's callers
above it. Records, the command line and widgets import this wing, never the reverse. RDKit is
imported only inside the functions that read a structure, so the package imports without it.
"""

from .gas import (
    GROUP_SET,
    ORIGIN,
    GasEstimate,
    estimate_gas,
    group_set,
    nominal_gas,
    uncertainty_rule,
)
from .solids import NK_ORIGIN, NeumannKopp, estimate_solid, neumann_kopp, neumann_kopp_rule

__all__ = [
    "GROUP_SET",
    "NK_ORIGIN",
    "ORIGIN",
    "GasEstimate",
    "NeumannKopp",
    "estimate_gas",
    "estimate_solid",
    "group_set",
    "neumann_kopp",
    "neumann_kopp_rule",
    "nominal_gas",
    "uncertainty_rule",
]
