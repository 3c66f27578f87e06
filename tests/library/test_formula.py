"""Formula parsing and display. Expected compositions are the formulas' own definitions."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from feasibly import ReactionSyntaxError, parse_formula, pretty_formula
from feasibly.library.formula import element_table


@pytest.mark.parametrize(
    ("text", "elements", "charge"),
    [
        ("H2O", {"H": 2, "O": 1}, 0),
        ("Ca(OH)2", {"Ca": 1, "O": 2, "H": 2}, 0),
        ("Al2(SO4)3", {"Al": 2, "S": 3, "O": 12}, 0),
        ("CuSO4·5H2O", {"Cu": 1, "S": 1, "O": 9, "H": 10}, 0),
        ("CuSO4*5H2O", {"Cu": 1, "S": 1, "O": 9, "H": 10}, 0),
        ("[CN]-", {"C": 1, "N": 1}, -1),
        ("NH4+", {"N": 1, "H": 4}, 1),
        ("SO4-2", {"S": 1, "O": 4}, -2),
        ("SO4^2-", {"S": 1, "O": 4}, -2),
        ("Fe+3", {"Fe": 1}, 3),
        ("C0.98Nb", {"C": 0.98, "Nb": 1}, 0),
        ("n-C4H10", {"C": 4, "H": 10}, 0),
        ("c-C3H6", {"C": 3, "H": 6}, 0),
        ("CH3COOH", {"C": 2, "H": 4, "O": 2}, 0),
        ("K4[Fe(CN)6]", {"K": 4, "Fe": 1, "C": 6, "N": 6}, 0),
    ],
)
def test_compositions(text: str, elements: dict[str, float], charge: int) -> None:
    f = parse_formula(text)
    assert dict(f.elements) == pytest.approx(elements)
    assert set(f.elements) == set(elements)
    assert f.charge == charge


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("", "empty"),
        ("Xx2", "'Xx' is not an element"),
        ("Ca(OH2", "not closed"),
        ("CaOH)2", "closing bracket"),
        ("H2 O", "spaces"),
        ("H2$O", "unexpected character"),
        ("2", "a number with no formula"),
        ("CuSO4.5H2O", "ambiguous"),
    ],
)
def test_bad_formulas_say_what_is_wrong(text: str, fragment: str) -> None:
    with pytest.raises(ReactionSyntaxError, match="Cannot read") as info:
        parse_formula(text)
    assert fragment in str(info.value)


def test_pretty_formula() -> None:
    assert pretty_formula("Ca(OH)2") == "Ca(OH)₂"
    assert pretty_formula("NH4+") == "NH₄⁺"
    assert pretty_formula("SO4^2-", html=True) == "SO<sub>4</sub><sup>2−</sup>"


def test_element_table_has_iupac_weights() -> None:
    table = element_table()
    # IUPAC standard atomic weights (abridged, 2021), from memory: H 1.008, C 12.011, O 15.999.
    assert table["C"]["atomic_weight"] == pytest.approx(12.011, abs=2e-3)
    assert table["O"]["atomic_weight"] == pytest.approx(15.999, abs=2e-3)
    assert table["H"]["atomic_weight"] == pytest.approx(1.008, abs=1e-3)
    assert len(table) >= 90


@given(st.text(max_size=30))
def test_random_text_raises_only_project_errors(text: str) -> None:
    try:
        parse_formula(text)
    except ReactionSyntaxError:
        pass
