"""S°(298.15 K) of an ionic inorganic solid from additive cation and anion contributions.

The form is Latimer's: S°(MₙXₘ, cr, 298.15 K) ≈ n·s(M^z+) + m·s(X^q−). The contributions are
not a published table (none with terms that allow shipping it was available): they are fitted
openly, by least squares, to the S° of the shipped library's crystalline salts that split into
one cation element and one anion (NASA Glenn thermo.inp and CRC Handbook rows), by
``data/fit_ionic_entropy.py``, which also calibrates the standard uncertainty by
leave-one-out (``data/ionic-entropy-uncertainty.json``; figures in ``data/README.md``).

A formula is split here the same way for the fit and for an estimate: exactly one metal
element, the rest exactly m copies of one anion of :data:`ANIONS`, and the cation charge
z = m·q/n an integer. Everything else is refused with :class:`~feasibly.errors.NotEstimable`
naming the reason: no metal or more than one (non-ionic or mixed-cation compositions), a
remainder that is no anion of the table or several anions, a non-integer charge (mixed
valence when the element has fitted terms on both sides, otherwise charges that do not
balance), and a cation or anion without a fitted term from at least three training salts.
"""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass
from functools import cache
from typing import Any

from .._files import data_text
from ..errors import NotEstimable
from ..library.formula import parse_formula

__all__ = [
    "ANIONS",
    "IONIC_ORIGIN",
    "IonicEntropy",
    "IonicSplit",
    "ionic_entropy",
    "ionic_entropy_rule",
    "split_ionic",
]

IONIC_ORIGIN = "estimated (ionic contributions, fitted)"
METHOD = "ionic-contribution S°"

#: Anions the split recognises: name → (composition, charge magnitude).
ANIONS: dict[str, tuple[dict[str, int], int]] = {
    "O2-": ({"O": 1}, 2),
    "S2-": ({"S": 1}, 2),
    "F-": ({"F": 1}, 1),
    "Cl-": ({"Cl": 1}, 1),
    "Br-": ({"Br": 1}, 1),
    "I-": ({"I": 1}, 1),
    "OH-": ({"O": 1, "H": 1}, 1),
    "CO3 2-": ({"C": 1, "O": 3}, 2),
    "SO4 2-": ({"S": 1, "O": 4}, 2),
    "NO3-": ({"N": 1, "O": 3}, 1),
    "PO4 3-": ({"P": 1, "O": 4}, 3),
    "SiO3 2-": ({"Si": 1, "O": 3}, 2),
    "SiO4 4-": ({"Si": 1, "O": 4}, 4),
}

# Elements never taken as the cation: non-metals and the metalloids whose oxides and halides
# are molecular or covalent network solids, outside an ionic model (common practice, no source).
_NOT_CATIONS = frozenset("H He B C N O F Ne Si P S Cl Ar As Se Br Kr Te I Xe At Rn".split())
# Tolerance on counts read from a formula (counts are small integers or simple decimals).
_COUNT_TOL = 1e-9


@dataclass(frozen=True)
class IonicSplit:
    """A formula read as n cations M^z+ and m anions X: ``cation`` is e.g. ``'Fe3+'``."""

    formula: str
    element: str
    charge: int
    n: int
    anion: str
    m: int

    @property
    def cation(self) -> str:
        return f"{self.element}{self.charge}+" if self.charge != 1 else f"{self.element}+"


def _integer(x: float) -> int | None:
    r = round(x)
    return int(r) if abs(x - r) < _COUNT_TOL and r > 0 else None


def split_ionic(formula: str) -> IonicSplit:
    """Read ``formula`` as one cation element and one anion of :data:`ANIONS`, or refuse why.

    The cation charge follows from the anion charges; a non-integer charge is refused (the
    message says mixed valence or unbalanced; :func:`ionic_entropy` tells them apart from the
    fitted terms)."""
    parsed = parse_formula(formula)
    if parsed.charge:
        raise NotEstimable(formula, METHOD, ["it is charged; the method is for neutral salts"])
    els = dict(parsed.elements)
    metals = sorted(el for el in els if el not in _NOT_CATIONS)
    if not metals:
        raise NotEstimable(
            formula, METHOD, ["it has no metal cation: a non-ionic (molecular or covalent) solid"]
        )
    if len(metals) > 1:
        raise NotEstimable(
            formula,
            METHOD,
            [
                f"it has more than one cation element ({', '.join(metals)}); the fitted terms "
                "are for salts of one cation"
            ],
        )
    el = metals[0]
    n = _integer(els.pop(el))
    if not els:
        raise NotEstimable(formula, METHOD, ["it is an element, not a salt; use its library entry"])
    if n is None:
        raise NotEstimable(formula, METHOD, ["it is not a salt of whole-numbered ions"])
    matches = []
    for name, (comp, q) in ANIONS.items():
        if set(comp) != set(els):
            continue
        ratios = {els[k] / comp[k] for k in comp}
        if len(ratios) == 1 and (m := _integer(ratios.pop())) is not None:
            matches.append((name, m, q))
    if len(matches) != 1:
        rest = "".join(f"{k}{v:g}" for k, v in sorted(els.items()))
        raise NotEstimable(
            formula,
            METHOD,
            [
                f"the part besides {el} ({rest}) is not a whole number of one anion of the "
                f"method ({', '.join(ANIONS)}); mixed anions, hydrates, carbides, nitrides and "
                "the like are outside it"
            ],
        )
    anion, m, q = matches[0]
    z = m * q / n
    if abs(z - round(z)) > _COUNT_TOL:
        raise _NonIntegerCharge(formula, el, z, m * q, n)
    return IonicSplit(formula, el, round(z), n, anion, m)


class _NonIntegerCharge(NotEstimable):
    """The anions' charge shared over the cations is not a whole number."""

    def __init__(self, formula: str, element: str, z: float, total: int, n: int) -> None:
        self.element, self.z = element, z
        reason = (
            f"the anions carry {total}− for {n} {element}, a non-integer charge {z:.3g}+ per "
            f"{element}: the charges do not balance with one {element} ion (a mixed-valence "
            "compound, or a formula that is not a salt)"
        )
        super().__init__(formula, METHOD, [reason], [element])


@cache
def ionic_entropy_rule() -> dict[str, Any]:
    """The fitted method's uncertainty rule and calibration figures (shipped JSON)."""
    return dict(json.loads(data_text("ionic-entropy-uncertainty.json")))


@cache
def _terms() -> dict[str, dict[str, Any]]:
    rows = csv.DictReader(io.StringIO(data_text("ionic-entropy-contributions.csv")))
    return {
        r["term"]: {
            "kind": r["kind"],
            "s": float(r["s_J_per_mol_K"]),
            "compounds": int(r["compounds"]),
            "component": int(r["component"]),
        }
        for r in rows
    }


@dataclass(frozen=True)
class IonicEntropy:
    """S°(298.15 K) by fitted ionic contributions, its standard uncertainty and the terms."""

    formula: str
    S298: float
    u_S298: float
    split: IonicSplit
    terms: tuple[tuple[str, int, float, int], ...]  # (term, count, s per ion, training salts)
    rule: str

    def summary(self) -> dict[str, Any]:
        """A JSON-ready account: value, standard u, the terms and the rule."""
        return {
            "formula": self.formula,
            "method": IONIC_ORIGIN,
            "S298_J_per_mol_K": self.S298,
            "u_S298_J_per_mol_K": self.u_S298,
            "convention": "standard uncertainty (k = 1)",
            "terms": [
                {"ion": t, "count": c, "s_J_per_mol_K": s, "training_salts": k}
                for t, c, s, k in self.terms
            ],
            "rule": self.rule,
        }


def ionic_entropy(formula: str) -> IonicEntropy:
    """S°(298.15 K) of the ionic solid ``formula`` from the fitted contributions, or refuse."""
    minimum = int(ionic_entropy_rule()["min_training_salts"])
    table = _terms()
    try:
        sp = split_ionic(formula)
    except _NonIntegerCharge as exc:
        below = [z for z in _cation_charges(exc.element, table) if z < exc.z]
        above = [z for z in _cation_charges(exc.element, table) if z > exc.z]
        if below and above:
            raise NotEstimable(
                formula,
                METHOD,
                [
                    f"it is mixed-valence: the average charge {exc.z:.3g}+ of {exc.element} lies "
                    f"between fitted terms {exc.element}{max(below)}+ and {exc.element}"
                    f"{min(above)}+; the method takes one charge per cation"
                ],
                [exc.element],
            ) from None
        raise
    reasons, missing = [], []
    for ion in (sp.cation, sp.anion):
        term = table.get(ion)
        dropped = ionic_entropy_rule()["dropped_terms"].get(ion)
        if term is None and dropped:
            reasons.append(
                f"the library has {dropped} training salt{'s' * (dropped > 1)} with {ion}, "
                f"fewer than the {minimum} a fitted term needs"
            )
            missing.append(ion)
        elif term is None:
            reasons.append(f"no fitted term for {ion} (no training salt has it)")
            missing.append(ion)
        elif term["compounds"] < minimum:
            reasons.append(
                f"the term for {ion} rests on {term['compounds']} training salts "
                f"(fewer than {minimum})"
            )
            missing.append(ion)
    if not reasons and table[sp.cation]["component"] != table[sp.anion]["component"]:
        reasons.append(
            f"no training salt links {sp.cation} and {sp.anion} (their terms are fitted in "
            "separate sets, so their sum is not determined)"
        )
    if reasons:
        raise NotEstimable(formula, METHOD, reasons, missing)
    c, a = table[sp.cation], table[sp.anion]
    S = sp.n * c["s"] + sp.m * a["s"]
    rule = ionic_entropy_rule()
    u = _u(S, sp.n + sp.m, rule) * float(rule.get("class_factor", {}).get(sp.anion, 1.0))
    terms = (
        (sp.cation, sp.n, c["s"], c["compounds"]),
        (sp.anion, sp.m, a["s"], a["compounds"]),
    )
    return IonicEntropy(formula, float(S), u, sp, terms, str(rule["rule"]))


def _u(S: float, ions: int, rule: dict[str, Any]) -> float:
    """The standard uncertainty by the shipped rule (relative to S° or per ion)."""
    if rule["kind"] == "relative":
        return float(rule["u_rel"]) * abs(S)
    if rule["kind"] == "per_ion":
        return float(rule["u_per_ion"]) * ions
    msg = f"unknown uncertainty rule {rule['kind']!r} in ionic-entropy-uncertainty.json"
    raise ValueError(msg)


def _cation_charges(element: str, table: dict[str, dict[str, Any]]) -> list[int]:
    out = []
    for term, v in table.items():
        if v["kind"] == "cation" and term.rstrip("+").rstrip("0123456789") == element:
            digits = term.rstrip("+")[len(element) :]
            out.append(int(digits) if digits else 1)
    return out
