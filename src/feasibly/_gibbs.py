"""Gibbs-energy minimisation kernel: an ideal-gas mixture plus pure condensed phases, vectorised.

Plain float arrays only (no units, no library objects); :mod:`feasibly.equilibrium` prepares them.
The formulation is the element-potential (Lagrange-multiplier) Newton iteration of Gordon &
McBride, NASA RP-1311 (1994), §2.3 (TP problems, eqs. 2.24–2.26): the unknowns are the gas
amounts as logarithms ``ln n_j`` (so trace species are never negative and keep their relative
accuracy), the total gas amount as ``ln N``, the amounts ``m_c`` of the condensed phases present,
and the element potentials π (in units of RT). Each iteration solves one small linear system per
state; all states advance together, and a state leaves the batch once it has converged with a
valid set of condensed phases. Condensed phases are added when they would lower G
(g_c − a_c·π < 0) and removed when their amount turns negative (RP-1311 §3.5).

The element matrix is first reduced to an orthonormal basis of its row space, so species sets
whose elements always occur in fixed ratios (CaCO3/CaO/CO2 has rank 2 in Ca, C, O) give a
non-singular system.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache

import numpy as np

__all__ = ["GibbsBatch", "reduce_elements", "solve_batch"]

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
# A condensed phase is added when it would lower G/RT by more than this per mole: 1e-9 is far
# above the rounding of g_c − a_c·π (~1e-13 for |g| ~ 100) and far below any physical margin.
_ADD_TOL = 1e-9
# Iteration limit per state, phase changes included: converging states need 10–40; the limit
# only stops a state that is cycling or diverging, which is then reported as not converged.
_MAX_ITER = 400
# A pivot smaller than this fraction of its column's largest entry makes a system singular. Only
# exact (or underflowed) zeros count: a trace species weights its element direction by its
# amount (1e-16 and less), and the near-singular Newton step there is correct and damped.
_PIVOT_TOL = 1e-13


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


def _solve_small(aug: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Solve K × K systems stored batch-last as an augmented array (K, K + 1, B), in place.

    Gaussian elimination with partial pivoting, vectorised over the batch with contiguous
    operations only (numpy's stacked ``linalg.solve`` costs ~0.4 µs per 4 × 4 system). Returns
    the solutions (K × B) and a mask of singular systems (their solution is meaningless).
    """
    K, _, B = aug.shape
    singular = np.zeros(B, dtype=bool)
    for k in range(K):
        col = np.abs(aug[k:, k, :])
        p = np.argmax(col, axis=0)
        scale = col[p, np.arange(B)] if K - k > 1 else col[0]
        if K - k > 1 and np.any(p):
            row_k = aug[k].copy()
            for i in range(1, K - k):
                hit = p == i
                if np.any(hit):
                    # swap rows k and k + i where the pivot sits in row k + i
                    aug[k] = np.where(hit, aug[k + i], aug[k])
                    aug[k + i] = np.where(hit, row_k, aug[k + i])
        piv = aug[k, k, :]
        norm = np.max(np.abs(aug[:, k, :]), axis=0)
        bad = ~(np.abs(piv) > _PIVOT_TOL * norm) | (scale == 0)
        singular |= bad
        piv = np.where(bad, 1.0, piv)
        aug[k, k:, :] /= piv
        if k + 1 < K:
            f = aug[k + 1 :, k, :].copy()
            aug[k + 1 :, k:, :] -= f[:, None, :] * aug[k, k:, :][None, :, :]
    x = np.empty((K, B))
    for k in range(K - 1, -1, -1):
        x[k] = aug[k, K, :] - np.sum(aug[k, k + 1 : K, :] * x[k + 1 :], axis=0)
    singular |= ~np.all(np.isfinite(x), axis=0)
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
    for pattern in np.unique(both, axis=0):
        rows = np.nonzero(np.all(both == pattern, axis=1))[0]
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
) -> GibbsBatch:
    """Minimise G over B states at once.

    ``A_g`` (r × ng), ``A_c`` (r × nc): reduced element matrices; ``g_g`` (B × ng), ``g_c``
    (B × nc): G°/RT of each species at 1 bar; ``b`` (B × r): reduced element totals, scaled to
    order one by the caller; ``ln_p``: ln(P / 1 bar) (B,); ``avail_*``: which species may appear
    in each state (data range). ``start``: a previous solution to start from (warm start).
    """
    B, ng = g_g.shape
    nc = g_c.shape[1]
    r = A_g.shape[0]
    K = r + nc + 1
    if start is None:
        n_av = np.maximum(avail_g.sum(axis=1), 1)
        # RP-1311 §3.2: every gas species starts equal, total 0.1 per kg; here 1 per unit of b.
        ln_n = np.where(avail_g, -np.log(n_av)[:, None], -np.inf)
        ln_N = np.zeros(B)
        m = np.zeros((B, nc))
        active = (
            _initial_active(A_g, A_c, g_c, avail_g, avail_c) if active0 is None else active0.copy()
        )
        # Phases present at the start hold an amount of the order of the (scaled) totals.
        m = np.where(active, 0.1, 0.0)
        pi = np.zeros((B, r))
    else:
        ln_n = np.where(avail_g, start.ln_n, -np.inf)
        ln_N, m = start.ln_N.copy(), np.where(avail_c & start.active, start.m, 0.0)
        active, pi = start.active & avail_c, start.pi.copy()
    converged = np.zeros(B, dtype=bool)
    iterations = np.zeros(B, dtype=np.int64)
    AA = (A_g[:, None, :] * A_g[None, :, :]).reshape(r * r, ng).T  # (ng, r²) for Σ a a n
    todo = np.arange(B)
    # Work batch-last (species × states): every product below is then a matrix product with a
    # long inner loop over states, ~20× faster than the same product with states first.
    AAt = np.ascontiguousarray(AA.T)  # (r², ng)
    gT, gcT, avT, lnpT, bT = g_g.T, g_c.T, avail_g.T, ln_p, b.T
    for _ in range(max_iter):
        if todo.size == 0:
            break
        y = np.ascontiguousarray(ln_n[todo].T)
        lnN, mm, act = (
            ln_N[todo],
            np.ascontiguousarray(m[todo].T),
            np.ascontiguousarray(active[todo].T),
        )
        av = np.ascontiguousarray(avT[:, todo])
        n = np.exp(y)
        N = np.exp(lnN)
        mu = np.where(av, gT[:, todo] + y - lnN + lnpT[todo], 0.0)
        nmu = n * mu
        An = A_g @ n  # (r, s)
        s = len(todo)
        aug = np.zeros((K, K + 1, s))
        aug[:r, :r, :] = (AAt @ n).reshape(r, r, s)
        if nc:
            aug[:r, r : r + nc, :] = A_c[:, :, None] * act[None, :, :]
            aug[r : r + nc, :r, :] = np.where(act[:, None, :], A_c.T[:, :, None], 0.0)
            idx = np.arange(nc)
            aug[r + idx, r + idx, :] = np.where(act, 0.0, 1.0)
            aug[r : r + nc, K, :] = np.where(act, gcT[:, todo], 0.0)
        aug[:r, K - 1, :] = An
        aug[:r, K, :] = bT[:, todo] - An - A_c @ (mm * act) + A_g @ nmu
        aug[K - 1, :r, :] = An
        sum_n = n.sum(axis=0)
        aug[K - 1, K - 1, :] = sum_n - N
        aug[K - 1, K, :] = N - sum_n + nmu.sum(axis=0)
        x, singular = _solve_small(aug)
        p_new, dm, dlnN = x[:r], x[r : r + nc], x[K - 1]
        dln = np.where(av, -mu + A_g.T @ p_new + dlnN, 0.0)
        lnx = np.where(av, y - lnN, -np.inf)
        big = av & (lnx > _LN_TRACE) & (dln > 0)
        m1 = np.maximum(5.0 * np.abs(dlnN), np.max(np.where(big, dln, 0.0), axis=0))
        lam = np.where(m1 > _MAX_LN_STEP, _MAX_LN_STEP / np.where(m1 > 0, m1, 1.0), 1.0)
        small = av & (lnx <= _LN_TRACE) & (dln >= 0) & (dln - dlnN > 0)
        with np.errstate(divide="ignore", invalid="ignore"):
            l2 = np.where(small, (-lnx + _LN_TRACE_TARGET) / (dln - dlnN), np.inf)
        lam = np.minimum(lam, np.abs(np.min(l2, axis=0)))
        lam = np.where(singular | ~np.isfinite(lam), 0.0, np.minimum(lam, 1.0))
        total = N + np.sum(np.where(act, np.abs(mm), 0.0), axis=0)
        step = np.maximum.reduce(
            [
                np.max(n * np.abs(dln), axis=0) / total,
                np.max(np.abs(dm), axis=0, initial=0.0) / total,
                N * np.abs(dlnN) / total,
            ]
        )
        trace_ok = np.all(
            np.where(av & (lnx > _LN_TRACE_CHECKED), np.abs(dln), 0.0) <= _TRACE_STEP_TOL, axis=0
        )
        y = y + lam * dln
        lnN = lnN + lam * dlnN
        mm = np.where(act, mm + lam * dm, 0.0)
        ln_n[todo], ln_N[todo], m[todo] = y.T, lnN, mm.T
        pi[todo] = np.where(singular[:, None], pi[todo], p_new.T)
        iterations[todo] += 1
        act = act.T
        settled = (lam == 1.0) & (step <= _TOL) & trace_ok & ~singular
        still = np.ones(s, dtype=bool)
        # Phase checks, vectorised: only states whose phase set must change go through Python.
        change = np.zeros(s, dtype=bool)
        if nc:
            mm_new = m[todo]
            margin = np.where(avail_c[todo] & ~act, g_c[todo] - pi[todo] @ A_c, np.inf)
            change = np.any(act & (mm_new < 0), axis=1) | (np.min(margin, axis=1) < -_ADD_TOL)
        for k in np.nonzero(settled & change)[0]:
            i = todo[k]
            _choose_phases(A_g, A_c, g_c[i], pi[i], avail_g[i], avail_c[i], active[i], m[i])
        fin = settled & ~change
        converged[todo[fin]] = True
        still[fin] = False
        stuck = singular & (lam == 0.0)
        for k in np.nonzero(stuck)[0]:
            # A singular system: restart this state from scratch with the next phase choice.
            i = todo[k]
            if not _choose_phases(A_g, A_c, g_c[i], pi[i], avail_g[i], avail_c[i], active[i], m[i]):
                still[k] = False
        todo = todo[still]
    out = GibbsBatch(ln_n, ln_N, m, active, pi, converged, iterations)
    if active0 is None and nc and not np.all(converged):
        _retry(out, A_g, A_c, g_g, g_c, b, ln_p, avail_g, avail_c, max_iter)
    return out


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
