"""Every project error keeps its message, type and fields through pickle on every protocol (as in
pint's testsuite/test_errors.py), and bad arguments share one message form (sklearn's
_param_validation wording: "The 'x' parameter of f must be …. Got … instead.")."""

from __future__ import annotations

import inspect
import pickle

import pytest

import feasibly
from feasibly import errors
from feasibly.errors import InvalidInput, excerpt

#: One instance of every error class, built with its own signature.
INSTANCES = [
    errors.FeasiblyError("plain message"),
    errors.InvalidInput("confidence", "assess_uncertainty", "a probability above 0.5", 1.5),
    errors.UnknownSpecies("CH3COOC2H5", ["ethyl acetate (C4H8O2)"], "detail"),
    errors.ReactionSyntaxError("A -> ", "empty side"),
    errors.UnbalancedReaction("H2 -> H", {"H": -1.0}),
    errors.AmbiguousBalance("A -> B", "no solution"),
    errors.OutsideDataRange("CaCO3(cr)", 1500.0, 298.15, 1200.0),
    errors.MissingCondensedPhase("FeO", "solid", [1000.0], "Tm 1650.2 K", "FeO(g)"),
    errors.InvalidTemperature("-5 K", "at or below absolute zero"),
    errors.UnitError("900", "temperature", "a bare number is ambiguous"),
    errors.InvalidUncertainty("u must not be negative"),
    errors.InvalidUncertainty("u", "Override", "a non-negative number", -3.0),
    errors.DataFileError("mine.toml", ["entry 0 (X): field cp: missing"]),
    errors.RecordError("run.json", ["field seed: missing"]),
    errors.EquilibriumNotConverged("equilibrate", ["T = 900 K, P = 1 bar"], "hint"),
    errors.ExportError("a figure as PNG/SVG", "no Chromium browser was found", "Install one."),
    errors.NotEstimable("C1CC1=C", "group additivity", ["no group C[a]"], ["C[a]"]),
]


def test_every_error_class_is_covered() -> None:
    classes = {
        obj
        for _, obj in inspect.getmembers(errors, inspect.isclass)
        if issubclass(obj, errors.FeasiblyError)
    }
    assert classes == {type(e) for e in INSTANCES}


@pytest.mark.parametrize("protocol", range(pickle.HIGHEST_PROTOCOL + 1))
@pytest.mark.parametrize("error", INSTANCES, ids=lambda e: type(e).__name__)
def test_errors_round_trip_through_pickle(error: errors.FeasiblyError, protocol: int) -> None:
    back = pickle.loads(pickle.dumps(error, protocol=protocol))
    assert type(back) is type(error)
    assert str(back) == str(error)
    assert back.args == error.args
    assert vars(back) == vars(error)


def test_every_error_is_a_feasibly_error_and_its_builtin() -> None:
    assert issubclass(errors.UnknownSpecies, KeyError)
    for cls in (errors.InvalidInput, errors.UnitError, errors.InvalidTemperature):
        assert issubclass(cls, ValueError) and issubclass(cls, errors.FeasiblyError)
    assert issubclass(errors.UnitError, InvalidInput)
    assert issubclass(errors.InvalidTemperature, InvalidInput)
    assert issubclass(errors.InvalidUncertainty, InvalidInput)


def test_invalid_input_names_parameter_range_and_value() -> None:
    with pytest.raises(InvalidInput) as info:
        feasibly.assess_uncertainty("MgCO3 -> MgO + CO2", T="700 K", confidence=1.5)
    assert str(info.value) == (
        "The 'confidence' parameter of assess_uncertainty must be a probability above 0.5 and "
        "below 1 (e.g. 0.95 for 95 %). Got 1.5 instead."
    )
    assert (info.value.parameter, info.value.function, info.value.value) == (
        "confidence",
        "assess_uncertainty",
        1.5,
    )


def test_the_same_confidence_check_everywhere() -> None:
    """assess_uncertainty and conversion_assessment used to accept different ranges."""
    for call in (
        lambda: feasibly.assess_uncertainty("MgCO3 -> MgO + CO2", T="700 K", confidence=0.5),
        lambda: feasibly.conversion_assessment(
            "CO + H2O -> CO2 + H2", "900 K", "CO:1, H2O:1", "CO", "50%", "1 bar", confidence=0.5
        ),
    ):
        with pytest.raises(InvalidInput, match=r"must be a probability above 0\.5 and below 1"):
            call()


def test_a_missing_temperature_is_named() -> None:
    with pytest.raises(InvalidInput, match="The 'T' parameter of assess must be a temperature"):
        feasibly.assess("CaCO3 -> CaO + CO2")


def test_messages_quote_a_bounded_excerpt() -> None:
    huge = "9" * 1_000_000
    assert len(excerpt(huge)) < 120
    with pytest.raises(InvalidInput) as info:
        feasibly.assess_uncertainty("MgCO3 -> MgO + CO2", T="700 K", confidence=huge)
    assert len(str(info.value)) < 300
