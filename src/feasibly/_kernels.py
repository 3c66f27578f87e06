"""What the wings with a compiled kernel share: loading its library with ctypes, checking an
array before its address goes to C, and a pool of worker threads that survives fork.

The Monte Carlo scan (``uncertainty/_scan.c``) and the equilibrium Newton iteration
(``equilibrium/_newton.c``) are plain C in shared libraries that ``hatch_build.py`` compiles
into the wheel. ctypes releases the GIL during a call, so worker threads run kernels in
parallel; where a library is absent or does not load, each wing runs its numpy twin.
"""

from __future__ import annotations

import ctypes
import os
import threading
import warnings
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np

__all__ = ["WorkerPool", "address", "load_library"]


def load_library(path: Path | None, what: str, instead: str) -> ctypes.CDLL | None:
    """The shared library at ``path``, or None when there is none (not built). One that does
    not load (built for another machine, say) gives a RuntimeWarning naming ``what`` and what
    runs ``instead``, and None."""
    if path is None:
        return None
    try:
        return ctypes.CDLL(str(path))
    except OSError as exc:
        warnings.warn(
            f"feasibly's compiled {what} could not be loaded ({exc}); {instead}",
            RuntimeWarning,
            stacklevel=3,
        )
        return None


def address(a: np.ndarray, dtype: type, writeable: bool = False) -> int:
    """The data address of ``a`` after checking what the C code assumes of it."""
    if a.dtype != dtype or not a.flags.c_contiguous or (writeable and not a.flags.writeable):
        msg = f"kernel argument must be a C-contiguous {np.dtype(dtype)} array, got {a.dtype}"
        raise TypeError(msg)
    return int(a.ctypes.data)


class WorkerPool:
    """One pool of worker threads per process, made on first use (starting threads per call
    costs milliseconds, a large part of a small kernel call).

    A child made by fork (multiprocessing's default on Linux) inherits the parent's pool without
    its threads, where submitted work would wait for ever: the pool is keyed by the process id
    and made anew in the child.
    """

    def __init__(self, threads: Callable[[], int], name: str) -> None:
        self._threads, self._name = threads, name
        self._lock = threading.Lock()
        self._pool: tuple[int, ThreadPoolExecutor] | None = None

    def get(self) -> ThreadPoolExecutor:
        with self._lock:
            if self._pool is None or self._pool[0] != os.getpid():
                pool = ThreadPoolExecutor(self._threads(), thread_name_prefix=self._name)
                self._pool = (os.getpid(), pool)
            return self._pool[1]
