"""Propagating property-data uncertainty to ΔrG(T), K and the probability that a step is feasible.

Every reaction quantity here is exactly linear in the uncertain inputs of
:mod:`feasibly.uncertainty.inputs` (ΔfH° and S° shifts, heat-capacity factors), so each is
``nominal(T) + a(T) · x``: the coefficient rows ``a(T)`` come from the species' own
increments, the draws ``x`` are shared, and the Monte Carlo ΔrG for N trials at T temperatures
is one matrix product, evaluated in temperature blocks so that memory stays small. The same rows
give the first-order (GUM uncertainty framework) result and the exact variance shares.

Increments for the heat-capacity factor are taken from the entry's anchor temperature: 298.15 K
when the entry's range contains it, otherwise the end of its range nearest to 298.15 K, so that a
phase which does not exist at 298.15 K is not scaled by an extrapolation.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special

from ..conditions import STANDARD_PRESSURE_PA
from ..errors import InvalidInput, InvalidUncertainty
from ..library.cp_models import T_REF, R
from ..library.species import Species
from ..thermo.reaction import Reaction
from ._quantiles import (
    block_rows,
    factor_rows,
    factored_statistics,
    run_parallel,
    single_threaded_blas,
    streamed_statistics,
    workers,
)
from .sampling import SampleSet

__all__ = [
    "LinearModel",
    "Summary",
    "anchor_temperature",
    "block_rows",
    "deviation_rows",
    "gum_uncertainty",
    "level_window",
    "linear_model",
    "numerical_tolerance",
    "population_moments",
    "summarise",
    "uncertain_species",
    "variance_shares",
    "window_phrase",
    "with_transition_parents",
]

_LN10 = math.log(10.0)
#: Coverage probability of the reported intervals (JCGM 101:2008 §7.7: 95 % is the usual choice).
COVERAGE = 0.95


def anchor_temperature(sp: Species) -> float:
    """Temperature from which the heat-capacity factor scales this entry's increments, K."""
    lo, hi = sp.T_range
    return min(max(T_REF, lo), hi)


@dataclass(frozen=True)
class LinearModel:
    """ΔrH°, ΔrS°, ΔrG° at temperatures ``T`` as nominal + coefficients · input deviations.

    ``aH``, ``aS``, ``aG`` have shape (len(T), n_inputs) in the order of the sample set's inputs;
    ``H0``, ``S0``, ``G0`` are the values at the library nominals (J/mol, J/(mol·K)), with RT ln Q
    already in ``G0`` when ``lnQ`` was given. ``pieces`` labels the rows whose coefficients are
    the same functions of T (every term on the same phase and heat-capacity interval), or is None.
    """

    T: np.ndarray
    H0: np.ndarray
    S0: np.ndarray
    G0: np.ndarray
    aH: np.ndarray
    aS: np.ndarray
    aG: np.ndarray
    pieces: np.ndarray | None = None

    def mean(self, which: str, samples: SampleSet) -> np.ndarray:
        """Monte Carlo mean over the samples (exactly the mean of the sampled outputs)."""
        nominal, coef = self._pick(which)
        return nominal + coef @ samples.values.mean(axis=1)

    def _pick(self, which: str) -> tuple[np.ndarray, np.ndarray]:
        return {"H": (self.H0, self.aH), "S": (self.S0, self.aS), "G": (self.G0, self.aG)}[which]

    def values(
        self,
        which: str,
        samples: SampleSet,
        rows: slice = slice(None),
        out: np.ndarray | None = None,
    ) -> np.ndarray:
        """The sampled outputs for temperature rows ``rows``: shape (rows, N).

        ``out`` is a buffer of at least that many rows to write into (reusing one saves the
        page faults of a fresh array per block, which cost as much as the product itself).
        """
        nominal, coef = self._pick(which)
        c = coef[rows]
        target = None if out is None else out[: c.shape[0]]
        res = np.matmul(c, samples.values, out=target)
        res += nominal[rows, None]
        return res


def uncertain_species(rxn: Reaction) -> list[Species]:
    """Every entry whose inputs a reaction's uncertainty depends on: the phases it may use and
    the neighbours those are carried from at their transitions."""
    return with_transition_parents(rxn.species_used(), rxn.library)


def with_transition_parents(entries: Sequence[Species], library: Any) -> list[Species]:
    """The entries and the neighbours they are carried from at their transitions, sorted by id."""
    seen: dict[str, Species] = {}
    stack = list(entries)
    while stack:
        sp = stack.pop()
        if sp.id in seen:
            continue
        seen[sp.id] = sp
        parent = library.transition_parent(sp)
        if parent is not None:
            stack.append(parent)
    return [seen[k] for k in sorted(seen)]


def deviation_rows(
    sp: Species,
    T: np.ndarray,
    rxn: Reaction,
    keys: dict[tuple[str, str], int],
    out_h: np.ndarray,
    out_s: np.ndarray,
    nu: float,
    mask: np.ndarray,
) -> None:
    """Add ν × (∂H/∂x, ∂S/∂x) of entry ``sp`` at temperatures ``T`` (rows ``mask``) in place."""
    try:
        jH, jS, jc = keys[(sp.id, "dHf")], keys[(sp.id, "S298")], keys[(sp.id, "cp")]
    except KeyError:
        raise InvalidInput(
            "samples",
            "linear_model",
            f"a sample set with draws for {sp.id} (draw samples for every species of the "
            "reactions you compare)",
            f"a sample set of {len(keys) // 3} species without it",
        ) from None
    t_a = anchor_temperature(sp)
    ta = np.array([t_a])
    out_h[mask, jc] += nu * (sp.cp_model.h_inc(T) - sp.cp_model.h_inc(ta))
    out_s[mask, jc] += nu * (sp.cp_model.s_inc(T) - sp.cp_model.s_inc(ta))
    out_h[mask, jH] += nu
    parent = rxn.library.transition_parent(sp)
    if parent is None:
        out_s[mask, jS] += nu
        return
    # Carried from its neighbour at the transition T_a: the own input is the transition
    # enthalpy's deviation, with ΔS_tr = ΔH_tr / T_a, plus the neighbour's deviation at T_a.
    out_s[mask, jH] += nu / t_a
    deviation_rows(parent, np.full(T.shape, t_a), rxn, keys, out_h, out_s, nu, mask)


def linear_model(
    rxn: Reaction,
    T: np.ndarray,
    samples: SampleSet,
    standard_pressure: float = STANDARD_PRESSURE_PA,
    lnQ: np.ndarray | None = None,
) -> LinearModel:
    """Coefficients of ΔrH°, ΔrS°, ΔrG° in the inputs of ``samples`` at temperatures ``T``.

    Raises when the reaction uses a species-phase whose inputs the sample set does not hold.
    """
    from ..thermo import standard_properties

    T = np.atleast_1d(np.asarray(T, dtype=float))
    std = standard_properties(rxn, T, standard_pressure)
    keys = {k: i for i, k in enumerate(samples.keys)}
    n = len(keys)
    aH = np.zeros((T.size, n))
    aS = np.zeros((T.size, n))
    plan = rxn.phase_plan(T)
    # Per row, each term's phase and heat-capacity interval: rows that agree on all of them have
    # coefficients that are the same functions of T (7 for NASA-7, 9 for NASA-9 polynomials).
    signature = np.zeros((T.size, 2 * len(rxn.terms)), dtype=np.int64)
    for i, (term, idx) in enumerate(zip(rxn.terms, plan, strict=True)):
        signature[:, 2 * i] = idx
        for k, sp in enumerate(term.candidates):
            mask = idx == k
            if np.any(mask):
                deviation_rows(sp, T[mask], rxn, keys, aH, aS, term.nu * term.scale(k), mask)
                breaks = getattr(sp.cp_model, "breaks", None)
                if breaks is not None and len(breaks) > 2:
                    inner = np.asarray(breaks[1:-1])
                    signature[mask, 2 * i + 1] = np.searchsorted(inner, T[mask], side="left")
    pieces = np.unique(signature, axis=0, return_inverse=True)[1].reshape(T.size)
    aG = aH - T[:, None] * aS
    G0 = std.dG + (R * T * lnQ if lnQ is not None else 0.0)
    return LinearModel(T, std.dH, std.dS, G0, aH, aS, aG, pieces)


def sample_moments(samples: SampleSet) -> tuple[np.ndarray, np.ndarray]:
    """Mean (n,) and covariance (n, n, ddof = 1) of the input draws, without copying them.

    Computed once per sample set (its draws are read-only) and kept: every summary of every
    output at every temperature uses the same moments.
    """
    if samples._moments is None:
        x = samples.values
        n = x.shape[1]
        xbar = x.mean(axis=1)
        # x xᵀ in one slice of trials per worker thread, each on single-threaded BLAS: a k × k
        # result from k × N draws, where BLAS's own threads stall on a shared machine.
        threads = max(1, min(workers(), n // 4096))
        edges = np.linspace(0, n, threads + 1).astype(int)
        parts = np.empty((threads, x.shape[0], x.shape[0]))

        def gram(t: int) -> None:
            part = x[:, edges[t] : edges[t + 1]]
            np.matmul(part, part.T, out=parts[t])

        with single_threaded_blas():
            run_parallel(gram, threads)
        second = parts.sum(axis=0) / n
        cov = (second - np.outer(xbar, xbar)) * (n / (n - 1))
        samples._moments = (xbar, np.atleast_2d(cov))
    return samples._moments


def population_moments(samples: SampleSet) -> tuple[np.ndarray, np.ndarray]:
    """Mean (n,) and covariance (n, n) of the input deviations as their distributions define
    them, before any draw: the shift and standard uncertainty of each input (a user-given
    scipy distribution's own mean and standard deviation), and the correlations asked for
    (between the underlying normal draws: exact for normal inputs, close for others).

    Used only to place the brackets of a one-pass summary; every reported number comes from
    the draws."""
    mean = np.empty(len(samples.inputs))
    sd = np.empty(len(samples.inputs))
    for j, inp in enumerate(samples.inputs):
        d = inp.distribution
        if isinstance(d, str):
            mean[j], sd[j] = inp.shift, inp.u
        else:
            mean[j], sd[j] = float(d.mean()) - inp.nominal, float(d.std())
    corr = samples.correlation
    cov = np.outer(sd, sd) * (np.eye(sd.size) if corr is None else corr)
    return mean, cov


def numerical_tolerance(u: np.ndarray, digits: int = 2) -> np.ndarray:
    """JCGM 101:2008 §7.9.2: δ = ½·10^ℓ where u is written c × 10^ℓ with ``digits`` digits in c."""
    u = np.asarray(u, dtype=float)
    with np.errstate(divide="ignore"):
        ell = np.floor(np.log10(np.where(u > 0, u, np.nan))) - (digits - 1)
    return np.where(u > 0, 0.5 * 10.0**ell, 0.0)


@dataclass(frozen=True)
class Summary:
    """Monte Carlo summary of one output at each temperature (arrays over T; units of the output).

    ``lo``/``hi`` are the ends of the probabilistically symmetric 95 % coverage interval (JCGM 101
    §7.7.1), ``*_se`` the Monte Carlo standard errors of the quantiles (order statistics), and
    ``p_below`` the fraction of trials below ``threshold`` with its standard error.
    """

    mean: np.ndarray
    u: np.ndarray
    median: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    median_se: np.ndarray
    lo_se: np.ndarray
    hi_se: np.ndarray
    p_below: np.ndarray
    p_below_se: np.ndarray
    n: int


def summarise(
    model: LinearModel,
    samples: SampleSet,
    which: str = "G",
    threshold: np.ndarray | float = 0.0,
    coverage: float = COVERAGE,
) -> Summary:
    """Mean, u, median, coverage interval and P(output < threshold) at every temperature.

    Mean and standard deviation come from the sample moments of the inputs through the linear rows
    (identical to the moments of the sampled outputs); quantiles and probabilities come from the
    sampled outputs themselves, selected exactly (the same numbers as ``numpy.quantile`` of the
    outputs, streamed a chunk of trials at a time so the T × N matrix is never held).
    """
    if not 0.0 < coverage < 1.0:
        raise InvalidUncertainty(
            f"coverage probability {coverage!r} must lie strictly between 0 and 1"
        )
    from . import _scan

    nominal, coef = model._pick(which)
    n = samples.n
    tail = (1.0 - coverage) / 2.0
    probs = (tail, 0.5, 1.0 - tail)
    thr = np.broadcast_to(np.asarray(threshold, dtype=float), model.T.shape).copy()
    # Every matrix step here is small or runs in our own worker threads: BLAS on one thread.
    with single_threaded_blas():
        if coef.shape[0] > 2 and _scan.compiled() and n > 1:
            # Each input's spread (its standard uncertainty and any shift of its nominal)
            # judges the factorisation: the sizes of the contributions, not the coefficients.
            scale = np.array([math.hypot(inp.u, inp.shift) for inp in samples.inputs])
            factors = factor_rows(coef, scale, model.pieces)
            # Moments from the factored inputs (a few rows instead of every input): the mean and
            # covariance of z = right @ x through each row's coefficients. The brackets are
            # placed from the inputs' distributions, so z is scanned as it is formed.
            mu, sigma = population_moments(samples)
            # (coef @ sigma) * coef summed along rows: a BLAS product and one pass, where the
            # three-operand einsum loops in C over every triple (0.26 ms of a 1.5 ms budget for
            # 60 inputs × 50 temperatures).
            spread = np.add.reduce((coef @ sigma) * coef, axis=1)
            guess = (nominal + coef @ mu, np.sqrt(np.clip(spread, 0.0, None)))
            mean, u, q, e, below = factored_statistics(
                factors, nominal, samples.values, probs, thr, coef, guess=guess
            )
            return _summary(mean, u, q, e, below, n)
        xbar, cov = sample_moments(samples)
        mean = nominal + coef @ xbar
        var = np.einsum("ij,jk,ik->i", coef, cov, coef)
        u = np.sqrt(np.clip(var, 0.0, None))
        q, e, below = streamed_statistics(
            coef, nominal, samples.values, mean, u, probs, thr, scale=np.sqrt(np.diag(cov))
        )
    return _summary(mean, u, q, e, below, n)


def _summary(
    mean: np.ndarray, u: np.ndarray, q: np.ndarray, e: np.ndarray, below: np.ndarray, n: int
) -> Summary:
    p = below / n
    return Summary(
        mean,
        u,
        q[:, 1],
        q[:, 0],
        q[:, 2],
        e[:, 1],
        e[:, 0],
        e[:, 2],
        p,
        np.sqrt(p * (1.0 - p) / n),
        n,
    )


def gum_uncertainty(model: LinearModel, covariance: np.ndarray, which: str = "G") -> np.ndarray:
    """First-order (GUM, JCGM 100:2008 eq. 13) standard uncertainty: √(aᵀ Σ a) per temperature."""
    _, coef = model._pick(which)
    return np.sqrt(np.clip(np.einsum("ij,jk,ik->i", coef, covariance, coef), 0.0, None))


def variance_shares(model: LinearModel, covariance: np.ndarray, which: str = "G") -> np.ndarray:
    """Each input's share of the first-order variance, shape (len(T), n_inputs); rows sum to 1.

    ``a_j (Σ a)_j / aᵀ Σ a``: for independent inputs the familiar a_j² u_j² / u_c²; with
    correlations a share may be negative (the input then offsets another).
    """
    _, coef = model._pick(which)
    total = np.einsum("ij,jk,ik->i", coef, covariance, coef)
    contrib = coef * (coef @ covariance)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total[:, None] > 0, contrib / total[:, None], 0.0)


def first_order_indices(y: np.ndarray, x: np.ndarray, bins: int | None = None) -> np.ndarray:
    """First-order Sobol indices of output samples ``y`` (N,) from given input samples ``x`` (n, N).

    Correlation-ratio estimator from given data: sort by each input, cut into equal-count bins, and
    take Var(bin means of y) / Var(y), less the bias of bin means of pure noise (from memory:
    Plischke, Borgonovo & Smith, Eur. J. Oper. Res. 226 (2013) 536). Needs no extra model runs, so
    it works for non-linear outputs such as indicators and crossover temperatures.
    """
    y = np.asarray(y, dtype=float)
    n = y.size
    var = y.var()
    if n < 100 or var == 0:
        return np.zeros(x.shape[0])
    b = bins or max(8, min(64, int(math.sqrt(n) / 4)))
    out = np.empty(x.shape[0])
    edges = np.linspace(0, n, b + 1).astype(int)
    counts = np.diff(edges)
    for j in range(x.shape[0]):
        ys = y[np.argsort(x[j], kind="stable")]
        means = np.add.reduceat(ys, edges[:-1]) / counts
        between = np.sum(counts * (means - ys.mean()) ** 2) / n
        out[j] = max(0.0, between / var - (b - 1) / (n - 1))
    return out


def normal_cdf(x: np.ndarray) -> np.ndarray:
    """Standard normal CDF (scipy.special.ndtr)."""
    return special.ndtr(x)


def crossings(
    model: LinearModel,
    samples: SampleSet,
    threshold: np.ndarray | float = 0.0,
    chunk: int | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """For each trial, the first temperature where ΔrG crosses ``threshold``, and how many times.

    ``model.T`` must be an ascending grid; crossings are located by linear interpolation between
    grid points (trials that never cross get NaN).
    """
    T = model.T
    thr = np.broadcast_to(np.asarray(threshold, dtype=float), T.shape)
    n = samples.n
    first = np.full(n, np.nan)
    count = np.zeros(n, dtype=np.int64)
    chunk = chunk or block_rows(n)
    prev: np.ndarray | None = None  # the previous block's last row
    # One BLAS thread: a multi-threaded product leaves its threads spinning after the call,
    # beside the summaries' own worker threads that follow.
    with single_threaded_blas():
        for start in range(0, T.size, chunk):
            block = model.values("G", samples, slice(start, min(start + chunk, T.size)))
            block -= thr[start : start + block.shape[0], None]
            negative = block < 0
            # Whole blocks at once: first the step from the previous block's last row into this
            # block (grid points start − 1 → start), then the steps inside the block (a sign
            # flip between rows j and j + 1 is a crossing between grid points start + j and
            # start + j + 1).
            if prev is not None:
                edge = (prev < 0) != negative[0]
                count += edge
                new = np.flatnonzero(edge & np.isnan(first))
                if new.size:
                    a, b = prev[new], block[0, new]
                    frac = a / (a - b)
                    first[new] = T[start - 1] + frac * (T[start] - T[start - 1])
            flip = negative[1:] != negative[:-1]
            count += flip.sum(axis=0)
            new = np.flatnonzero(flip.any(axis=0) & np.isnan(first))
            if new.size:
                j = np.argmax(flip[:, new], axis=0)  # each trial's first flip in this block
                a, b = block[j, new], block[j + 1, new]
                k = start + j + 1
                frac = a / (a - b)
                first[new] = T[k - 1] + frac * (T[k] - T[k - 1])
            prev = block[-1]
    return first, count


def symmetric_interval_from(values: np.ndarray, coverage: float = COVERAGE) -> tuple[float, float]:
    """Probabilistically symmetric interval of a 1-D sample (JCGM 101 §7.7.1), numpy's rule."""
    tail = (1.0 - coverage) / 2.0
    lo, hi = np.quantile(values, [tail, 1.0 - tail])
    return float(lo), float(hi)


def shortest_interval(values: np.ndarray, coverage: float = COVERAGE) -> tuple[float, float]:
    """Shortest coverage interval of a 1-D sample (JCGM 101:2008 §7.7.2)."""
    v = np.sort(np.asarray(values, dtype=float))
    n = v.size
    q = round(coverage * n)  # §7.7.2: q = pM, rounded to an integer
    if q < 1 or q >= n:
        raise InvalidUncertainty("too few trials for a shortest coverage interval")
    widths = v[q:] - v[: n - q]
    r = int(np.argmin(widths))
    return float(v[r]), float(v[r + q])


def level_window(
    T: np.ndarray, p: np.ndarray, level: float, se: np.ndarray | None = None
) -> list[dict[str, Any]]:
    """Intervals of the ascending grid ``T`` where ``p`` ≥ ``level`` (a probability or fraction).

    Each edge is interpolated linearly where ``p`` crosses ``level``; an edge at an end of the grid
    is marked open (the interval may extend beyond it). With ``se`` (the Monte Carlo standard
    error of ``p``), each inner edge also gets the standard error of its location: se of p divided
    by the slope of p there.

    >>> level_window(np.array([500., 600., 700.]), np.array([0.0, 0.5, 1.0]), 0.75)
    [{'T_lo_K': 650.0, 'lo_open': False, 'T_hi_K': 700.0, 'hi_open': True}]
    """
    T = np.asarray(T, dtype=float)
    p = np.asarray(p, dtype=float)
    ok = p >= level

    def edge(a: int, b: int) -> tuple[float, float | None]:
        dp = p[b] - p[a]
        t = float(T[a] + (level - p[a]) / dp * (T[b] - T[a])) if dp else float(T[a] + T[b]) / 2
        slope = abs(dp / (T[b] - T[a]))
        err = float(max(se[a], se[b]) / slope) if se is not None and slope > 0 else None
        return t, err

    out: list[dict[str, Any]] = []
    i = 0
    while i < T.size:
        if not ok[i]:
            i += 1
            continue
        j = i
        while j + 1 < T.size and ok[j + 1]:
            j += 1
        lo, lo_se = edge(i - 1, i) if i > 0 else (float(T[0]), None)
        hi, hi_se = edge(j, j + 1) if j + 1 < T.size else (float(T[-1]), None)
        row: dict[str, Any] = {
            "T_lo_K": lo,
            "lo_open": i == 0,
            "T_hi_K": hi,
            "hi_open": j + 1 == T.size,
        }
        if se is not None:
            row = {
                "T_lo_K": lo,
                "T_lo_se_K": lo_se,
                "lo_open": i == 0,
                "T_hi_K": hi,
                "T_hi_se_K": hi_se,
                "hi_open": j + 1 == T.size,
            }
        out.append(row)
        i = j + 1
    return out


def window_phrase(windows: Sequence[dict[str, Any]]) -> str:
    """The intervals of :func:`level_window` in words, e.g. 'from 742 K to the end of the range'.

    >>> window_phrase([{"T_lo_K": 742.4, "lo_open": False, "T_hi_K": 900.0, "hi_open": True}])
    'from 742 K to the end of the range'
    """
    return "; ".join(
        ("from the start of the range" if w["lo_open"] else f"from {w['T_lo_K']:.0f} K")
        + (" to the end of the range" if w["hi_open"] else f" to {w['T_hi_K']:.0f} K")
        for w in windows
    )


def route_probability(
    models: Sequence[LinearModel], samples: SampleSet, thresholds: Sequence[float]
) -> tuple[float, float]:
    """P(every step's ΔrG < its threshold) over shared draws, with its standard error.

    Each model holds one temperature (the step's own); the steps share every common species'
    draws, so the joint probability is not the product of the separate ones.
    """
    ok = np.ones(samples.n, dtype=bool)
    for m, thr in zip(models, thresholds, strict=True):
        if m.T.size != 1:
            raise InvalidInput(
                "models",
                "route_probability",
                "one temperature per step",
                f"{m.T.size} temperatures",
            )
        ok &= m.values("G", samples)[0] < thr
    p = float(ok.mean())
    return p, math.sqrt(p * (1 - p) / samples.n)
