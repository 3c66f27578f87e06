"""Estimates for species no table has, with calibrated uncertainty and the reasons for refusals.

- :mod:`~feasibly.estimation.gas` — ΔfH°, S° and Cp(T) of a C/H/O gas from its SMILES by
  Benson group additivity (needs RDKit: the ``estimate`` extra), with symmetry and
  stereoisomer terms, a NASA-7 fit of Cp, and standard uncertainties from the calibration
  against ATcT and NIST WebBook values in ``data/``; the estimate becomes a species entry with
  ``estimated`` provenance that every call accepts.

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

__all__ = [
    "GROUP_SET",
    "ORIGIN",
    "GasEstimate",
    "estimate_gas",
    "group_set",
    "nominal_gas",
    "uncertainty_rule",
]
