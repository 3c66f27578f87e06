"""Gibbs-energy minimisation kernel: an ideal-gas mixture plus pure condensed phases, vectorised.

Plain float arrays only (no units, no library objects); :mod:`feasibly.equilibrium` prepares them.
The formulation is the element-potential (Lagrange-multiplier) Newton iteration of Gordon &
McBride, NASA RP-1311 (1994), §2.3 (TP problems, eqs. 2.24–2.26): the unknowns are the gas
amounts as logarithms ``ln n_j`` (so trace species are never negative and keep their relative
accuracy), the total gas amount as ``ln N``, the amounts ``m_c`` of the condensed phases present,
and the element potentials π (in units of RT). Each iteration solves one small linear system per
state; all states advance together, and a state leaves the batch once it has converged with a
valid set of condensed phases. Condensed phases are added when they would lower G
(g_c − a_c·π < 0) and removed when their amount turns negative (RP-1311 §3.5). States with no
condensed phases go to the compiled twin of the iteration (``_newton.c``), which solves each
state to the end with the same rules; where it is not built, the numpy iteration here runs.

The element matrix is first reduced to an orthonormal basis of its row space, so species sets
whose elements always occur in fixed ratios (CaCO3/CaO/CO2 has rank 2 in Ca, C, O) give a
non-singular system.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from functools import cache

import numpy as np
from threadpoolctl import ThreadpoolController

from . import _newton

__all__ = [
    "DualPoint",
    "GibbsBatch",
    "reachable",
    "reduce_elements",
    "rescue",
    "row_patterns",
    "solve_batch",
    "solve_dual",
]

# RP-1311 §3.3: species below mole fraction 1e-8 do not limit the step for the major species;
# a trace species that is rising may at most reach mole fraction 1e-4 in one step (eq. 3.2).
_LN_TRACE = math.log(1e-8)
_LN_TRACE_TARGET = math.log(1e-4)
# RP-1311 eq. 3.1: no major species' ln n changes by more than 2 in one step (ln N: 2/5).
_MAX_LN_STEP = 2.0
# Relative step below which a state counts as converged: 1e-12 of the total amount is ~10^4
# float epsilons, reachable in double precision, and one further Newton step then leaves the
# element balance below 1e-20 (quadratic convergence), far inside the 1e-10 we promise.
_TOL = 1e-12
# Trace species (x > 1e-50) must also settle in relative terms (|Δ ln n| ≤ 1e-9) so that their
# reported amounts are accurate to nine digits, not only negligible; below 1e-50 nothing physical
# is at stake and the underflow region starts to be reached.
_LN_TRACE_CHECKED = math.log(1e-50)
_TRACE_STEP_TOL = 1e-9
# ... unless the amount is fixed by the element balance alone: then it carries the rounding of
# the totals (~1e-16 of the total amount, amplified by the conditioning), and its relative step
# never falls below 1e-9. After this many iterations (converging states need 10–40, trace species
# included) an absolute step below 1e-14 of the gas amount (~50 float epsilons) counts as settled.
_STALL_ITER = 60
_ROUNDING_STEP = 1e-14
# A condensed phase is added when it would lower G/RT by more than this per mole: 1e-9 is far
# above the rounding of g_c − a_c·π (~1e-13 for |g| ~ 100) and far below any physical margin.
_ADD_TOL = 1e-9
# The amounts are scaled to one atom in all (composition._solve), so no condensed phase of a
# phase set that can hold ever has more than 1 mol. Past this, with a negative amount beside
# it, the phase set is revised at once: three phases that pin the potentials of three
# elements together (CaCO3, CaO and graphite) otherwise drift to amounts of ±1e5 mol for tens
# of iterations before a phase may leave.
_DRIFT_AMOUNT = 2.0
# Iteration limit per state, phase changes included: converging states need 10–40; the limit
# only stops a state that is cycling or diverging, which is then reported as not converged.
_MAX_ITER = 400
# A pivot smaller than this fraction of its column's largest entry makes a system singular. Only
# exact (or underflowed) zeros count: a trace species weights its element direction by its
# amount (1e-16 and less), and the near-singular Newton step there is correct and damped.
_PIVOT_TOL = 1e-13
# States iterated together: a block's few dozen working arrays (species × states, 320 kB each for
# five species) then stay in cache, where one numpy operation costs ~0.5 ns per element; on 10^5
# states at once every temporary is a fresh page-faulted allocation in main memory, several
# times slower. Measured here: 4096–16384 equally good, 2048 or 32768 and up ~1.5× slower.
_BLOCK = 12288


@cache
def _blas_controller() -> ThreadpoolController:
    # Finding the BLAS libraries takes milliseconds (a tenth of a 10^4-state solve): once.
    return ThreadpoolController()


def reduce_elements(A: np.ndarray, tol: float = 1e-10) -> np.ndarray:
    """Orthonormal basis Q (E × r) of the column space of the element matrix A (E × species).

    The element balance A n = b is equivalent to Qᵀ A n = Qᵀ b whenever b lies in that space
    (always, when b comes from a feed of the same species). ``tol`` is relative to the largest
    singular value: element counts are small integers, so 1e-10 separates exact zeros from rounding.
    """
    u, s, _ = np.linalg.svd(np.asarray(A, dtype=float), full_matrices=False)
    if s.size == 0 or s[0] == 0:
        return np.zeros((A.shape[0], 0))
    r = int(np.sum(s > tol * s[0]))
    return u[:, :r]


@dataclass
class GibbsBatch:
    """Solution state of a batch of B equilibrium problems (all arrays have B rows).

    ``ln_n``: ln of the gas amounts (B × ng; −inf for species not available); ``ln_N``: ln of the
    total gas amount; ``m``: condensed amounts (B × nc, 0 where absent); ``active``: which condensed
    phases are present; ``pi``: element potentials / RT in the reduced basis (B × r);
    ``converged``; ``iterations``; ``scale``: the factor the amounts were divided by.
    """

    ln_n: np.ndarray
    ln_N: np.ndarray
    m: np.ndarray
    active: np.ndarray
    pi: np.ndarray
    converged: np.ndarray
    iterations: np.ndarray

    def gas_amounts(self) -> np.ndarray:
        return np.exp(self.ln_n)

    def take(self, idx: np.ndarray) -> GibbsBatch:
        """The states ``idx`` (with repeats), as a new batch."""
        return GibbsBatch(
            self.ln_n[idx],
            self.ln_N[idx],
            self.m[idx],
            self.active[idx],
            self.pi[idx],
            self.converged[idx],
            self.iterations[idx],
        )


def _solve_small(aug: np.ndarray, pivot_tol: float = _PIVOT_TOL) -> tuple[np.ndarray, np.ndarray]:
    """Solve K × K systems stored batch-last as an augmented array (K, K + 1, B), in place.

    Gaussian elimination with partial pivoting, vectorised over the batch with contiguous
    operations only (numpy's stacked ``linalg.solve`` costs ~0.4 µs per 4 × 4 system). Returns
    the solutions (K × B) and a mask of singular systems (their solution is meaningless).
    Entries left of the diagonal are not updated: back-substitution never reads them.
    """
    K, _, B = aug.shape
    singular = np.zeros(B, dtype=bool)
    for k in range(K):
        col = np.abs(aug[k:, k, :])
        colmax = np.maximum.reduce(col, axis=0)
        if K - k > 1:
            # Rows are swapped only in the systems whose largest pivot candidate is not already
            # in row k (np.argmax takes the first maximum, or the first NaN; so does this test).
            need = ~(col[0] >= colmax)
            if np.count_nonzero(need):
                w = np.nonzero(need)[0]
                rows = k + np.argmax(col[:, w], axis=0)
                sub = aug[:, :, w]
                ar = np.arange(w.size)
                row_k = sub[k].copy()
                sub[k] = sub[rows, :, ar].T
                sub[rows, :, ar] = row_k.T
                aug[:, :, w] = sub
        piv = aug[k, k, :]
        # After the swaps |pivot| is colmax; the column's largest entry is colmax or one above.
        norm = (
            colmax
            if k == 0
            else np.maximum(colmax, np.maximum.reduce(np.abs(aug[:k, k, :]), axis=0))
        )
        # |pivot| ≤ 1e-13 × column max (or 0, or NaN) marks the system singular: see _PIVOT_TOL
        bad = ~(colmax > pivot_tol * norm)
        if np.count_nonzero(bad):
            singular |= bad
            piv = np.where(bad, 1.0, piv)
        aug[k, k + 1 :, :] /= piv
        if k + 1 < K:
            f = aug[k + 1 :, k, :]
            aug[k + 1 :, k + 1 :, :] -= f[:, None, :] * aug[k, k + 1 :, :][None, :, :]
    x = np.empty((K, B))
    x[K - 1] = aug[K - 1, K, :]
    for k in range(K - 2, -1, -1):
        # Σ_j>k a_kj x_j accumulated in order, as np.sum over the rows would
        acc = aug[k, k + 1, :] * x[k + 1]
        for j in range(k + 2, K):
            acc += aug[k, j, :] * x[j]
        x[k] = aug[k, K, :] - acc
    singular |= ~np.logical_and.reduce(np.isfinite(x), axis=0)
    return x, singular


@cache
def _rank(mask_bytes: bytes, shape: tuple[int, int], A_bytes: bytes) -> int:
    A = np.frombuffer(A_bytes).reshape(shape)
    mask = np.frombuffer(mask_bytes, dtype=bool)
    sub = A[:, mask]
    if sub.size == 0:
        return 0
    return int(np.linalg.matrix_rank(sub, tol=1e-10 * max(1.0, float(np.abs(sub).max()))))


def _spans(A_all: np.ndarray, mask: np.ndarray) -> bool:
    return _rank(mask.tobytes(), A_all.shape, A_all.tobytes()) == A_all.shape[0]


def _choose_phases(
    A_g: np.ndarray,
    A_c: np.ndarray,
    g_c: np.ndarray,
    pi: np.ndarray,
    avail_g: np.ndarray,
    avail_c: np.ndarray,
    active: np.ndarray,
    m: np.ndarray,
) -> bool:
    """Update one state's condensed-phase set after convergence; True when it changed.

    A phase with a negative amount leaves (the most negative first); otherwise the absent phase
    that would lower G the most enters. A phase is never removed while the species left would not
    span the elements (the state could then not balance them); the phase with the next best
    margin is brought in instead.
    """
    A_all = np.hstack([A_g, A_c])
    nc = A_c.shape[1]
    neg = active & (m < 0)
    if np.any(neg):
        c = int(np.argmin(np.where(neg, m, np.inf)))
        active[c] = False
        m[c] = 0.0
        if not _spans(A_all, np.concatenate([avail_g, active])):
            margin = g_c - pi @ A_c
            order = np.argsort(margin)
            for k in order:
                if k == c or active[k] or not avail_c[k]:
                    continue
                trial = active.copy()
                trial[k] = True
                if _spans(A_all, np.concatenate([avail_g, trial])):
                    active[k] = True
                    break
        return True
    if nc == 0:
        return False
    margin = np.where(avail_c & ~active, g_c - pi @ A_c, np.inf)
    c = int(np.argmin(margin))
    if margin[c] < -_ADD_TOL:
        active[c] = True
        m[c] = 0.0
        return True
    return False


def row_patterns(masks: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct rows of the boolean matrix ``masks`` and, for each row, the index of its
    pattern among them (in no particular order). One pattern, the usual case, is found by one
    comparison; rows of up to 64 entries are packed into one integer each and told apart by
    numpy's hashing unique (``np.unique(axis=0)`` sorts rows as records: 16–27 ms for 10^4)."""
    if np.all(masks == masks[:1], axis=None):
        return masks[:1], np.zeros(masks.shape[0], dtype=np.intp)
    packed = np.packbits(masks, axis=1)
    if packed.shape[1] <= 8:
        keys = np.zeros((masks.shape[0], 8), dtype=np.uint8)
        keys[:, : packed.shape[1]] = packed
        _, first, which = np.unique(
            keys.view(np.uint64).ravel(), return_index=True, return_inverse=True
        )
        return masks[first], np.ravel(which)
    patterns, which = np.unique(masks, axis=0, return_inverse=True)
    return patterns, np.ravel(which)


def _choose_phases_batch(
    prob: _Problem,
    active: np.ndarray,
    m: np.ndarray,
    pi: np.ndarray,
    states: np.ndarray,
    gc: np.ndarray,
    pp: np.ndarray,
) -> np.ndarray:
    """``_choose_phases`` for the states ``states`` at once (their rows of ``active`` and ``m``
    updated in place); True where a state's phase set changed.

    The common moves are vectorised: the most negative phase leaves where the rest still span
    the elements (checked once per distinct set of species present), else the absent phase
    that lowers G the most enters. A state whose leaving phase would break the span goes through
    ``_choose_phases`` itself. ``gc`` and ``pp`` are the states' G°/RT of the condensed phases
    and element potentials, batch-last, as the iteration holds them. (One Python call per state
    took about half of a 10^4-state solve with graphite.)"""
    A_g, A_c = prob.A_g, prob.A_c
    q, nc = states.size, A_c.shape[1]
    changed = np.zeros(q, dtype=bool)
    if nc == 0:
        return changed
    a = active[states].T.copy()  # (nc, q)
    mq = m[states].T.copy()
    neg = a & (mq < 0)
    has_neg = np.logical_or.reduce(neg, axis=0)
    out = np.nonzero(has_neg)[0]
    if out.size:
        c = np.argmin(np.where(neg[:, out], mq[:, out], np.inf), axis=0)
        trial = a[:, out].copy()
        trial[c, np.arange(out.size)] = False
        masks = np.concatenate([prob.avail_g[states[out]], trial.T], axis=1)
        patterns, which = row_patterns(masks)
        A_all = np.hstack([A_g, A_c])
        spans = np.array([_spans(A_all, pat) for pat in patterns])[which]
        a[c[spans], out[spans]] = False
        mq[c[spans], out[spans]] = 0.0
        changed[out[spans]] = True
        for k in out[~spans]:  # the phase may not simply leave: the state's own choice
            j = states[k]
            _choose_phases(
                A_g, A_c, prob.g_c[j], pi[j], prob.avail_g[j], prob.avail_c[j], active[j], m[j]
            )
            a[:, k], mq[:, k] = active[j], m[j]
            changed[k] = True
    add = np.nonzero(~has_neg)[0]
    if add.size:
        absent = prob.avail_c[states[add]].T & ~a[:, add]
        margin = np.where(absent, gc[:, add] - A_c.T @ pp[:, add], np.inf)
        c = np.argmin(margin, axis=0)
        enter = margin[c, np.arange(add.size)] < -_ADD_TOL
        a[c[enter], add[enter]] = True
        mq[c[enter], add[enter]] = 0.0
        changed[add[enter]] = True
    active[states], m[states] = a.T, mq.T
    return changed


def _initial_active(
    A_g: np.ndarray, A_c: np.ndarray, g_c: np.ndarray, avail_g: np.ndarray, avail_c: np.ndarray
) -> np.ndarray:
    """Condensed phases present at the start: as many as can coexist with a gas phase.

    Starting with every phase that may be present (independent element vectors, at most r − 1 of
    them so that the gas keeps a degree of freedom) lets the first iterations find a feasible
    split of the elements; phases that should not be there get negative amounts and leave. A
    start without them can be infeasible (CaO + a little CO2: Ca cannot be balanced by CaCO3
    alone) and the iteration then stalls. The gas and the chosen phases must span the elements.
    """
    B, nc = avail_c.shape
    active = np.zeros((B, nc), dtype=bool)
    if nc == 0:
        return active
    r, ng = A_g.shape
    A_all = np.hstack([A_g, A_c])
    both = np.hstack([avail_g, avail_c])
    patterns, which = row_patterns(both)
    for p, pattern in enumerate(patterns):
        rows = np.nonzero(which == p)[0]
        ag, ac = pattern[:ng], pattern[ng:]
        chosen = np.zeros(nc, dtype=bool)
        for k in np.argsort(np.mean(g_c[rows], axis=0)):
            if not ac[k]:
                continue
            trial = chosen.copy()
            trial[k] = True
            sub = A_c[:, trial]
            if np.linalg.matrix_rank(sub) == sub.shape[1] and sub.shape[1] <= r - 1:
                chosen = trial
        if not _spans(A_all, np.concatenate([ag, chosen])):
            # the r − 1 cap left an element uncarried: take every independent phase instead
            for k in np.argsort(np.mean(g_c[rows], axis=0)):
                trial = chosen.copy()
                trial[k] = bool(ac[k])
                if np.linalg.matrix_rank(A_c[:, trial]) == int(trial.sum()):
                    chosen = trial
        active[rows] = chosen
    return active


def solve_batch(
    A_g: np.ndarray,
    A_c: np.ndarray,
    g_g: np.ndarray,
    g_c: np.ndarray,
    b: np.ndarray,
    ln_p: np.ndarray,
    avail_g: np.ndarray,
    avail_c: np.ndarray,
    start: GibbsBatch | None = None,
    max_iter: int = _MAX_ITER,
    active0: np.ndarray | None = None,
    start_rows: np.ndarray | None = None,
    pivot_tol: float = _PIVOT_TOL,
) -> GibbsBatch:
    """Minimise G over B states at once.

    ``A_g`` (r × ng), ``A_c`` (r × nc): reduced element matrices; ``g_g`` (B × ng), ``g_c``
    (B × nc): G°/RT of each species at 1 bar; ``b`` (B × r): reduced element totals, scaled to
    order one by the caller; ``ln_p``: ln(P / 1 bar) (B,); ``avail_*``: which species may appear
    in each state (data range). ``start``: a previous solution to start from (warm start);
    ``start_rows`` (B,): the state of ``start`` each state starts from (default: the same one).
    """
    B, ng = g_g.shape
    nc = g_c.shape[1]
    r = A_g.shape[0]
    converged = np.zeros(B, dtype=bool)
    iterations = np.zeros(B, dtype=np.int64)
    if start is None:
        n_av = np.maximum(avail_g.sum(axis=1), 1)
        # RP-1311 §3.2: every gas species starts equal, total 0.1 per kg; here 1 per unit of b.
        ln_n = np.where(avail_g, -np.log(n_av)[:, None], -np.inf)
        ln_N = np.zeros(B)
        active = (
            _initial_active(A_g, A_c, g_c, avail_g, avail_c) if active0 is None else active0.copy()
        )
        # Phases present at the start hold an amount of the order of the (scaled) totals.
        m = np.where(active, 0.1, 0.0)
        pi = np.zeros((B, r))
        out = GibbsBatch(ln_n, ln_N, m, active, pi, converged, iterations)
        init, start_rows = out, None
    else:
        # Each block gathers its start values (masked by availability) from ``start`` itself;
        # every state's values are written to ``out`` when it leaves the iteration.
        active = (start.active if start_rows is None else start.active[start_rows]) & avail_c
        out = GibbsBatch(
            np.empty((B, ng)), np.empty(B), np.zeros((B, nc)), active, np.empty((B, r)),
            converged, iterations,
        )  # fmt: skip
        init = start
    if nc == 0 and ng and 0 < r <= _newton.MAX_ELEMENTS and B and _newton.compiled():
        # Gas-only states: the compiled iteration, the same rules, each state to the end.
        _iterate_compiled(out, init, start_rows, A_g, g_g, b, ln_p, avail_g, max_iter, pivot_tol)
        return out
    prob = _Problem(A_g, A_c, g_g, g_c, b, ln_p, avail_g, avail_c, max_iter, pivot_tol)
    # The iteration's matrix products are far too small for BLAS threads to pay off: with two
    # threads they spend more time synchronising than multiplying.
    with _blas_controller().limit(limits=1, user_api="blas"):
        # Blocks of equal size, at most _BLOCK: 10^4 states go in one block, not 8192 + 1808
        # (every iteration of a small block costs nearly the fixed cost of a full one).
        blocks = -(-B // _BLOCK)
        edges = [B * k // blocks for k in range(blocks + 1)]
        for lo, hi in itertools.pairwise(edges):
            _iterate(out, init, start_rows, prob, lo, hi)
    if active0 is None and nc and not np.all(out.converged):
        _retry(out, A_g, A_c, g_g, g_c, b, ln_p, avail_g, avail_c, max_iter)
    return out


def _iterate_compiled(
    out: GibbsBatch,
    init: GibbsBatch,
    rows: np.ndarray | None,
    A_g: np.ndarray,
    g_g: np.ndarray,
    b: np.ndarray,
    ln_p: np.ndarray,
    avail_g: np.ndarray,
    max_iter: int,
    pivot_tol: float,
) -> None:
    """``_iterate`` for states with no condensed phases, in the compiled kernel, in place in
    ``out`` (start values from ``init`` at ``rows``, or at the same states)."""
    sel = slice(None) if rows is None else rows
    # Gathered copies (fancy indexing copies anyway): the kernel iterates in place in them.
    ln_n = np.array(init.ln_n[sel], dtype=np.float64, order="C")
    ln_N = np.array(init.ln_N[sel], dtype=np.float64, order="C")
    pi = np.array(init.pi[sel], dtype=np.float64, order="C")
    converged = np.zeros(ln_N.size, dtype=np.uint8)
    rules = np.array(
        [_LN_TRACE, _LN_TRACE_TARGET, _MAX_LN_STEP, _TOL, _LN_TRACE_CHECKED, _TRACE_STEP_TOL,
         _ROUNDING_STEP, pivot_tol]
    )  # fmt: skip
    f64 = np.float64
    _newton.newton_gas(
        np.ascontiguousarray(A_g, dtype=f64),
        np.ascontiguousarray(g_g, dtype=f64),
        np.ascontiguousarray(avail_g, dtype=bool).view(np.uint8),
        np.ascontiguousarray(b, dtype=f64),
        np.ascontiguousarray(ln_p, dtype=f64),
        ln_n, ln_N, pi, converged, out.iterations, max_iter, _STALL_ITER, rules,
    )  # fmt: skip
    out.ln_n, out.ln_N, out.pi = ln_n, ln_N, pi
    out.converged[:] = converged.view(bool)


@dataclass
class _Problem:
    """The arrays of one ``solve_batch`` call (shapes as there), for its blocks of states."""

    A_g: np.ndarray
    A_c: np.ndarray
    g_g: np.ndarray
    g_c: np.ndarray
    b: np.ndarray
    ln_p: np.ndarray
    avail_g: np.ndarray
    avail_c: np.ndarray
    max_iter: int
    pivot_tol: float


def _iterate(
    out: GibbsBatch,
    init: GibbsBatch,
    rows: np.ndarray | None,
    prob: _Problem,
    lo: int,
    hi: int,
) -> None:
    """Newton iteration, in place in ``out``, of the states lo:hi until each has left the batch.

    Start values come from ``init`` (at ``rows[lo:hi]``, or at lo:hi). The states still
    iterating are held batch-last (species × states): every product below is then a matrix
    product or a contiguous operation with a long inner loop over states. A state's values are
    written to ``out`` when it leaves (converged, or given up) or before its condensed-phase set
    is changed in Python.
    """
    A_g, A_c, avail_c = prob.A_g, prob.A_c, prob.avail_c
    max_iter = prob.max_iter
    r, ng = A_g.shape
    nc = A_c.shape[1]
    K = r + nc + 1
    AAt = (A_g[:, None, :] * A_g[None, :, :]).reshape(r * r, ng)  # (r², ng) for Σ a a n
    ln_n, ln_N, m, active, pi = out.ln_n, out.ln_N, out.m, out.active, out.pi
    sel = slice(lo, hi) if rows is None else rows[lo:hi]
    av = prob.avail_g[lo:hi].T.copy()
    # With every gas species available (the usual case) the masks by availability are no-ops;
    # skipping them changes no value (a state leaving the block keeps the rest available).
    full = bool(np.all(av))
    y = init.ln_n[sel].T.copy()
    if not full:
        y = np.where(av, y, -np.inf)
    lnN = init.ln_N[sel].copy()
    act = active[lo:hi].T.copy()
    mm = np.where(act, init.m[sel].T, 0.0)
    pp = init.pi[sel].T.copy()
    g = prob.g_g[lo:hi].T.copy()
    gc = prob.g_c[lo:hi].T.copy()
    avc = avail_c[lo:hi].T.copy()
    lnp = prob.ln_p[lo:hi].copy()
    bb = prob.b[lo:hi].T.copy()
    todo = np.arange(lo, hi)  # the state each column holds
    alive = np.ones(hi - lo, dtype=bool)  # columns whose state has not left the batch
    # Final values, batch-last, filled as states leave and written to ``out`` once at the end;
    # until the first compaction the columns line up with those of the working arrays.
    res_y, res_N, res_m, res_p = np.empty_like(y), np.empty_like(lnN), mm.copy(), pp.copy()
    aligned = True
    for it in range(max_iter):
        s = todo.size
        n = np.exp(y)
        N = np.exp(lnN)
        mu = g + y
        mu -= lnN
        mu += lnp
        if not full:
            mu = np.where(av, mu, 0.0)
        nmu = n * mu
        An = A_g @ n  # (r, s)
        aug = np.zeros((K, K + 1, s)) if nc else np.empty((K, K + 1, s))
        aug[:r, :r, :] = (AAt @ n).reshape(r, r, s)
        if nc:
            aug[:r, r : r + nc, :] = A_c[:, :, None] * act[None, :, :]
            aug[r : r + nc, :r, :] = np.where(act[:, None, :], A_c.T[:, :, None], 0.0)
            idx = np.arange(nc)
            aug[r + idx, r + idx, :] = np.where(act, 0.0, 1.0)
            aug[r : r + nc, K, :] = np.where(act, gc, 0.0)
        aug[:r, K - 1, :] = An
        rhs = bb - An
        if nc:
            rhs -= A_c @ (mm * act)
        rhs += A_g @ nmu
        aug[:r, K, :] = rhs
        aug[K - 1, :r, :] = An
        sum_n = np.add.reduce(n, axis=0)
        aug[K - 1, K - 1, :] = sum_n - N
        aug[K - 1, K, :] = N - sum_n + np.add.reduce(nmu, axis=0)
        x, singular = _solve_small(aug, prob.pivot_tol)
        p_new, dm, dlnN = x[:r], x[r : r + nc], x[K - 1]
        dln = A_g.T @ p_new
        dln -= mu  # −mu + Aᵀπ, the same sum
        dln += dlnN
        lnx = y - lnN
        trace = lnx <= _LN_TRACE
        if not full:
            dln = np.where(av, dln, 0.0)
            lnx = np.where(av, lnx, -np.inf)
            trace &= av
        has_trace = bool(np.count_nonzero(trace))
        # (an unavailable species has lnx = −inf, so the tests on lnx below exclude it)
        if has_trace:
            rising = np.where((lnx > _LN_TRACE) & (dln > 0), dln, 0.0)
        else:
            # no species at or below the trace level: the same values (fmax drops NaN as where does)
            rising = np.fmax(dln, 0.0)
        m1 = np.maximum(5.0 * np.abs(dlnN), np.maximum.reduce(rising, axis=0))
        lam = np.where(m1 > _MAX_LN_STEP, _MAX_LN_STEP / np.where(m1 > 0, m1, 1.0), 1.0)
        if has_trace:
            small = trace & (dln >= 0) & (dln - dlnN > 0)
            with np.errstate(divide="ignore", invalid="ignore"):
                l2 = np.where(small, (-lnx + _LN_TRACE_TARGET) / (dln - dlnN), np.inf)
            lam = np.minimum(lam, np.abs(np.minimum.reduce(l2, axis=0)))
        lam = np.where(singular | ~np.isfinite(lam), 0.0, np.minimum(lam, 1.0))
        abs_dln = np.abs(dln)
        step = np.maximum(np.maximum.reduce(n * abs_dln, axis=0), N * np.abs(dlnN))
        if nc:
            total = N + np.sum(np.where(act, np.abs(mm), 0.0), axis=0)
            step = np.maximum(step, np.maximum.reduce(np.abs(dm), axis=0)) / total
        else:
            step /= N
        cand = (lam == 1.0) & (step <= _TOL) & ~singular
        if np.count_nonzero(cand):
            # written as "no checked species has a step above tolerance" so that NaN fails it
            unsettled = (lnx > _LN_TRACE_CHECKED) & ~(abs_dln <= _TRACE_STEP_TOL)
            if it >= _STALL_ITER:
                # a trace amount fixed by the element balance alone (a feed a hair off a face of
                # the element cone) is known only to the rounding of the totals: settled when its
                # absolute change is at that level
                unsettled &= ~(n * abs_dln <= _ROUNDING_STEP * N)
            cand &= ~np.logical_or.reduce(unsettled, axis=0)
        y += lam * dln
        lnN += lam * dlnN
        if nc:
            mm = np.where(act, mm + lam * dm, 0.0)
        np.copyto(pp, p_new, where=~singular)
        settled = cand  # a full step, below tolerance, with the trace species settled
        leave = np.zeros(s, dtype=bool)
        change = np.zeros(s, dtype=bool)
        drift = change
        if nc:
            # Phase checks, vectorised: only states whose phase set must change go through Python.
            margin = np.where(avc & ~act, gc - A_c.T @ pp, np.inf)
            negative = np.any(act & (mm < 0), axis=0)
            change = negative | (np.minimum.reduce(margin, axis=0) < -_ADD_TOL)
            # A phase set that cannot hold (amounts beyond what the element totals allow, one
            # of them negative) is revised at once instead of after its iteration settles.
            drift = negative & (np.maximum.reduce(np.abs(mm), axis=0) > _DRIFT_AMOUNT)
        fin = settled & ~change
        python = np.nonzero((settled & change | drift | singular & (lam == 0.0)) & alive)[0]
        if python.size:
            i = todo[python]
            m[i], pi[i] = mm[:, python].T, pp[:, python].T
            changed = _choose_phases_batch(prob, active, m, pi, i, gc[:, python], pp[:, python])
            # A singular system: carry on with the next phase choice, or give the state up.
            leave[python] = singular[python] & ~changed
            act[:, python], mm[:, python] = active[i].T, m[i].T
        leave |= fin & alive
        if np.count_nonzero(leave):
            if aligned:
                for res, val in ((res_y, y), (res_N, lnN), (res_m, mm), (res_p, pp)):
                    np.copyto(res, val, where=leave)
            else:
                c = todo[leave] - lo
                res_y[:, c], res_N[c], res_m[:, c], res_p[:, c] = (
                    y[:, leave], lnN[leave], mm[:, leave], pp[:, leave]
                )  # fmt: skip
            out.converged[todo[fin & alive]] = True
            out.iterations[todo[leave]] = it + 1
            alive &= ~leave
            n_alive = int(np.count_nonzero(alive))
            if n_alive == 0:
                break
            # States that left stay in the arrays (their further values are never used) until
            # a quarter of the columns have left: copying every array costs about as much as a
            # quarter of an iteration.
            if n_alive <= 0.75 * s:
                keep = np.nonzero(alive)[0]
                todo, alive, aligned = todo[keep], alive[keep], False
                y, lnN, mm, act, pp = y[:, keep], lnN[keep], mm[:, keep], act[:, keep], pp[:, keep]
                g, gc, av, avc = g[:, keep], gc[:, keep], av[:, keep], avc[:, keep]
                lnp, bb = lnp[keep], bb[:, keep]
    else:
        # the iteration limit was reached: these states are reported as not converged
        c = todo[alive] - lo
        res_y[:, c], res_N[c], res_m[:, c], res_p[:, c] = (
            y[:, alive], lnN[alive], mm[:, alive], pp[:, alive]
        )  # fmt: skip
        out.iterations[todo[alive]] = max_iter
    ln_n[lo:hi], ln_N[lo:hi], m[lo:hi], pi[lo:hi] = res_y.T, res_N, res_m.T, res_p.T


def _retry(
    out: GibbsBatch,
    A_g: np.ndarray,
    A_c: np.ndarray,
    g_g: np.ndarray,
    g_c: np.ndarray,
    b: np.ndarray,
    ln_p: np.ndarray,
    avail_g: np.ndarray,
    avail_c: np.ndarray,
    max_iter: int,
) -> None:
    """Cold-start again, in place, the states that did not converge, from every other set of
    condensed phases (subsets of up to r − 1 phases, fewest first) until each converges."""
    nc = A_c.shape[1]
    r = A_g.shape[0]
    subsets = [
        np.array([(mask >> k) & 1 for k in range(nc)], dtype=bool)
        for mask in sorted(range(1 << min(nc, 12)), key=lambda v: bin(v).count("1"))
    ]
    for subset in subsets:
        if subset.sum() > r - 1 and subset.any():
            continue
        bad = np.nonzero(~out.converged)[0]
        if bad.size == 0:
            return
        act = np.broadcast_to(subset, (bad.size, nc)) & avail_c[bad]
        sol = solve_batch(
            A_g,
            A_c,
            g_g[bad],
            g_c[bad],
            b[bad],
            ln_p[bad],
            avail_g[bad],
            avail_c[bad],
            max_iter=max_iter,
            active0=act,
        )
        ok = sol.converged
        for name in ("ln_n", "ln_N", "m", "active", "pi", "converged"):
            getattr(out, name)[bad[ok]] = getattr(sol, name)[ok]
        out.iterations[bad] += sol.iterations


# --- which species the feed can make ------------------------------------------------------------
# A feed's element totals b lie in the cone spanned by the species' element vectors. When b lies
# on a face of that cone (CO + 2 H2 has O = C exactly, so neither CO2 nor H2O can form), the
# species off that face must be exactly zero, and the Newton system, which needs every gas amount
# positive, becomes singular as they fall towards zero. The species on the face are found here
# from the facets of the cone (each facet: a normal w with w·a_j ≥ 0 for every species, zero on
# r − 1 independent ones); the species left are those with w·a_j = 0 for every facet with w·b = 0.
# Relative size of w·a or w·b (w and b normalised) that counts as zero: element counts are small
# integers and feeds are sums of them, so exact zeros come out of rounding at ~1e-16; 1e-12 keeps
# a feed that lies truly off a face by more than that from being moved onto it.
_FACE_TOL = 1e-12
# Facets are enumerated from (r − 1)-subsets of the species; beyond this many subsets the
# enumeration is skipped (every species kept, as before), which only larger sets than any we
# test would reach: 15 species over 5 independent elements give 1365 subsets.
_MAX_SUBSETS = 200_000


@cache
def _facets(A_bytes: bytes, shape: tuple[int, int]) -> np.ndarray:
    """Unit normals (F × r) of the facets of the cone spanned by the columns of A (r × n, full
    row rank r); F = 0 when r ≤ 1 (a ray has no facets inside its own span)."""
    A = np.frombuffer(A_bytes).reshape(shape)
    r, n = shape
    if r <= 1 or math.comb(n, r - 1) > _MAX_SUBSETS:
        return np.zeros((0, r))
    scale = np.linalg.norm(A, axis=0)
    An = A / np.where(scale > 0, scale, 1.0)
    found: list[np.ndarray] = []
    for subset in itertools.combinations(range(n), r - 1):
        sub = An[:, subset]
        u, s, _ = np.linalg.svd(sub, full_matrices=True)
        if s.size and s[-1] <= 1e-10 * s[0]:  # dependent columns: no hyperplane of their own
            continue
        w = u[:, -1]
        d = w @ An
        if np.all(d >= -_FACE_TOL):
            pass
        elif np.all(d <= _FACE_TOL):
            w = -w
        else:
            continue
        if not any(abs(float(w @ f)) > 1.0 - 1e-12 for f in found):
            found.append(w)
    return np.array(found).reshape(-1, r)


def reachable(A: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Which species (B × n) can have a positive amount at element totals ``b`` (B × E).

    ``A`` (E × n): element matrix of the species that may appear. A species is reachable when
    some non-negative amounts with A n = b give it a positive amount; the others are exactly zero
    at every feasible composition, equilibrium included.
    """
    Q = reduce_elements(A)
    Ar = Q.T @ A
    br = b @ Q
    W = _facets(np.ascontiguousarray(Ar).tobytes(), Ar.shape)
    B = b.shape[0]
    if W.shape[0] == 0:
        return np.ones((B, A.shape[1]), dtype=bool)
    scale = np.linalg.norm(Ar, axis=0)
    on = np.abs(W @ (Ar / np.where(scale > 0, scale, 1.0))) <= _FACE_TOL  # F × n
    tight = np.abs(br @ W.T) <= _FACE_TOL * np.linalg.norm(br, axis=1, keepdims=True)  # B × F
    # reachable: on every tight facet, i.e. no tight facet the species lies off
    return ~((tight.astype(np.int64) @ (~on).astype(np.int64)) > 0)


# --- the dual problem: a second route for states the Newton iteration does not finish ----------
# Minimising G over the amounts is, by Lagrangian duality, maximising b·π over element potentials
# π (units of RT) subject to one constraint per phase: no pure condensed phase lies below the
# element-potential plane (g_c − a_c·π ≥ 0), and the ideal gas has no composition that would form
# (ln Σ_j exp(a_j·π − g_j − ln P/P°) ≤ 0, i.e. the partial pressures the potentials imply add up to
# at most P). The problem has r unknowns and is convex, so a general constrained solver finds it
# from a feasible start whatever the Newton iteration ran into; its answer says which phases are
# present (the constraints that bind), and whether a gas phase exists at all. The amounts then
# follow from the element balance by non-negative least squares, and the Newton iteration is run
# once more from that point to the full accuracy.
# Slack (RT units) below which a phase's constraint counts as binding: the dual solver meets its
# constraints to ~1e-10; phases this close to forming but absent change no amount above 1e-7.
_BIND_TOL = 1e-7
# A state whose element balance the non-negative least squares leaves above this fraction of the
# totals has no consistent phase set at the dual solution (the dual did not converge).
_NNLS_TOL = 1e-9
# Started at the dual solution, the Newton iteration is already beside the answer; there a pivot
# that is small only because a direction is carried by trace species (amounts down to 1e-300) is
# real, and only an exact zero or a non-finite step marks the system singular.
_RESCUE_PIVOT_TOL = 1e-300
# The element balance a dual point must meet to stand as the answer (the balance promised for
# every state, tests/equilibrium/test_equilibrium.py::test_element_conservation).
_DUAL_BALANCE_TOL = 1e-10
# Polishing a dual point: a few Newton steps reach the rounding of the totals (1e-14 relative,
# ~50 float epsilons); 30 are far more than needed and only stop a stalled case.
_POLISH_ITER = 30
_POLISH_TOL = 1e-14


@dataclass
class DualPoint:
    """The dual solution of one state: element potentials, phases present and amounts."""

    pi: np.ndarray  # reduced element potentials / RT (r,)
    gas: bool  # a gas phase is present
    ln_x: np.ndarray  # ln of the gas mole fractions the potentials imply (ng,)
    N: float  # gas amount (0 when absent)
    active: np.ndarray  # condensed phases present (nc,)
    m: np.ndarray  # condensed amounts (nc,)
    gas_pressure_ratio: float  # Σ p_j / P the potentials imply (≤ 1; 1 when a gas is present)
    ok: bool  # the dual and the element balance were both met
    balance: float  # element-balance residual of the amounts, relative to |b|


def solve_dual(
    A_g: np.ndarray,
    A_c: np.ndarray,
    g_g: np.ndarray,
    g_c: np.ndarray,
    b: np.ndarray,
    ln_p: float,
    ones: np.ndarray,
) -> DualPoint:
    """Solve the dual of one state (arrays as in :func:`solve_batch`, one row; ``ones``: the
    reduced image of the all-ones element vector, along which every constraint loosens)."""
    from scipy.optimize import minimize, nnls

    r = b.size
    c_g = g_g + ln_p
    ng, nc = c_g.size, g_c.size

    def lse(p: np.ndarray) -> tuple[float, np.ndarray]:
        if ng == 0:
            return -np.inf, np.zeros(r)
        z = A_g.T @ p - c_g
        top = float(np.max(z))
        w = np.exp(z - top)
        s = float(np.sum(w))
        return top + math.log(s), A_g @ (w / s)

    cons = (
        [{"type": "ineq", "fun": lambda p: -lse(p)[0], "jac": lambda p: -lse(p)[1]}] if ng else []
    )
    if nc:
        cons.append({"type": "ineq", "fun": lambda p: g_c - A_c.T @ p, "jac": lambda p: -A_c.T})
    # a start deep inside: every species' a·π far below its g (all element counts are ≥ 0)
    depth = float(np.max(np.abs(np.concatenate([c_g, g_c])))) + 50.0
    p0 = (
        -depth
        * ones
        / max(float(np.min(np.abs(np.concatenate([A_g, A_c], axis=1).T @ ones))), 1e-3)
    )
    res = minimize(
        lambda p: (-float(b @ p), -b),
        p0,
        jac=True,
        constraints=cons,
        method="SLSQP",
        options={"ftol": 1e-15, "maxiter": 1000},
    )
    p = res.x
    L, _ = lse(p)
    slack = g_c - A_c.T @ p if nc else np.zeros(0)
    active = slack <= _BIND_TOL
    gas = ng > 0 and L >= -_BIND_TOL
    ln_x = (A_g.T @ p - c_g - L) if ng else np.zeros(0)
    cols = [A_c[:, active]] + ([(A_g @ np.exp(ln_x))[:, None]] if gas else [])
    M = np.concatenate(cols, axis=1) if cols else np.zeros((r, 0))
    if M.shape[1]:
        amounts, resid = nnls(M, b)
    else:
        amounts, resid = np.zeros(0), float(np.linalg.norm(b))
    m = np.zeros(nc)
    m[active] = amounts[: int(active.sum())]
    N = float(amounts[-1]) if gas else 0.0
    # the dual solution is checked, not trusted: element balance met by the amounts, every phase
    # constraint met, and no duality gap (G of the amounts equals b·π: complementary slackness)
    g_total = float(g_c @ m) + (N * float(np.exp(ln_x) @ (c_g + ln_x)) if gas else 0.0)
    gap = abs(g_total - float(b @ p))
    ok = (
        resid <= _NNLS_TOL * float(np.linalg.norm(b))
        and L <= _BIND_TOL
        and bool(np.all(slack >= -_BIND_TOL))
        and gap <= _BIND_TOL * (1.0 + abs(float(b @ p)))
    )
    rel = float(resid) / float(np.linalg.norm(b))
    point = DualPoint(p, gas and N > 0, ln_x, N, m > 0, m, math.exp(min(L, 0.0)), ok, rel)
    if point.gas:
        _polish(point, A_g, A_c, c_g, g_c, b)
        # polished, the point is checked again: balance met, no condensed phase below the plane
        feasible = nc == 0 or bool(np.all(g_c - A_c.T @ point.pi >= -_BIND_TOL))
        point.ok = point.ok or (point.balance <= _NNLS_TOL and feasible)
    return point


def _polish(d: DualPoint, A_g: np.ndarray, A_c: np.ndarray, c_g: np.ndarray, g_c: np.ndarray,
            b: np.ndarray) -> None:  # fmt: skip
    """Newton steps, in place, on the dual point's phase set in the element potentials: gas
    amounts n_j = N exp(a_j·π − c_j), condensed amounts free, equations A n + A_c m = b,
    Σ x_j = 1 and a_c·π = g_c for the phases present. Solved by least squares (an SVD drops the
    directions carried only by trace species, whose amounts then follow from the rest)."""
    act = np.nonzero(d.active)[0]
    r = b.size
    pi, lnN, m = d.pi.copy(), math.log(d.N), d.m[act].copy()
    for _ in range(_POLISH_ITER):
        z = A_g.T @ pi - c_g
        n = np.exp(lnN + z)
        res = np.concatenate([b - A_g @ n - A_c[:, act] @ m, [1.0 - float(np.exp(z).sum())],
                              g_c[act] - A_c[:, act].T @ pi])  # fmt: skip
        if float(np.linalg.norm(res[:r])) <= _POLISH_TOL * float(np.linalg.norm(b)) and (
            float(np.max(np.abs(res[r:]), initial=0.0)) <= _POLISH_TOL
        ):
            break
        J = np.zeros((r + 1 + act.size, r + 1 + act.size))
        J[:r, :r] = (A_g * n) @ A_g.T
        J[:r, r] = A_g @ n
        J[:r, r + 1 :] = A_c[:, act]
        J[r, :r] = A_g @ np.exp(z)
        J[r + 1 :, :r] = A_c[:, act].T
        step = np.linalg.lstsq(J, res, rcond=1e-14)[0]
        pi += step[:r]
        lnN += float(step[r])
        m += step[r + 1 :]
    z = A_g.T @ pi - c_g
    n = np.exp(lnN + z)
    resid = float(np.linalg.norm(b - A_g @ n - A_c[:, act] @ m)) / float(np.linalg.norm(b))
    if resid < d.balance and np.all(m >= 0):
        d.pi, d.N, d.balance = pi, math.exp(lnN), resid
        d.ln_x = z - math.log(float(np.exp(z).sum()))
        d.m = np.zeros_like(d.m)
        d.m[act] = m


def rescue(
    out: GibbsBatch,
    A_g: np.ndarray,
    A_c: np.ndarray,
    g_g: np.ndarray,
    g_c: np.ndarray,
    b: np.ndarray,
    ln_p: np.ndarray,
    avail_g: np.ndarray,
    avail_c: np.ndarray,
    ones: np.ndarray,
) -> np.ndarray:
    """Finish, in place, the states of ``out`` that did not converge, through the dual problem.

    Where the dual finds a gas phase, the Newton iteration is restarted from its solution; where
    it finds none (the feed ends entirely in condensed phases), the condensed amounts and the
    potentials are stored, the gas amounts set to zero, and the state is marked in the mask
    returned (these states stay ``converged = False``: the gas-phase model does not apply).
    """
    B = b.shape[0]
    ng, nc = A_g.shape[1], A_c.shape[1]
    no_gas = np.zeros(B, dtype=bool)
    starts: list[tuple[int, DualPoint]] = []
    for i in np.nonzero(~out.converged)[0]:
        ag, ac = avail_g[i], avail_c[i]
        d = solve_dual(A_g[:, ag], A_c[:, ac], g_g[i, ag], g_c[i, ac], b[i], float(ln_p[i]), ones)
        if d.gas:
            # a start only: the Newton iteration from it is what must converge
            starts.append((int(i), d))
        elif d.ok:
            out.ln_n[i] = -np.inf
            out.ln_N[i] = -np.inf
            out.m[i] = 0.0
            out.m[i, ac] = d.m
            out.active[i] = False
            out.active[i, ac] = d.active
            out.pi[i] = d.pi
            no_gas[i] = True
    if starts:
        idx = np.array([i for i, _ in starts])
        k = idx.size
        ln_n = np.full((k, ng), -np.inf)
        m = np.zeros((k, nc))
        active = np.zeros((k, nc), dtype=bool)
        for row, (j, d) in enumerate(starts):
            ln_n[row, avail_g[j]] = math.log(d.N) + d.ln_x
            m[row, avail_c[j]] = d.m
            active[row, avail_c[j]] = d.active
        start = GibbsBatch(
            ln_n,
            np.log(np.array([d.N for _, d in starts])),
            m,
            active,
            np.array([d.pi for _, d in starts]),
            np.zeros(k, dtype=bool),
            np.zeros(k, dtype=np.int64),
        )
        sol = solve_batch(
            A_g, A_c, g_g[idx], g_c[idx], b[idx], ln_p[idx], avail_g[idx], avail_c[idx],
            start=start, pivot_tol=_RESCUE_PIVOT_TOL,
        )  # fmt: skip
        ok = sol.converged
        for name in ("ln_n", "ln_N", "m", "active", "pi", "converged"):
            getattr(out, name)[idx[ok]] = getattr(sol, name)[ok]
        # Where Newton still stops (a trace amount fixed by the rounding of totals that lie a
        # hair off a plane of the element cone makes its system singular), the dual point is
        # the answer when it meets the element balance to the accuracy promised for any state
        for row in np.nonzero(~ok)[0].tolist():
            state, d = starts[row]
            if d.ok and d.balance <= _DUAL_BALANCE_TOL:
                out.ln_n[state] = ln_n[row]
                out.ln_N[state] = math.log(d.N)
                out.m[state] = m[row]
                out.active[state] = active[row]
                out.pi[state] = d.pi
                out.converged[state] = True
    return no_gas
