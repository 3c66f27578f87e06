"""Exact sample quantiles and exceedance counts of many rows, fast.

For each row of a (T × N) block of Monte Carlo outputs this returns the same quantiles as
``numpy.quantile(row, p)`` (the default 'linear' rule: h = (N − 1)p, interpolate between the order
statistics ⌊h⌋ and ⌊h⌋ + 1), order-statistic standard errors, and the count below a threshold.

Speed comes from selecting only inside a narrow bracket around each quantile: a guess from the
row's mean and standard deviation, a count of the values below the bracket, and a partial sort of
the few values inside it. The bracket is checked to contain every rank needed; when it does not
(a far-from-normal output) it is widened, and in the end the whole row is partitioned — so the
result is always exact, never approximate.
"""

from __future__ import annotations

import math
import os
import threading
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from functools import cache

import numpy as np
from scipy import special

__all__ = ["row_statistics", "workers"]

# Bracket half-width in units of the expected spacing of the needed ranks: 1.5 gives room for a
# normal-approximation guess to be off by about one standard error of the quantile, which is what
# it is for a near-normal output; the bracket is widened (×4) when the guess was worse. Narrow
# brackets matter: extracting the values inside costs in proportion to how many there are.
_WIDTH_FACTOR = 1.5
_MAX_WIDENINGS = 3


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
        lo, frac, d = _ranks(n, p)
        ranks = sorted({max(lo - d, 0), lo, min(lo + 1, n - 1), min(lo + 1 + d, n - 1)})
        z = float(special.ndtri(p))
        density = math.exp(-0.5 * z * z) / (math.sqrt(2 * math.pi) * std) if std > 0 else 0.0
        spacing = 1.0 / (n * density) if density > 0 else math.inf
        half = _WIDTH_FACTOR * spacing * (ranks[-1] - ranks[0] + 8)
        vals = dict(zip(ranks, _select(row, ranks, mean + std * z, half, buf), strict=True))
        x_lo, x_hi = vals[lo], vals[min(lo + 1, n - 1)]
        quantiles.append(float(x_lo + frac * (x_hi - x_lo)))
        # Order-statistic standard error: half the spread of the ranks one binomial standard
        # deviation either side (distribution-free; from memory, e.g. Wilcox, Introduction to
        # Robust Estimation, §3.5).
        errors.append(float(vals[min(lo + 1 + d, n - 1)] - vals[max(lo - d, 0)]) / 2.0)
    below = int(np.count_nonzero(np.less(row, threshold, out=buf[0])))
    return quantiles, errors, below


def row_statistics(
    block: np.ndarray,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Quantiles (T × k), their standard errors (T × k) and counts below threshold (T,)."""
    t = block.shape[0]
    q = np.empty((t, len(probs)))
    e = np.empty((t, len(probs)))
    c = np.empty(t, dtype=np.int64)
    buf = (np.empty(block.shape[1], dtype=bool), np.empty(block.shape[1], dtype=bool))
    for i in range(t):
        qi, ei, ci = _one_row(
            block[i], float(means[i]), float(stds[i]), probs, float(thresholds[i]), buf
        )
        q[i], e[i], c[i] = qi, ei, ci
    return q, e, c


def blocked_statistics(
    make_block: Callable[[int, int, np.ndarray], np.ndarray],
    n_rows: int,
    means: np.ndarray,
    stds: np.ndarray,
    probs: tuple[float, ...],
    thresholds: np.ndarray,
    width: int,
    chunk: int = 4,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Row statistics over ``n_rows`` rows produced ``chunk`` at a time by
    ``make_block(i, j, buffer)``, which writes rows i:j into ``buffer`` and returns them.

    Blocks are built and reduced in worker threads (numpy releases the GIL in the matrix product,
    the comparisons and the partitions), each thread reusing one buffer, so peak memory is a few
    blocks, not the whole matrix.
    """
    q = np.empty((n_rows, len(probs)))
    e = np.empty((n_rows, len(probs)))
    c = np.empty(n_rows, dtype=np.int64)
    local = threading.local()

    def job(start: int) -> None:
        stop = min(start + chunk, n_rows)
        if getattr(local, "buf", None) is None:
            local.buf = np.empty((chunk, width))
        block = make_block(start, stop, local.buf)
        q[start:stop], e[start:stop], c[start:stop] = row_statistics(
            block, means[start:stop], stds[start:stop], probs, thresholds[start:stop]
        )

    starts = range(0, n_rows, chunk)
    if workers() == 1 or n_rows <= chunk:
        for s in starts:
            job(s)
    else:
        with ThreadPoolExecutor(workers()) as pool:
            list(pool.map(job, starts))
    return q, e, c
