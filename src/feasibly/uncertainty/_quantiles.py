"""Exact sample quantiles and exceedance counts of many rows, fast.

For each row of T × N Monte Carlo outputs this returns the same quantiles as
``numpy.quantile(row, p)`` (the default 'linear' rule: h = (N − 1)p, interpolate between the order
statistics ⌊h⌋ and ⌊h⌋ + 1, with numpy's own arithmetic), order-statistic standard errors, and
the count below a threshold.

Speed comes from selecting only inside a narrow bracket around each quantile: a guess from the
row's mean and standard deviation, a count of the values below the bracket, and a sort of the
few values inside it. The bracket is checked to contain every rank needed; when it does not (a
far-from-normal output) the row is formed whole, the bracket widened, and in the end the whole
row partitioned — so the result is always exact, never approximate.

``factored_statistics`` does this for outputs that are linear in the draws (every Δr quantity
is) without ever holding them: the coefficient rows are factored (``factor_rows``: one low-rank
factorisation, or one per polynomial piece, whichever costs less), and the few factored inputs
z = right @ x are formed by the compiled former of ``_scan`` in worker threads, a block of
trials at a time, with their moments (which give each output's mean and standard deviation).
Given a guess of each output's mean and spread from the inputs' distributions, each block is
scanned by the kernel as soon as it is formed, while it is in cache (one pass; rows whose
guessed brackets missed are scanned again); otherwise z is formed first and scanned after.
``streamed_statistics`` does the same for given moments, and ``row_statistics`` for rows
already in memory.
"""

from __future__ import annotations

import contextlib
import math
import os
import threading
from collections.abc import Callable, Iterator
from functools import cache
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np
from scipy import special

from .._kernels import WorkerPool

if TYPE_CHECKING:
    from ._scan import Former, Kernels

__all__ = [
    "Factors",
    "factor_rows",
    "factored_statistics",
    "low_rank",
    "row_statistics",
    "run_parallel",
    "single_threaded_blas",
    "streamed_statistics",
    "workers",
]

# Bracket half-width in units of the expected spacing of the needed ranks: 1.5 gives room for a
# normal-approximation guess to be off by about one standard error of the quantile, which is what
# it is for a near-normal output; the bracket is widened (×4) when the guess was worse. Narrow
# brackets matter: extracting the values inside costs in proportion to how many there are.
_WIDTH_FACTOR = 1.5
_EPS = float(np.finfo(float).eps)
# From this many trials on, 2.5 (about four standard errors of slack instead of two): there a
# miss costs a second scan of the row, while the values inside the brackets are under 1 % of the
# outputs. Measured: at 10^6 trials of a normal output the 2.5 % quantile lay 2.4 standard errors
# from its normal guess, and 40 of 50 rows were scanned twice (bench_uncertainty_summary.py,
# 8 species).
_WIDE_FROM = 200_000
_WIDE_FACTOR = 2.5
_MAX_WIDENINGS = 3
# Bracket half-width, in the same units, when the brackets are placed from the inputs'
# distributions before any trial is seen (the one-pass summary): the sample quantile then lies
# about one standard error of the quantile from the guess, against a fraction of one from a
# guess through the sample moments. Simulated (standard normal outputs, brackets at the
# population's quantiles): with 2.0, 2 of 900 brackets missed at 10^5 trials; with 2.5 none of
# 6 000 at 10^4, 900 at 10^5 and 120 at 10^6. A miss costs a second scan of that row.
_GUESS_WIDTH = 2.5


def _width_factor(n: int) -> float:
    return _WIDE_FACTOR if n >= _WIDE_FROM else _WIDTH_FACTOR


@cache
def workers() -> int:
    """Threads used for row statistics: the cores this process may use, at most 4."""
    try:
        n = len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - non-Linux
        n = os.cpu_count() or 1
    return max(1, min(4, n))


def _ranks(n: int, p: float) -> tuple[int, float, int]:
    h = (n - 1) * p
    lo = math.floor(h)
    d = max(1, math.ceil(math.sqrt(n * p * (1.0 - p))))  # one binomial standard deviation of rank
    return lo, h - lo, d


def _select(
    row: np.ndarray, ranks: list[int], guess: float, half: float, buf: tuple[np.ndarray, np.ndarray]
) -> np.ndarray:
    """Order statistics at ``ranks`` (sorted, 0-based) of ``row``, exactly.

    One bracket [guess − half, guess + half]: three vectorised passes find the values inside and
    how many lie below; a partial sort of the few inside gives the order statistics. When the
    bracket misses a needed rank it is widened, and in the end the whole row is partitioned.
    """
    n = row.size
    lo_r, hi_r = ranks[0], ranks[-1]
    above_a, below_b = buf
    for _ in range(_MAX_WIDENINGS):
        if not (math.isfinite(half) and half > 0):
            break
        np.greater_equal(row, guess - half, out=above_a)
        below = n - int(np.count_nonzero(above_a))
        if below <= lo_r:
            np.less_equal(row, guess + half, out=below_b)
            np.logical_and(above_a, below_b, out=below_b)
            inside = row[below_b]
            if below + inside.size > hi_r:
                local = [r - below for r in ranks]
                return np.partition(inside, local)[local]
        half *= 4.0
    return np.partition(row, ranks)[ranks]


class _Plan(NamedTuple):
    """What selecting quantile ``p`` of N values needs.

    ``ranks``: the sorted order statistics needed (the two that ``numpy.quantile`` interpolates
    between, lower rank ``lo`` with fraction ``frac``, and one binomial standard deviation ``d``
    either side for the standard error); ``z``: the standard normal quantile, which places the
    bracket's centre; ``half``: the bracket's half width in standard deviations of the output
    (for a normal output).
    """

    ranks: list[int]
    lo: int
    frac: float
    d: int
    z: float
    half: float

    @property
    def span(self) -> int:
        return self.ranks[-1] - self.ranks[0]


@cache
def _bracket(n: int, p: float) -> _Plan:
    lo, frac, d = _ranks(n, p)
    ranks = sorted({max(lo - d, 0), lo, min(lo + 1, n - 1), min(lo + 1 + d, n - 1)})
    z = float(special.ndtri(p))
    density = math.exp(-0.5 * z * z) / math.sqrt(2 * math.pi)  # of the standardised output
    half = _width_factor(n) * (ranks[-1] - ranks[0] + 8) / (n * density)
    return _Plan(ranks, lo, frac, d, z, half)


def _quantile(vals: dict[int, Any], n: int, plan: _Plan) -> tuple[Any, Any]:
    """The quantile and its order-statistic standard error from the order statistics ``vals``
    (rank → value, or rank → array of values over rows).

    The interpolation is numpy's 'linear' rule with numpy's own arithmetic (``_lerp`` in
    ``numpy/lib/_function_base_impl.py``: from the upper end when the fraction is ½ or more), so
    the result is the same floating-point number as ``numpy.quantile``.
    """
    lo, frac, d = plan.lo, plan.frac, plan.d
    a, b = np.asarray(vals[lo]), np.asarray(vals[min(lo + 1, n - 1)])
    diff = b - a
    q = b - diff * (1 - frac) if frac >= 0.5 else a + diff * frac
    # Order-statistic standard error: half the spread of the ranks one binomial standard
    # deviation either side (distribution-free; from memory, e.g. Wilcox, Introduction to
    # Robust Estimation, §3.5).
    error = (np.asarray(vals[min(lo + 1 + d, n - 1)]) - np.asarray(vals[max(lo - d, 0)])) / 2.0
    return q, error


def _one_row(
    row: np.ndarray,
    mean: float,
    std: float,
    probs: tuple[float, ...],
    threshold: float,
    buf: tuple[np.ndarray, np.ndarray] | None = None,
) -> tuple[list[float], list[float], int]:
    n = row.size
    if buf is None:
        buf = (np.empty(n, dtype=bool), np.empty(n, dtype=bool))
    quantiles, errors = [], []
    for p in probs:
        plan = _bracket(n, p)
        guess, width = mean + std * plan.z, (plan.half * std if std > 0 else math.inf)
        vals = dict(zip(plan.ranks, _select(row, plan.ranks, guess, width, buf), strict=True))
        q, err = _quantile(vals, n, plan)
        quantiles.append(float(q))
        errors.append(float(err))
    below = int(np.count_nonzero(np.less(row, threshold, out=buf[0])))
    return quantiles, errors, below


# Bytes of sampled outputs formed at a time wherever rows are formed whole: small enough that
# N = 10^6 trials stays far below 300 MB, large enough that the matrix products stay efficient.
_BLOCK_BYTES = 16 * 2**20


def block_rows(n: int) -> int:
    """Rows (temperatures) per block of about 16 MB for N trials (at least 1)."""
    return max(1, _BLOCK_BYTES // (8 * max(n, 1)))


def _empty_statistics(rows: int, k: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Quantiles (rows × k), their standard errors (rows × k) and counts (rows,), unfilled."""
    return np.empty((rows, k)), np.empty((rows, k)), np.empty(rows, dtype=np.int64)


def row_statistics(
    block: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Quantiles (T × k), their standard errors (T × k) and counts below threshold (T,)."""
    t = block.shape[0]
    q, e, c = _empty_statistics(t, len(probs))
    buf = (np.empty(block.shape[1], dtype=bool), np.empty(block.shape[1], dtype=bool))
    for i in range(t):
        qi, ei, ci = _one_row(
            block[i], float(means[i]), float(stds[i]), probs, float(thresholds[i]), buf
        )
        q[i], e[i], c[i] = qi, ei, ci
    return q, e, c


# Threads get whole multiples of this many trials (a multiple of the kernel's chunks, so every
# thread but the last scans whole chunks, eight trials at a time).
_CHUNK_TRIALS = 1024
# Temperature rows streamed together: bounds the bracket buffers (two threads) to about 5 MB per
# 100 rows at N = 10^5 and 15 MB at 10^6; more rows are done in turns.
_ROWS_PER_PASS = 128
# Up to this many rows, each is formed whole (N values) and selected directly: streaming's fixed
# cost (a kernel call per chunk of trials) is larger than the work for one or two rows.
_DIRECT_ROWS = 2


def low_rank(
    coef: np.ndarray, scale: np.ndarray, max_rank: int | None = None
) -> tuple[np.ndarray, np.ndarray] | None:
    """``coef`` (rows × k) as A (rows × r) @ B (r × k) when its rank r is well below k, else None.

    Δr rows over temperature have low rank: every ΔfH° input enters with the same T-independent
    coefficient ν and every S° input with −νT, so 18 inputs of a 6-species reaction span 8
    directions. The product then costs r instead of k multiply-adds per trial and temperature.
    ``scale`` is each input's spread: the factorisation is judged on coef × scale, the sizes of
    the contributions, and refused unless it reproduces them to ``_ACCEPT_ULPS`` rounding errors
    of the largest (about the rounding noise of the coefficients themselves), so the
    outputs differ from the direct product only in the last bits.
    """
    rows, k = coef.shape
    spread = _spread(scale)
    scaled = coef * spread
    top = float(np.max(np.abs(scaled))) if scaled.size else 0.0
    if rows < 2 or k < 4 or not math.isfinite(top) or top == 0.0:
        return None
    tolerance = _tolerance(scaled)
    with single_threaded_blas():  # a few-kB problem: BLAS threads would only wait for each other
        # QR with column pivoting straight from LAPACK (scipy.linalg.qr's checks cost more than
        # the factorisation of a 50 × 60 matrix).
        geqp3, orgqr = _lapack()
        qr, jpvt, tau, _, info = geqp3(scaled)
        if info != 0:
            return None
        piv = jpvt - 1  # LAPACK counts columns from 1
        m = min(rows, k)
        r = np.triu(qr[:m])
        diag = np.abs(np.diag(r))
        # The rank is cut where the acceptance test below can pass: with column pivoting every
        # entry of the dropped part Q[:, r:] R[r:, r:] is at most |R[r, r]|, so directions up to
        # half the tolerance may go and the other half is left for the rounding of the rest.
        rank = int(np.count_nonzero(diag > 0.5 * tolerance))
        if rank > ((3 * k) // 4 if max_rank is None else max_rank):
            return None
        # Only the kept directions of Q: the first ``rank`` reflectors give its first columns.
        a, _, info = orgqr(qr[:, :rank], tau[:rank]) if rank else (np.zeros((rows, 0)), 0, 0)
        if info != 0:
            return None
        b_scaled = np.empty((rank, k))
        b_scaled[:, piv] = r[:rank]
        if not _reproduces(a @ b_scaled, scaled):
            return None
    return np.ascontiguousarray(a), b_scaled / spread


def _spread(scale: np.ndarray) -> np.ndarray:
    """Each input's spread for judging a factorisation (1 where it has none)."""
    return np.where(scale > 0, scale, 1.0)


# A factorisation must reproduce every contribution (coefficient × spread) to this many rounding
# errors of the largest one: 256 ε is 5.7e-14 of it. The coefficient rows of ΔrG carry rounding
# noise of their own at about that level: the singular values of a 20-species reaction's rows on
# one NASA-7 piece (800–1500 K, bench_uncertainty_summary.py) fall from 1 to 1.2e5 ε over eight
# directions — the seven functions of T and the anchor — and the rest lie at 0.1–77 ε. At 16 ε
# those noise directions were kept (12 per piece instead of 8); at 256 ε they go, and the
# summary's outputs move by at most 256 ε of the largest contribution (measured: 5e-15 of the
# output, relative).
_ACCEPT_ULPS = 256


def _tolerance(scaled: np.ndarray) -> float:
    """``_ACCEPT_ULPS`` rounding errors of the largest contribution (coefficient × spread)."""
    return _ACCEPT_ULPS * _EPS * float(np.max(np.abs(scaled)))


def _reproduces(rebuilt: np.ndarray, scaled: np.ndarray) -> bool:
    """Whether a factorisation's ``rebuilt`` contributions are within ``_tolerance`` of the
    contributions ``scaled``: the acceptance test of every factorisation, so the outputs differ
    from the direct product only in the last bits."""
    return float(np.max(np.abs(rebuilt - scaled))) <= _tolerance(scaled)


@cache
def _lapack() -> tuple[Any, Any]:
    """LAPACK's QR with column pivoting and the forming of Q, for doubles (looked up once)."""
    from scipy.linalg import lapack

    return lapack.get_lapack_funcs(("geqp3", "orgqr"), (np.zeros((2, 2)),))


class Factors(NamedTuple):
    """Output rows as ``left[r] @ z[zoff[r] : zoff[r] + kz]`` with the inputs ``z = right @ x``.

    ``left`` (rows × kz, kz the largest rank of a group; zeros pad the rows of smaller ones),
    ``zoff`` (rows,) the first row of z each output row reads, ``right`` (rz × k) with
    rz = groups × kz (zero rows pad each group), or None when z is the draws themselves. One
    group is a low-rank factorisation of every row; several are one factorisation per group of
    rows (rows on the same polynomial pieces span a few fixed functions of T — 7 for NASA-7, 9
    for NASA-9 — however many species the reaction has).
    """

    left: np.ndarray
    zoff: np.ndarray
    right: np.ndarray | None
    merged: Merged | None = None

    def rows_of_z(self) -> int:
        return self.left.shape[1] if self.right is None else self.right.shape[0]

    def inputs(self, x: np.ndarray, start: int = 0, stop: int | None = None) -> np.ndarray:
        """z for trials ``start`` … ``stop`` of the draws ``x`` (inputs × trials), formed as the
        summary forms it (the same bits as the compiled former)."""
        from ._scan import form_numpy

        stop = x.shape[1] if stop is None else stop
        out = np.empty((self.rows_of_z(), stop - start))
        self.former(form_numpy, x)(start, stop, out, 0)
        return out

    def former(self, bind: Callable[..., Former], x: np.ndarray, moments: bool = False) -> Former:
        """``bind`` (a kernel's former binder) applied to the draws ``x`` and these factors:
        z = ``right @ x`` in the merged coordinates when inputs were merged. With ``moments``
        the former can also sum the moments of each group of rows of z that an output row
        reads (``groups``)."""
        assert self.right is not None
        kz = self.left.shape[1]
        groups = (self.groups(), kz) if moments else (None, 0)
        m = self.merged
        if m is None:
            return bind(x, (), np.arange(x.shape[0]), self.right, *groups)
        return bind(x, m.sets, m.single, m.right, *groups)

    def groups(self) -> np.ndarray:
        """The first row of z of each group of rows that output rows read (``zoff``'s values)."""
        return np.unique(self.zoff)


def _rows(x: np.ndarray, at: np.ndarray) -> np.ndarray:
    """``x[at]``: a view of ``x`` when the indices are evenly spaced (no copy), else a copy."""
    if at.size > 1:
        step = int(at[1] - at[0])
        if step > 0 and np.all(np.diff(at) == step):
            return x[int(at[0]) : int(at[-1]) + 1 : step]
    return x[at]


class Merged(NamedTuple):
    """Inputs whose coefficient columns are multiples of one column, each set summed into one
    merged input (every ΔfH° input of a species that keeps its phase enters ΔrG with the same
    T-independent coefficient, every S° input with −T times it): ``w = merged inputs of x``, and
    z = ``right @ w`` with ``right`` (rz × k') in the merged coordinates, or z = w when
    ``right`` is None (the rows read the merged inputs themselves).

    ``sets``: (input indices, weights) of each set of two or more, whose merged input is the
    weighted sum; ``single``: the indices of the other inputs, which are merged inputs as they
    are (after the sets).
    """

    sets: tuple[tuple[np.ndarray, np.ndarray], ...]
    single: np.ndarray
    right: np.ndarray | None = None

    def inputs(self, x: np.ndarray) -> np.ndarray:
        """The merged inputs w of the draws ``x`` (the sets' weighted sums, then the singles)."""
        from ._scan import form_numpy

        out = np.empty((len(self.sets) + self.single.size, x.shape[1]))
        form_numpy(x, self.sets, self.single, None)(0, x.shape[1], out, 0)
        return out


def _group_factors(
    coef: np.ndarray, scale: np.ndarray, max_rank: int | None = None
) -> tuple[np.ndarray, np.ndarray] | None:
    if coef.shape[0] == 1:  # one row is its own rank-1 factorisation, exactly
        return np.ones((1, 1)), coef.copy()
    return low_rank(coef, scale, max_rank)


class _Merge(NamedTuple):
    """``coef`` in merged coordinates (see ``Merged``): ``coef`` (rows × k') and ``scale`` (k')
    of the merged inputs, the sets and singles, and for every original input the merged column
    it went to and its weight there."""

    coef: np.ndarray
    scale: np.ndarray
    sets: tuple[tuple[np.ndarray, np.ndarray], ...]
    single: np.ndarray
    column: np.ndarray
    weight: np.ndarray


def _merge_columns(coef: np.ndarray, scale: np.ndarray) -> _Merge | None:
    """The inputs of ``coef`` whose columns are multiples of one column, merged; None when no
    two are. Forming z then reads each input once (a weighted sum) instead of once per row of z:
    20 species have 60 inputs but only 22 merged ones."""
    rows, k = coef.shape
    if rows < 2 or k < 2:
        return None
    cols = np.arange(k)
    ref = coef[np.argmax(np.abs(coef), axis=0), cols]  # each column's largest entry, signed
    usable = (ref != 0) & np.all(np.isfinite(coef), axis=0)
    unit = coef / np.where(usable, ref, 1.0)
    # Columns equal to about 2^-40 after scaling share a key (a pair split by the rounding is
    # merely not merged); each member is then checked to a few rounding errors.
    keys = np.round(unit * 2.0**40)
    first: dict[bytes, int] = {}
    rep = np.array([first.setdefault(keys[:, j].tobytes(), j) for j in range(k)])
    close = np.max(np.abs(coef - ref * unit[:, rep]), axis=0) <= 4 * _EPS * np.abs(ref)
    rep = np.where(usable & close, rep, -1 - cols)  # a column that fails stays on its own
    labels, sizes = np.unique(rep, return_counts=True)
    sets = [np.flatnonzero(rep == label) for label in labels[sizes > 1]]
    if not sets:
        return None
    in_set = np.isin(rep, labels[sizes > 1])
    single = np.flatnonzero(~in_set)
    column, weight = np.empty(k, dtype=np.int64), np.ones(k)
    merged = np.empty((rows, len(sets) + single.size))
    mscale = np.empty(len(sets) + single.size)
    for i, at in enumerate(sets):
        merged[:, i] = unit[:, at[0]]
        column[at], weight[at] = i, ref[at]
        mscale[i] = math.sqrt(float(np.sum((ref[at] * scale[at]) ** 2)))
    merged[:, len(sets) :] = coef[:, single]
    column[single] = len(sets) + np.arange(single.size)
    mscale[len(sets) :] = scale[single]
    pairs = tuple((at, ref[at].copy()) for at in sets)
    return _Merge(merged, mscale, pairs, single, column, weight)


def factor_rows(
    coef: np.ndarray, scale: np.ndarray, pieces: np.ndarray | None = None, merge: bool = True
) -> Factors:
    """``coef`` (rows × k) in the form ``Factors``: the cheapest of a low-rank factorisation of
    all rows, one per piece, and none (z = the draws).

    ``pieces`` labels the rows whose coefficients are the same functions of T (the same
    polynomial piece of every species): each label's rows are then factored on their own.
    Inputs whose columns are multiples of one another are first merged (``Merged``; not with
    ``merge=False``). Every factorisation passes ``low_rank``'s acceptance test, and the
    merged one the same test on the original rows, so the outputs differ from the direct
    product only in the last bits.
    """
    rows, k = coef.shape
    m = _merge_columns(coef, scale) if merge else None
    target, tscale = (coef, scale) if m is None else (m.coef, m.scale)
    kt = target.shape[1]
    # In merged coordinates any rank may pay (the cost below decides); otherwise a rank above
    # three quarters of the inputs never does.
    cap = kt if m is not None else None
    Groups = list[tuple[np.ndarray, tuple[np.ndarray, np.ndarray]]]
    options: list[Groups] = []
    whole = low_rank(target, tscale, cap)
    if whole is not None:
        options.append([(np.arange(rows), whole)])
    if pieces is not None:
        labels = np.unique(pieces)
        if 1 < labels.size < rows:
            groups = []
            for label in labels:
                at = np.flatnonzero(pieces == label)
                f = _group_factors(target[at], tscale, cap)
                if f is None:
                    break
                groups.append((at, f))
            else:
                options.append(groups)
    merging = k if m is not None else 0  # multiply-adds per trial to form the merged inputs

    def cost(groups: Groups) -> float:
        # Multiply-adds per trial: the outputs (kz each, at the kernel's price), forming z (kt
        # per row of z, after merging), twice when z is too large to keep (see _KEEP_SHARE: z
        # has rz rows against the k of x).
        kz = max(f[0].shape[1] for _, f in groups)
        rz = len(groups) * kz
        return _SCAN_PRICE * rows * kz + (rz * kt + merging) * (1 if rz <= _KEEP_SHARE * k else 2)

    best = min(options, key=cost) if options else None
    # Without a factorisation: k per output, read from the draws themselves; or kt per output
    # from the merged inputs (formed twice when not kept).
    plain = _SCAN_PRICE * rows * k
    direct = _SCAN_PRICE * rows * kt + merging * (1 if kt <= _KEEP_SHARE * k else 2) if m else plain
    if best is None or cost(best) >= min(plain, direct):
        if direct < plain and m is not None:
            zoff0 = np.zeros(rows, dtype=np.int64)
            full = np.zeros((kt, k))
            full[m.column, np.arange(k)] = m.weight
            return Factors(np.ascontiguousarray(m.coef), zoff0, full, Merged(m.sets, m.single))
        return Factors(np.ascontiguousarray(coef), np.zeros(rows, dtype=np.int64), None)
    kz = max(f[0].shape[1] for _, f in best)
    left = np.zeros((rows, kz))
    zoff = np.empty(rows, dtype=np.int64)
    right = np.zeros((len(best) * kz, kt))
    for g, (at, (a, b)) in enumerate(best):
        left[at, : a.shape[1]] = a
        zoff[at] = g * kz
        right[g * kz : g * kz + b.shape[0]] = b
    if m is None:
        return Factors(left, zoff, right)
    # Back in the original inputs, checked there as low_rank checks its own rows.
    full = right[:, m.column] * m.weight[None, :]
    spread = _spread(scale)
    rebuilt = np.einsum("rj,rjk->rk", left, full[zoff[:, None] + np.arange(kz)[None, :]])
    if not _reproduces(rebuilt * spread, coef * spread):
        return factor_rows(coef, scale, pieces, merge=False)
    return Factors(left, zoff, full, Merged(m.sets, m.single, right))


# A multiply-add of the scan costs about 1.5 of those of the matrix product forming z: measured
# on one thread, 0.15 ns per input and output in the scan (9 to 24 inputs, 5·10^6 outputs)
# against 0.11 ns per multiply-add for z = right @ x (17 × 60 × 10^5, OpenBLAS).
_SCAN_PRICE = 1.5
# The factored inputs z are kept whole when they are no larger than the draws themselves (20
# species: 24 of 60 rows); otherwise they are formed twice, a block at a time. Measured (CPU
# time, one thread, 8 species × 10^5 trials, NASA-9 data): keeping 16 of 24 rows took 25-28 ms
# against 34-35 ms for forming them twice (the cost below then chose the unfactored draws).
_KEEP_SHARE = 1.0
# Trials of z formed at a time (while its moments are summed, and again for the scan when it is
# not kept): 24 rows × 4096 trials is 0.8 MB per thread, inside the 2 MB L2 cache. Measured, one
# thread, 20 species × 10^6 trials: 323–355 ms per summary against 332–428 ms with 16 384.
_Z_BLOCK = 4096


# The trials are cut into this many parts (fewer below 4096 trials a part), whatever the number
# of cores: the moments are summed part by part in a fixed order, so they are the same bits on
# every machine; worker threads take the parts in turn.
_PARTS = 4


def _part_edges(n: int) -> np.ndarray:
    """Trial ranges of the parts: whole multiples of ``_CHUNK_TRIALS`` each (but the last), at
    least 4096 trials a part (below that a second thread costs more to start than it saves)."""
    parts = max(1, min(_PARTS, n // 4096))
    chunks = -(-n // _CHUNK_TRIALS)
    edges = (np.arange(parts + 1) * chunks // parts) * _CHUNK_TRIALS
    edges[-1] = n
    return edges


Blocks = Callable[[int], Iterator[tuple[int, np.ndarray, int, int]]]


class _Inputs(NamedTuple):
    """How each pass reads z: ``moments(t, sums, grams)`` forms thread t's parts of z and sums
    their moments (keeping each part whole when asked); ``blocks(t)`` then gives them to the
    scan as (part, array, first trial, end). ``through(t, sums, grams)`` forms thread t's parts
    a block at a time into one buffer of the thread's, summing their moments, and gives
    (buffer, trials in it) after each block, for a scan in the same pass."""

    moments: Callable[[int, np.ndarray, np.ndarray], None]
    blocks: Blocks
    through: Callable[[int, np.ndarray, np.ndarray], Iterator[tuple[np.ndarray, int]]]


def _z_blocks(
    factors: Factors,
    x: np.ndarray,
    edges: np.ndarray,
    threads: int,
    keep: bool,
    bind_form: Callable[..., Former],
) -> _Inputs:
    """The passes' access to z = the factored inputs of the draws ``x``, formed by the kernel's
    former (``bind_form``; one binding per thread, each with its own work space). With ``keep``
    each part's z is formed once (while its moments are summed) and kept for the scan;
    otherwise the scan forms it again, block by block."""
    right = factors.right
    kept: list[np.ndarray | None] = [None] * (edges.size - 1)
    x = np.ascontiguousarray(x)  # the kernels read the draws in place (rows of length N)
    formers = [] if right is None else [factors.former(bind_form, x, True) for _ in range(threads)]
    rz = factors.rows_of_z()
    kz = factors.left.shape[1]
    groups = [slice(o, o + kz) for o in factors.groups().tolist()]

    def mine(t: int) -> Iterator[tuple[int, int, int]]:
        for part in range(t, edges.size - 1, threads):
            yield part, int(edges[part]), int(edges[part + 1])

    def steps(a: int, b: int) -> Iterator[tuple[int, int]]:
        for s in range(a, b, _Z_BLOCK):
            yield s, min(s + _Z_BLOCK, b)

    def form(t: int, a: int, b: int) -> Iterator[tuple[np.ndarray, int]]:
        # z of trials a … b, _Z_BLOCK trials at a time, into the first columns of one buffer of
        # the thread's: (buffer, columns filled)
        buf = np.empty((rz, min(_Z_BLOCK, b - a)))
        for s, e in steps(a, b):
            formers[t](s, e, buf, 0)
            yield buf, e - s

    def moments(t: int, sums: np.ndarray, grams: np.ndarray) -> None:
        # Thread t's parts of z formed, their moments summed into sums[part] and grams[part]
        # (the groups' blocks), and each part kept when asked.
        for part, a, b in mine(t):
            if right is None:  # z is the draws themselves
                for s, e in steps(a, b):
                    zb = x[:, s:e]
                    sums[part] += zb.sum(axis=1)
                    for g in groups:
                        grams[part, g, g] += zb[g] @ zb[g].T
                continue
            whole = np.empty((rz, b - a if keep else min(_Z_BLOCK, b - a)))
            for s, e in steps(a, b):
                formers[t](s, e, whole, s - a if keep else 0, sums[part], grams[part])
            if keep:
                kept[part] = whole

    def blocks(t: int) -> Iterator[tuple[int, np.ndarray, int, int]]:
        for part, a, b in mine(t):
            z = kept[part]
            if right is None:  # z is the draws themselves: scanned in place
                yield part, x, a, b
            elif z is not None:
                yield part, z, 0, b - a
            else:
                for buf, m in form(t, a, b):
                    yield part, buf, 0, m

    def through(t: int, sums: np.ndarray, grams: np.ndarray) -> Iterator[tuple[np.ndarray, int]]:
        assert right is not None
        buf = np.empty((rz, min(_Z_BLOCK, int(np.max(np.diff(edges))))))
        for part, a, b in mine(t):
            for s, e in steps(a, b):
                formers[t](s, e, buf, 0, sums[part], grams[part])
                yield buf, e - s

    return _Inputs(moments, blocks, through)


def factored_statistics(
    factors: Factors,
    nominal: np.ndarray,
    x: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
    coef: np.ndarray,
    kernels: Kernels | None = None,
    guess: tuple[np.ndarray, np.ndarray] | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Mean, standard deviation, quantiles, their standard errors and counts below threshold of
    the outputs ``nominal + coef @ x``, through their factored form ``factors``.

    z = right @ x (rz × N, small) is formed in worker threads with its moments (mean and
    covariance, ddof = 1), which give each output's mean and standard deviation exactly, and
    scanned by the kernel. With ``guess`` (each output's mean and standard deviation as the
    inputs' distributions define them) the scan runs in the same pass, a block of z at a time
    while it is in cache, with brackets placed from the guess; rows whose brackets missed are
    scanned again with brackets from the sample moments. Without it, a first pass forms z and
    its moments and a second pass scans. Quantiles are numpy's of the outputs the kernel forms,
    exactly; ``coef`` (the unfactored rows) serves rows whose brackets miss.
    """
    from . import _scan

    kernels = kernels or _scan.scan_kernel()
    left, zoff = factors.left, factors.zoff
    rz, n = factors.rows_of_z(), x.shape[1]
    edges = _part_edges(n)
    parts = edges.size - 1
    threads = min(workers(), parts)
    one_pass = (
        guess is not None
        and factors.right is not None
        and left.shape[0] <= _ROWS_PER_PASS
        and len(probs) <= _scan.BRACKETS
        and bool(np.all(np.isfinite(guess[0])) and np.all(np.isfinite(guess[1])))
    )
    keep = not one_pass and rz * n * 8 <= _KEEP_SHARE * x.nbytes
    inputs = _z_blocks(factors, x, edges, threads, keep, kernels[2])
    # Each output row reads one group of rows of z: only the groups' own blocks of the Gram
    # matrix are ever summed and used.
    sums = np.zeros((parts, rz))
    grams = np.zeros((parts, rz, rz))
    scan: _Scan | None = None
    if one_pass:
        assert guess is not None
        left_c, zoff_c = np.ascontiguousarray(left), np.ascontiguousarray(zoff)
        nominal_c, thr_c = np.ascontiguousarray(nominal), np.ascontiguousarray(thresholds)
        scan = _prepare(n, probs, guess[0], guess[1], threads, _GUESS_WIDTH / _width_factor(n))

        def job(t: int) -> None:
            assert scan is not None
            run = None
            for buf, m in inputs.through(t, sums, grams):
                if run is None:  # the thread's buffer is the same array for every block
                    run = _bind_scan(kernels, scan, t, buf, left_c, zoff_c, nominal_c, thr_c)
                run(0, m)

        run_parallel(job, threads)
    else:
        run_parallel(lambda t: inputs.moments(t, sums, grams), threads)
    # Summed part by part in order: the same bits whatever the number of threads.
    zbar = np.add.reduce(sums, axis=0) / n
    cov = (np.add.reduce(grams, axis=0) / n - np.outer(zbar, zbar)) * (n / (n - 1))
    at = zoff[:, None] + np.arange(left.shape[1])[None, :]
    mean = nominal + np.einsum("ij,ij->i", left, zbar[at])
    var = np.einsum("ij,ijk,ik->i", left, cov[at[:, :, None], at[:, None, :]], left)
    u = np.sqrt(np.clip(var, 0.0, None))
    if scan is None:
        q, e, c = _statistics_by_pass(
            kernels, left, zoff, inputs.blocks, threads, coef, nominal, x, mean, u, probs,
            thresholds,
        )  # fmt: skip
        return mean, u, q, e, c
    q, e, c, ok = _finish(kernels, scan, n)
    # Rows whose guessed brackets missed (a far-from-normal output): scanned again, z formed
    # again, with brackets from the sample moments (widen 1/4 here is 1 there).
    q, e, c = _redo_missed(
        kernels, ok, scan.usable, (q, e, c), left, zoff, inputs.blocks, threads, coef, nominal,
        x, mean, u, probs, thresholds, 0.25,
    )  # fmt: skip
    return mean, u, q, e, c


def streamed_statistics(
    coef: np.ndarray,
    nominal: np.ndarray,
    x: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
    scale: np.ndarray | None = None,
    kernels: Kernels | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Row statistics of the outputs ``nominal + coef @ x`` without holding them.

    ``coef`` (rows × k), ``x`` (k × N) the input draws; ``means``/``stds`` the outputs' moments,
    which place the brackets. The product is formed a block of trials at a time in worker
    threads (through a low-rank factorisation of ``coef`` where that saves work) and scanned
    once (``_scan``): counts below the threshold and below each bracket, and the few values
    inside the brackets. A row whose brackets miss a needed rank or overflow their buffer is
    recomputed whole by ``row_statistics``' widening path, so every result is exact. ``scale``
    is each input's spread (default: the draws' standard deviations), used to judge a low-rank
    factorisation of ``coef``; ``kernels`` the scan binder and the picker (default:
    ``_scan.scan_kernel()``). Returns quantiles (rows × p), their standard errors and the counts
    below threshold.
    """
    from . import _scan

    rows = coef.shape[0]
    if rows <= _DIRECT_ROWS or (kernels is None and not _scan.compiled()):
        # A temperature or two (a re-evaluation at one T): forming the rows whole is cheaper
        # than streaming. And without the compiled kernel, rows formed whole in blocks and
        # selected by numpy are faster than the numpy twin of the kernel (0.17 s against 1.05 s
        # for 10^5 trials × 200 T, bench_uncertainty_summary.py without the library).
        return _blocked_rows(coef, nominal, x, means, stds, probs, thresholds)
    kernels = kernels or _scan.scan_kernel()
    if scale is None:
        scale = x.std(axis=1)
    factors = factor_rows(coef, scale)
    edges = _part_edges(x.shape[1])
    threads = min(workers(), edges.size - 1)
    blocks = _z_blocks(factors, x, edges, threads, False, kernels[2]).blocks
    return _statistics_by_pass(
        kernels,
        factors.left,
        factors.zoff,
        blocks,
        threads,
        coef,
        nominal,
        x,
        means,
        stds,
        probs,
        thresholds,
    )


def _statistics_by_pass(
    kernels: Kernels,
    left: np.ndarray,
    zoff: np.ndarray,
    blocks: Blocks,
    threads: int,
    coef: np.ndarray,
    nominal: np.ndarray,
    x: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The scan in passes of at most ``_ROWS_PER_PASS`` rows and three probabilities."""
    from ._scan import BRACKETS

    rows = left.shape[0]
    q, e, c = _empty_statistics(rows, len(probs))
    for start in range(0, rows, _ROWS_PER_PASS):
        part = slice(start, min(start + _ROWS_PER_PASS, rows))
        for g in range(0, len(probs), BRACKETS):  # the kernel takes three at a time
            cols = slice(g, g + BRACKETS)
            q[part, cols], e[part, cols], c[part] = _stream_rows(
                kernels,
                left[part],
                zoff[part],
                blocks,
                threads,
                coef[part],
                nominal[part],
                x,
                means[part],
                stds[part],
                probs[cols],
                thresholds[part],
            )
    return q, e, c


def _blocked_rows(
    coef: np.ndarray,
    nominal: np.ndarray,
    x: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``streamed_statistics`` by forming the rows whole, a block of about 16 MB at a time."""
    rows = coef.shape[0]
    q, e, c = _empty_statistics(rows, len(probs))
    step = block_rows(x.shape[1])
    for i in range(0, rows, step):
        j = min(i + step, rows)
        block = coef[i:j] @ x
        block += nominal[i:j, None]
        q[i:j], e[i:j], c[i:j] = row_statistics(
            block, means[i:j], stds[i:j], probs, thresholds[i:j]
        )
    return q, e, c


class _Scan(NamedTuple):
    """The brackets of one scan of rows and at most three probabilities, and its accumulators
    per thread: counts below the threshold and below each bracket, and the values kept inside
    each bracket (``values``, ``filled``)."""

    plans: list[_Plan]
    usable: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    values: np.ndarray
    filled: np.ndarray
    below_thr: np.ndarray
    below: np.ndarray


def _prepare(
    n: int,
    probs: tuple[float, ...],
    means: np.ndarray,
    stds: np.ndarray,
    threads: int,
    widen: float,
) -> _Scan:
    """Brackets around the normal guess ``means + stds × z_p`` of each row's quantiles (half
    width ``widen`` times the plan's), and empty accumulators for ``threads`` threads."""
    from ._scan import BRACKETS

    rows = means.shape[0]
    plans = [_bracket(n, p) for p in probs]
    usable = np.isfinite(means) & np.isfinite(stds) & (stds > 0)
    spread = np.where(usable, stds, 0.0)
    z = np.array([pl.z for pl in plans])
    guess = np.where(usable, means, 0.0)[:, None] + spread[:, None] * z[None, :]
    half = spread[:, None] * np.array([pl.half * widen for pl in plans])[None, :]
    lo_edge = np.full((rows, BRACKETS), np.inf)  # padding brackets [+inf, +inf] hold nothing
    hi_edge = np.full((rows, BRACKETS), np.inf)
    lo_edge[:, : len(probs)] = guess - half
    hi_edge[:, : len(probs)] = guess + half
    lo_edge[~usable] = np.inf
    hi_edge[~usable] = np.inf
    # Expected values inside a bracket for a normal output: 2 × half-width × density
    # = 2 × width factor × (rank span + 8). Each thread's buffer holds twice its share plus
    # slack; a row whose bracket needs more is recomputed whole.
    expected = max(2 * _width_factor(n) * (pl.span + 8) for pl in plans) * widen
    cap = int(2 * expected / threads) + 64
    return _Scan(
        plans,
        usable,
        lo_edge,
        hi_edge,
        np.empty((threads, rows, BRACKETS, cap)),
        np.zeros((threads, rows, BRACKETS), dtype=np.int64),
        np.zeros((threads, rows), dtype=np.int64),
        np.zeros((threads, rows, BRACKETS), dtype=np.int64),
    )


def _bind_scan(
    kernels: Kernels,
    scan: _Scan,
    t: int,
    z: np.ndarray,
    left: np.ndarray,
    zoff: np.ndarray,
    nominal: np.ndarray,
    thresholds: np.ndarray,
) -> Callable[[int, int], None]:
    """Thread t's scan of the trials of ``z`` (rows ``left`` reading from ``zoff``)."""
    return kernels[0](
        z,
        zoff,
        left,
        nominal,
        thresholds,
        scan.lo,
        scan.hi,
        scan.below_thr[t],
        scan.below[t],
        scan.filled[t],
        scan.values[t],
    )


def _finish(
    kernels: Kernels, scan: _Scan, n: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Quantiles, their standard errors, counts below threshold, and which rows are exact:
    the kept values of all threads side by side, and the needed ranks selected from them
    (counted from the bracket's lowest value), the rows shared among worker threads."""
    pick = kernels[1]
    rows = scan.usable.shape[0]
    c = scan.below_thr.sum(axis=0)
    total_below = scan.below.sum(axis=0)
    local = [
        np.ascontiguousarray(np.asarray(plan.ranks)[None, :] - total_below[:, j, None])
        for j, plan in enumerate(scan.plans)
    ]
    at = [np.empty(lj.shape) for lj in local]
    count = np.empty((len(scan.plans), rows), dtype=np.int64)
    threads = min(workers(), max(1, rows // _PICK_ROWS))
    cuts = np.linspace(0, rows, threads + 1).astype(int)

    def job(t: int) -> None:
        for j in range(len(scan.plans)):
            pick(scan.values, scan.filled, j, local[j], at[j], count[j], (cuts[t], cuts[t + 1]))

    run_parallel(job, threads)
    ok = scan.usable.copy()
    q = np.empty((rows, len(scan.plans)))
    e = np.empty((rows, len(scan.plans)))
    for j, plan in enumerate(scan.plans):
        ok &= (count[j] >= 0) & (local[j][:, 0] >= 0) & (local[j][:, -1] < count[j])
        with np.errstate(invalid="ignore"):  # rows that are not ok hold NaN; recomputed later
            q[:, j], e[:, j] = _quantile(dict(zip(plan.ranks, at[j].T, strict=True)), n, plan)
    return q, e, c, ok


# Rows per thread, at least, when the selection is shared among threads: below that a second
# thread costs more to wake than it saves.
_PICK_ROWS = 8


def _stream_rows(
    kernels: Kernels,
    left: np.ndarray,
    zoff: np.ndarray,
    blocks: Blocks,
    threads: int,
    coef: np.ndarray,
    nominal: np.ndarray,
    x: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
    widen: float = 1.0,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One pass of rows and at most three probabilities: thread t scans the blocks of z that
    ``blocks(t)`` gives (part, z, first trial, end) with the rows ``left`` reading from ``zoff``."""
    n = x.shape[1]
    left = np.ascontiguousarray(left)
    zoff = np.ascontiguousarray(zoff)
    nominal = np.ascontiguousarray(nominal)
    thresholds = np.ascontiguousarray(thresholds)
    scan = _prepare(n, probs, means, stds, threads, widen)

    def job(t: int) -> None:
        for _, zb, a, b in blocks(t):
            _bind_scan(kernels, scan, t, zb, left, zoff, nominal, thresholds)(a, b)

    run_parallel(job, threads)
    q, e, c, ok = _finish(kernels, scan, n)
    return _redo_missed(
        kernels, ok, scan.usable, (q, e, c), left, zoff, blocks, threads, coef, nominal, x,
        means, stds, probs, thresholds, widen,
    )  # fmt: skip


def _redo_missed(
    kernels: Kernels,
    ok: np.ndarray,
    usable: np.ndarray,
    got: tuple[np.ndarray, np.ndarray, np.ndarray],
    left: np.ndarray,
    zoff: np.ndarray,
    blocks: Blocks,
    threads: int,
    coef: np.ndarray,
    nominal: np.ndarray,
    x: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
    widen: float,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``got`` (quantiles, errors, counts) with the rows that are not ``ok`` recomputed: scanned
    again with brackets four times wider (the normal guess ``means``, ``stds`` missed: a
    far-from-normal output, or at 10^6 trials brackets of under 0.01 standard deviations), as
    row_statistics does, and in the end formed whole."""
    q, e, c = got
    retry = np.flatnonzero(~ok & usable)
    if retry.size and widen < 4.0**_MAX_WIDENINGS:
        q[retry], e[retry], c[retry] = _stream_rows(
            kernels, left[retry], zoff[retry], blocks, threads, coef[retry], nominal[retry], x,
            means[retry], stds[retry], probs, thresholds[retry], widen * 4.0,
        )  # fmt: skip
        redo = np.flatnonzero(~ok & ~usable)
    else:
        redo = np.flatnonzero(~ok)
    if redo.size:
        q[redo], e[redo], c[redo] = _blocked_rows(
            coef[redo], nominal[redo], x, means[redo], stds[redo], probs, thresholds[redo]
        )
    return q, e, c


@cache
def _blas_controller() -> Any:
    from threadpoolctl import ThreadpoolController

    return ThreadpoolController()  # finding the BLAS libraries takes milliseconds: do it once


_guard_lock = threading.Lock()
_guard_depth = 0


@contextlib.contextmanager
def single_threaded_blas() -> Iterator[None]:
    """Context in which BLAS uses one thread: our worker threads are the parallelism, and on a
    shared machine a multi-threaded BLAS call on a small matrix can stall for a second while its
    threads wait for a core. Nested uses cost nothing: only the outermost sets and restores."""
    global _guard_depth
    with _guard_lock:
        _guard_depth += 1
        limiter = _blas_controller().limit(limits=1, user_api="blas") if _guard_depth == 1 else None
    try:
        yield
    finally:
        with _guard_lock:
            _guard_depth -= 1
            if limiter is not None:
                limiter.restore_original_limits()


# One pool for the life of the process (made anew in a child made by fork: see WorkerPool).
_WORKERS = WorkerPool(workers, "feasibly-scan")


def run_parallel(job: Callable[[int], None], threads: int) -> None:
    """``job(t)`` for t in range(threads), in parallel threads when there is more than one."""
    if threads == 1:
        job(0)
        return
    pool = _WORKERS.get()
    for f in [pool.submit(job, t) for t in range(threads)]:
        f.result()
