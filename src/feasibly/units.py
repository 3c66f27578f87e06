"""Units at the edges: user quantities in, plain SI floats out (and back for display).

Inside the kernel every number is a float or float array in SI (K, Pa, J/mol, J/(mol·K)). This
module is the only place that turns text or pint Quantities into those floats, and back into
the display units people read (K, °C, °F). A bare number is
refused wherever its unit would be a guess (temperatures, pressures, energies).
"""

from __future__ import annotations

import re
from functools import cache
from typing import TYPE_CHECKING, Any

import numpy as np

from ._limits import MAX_QUANTITY_CHARS
from .errors import InvalidTemperature, UnitError, excerpt

if TYPE_CHECKING:
    import pint

__all__ = [
    "MAX_MOLAR_ENERGY_J",
    "MAX_PRESSURE_PA",
    "MIN_PRESSURE_PA",
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
    # pint and its registry load on first use (about 0.4 s): the common spellings below are
    # converted without it, so a command-line screen never pays for the registry.
    import pint

    reg: pint.UnitRegistry = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    reg.formatter.default_format = "~P"
    return reg


def __getattr__(name: str) -> Any:
    # ``ureg`` and ``Q_`` are module attributes built on first access (PEP 562).
    if name == "ureg":
        return _registry()
    if name == "Q_":
        return _registry().Quantity
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


if TYPE_CHECKING:
    ureg: pint.UnitRegistry
    Q_: Any

# Temperature spellings chemists type that pint does not read as intended ("C" alone is coulomb).
_ALIASES = {"°C": "degC", "°F": "degF", "℃": "degC", "C": "degC", "F": "degF", "°K": "K"}
# One number at the start of a quantity text: sign, digits, optional fraction and exponent. Each
# part is a run of one character class, so matching is linear in the length of the text.
_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")

#: Pressures below this are refused: 10^-30 Pa at 300 K is less than one molecule per cubic
#: kilometre, and p/p° would leave the normal range of float64 (its logarithm would fail).
MIN_PRESSURE_PA = 1e-30
#: Pressures above this are refused: 10^9 Pa (10 kbar) is far beyond any ideal-gas treatment,
#: which is the model feasibly applies to gases.
MAX_PRESSURE_PA = 1e9
#: Molar energies beyond ±10^8 J/mol (10^5 kJ/mol, a hundred times the largest ΔrG° of the
#: shipped reactions' scale) are refused as typing errors rather than used as thresholds.
MAX_MOLAR_ENERGY_J = 1e8

_ANY = "'1 K'"
_EXAMPLES = {
    "temperature": "'800 degC' or '1073.15 K'",
    "pressure": "'0.3 bar' or '30 kPa'",
    "molar energy": "'-10 kJ/mol'",
}


def _unit(text: Any, value: Any, kind: str) -> pint.Unit:
    """The unit named by ``text`` (one unit expression, no number), or a UnitError."""
    import pint

    if isinstance(text, pint.Unit):
        return text
    if not isinstance(text, str):
        raise UnitError(value, kind, "the unit must be text such as 'K', 'degC', 'bar'")
    name = text.strip()
    if len(name) > MAX_QUANTITY_CHARS:
        raise UnitError(
            value, kind, f"the unit text is longer than {MAX_QUANTITY_CHARS} characters"
        )
    name = _ALIASES.get(name, name)
    if not name:
        raise UnitError(value, kind, f"a unit is needed, e.g. {_EXAMPLES.get(kind, _ANY)}")
    if name[0].isdigit() or name[0] in "+-.[(,":
        raise UnitError(
            value,
            kind,
            "write exactly one number followed by its unit "
            f"(no spaces, commas or lists inside the number), e.g. {_EXAMPLES.get(kind, _ANY)}",
        )
    try:
        unit = _registry().parse_units(name)
    except Exception as exc:
        raise UnitError(
            value, kind, f"unit {excerpt(name)} not understood ({type(exc).__name__})"
        ) from None
    return unit


def _magnitude(magnitude: Any, value: Any, kind: str) -> np.ndarray:
    """A real, non-empty float array from a user's magnitude (number, list or array)."""
    if isinstance(magnitude, str) and _NUMBER.fullmatch(magnitude.strip()):
        magnitude = float(magnitude)  # ("650", "degC"): one number written as text
    if isinstance(magnitude, (str, bytes)) or isinstance(magnitude, bool):
        raise UnitError(value, kind, "the magnitude must be a number or a list of numbers")
    try:
        arr = np.asarray(magnitude, dtype=float)
    except (TypeError, ValueError, OverflowError):
        raise UnitError(
            value, kind, "the magnitude must be a number or a list of numbers"
        ) from None
    if arr.size == 0:
        raise UnitError(value, kind, "no number given (an empty list)")
    return arr


#: Spellings converted without pint, as (factor, offset): SI = value * factor + offset, with
#: the factor and offset applied only where they are not 1 and 0. These are the operations pint
#: itself performs for these units (tests/test_units.py compares both to the bit).
_EXACT: dict[str, dict[str, tuple[float, float]]] = {
    "temperature": {"K": (1.0, 0.0), "kelvin": (1.0, 0.0), "degC": (1.0, 273.15)},
    "pressure": {
        "Pa": (1.0, 0.0),
        "kPa": (1000.0, 0.0),
        "MPa": (1e6, 0.0),
        "bar": (100000.0, 0.0),
        "mbar": (100.0, 0.0),
        "atm": (101325.0, 0.0),
    },
    "molar energy": {"J/mol": (1.0, 0.0), "kJ/mol": (1000.0, 0.0)},
}


def _exact(value: Any, kind: str) -> np.ndarray | None:
    """SI floats for a common spelling of ``kind``, or None to let pint read ``value``.

    The same grammar as the pint path (one number, then one unit; the same aliases, length
    limit and magnitude checks), so both give the same numbers and the same refusals.
    """
    table = _EXACT[kind]
    if isinstance(value, str):
        if len(value) > MAX_QUANTITY_CHARS:
            return None
        text = value.strip()
        number = _NUMBER.match(text)
        if number is None:
            return None
        name = text[number.end() :].strip()
        name = _ALIASES.get(name, name)
        if name not in table:
            return None
        x = np.asarray(float(number.group()))
    elif isinstance(value, tuple) and len(value) == 2 and isinstance(value[1], str):
        name = value[1].strip()
        name = _ALIASES.get(name, name)
        if name not in table:
            return None
        x = _magnitude(value[0], value, kind)
    else:
        return None
    factor, offset = table[name]
    if factor != 1.0:
        x = x * factor
    if offset != 0.0:
        x = x + offset
    return x


def _as_quantity(value: Any, kind: str) -> pint.Quantity:
    import pint

    Q_ = _registry().Quantity
    if isinstance(value, pint.Quantity):
        return Q_(_magnitude(value.magnitude, value, kind), value.units)
    if isinstance(value, tuple) and len(value) == 2:
        magnitude, unit = value
        return Q_(_magnitude(magnitude, value, kind), _unit(unit, value, kind))
    if isinstance(value, str):
        if len(value) > MAX_QUANTITY_CHARS:
            raise UnitError(value, kind, f"longer than {MAX_QUANTITY_CHARS} characters")
        text = value.strip()
        number = _NUMBER.match(text)
        if number is None:
            raise UnitError(
                value,
                kind,
                f"write one number followed by its unit, e.g. {_EXAMPLES.get(kind, _ANY)}",
            )
        q = Q_(float(number.group()), _unit(text[number.end() :], value, kind))
        if q.dimensionless:
            raise UnitError(value, kind, f"a unit is needed, e.g. {_EXAMPLES.get(kind, _ANY)}")
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
    >>> from feasibly.units import Q_
    >>> to_kelvin(Q_([300, 400], "K")).tolist()
    [300.0, 400.0]
    """
    kelvin = _exact(value, "temperature")
    if kelvin is None:
        import pint

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
    pa = _exact(value, "pressure")
    if pa is None:
        import pint

        q = _as_quantity(value, "pressure")
        try:
            pa = np.asarray(q.to("Pa").magnitude, dtype=float)
        except pint.errors.DimensionalityError:
            raise UnitError(value, "pressure", f"{q.units} is not a pressure unit") from None
    if not np.all(np.isfinite(pa)) or np.any(pa <= 0.0):
        raise UnitError(value, "pressure", "pressures must be positive and finite")
    if np.any(pa < MIN_PRESSURE_PA) or np.any(pa > MAX_PRESSURE_PA):
        raise UnitError(
            value,
            "pressure",
            f"outside {MIN_PRESSURE_PA:g} Pa to {MAX_PRESSURE_PA:g} Pa, the range in which "
            "feasibly's ideal-gas treatment is usable",
        )
    return pa


def to_energy_per_mol(value: Any) -> np.ndarray:
    """Molar energy in J/mol as a float array; refuses bare numbers.

    >>> float(to_energy_per_mol("-4 kJ/mol"))
    -4000.0
    """
    energy = _exact(value, "molar energy")
    if energy is None:
        import pint

        q = _as_quantity(value, "molar energy")
        try:
            energy = np.asarray(q.to("J/mol").magnitude, dtype=float)
        except pint.errors.DimensionalityError:
            raise UnitError(
                value, "molar energy", f"{q.units} is not an energy per amount"
            ) from None
    if not np.all(np.isfinite(energy)) or np.any(np.abs(energy) > MAX_MOLAR_ENERGY_J):
        raise UnitError(
            value,
            "molar energy",
            f"must be a finite number within ±{MAX_MOLAR_ENERGY_J / 1000:g} kJ/mol",
        )
    return energy


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
    q = _registry().Quantity(np.asarray(T_K, dtype=float), "K")
    return np.asarray(q.to(TEMPERATURE_UNITS[unit]).magnitude, dtype=float)
