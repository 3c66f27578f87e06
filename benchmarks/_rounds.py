"""Interleaved timing shared by the benchmarks: every route is timed once per round, in turn.

On a shared 2-core machine a single A-then-B timing moves by 2× between runs; timing A and B
alternately over several rounds exposes both to the same load, and the spread of the per-round
ratios (min/median/max) says how much to trust the figure.
"""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable, Mapping


def best_time(fn: Callable[[], object], number: int) -> float:
    """Seconds per call of ``fn``: the mean of ``number`` back-to-back calls."""
    t0 = time.perf_counter()
    for _ in range(number):
        fn()
    return (time.perf_counter() - t0) / number


def interleave(
    routes: Mapping[str, Callable[[], object]], rounds: int, number: int = 1
) -> dict[str, list[float]]:
    """Per-round seconds per call of each route; the routes alternate inside every round."""
    times: dict[str, list[float]] = {name: [] for name in routes}
    names = list(routes)
    for r in range(rounds):
        # Alternate the order too, so neither route always runs right after the other.
        for name in names if r % 2 == 0 else names[::-1]:
            times[name].append(best_time(routes[name], number))
    return times


def ratio_line(label: str, slow: list[float], fast: list[float]) -> str:
    """``label`` with min/median/max of the per-round ratios slow/fast."""
    ratios = sorted(s / f for s, f in zip(slow, fast, strict=True))
    return (
        f"{label}: min {ratios[0]:.2f}×  median {statistics.median(ratios):.2f}×  "
        f"max {ratios[-1]:.2f}×  ({len(ratios)} rounds)"
    )


def time_line(label: str, seconds: list[float], unit: str = "ms") -> str:
    """min/median/max of per-round timings in ``unit`` (ms or s)."""
    scale = 1e3 if unit == "ms" else 1.0
    s = sorted(seconds)
    return (
        f"{label}: min {s[0] * scale:.3f}  median {statistics.median(s) * scale:.3f}  "
        f"max {s[-1] * scale:.3f} {unit}"
    )
