"""The exceptions feasibly raises.

Every error a user can cause is a :class:`FeasiblyError`; each concrete error also inherits the
nearest built-in exception, so ``except KeyError`` and ``except ValueError`` keep working. Errors
carry the offending value and what was expected as attributes, and their message says what to do.

A bad argument to a function (a confidence level of 1.5, a missing temperature, a bare number
where a unit is needed) is an :class:`InvalidInput`, whose message always names the parameter,
what it must be and the value given. Every error survives ``pickle`` on every protocol, so it
crosses process pools and cluster workers intact.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

__all__ = [
    "AmbiguousBalance",
    "DataFileError",
    "EquilibriumNotConverged",
    "ExportError",
    "FeasiblyError",
    "InvalidInput",
    "InvalidTemperature",
    "InvalidUncertainty",
    "MissingCondensedPhase",
    "NotEstimable",
    "OutsideDataRange",
    "ReactionSyntaxError",
    "RecordError",
    "UnbalancedReaction",
    "UnitError",
    "UnknownSpecies",
]


def _rebuild(cls: type[BaseException], args: tuple[Any, ...], state: dict[str, Any]) -> Any:
    """Re-create a pickled error without calling its ``__init__`` (whose signature is its own)."""
    error = cls.__new__(cls)
    error.args = args
    error.__dict__.update(state)
    return error


class FeasiblyError(Exception):
    """Base class of every error feasibly raises on bad input or bad data."""

    def __reduce__(self) -> tuple[Any, ...]:
        # Exception's own __reduce__ calls cls(*args) with the message alone, which fails for the
        # errors whose __init__ takes structured fields; rebuild from the message and the fields.
        return (_rebuild, (type(self), self.args, dict(self.__dict__)))


#: Longest excerpt of a user's value quoted in a message, so a huge input never makes a huge one.
_EXCERPT = 80


def excerpt(value: object, limit: int = _EXCERPT) -> str:
    """``repr`` of a value, cut to ``limit`` characters with the length of what was left out."""
    text = repr(value)
    if len(text) <= limit:
        return text
    return f"{text[: limit - 1]}… ({len(text)} characters)"


class InvalidInput(FeasiblyError, ValueError):
    """A function argument (or command-line option) that cannot be used.

    ``parameter`` names it, ``function`` the call it was given to, ``expected`` says what it must
    be and ``value`` is what was given. The message has one form everywhere::

        The 'confidence' parameter of assess_uncertainty must be a probability above 0.5 and
        below 1 (e.g. 0.95). Got 1.5 instead.
    """

    def __init__(self, parameter: str, function: str, expected: str, value: object) -> None:
        self.parameter = parameter
        self.function = function
        self.expected = expected
        self.value = value
        where = f"The {parameter!r} parameter of {function}" if function else f"{parameter!r}"
        got = "nothing" if value is None else excerpt(value)
        super().__init__(f"{where} must be {expected}. Got {got} instead.")


class UnknownSpecies(FeasiblyError, KeyError):
    """A species query matched nothing in the library."""

    def __init__(
        self,
        query: str,
        suggestions: Sequence[str] = (),
        detail: str = "",
        heading: str = "",
        candidates: Sequence[str] = (),
    ) -> None:
        self.query = query
        self.suggestions = list(suggestions)
        # One description (formula, name, CAS, phases) per suggestion, when the caller has them.
        self.candidates = list(candidates)
        msg = f"No species {excerpt(query)} in the data library."
        if detail:
            msg += f" {detail}"
        if self.candidates:
            msg += f" {heading or 'Candidates'}: " + "; ".join(self.candidates) + "."
        elif self.suggestions:
            msg += " Did you mean: " + ", ".join(self.suggestions) + "?"
        else:
            msg += " Search with `feasibly species TEXT`, or add your own entry in a species file."
        super().__init__(msg)

    def __str__(self) -> str:  # KeyError would repr() the message otherwise
        return str(self.args[0])


class ReactionSyntaxError(FeasiblyError, ValueError):
    """Equation text that cannot be read as a reaction."""

    def __init__(self, text: str, problem: str) -> None:
        self.text = text
        self.problem = problem
        super().__init__(f"Cannot read {excerpt(text)}: {problem}")


class UnbalancedReaction(FeasiblyError, ValueError):
    """Elements or charge do not balance; ``imbalance`` maps element → products − reactants."""

    def __init__(self, equation: str, imbalance: dict[str, float]) -> None:
        self.equation = equation
        self.imbalance = dict(imbalance)
        parts = []
        for element, excess in imbalance.items():
            what = "charge" if element == "charge" else element
            side = "products" if excess > 0 else "reactants"
            parts.append(f"{what}: {side} have {_fmt(abs(excess))} more")
        msg = (
            f"The equation {excerpt(equation)} is not balanced ({'; '.join(parts)}). "
            "Fix the coefficients, or let feasibly balance it (balance=True, or --balance)."
        )
        super().__init__(msg)


class AmbiguousBalance(FeasiblyError, ValueError):
    """Auto-balancing has no solution, or more than one independent one."""

    def __init__(self, equation: str, problem: str) -> None:
        self.equation = equation
        self.problem = problem
        super().__init__(f"Cannot balance {excerpt(equation)}: {problem}")


class OutsideDataRange(FeasiblyError, ValueError):
    """A temperature lies outside the range in which a species' data is valid."""

    def __init__(
        self,
        species: str,
        T_K: float,
        T_min: float,
        T_max: float,
        phase_given: bool | None = None,
    ) -> None:
        self.species = species
        self.T_K = T_K
        self.T_min = T_min
        self.T_max = T_max
        # True: the equation fixed the phase; False: it did not (every phase was tried);
        # None: not known where the error was raised.
        self.phase_given = phase_given
        if phase_given is False:
            advice = (
                "Choose a temperature inside that range (or narrow the temperature window to "
                "it), or supply data for that range in a species file: no phase of it in the "
                "data covers this temperature."
            )
        elif phase_given:
            advice = (
                "Choose a temperature inside that range, give the species without a phase so "
                "that the stable phase is used, or supply heat-capacity data for that range in "
                "a species file."
            )
        else:
            advice = (
                "Choose a temperature inside that range, or supply heat-capacity data for that "
                "range in a species file."
            )
        msg = (
            f"{species} has data from {_fmt(T_min)} K to {_fmt(T_max)} K; "
            f"{_fmt(T_K)} K is outside. " + advice
        )
        super().__init__(msg)


class MissingCondensedPhase(FeasiblyError, ValueError):
    """A species given without a phase has only gas data where it is condensed at 1 atm.

    ``species`` is the formula as written, ``phase`` the missing stable phase ("solid" or
    "liquid"), ``T_K`` the temperatures (K) at which it is the stable one, ``points`` the tabulated
    transitions behind that and ``gas_id`` the gas entry the user can name explicitly.
    """

    def __init__(
        self, species: str, phase: str, T_K: Sequence[float], points: str, gas_id: str
    ) -> None:
        self.species = species
        self.phase = phase
        self.T_K = list(T_K)
        self.points = points
        self.gas_id = gas_id
        lo, hi = min(self.T_K), max(self.T_K)
        at = f"{_fmt(lo)} K" if lo == hi else f"{_fmt(lo)}–{_fmt(hi)} K"
        super().__init__(
            f"{species} is a {phase} at {at} and 1 atm ({points}), but the data library has "
            f"only its gas ({gas_id}); no {phase} {species} is in the data, so the call is "
            f"refused rather than made on the gas. Add the {phase} phase in a species file, or "
            f"write {species}(g) if you really mean the gas."
        )


class InvalidTemperature(InvalidInput):
    """Zero, negative, non-finite or unit-less temperatures."""

    def __init__(self, value: object, problem: str) -> None:
        self.parameter, self.function, self.expected = "T", "", "a temperature above 0 K"
        self.value = value
        self.problem = problem
        ValueError.__init__(self, f"Temperature {excerpt(value)}: {problem}")


class UnitError(InvalidInput):
    """A quantity given without a unit where one is needed, or in a unit of the wrong kind."""

    def __init__(self, value: object, expected: str, problem: str = "") -> None:
        self.parameter, self.function = expected, ""
        self.value = value
        self.expected = expected
        self.problem = problem
        msg = f"{excerpt(value)} is not a {expected}"
        msg += f": {problem}" if problem else "."
        ValueError.__init__(self, msg)


class InvalidUncertainty(InvalidInput):
    """Negative, NaN or missing uncertainties and unusable coverage statements.

    Raised either in the common form (``parameter``, ``function``, ``expected``, ``value``) or
    with a finished message alone.
    """

    def __init__(
        self,
        message_or_parameter: str,
        function: str | None = None,
        expected: str = "",
        value: object = None,
    ) -> None:
        if function is None:
            self.parameter, self.function, self.expected, self.value = "", "", "", None
            ValueError.__init__(self, message_or_parameter)
        else:
            super().__init__(message_or_parameter, function, expected, value)


class DataFileError(FeasiblyError, ValueError):
    """A species data file that cannot be used; ``problems`` lists every problem found."""

    def __init__(self, path: str, problems: Sequence[str]) -> None:
        self.path = path
        self.problems = list(problems)
        shown = self.problems[:50]
        msg = f"{path}: {len(self.problems)} problem(s) in the species data:\n  " + "\n  ".join(
            shown
        )
        if len(self.problems) > len(shown):
            msg += f"\n  … and {len(self.problems) - len(shown)} more"
        super().__init__(msg)


class RecordError(FeasiblyError, ValueError):
    """A decision record that cannot be used; ``problems`` lists each as ``field X: problem``."""

    def __init__(self, where: str, problems: Sequence[str]) -> None:
        self.where = where
        self.problems = list(problems)
        shown = self.problems[:30]
        msg = f"{where}: {len(self.problems)} problem(s) with the decision record:\n  " + (
            "\n  ".join(shown)
        )
        if len(self.problems) > len(shown):
            msg += f"\n  … and {len(self.problems) - len(shown)} more"
        super().__init__(msg)


class EquilibriumNotConverged(FeasiblyError, RuntimeError):
    """The equilibrium iteration did not converge for some states; no number is reported.

    ``states`` describes each such state; ``indices`` gives its position among the states asked
    for and ``reasons`` why it is refused (``"no gas phase"``: the equilibrium has only condensed
    phases, outside the model; ``"not converged"``), when the caller knows them.
    """

    def __init__(
        self,
        what: str,
        states: Sequence[str],
        hint: str,
        *,
        indices: Sequence[int] = (),
        reasons: Sequence[str] = (),
    ) -> None:
        self.what = what
        self.states = list(states)
        self.indices = list(indices)
        self.reasons = list(reasons)
        shown = "; ".join(self.states[:3])
        more = f" (and {len(self.states) - 3} more)" if len(self.states) > 3 else ""
        super().__init__(f"{what} did not converge at {shown}{more}. {hint}")


def _fmt(x: float) -> str:
    """Short human form of a number: 2 not 2.0, 0.5 stays 0.5."""
    return f"{x:.6g}"


class ExportError(FeasiblyError, RuntimeError):
    """A table or figure could not be exported: ``what`` was asked for, ``reason`` says why and
    ``remedy`` what to do (install pandas, install Debian's chromium, choose another file)."""

    def __init__(self, what: str, reason: str, remedy: str) -> None:
        self.what = what
        self.reason = reason
        self.remedy = remedy
        msg = f"Cannot export {what}: {reason}. {remedy}"
        super().__init__(msg)


class NotEstimable(FeasiblyError, ValueError):
    """A structure (or formula) outside what an estimation method covers, refused with why.

    ``structure`` is what was given, ``method`` the method asked for, ``reasons`` every reason
    it is outside (each a sentence) and ``missing`` the group or correction names the method's
    tables lack (may be empty). Nothing is estimated silently: the message says what to do.
    """

    def __init__(
        self, structure: str, method: str, reasons: Sequence[str], missing: Sequence[str] = ()
    ) -> None:
        self.structure = structure
        self.method = method
        self.reasons = list(reasons)
        self.missing = list(missing)
        msg = (
            f"{method} cannot estimate {excerpt(structure)}: "
            + "; ".join(self.reasons)
            + ". Supply measured or tabulated values for it in a species file instead."
        )
        super().__init__(msg)
