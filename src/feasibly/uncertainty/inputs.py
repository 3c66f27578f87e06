"""Uncertain inputs: their distributions, user overrides, correlations, and reproducible draws.

Each species-phase entry contributes three inputs: a shift of ΔfH°(298.15 K) (J/mol), a shift of
S°(298.15 K) (J/(mol·K)) and a relative heat-capacity factor ε (Cp → (1 + ε)·Cp). By default each
is normal with the data's standard uncertainty; users may override the value, the uncertainty (with
its coverage as they have it), the distribution, and correlations between inputs. One draw per
input is shared wherever that species-phase appears, so reactions evaluated on the same
:class:`SampleSet` are correlated through their common species.

Sampling is plain Monte Carlo or scrambled Sobol quasi-Monte Carlo (``scipy.stats.qmc``), always
from a seeded :class:`numpy.random.Generator`; correlated inputs are drawn through a Gaussian
copula (exact correlation for normal inputs).
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np
from scipy import special

from .._limits import MAX_OVERRIDE_CHARS
from ..errors import InvalidUncertainty, UnitError, excerpt
from ..library.catalogue import standard_uncertainty
from ..library.species import Species
from ..units import to_energy_per_mol

__all__ = [
    "QUANTITIES",
    "Correlations",
    "InputKey",
    "Override",
    "UncertainInput",
    "build_inputs",
    "correlation_matrix",
    "parse_override",
]

#: The three uncertain quantities of every species-phase entry, and their SI units.
QUANTITIES = {"dHf": "J/mol", "S298": "J/(mol·K)", "cp": "1"}

InputKey = tuple[str, str]
# "mc": one generator for all inputs of a call; "mc-per-species": one stream per input, keyed by
# (seed, species id, quantity), so an input draws the same values in every call with that seed;
# "sobol": scrambled Sobol points.
Method = Literal["mc", "mc-per-species", "sobol"]
METHODS = ("mc", "mc-per-species", "sobol")
_DISTRIBUTIONS = ("normal", "uniform", "triangular")
# Coverage words users type, mapped onto the library's conventions (JCGM 100:2008 Table G.1).
_COVERAGE_WORDS = {
    "standard": "standard",
    "1 sigma": "standard",
    "k=1": "standard",
    "k=2": "k=2",
    "2 sigma": "k=2",
    "95%": "expanded-95",
    "95 %": "expanded-95",
    "expanded-95": "expanded-95",
    "rectangular": "half-width-rectangular",
    "half-width-rectangular": "half-width-rectangular",
}


def _coverage(text: str) -> str:
    key = re.sub(r"\s+", " ", str(text).strip().lower())
    if key in _COVERAGE_WORDS:
        return _COVERAGE_WORDS[key]
    if re.fullmatch(r"k\s*=\s*[0-9.]+", key):
        return key.replace(" ", "")
    known = ", ".join(sorted(set(_COVERAGE_WORDS)))
    raise InvalidUncertainty(
        f"coverage {excerpt(text)} not understood; use one of {known} or k=<number>"
    )


@dataclass(frozen=True)
class Override:
    """A user's own value and/or uncertainty for one input, with the reason for it.

    ``target`` is a library id (``"MgCO3(cr)"``); ``quantity`` one of ``dHf``, ``S298``, ``cp``.
    ``value`` and ``uncertainty`` carry units (``"-1111.7 kJ/mol"``, ``"4 kJ/mol"``,
    ``"2 J/(mol*K)"``; for ``cp`` a factor such as ``1.05`` and a relative uncertainty such as
    ``"5 %"`` or ``0.05``). ``coverage`` says how the uncertainty is stated: ``"standard"``,
    ``"k=2"``, ``"95%"`` or ``"rectangular"`` (± half-width). ``distribution`` is ``"normal"``,
    ``"uniform"``, ``"triangular"`` or a frozen ``scipy.stats`` distribution of the value itself.
    ``reason`` is required: it goes into every record of the result.
    """

    target: str
    quantity: str
    reason: str
    value: Any = None
    uncertainty: Any = None
    coverage: str = "standard"
    distribution: Any = "normal"

    def __post_init__(self) -> None:
        if self.quantity not in QUANTITIES:
            raise InvalidUncertainty(
                f"override of {self.target}: quantity {excerpt(self.quantity)} is not one of "
                f"{', '.join(QUANTITIES)}"
            )
        if not isinstance(self.reason, str) or not self.reason.strip():
            raise InvalidUncertainty(
                f"override of {self.target} {self.quantity}: say why (a reason or source note is "
                "required so that the record shows where the number came from)"
            )
        if self.value is None and self.uncertainty is None and isinstance(self.distribution, str):
            raise InvalidUncertainty(
                f"override of {self.target} {self.quantity} changes nothing: give a value, an "
                "uncertainty or a distribution"
            )


def _to_si(quantity: str, value: Any, what: str) -> float:
    """A user value for one quantity in SI (J/mol, J/(mol·K), or a pure number for cp)."""
    from ..units import Q_  # the unit registry loads only when an override needs it

    if quantity == "dHf":
        return float(np.squeeze(to_energy_per_mol(value)))
    if quantity == "S298":
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            raise UnitError(
                value, "molar entropy", "a bare number is ambiguous; write '2 J/(mol*K)'"
            )
        try:
            q = value if hasattr(value, "to") else Q_(str(value).replace("·", "*"))
            return float(q.to("J/(mol*K)").magnitude)
        except Exception as exc:  # pint raises several unrelated types
            raise UnitError(value, "molar entropy", f"{what}: {exc}") from None
    # cp: dimensionless factor or relative uncertainty; "5 %" or 0.05
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)
    try:
        q = value if hasattr(value, "to") else Q_(str(value).replace("%", " percent"))
        return float(q.to("dimensionless").magnitude)
    except Exception as exc:  # pint raises several unrelated types
        raise UnitError(value, "relative heat-capacity factor", f"{what}: {exc}") from None


@dataclass(frozen=True)
class UncertainInput:
    """One uncertain input: nominal shift from the library value, distribution and provenance.

    Draws are deviations from the library value in SI: ``shift`` is added to every draw (the
    user's new nominal minus the library's), ``u`` is the standard uncertainty.
    """

    key: InputKey
    u: float
    distribution: Any = "normal"
    shift: float = 0.0
    source: str = ""
    override: Override | None = None
    nominal: float = 0.0  # the library value (1 for the cp factor), for user-given distributions

    def __post_init__(self) -> None:
        if not math.isfinite(self.u) or self.u < 0:
            raise InvalidUncertainty(
                f"{self.key[0]} {self.key[1]}: uncertainty {self.u!r} is not a finite number ≥ 0"
            )
        if isinstance(self.distribution, str):
            if self.distribution not in _DISTRIBUTIONS:
                raise InvalidUncertainty(
                    f"{self.key[0]} {self.key[1]}: unknown distribution {self.distribution!r}; "
                    f"use one of {', '.join(_DISTRIBUTIONS)} or a frozen scipy.stats distribution"
                )
        elif not (hasattr(self.distribution, "ppf") and hasattr(self.distribution, "std")):
            raise InvalidUncertainty(
                f"{self.key[0]} {self.key[1]}: a user-given distribution must "
                "be a frozen scipy.stats distribution (with ppf and std)"
            )

    @property
    def is_normal(self) -> bool:
        return isinstance(self.distribution, str) and self.distribution == "normal"

    def from_uniform(self, u01: np.ndarray) -> np.ndarray:
        """Deviations from the library value for uniform draws in (0, 1) (inverse CDF)."""
        d = self.distribution
        if d == "normal":
            return self.shift + self.u * special.ndtri(u01)
        if d == "uniform":
            return self.shift + math.sqrt(3.0) * self.u * (2.0 * u01 - 1.0)
        if d == "triangular":
            a = math.sqrt(6.0) * self.u  # symmetric triangular of half-width a has u = a/√6
            return self.shift + a * np.where(
                u01 < 0.5, np.sqrt(2.0 * u01) - 1.0, 1.0 - np.sqrt(2.0 * (1.0 - u01))
            )
        return np.asarray(d.ppf(u01), dtype=float) - self.nominal


def _nominal(sp: Species, quantity: str) -> float:
    return {"dHf": sp.dHf.value, "S298": sp.S298.value, "cp": 1.0}[quantity]


def _library_u(sp: Species, quantity: str) -> tuple[float, str]:
    if quantity == "dHf":
        return sp.dHf.u, sp.dHf.uncertainty.get("source", sp.dHf.source)
    if quantity == "S298":
        return sp.S298.u, sp.S298.uncertainty.get("source", sp.S298.source)
    return sp.cp_u_rel, str(sp.cp_source.get("uncertainty", {}).get("source", "library"))


def build_inputs(
    species: Iterable[Species], overrides: Sequence[Override] = ()
) -> list[UncertainInput]:
    """The uncertain inputs of a set of species-phase entries, with overrides applied.

    Inputs come in a fixed order: species by id, then ``dHf``, ``S298``, ``cp``.
    """
    entries = {sp.id: sp for sp in species}
    by_key: dict[InputKey, Override] = {}
    for given in overrides:
        if given.target not in entries:
            near = sorted(entries)
            raise InvalidUncertainty(
                f"override target {excerpt(given.target)} is not a species-phase of "
                f"this calculation; those are: {', '.join(near)}"
            )
        key = (given.target, given.quantity)
        if key in by_key:
            raise InvalidUncertainty(f"two overrides for {given.target} {given.quantity}")
        by_key[key] = given
    out = []
    for sid in sorted(entries):
        sp = entries[sid]
        for q in QUANTITIES:
            u, src = _library_u(sp, q)
            ov: Override | None = by_key.get((sid, q))
            dist: Any = "normal"
            shift = 0.0
            if ov is not None:
                if ov.value is not None:
                    new = _to_si(q, ov.value, "value")
                    shift = new - _nominal(sp, q)
                if ov.uncertainty is not None:
                    stated = _to_si(q, ov.uncertainty, "uncertainty")
                    u = standard_uncertainty(stated, _coverage(ov.coverage))
                if not isinstance(ov.distribution, str):
                    dist = ov.distribution
                    u = float(dist.std())
                    shift = 0.0
                else:
                    dist = ov.distribution
                src = f"override: {ov.reason}"
            out.append(
                UncertainInput((sid, q), float(u), dist, float(shift), src, ov, _nominal(sp, q))
            )
    return out


def _check_correlation(matrix: np.ndarray, labels: Sequence[str]) -> np.ndarray:
    m = np.asarray(matrix, dtype=float)
    if m.ndim != 2 or m.shape[0] != m.shape[1] or m.shape[0] != len(labels):
        raise InvalidUncertainty(
            f"the correlation matrix must be {len(labels)} × {len(labels)} "
            f"(one row and column per input: {', '.join(labels)})"
        )
    if not np.all(np.isfinite(m)):
        raise InvalidUncertainty("the correlation matrix holds a non-finite value")
    if not np.allclose(m, m.T, atol=1e-12):
        raise InvalidUncertainty("the correlation matrix is not symmetric")
    if not np.allclose(np.diag(m), 1.0, atol=1e-12):
        raise InvalidUncertainty("the correlation matrix must have 1 on its diagonal")
    if np.any(np.abs(m) > 1.0 + 1e-12):
        raise InvalidUncertainty("correlations must lie between −1 and 1")
    eig = np.linalg.eigvalsh(m)
    # −1e-10: rounding noise of an exactly singular (but valid) matrix; anything lower is not one.
    if eig.min() < -1e-10:
        raise InvalidUncertainty(
            f"the correlation matrix is not positive semi-definite (smallest eigenvalue "
            f"{eig.min():.3g}); such correlations cannot all hold at once"
        )
    return m


Correlations = Mapping[tuple[InputKey, InputKey], float] | tuple[Sequence[InputKey], Any]


def correlation_matrix(
    inputs: Sequence[UncertainInput], correlations: Correlations | None
) -> np.ndarray | None:
    """Full correlation matrix over ``inputs`` (None when independent).

    ``correlations`` is either a mapping of input pairs to coefficients, or ``(keys, matrix)``:
    a list of input keys and the square correlation matrix among them (checked symmetric, unit
    diagonal, positive semi-definite).
    """
    if correlations is None or (isinstance(correlations, Mapping) and not correlations):
        return None
    if not isinstance(correlations, Mapping):
        keys, matrix = correlations
        keys = [(str(k[0]), str(k[1])) for k in keys]
        sub = _check_correlation(np.asarray(matrix, dtype=float), [f"{a}:{b}" for a, b in keys])
        pairs = {
            (keys[i], keys[j]): float(sub[i, j])
            for i in range(len(keys))
            for j in range(i + 1, len(keys))
            if sub[i, j] != 0.0
        }
        return correlation_matrix(inputs, pairs) if pairs else None
    index = {inp.key: i for i, inp in enumerate(inputs)}
    m = np.eye(len(inputs))
    for (a, b), rho in correlations.items():
        for k in (a, b):
            if tuple(k) not in index:
                raise InvalidUncertainty(
                    f"correlation names {excerpt(k)}, which is not an input of this "
                    "calculation (inputs are (species id, dHf|S298|cp))"
                )
        if tuple(a) == tuple(b):
            raise InvalidUncertainty(f"correlation of {a!r} with itself is always 1")
        if not isinstance(rho, (int, float)) or not math.isfinite(rho):
            raise InvalidUncertainty(f"correlation {rho!r} is not a finite number")
        i, j = index[(a[0], a[1])], index[(b[0], b[1])]
        m[i, j] = m[j, i] = float(rho)
    labels = [f"{k[0]}:{k[1]}" for k in index]
    return _check_correlation(m, labels)


# The words that may end the uncertainty part of an override (coverage, then shape).
_TRAILING_WORDS = {
    "standard",
    "95%",
    "rectangular",
    "normal",
    "uniform",
    "triangular",
}
_K_WORD = re.compile(r"k=[0-9.]{1,20}")
_QUANTITY = re.compile(r":(dHf|S298|cp)(?![A-Za-z0-9_])")
_PLAIN_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")
_OVERRIDE_HELP = (
    "write e.g. 'MgCO3(cr):dHf = -1111.0 ± 4 kJ/mol 95%; reason' (quantity dHf, S298 or cp; "
    "the reason after ';' is required)"
)


def parse_override(text: str) -> Override:
    """Read an override written as ``ID:QUANTITY [= VALUE] [± U] [COVERAGE] [SHAPE]; REASON``.

    >>> o = parse_override("MgCO3(cr):dHf = -1111.0 ± 4 kJ/mol 95%; our calorimetry, run 12")
    >>> (o.value, o.uncertainty, o.coverage, o.reason)
    ('-1111.0 kJ/mol', '4 kJ/mol', '95%', 'our calorimetry, run 12')
    >>> parse_override("MgO(cr):cp ± 10 % uniform; estimate").distribution
    'uniform'
    """
    # Read by splitting at fixed marks (';', ':QUANTITY', '=', '±'), never by backtracking, so
    # the time is linear in the length of the text.
    if not isinstance(text, str):
        raise InvalidUncertainty(f"an override must be text; got {excerpt(text)}")
    if len(text) > MAX_OVERRIDE_CHARS:
        raise InvalidUncertainty(
            f"the override {excerpt(text)} is longer than {MAX_OVERRIDE_CHARS} characters"
        )
    head, semi, reason = text.partition(";")
    reason = reason.strip()
    qty = _QUANTITY.search(head)
    target = head[: qty.start()].strip() if qty else ""
    if not semi or not reason or qty is None or not target:
        raise InvalidUncertainty(f"cannot read the override {excerpt(text)}; {_OVERRIDE_HELP}")
    rest = head[qty.end() :].strip()
    value: str | None = None
    u: str | None = None
    if rest.startswith("="):
        rest = rest[1:]
        cut = min((i for i in (rest.find("±"), rest.find("+/-")) if i >= 0), default=-1)
        value = (rest if cut < 0 else rest[:cut]).strip()
        rest = "" if cut < 0 else rest[cut:]
        if not value:
            raise InvalidUncertainty(f"cannot read the override {excerpt(text)}; {_OVERRIDE_HELP}")
    rest = rest.strip()
    if rest.startswith("±"):
        u = rest[1:].strip()
    elif rest.startswith("+/-"):
        u = rest[3:].strip()
    elif rest:
        raise InvalidUncertainty(f"cannot read the override {excerpt(text)}; {_OVERRIDE_HELP}")
    coverage, shape = "standard", "normal"
    if u:
        u = re.sub(r"\s+", " ", u)
        u = re.sub(r"k ?= ?", "k=", u, flags=re.IGNORECASE)
        u = re.sub(r"95 ?%", "95%", u)
        while u:
            parts = u.rsplit(" ", 1)
            word = parts[-1].lower()
            if len(parts) != 2 or not (word in _TRAILING_WORDS or _K_WORD.fullmatch(word)):
                break
            if word in ("normal", "uniform", "triangular"):
                shape = word
            else:
                coverage = word
            u = parts[0].strip()
    if value is not None and u:
        # "= -1111.0 ± 4 kJ/mol": the value shares the unit written after the uncertainty.
        if _PLAIN_NUMBER.fullmatch(value):
            unit = u[n.end() :].strip() if (n := _PLAIN_NUMBER.match(u)) else u
            value = f"{value} {unit}".strip()
    return Override(
        target,
        qty.group(1),
        reason,
        value or None,
        u or None,
        coverage,
        shape,
    )
