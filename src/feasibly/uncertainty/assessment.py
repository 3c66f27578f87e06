"""The call and how sure it is: feasibility probability, verdict, window, sensitivity, routes.

:func:`assess_uncertainty` draws the inputs once, propagates them to ΔrH°, ΔrS°, ΔrG° and log10 K on
a temperature grid, and keeps the draws, so :meth:`UncertainAssessment.at` evaluates any other
temperature without re-sampling. The verdict at each temperature reads plainly in a report:

- ``"feasible"`` — P(ΔrG < threshold) is at least the confidence level;
- ``"not feasible"`` — P is at most 1 − confidence level;
- ``"too close to call"`` — the data at hand cannot decide.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special

from .._tables import TableExport
from ..conditions import (
    read_confidence,
    read_gas_model,
    read_molalities,
    read_partial_pressures,
    read_standard_pressure,
    read_temperature,
    read_temperatures,
    read_temperatures_as_given,
    read_trials,
)
from ..errors import FeasiblyError, InvalidInput, InvalidUncertainty, UnitError
from ..library.catalogue import Library, default_library
from ..library.cp_models import R
from ..thermo import (
    Assessment,
    conditions_label,
    fugacity_term,
    missing_stable_phases,
    quotient_at_conversion,
    reaction_quotient,
    read_at_conversion,
)
from ..thermo.reaction import Reaction
from ..units import to_energy_per_mol
from ._quantiles import row_statistics
from .adaptive import (
    _ADAPTIVE_DIGITS,
    _PROGRESS_WORK,
    ADAPTIVE_MAX_TRIALS,
    AdaptiveReport,
    _adaptive,
    _Progress,
)
from .inputs import Correlations, InputKey, Method, Override, build_inputs, correlation_matrix
from .linear import (
    LinearModel,
    Summary,
    crossings,
    first_order_indices,
    gum_uncertainty,
    level_window,
    linear_model,
    numerical_tolerance,
    shortest_interval,
    summarise,
    uncertain_species,
    variance_shares,
)
from .sampling import SampleSet, draw_samples

__all__ = [
    "VERDICTS",
    "UncertainAssessment",
    "assess_uncertainty",
    "gas_model_warning",
    "verdict",
    "with_gas_model_warning",
]

VERDICTS = ("feasible", "not feasible", "too close to call")
_LN10 = math.log(10.0)


def verdict(p: float, confidence: float) -> str:
    """The call for one probability of feasibility at a confidence level."""
    if p >= confidence:
        return VERDICTS[0]
    if p <= 1.0 - confidence:
        return VERDICTS[1]
    return VERDICTS[2]


def _input_covariance(samples: SampleSet) -> np.ndarray:
    """Covariance of the inputs from their stated distributions (not from the draws)."""
    u = np.array([inp.u for inp in samples.inputs])
    corr = samples.correlation if samples.correlation is not None else np.eye(u.size)
    return corr * np.outer(u, u)


class UncertainAssessment(TableExport):
    """Monte Carlo feasibility of one reaction over a temperature grid, with kept draws.

    Tables (:meth:`tables`; as DataFrames with :meth:`to_frame`, CSV with :meth:`to_csv`):
    ``temperatures`` (:meth:`rows`), ``window`` (:meth:`window`) and ``sensitivity`` (the ranked
    variance shares at :attr:`sensitivity_T_K`, the middle of the grid unless set).

    Arrays are over ``T`` (K). ``G``, ``H``, ``S`` are :class:`~feasibly.uncertainty.linear.Summary`
    objects of ΔrG (at the given partial pressures, if any), ΔrH°, ΔrS°; ``p_feasible`` is
    P(ΔrG < threshold) and ``verdicts`` the call at each T.
    """

    def __init__(
        self,
        reaction: Reaction,
        samples: SampleSet,
        T: np.ndarray,
        confidence: float,
        threshold: Callable[[np.ndarray], np.ndarray],
        threshold_text: str,
        standard_pressure: float,
        pressures: Mapping[str, float],
        overrides: Sequence[Override],
        library: Library,
        adaptive: AdaptiveReport | None = None,
        crossing_range: tuple[float, float] | None = None,
        at_conversion: Mapping[str, Any] | None = None,
        molalities: Mapping[str, float] | None = None,
        gas_model: str = "ideal",
    ) -> None:
        self.reaction = reaction
        self.gas_model = gas_model
        self.samples = samples
        self.T = T
        self.confidence = confidence
        self._threshold = threshold
        self.threshold_text = threshold_text
        self.standard_pressure = standard_pressure
        self.partial_pressures_Pa = dict(pressures)
        self.molalities_mol_per_kg = dict(molalities or {})
        self.overrides = list(overrides)
        self.library = library
        self.adaptive = adaptive
        self.crossing_range = crossing_range
        self.at_conversion = dict(at_conversion) if at_conversion else None
        self.model = self._model(T)
        thr = threshold(T)
        self.G = summarise(self.model, samples, "G", thr)
        self.threshold_J_per_mol = thr
        self._crossing: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None

    @functools.cached_property
    def H(self) -> Summary:
        """Monte Carlo summary of ΔrH° on the grid (computed when first asked for)."""
        return summarise(self.model, self.samples, "H")

    @functools.cached_property
    def S(self) -> Summary:
        """Monte Carlo summary of ΔrS° on the grid (computed when first asked for)."""
        return summarise(self.model, self.samples, "S")

    # --- evaluation -----------------------------------------------------------------------------
    def _ln_q(self, T: np.ndarray) -> np.ndarray | None:
        """ln Q at the user's conditions (partial pressures or a required conversion), or None."""
        return _ln_q(
            self.reaction,
            self.partial_pressures_Pa,
            self.at_conversion,
            self.standard_pressure,
            T,
            self.molalities_mol_per_kg,
            self.gas_model,
        )

    @property
    def conditions(self) -> str:
        """The user's conditions in words; empty at standard state."""
        return conditions_label(self.partial_pressures_Pa, self.at_conversion, self.gas_model)

    def _model(self, T: np.ndarray) -> LinearModel:
        lnQ = self._ln_q(T)
        return linear_model(self.reaction, T, self.samples, self.standard_pressure, lnQ)

    @property
    def trials(self) -> int:
        return self.samples.n

    @property
    def p_feasible(self) -> np.ndarray:
        """P(ΔrG < threshold) at each grid temperature."""
        return self.G.p_below

    @property
    def p_feasible_se(self) -> np.ndarray:
        """Monte Carlo standard error of ``p_feasible`` (binomial)."""
        return self.G.p_below_se

    @property
    def verdicts(self) -> list[str]:
        return [verdict(float(p), self.confidence) for p in self.p_feasible]

    def log10_K(self) -> dict[str, np.ndarray]:
        """Summary of log10 K° = −ΔrG°/(RT ln 10) (standard state; no partial pressures)."""
        scale = -1.0 / (R * self.T * _LN10)
        shift = 0.0
        lnQ = self._ln_q(self.T)
        if lnQ is not None:
            shift = R * self.T * lnQ
        g = self.G
        return {
            "mean": (g.mean - shift) * scale,
            "u": g.u * -scale,
            "median": (g.median - shift) * scale,
            "lo": (g.hi - shift) * scale,
            "hi": (g.lo - shift) * scale,
        }

    def at(self, T: Any) -> dict[str, Any]:
        """The summary at other temperature(s) (with units), from the kept draws, no re-sampling."""
        temps, single = read_temperatures_as_given(T)
        model = self._model(temps)
        thr = self._threshold(temps)
        g = summarise(model, self.samples, "G", thr)
        rows = [_dg_row(g, i, float(t), self.confidence) for i, t in enumerate(temps)]
        return rows[0] if single else {"rows": rows}

    def samples_at(self, T: float) -> np.ndarray:
        """The N sampled ΔrG values (J/mol) at one temperature in K."""
        return self._model(np.array([float(T)])).values("G", self.samples)[0]

    # --- the call -------------------------------------------------------------------------------
    def window(self) -> list[dict[str, Any]]:
        """Temperature intervals of the grid where the verdict is "feasible".

        Each edge is interpolated where P crosses the confidence level, with the Monte Carlo
        standard error of that location (se of P divided by the slope of P there). An edge at the
        end of the grid is marked open: the window may extend beyond it.
        """
        return level_window(self.T, self.p_feasible, self.confidence, self.p_feasible_se)

    def crossover(self, points: int = 201) -> dict[str, Any]:
        """Distribution of the temperature where ΔrG crosses the threshold, per trial.

        Over the grid's range on ``points`` temperatures; reports the fraction of trials with no
        crossover in range and with more than one, the median and the 95 % interval of the first
        crossing, and the trials' first crossings themselves are kept for sensitivity.
        """
        lo, hi = self.crossing_range or (float(self.T[0]), float(self.T[-1]))
        if self._crossing is None:
            grid = np.linspace(lo, hi, points)
            model = self._model(grid)
            first, count = crossings(model, self.samples, self._threshold(grid))
            self._crossing = (grid, first, count)
        _, first, count = self._crossing
        hit = first[np.isfinite(first)]
        n = self.samples.n
        out: dict[str, Any] = {
            "range_K": [lo, hi],
            "fraction_none": float(1.0 - hit.size / n),
            "fraction_several": float(np.count_nonzero(count > 1) / n),
        }
        f_none = out["fraction_none"]
        out["fraction_none_se"] = math.sqrt(f_none * (1.0 - f_none) / n)
        if hit.size >= 2:
            q, e, _ = row_statistics(
                hit[None, :],
                np.array([hit.mean()]),
                np.array([hit.std()]),
                (0.025, 0.5, 0.975),
                np.zeros(1),
            )
            out.update(
                {
                    "median_K": float(q[0, 1]),
                    "lo_K": float(q[0, 0]),
                    "hi_K": float(q[0, 2]),
                    "median_se_K": float(e[0, 1]),
                    "lo_se_K": float(e[0, 0]),
                    "hi_se_K": float(e[0, 2]),
                    "mean_K": float(hit.mean()),
                    "std_K": float(hit.std(ddof=1)),
                }
            )
        return out

    def crossing_temperatures(self) -> np.ndarray:
        """Each trial's first crossing of the criterion over the grid's range, K (NaN: none)."""
        self.crossover()
        assert self._crossing is not None
        return self._crossing[1]

    # --- uncertainty budget ---------------------------------------------------------------------
    def sensitivity(self, T: Any) -> list[dict[str, Any]]:
        """Inputs ranked by their share of Var(ΔrG(T)) (exact for this linear model).

        Each row: species id, quantity (dHf, S298, cp), share (fractions summing to 1), and the
        input's standard uncertainty and source. Inputs with no share are left out.
        """
        temps = np.array([read_temperature(T)])
        shares = variance_shares(self._model(temps), _input_covariance(self.samples))[0]
        rows: list[dict[str, Any]] = []
        for inp, share in zip(self.samples.inputs, shares, strict=True):
            if share == 0:
                continue
            rows.append(
                {
                    "species": inp.key[0],
                    "quantity": inp.key[1],
                    "share": float(share),
                    "u": inp.u,
                    "source": inp.source,
                }
            )
        rows.sort(key=lambda r: -abs(float(r["share"])))
        return rows

    def leading_inputs(self) -> list[dict[str, Any]]:
        """At each grid temperature, the input with the largest share of Var(ΔrG) (exact for this
        linear model): the first row of :meth:`sensitivity` there, for every T at once."""
        shares = variance_shares(self.model, _input_covariance(self.samples))
        out = []
        for row in shares:
            # argmax takes the first of equal shares, as the stable sort of sensitivity() does
            j = int(np.argmax(np.abs(row)))
            inp = self.samples.inputs[j]
            out.append({"species": inp.key[0], "quantity": inp.key[1], "share": float(row[j])})
        return out

    def sensitivity_by_species(self, T: Any) -> list[tuple[str, float]]:
        """Shares of Var(ΔrG(T)) summed per species-phase, largest first."""
        totals: dict[str, float] = {}
        for row in self.sensitivity(T):
            totals[row["species"]] = totals.get(row["species"], 0.0) + row["share"]
        return sorted(totals.items(), key=lambda kv: -abs(kv[1]))

    def nonlinear_sensitivity(self, T: Any) -> dict[str, list[tuple[str, str, float]]]:
        """First-order Sobol indices for the feasibility indicator at T and the crossover T.

        Estimated from the kept draws (correlation ratio, no extra model runs); ranked, largest
        first, inputs with index 0 left out.
        """
        t = read_temperature(T)
        keys = self.samples.keys
        out: dict[str, list[tuple[str, str, float]]] = {}
        y = (self.samples_at(t) < float(self._threshold(np.array([t]))[0])).astype(float)
        out["feasible_indicator"] = _ranked(keys, first_order_indices(y, self.samples.values))
        self.crossover()
        assert self._crossing is not None
        first = self._crossing[1]
        hit = np.isfinite(first)
        if np.count_nonzero(hit) >= 100:
            idx = first_order_indices(first[hit], self.samples.values[:, hit])
            out["crossover_T"] = _ranked(keys, idx)
        return out

    def gum(self) -> dict[str, np.ndarray]:
        """First-order (GUM) result beside the Monte Carlo one, with the JCGM 101 §8 check.

        ``validated`` is true where both interval ends of the GUM result agree with Monte Carlo
        within δ (JCGM 101 §7.9.2 with 2 significant digits of u). The comparison is decisive only
        where the Monte Carlo ends are themselves known to better than δ (2 standard errors ≤ δ,
        §8.2 note); ``decisive`` says where, and more trials (or adaptive mode) make it so.
        """
        cov = _input_covariance(self.samples)
        shift = np.array([inp.shift for inp in self.samples.inputs])
        y = self.model.G0 + self.model.aG @ shift
        u = gum_uncertainty(self.model, cov)
        k = float(special.ndtri(1.0 - (1.0 - 0.95) / 2.0))
        lo, hi = y - k * u, y + k * u
        delta = numerical_tolerance(u, _ADAPTIVE_DIGITS)
        d_low, d_high = np.abs(lo - self.G.lo), np.abs(hi - self.G.hi)
        thr = self.threshold_J_per_mol
        with np.errstate(divide="ignore", invalid="ignore"):
            p = special.ndtr((thr - y) / u)
        decisive = 2 * np.maximum(self.G.lo_se, self.G.hi_se) <= delta
        return {
            "y": y,
            "u": u,
            "lo": lo,
            "hi": hi,
            "d_low": d_low,
            "d_high": d_high,
            "delta": delta,
            "validated": np.maximum(d_low, d_high) <= delta,
            "decisive": decisive,
            "P": p,
        }

    def shortest_interval(self, T: Any) -> tuple[float, float]:
        """Shortest 95 % coverage interval of ΔrG at one temperature (JCGM 101 §7.7.2), J/mol."""
        return shortest_interval(self.samples_at(read_temperature(T)))

    # --- output ---------------------------------------------------------------------------------
    #: Temperature (K) of the ``sensitivity`` table; None: the middle grid temperature.
    sensitivity_T_K: float | None = None

    def tables(self) -> dict[str, list[dict[str, Any]]]:
        """The result's tables by name: ``temperatures``, ``window`` and ``sensitivity``."""
        t_sens = (
            float(self.sensitivity_T_K)
            if self.sensitivity_T_K is not None
            else float(self.T[len(self.T) // 2])
        )
        return {
            "temperatures": self.rows(),
            "window": self.window(),
            "sensitivity": [{"T_K": t_sens} | r for r in self.sensitivity((t_sens, "K"))],
        }

    def rows(self) -> list[dict[str, Any]]:
        """Per-temperature rows with the documented JSON keys (SI units in the key names)."""
        k = self.log10_K()
        gum = self.gum()
        out = []
        for i, t in enumerate(self.T):
            out.append(
                _dg_row(self.G, i, float(t), self.confidence)
                | {
                    "dH_mean_J_per_mol": float(self.H.mean[i]),
                    "dH_std_J_per_mol": float(self.H.u[i]),
                    "dH_lo_J_per_mol": float(self.H.lo[i]),
                    "dH_hi_J_per_mol": float(self.H.hi[i]),
                    "dS_mean_J_per_mol_K": float(self.S.mean[i]),
                    "dS_std_J_per_mol_K": float(self.S.u[i]),
                    "dS_lo_J_per_mol_K": float(self.S.lo[i]),
                    "dS_hi_J_per_mol_K": float(self.S.hi[i]),
                    "log10_K_mean": float(k["mean"][i]),
                    "log10_K_std": float(k["u"][i]),
                    "log10_K_lo": float(k["lo"][i]),
                    "log10_K_hi": float(k["hi"][i]),
                    "threshold_J_per_mol": float(self.threshold_J_per_mol[i]),
                    "gum_dG_std_J_per_mol": float(gum["u"][i]),
                    "gum_validated": bool(gum["validated"][i]) if gum["decisive"][i] else None,
                }
            )
        return out

    def to_dict(self, sensitivity_at: float | None = None) -> dict[str, Any]:
        """Plain data: settings, per-T rows, window, crossover and the ranked sensitivity."""
        t_sens = sensitivity_at if sensitivity_at is not None else float(self.T[len(self.T) // 2])
        out: dict[str, Any] = {
            "confidence": self.confidence,
            "threshold": self.threshold_text,
            "method": self.samples.method,
            "seed": self.samples.seed,
            "trials": self.trials,
            **({"gas_model": self.gas_model} if self.gas_model != "ideal" else {}),
            "rows": self.rows(),
            "feasible_window": self.window(),
            "sensitivity_T_K": t_sens,
            "sensitivity": self.sensitivity((t_sens, "K")),
            "overrides": [
                {
                    "target": o.target,
                    "quantity": o.quantity,
                    "value": str(o.value),
                    "uncertainty": str(o.uncertainty),
                    "coverage": o.coverage,
                    "distribution": o.distribution
                    if isinstance(o.distribution, str)
                    else repr(o.distribution),
                    "reason": o.reason,
                }
                for o in self.overrides
            ],
        }
        if self.adaptive is not None:
            out["adaptive"] = self.adaptive.__dict__.copy()
        if self.crossing_range is not None:
            out["crossover_distribution"] = self.crossover()
        return out


def _dg_row(g: Summary, i: int, t: float, confidence: float) -> dict[str, Any]:
    """The ΔrG summary and the call at row i, with the documented JSON keys."""
    return {
        "T_K": t,
        "dG_mean_J_per_mol": float(g.mean[i]),
        "dG_std_J_per_mol": float(g.u[i]),
        "dG_median_J_per_mol": float(g.median[i]),
        "dG_lo_J_per_mol": float(g.lo[i]),
        "dG_hi_J_per_mol": float(g.hi[i]),
        "dG_lo_se_J_per_mol": float(g.lo_se[i]),
        "dG_hi_se_J_per_mol": float(g.hi_se[i]),
        "P_feasible": float(g.p_below[i]),
        "P_feasible_se": float(g.p_below_se[i]),
        "verdict": verdict(float(g.p_below[i]), confidence),
    }


def _ranked(keys: Sequence[InputKey], idx: np.ndarray) -> list[tuple[str, str, float]]:
    rows = [(k[0], k[1], float(v)) for k, v in zip(keys, idx, strict=True) if v > 0]
    return sorted(rows, key=lambda r: -r[2])


@dataclass(frozen=True)
class _Threshold:
    """The criterion on ΔrG as a function of T: ``value − R·T·ln_K`` (J/mol).

    A fixed threshold is ``value`` at every T; a required equilibrium constant K gives
    ``−R·T·ln K``. A plain object rather than a closure, so results that hold it pickle.
    """

    value: float
    ln_K: float | None = None

    def __call__(self, T: np.ndarray) -> np.ndarray:
        if self.ln_K is None:
            return np.full(np.shape(T), self.value)
        return -R * np.asarray(T, dtype=float) * self.ln_K


def _threshold_fn(
    threshold: Any, required_K: Any
) -> tuple[Callable[[np.ndarray], np.ndarray], str]:
    if required_K is not None:
        if threshold not in (None, 0, "0 kJ/mol", "0 J/mol"):
            raise UnitError(threshold, "threshold", "give a threshold or a required K, not both")
        try:
            k_req = float(required_K)
        except (TypeError, ValueError):
            raise UnitError(
                required_K, "required equilibrium constant", "must be a number"
            ) from None
        if not k_req > 0 or not math.isfinite(k_req):
            raise UnitError(required_K, "required equilibrium constant", "must be positive")
        return _Threshold(0.0, math.log(k_req)), f"K ≥ {k_req:g}"
    if threshold is None:
        threshold = "0 J/mol"
    value = float(np.squeeze(to_energy_per_mol(threshold)))
    return _Threshold(value), f"ΔrG < {value / 1000:g} kJ/mol"


def assess_uncertainty(
    equation: str | Reaction,
    T: Any = None,
    T_range: Any = None,
    points: int = 41,
    *,
    samples: int = 100_000,
    seed: int | None = None,
    method: Method = "mc",
    adaptive: bool = False,
    confidence: float = 0.95,
    threshold: Any = "0 J/mol",
    required_K: Any = None,
    overrides: Sequence[Override] = (),
    correlations: Correlations | None = None,
    partial_pressures: Mapping[str, Any] | None = None,
    standard_pressure: Any = "1 bar",
    library: Library | None = None,
    balance: bool = False,
    max_trials: int = ADAPTIVE_MAX_TRIALS,
    progress: bool | None = None,
    draws: SampleSet | None = None,
    at_conversion: Mapping[str, Any] | None = None,
    molalities: Mapping[str, Any] | None = None,
    gas_model: str = "ideal",
) -> UncertainAssessment:
    """Monte Carlo feasibility of a reaction: P(ΔrG < threshold), verdict and window over T.

    ``samples`` trials (a power of two for ``method="sobol"``) are drawn from a generator seeded
    with ``seed``; ``adaptive=True`` instead adds blocks of trials until the JCGM 101 §7.9
    tolerance is met at every grid temperature. ``threshold`` is a molar Gibbs energy with units,
    or ``required_K`` a required equilibrium constant (then ΔrG° < −RT ln K_req). ``overrides``
    replace library values or uncertainties; ``correlations`` maps pairs of inputs
    ``((id, quantity), (id, quantity))`` to correlation coefficients. ``method="mc-per-species"``
    draws each input from its own stream keyed by the seed and the input, so the same species
    draws the same values in every call with that seed. ``at_conversion`` (feed, key, required
    conversion, total pressure ``P``) puts the call on ΔrG at the composition that conversion
    gives, as in :func:`feasibly.thermo.assess`.

    ``draws`` evaluates the reaction on given draws instead (e.g. a table's shared draws holding
    every input of the reaction); ``samples``, ``seed`` and ``method`` are then those of the
    draws, and adaptive mode, overrides and correlations are refused (the draws fix them).

    ``molalities`` maps aqueous species to molalities with units (ideal dilute solution, as in
    :func:`feasibly.assess`). ``gas_model="peng-robinson"`` puts Peng–Robinson fugacities in Q,
    as in :func:`feasibly.assess` (the correction depends on the state, not on the data, so every
    trial carries the same one).

    >>> a = assess_uncertainty("MgCO3 -> MgO + CO2", T="800 K", samples=4096, seed=1)
    >>> a.verdicts
    ['feasible']
    """
    confidence = read_confidence(confidence, "assess_uncertainty")
    library = library or default_library()
    rxn = equation if isinstance(equation, Reaction) else Reaction.parse(equation, library, balance)
    temps, crossing_range = read_temperatures(T, T_range, points, "assess_uncertainty")
    # Refuses a species given without a phase whose only data are gas where it is condensed
    # (FeO at 1000 K), as assess does; the notes themselves belong to the nominal call.
    missing_stable_phases(rxn, temps)
    p_std = read_standard_pressure(standard_pressure)
    thr_fn, thr_text = _threshold_fn(threshold, required_K)
    pressures = read_partial_pressures(partial_pressures)
    conv_in = read_at_conversion(at_conversion) if at_conversion is not None else None
    molal = read_molalities(molalities, "assess_uncertainty")
    model = read_gas_model(gas_model, "assess_uncertainty")
    if conv_in and (pressures or molal):
        raise UnitError(
            None,
            "conditions",
            "give either partial pressures and molalities or a feed with a required conversion, "
            "not both",
        )
    if (pressures or conv_in or molal) and required_K is not None:
        raise UnitError(
            required_K,
            "criterion",
            "a required K refers to the standard state; "
            "with partial pressures, molalities or a required conversion give a ΔrG threshold "
            "instead",
        )
    inputs = build_inputs(uncertain_species(rxn), overrides)
    corr = correlation_matrix(inputs, correlations)
    if adaptive:
        if not isinstance(max_trials, int) or max_trials < 2:
            raise InvalidUncertainty(f"max_trials {max_trials!r} must be an integer ≥ 2")
        # Checked before the first block is drawn: the limit is what the run may come to hold.
        read_trials(max_trials, "max_trials", "assess_uncertainty", len(inputs), temps.size)
    else:
        read_trials(samples, "samples", "assess_uncertainty", len(inputs), temps.size)
    if adaptive:
        # JCGM 101 §7.9.4 a): block size M = max(100/(1 − p), 10^4) trials; 2^14 for Sobol blocks.
        block = max(math.ceil(100 / (1 - 0.95)), 10_000) if method != "sobol" else 2**14
        n0 = block
    else:
        n0 = samples
    if draws is not None:
        if adaptive or overrides or correlations:
            raise InvalidInput(
                "draws",
                "assess_uncertainty",
                "given without adaptive mode, overrides or correlations (the draws fix them)",
                draws.method,
            )
        drawn = draws.subset([inp.key for inp in inputs])
        return UncertainAssessment(
            rxn,
            drawn,
            temps,
            confidence,
            thr_fn,
            thr_text,
            p_std,
            pressures,
            (),
            library,
            None,
            crossing_range,
            conv_in,
            molal,
            model,
        )
    show = progress if progress is not None else (adaptive or n0 * temps.size >= _PROGRESS_WORK)
    bar = _Progress(max_trials if adaptive else n0, bool(show))
    drawn = draw_samples(inputs, n0, method=method, seed=seed, correlation=corr)
    bar.update(drawn.n)
    report = None
    if adaptive:

        def one(s: SampleSet) -> Summary:
            lnQ = _ln_q(rxn, pressures, conv_in, p_std, temps, molal, model)
            return summarise(linear_model(rxn, temps, s, p_std, lnQ), s, "G", thr_fn(temps))

        drawn, report = _adaptive(drawn, one, block, max_trials, bar)
    bar.close()
    return UncertainAssessment(
        rxn,
        drawn,
        temps,
        confidence,
        thr_fn,
        thr_text,
        p_std,
        pressures,
        overrides,
        library,
        report,
        crossing_range,
        conv_in,
        molal,
        model,
    )


def _ln_q(
    rxn: Reaction,
    pressures: Mapping[str, float],
    at_conversion: Mapping[str, Any] | None,
    p_std: float,
    T: np.ndarray,
    molalities: Mapping[str, float] | None = None,
    gas_model: str = "ideal",
) -> np.ndarray | None:
    if pressures or molalities:
        lnQ = reaction_quotient(rxn, pressures, p_std, T, molalities)[0]
    elif at_conversion:
        c = at_conversion
        lnQ = quotient_at_conversion(rxn, c["feed"], c["key"], c["required"], c["P_Pa"], p_std, T)
    else:
        return None
    if gas_model == "peng-robinson" and any(sp.phase == "g" for sp in rxn.species_used()):
        lnQ = lnQ + fugacity_term(rxn, T, pressures, at_conversion, "assess_uncertainty")
    return lnQ


def gas_model_warning(assessment: Assessment | UncertainAssessment) -> str | None:
    """The warning an ideal-gas call needs where non-ideality matters, or None.

    Where the Peng–Robinson estimate of Σ ν ln φ at the call's conditions
    (``Assessment.fugacity_term``; computed here for a Monte Carlo call) moves ΔrG by more than
    the standard uncertainty of ΔrG° from the data (GUM, first order; exact here, ΔrG° being
    linear in the library's independent inputs) at some temperature, the warning gives the size
    of the correction there.
    """
    a = assessment
    if a.gas_model != "ideal":
        return None
    if isinstance(a, UncertainAssessment):
        T, p_std = a.T, a.standard_pressure
        if not (a.partial_pressures_Pa or a.at_conversion) or not any(
            sp.phase == "g" for sp in a.reaction.species_used()
        ):
            return None
        try:
            term = fugacity_term(a.reaction, T, a.partial_pressures_Pa, a.at_conversion)
        except FeasiblyError:
            return None  # no estimate: a gas without constants, or an open mixture
        finite = np.isfinite(a.model.G0)
    else:
        if a.fugacity_term is None or a.dG_actual is None:
            return None
        T, p_std, term = a.standard.T, a.standard.standard_pressure, a.fugacity_term
        finite = np.isfinite(a.dG_actual)
    inputs = build_inputs(uncertain_species(a.reaction))
    # two draws: the linear model needs only the inputs' keys from a sample set
    drawn = draw_samples(inputs, 2, seed=0)
    cov = np.diag(np.array([inp.u for inp in inputs]) ** 2)  # independent library inputs
    u = gum_uncertainty(linear_model(a.reaction, T, drawn, p_std), cov)
    shift = R * T * term
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(u > 0, np.abs(shift) / u, np.where(shift != 0, np.inf, 0.0))
    ratio = np.where(finite, ratio, 0.0)  # an infinite ΔrG is not moved
    i = int(np.argmax(ratio))
    if not ratio[i] > 1.0:
        return None
    return (
        f"Non-ideal gases: at {T[i]:.6g} K and {a.conditions}, Peng–Robinson fugacity "
        f"coefficients would move ln Q by {term[i]:+.3g} and ΔrG by {shift[i] / 1000:+.3g} "
        f"kJ/mol ({ratio[i]:.2g} times the data's standard uncertainty of ΔrG°, "
        f"{u[i] / 1000:.2g} kJ/mol). This ideal-gas call is not reliable here; use the "
        "Peng–Robinson gas model (gas_model='peng-robinson'; command line: --gas-model "
        "peng-robinson)."
    )


def with_gas_model_warning(assessment: Assessment) -> Assessment:
    """The assessment with :func:`gas_model_warning` added to its notes (once), for the command
    line, the widgets and the records, which all show the notes."""
    text = gas_model_warning(assessment)
    if text is not None and text not in assessment.notes:
        assessment.notes.append(text)
    return assessment
