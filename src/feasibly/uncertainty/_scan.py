"""One read of Monte Carlo trials: counts below edges and the values inside brackets.

The streamed summary (``_quantiles.factored_statistics``) never holds the T × N matrix of
outputs. It hands the kernel here a range of trials of the (factored) inputs z; for every
temperature row the kernel forms the outputs (``coef @ z[zoff : zoff + k] + nominal``, the inputs
summed left to right, sixteen trials at a time) and adds

* the count of outputs below the row's threshold,
* the count below the lower edge of each of three brackets, and
* the outputs inside each bracket, appended to that bracket's buffer,

so that the order statistics inside each bracket can be selected afterwards, exactly. The
former (``form_numpy``, ``feasibly_form`` in C) makes those inputs from the draws, a block of
trials at a time: each set of merged inputs as its weighted sum, then z = right @ w, and the
sums and products of the rows of z that give the outputs' moments.

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
from typing import Any

import numpy as np

from .._kernels import address as _address
from .._kernels import load_library

__all__ = [
    "BRACKETS",
    "compiled",
    "form_numpy",
    "pick_numpy",
    "product_numpy",
    "scan_kernel",
    "scan_numpy",
]

#: Brackets per call: three covers a coverage interval and its median (unused ones are padded
#: with brackets that hold nothing).
BRACKETS = 3

ScanKernel = Callable[..., None]
#: Sets of merged inputs: (indices of the draws, their weights) each.
Sets = tuple[tuple[np.ndarray, np.ndarray], ...]
#: A former bound to its draws and factors: ``form(start, stop, out, col, sums, gram)`` writes z
#: of trials start … stop into columns col … of ``out`` (rz × length, C order) and, when
#: ``sums`` is given, adds the moments of those trials of z to ``sums`` (rz,) and ``gram``
#: (rz × rz, the blocks of the groups only).
Former = Callable[..., None]
#: (bind a scan to its arrays → run a range of trials, pick order statistics of one bracket,
#: bind a former of z to its draws): what ``scan_kernel`` returns.
Kernels = tuple[Callable[..., Callable[[int, int], None]], ScanKernel, Callable[..., Former]]


def product_numpy(coef: np.ndarray, z: np.ndarray) -> np.ndarray:
    """``coef @ z`` summed in the compiled kernel's order: the inputs left to right, one
    multiply and one add each. ``coef`` (rows × k), ``z`` (k × m), k ≥ 1. No fused multiply-add
    anywhere, so numpy and the kernel agree to the bit."""
    out = coef[:, 0, None] * z[0]
    for k in range(1, z.shape[0]):
        out = out + coef[:, k, None] * z[k]
    return out


def lane_sum(a: np.ndarray) -> np.ndarray:
    """Sums over the last axis as the compiled former sums moments: four lanes (the trials
    t ≡ 0, 1, 2, 3 mod 4), each in order, combined as (l0 + l1) + (l2 + l3)."""
    lanes = [
        np.cumsum(a[..., lane::4], axis=-1)[..., -1]
        if a.shape[-1] > lane
        else np.zeros(a.shape[:-1])
        for lane in range(4)
    ]
    return (lanes[0] + lanes[1]) + (lanes[2] + lanes[3])


def form_numpy(
    x: np.ndarray,
    sets: Sets,
    single: np.ndarray,
    right: np.ndarray | None,
    group_off: np.ndarray | None = None,
    kg: int = 0,
) -> Former:
    """The factored inputs z of the draws ``x`` (inputs × trials), bound once: the merged inputs
    w (each set's weighted sum of its draws, then each single input's own draw, in that order),
    then z = ``right`` @ w, or z = w when ``right`` is None, all in ``product_numpy``'s order.
    With moments asked for, the sums of each row of z and the sums of products of the rows of
    each group (``kg`` rows from each of ``group_off``), in ``lane_sum``'s order. The compiled
    former gives the same bits."""
    kt = len(sets) + single.size
    if right is not None and right.shape[1] != kt:
        raise ValueError("kernel arguments do not fit together")
    offsets = [] if group_off is None else [int(o) for o in group_off]

    def form(
        start: int,
        stop: int,
        out: np.ndarray,
        col: int,
        sums: np.ndarray | None = None,
        gram: np.ndarray | None = None,
    ) -> None:
        part = x[:, start:stop]
        w = [product_numpy(weights[None, :], part[at])[0] for at, weights in sets]
        w += [part[i] for i in single.tolist()]
        z = np.array(w) if right is None else product_numpy(right, np.array(w))
        out[:, col : col + stop - start] = z
        if sums is None or gram is None:
            return
        sums += lane_sum(z)
        for o in offsets:
            g = z[o : o + kg]
            gram[o : o + kg, o : o + kg] += lane_sum(g[:, None, :] * g[None, :, :])

    return form


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
    rows: tuple[int, int] | None = None,
) -> None:
    """One bracket's kept values of every row, from all threads' buffers, and their order
    statistics at ``ranks`` (rows × nr, sorted per row, counted from the bracket's lowest value)
    into ``out`` (rows × nr; NaN where a rank is not inside). ``count`` (rows,) gets how many
    values there are, or −1 where a buffer overflowed (the row must be recomputed).

    ``values`` is threads × rows × 3 × capacity and ``filled`` threads × rows × 3, as the scan
    left them. ``rows`` (first, end) limits the work to those rows (threads share the rows).
    """
    cap = values.shape[3]
    first, end = rows if rows is not None else (0, out.shape[0])
    for r in range(first, end):
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
    lib.feasibly_pick.argtypes = [i64, i64, i64, ptr, ptr, i64, i64, ptr, ptr, ptr, ptr, i64, i64]
    lib.feasibly_pick.restype = None
    lib.feasibly_form.argtypes = [i64, ptr, i64, i64, i64, ptr, ptr, ptr, i64, ptr, i64, ptr]
    lib.feasibly_form.argtypes += [ptr, i64, ptr, ptr, i64, ptr, i64, ptr, ptr, ptr]
    lib.feasibly_form.restype = None
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
    rows: tuple[int, int] | None = None,
) -> None:
    """``pick_numpy`` in C (a selection of the few ranks instead of a sort)."""
    threads, n_rows, nb, cap = values.shape
    first, end = rows if rows is not None else (0, n_rows)
    if (
        filled.shape != (threads, n_rows, nb)
        or ranks.ndim != 2
        or ranks.shape[0] != n_rows
        or out.shape != ranks.shape
        or count.shape != (n_rows,)
        or not 0 <= first <= end <= n_rows
    ):
        raise ValueError("kernel arguments do not fit together")
    if not 0 <= bracket < nb:
        raise ValueError("no such bracket")
    lib = _compiled()
    assert lib is not None
    work = np.empty(max(2 * threads * cap, 1))  # the kept values and the selection's scratch
    lib.feasibly_pick(
        threads,
        n_rows,
        cap,
        _address(values, np.float64),
        _address(filled, np.int64),
        bracket,
        ranks.shape[1],
        _address(ranks, np.int64),
        _address(out, np.float64, True),
        _address(count, np.int64, True),
        _address(work, np.float64, True),
        first,
        end,
    )


def _form_compiled(
    x: np.ndarray,
    sets: Sets,
    single: np.ndarray,
    right: np.ndarray | None,
    group_off: np.ndarray | None = None,
    kg: int = 0,
) -> Former:
    """``form_numpy`` in C, bound to its arrays once (checked once); the same bits."""
    k, n = x.shape
    kt = len(sets) + single.size
    rz = kt if right is None else right.shape[0]
    index = np.array([i for at, _ in sets for i in at.tolist()], dtype=np.int64)
    weight = np.array([w for _, ws in sets for w in ws.tolist()], dtype=np.float64)
    ptr = np.zeros(len(sets) + 1, dtype=np.int64)
    ptr[1:] = np.cumsum([at.size for at, _ in sets])
    single = np.ascontiguousarray(single, dtype=np.int64)
    groups = np.zeros(0, dtype=np.int64) if group_off is None else np.asarray(group_off, np.int64)
    if (
        x.ndim != 2
        or kt < 1
        or any(at.size < 1 or at.size != ws.size for at, ws in sets)
        or (index.size and (index.min() < 0 or index.max() >= k))
        or (single.size and (single.min() < 0 or single.max() >= k))
        or (right is not None and right.shape != (rz, kt))
        or (groups.size and (kg < 1 or groups.min() < 0 or groups.max() + kg > rz))
    ):
        raise ValueError("kernel arguments do not fit together")
    lib = _compiled()
    assert lib is not None
    f64 = np.float64
    right_c = None if right is None else np.ascontiguousarray(right, dtype=f64)
    work = np.empty(max(len(sets), 1) * _FORM_CHUNK)
    rows = np.empty(kt, dtype=np.uint64)  # the kernel's table of merged-input rows
    lanes = np.empty(4 * (rz + groups.size * kg * kg))
    sets_args = (
        len(sets),
        _address(ptr, np.int64),
        _address(index, np.int64) if index.size else None,
        _address(weight, f64) if weight.size else None,
        single.size,
        _address(single, np.int64) if single.size else None,
        rz,
        None if right_c is None else _address(right_c, f64),
    )
    work_args = (_address(work, f64, True), _address(rows, np.uint64, True))
    group_args = (groups.size, _address(groups, np.int64) if groups.size else None, kg)
    kept = (x, ptr, index, weight, single, right_c, work, rows, lanes, groups)
    return _BoundForm(
        lib, rz, n, (n, _address(x, f64)), sets_args, work_args, group_args, lanes, kept
    )


class _BoundForm:
    """A compiled former bound to its arrays (see ``Former``)."""

    __slots__ = ("_arrays", "_groups", "_head", "_lanes", "_lib", "_n", "_rz", "_sets", "_work")

    def __init__(
        self,
        lib: ctypes.CDLL,
        rz: int,
        n: int,
        head: tuple[Any, ...],
        sets: tuple[Any, ...],
        work: tuple[Any, ...],
        groups: tuple[Any, ...],
        lanes: np.ndarray,
        arrays: tuple[Any, ...],
    ):
        self._lib, self._rz, self._n = lib, rz, n
        self._head, self._sets, self._work, self._groups = head, sets, work, groups
        self._lanes = _address(lanes, np.float64, True)
        self._arrays = arrays  # holds the arrays whose addresses are in the arguments

    def __call__(
        self,
        start: int,
        stop: int,
        out: np.ndarray,
        col: int,
        sums: np.ndarray | None = None,
        gram: np.ndarray | None = None,
    ) -> None:
        rz = self._rz
        if not 0 <= start <= stop <= self._n:
            raise ValueError("trial range outside the draws")
        if out.ndim != 2 or out.shape[0] != rz or not 0 <= col <= out.shape[1] - (stop - start):
            raise ValueError("kernel arguments do not fit together")
        moments: tuple[int | None, ...] = (None, None, None)
        if sums is not None and gram is not None:
            if sums.shape != (rz,) or gram.shape != (rz, rz):
                raise ValueError("kernel arguments do not fit together")
            f64 = np.float64
            moments = (_address(sums, f64, True), _address(gram, f64, True), self._lanes)
        base = _address(out, np.float64, True) + 8 * col
        self._lib.feasibly_form(
            *self._head, start, stop, *self._sets, base, out.shape[1], *self._work,
            *self._groups, *moments,
        )  # fmt: skip


# Trials of the draws the compiled former merges at a time (FORM_CHUNK in _scan.c).
_FORM_CHUNK = 1024


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
        return _bind_compiled, _pick_compiled, _form_compiled
    return _bind_numpy, pick_numpy, form_numpy


#: The numpy kernels in the form ``scan_kernel`` returns (the compiled ones' reference in tests).
NUMPY_KERNELS: Kernels = (_bind_numpy, pick_numpy, form_numpy)
