"""Comparisons across reactions on one scale: formation lines per mole of O2 (S2, Cl2, …) — the
Ellingham diagram — with bands from one shared set of draws, the probability that one line lies
below another, and the reductant ratios an oxide's reduction needs.

Layer rule: imports the kernel wings up to :mod:`feasibly.uncertainty` (level 7, beside
:mod:`feasibly.heat`); records, the command line, widgets and figures' callers import it.
"""

from .formation import REDUCTANTS, FormationLines, formation_lines

__all__ = ["REDUCTANTS", "FormationLines", "formation_lines"]
