"""Units at the edges. Conversions checked against the SI definitions (exact by definition)."""

from __future__ import annotations

import numpy as np
import pytest

from feasibly import Q_, InvalidTemperature, UnitError
from feasibly.units import to_energy_per_mol, to_kelvin, to_pascal


@pytest.mark.parametrize(
    ("value", "kelvin"),
    [
        ("800 degC", 1073.15),  # ITS-90: T/K = t/°C + 273.15 (exact by definition)
        ("800 °C", 1073.15),
        ("800C", 1073.15),
        ((800, "degC"), 1073.15),
        ("212 degF", 373.15),  # °F: T/K = (t/°F + 459.67) × 5/9 (exact by definition)
        (Q_(1000, "K"), 1000.0),
        ("1800 degR", 1000.0),
    ],
)
def test_temperatures(value: object, kelvin: float) -> None:
    assert float(to_kelvin(value)) == pytest.approx(kelvin, rel=1e-12)


def test_array_temperatures() -> None:
    np.testing.assert_allclose(to_kelvin(([25, 100], "degC")), [298.15, 373.15])


@pytest.mark.parametrize("value", [300, 300.0, np.float64(300), "300"])
def test_bare_numbers_are_refused(value: object) -> None:
    with pytest.raises(UnitError, match="unit"):
        to_kelvin(value)


@pytest.mark.parametrize("value", ["0 K", "-10 K", "-300 degC", (float("nan"), "K")])
def test_non_positive_kelvin_is_refused(value: object) -> None:
    with pytest.raises(InvalidTemperature):
        to_kelvin(value)


def test_wrong_kind_of_unit() -> None:
    with pytest.raises(UnitError, match="not a temperature unit"):
        to_kelvin("3 bar")
    with pytest.raises(UnitError, match="not a pressure unit"):
        to_pascal("3 K")
    with pytest.raises(UnitError, match="not an energy per amount"):
        to_energy_per_mol("3 kJ")


def test_pressures_and_energies() -> None:
    assert float(to_pascal("1 atm")) == 101325.0  # 1 atm = 101325 Pa exactly (definition)
    assert float(to_pascal("750 torr")) == pytest.approx(750 * 101325 / 760)
    assert float(to_energy_per_mol("1 kcal/mol")) == pytest.approx(4184.0)  # thermochemical cal
    with pytest.raises(UnitError):
        to_pascal("-1 bar")


# Spellings read without pint must give pint's own numbers to the bit (pint 0.24's registry is
# the reference: it applies the same factor or offset). Values: wide random magnitudes, typed
# decimals, and zero-crossing ones, in text and (magnitude, unit) form.
_FAST = [
    ("K", "K", to_kelvin),
    ("degC", "K", to_kelvin),
    ("°C", "K", to_kelvin),
    ("Pa", "Pa", to_pascal),
    ("kPa", "Pa", to_pascal),
    ("MPa", "Pa", to_pascal),
    ("bar", "Pa", to_pascal),
    ("mbar", "Pa", to_pascal),
    ("atm", "Pa", to_pascal),
    ("J/mol", "J/mol", to_energy_per_mol),
    ("kJ/mol", "J/mol", to_energy_per_mol),
]


@pytest.mark.parametrize(("unit", "si", "reader"), _FAST)
def test_common_spellings_match_pint_to_the_bit(unit: str, si: str, reader: object) -> None:
    from feasibly.units import _exact

    rng = np.random.default_rng(42)  # seeded: the same values every run
    values = np.concatenate(
        [
            rng.uniform(1.0, 3000.0, 200),
            np.round(rng.uniform(1.0, 3000.0, 200), 2),
            rng.uniform(1.0, 9.0, 50) * 10.0 ** rng.integers(-6, 7, 50),
        ]
    )
    pint_unit = {"°C": "degC"}.get(unit, unit)
    for v in values:
        text = f"{float(v)!r} {unit}"
        want = float(Q_(float(v), pint_unit).to(si).magnitude)
        kind = {"K": "temperature", "Pa": "pressure", "J/mol": "molar energy"}[si]
        fast = _exact(text, kind)
        assert fast is not None, text
        assert float(fast) == want, text
        if not _inside(kind, want):  # the range checks apply after either path
            with pytest.raises(UnitError, match=r"outside|within"):
                reader(text)  # type: ignore[operator]
            continue
        assert float(reader(text)) == want, text  # type: ignore[operator]
    want_all = Q_(values, pint_unit).to(si).magnitude
    keep = np.array([_inside(kind, w) for w in want_all])
    arr = reader((values[keep], unit))  # type: ignore[operator]
    np.testing.assert_array_equal(arr, want_all[keep])


def _inside(kind: str, si: float) -> bool:
    from feasibly.units import MAX_MOLAR_ENERGY_J, MAX_PRESSURE_PA, MIN_PRESSURE_PA

    if kind == "pressure":
        return MIN_PRESSURE_PA <= si <= MAX_PRESSURE_PA
    if kind == "molar energy":
        return abs(si) <= MAX_MOLAR_ENERGY_J
    return True


def test_other_spellings_still_go_through_pint() -> None:
    from feasibly.units import _exact

    assert _exact("212 degF", "temperature") is None  # pint's (t + 459.67)·5/9 path
    assert _exact("800 bar", "temperature") is None  # wrong kind: pint names the unit
    assert _exact("1e5 Pa·s", "pressure") is None
    with pytest.raises(UnitError, match="not a temperature unit"):
        to_kelvin("800 bar")
