"""Issue 17, units and conditions: every quantity text is one number and one unit, read in
linear time; broken unit text, absurd values and impossible mixtures are refused by name."""

from __future__ import annotations

import pytest

from feasibly.conditions import read_feed, read_mole_fractions, read_temperatures, read_trials
from feasibly.errors import FeasiblyError, InvalidInput, InvalidUncertainty, UnitError
from feasibly.units import to_energy_per_mol, to_kelvin, to_pascal


def test_spaced_digits_are_not_multiplied() -> None:
    # "2 650 K" was read by pint as 2 × 650 K = 1300 K.
    with pytest.raises(UnitError, match="exactly one number followed by its unit"):
        to_kelvin("2 650 K")


def test_bracket_list_is_not_a_product() -> None:
    # "[2, 400] K" became 800 K.
    with pytest.raises(UnitError, match="one number followed by its unit"):
        to_kelvin("[2, 400] K")


def test_unit_without_number_is_refused() -> None:
    # "kelvin" alone was 1 K.
    with pytest.raises(UnitError, match="one number followed by its unit"):
        to_kelvin("kelvin")


@pytest.mark.parametrize("text", ["1/0 K", "/", "[", "1 K/", "1 (K", "5 **", "300 K K K("])
def test_broken_unit_text_is_a_unit_error(text: str) -> None:
    # ZeroDivisionError, AssertionError and TokenError came out of pint for these.
    with pytest.raises(UnitError) as info:
        to_kelvin(text)
    assert repr(text)[:10] in str(info.value)


def test_long_quantity_text_is_refused_with_a_short_message(no_hang) -> None:
    # The trailing-unit pattern was quadratic, and the message quoted the whole input.
    text = "1" + " " * 50_000 + "x"
    with no_hang(), pytest.raises(UnitError) as info:
        to_kelvin(text)
    assert len(str(info.value)) < 300 and "longer than 200 characters" in str(info.value)


def test_subnormal_pressure_is_refused_not_a_math_error() -> None:
    # p = 5e-324 Pa made p/p° zero and math.log failed ("math domain error").
    with pytest.raises(UnitError, match="outside 1e-30 Pa"):
        to_pascal("5e-324 Pa")


def test_empty_temperature_list_is_refused() -> None:
    # T=([], "K") returned an empty grid.
    with pytest.raises(UnitError, match="empty list"):
        to_kelvin(([], "K"))


def test_non_finite_or_absurd_energies_are_refused() -> None:
    for value in ("1e999 J/mol", (float("nan"), "J/mol"), "1e300 kJ/mol"):
        with pytest.raises(UnitError, match="molar energy"):
            to_energy_per_mol(value)


def test_ordinary_quantities_still_read() -> None:
    assert float(to_kelvin("800 degC")) == pytest.approx(1073.15)
    assert float(to_kelvin("800°C")) == pytest.approx(1073.15)
    assert float(to_kelvin(("650", "degC"))) == pytest.approx(923.15)
    assert float(to_pascal("0.3 bar")) == pytest.approx(30000.0)
    assert float(to_energy_per_mol("-4.2e1 kJ/mol")) == pytest.approx(-42000.0)


def test_mole_fractions_summing_above_one_are_refused() -> None:
    # --y fractions adding to 3.6 were accepted.
    with pytest.raises(UnitError, match=r"add up to 3\.6"):
        read_mole_fractions("1 bar", {"CO2": 0.9, "H2O": 0.9, "N2": 0.9, "O2": 0.9})
    assert read_mole_fractions("2 bar", {"CO2": 0.5, "N2": 0.5}) == {"CO2": 1e5, "N2": 1e5}


def test_absurd_feed_amount_is_refused() -> None:
    # A feed of 1e308 mol gave 50 % conversion instead of 28.6 %.
    with pytest.raises(UnitError, match="feed amount of CH4"):
        read_feed({"CH4": 1e308, "H2O": 1.0})


def test_sample_cap_names_the_memory() -> None:
    # --samples 500000000 tried to allocate 56 GiB.
    with pytest.raises(InvalidUncertainty) as info:
        read_trials(500_000_000, "samples", "assess_uncertainty", n_inputs=15)
    assert "10,000,000" in str(info.value) and "GiB" in str(info.value)


def test_samples_given_as_text_are_refused() -> None:
    # samples="1000" gave a TypeError.
    with pytest.raises(InvalidInput, match="whole number"):
        read_trials("1000", "samples", "assess_uncertainty")


def test_points_are_capped() -> None:
    # --points 1000000 ran for minutes.
    with pytest.raises(InvalidInput, match="10,001"):
        read_temperatures(None, ("300 K", "1000 K"), 1_000_000, "assess")


def test_range_ends_must_be_single_temperatures() -> None:
    with pytest.raises(FeasiblyError):
        read_temperatures(None, (([300, 400], "K"), "1000 K"), 5, "assess")
