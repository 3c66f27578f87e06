"""Reaction equations: reading the text, checking and finding the balance, and choosing phases.

Equation text: terms separated by ``+``, sides by one of ``->``, ``=``, ``<=>``, ``→``, ``⇌``;
a coefficient before each formula (integer, decimal or fraction such as ``1/2``); an optional
phase label in parentheses after the formula: ``(g)``, ``(l)``, ``(s)`` or ``(cr)``, ``(aq)``, and
optionally a form after a comma (``(cr,calcite)``). A species given without a phase takes the
stable phase at each temperature (lowest G°); an explicit phase is respected.

Identity: a formula must be written as the library writes it (``C2H5OH``, ``CH3COOH``). A formula
the library does not hold is refused, never read as another compound of the same elements: the
message lists the library's compounds of that composition (formula, name, CAS number, phases).
A species may also be named in braces, by name or CAS number, anywhere a formula may stand:
``{ethanol}``, ``2 {64-17-5}(l)``, ``{acetic acid} + {ethanol} -> ...``. Inside the braces any
text but a brace is allowed; the CAS number's check digit is verified.

>>> str(Reaction.parse("{methanol}(g) -> CO + 2 H2"))
'CH3OH(g) -> CO + 2 H2'
"""

from __future__ import annotations

import math
import re
from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from functools import reduce

import numpy as np

from .._limits import MAX_EQUATION_CHARS, MAX_NUMBER_DIGITS
from ..errors import (
    AmbiguousBalance,
    FeasiblyError,
    OutsideDataRange,
    ReactionSyntaxError,
    UnbalancedReaction,
    UnknownSpecies,
    excerpt,
)
from ..library.catalogue import Library, default_library
from ..library.formula import parse_formula, pretty_formula
from ..library.species import Species

__all__ = [
    "Reaction",
    "ReactionTerm",
    "describe_compound",
    "parse_equation",
    "resolve_species",
    "split_phase_label",
]

_ARROW = re.compile(r"\s*(<=>|<->|⇌|->|→|=>|=)\s*")
_PHASE_WORDS = {
    "g": "g",
    "gas": "g",
    "l": "l",
    "liq": "l",
    "liquid": "l",
    "s": "cr",
    "cr": "cr",
    "c": "cr",
    "solid": "cr",
    "aq": "aq",
}
_COEF = re.compile(r"^\s*(\d+/\d+|\d*\.\d+|\d+)(?:\s+|(?=[A-Z(\[{]))")
# A species named in braces: {ethyl acetate}, {141-78-6}. Braces never occur in formulas.
_BRACED = re.compile(r"\{([^{}]*)\}")
_CAS = re.compile(r"^(\d{2,7})-(\d{2})-(\d)$")
_LABEL = re.compile(r"\(([a-z][a-z0-9\-]*(?:\s*,\s*[A-Za-z0-9][A-Za-z0-9\-]*)?)\)$")
# The largest coefficient accepted: real equations stay below a few hundred, and float64 element
# balances stay exact far beyond this.
_MAX_COEFFICIENT = 1e6
# Isotope notation: superscript mass numbers (¹³CO2) anywhere.
_ISOTOPE = re.compile(r"[⁰¹²³⁴⁵⁶⁷⁸⁹]")
_ISOTOPE_ADVICE = (
    "a number of two or more digits is written directly against a formula (e.g. 13CO2): "
    "feasibly has no isotope-labelled species, so for a coefficient write it with a space "
    "('13 CO2'); isotope labels (13C, ¹³C) are not supported"
)
# Balance tolerance on element counts: exact for rational coefficients; 1e-9 absorbs decimal
# element counts of non-stoichiometric phases.
_BALANCE_TOL = 1e-9


@dataclass(frozen=True)
class ReactionTerm:
    """One species of an equation: signed coefficient (products > 0) and its candidate entries."""

    coefficient: Fraction
    text: str
    formula: str
    phase: str | None
    form: str | None
    candidates: tuple[Species, ...]
    #: Formula units of each candidate per formula unit of the term: 1 for the term's own
    #: entries, 1/2 for S2(g) standing for S, 1/8 for S8(g). Empty means all 1.
    scales: tuple[float, ...] = ()

    def scale(self, k: int) -> float:
        """Amount of candidate ``k`` per amount of this term (1 unless an allotrope)."""
        return self.scales[k] if self.scales else 1.0

    def own_candidates(self) -> tuple[Species, ...]:
        """The candidates of the term's own formula (its allotropes of other molecularity left
        out): what a stream of this species, counted in its own formula units, may be."""
        return tuple(sp for k, sp in enumerate(self.candidates) if self.scale(k) == 1.0)

    def scale_array(self) -> np.ndarray:
        """:meth:`scale` of every candidate, as an array."""
        return np.array([self.scale(k) for k in range(len(self.candidates))])

    @property
    def nu(self) -> float:
        """Stoichiometric number: negative for reactants, positive for products."""
        return float(self.coefficient)

    def identity(self) -> dict[str, str | None]:
        """What the term was read as: text as written, library formula, name and CAS number."""
        name = _common_name(self.candidates)
        cas = next((sp.cas for sp in self.candidates if sp.cas), None)
        return {"written": self.text, "formula": self.formula, "name": name, "cas": cas}

    def label(self) -> str:
        """Formula with its phase label as written in the balanced equation."""
        if self.phase is None and self.form is None:
            return self.formula
        inside = ",".join(x for x in (self.phase, self.form) if x)
        return f"{self.formula}({inside})"


def _common_name(entries: Sequence[Species]) -> str | None:
    """The name most of a formula's entries carry ("water" over "ice"), first met on a tie."""
    names = Counter(n for sp in entries for n in sp.names[:1])
    return names.most_common(1)[0][0] if names else None


def _split_terms(side: str, text: str) -> list[str]:
    pieces = [p for p in re.split(r"\s+\+\s+", side.strip())]
    out: list[str] = []
    for piece in pieces:
        # "H2+O2" with no spaces: a '+' followed by a formula start (or a coefficient and a
        # formula) separates terms; a trailing '+' is a charge, also before a phase label
        # ("H+(aq)": a '(' followed by a lowercase letter opens a label, not a formula).
        out.extend(
            re.split(
                r"(?<=[\w)\]}])\+(?=\s*(?:\d*\.?\d+(?:/\d+)?\s*)?(?:[A-Z\[{]|\((?![a-z])))",
                piece,
            )
        )
    terms = [t.strip() for t in out]
    if any(not t or t.startswith("+") for t in terms):
        raise ReactionSyntaxError(text, "an empty term (two '+' in a row, or '+' at an end)")
    return terms


def split_phase_label(term: str, context: str | None = None) -> tuple[str, str | None, str | None]:
    """Split ``CaCO3(cr,calcite)`` into formula, phase and form (``(s)`` reads as ``cr``).

    A trailing group that starts with a lowercase letter is a label; ``(OH)2`` is part of the
    formula. ``context`` (the whole equation) goes into the error message.

    >>> split_phase_label("CaCO3(s,calcite)")
    ('CaCO3', 'cr', 'calcite')
    >>> split_phase_label("Ca(OH)2")
    ('Ca(OH)2', None, None)
    """
    term = term.strip()
    lab = _LABEL.search(term)
    if not lab:
        return term, None, None
    bits = [b.strip() for b in lab.group(1).split(",")]
    if bits[0] in _PHASE_WORDS:
        phase: str | None = _PHASE_WORDS[bits[0]]
        form = bits[1] if len(bits) > 1 else None
    elif len(bits) == 1:
        phase, form = None, bits[0]
    else:
        raise ReactionSyntaxError(
            context or term, f"phase label ({lab.group(1)}) is not one of g, l, s, cr, aq"
        )
    return term[: lab.start()].strip(), phase, form


def parse_equation(text: str) -> list[tuple[Fraction, str, str | None, str | None, int]]:
    """Split equation text into (coefficient, formula, phase, form, side) with side −1 or +1.

    >>> parse_equation("CaCO3(s) -> CaO(s) + CO2(g)")[2]
    (Fraction(1, 1), 'CO2', 'g', None, 1)
    """
    if not isinstance(text, str):
        raise ReactionSyntaxError(str(type(text).__name__), "the equation must be text")
    if not text.strip():
        raise ReactionSyntaxError(text, "the equation is empty")
    if len(text) > MAX_EQUATION_CHARS:
        raise ReactionSyntaxError(
            text, f"longer than {MAX_EQUATION_CHARS} characters; no real equation needs that many"
        )
    if _ISOTOPE.search(text):
        raise ReactionSyntaxError(text, _ISOTOPE_ADVICE)
    # Names in braces may hold '+', '=', '-' or parentheses: set them aside while splitting.
    named: list[str] = []

    def _hide(m: re.Match[str]) -> str:
        named.append(m.group(0))
        return f"{{{len(named) - 1}}}"

    masked = _BRACED.sub(_hide, text.strip())
    if any(c in "{}" for c in re.sub(r"\{\d+\}", "", masked)):
        raise ReactionSyntaxError(text, "a '{' or '}' has no partner; write {name} or {CAS}")
    parts = _ARROW.split(masked)
    if len(parts) != 3:
        raise ReactionSyntaxError(
            text, "write exactly one arrow between reactants and products (->, =, <=> or →)"
        )
    left, _, right = parts
    if not left.strip() or not right.strip():
        raise ReactionSyntaxError(text, "both sides of the arrow need at least one species")
    out = []
    for side_text, sign in ((left, -1), (right, 1)):
        for term in _split_terms(side_text, text):
            coef = Fraction(1)
            m = _COEF.match(term)
            if m:
                digits = m.group(1)
                if sum(c.isdigit() for c in digits) > MAX_NUMBER_DIGITS:
                    raise ReactionSyntaxError(
                        text, f"a coefficient has more than {MAX_NUMBER_DIGITS} digits"
                    )
                if not m.group(0)[m.end(1) - m.start(0) :] and digits.isdigit() and len(digits) > 1:
                    # "13CO2": a number of two or more digits written against a formula reads as
                    # a mass number as often as a coefficient; say which is meant.
                    raise ReactionSyntaxError(text, _ISOTOPE_ADVICE)
                try:
                    coef = Fraction(digits)
                except (ValueError, ZeroDivisionError):
                    raise ReactionSyntaxError(text, f"bad coefficient {digits!r}") from None
                if coef > _MAX_COEFFICIENT:
                    raise ReactionSyntaxError(
                        text,
                        f"coefficient {digits} is above {_MAX_COEFFICIENT:g}; "
                        "divide all coefficients by a common factor",
                    )
                term = term[m.end() :].strip()
            if coef <= 0:
                raise ReactionSyntaxError(
                    text, f"coefficient {coef} of {excerpt(term)} must be positive"
                )
            term, phase, form = split_phase_label(term, text)
            if not term:
                raise ReactionSyntaxError(text, "a coefficient or phase label has no formula")
            term = re.sub(r"\{(\d+)\}", lambda m: named[int(m.group(1))], term)
            if "{" in term and not _BRACED.fullmatch(term):
                raise ReactionSyntaxError(
                    text, f"{term!r}: a name in braces stands alone, e.g. 2 {{ethanol}}(l)"
                )
            out.append((coef, term, phase, form, sign))
    return out


def _cas_ok(cas: str) -> bool:
    """True when a CAS registry number's check digit is right (CAS's published rule)."""
    m = _CAS.match(cas)
    if not m:
        return False
    digits = (m.group(1) + m.group(2))[::-1]
    return sum((i + 1) * int(d) for i, d in enumerate(digits)) % 10 == int(m.group(3))


def describe_compound(library: Library, formula: str) -> str:
    """One compound of the library for a message: formula (name, CAS; phases).

    >>> describe_compound(default_library(), "C2H5OH")
    'C2H5OH (ethanol, CAS 64-17-5; phases g, l)'
    """
    entries = library.by_formula(formula)
    name = _common_name(entries) or "no name in the data"
    cas = next((sp.cas for sp in entries if sp.cas), None)
    phases = ", ".join(
        dict.fromkeys(sp.phase if not sp.form else f"{sp.phase},{sp.form}" for sp in entries)
    )
    return f"{formula} ({name}, CAS {cas or 'not recorded'}; phases {phases})"


def _resolve_named(library: Library, inner: str) -> list[Species]:
    """Entries for a {name} or {CAS} term: every phase of the one formula it names."""
    q = inner.strip()
    if not q:
        raise UnknownSpecies("{}", [], detail="The braces are empty; write a name or CAS number.")
    if _CAS.match(q):
        if not _cas_ok(q):
            raise UnknownSpecies(
                "{" + q + "}",
                [],
                detail="This is not a valid CAS registry number (its check digit does not match);"
                " check the digits.",
            )
        named = library.by_cas(q)
        how = f"CAS number {q}"
    else:
        named = library.by_name(q)
        how = f"the name {q!r}"
    formulas = list(dict.fromkeys(sp.formula for sp in named))
    if not formulas:
        near = list(dict.fromkeys(sp.formula for sp in library.search(q, 5)))
        raise UnknownSpecies(
            "{" + q + "}",
            near,
            detail=f"No compound of the data library has {how}; it may be missing from the "
            "data (add it in a species file).",
            heading="Nearest in the library",
            candidates=[describe_compound(library, f) for f in near],
        )
    if len(formulas) > 1:
        raise UnknownSpecies(
            "{" + q + "}",
            formulas,
            detail=f"Several compounds have {how}; write the formula of the one you mean.",
            heading="Compounds",
            candidates=[describe_compound(library, f) for f in formulas],
        )
    return library.by_formula(formulas[0])


def resolve_species(
    library: Library, formula: str, phase: str | None, form: str | None, text: str
) -> tuple[str, tuple[Species, ...]]:
    """Library entries a term may use, and the library's own formula text for it.

    A formula is taken only as the library writes it; a different text with the same elements
    may be another isomer, so it is refused with the library's compounds of that composition.
    """
    named = _BRACED.fullmatch(formula.strip())
    hits = _resolve_named(library, named.group(1)) if named else library.by_formula(formula)
    if not hits and not named and (library.by_name(formula) or library.by_cas(formula)):
        # A bare name or CAS number ("water") names one compound, as in braces.
        hits = _resolve_named(library, formula)
    if not hits:
        try:
            parse_formula(formula)
        except FeasiblyError as exc:
            raise UnknownSpecies(formula, library.suggest(formula), detail=str(exc)) from None
        alike = list(dict.fromkeys(sp.formula for sp in library.same_composition(formula)))
        if len(alike) > 1:
            raise UnknownSpecies(
                formula,
                alike,
                detail="Several species share this composition, and feasibly does not guess "
                "which compound a formula means; write the library formula of the one you "
                "mean, or its name or CAS number in braces (e.g. {ethanol}).",
                heading="Compounds of this composition in the library",
                candidates=[describe_compound(library, f) for f in alike],
            )
        if alike:
            raise UnknownSpecies(
                formula,
                alike,
                detail=f"The library has no compound written {formula}. The one compound of the "
                "same elements is written differently and may be another isomer, so it is not "
                "used in its place: if it is the compound you mean, write its formula or its "
                "name or CAS number in braces; if not, your compound is missing from the data "
                "(add it in a species file).",
                heading="The library's compound of the same elements",
                candidates=[describe_compound(library, f) for f in alike],
            )
        raise UnknownSpecies(formula, library.suggest(formula))
    if phase is None and any(sp.phase != "aq" for sp in hits):
        # An aqueous species is a solute at 1 mol/kg, not a phase the pure substance turns
        # into: it is used only when the equation says (aq) (or nothing else exists).
        hits = [sp for sp in hits if sp.phase != "aq"]
    chosen = [
        sp
        for sp in hits
        if (phase is None or sp.phase == phase) and (form is None or sp.form == form)
    ]
    if not chosen:
        have = ", ".join(sp.id for sp in hits)
        want = ",".join(x for x in (phase, form) if x)
        raise UnknownSpecies(
            f"{hits[0].formula}({want})", [sp.id for sp in hits], detail=f"The library has {have}."
        )
    if (
        phase is None
        and all(sp.phase == "g" and sp.origin == "library" for sp in chosen)
        and not any(sp.raw.get("phase_points") for sp in chosen if sp.raw)
        and sum(chosen[0].elements.values()) > 1
    ):
        # Only a gas entry, and no tabulated melting or boiling point to say that the compound is
        # a gas where it is used: an oxide such as NiO or FeO would silently become its vapour.
        raise UnknownSpecies(
            formula,
            [sp.id for sp in chosen],
            detail=f"The data library has only the gas {chosen[0].id} for it, and no tabulated "
            "melting or boiling point to show it is a gas at your temperatures. Write "
            f"{chosen[0].id} if you mean the gas; if you mean a solid or liquid, add that phase "
            "in a species file.",
        )
    return hits[0].formula, tuple(chosen)


def _allotropes(library: Library, own: Sequence[Species]) -> list[tuple[Species, float]]:
    """Other molecular forms of an element written without a phase: S2(g) and S8(g) for S.

    Only for a one-element neutral formula that has a condensed entry (so it names the element
    as a substance, like S, P or C, not a radical like O or H). Each comes with the amount of
    it per amount of the term (1/2 for S2 standing for S), so its G° is compared per atom.
    """
    first = own[0]
    if len(first.elements) != 1 or first.charge or all(sp.phase == "g" for sp in own):
        return []
    ((element, count),) = first.elements.items()
    out = []
    for sp in library:
        if sp.formula == first.formula or sp.charge or set(sp.elements) != {element}:
            continue
        if sp.phase == "aq":  # a solute is not a molecular form of the pure element
            continue
        out.append((sp, count / sp.elements[element]))
    return sorted(out, key=lambda x: x[0].id)


def _check_ion_conventions(terms: Sequence[ReactionTerm], text: str) -> None:
    """Refuse a reaction that mixes gas ions with aqueous ions: their ΔfH° rest on different
    conventions (thermal electron for gas ions, H⁺(aq) = 0 for aqueous ones), so a sum over
    both would be wrong by the convention's offset."""
    gas_ion = [
        t.label() for t in terms if any(sp.charge and sp.phase == "g" for sp in t.candidates)
    ]
    aq_ion = [
        t.label() for t in terms if any(sp.charge and sp.phase == "aq" for sp in t.candidates)
    ]
    if gas_ion and aq_ion:
        raise ReactionSyntaxError(
            text,
            f"gas ions ({', '.join(gas_ion)}) and aqueous ions ({', '.join(aq_ion)}) rest on "
            "different conventions and cannot be combined in one reaction; label the ions (aq) "
            "for a solution reaction or (g) for a gas-phase one",
        )


def _as_fraction(x: float) -> Fraction:
    return Fraction(x).limit_denominator(10**6)


def _null_space(matrix: list[list[Fraction]]) -> list[list[Fraction]]:
    """Basis of the rational null space of a small matrix (Gauss–Jordan, exact)."""
    rows = [row[:] for row in matrix]
    n = len(rows[0]) if rows else 0
    pivots: list[int] = []
    r = 0
    for c in range(n):
        p = next((i for i in range(r, len(rows)) if rows[i][c] != 0), None)
        if p is None:
            continue
        rows[r], rows[p] = rows[p], rows[r]
        piv = rows[r][c]
        rows[r] = [v / piv for v in rows[r]]
        for i in range(len(rows)):
            if i != r and rows[i][c] != 0:
                factor = rows[i][c]
                rows[i] = [a - factor * b for a, b in zip(rows[i], rows[r], strict=True)]
        pivots.append(c)
        r += 1
        if r == len(rows):
            break
    free = [c for c in range(n) if c not in pivots]
    basis = []
    for f in free:
        v = [Fraction(0)] * n
        v[f] = Fraction(1)
        for i, pc in enumerate(pivots):
            v[pc] = -rows[i][f]
        basis.append(v)
    return basis


class Reaction:
    """A balanced reaction over library entries.

    >>> rxn = Reaction.parse("CaCO3 -> CaO + CO2")
    >>> str(rxn)
    'CaCO3 -> CaO + CO2'
    >>> str(Reaction.parse("C3H8 + O2 -> CO2 + H2O", balance=True))
    'C3H8 + 5 O2 -> 3 CO2 + 4 H2O'
    """

    def __init__(self, terms: Sequence[ReactionTerm], text: str, library: Library) -> None:
        self.terms = tuple(terms)
        self.text = text
        self.library = library

    # --- construction -------------------------------------------------------------------------
    @classmethod
    def parse(cls, text: str, library: Library | None = None, balance: bool = False) -> Reaction:
        """Read equation text; check its balance, or find it when ``balance`` is true."""
        library = library or default_library()
        raw = parse_equation(text)
        terms = []
        for coef, formula, phase, form, sign in raw:
            lib_formula, candidates = resolve_species(library, formula, phase, form, text)
            scales: tuple[float, ...] = ()
            if phase is None and form is None:
                extra = _allotropes(library, candidates)
                if extra:
                    scales = (1.0,) * len(candidates) + tuple(x for _, x in extra)
                    candidates = candidates + tuple(sp for sp, _ in extra)
            terms.append(
                ReactionTerm(coef * sign, formula, lib_formula, phase, form, candidates, scales)
            )
        merged: dict[tuple[str, str | None, str | None], ReactionTerm] = {}
        for t in terms:
            key = (t.formula, t.phase, t.form)
            if key in merged:
                raise ReactionSyntaxError(
                    text,
                    f"{t.label()} appears more than once; write it once with its net coefficient",
                )
            merged[key] = t
        _check_ion_conventions(terms, text)
        rxn = cls(terms, text, library)
        if balance:
            return rxn.balanced()
        imbalance = rxn.imbalance()
        if imbalance:
            raise UnbalancedReaction(text, imbalance)
        return rxn

    def composition(self) -> tuple[list[str], np.ndarray]:
        """Element (and 'charge') names and the matrix of counts, one column per term."""
        elements: list[str] = []
        for t in self.terms:
            for el in t.candidates[0].elements:
                if el not in elements:
                    elements.append(el)
        has_charge = any(t.candidates[0].charge for t in self.terms)
        rows = [*elements, "charge"] if has_charge else elements
        matrix = np.zeros((len(rows), len(self.terms)))
        for j, t in enumerate(self.terms):
            sp = t.candidates[0]
            for i, el in enumerate(elements):
                matrix[i, j] = sp.elements.get(el, 0.0)
            if has_charge:
                matrix[-1, j] = sp.charge
        return rows, matrix

    def imbalance(self) -> dict[str, float]:
        """Element (and charge) excess of products over reactants; empty when balanced."""
        rows, matrix = self.composition()
        nu = np.array([t.nu for t in self.terms])
        excess = matrix @ nu
        return {el: float(x) for el, x in zip(rows, excess, strict=True) if abs(x) > _BALANCE_TOL}

    def element_table(self) -> list[tuple[str, float, float]]:
        """Per element: (element, atoms on the reactant side, atoms on the product side)."""
        rows, matrix = self.composition()
        nu = np.array([t.nu for t in self.terms])
        left = matrix @ np.where(nu < 0, -nu, 0.0)
        right = matrix @ np.where(nu > 0, nu, 0.0)
        return [(el, float(a), float(b)) for el, a, b in zip(rows, left, right, strict=True)]

    def balanced(self) -> Reaction:
        """The same species with the smallest whole-number coefficients that balance them.

        The coefficients come from the null space of the element matrix; the species' sides come
        from the equation as written. Refuses when no balance exists or when several independent
        ones do (the species then describe more than one reaction).
        """
        rows, matrix = self.composition()
        sides = [1 if t.nu > 0 else -1 for t in self.terms]
        mat = [
            [_as_fraction(matrix[i, j]) * sides[j] for j in range(len(self.terms))]
            for i in range(len(rows))
        ]
        basis = _null_space(mat)
        names = [t.label() for t in self.terms]
        if not basis:
            raise AmbiguousBalance(
                self.text,
                "no coefficients balance these species; check the "
                "formulas or add the missing species",
            )
        if len(basis) > 1:
            raise AmbiguousBalance(
                self.text,
                f"these species balance in {len(basis)} independent ways, so the coefficients are "
                "not determined by the elements alone; give the coefficients yourself",
            )
        v = basis[0]
        if all(x <= 0 for x in v):
            v = [-x for x in v]
        if any(x == 0 for x in v):
            idle = [n for n, x in zip(names, v, strict=True) if x == 0]
            raise AmbiguousBalance(
                self.text, f"{', '.join(idle)} cannot take part in a balance of these species"
            )
        if any(x < 0 for x in v):
            wrong = [n for n, x in zip(names, v, strict=True) if x < 0]
            raise AmbiguousBalance(
                self.text,
                f"a balance exists only with {', '.join(wrong)} on the other side of the arrow",
            )
        lcm = reduce(lambda a, b: a * b // math.gcd(a, b), (x.denominator for x in v), 1)
        ints = [int(x * lcm) for x in v]
        g = reduce(math.gcd, ints)
        coefs = [Fraction(i // g) for i in ints]
        terms = [
            ReactionTerm(c * s, t.text, t.formula, t.phase, t.form, t.candidates, t.scales)
            for c, s, t in zip(coefs, sides, self.terms, strict=True)
        ]
        return Reaction(terms, self.text, self.library)

    # --- text ---------------------------------------------------------------------------------
    def _side(self, sign: int, pretty: bool, html: bool) -> str:
        parts = []
        for t in self.terms:
            if (t.nu > 0) != (sign > 0):
                continue
            c = abs(t.coefficient)
            coef = "" if c == 1 else (str(c.numerator) if c.denominator == 1 else str(c))
            label = t.label()
            if pretty:
                label = pretty_formula(t.formula, html=html) + label[len(t.formula) :]
            parts.append(f"{coef} {label}".strip())
        return " + ".join(parts)

    def equation(self, pretty: bool = False, html: bool = False) -> str:
        """The balanced equation as text; ``pretty`` uses subscripts, ``html`` HTML tags."""
        arrow = " → " if pretty else " -> "
        return self._side(-1, pretty, html) + arrow + self._side(1, pretty, html)

    def __str__(self) -> str:
        return self.equation()

    def __repr__(self) -> str:
        return f"<Reaction {self.equation()}>"

    # --- phases -------------------------------------------------------------------------------
    def valid_range(self) -> tuple[float, float]:
        """Widest [Tmin, Tmax] in which every term has data (in some allowed phase), in K."""
        lo = max(min(sp.T_range[0] for sp in t.candidates) for t in self.terms)
        hi = min(max(sp.T_range[1] for sp in t.candidates) for t in self.terms)
        return lo, hi

    def phase_plan(self, T: np.ndarray) -> list[np.ndarray]:
        """For each term, the index into its candidates of the phase used at each T.

        The phase used is the allowed candidate with the lowest G°(T) among those whose data
        covers T. Raises :class:`OutsideDataRange` where no candidate covers a temperature.
        """
        T = np.atleast_1d(np.asarray(T, dtype=float))
        plan = []
        for t in self.terms:
            fixed = t.phase is not None or t.form is not None
            if len(t.candidates) == 1:
                try:
                    t.candidates[0].check_range(T)
                except OutsideDataRange as exc:
                    raise OutsideDataRange(
                        exc.species, exc.T_K, exc.T_min, exc.T_max, phase_given=fixed
                    ) from None
                plan.append(np.zeros(T.shape, dtype=np.intp))
                continue
            g = np.full((len(t.candidates), *T.shape), np.inf)
            for k, sp in enumerate(t.candidates):
                mask = sp.covers(T)
                if np.any(mask):
                    g[k, mask] = t.scale(k) * sp.gibbs(T[mask])
            best = np.argmin(g, axis=0)
            uncovered = ~np.isfinite(np.min(g, axis=0))
            if np.any(uncovered):
                bad = float(T[uncovered][0])
                lo = min(sp.T_range[0] for sp in t.candidates)
                hi = max(sp.T_range[1] for sp in t.candidates)
                raise OutsideDataRange(
                    t.label()
                    + (" (the phases allowed)" if fixed else " (every phase in the data)"),
                    bad,
                    lo,
                    hi,
                    phase_given=fixed,
                )
            plan.append(best)
        return plan

    def phase_changes(self, T_min: float, T_max: float) -> list[tuple[str, float, str, str]]:
        """Phase changes of terms given without a fixed phase between T_min and T_max.

        Returns (term, T in K, phase before, phase after), located to 0.01 K by bisection.
        """
        out = []
        grid = np.linspace(T_min, T_max, 801)
        for term, idx in zip(self.terms, self.phase_plan(grid), strict=True):
            if len(term.candidates) == 1:
                continue
            for i in np.nonzero(np.diff(idx))[0]:
                a, b = grid[i], grid[i + 1]
                ia, ib = idx[i], idx[i + 1]
                one = Reaction([term], self.text, self.library)
                while b - a > 0.01:  # 0.01 K: far finer than any tabulated transition temperature
                    mid = 0.5 * (a + b)
                    if one.phase_plan(np.array([mid]))[0][0] == ia:
                        a = mid
                    else:
                        b = mid
                out.append(
                    (
                        term.label(),
                        float(0.5 * (a + b)),
                        term.candidates[ia].id,
                        term.candidates[ib].id,
                    )
                )
        return sorted(out, key=lambda x: x[1])

    def metastable(self, T: np.ndarray) -> list[tuple[str, float, str]]:
        """Terms whose fixed phase is not the stable one somewhere in T: (used, T, stable id)."""
        T = np.atleast_1d(np.asarray(T, dtype=float))
        out = []
        plan = self.phase_plan(T)
        for term, idx in zip(self.terms, plan, strict=True):
            if term.phase is None and term.form is None:
                continue
            aq = any(sp.phase == "aq" for sp in term.candidates)
            # An aqueous solute and a pure phase are not rival phases (different standard
            # states, and ions on different conventions): never compared.
            own = self.library.by_formula(term.formula)
            others = [
                (sp, 1.0) for sp in own if sp not in term.candidates and (sp.phase == "aq") == aq
            ]
            if not aq:
                others += _allotropes(self.library, own)
            if not others:
                continue
            used_g = np.array(
                [term.candidates[k].gibbs(np.array([x]))[0] for k, x in zip(idx, T, strict=True)]
            )
            for sp, scale in others:
                mask = sp.covers(T)
                if not np.any(mask):
                    continue
                lower = np.zeros(T.shape, dtype=bool)
                # 1 J/mol: below any data uncertainty; avoids flagging coexistence at a transition.
                lower[mask] = scale * sp.gibbs(T[mask]) < used_g[mask] - 1.0
                if np.any(lower):
                    k = int(np.argmax(lower))
                    out.append((term.candidates[idx[k]].id, float(T[k]), sp.id))
        return out

    def gas_change(self, T: np.ndarray) -> np.ndarray:
        """Net change in moles of gas per mole of reaction at each T (phases as used there)."""
        T = np.atleast_1d(np.asarray(T, dtype=float))
        total = np.zeros(T.shape)
        for term, idx in zip(self.terms, self.phase_plan(T), strict=True):
            is_gas = np.array([sp.phase == "g" for sp in term.candidates])
            total += term.nu * (is_gas * term.scale_array())[idx]
        return total

    def species_used(self) -> list[Species]:
        """Every library entry the reaction may use, once each."""
        seen: dict[str, Species] = {}
        for t in self.terms:
            for sp in t.candidates:
                seen.setdefault(sp.id, sp)
        return list(seen.values())
