"""Issue 17, equations: bounded, linear-time reading with short messages; no overflow, no
silent reading of a mass number as a coefficient."""

from __future__ import annotations

import pytest

import feasibly
from feasibly.errors import FeasiblyError, ReactionSyntaxError
from feasibly.thermo import Reaction


def test_long_digit_run_in_equation_is_refused_quickly(no_hang) -> None:
    # Reaction.parse("H2+" + "1"*20000 + "x -> H2") took 15 s.
    with no_hang(), pytest.raises(ReactionSyntaxError, match="longer than 2000 characters"):
        Reaction.parse("H2+" + "1" * 20000 + "x -> H2")


def test_digit_run_below_the_length_limit_is_refused_quickly(no_hang) -> None:
    with no_hang(), pytest.raises(FeasiblyError):
        Reaction.parse("H2+" + "1" * 1900 + "x -> H2")


def test_error_message_quotes_a_bounded_excerpt() -> None:
    # 1 MB in gave a 1 MB message.
    with pytest.raises(FeasiblyError) as info:
        Reaction.parse("X" * 1_000_000 + " -> H2")
    assert len(str(info.value)) < 400


def test_unknown_species_message_is_bounded() -> None:
    with pytest.raises(FeasiblyError) as info:
        Reaction.parse("H2 + " + "Xq" * 900 + " -> H2")
    assert len(str(info.value)) < 600


def test_huge_coefficient_is_refused_not_an_overflow() -> None:
    # Coefficients ≥ 1e309 raised OverflowError.
    with pytest.raises(ReactionSyntaxError, match="more than 17 digits"):
        Reaction.parse("1" + "0" * 310 + " H2 + O2 -> H2O")
    with pytest.raises(ReactionSyntaxError, match="above 1e\\+06"):
        Reaction.parse("2000000 H2 + 1000000 O2 -> 2000000 H2O")


def test_isotope_like_prefix_is_refused_with_advice() -> None:
    # "13CO2" read 13 as a coefficient.
    with pytest.raises(ReactionSyntaxError, match="'13 CO2'"):
        Reaction.parse("C + O2 -> 13CO2")
    with pytest.raises(ReactionSyntaxError, match="isotope"):
        Reaction.parse("¹³C + O2 -> CO2")
    # A one-digit glued coefficient is still a coefficient, and a spaced one of any size.
    assert str(Reaction.parse("2H2 + O2 -> 2H2O")) == "2 H2 + O2 -> 2 H2O"
    assert str(Reaction.parse("12 H2 + 6 O2 -> 12 H2O")) == "12 H2 + 6 O2 -> 12 H2O"


def test_equation_that_is_not_text_is_refused() -> None:
    with pytest.raises(ReactionSyntaxError, match="must be text"):
        Reaction.parse(["H2", "->", "H2"])  # type: ignore[arg-type]


def test_assess_refuses_text_temperature_lists_by_name() -> None:
    with pytest.raises(FeasiblyError, match="temperature"):
        feasibly.assess("MgCO3 -> MgO + CO2", T="[2, 400] K")
