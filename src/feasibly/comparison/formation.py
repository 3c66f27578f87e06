"""Formation lines compared on one scale (the Ellingham diagram): ΔrG° per mole of O2 (or S2,
Cl2, …) of the formation of each compound from its element, over temperature, with bands from
one shared set of draws of the data, the phase changes on each line, the probability that one
line lies below another, and the CO/CO2 and H2/H2O ratios a reduction needs.

A line lower on the diagram is the more stable compound: at a temperature where the line of A
lies below the line of B, A's element reduces B's compound. Since every line is drawn from the
same draws, a species two lines share (O2, or a metal in two oxides) moves both lines together,
and the probability that A lies below B is counted draw by draw, not guessed from the bands.

Reductant ratios: an oxide is reduced by CO (or H2) at T when p(CO)/p(CO2) exceeds
exp((ΔG°(2 CO + O2 → 2 CO2) − ΔG°(line)) / 2RT), and likewise for H2/H2O. They come from the same
draws, so their bands include the data of CO, CO2, H2 and H2O.

>>> lines = formation_lines(["Cu2O", "Fe3O4", "Cr2O3"], T_range=("600 K", "1400 K"), points=3)
>>> lines.equations
['4 Cu + O2 -> 2 Cu2O', '3/2 Fe + O2 -> 1/2 Fe3O4', '4/3 Cr + O2 -> 2/3 Cr2O3']
>>> [lines.labels[i] for i in np.argsort(lines.G[:, 1])]  # most stable first, at 1000 K
['Cr2O3', 'Fe3O4', 'Cu2O']
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import numpy as np

from ..conditions import read_count, read_temperatures
from ..errors import InvalidInput
from ..library import Library, default_library, parse_formula
from ..thermo import Reaction
from ..uncertainty import (
    build_inputs,
    correlation_matrix,
    draw_samples,
    linear_model,
    uncertain_species,
)

__all__ = ["REDUCTANTS", "FormationLines", "formation_lines"]

#: The gas each kind of diagram counts per mole of, by the element it brings.
_REAGENTS = {"O2": "O", "S2": "S", "Cl2": "Cl", "F2": "F", "N2": "N", "H2": "H"}
#: Reductant couples whose equilibrium ratio is given for oxide lines (per mole of O2).
REDUCTANTS = {
    "CO/CO2": "2 CO + O2 -> 2 CO2",
    "H2/H2O": "2 H2 + O2 -> 2 H2O(g)",
}
#: Probabilities of the reported bands: 95 % and 68 % intervals and the median (JCGM 101 §7.7;
#: 68 % is the one-standard-deviation coverage of a normal output).
BAND_PROBS = (0.025, 0.16, 0.5, 0.84, 0.975)
_R = 8.314462618  # J/(mol·K), CODATA 2018 (exact: N_A·k)


@dataclass
class FormationLines:
    """Formation lines per mole of ``reagent`` at temperatures ``T`` (K).

    ``G`` (lines × T, J/mol) nominal; ``bands`` (len(BAND_PROBS) × lines × T) from the draws;
    ``phase_changes[i]`` lists (species, T, from, to) on line i; ``ratios[name]`` holds the
    log10 of the reductant ratio each line needs (nominal and 95 % band, lines × T), for oxide
    diagrams.
    """

    reagent: str
    T: np.ndarray
    labels: list[str]
    equations: list[str]
    G: np.ndarray
    bands: np.ndarray | None
    phase_changes: list[list[tuple[str, float, str, str]]]
    samples: int
    seed: int | None
    ratios: dict[str, dict[str, np.ndarray]] = field(default_factory=dict)
    #: where the stable phase of a compound at T is missing from the data (see assess)
    notes: list[str] = field(default_factory=list)
    _draws: np.ndarray | None = field(default=None, repr=False)

    def p_below(self, a: str, b: str) -> np.ndarray:
        """P(line ``a`` lies below line ``b``) at each T, counted over the shared draws."""
        if self._draws is None:
            raise InvalidInput("samples", "formation_lines", "given to compare lines", None)
        for name in (a, b):
            if name not in self.labels:
                raise InvalidInput(
                    "line", "FormationLines.p_below", "one of " + ", ".join(self.labels), name
                )
        i, j = self.labels.index(a), self.labels.index(b)
        return np.mean(self._draws[i] < self._draws[j], axis=1)

    def table(self) -> list[dict[str, Any]]:
        """One row per line and temperature (J/mol per mole of reagent; K)."""
        rows = []
        for i, label in enumerate(self.labels):
            for k, t in enumerate(self.T):
                row: dict[str, Any] = {
                    "line": label,
                    "equation": self.equations[i],
                    "T_K": float(t),
                    f"dG_J_per_mol_{self.reagent}": float(self.G[i, k]),
                }
                if self.bands is not None:
                    row["lo95_J_per_mol"] = float(self.bands[0, i, k])
                    row["hi95_J_per_mol"] = float(self.bands[-1, i, k])
                for name, r in self.ratios.items():
                    row[f"log10_{name.replace('/', '_per_')}_needed"] = float(r["nominal"][i, k])
                rows.append(row)
        return rows


def _formation_equation(compound: str, reagent: str, library: Library) -> tuple[str, str]:
    """'4/3 Al + O2 -> 2/3 Al2O3' for 'Al2O3' per mole of O2, and the compound's label."""
    parsed = parse_formula(compound.split("(")[0])
    element = _REAGENTS[reagent]
    others = [e for e in parsed.elements if e != element]
    if element not in parsed.elements or len(others) != 1 or parsed.charge:
        raise InvalidInput(
            "compounds",
            "formation_lines",
            f"compounds of one element with {element} (e.g. NiO, Al2O3 for O2), or equations",
            compound,
        )
    metal = others[0]
    n_reagent_atoms = Fraction(parse_formula(reagent).elements[element]).limit_denominator()
    per = Fraction(parsed.elements[element]).limit_denominator() / n_reagent_atoms
    k_compound = 1 / per
    k_metal = k_compound * Fraction(parsed.elements[metal]).limit_denominator()

    def coef(c: Fraction) -> str:
        return "" if c == 1 else f"{c} "

    return f"{coef(k_metal)}{metal} + {reagent} -> {coef(k_compound)}{compound}", compound


def _per_reagent(rxn: Reaction, reagent: str) -> float:
    """|ν| of the reagent gas among the reactants, to scale the line to one mole of it."""
    for t in rxn.terms:
        if t.formula == reagent and t.nu < 0:
            return -t.nu
    raise InvalidInput(
        "compounds", "formation_lines", f"equations that consume {reagent}", rxn.equation()
    )


def formation_lines(
    compounds: Sequence[str],
    *,
    reagent: str = "O2",
    T_range: Any = ("500 K", "2000 K"),
    points: int = 61,
    samples: int | None = None,
    seed: int | None = None,
    library: Library | None = None,
) -> FormationLines:
    """Formation lines of ``compounds`` (formulas such as ``"NiO"``, or equations that consume
    ``reagent``) per mole of ``reagent`` over ``T_range``, with bands when ``samples`` is given.
    """
    library = library or default_library()
    if reagent not in _REAGENTS:
        raise InvalidInput("reagent", "formation_lines", "one of " + ", ".join(_REAGENTS), reagent)
    if isinstance(compounds, str) or not compounds:
        raise InvalidInput("compounds", "formation_lines", "a list of one or more", compounds)
    temps, _ = read_temperatures(None, T_range, points, "formation_lines")
    rxns: list[Reaction] = []
    labels: list[str] = []
    for item in compounds:
        if "->" in item:
            rxns.append(Reaction.parse(item, library))
            labels.append(item)
        else:
            text, label = _formation_equation(item, reagent, library)
            rxns.append(Reaction.parse(text, library))
            labels.append(label)
    if len(set(labels)) != len(labels):
        raise InvalidInput("compounds", "formation_lines", "each compound once", compounds)
    scale = np.array([_per_reagent(r, reagent) for r in rxns])
    couples = {
        name: Reaction.parse(eq, library) for name, eq in REDUCTANTS.items() if reagent == "O2"
    }
    from ..thermo import missing_stable_phases, standard_properties

    # A compound whose only data are its gas is refused where the tables make it a solid or
    # liquid (FeO below 1650 K would otherwise give a line for its vapour): as in assess.
    notes = [n for r in rxns for n in missing_stable_phases(r, temps)]
    G = np.array([standard_properties(r, temps).dG / s for r, s in zip(rxns, scale, strict=True)])
    changes = [r.phase_changes(float(temps[0]), float(temps[-1])) for r in rxns]
    result = FormationLines(
        reagent, temps, labels, [r.equation() for r in rxns], G, None, changes, 0, seed
    )
    result.notes = notes
    couple_G = {name: standard_properties(r, temps).dG for name, r in couples.items()}
    for name, g_c in couple_G.items():
        result.ratios[name] = {"nominal": (g_c[None, :] - G) / (2 * _R * temps * math.log(10))}
    if samples is None:
        return result
    n = read_count(samples, "samples", "formation_lines", minimum=2)
    species = {sp.id: sp for r in [*rxns, *couples.values()] for sp in uncertain_species(r)}
    inputs = build_inputs(species.values())
    drawn = draw_samples(inputs, n, seed=seed, correlation=correlation_matrix(inputs, None))
    draws = np.stack(
        [
            linear_model(r, temps, drawn).values("G", drawn) / s
            for r, s in zip(rxns, scale, strict=True)
        ]
    )  # lines × T × N
    result.bands = np.quantile(draws, BAND_PROBS, axis=2)
    result.samples = n
    result._draws = draws
    for name, r in couples.items():
        g_c = linear_model(r, temps, drawn).values("G", drawn)  # T × N
        log_ratio = (g_c[None] - draws) / (2 * _R * temps[None, :, None] * math.log(10))
        lo, hi = np.quantile(log_ratio, [0.025, 0.975], axis=2)
        result.ratios[name]["lo95"] = lo
        result.ratios[name]["hi95"] = hi
    return result
