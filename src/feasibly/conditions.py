"""The one reader of the conditions a call is made at: temperatures, the standard-state pressure,
partial pressures, total pressure with mole fractions, feeds, and the settings of a call
(confidence level, number of points, trials, gas model).

Every entry point (the kernel's functions, the command line, the widgets and the records) reads
user conditions here, so "800 degC", ``(800, "degC")`` and ``Q_(800, "degC")`` mean the same
everywhere and a bad value gets the same :class:`~feasibly.errors.InvalidInput` message
everywhere. What comes out is plain SI floats (K, Pa, mol).

>>> read_temperatures("25 degC", None, 12, "assess")[0].tolist()
[298.15]
>>> read_confidence(1.5, "assess_uncertainty")
Traceback (most recent call last):
...
feasibly.errors.InvalidInput: The 'confidence' parameter of assess_uncertainty must be a \
probability above 0.5 and below 1 (e.g. 0.95 for 95 %). Got 1.5 instead.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from typing import Any

import numpy as np

from ._limits import (
    MAX_EQUATION_CHARS,
    MAX_POINTS,
    MAX_QUANTITY_CHARS,
    MAX_SAMPLES,
    MAX_TRIAL_TEMPERATURES,
    gib,
)
from .errors import InvalidInput, InvalidUncertainty, UnitError
from .units import to_kelvin, to_pascal

__all__ = [
    "GAS_MODELS",
    "MAX_FEED_AMOUNT",
    "ONE_ATM_PA",
    "STANDARD_PRESSURE_PA",
    "read_confidence",
    "read_conversion",
    "read_count",
    "read_feed",
    "read_gas_model",
    "read_molalities",
    "read_mole_fractions",
    "read_partial_pressures",
    "read_pressure",
    "read_probability",
    "read_standard_pressure",
    "read_states",
    "read_temperature",
    "read_temperature_list",
    "read_temperatures",
    "read_temperatures_as_given",
    "read_trials",
]

#: The standard-state pressure of feasibly's data (IUPAC: p° = 1 bar = 100 000 Pa).
STANDARD_PRESSURE_PA = 100000.0
#: The largest feed amount accepted. Only ratios of amounts matter; the equilibrium solver works
#: in float64, where amounts near 1e308 overflow (a feed of 1e308 mol once gave 50 % conversion).
MAX_FEED_AMOUNT = 1e12
#: The older standard-state pressure some tables use (1 atm = 101 325 Pa, exact by definition).
ONE_ATM_PA = 101325.0
#: The gas models on offer: ideal gas (φ = 1) and the Peng–Robinson equation of state.
GAS_MODELS = ("ideal", "peng-robinson")


def read_temperatures(
    T: Any, T_range: Any, points: Any, function: str
) -> tuple[np.ndarray, tuple[float, float] | None]:
    """User temperatures in K: either ``T`` (one or several) or ``T_range`` over ``points``.

    Returns the temperatures and the (low, high) range when one was given.
    """
    if T is None and T_range is None:
        raise InvalidInput(
            "T",
            function,
            "a temperature with a unit (e.g. '800 degC'), or give T_range = (low, high) instead",
            None,
        )
    if T is not None and T_range is not None:
        raise InvalidInput(
            "T_range", function, "left out when T is given (give one of them)", T_range
        )
    if T is not None:
        return read_temperature_list(T), None
    if not isinstance(T_range, (tuple, list)) or len(T_range) != 2:
        raise InvalidInput(
            "T_range", function, "two temperatures with units, e.g. ('600 K', '1000 K')", T_range
        )
    ends = [np.atleast_1d(to_kelvin(x)) for x in T_range]
    if any(e.size != 1 for e in ends):
        raise InvalidInput(
            "T_range", function, "two single temperatures, e.g. ('600 K', '1000 K')", T_range
        )
    lo, hi = (float(e[0]) for e in ends)
    if not hi > lo:
        raise InvalidInput("T_range", function, "(low, high) with high above low", T_range)
    n = read_count(points, "points", function, minimum=2, maximum=MAX_POINTS)
    return np.linspace(lo, hi, n), (lo, hi)


def read_temperature(value: Any) -> float:
    """Exactly one temperature, in K (``"800 degC"``, ``(800, "degC")``, a pint quantity)."""
    kelvin = np.atleast_1d(to_kelvin(value)).astype(float).ravel()
    if kelvin.size != 1:
        raise UnitError(value, "temperature", f"give one temperature here, not {kelvin.size}")
    return float(kelvin[0])


def read_temperature_list(value: Any) -> np.ndarray:
    """One or several temperatures, in K, as a flat float array."""
    return read_temperatures_as_given(value)[0]


def read_temperatures_as_given(value: Any) -> tuple[np.ndarray, bool]:
    """Temperatures in K as a flat float array, and whether a single temperature was given (so
    a caller can answer one value with one row and a list with a list)."""
    kelvin = np.asarray(to_kelvin(value), dtype=float)
    if kelvin.size > MAX_POINTS:
        raise InvalidInput(
            "T", "", f"at most {MAX_POINTS:,} temperatures", f"{kelvin.size:,} values"
        )
    return np.atleast_1d(kelvin).ravel(), kelvin.ndim == 0


def read_pressure(value: Any) -> float:
    """Exactly one pressure, in Pa."""
    pascal = np.atleast_1d(to_pascal(value)).astype(float).ravel()
    if pascal.size != 1:
        raise UnitError(value, "pressure", f"give one pressure here, not {pascal.size}")
    return float(pascal[0])


def read_states(T: Any, P: Any) -> tuple[np.ndarray, np.ndarray]:
    """Temperatures and pressures of a set of states, broadcast to one length (K, Pa).

    One pressure for all temperatures, one temperature for all pressures, or one of each per
    state.
    """
    T_K = read_temperature_list(T)
    P_Pa = np.atleast_1d(to_pascal(P)).astype(float).ravel()
    if P_Pa.size not in (1, T_K.size) and T_K.size != 1:
        raise UnitError(P, "pressure", f"give one pressure or one per temperature ({T_K.size})")
    size = max(T_K.size, P_Pa.size)
    return np.broadcast_to(T_K, size).copy(), np.broadcast_to(P_Pa, size).copy()


def read_standard_pressure(standard_pressure: Any) -> float:
    """The standard-state pressure in Pa: exactly 1 bar or 1 atm, nothing else."""
    if isinstance(standard_pressure, (int, float)) and standard_pressure in (
        STANDARD_PRESSURE_PA,
        ONE_ATM_PA,
    ):
        return float(standard_pressure)  # already in Pa, from inside the kernel
    p = float(np.squeeze(to_pascal(standard_pressure)))
    if math.isclose(p, STANDARD_PRESSURE_PA):
        return STANDARD_PRESSURE_PA
    if math.isclose(p, ONE_ATM_PA):
        return ONE_ATM_PA
    raise UnitError(standard_pressure, "standard pressure", "use 1 bar or 1 atm")


def read_partial_pressures(pressures: Mapping[str, Any] | None) -> dict[str, float]:
    """Partial pressures by species name, in Pa (each must carry a unit)."""
    if pressures is None:
        return {}
    if not isinstance(pressures, Mapping):
        raise InvalidInput(
            "partial_pressures",
            "",
            "a mapping of species to pressures, e.g. {'CO2': '0.15 bar'}",
            pressures,
        )
    return {str(name): read_pressure(p) for name, p in pressures.items()}


def read_mole_fractions(total: Any, fractions: Mapping[str, Any]) -> dict[str, float]:
    """Partial pressures in Pa from a total pressure and gas mole fractions.

    Each fraction is a number in (0, 1]; together they may not exceed 1 (the rest of the gas
    is whatever else is present).

    >>> read_mole_fractions("2 bar", {"CO2": 0.25})
    {'CO2': 50000.0}
    """
    p_total = np.atleast_1d(to_pascal(total))
    if p_total.size != 1:
        raise UnitError(total, "total pressure", "give one total pressure")
    out: dict[str, float] = {}
    for name, value in fractions.items():
        y = value
        if isinstance(y, str):
            try:
                y = float(y)
            except ValueError:
                raise UnitError(
                    value, f"mole fraction of {name}", "write a number in (0, 1]"
                ) from None
        if isinstance(y, bool) or not isinstance(y, (int, float, np.floating)):
            raise UnitError(value, f"mole fraction of {name}", "write a number in (0, 1]")
        if not (math.isfinite(y) and 0.0 < y <= 1.0):
            raise UnitError(value, f"mole fraction of {name}", "must be in (0, 1]")
        out[str(name)] = float(y)
    total_y = math.fsum(out.values())
    # 1e-9: fractions typed to 9 decimals that add to 1 are accepted despite rounding.
    if total_y > 1.0 + 1e-9:
        raise UnitError(
            ", ".join(f"{k}={v:g}" for k, v in out.items()),
            "set of mole fractions",
            f"they add up to {total_y:g}; mole fractions of one gas mixture add up to at most 1",
        )
    return {name: y * float(p_total[0]) for name, y in out.items()}


def read_partial_pressure_text(text: str, function: str) -> dict[str, float]:
    """Partial pressures written in one piece of text, ``"CO2=0.3 bar; H2O=0.1 bar"``, in Pa.

    Pairs are separated by ``;`` or ``,``; each pressure carries its unit.

    >>> read_partial_pressure_text("CO2=0.3 bar; H2O=20 kPa", "screen")
    {'CO2': 30000.0, 'H2O': 20000.0}
    """
    if not isinstance(text, str):
        raise InvalidInput(
            "partial_pressures", function, "text such as 'CO2=0.3 bar; H2O=0.1 bar'", text
        )
    pairs: dict[str, str] = {}
    for part in filter(None, (p.strip() for p in re.split(r"[,;]", text))):
        name, sep, value = part.partition("=")
        if not sep or not name.strip() or not value.strip():
            raise InvalidInput(
                "partial_pressures", function, "pairs SPECIES=PRESSURE, e.g. 'CO2=0.3 bar'", part
            )
        if name.strip() in pairs:
            raise InvalidInput("partial_pressures", function, "each gas named once", name.strip())
        pairs[name.strip()] = value.strip()
    return read_partial_pressures(pairs)


def read_molalities(molalities: Mapping[str, Any] | None, function: str = "") -> dict[str, float]:
    """Molalities of aqueous species by name, in mol/kg (each must carry a unit, e.g.
    ``{"Ca+2": "0.01 mol/kg"}``; ``molal`` is read as mol/kg); finite and above 0.

    >>> read_molalities({"Cl-": "0.1 mol/kg", "Na+": "100 mmol/kg"})
    {'Cl-': 0.1, 'Na+': 0.1}
    """
    if molalities is None:
        return {}
    if not isinstance(molalities, Mapping):
        raise InvalidInput(
            "molalities",
            function,
            "a mapping of aqueous species to molalities, e.g. {'Ca+2': '0.01 mol/kg'}",
            molalities,
        )
    out = {}
    for name, value in molalities.items():
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            raise UnitError(
                value, f"molality of {name}", "a bare number is ambiguous; write '0.01 mol/kg'"
            )
        if isinstance(value, str) and len(value) > MAX_QUANTITY_CHARS:
            raise UnitError(
                value, f"molality of {name}", f"longer than {MAX_QUANTITY_CHARS} characters"
            )
        # The unit registry loads here, on first use (a plain screen never needs it).
        from .units import Q_

        try:
            q = value if hasattr(value, "to") else Q_(str(value).replace("molal", "mol/kg"))
            m = float(np.squeeze(q.to("mol/kg").magnitude))
        except Exception as exc:  # pint raises several unrelated types
            raise UnitError(value, f"molality of {name}", f"give mol/kg ({exc})") from None
        if not math.isfinite(m) or m <= 0:
            raise UnitError(value, f"molality of {name}", "a molality must be finite and above 0")
        out[str(name)] = m
    return out


def read_gas_model(value: object, function: str) -> str:
    """``"ideal"`` or ``"peng-robinson"`` (case and the spelling "Peng-Robinson"/"PR" accepted).

    >>> read_gas_model("Peng-Robinson", "assess")
    'peng-robinson'
    """
    text = str(value).strip().lower().replace("–", "-").replace("_", "-").replace(" ", "-")
    if text in ("pr", "peng-robinson"):
        return "peng-robinson"
    if text in ("ideal", "ideal-gas"):
        return "ideal"
    raise InvalidInput("gas_model", function, "'ideal' or 'peng-robinson'", value)


def read_confidence(confidence: Any, function: str) -> float:
    """A confidence level for a verdict: above 0.5 (so 'feasible' and 'not feasible' cannot both
    hold) and below 1 (a Monte Carlo probability never proves certainty)."""
    if (
        isinstance(confidence, bool)
        or not isinstance(confidence, (int, float, np.floating))
        or not 0.5 < float(confidence) < 1.0
    ):
        raise InvalidInput(
            "confidence",
            function,
            "a probability above 0.5 and below 1 (e.g. 0.95 for 95 %)",
            confidence,
        )
    return float(confidence)


def read_probability(value: Any, parameter: str, function: str) -> float:
    """A probability level strictly between 0 and 1 (e.g. the level of a probability window)."""
    if (
        isinstance(value, bool)
        or not isinstance(value, (int, float, np.floating))
        or not 0.0 < float(value) < 1.0
    ):
        raise InvalidInput(parameter, function, "a probability above 0 and below 1", value)
    return float(value)


def read_count(
    value: Any, parameter: str, function: str, minimum: int = 1, maximum: int | None = None
) -> int:
    """A whole number of things (points, trials) of at least ``minimum`` (and at most
    ``maximum``); text is refused."""
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < minimum:
        raise InvalidInput(parameter, function, f"a whole number of at least {minimum}", value)
    if maximum is not None and value > maximum:
        raise InvalidInput(
            parameter, function, f"a whole number from {minimum} to {maximum:,}", value
        )
    return int(value)


def read_trials(
    value: Any, parameter: str, function: str, n_inputs: int = 1, n_temperatures: int = 1
) -> int:
    """A number of Monte Carlo trials: a whole number from 2 to :data:`MAX_SAMPLES`, checked
    before anything is allocated; the message says how much memory the request would take.

    >>> read_trials(500_000_000, "samples", "assess_uncertainty", n_inputs=18)
    Traceback (most recent call last):
    ...
    feasibly.errors.InvalidUncertainty: The 'samples' parameter of assess_uncertainty must be \
a whole number from 2 to 10,000,000 (500,000,000 trials of 18 inputs would hold 67 GiB of \
draws). Got 500000000 instead.
    """
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 2:
        raise InvalidUncertainty(parameter, function, "a whole number of at least 2", value)
    n = int(value)
    if n > MAX_SAMPLES:
        need = gib(8.0 * n * max(n_inputs, 1))  # float64 draws, one row per input
        raise InvalidUncertainty(
            parameter,
            function,
            f"a whole number from 2 to {MAX_SAMPLES:,} ({n:,} trials of {max(n_inputs, 1)} "
            f"inputs would hold {need} of draws)",
            value,
        )
    if n * n_temperatures > MAX_TRIAL_TEMPERATURES:
        raise InvalidUncertainty(
            parameter,
            function,
            f"at most {MAX_TRIAL_TEMPERATURES // n_temperatures:,} trials on "
            f"{n_temperatures:,} temperatures (trials × temperatures is limited to "
            f"{MAX_TRIAL_TEMPERATURES:,}; use fewer points)",
            value,
        )
    return n


def read_feed(feed: str | Mapping[str, Any]) -> dict[str, Any]:
    """Feed amounts (mol, or any consistent amount) by species name.

    Accepts ``"CH4:1, H2O:2, N2:0.5"`` or a mapping; amounts must be finite and ≥ 0 and at least
    one must be positive.

    >>> read_feed("CH4:1, H2O:3")
    {'CH4': 1.0, 'H2O': 3.0}
    """
    if isinstance(feed, Mapping):
        items = list(feed.items())
    elif isinstance(feed, str):
        if len(feed) > MAX_EQUATION_CHARS:
            raise UnitError(feed, "feed", f"longer than {MAX_EQUATION_CHARS} characters")
        items = []
        for part in filter(None, (p.strip() for p in re.split(r"[,;]", feed))):
            if ":" not in part:
                raise UnitError(part, "feed amount", "write SPECIES:AMOUNT, e.g. 'CH4:1, H2O:2'")
            name, value = part.rsplit(":", 1)
            try:
                items.append((name.strip(), float(value)))
            except ValueError:
                raise UnitError(part, "feed amount", "the amount must be a number") from None
    else:
        raise UnitError(feed, "feed", "give 'SPECIES:AMOUNT, …' or a mapping of amounts")
    out: dict[str, Any] = {}
    for name, value in items:
        try:
            arr = np.asarray(value, dtype=float)
        except (TypeError, ValueError, OverflowError):
            raise UnitError(
                value, f"feed amount of {name}", "the amount must be a number"
            ) from None
        if not np.all(np.isfinite(arr)) or np.any(arr < 0):
            raise UnitError(value, f"feed amount of {name}", "amounts must be finite and ≥ 0")
        if np.any(arr > MAX_FEED_AMOUNT):
            raise UnitError(
                value,
                f"feed amount of {name}",
                f"amounts above {MAX_FEED_AMOUNT:g} are refused: only their ratios matter, so "
                "scale the feed down",
            )
        if name in out:
            raise UnitError(name, "feed", "a species is named twice; give it once")
        out[name] = float(arr) if arr.ndim == 0 else arr
    if not out or all(np.all(np.asarray(v) == 0) for v in out.values()):
        raise UnitError(feed, "feed", "the feed is empty; give at least one positive amount")
    return out


def read_conversion(value: Any) -> float:
    """A required conversion: 0.9, "0.9" or "90%" (above 0, at most 1).

    >>> read_conversion("90%")
    0.9
    """
    text = str(value).strip()
    try:
        x = float(text[:-1]) / 100.0 if text.endswith("%") else float(text)
    except ValueError:
        raise UnitError(
            value, "conversion", "write a fraction such as 0.9 or a percentage such as 90%"
        ) from None
    if not 0.0 < x <= 1.0:
        raise UnitError(value, "conversion", "a required conversion lies above 0 and at most 100 %")
    return x
