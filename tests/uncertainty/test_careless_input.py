"""Issue 17, uncertainty: the override reader is linear and bounded; non-finite thresholds and
overrides, text sample counts and absurd trial counts are refused before any allocation."""

from __future__ import annotations

import pytest

from feasibly.errors import FeasiblyError, InvalidInput, InvalidUncertainty, UnitError
from feasibly.uncertainty import assess_uncertainty, parse_override

EQ = "MgCO3 -> MgO + CO2"


def test_override_with_long_whitespace_is_read_in_linear_time(no_hang) -> None:
    # parse_override("MgO(cr):dHf" + " "*4000 + "x") took 53 s (cubic backtracking).
    with no_hang(), pytest.raises(InvalidUncertainty, match="cannot read the override"):
        parse_override("MgO(cr):dHf" + " " * 3900 + "x")
    with no_hang(), pytest.raises(InvalidUncertainty, match="longer than 4000"):
        parse_override("MgO(cr):dHf" + " " * 4000 + "x")
    with no_hang():
        o = parse_override("MgO(cr):dHf = " + "1 ± " * 900 + "; r")
    assert (o.target, o.quantity) == ("MgO(cr)", "dHf")  # read once; its numbers checked on use
    with no_hang(), pytest.raises(FeasiblyError):
        assess_uncertainty(EQ, T="800 K", samples=1024, seed=1, overrides=[o])


def test_override_message_is_bounded() -> None:
    with pytest.raises(InvalidUncertainty) as info:
        parse_override("A:dHf" + "x" * 3000)
    assert len(str(info.value)) < 400


def test_override_forms_still_read() -> None:
    o = parse_override("MgCO3(cr):dHf = -1111.0 ± 4 kJ/mol k = 2 uniform; calorimetry")
    assert (o.target, o.value, o.uncertainty, o.coverage, o.distribution) == (
        "MgCO3(cr)",
        "-1111.0 kJ/mol",
        "4 kJ/mol",
        "k=2",
        "uniform",
    )
    o = parse_override("MgO(cr):S298 +/- 0.5 J/(mol*K) 95 %; r")
    assert (o.value, o.uncertainty, o.coverage) == (None, "0.5 J/(mol*K)", "95%")


@pytest.mark.parametrize("threshold", [(float("nan"), "J/mol"), "1e999 J/mol", "nan J/mol"])
def test_non_finite_threshold_is_refused(threshold: object) -> None:
    # A NaN or 1e999 threshold became a verdict.
    with pytest.raises(UnitError, match="molar energy"):
        assess_uncertainty(EQ, T="800 K", samples=1024, seed=1, threshold=threshold)


@pytest.mark.parametrize("value", ["nan", "inf", "1e999"])
def test_non_finite_override_is_refused(value: str) -> None:
    # A NaN override became a verdict.
    ov = parse_override(f"MgO(cr):dHf = {value} ± 1 kJ/mol; r")
    with pytest.raises(FeasiblyError):
        assess_uncertainty(EQ, T="800 K", samples=1024, seed=1, overrides=[ov])


def test_samples_as_text_are_refused() -> None:
    # samples="1000" raised TypeError.
    with pytest.raises(InvalidInput, match="'samples' parameter of assess_uncertainty"):
        assess_uncertainty(EQ, T="800 K", samples="1000")  # type: ignore[arg-type]


def test_huge_sample_count_is_refused_before_allocating() -> None:
    # --samples 500000000 tried to allocate 56 GiB; the message says what it would take.
    with pytest.raises(InvalidUncertainty) as info:
        assess_uncertainty(EQ, T="800 K", samples=500_000_000)
    assert "GiB of draws" in str(info.value) and "10,000,000" in str(info.value)


def test_trials_times_temperatures_is_capped() -> None:
    with pytest.raises(InvalidUncertainty, match="trials × temperatures"):
        assess_uncertainty(EQ, T_range=("500 K", "900 K"), points=10_001, samples=1_000_000, seed=1)


def test_adaptive_trial_limit_is_capped() -> None:
    with pytest.raises(InvalidUncertainty, match="max_trials"):
        assess_uncertainty(EQ, T="800 K", adaptive=True, max_trials=10**12)
