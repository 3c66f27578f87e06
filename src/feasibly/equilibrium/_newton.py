"""The compiled Newton iteration for gas-only states (``_newton.c``), loaded with ctypes.

``_gibbs_solver._iterate`` advances a block of states together with numpy, about 45 array
operations per iteration; for states with no condensed phases the C kernel here does the same
iteration with each state solved to the end (four side by side in the lanes of a vector), with
no per-iteration overhead. Its rules are ``_iterate``'s for nc == 0 (the constants are passed
from ``_gibbs_solver``, so there is one source of them); it gives the same converged flags, the
same iteration counts (one more or fewer in a rare state whose last step lands on a tolerance)
and the same amounts to the convergence tolerance (tests/equilibrium/test_compiled_newton.py).
``hatch_build.py`` compiles it into the wheel; where it was not built (no C compiler) or cannot
be loaded, ``solve_batch`` iterates with numpy.

ctypes releases the GIL during the call, so blocks of states run on worker threads in parallel;
every state is solved on its own, so the results do not depend on the number of threads.
"""

from __future__ import annotations

import ctypes
import itertools
import os
from functools import cache
from pathlib import Path

import numpy as np

from .._kernels import WorkerPool, load_library
from .._kernels import address as _address

__all__ = ["MAX_ELEMENTS", "compiled", "newton_gas"]

#: Largest element count (rank of the reduced element matrix) the kernel takes (RMAX in
#: ``_newton.c``); beyond it the numpy iteration runs.
MAX_ELEMENTS = 16

_LIBRARY = Path(__file__).parent / "_lib" / "libfeasibly_newton.so"
# Below this many states a second thread does not pay for handing it work (measured here, kernel
# alone, one thread against two: 2048 states 1.37 against 1.53 ms, 4096 states 2.65 against
# 1.79 ms, 10^4 states 7.5 against 5.0 ms).
_MIN_THREADED = 4096
# At most two threads: the machines this runs on have few cores, and the states are independent,
# so a third thread only competes with the caller's other work.
_MAX_THREADS = 2


def _library_path() -> Path | None:
    """The compiled kernel beside this module (built into the wheel by ``hatch_build.py``, or in
    the source tree by ``bin/build-kernel``), if present."""
    return _LIBRARY if _LIBRARY.is_file() else None


@cache
def _compiled() -> ctypes.CDLL | None:
    lib = load_library(
        _library_path(),
        "equilibrium kernel",
        "iterating with numpy instead: the same results, a few times slower",
    )
    if lib is None:
        return None
    i64, ptr = ctypes.c_int64, ctypes.c_void_p
    lib.feasibly_newton_gas.argtypes = [i64] * 6 + [ptr] * 11
    lib.feasibly_newton_gas.restype = ctypes.c_int
    return lib


def compiled() -> bool:
    """Whether gas-only states are iterated by the compiled kernel (else by numpy)."""
    return _compiled() is not None


# One pool per process, made anew in a child made by fork (see WorkerPool).
_WORKERS = WorkerPool(lambda: _MAX_THREADS, "feasibly-newton")


def _threads() -> int:
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        cores = os.cpu_count() or 1
    return max(1, min(_MAX_THREADS, cores))


def newton_gas(
    A_g: np.ndarray,
    g_g: np.ndarray,
    avail_g: np.ndarray,
    b: np.ndarray,
    ln_p: np.ndarray,
    ln_n: np.ndarray,
    ln_N: np.ndarray,
    pi: np.ndarray,
    converged: np.ndarray,
    iterations: np.ndarray,
    max_iter: int,
    stall_iter: int,
    rules: np.ndarray,
) -> None:
    """Iterate every state to the end, in place: ``ln_n`` (B × ng), ``ln_N`` (B,), ``pi`` (B × r)
    hold the start values and get the final ones; ``converged`` (B, uint8) and ``iterations``
    (B, int64) are written.

    ``A_g`` (r × ng), ``g_g`` (B × ng), ``avail_g`` (B × ng, uint8), ``b`` (B × r), ``ln_p``
    (B,) as in ``solve_batch``; ``rules``: the iteration's constants in the order ``_newton.c``
    reads them. Raises MemoryError when the kernel's work space cannot be allocated.
    """
    r, ng = A_g.shape
    B = g_g.shape[0]
    if not (
        g_g.shape == avail_g.shape == ln_n.shape == (B, ng)
        and b.shape == pi.shape == (B, r)
        and ln_p.shape == ln_N.shape == converged.shape == iterations.shape == (B,)
        and rules.shape == (8,)
    ):
        raise ValueError("kernel arguments do not fit together")
    lib = _compiled()
    assert lib is not None
    f64, u8 = np.float64, np.uint8
    args = (
        _address(rules, f64),
        _address(A_g, f64),
        _address(g_g, f64),
        _address(avail_g, u8),
        _address(b, f64),
        _address(ln_p, f64),
        _address(ln_n, f64, True),
        _address(ln_N, f64, True),
        _address(pi, f64, True),
        _address(converged, u8, True),
        _address(iterations, np.int64, True),
    )

    def run(lo: int, hi: int) -> int:
        return int(lib.feasibly_newton_gas(r, ng, lo, hi, max_iter, stall_iter, *args))

    threads = _threads() if B >= _MIN_THREADED else 1
    if threads == 1:
        status = [run(0, B)]
    else:
        # Interleaved halves would balance slow states better, but contiguous blocks keep each
        # thread's rows apart in memory (no shared cache lines); states cost about the same.
        edges = [B * k // threads for k in range(threads + 1)]
        futures = [_WORKERS.get().submit(run, lo, hi) for lo, hi in itertools.pairwise(edges)]
        status = [f.result() for f in futures]
    if any(s == -2 for s in status):
        raise ValueError(f"the equilibrium kernel takes 1 … {MAX_ELEMENTS} elements, not {r}")
    if any(s != 0 for s in status):
        raise MemoryError("the equilibrium kernel could not allocate its work space")
