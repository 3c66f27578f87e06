"""Chemical formulas: text → element counts and charge, and back to display text.

Accepted: element symbols with integer or decimal counts (``C0.98Nb``), groups in ``()`` or ``[]``
with multipliers (``Ca(OH)2``, ``[CN]-``), hydrate dots (``CuSO4·5H2O``, ``CuSO4*5H2O``; a
full stop is always a decimal point, and ``CuSO4.5H2O`` is refused as ambiguous), an isomer
prefix of lowercase letters and a hyphen (``n-C4H10``, ``c-C3H6``), and a trailing charge
(``Na+``, ``NH4+``, ``SO4-2``, ``SO4^2-``, ``Fe+3``). A lone trailing sign is a charge of one and
the digits before it stay counts (``NH4+`` is NH₄⁺), so a charge of more than one is written sign
first (``Fe+3``) or with a caret (``Fe^3+``).
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from functools import cache
from types import MappingProxyType
from typing import Any

from .._files import data_text
from .._limits import MAX_FORMULA_CHARS, MAX_NUMBER_DIGITS
from .._pickling import ProxyPickling
from ..errors import ReactionSyntaxError

__all__ = ["ParsedFormula", "element_table", "parse_formula", "pretty_formula"]


@dataclass(frozen=True)
class ParsedFormula(ProxyPickling):
    """Element counts and net charge of one formula."""

    text: str
    elements: MappingProxyType[str, float]
    charge: int

    def key(self) -> tuple[tuple[tuple[str, float], ...], int]:
        """Hashable composition: sorted (element, count) pairs and the charge."""
        return tuple(sorted(self.elements.items())), self.charge


@cache
def element_table() -> MappingProxyType[str, Any]:
    """Element symbol → {name, atomic_weight}, read once from the shipped ``elements.json``."""
    return MappingProxyType(json.loads(data_text("elements.json"))["elements"])


# The largest ionic charge accepted: real ions carry at most a few tens of charges.
_MAX_CHARGE = 100
_CHARGE = re.compile(r"(?:\^(?P<n1>\d*)(?P<s1>[+-])|(?P<s2>[+-])(?P<n2>\d*))$")
_TOKEN = re.compile(r"([A-Z][a-z]?)|(\d+(?:\.\d+)?)|([(\[])|([)\]])|(\s+)|(.)")
_PREFIX = re.compile(r"^(?:(?:[a-z]{1,5}|\d+(?:,\d+)*)-)+(?=[A-Z(\[])")


def _split_charge(text: str) -> tuple[str, int]:
    match = _CHARGE.search(text)
    if not match or match.start() == 0:
        return text, 0
    sign = match.group("s1") or match.group("s2")
    digits = match.group("n1") if match.group("s1") else match.group("n2")
    magnitude = int(digits) if digits else 1
    if magnitude > _MAX_CHARGE:
        raise ReactionSyntaxError(text, f"a charge of {magnitude} is above {_MAX_CHARGE}")
    return text[: match.start()], -magnitude if sign == "-" else magnitude


def _parse_body(body: str, original: str) -> dict[str, float]:
    symbols = element_table()
    stack: list[dict[str, float]] = [{}]
    last: dict[str, float] | None = None  # the group or atom a following number multiplies
    last_symbol: str | None = None
    for match in _TOKEN.finditer(body):
        symbol, number, opening, closing, space, other = match.groups()
        if symbol:
            if symbol not in symbols:
                raise ReactionSyntaxError(original, f"{symbol!r} is not an element symbol")
            stack[-1][symbol] = stack[-1].get(symbol, 0.0) + 1.0
            last, last_symbol = None, symbol
        elif number:
            count = float(number)
            if last is not None:  # multiplier after a closing bracket
                for el, n in last.items():
                    stack[-1][el] = stack[-1].get(el, 0.0) + n * (count - 1.0)
                last = None
            elif last_symbol is not None:
                stack[-1][last_symbol] += count - 1.0
                last_symbol = None
            else:
                raise ReactionSyntaxError(original, f"the number {number} multiplies nothing")
        elif opening:
            stack.append({})
            last, last_symbol = None, None
        elif closing:
            if len(stack) == 1:
                raise ReactionSyntaxError(original, "a closing bracket has no opening one")
            group = stack.pop()
            for el, n in group.items():
                stack[-1][el] = stack[-1].get(el, 0.0) + n
            last, last_symbol = group, None
        elif space:
            raise ReactionSyntaxError(original, "a formula cannot contain spaces")
        else:
            raise ReactionSyntaxError(original, f"unexpected character {other!r} in a formula")
    if len(stack) != 1:
        raise ReactionSyntaxError(original, "a bracket is not closed")
    return stack[0]


def parse_formula(text: str) -> ParsedFormula:
    """Read a formula into element counts and charge.

    >>> f = parse_formula("Ca(OH)2")
    >>> dict(f.elements), f.charge
    ({'Ca': 1.0, 'O': 2.0, 'H': 2.0}, 0)
    >>> parse_formula("SO4^2-").charge
    -2
    """
    original = text
    if not isinstance(text, str):
        raise ReactionSyntaxError(type(text).__name__, "a formula must be text")
    text = text.strip()
    if not text:
        raise ReactionSyntaxError(original, "empty formula")
    if len(text) > MAX_FORMULA_CHARS:
        raise ReactionSyntaxError(original, f"longer than {MAX_FORMULA_CHARS} characters")
    longest = max((len(run) for run in re.findall(r"\d+", text)), default=0)
    if longest > MAX_NUMBER_DIGITS:
        raise ReactionSyntaxError(original, f"a number has more than {MAX_NUMBER_DIGITS} digits")
    text = _PREFIX.sub("", text)
    if re.search(r"\d\.\d*H2O", text):
        raise ReactionSyntaxError(
            original,
            "ambiguous: '.' is a decimal point here; write a hydrate as CuSO4·5H2O or CuSO4*5H2O",
        )
    body, charge = _split_charge(text)
    totals: dict[str, float] = {}
    for part in re.split(r"[·*•]", body):
        lead = re.match(r"^(\d+(?:\.\d+)?)", part)
        factor = float(lead.group(1)) if lead else 1.0
        part = part[lead.end() :] if lead else part
        if not part:
            problem = "a number with no formula after it" if lead else "an empty part"
            raise ReactionSyntaxError(original, problem)
        for el, n in _parse_body(part, original).items():
            totals[el] = totals.get(el, 0.0) + factor * n
    totals = {el: n for el, n in totals.items() if n != 0.0}
    if not totals:
        raise ReactionSyntaxError(original, "no elements in the formula")
    return ParsedFormula(original, MappingProxyType(totals), charge)


_SUB = str.maketrans("0123456789.", "₀₁₂₃₄₅₆₇₈₉.")
_SUP = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")


def pretty_formula(text: str, html: bool = False) -> str:
    """Formula with subscript counts and superscript charge, as Unicode or HTML.

    >>> pretty_formula("CaCO3")
    'CaCO₃'
    >>> pretty_formula("SO4-2", html=True)
    'SO<sub>4</sub><sup>2−</sup>'
    """
    body, charge = _split_charge(text.strip())
    if html:
        out = re.sub(r"(?<=[A-Za-z)\]])(\d+(?:\.\d+)?)", r"<sub>\1</sub>", body)
    else:
        out = re.sub(r"(?<=[A-Za-z)\]])(\d+(?:\.\d+)?)", lambda m: m.group(1).translate(_SUB), body)
    if charge:
        magnitude = "" if abs(charge) == 1 else str(abs(charge))
        sign = "+" if charge > 0 else "−"
        out += (
            f"<sup>{magnitude}{sign}</sup>"
            if html
            else (magnitude + "+-"[charge < 0]).translate(_SUP)
        )
    return out
