"""Units at the edges: user quantities in, plain SI floats out (and back for display).

Inside the kernel every number is a float or float array in SI (K, Pa, J/mol, J/(mol·K)). This
module is the only place that turns text or pint Quantities into those floats, and back into
the display units people read (K, °C, °F). A bare number is
refused wherever its unit would be a guess (temperatures, pressures, energies).
"""

from __future__ import annotations

import re
from functools import cache
from typing import Any

import numpy as np
import pint

from .errors import InvalidTemperature, UnitError

__all__ = [
    "Q_",
    "TEMPERATURE_UNITS",
    "from_kelvin",
    "to_energy_per_mol",
    "to_kelvin",
    "to_pascal",
    "ureg",
]


@cache
def _registry() -> pint.UnitRegistry:
    reg: pint.UnitRegistry = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    reg.formatter.default_format = "~P"
    return reg


ureg = _registry()
Q_ = ureg.Quantity

# Temperature spellings chemists type that pint does not read as intended ("C" alone is coulomb).
_ALIASES = {"°C": "degC", "°F": "degF", "℃": "degC", "C": "degC", "F": "degF", "°K": "K"}
_TRAILING_UNIT = re.compile(r"(?<=[\d\s])\s*(°C|°F|℃|°K|C|F)$")


def _as_quantity(value: Any, kind: str) -> pint.Quantity:
    if isinstance(value, pint.Quantity):
        return value
    if isinstance(value, tuple) and len(value) == 2:
        magnitude, unit = value
        unit = _ALIASES.get(str(unit).strip(), str(unit).strip())
        try:
            return Q_(np.asarray(magnitude, dtype=float), unit)
        except (pint.errors.PintError, ValueError, TypeError) as exc:
            raise UnitError(value, kind, f"unit {unit!r} not understood ({exc})") from None
    if isinstance(value, str):
        text = _TRAILING_UNIT.sub(lambda m: " " + _ALIASES[m.group(1)], value.strip())
        try:
            q: Any = Q_(text)
        except (pint.errors.PintError, ValueError, TypeError, AttributeError) as exc:
            raise UnitError(value, kind, f"could not read it ({exc})") from None
        if not isinstance(q, pint.Quantity) or q.dimensionless:
            raise UnitError(value, kind, "a unit is needed, e.g. '800 degC' or '1073.15 K'")
        return q
    raise UnitError(
        value,
        kind,
        "a bare number is ambiguous here; give a unit, e.g. '800 degC', (800, 'degC') or "
        "feasibly.Q_(800, 'degC')",
    )


def to_kelvin(value: Any) -> np.ndarray:
    """Temperature(s) in kelvin as a float array; refuses bare numbers and T ≤ 0 K.

    >>> float(to_kelvin("25 degC"))
    298.15
    >>> to_kelvin(Q_([300, 400], "K")).tolist()
    [300.0, 400.0]
    """
    q = _as_quantity(value, "temperature")
    try:
        kelvin = np.asarray(q.to("K").magnitude, dtype=float)
    except pint.errors.DimensionalityError:
        raise UnitError(value, "temperature", f"{q.units} is not a temperature unit") from None
    if not np.all(np.isfinite(kelvin)):
        raise InvalidTemperature(value, "not a finite number")
    if np.any(kelvin <= 0.0):
        raise InvalidTemperature(
            value, "at or below absolute zero; thermodynamic temperatures are above 0 K"
        )
    return kelvin


def to_pascal(value: Any) -> np.ndarray:
    """Pressure(s) in pascal as a float array; refuses bare numbers and p ≤ 0.

    >>> float(to_pascal("1 bar"))
    100000.0
    """
    q = _as_quantity(value, "pressure")
    try:
        pa = np.asarray(q.to("Pa").magnitude, dtype=float)
    except pint.errors.DimensionalityError:
        raise UnitError(value, "pressure", f"{q.units} is not a pressure unit") from None
    if not np.all(np.isfinite(pa)) or np.any(pa <= 0.0):
        raise UnitError(value, "pressure", "pressures must be positive and finite")
    return pa


def to_energy_per_mol(value: Any) -> np.ndarray:
    """Molar energy in J/mol as a float array; refuses bare numbers.

    >>> float(to_energy_per_mol("-4 kJ/mol"))
    -4000.0
    """
    q = _as_quantity(value, "molar energy")
    try:
        return np.asarray(q.to("J/mol").magnitude, dtype=float)
    except pint.errors.DimensionalityError:
        raise UnitError(value, "molar energy", f"{q.units} is not an energy per amount") from None


#: Display units of temperature offered in figures, widgets and reports, with their pint names.
TEMPERATURE_UNITS = {"K": "K", "°C": "degC", "°F": "degF"}


def from_kelvin(T_K: Any, unit: str) -> np.ndarray:
    """Temperatures in K shown in a display unit ("K", "°C" or "°F").

    >>> from_kelvin([273.15, 373.15], "°C").tolist()
    [0.0, 100.0]
    """
    if unit not in TEMPERATURE_UNITS:
        raise UnitError(
            unit, "display unit of temperature", f"use one of {', '.join(TEMPERATURE_UNITS)}"
        )
    q = Q_(np.asarray(T_K, dtype=float), "K")
    return np.asarray(q.to(TEMPERATURE_UNITS[unit]).magnitude, dtype=float)
