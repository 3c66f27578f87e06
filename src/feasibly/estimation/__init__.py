"""Estimates for species no table has, with calibrated uncertainty and the reasons for refusals.

- :mod:`~feasibly.estimation.gas` — ΔfH°, S° and Cp(T) of a C/H/O gas from its SMILES by
  Benson group additivity (needs RDKit: the ``estimate`` extra), with symmetry and
  stereoisomer terms, a NASA-7 fit of Cp, and standard uncertainties from the calibration
  against ATcT and NIST WebBook values in ``data/``; the estimate becomes a species entry with
  ``estimated`` provenance that every call accepts;
- :mod:`~feasibly.estimation.solids` — Cp of an inorganic solid by the Neumann–Kopp rule, with
  its uncertainty calibrated against the library's tabulated solids; ΔfH° stays the user's, S°
  is the user's or the ionic-contribution estimate;
- :mod:`~feasibly.estimation.ionic` — S°(298.15 K) of an ionic solid as a sum of cation and
  anion contributions (Latimer's form) fitted by this project to the library's salts, with a
  leave-one-out calibrated uncertainty and refusals for what the fit does not cover.

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
from .ionic import IONIC_ORIGIN, IonicEntropy, ionic_entropy, ionic_entropy_rule
from .solids import NK_ORIGIN, NeumannKopp, estimate_solid, neumann_kopp, neumann_kopp_rule

__all__ = [
    "GROUP_SET",
    "IONIC_ORIGIN",
    "NK_ORIGIN",
    "ORIGIN",
    "GasEstimate",
    "IonicEntropy",
    "NeumannKopp",
    "estimate_gas",
    "estimate_solid",
    "group_set",
    "ionic_entropy",
    "ionic_entropy_rule",
    "neumann_kopp",
    "neumann_kopp_rule",
    "nominal_gas",
    "uncertainty_rule",
]
