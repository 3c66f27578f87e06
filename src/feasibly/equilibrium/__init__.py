"""Where the reaction stops: equilibrium extent and conversion of one reaction, and Gibbs-energy
minimisation over a species set, with bands from the call's draws.

- :mod:`~feasibly.equilibrium.conversion` — extent, conversion, bands, the conversion criterion;
- :mod:`~feasibly.equilibrium.composition` — full Gibbs minimisation (``equilibrate``);
- ``_extent_solver`` and ``_gibbs_solver`` — the vectorised numerical solvers (private).

Layer rule: imports :mod:`feasibly.uncertainty`, :mod:`feasibly.thermo` and the levels below;
never records, figures or widgets.
"""

from ._common import BAND_PROBS, parse_feed
from .composition import Equilibrium, equilibrate
from .conversion import (
    ConversionBands,
    ExtentEquilibrium,
    conversion_assessment,
    conversion_bands,
    conversion_window,
    equilibrium_extent,
    extents_at,
)

__all__ = [
    "BAND_PROBS",
    "ConversionBands",
    "Equilibrium",
    "ExtentEquilibrium",
    "conversion_assessment",
    "conversion_bands",
    "conversion_window",
    "equilibrate",
    "equilibrium_extent",
    "extents_at",
    "parse_feed",
]
