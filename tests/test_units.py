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
