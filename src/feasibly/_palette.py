"""The colours of every figure and report: the Okabe–Ito palette.

Okabe & Ito (2008), "Color Universal Design": distinguishable under deuteranopia, protanopia and
tritanopia. Used by the HTML report's SVG figures and by :mod:`feasibly.figures`.
"""

from __future__ import annotations

from types import MappingProxyType

__all__ = ["OKABE_ITO"]

OKABE_ITO = MappingProxyType(
    {
        "black": "#000000",
        "orange": "#E69F00",
        "sky": "#56B4E9",
        "green": "#009E73",
        "yellow": "#F0E442",
        "blue": "#0072B2",
        "vermillion": "#D55E00",
        "purple": "#CC79A7",
    }
)
