"""Formula helpers: source spellings to chemists' ones, compositions, Hill order, molar mass."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from chemicals.elements import nested_formula_parser

from .errors import need

Composition = Mapping[str, float]


def mech_formula(name: str) -> str:
    """NASA upper-case element spellings -> chemists' spellings."""
    return name.replace("CL", "Cl").replace("AL", "Al")


def clean_elements(comp: Mapping[str, Any]) -> tuple[dict[str, Any], int]:
    """Elements (whole numbers as int, sorted) and charge of a NASA composition (E: electrons)."""
    el = {k: float(v) for k, v in comp.items() if k != "E"}
    out = {k: (int(v) if v.is_integer() else v) for k, v in el.items()}
    charge = -int(comp.get("E", 0))
    return dict(sorted(out.items())), charge


def same_comp(a: Composition, b: Composition) -> bool:
    """Whether two compositions name the same elements in the same amounts."""
    return set(a) == set(b) and all(abs(float(a[k]) - float(b[k])) < 1e-9 for k in a)


def hill(elements: Composition) -> str:
    """Hill-order formula of a composition (C, H first when C is present; else alphabetical)."""
    keys = sorted(elements)
    if "C" in elements:
        keys = (
            ["C"]
            + (["H"] if "H" in elements else [])
            + sorted(k for k in elements if k not in "CH" or len(k) > 1)
        )
        keys = [k for i, k in enumerate(keys) if k not in keys[:i]]
    out = ""
    for k in keys:
        n = elements[k]
        out += k + ("" if n == 1 else (str(int(n)) if float(n).is_integer() else str(n)))
    return out


def plain(formula: str) -> str:
    """Formula string to something chemicals.simple_formula_parser understands."""
    return formula if "(" not in formula else hill(nested_formula_parser(formula))


def molar_mass(elements: Composition, els: Mapping[str, Mapping[str, Any]]) -> float:
    """Molar mass in g/mol from the atomic weights of ``elements.json``, rounded to 1e-6."""
    need(elements, "a species without elements")
    return round(sum(els[s]["atomic_weight"] * n for s, n in elements.items()), 6)
