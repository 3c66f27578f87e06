"""One read of Monte Carlo trials: counts below edges and the values inside brackets.

The streamed summary (``_quantiles.factored_statistics``) never holds the T × N matrix of
outputs. It hands the kernel here a range of trials of the (factored) inputs z; for every
temperature row the kernel forms the outputs (``coef @ z[zoff : zoff + k] + nominal``, the inputs
summed left to right, sixteen trials at a time) and adds

* the count of outputs below the row's threshold,
* the count below the lower edge of each of three brackets, and
* the outputs inside each bracket, appended to that bracket's buffer,

so that the order statistics inside each bracket can be selected afterwards, exactly.

The kernels are written twice: in C (``_scan.c``, compiled into the wheel by ``hatch_build.py``
and called through ctypes, which releases the GIL so worker threads scan in parallel) and in
numpy here. Both do the same floating-point operations in the same order, so they give the same
bits; the tests compare them. Where the library was not built (no C compiler) the summary does
not stream at all: it forms the rows in blocks and selects with numpy (``_quantiles``), the same
quantiles to the last bits, a few times slower than with the kernel.
"""

from __future__ import annotations

import ctypes
from collections.abc import Callable
from functools import cache
from pathlib import Path

import numpy as np

from .._kernels import address as _address
from .._kernels import load_library

__all__ = [
    "BRACKETS",
    "compiled",
    "pick_numpy",
    "product_numpy",
    "scan_kernel",
    "scan_numpy",
]

#: Brackets per call: three covers a coverage interval and its median (unused ones are padded
#: with brackets that hold nothing).
BRACKETS = 3

ScanKernel = Callable[..., None]
#: (bind a scan to its arrays → run a range of trials, pick order statistics of one bracket): what
#: ``scan_kernel`` returns.
Kernels = tuple[Callable[..., Callable[[int, int], None]], ScanKernel]


def product_numpy(coef: np.ndarray, z: np.ndarray) -> np.ndarray:
    """``coef @ z`` summed in the compiled kernel's order: the inputs left to right, one
    multiply and one add each. ``coef`` (rows × k), ``z`` (k × m), k ≥ 1. No fused multiply-add
    anywhere, so numpy and the kernel agree to the bit."""
    out = coef[:, 0, None] * z[0]
    for k in range(1, z.shape[0]):
        out = out + coef[:, k, None] * z[k]
    return out


def scan_numpy(
    z: np.ndarray,
    zoff: np.ndarray,
    coef: np.ndarray,
    nominal: np.ndarray,
    threshold: np.ndarray,
    lo: np.ndarray,
    hi: np.ndarray,
    below_threshold: np.ndarray,
    below: np.ndarray,
    filled: np.ndarray,
    values: np.ndarray,
    start: int,
    stop: int,
) -> None:
    """Add trials ``start`` … ``stop`` to the accumulators, in place.

    Row r's outputs are ``coef[r] @ z[zoff[r] : zoff[r] + k] + nominal[r]`` (``product_numpy``'s
    order): ``z`` (inputs × trials) holds the inputs, ``coef`` (rows × k), k ≥ 1 (zero
    coefficients pad rows that read fewer inputs); ``nominal``, ``threshold`` (rows,); ``lo``,
    ``hi`` (rows, 3) bracket edges, inclusive (a bracket at [+inf, +inf] holds nothing);
    ``below_threshold`` (rows,) and ``below`` (rows, 3) counts; ``filled`` (rows, 3) how many
    values each bracket's buffer ``values`` (rows, 3, capacity) holds. ``filled`` keeps
    counting past the capacity, so an overflowing bracket is seen (and its row recomputed by the
    caller), never truncated silently.
    """
    k = coef.shape[1]
    v = np.empty((coef.shape[0], stop - start))
    for off in np.unique(zoff):
        at = np.flatnonzero(zoff == off)
        v[at] = product_numpy(coef[at], z[off : off + k, start:stop])
    v += nominal[:, None]
    below_threshold += np.count_nonzero(v < threshold[:, None], axis=1)
    below += np.count_nonzero(v[:, None, :] < lo[:, :, None], axis=2)
    cap = values.shape[2]
    for b in range(BRACKETS):
        inside = (v >= lo[:, b, None]) & (v <= hi[:, b, None])
        for r in np.flatnonzero(inside.any(axis=1)):
            kept = v[r, inside[r]]
            k = int(filled[r, b])
            if k + kept.size <= cap:
                values[r, b, k : k + kept.size] = kept
            filled[r, b] = k + kept.size


def pick_numpy(
    values: np.ndarray,
    filled: np.ndarray,
    bracket: int,
    ranks: np.ndarray,
    out: np.ndarray,
    count: np.ndarray,
) -> None:
    """One bracket's kept values of every row, from all threads' buffers, and their order
    statistics at ``ranks`` (rows × nr, sorted per row, counted from the bracket's lowest value)
    into ``out`` (rows × nr; NaN where a rank is not inside). ``count`` (rows,) gets how many
    values there are, or −1 where a buffer overflowed (the row must be recomputed).

    ``values`` is threads × rows × 3 × capacity and ``filled`` threads × rows × 3, as the scan
    left them.
    """
    cap = values.shape[3]
    for r in range(out.shape[0]):
        n = filled[:, r, bracket]
        out[r] = np.nan
        if np.any(n > cap):
            count[r] = -1
            continue
        kept = np.concatenate([values[t, r, bracket, : n[t]] for t in range(n.size)])
        count[r] = kept.size
        rk = ranks[r]
        if rk.size and rk[0] >= 0 and rk[-1] < kept.size and np.all(np.diff(rk) >= 0):
            out[r] = np.sort(kept)[rk]


_LIBRARY = Path(__file__).parent / "_lib" / "libfeasibly_scan.so"


def _library_path() -> Path | None:
    """The compiled kernels beside this module (built into the wheel by ``hatch_build.py``, or
    in the source tree by ``bin/build-kernel``), if present."""
    return _LIBRARY if _LIBRARY.is_file() else None


@cache
def _compiled() -> ctypes.CDLL | None:
    lib = load_library(
        _library_path(),
        "Monte Carlo kernel",
        "selecting with numpy instead: the same numbers, a few times slower",
    )
    if lib is None:
        return None
    i64, ptr = ctypes.c_int64, ctypes.c_void_p
    lib.feasibly_scan.argtypes = [i64] * 6 + [ptr] * 12
    lib.feasibly_scan.restype = None
    lib.feasibly_pick.argtypes = [i64, i64, i64, ptr, ptr, i64, i64, ptr, ptr, ptr, ptr]
    lib.feasibly_pick.restype = None
    return lib


def _bind_compiled(
    z: np.ndarray,
    zoff: np.ndarray,
    coef: np.ndarray,
    nominal: np.ndarray,
    threshold: np.ndarray,
    lo: np.ndarray,
    hi: np.ndarray,
    below_threshold: np.ndarray,
    below: np.ndarray,
    filled: np.ndarray,
    values: np.ndarray,
) -> Callable[[int, int], None]:
    """``scan_numpy`` in C, bound to its arrays once (checked once): the returned function scans
    trials ``start`` … ``stop`` of ``z``, with the same results to the bit."""
    rows, k = coef.shape
    if (
        k < 1
        or z.ndim != 2
        or zoff.shape != (rows,)
        or (rows and (zoff.min() < 0 or zoff.max() + k > z.shape[0]))
    ):
        raise ValueError("kernel arguments do not fit together")
    if not (
        nominal.size == threshold.size == below_threshold.size == rows
        and lo.shape == hi.shape == below.shape == filled.shape == (rows, BRACKETS)
        and values.shape[:2] == (rows, BRACKETS)
    ):
        raise ValueError("kernel arguments do not fit together")
    f64 = np.float64
    lib = _compiled()
    assert lib is not None
    # The broadcast coefficients, aligned by the kernel.
    room = np.empty(8 * k + 8)
    args = (
        _address(z, f64),
        _address(zoff, np.int64),
        _address(coef, f64),
        _address(nominal, f64),
        _address(threshold, f64),
        _address(lo, f64),
        _address(hi, f64),
        _address(below_threshold, np.int64, True),
        _address(below, np.int64, True),
        _address(filled, np.int64, True),
        _address(values, f64, True),
        _address(room, f64, True),
    )
    kept = (z, zoff, coef, nominal, threshold, lo, hi, below_threshold, below, filled, values)
    return _BoundScan(lib, (k, z.shape[1]), (rows, values.shape[2]), args, (*kept, room))


class _BoundScan:
    """A compiled scan bound to its arrays: calling it with (start, stop) scans those trials."""

    __slots__ = ("_arrays", "_head", "_lib", "_limit", "_tail")

    def __init__(
        self,
        lib: ctypes.CDLL,
        head: tuple[int, int],
        middle: tuple[int, int],
        tail: tuple[int, ...],
        arrays: tuple[np.ndarray, ...],
    ):
        self._lib, self._head, self._tail = lib, head, (*middle, *tail)
        self._limit = head[1]
        self._arrays = arrays  # holds the arrays whose addresses are in the arguments

    def __call__(self, start: int, stop: int) -> None:
        if not 0 <= start <= stop <= self._limit:
            raise ValueError("trial range outside the inputs")
        self._lib.feasibly_scan(*self._head, start, stop, *self._tail)


def _bind_numpy(
    z: np.ndarray,
    zoff: np.ndarray,
    coef: np.ndarray,
    nominal: np.ndarray,
    threshold: np.ndarray,
    lo: np.ndarray,
    hi: np.ndarray,
    below_threshold: np.ndarray,
    below: np.ndarray,
    filled: np.ndarray,
    values: np.ndarray,
) -> Callable[[int, int], None]:
    """``scan_numpy`` bound to its arrays (the same interface as the compiled kernel)."""

    def run(start: int, stop: int) -> None:
        scan_numpy(
            z, zoff, coef, nominal, threshold, lo, hi, below_threshold, below, filled, values,
            start, stop,
        )  # fmt: skip

    return run


def _pick_compiled(
    values: np.ndarray,
    filled: np.ndarray,
    bracket: int,
    ranks: np.ndarray,
    out: np.ndarray,
    count: np.ndarray,
) -> None:
    """``pick_numpy`` in C (a selection of the few ranks instead of a sort)."""
    threads, rows, nb, cap = values.shape
    if (
        filled.shape != (threads, rows, nb)
        or ranks.ndim != 2
        or ranks.shape[0] != rows
        or out.shape != ranks.shape
        or count.shape != (rows,)
    ):
        raise ValueError("kernel arguments do not fit together")
    if not 0 <= bracket < nb:
        raise ValueError("no such bracket")
    lib = _compiled()
    assert lib is not None
    work = np.empty(max(threads * cap, 1))
    lib.feasibly_pick(
        threads,
        rows,
        cap,
        _address(values, np.float64),
        _address(filled, np.int64),
        bracket,
        ranks.shape[1],
        _address(ranks, np.int64),
        _address(out, np.float64, True),
        _address(count, np.int64, True),
        _address(work, np.float64, True),
    )


def compiled() -> bool:
    """Whether the compiled kernels are in use (else summaries select with numpy: the same
    numbers, slower)."""
    return _compiled() is not None


@cache
def scan_kernel() -> Kernels:
    """The kernels (bind a scan to its arrays, pick order statistics): compiled where the
    library is present, else numpy's.

    Both give the same bits; the compiled ones are about twenty times faster. ctypes releases
    the GIL during each call, so worker threads scan their chunks in parallel.
    """
    if compiled():
        return _bind_compiled, _pick_compiled
    return _bind_numpy, pick_numpy


#: The numpy kernels in the form ``scan_kernel`` returns (the compiled ones' reference in tests).
NUMPY_KERNELS: Kernels = (_bind_numpy, pick_numpy)
