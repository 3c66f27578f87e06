"""Adaptive Monte Carlo (JCGM 101:2008 §7.9): add blocks of trials until every reported estimate
is numerically stable, with a progress line for long runs."""

from __future__ import annotations

import math
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from .linear import Summary, numerical_tolerance
from .sampling import SampleSet, extend_samples

__all__ = ["ADAPTIVE_MAX_TRIALS", "AdaptiveReport"]

# Adaptive mode (JCGM 101:2008 §7.9): significant digits of u asked for, the largest number of
# trials before giving up, and the tolerance on probabilities (2 s_P ≤ 0.005, i.e. P stable to
# half a percentage point: common practice, no source).
_ADAPTIVE_DIGITS = 2
ADAPTIVE_MAX_TRIALS = 2_000_000
_P_TOLERANCE = 0.005

# Progress is shown on stderr when a run is expected to take this many trial-temperatures or more.
_PROGRESS_WORK = 2e8


def _block(samples: SampleSet, start: int, stop: int) -> SampleSet:
    return SampleSet(
        samples.inputs,
        samples.values[:, start:stop],
        samples.method,
        samples.seed,
        samples.correlation,
    )


@dataclass
class _Progress:
    total: int
    enabled: bool
    started: float = field(default_factory=time.perf_counter)

    def update(self, done: int) -> None:
        if not self.enabled:
            return
        frac = min(1.0, done / self.total) if self.total else 1.0
        bar = "#" * int(30 * frac)
        elapsed = time.perf_counter() - self.started
        sys.stderr.write(f"\rsampling [{bar:<30}] {done:,} trials, {elapsed:.1f} s")
        sys.stderr.flush()

    def close(self) -> None:
        if self.enabled:
            sys.stderr.write("\n")
            sys.stderr.flush()


@dataclass(frozen=True)
class AdaptiveReport:
    """What the JCGM 101 §7.9 adaptive procedure did."""

    trials: int
    blocks: int
    block_size: int
    converged: bool
    tolerance_J_per_mol: float
    worst_ratio: float


def _adaptive(
    samples: SampleSet,
    model_fn: Callable[[SampleSet], Summary],
    block: int,
    max_trials: int,
    progress: _Progress,
) -> tuple[SampleSet, AdaptiveReport]:
    """JCGM 101:2008 §7.9.4: add blocks of trials until every estimate is numerically stable."""
    stats: list[Summary] = [model_fn(samples)]
    converged = False
    worst = math.inf
    tol = 0.0
    while True:
        h = len(stats)
        if h >= 2:

            def sd(attr: str, h: int = h) -> np.ndarray:
                vals = np.array([getattr(s, attr) for s in stats])
                return vals.std(axis=0, ddof=1) / math.sqrt(h)

            pooled_u = np.sqrt(np.mean([s.u**2 for s in stats], axis=0))
            delta = numerical_tolerance(pooled_u, _ADAPTIVE_DIGITS)
            ratios = [
                2 * sd(a) / np.where(delta > 0, delta, np.inf) for a in ("mean", "u", "lo", "hi")
            ]
            ratios.append(2 * sd("p_below") / _P_TOLERANCE)
            worst = float(np.max(ratios))
            tol = float(np.min(delta))
            if worst <= 1.0:
                converged = True
                break
        if samples.n + block > max_trials:
            break
        samples = extend_samples(samples, block)
        stats.append(model_fn(_block(samples, samples.n - block, samples.n)))
        progress.update(samples.n)
    return samples, AdaptiveReport(samples.n, len(stats), block, converged, tol, worst)
