"""Equilibrium extent of one reaction: a bracketed, monotone 1-D root, vectorised over states.

Plain float arrays only; :mod:`feasibly.equilibrium` prepares them. With amounts
``n_j = n0_j + ν_j ξ`` the condition is

    f(ξ) = Σ_gas ν_j ln n_j − Δν_g ln N_g + Δν_g ln(P/P°) − ln K = 0,

with ``N_g`` the gas amount including inerts and condensed species at unit activity. ``f`` never
decreases in ξ: f′ = Σ ν_j²/n_j − Δν_g²/N_g ≥ 0 by the Cauchy–Schwarz inequality, since
N_g ≥ Σ n_j over the reacting gases. ξ is bounded by the species that run out first in either
direction. The root is sought in ``t = logit((ξ − ξ_lo)/(ξ_hi − ξ_lo))``, in which f is smooth
and asymptotically linear at both ends, so Newton steps (safeguarded by bisection of the bracket)
reach extents within 1e-300 of a bound without losing the relative accuracy of the vanishing
amounts. When f keeps one sign over the whole bracket, the reaction runs to a bound: a condensed
phase is used up, or no reaction at all.
"""

from __future__ import annotations

import numpy as np
from scipy import special

__all__ = ["solve_extent"]

# Ends of the bracket in t: σ(±700) leaves e^-700 ≈ 1e-304 of the bracket, still a normal float,
# so the bound values are evaluated inside the domain rather than at a log singularity.
_T_END = 700.0
# |f| below this (f is a sum of logarithms of order 1–100) is as close to zero as rounding allows.
_F_TOL = 1e-12
# Bracket width in t below which the root is located to machine precision in ξ.
_T_TOL = 1e-13
# Newton with a bisection fallback halves the bracket at worst each step: 2 × 700 → 1e-13 in
# ~54 halvings; 200 is a generous limit that only a bug could reach.
_MAX_ITER = 200


def _amounts(
    t: np.ndarray, lo: np.ndarray, hi: np.ndarray, w: np.ndarray, nu: np.ndarray
) -> np.ndarray:
    """n_j at t, computed from whichever end of the bracket leaves less cancellation."""
    s = special.expit(t)[:, None]
    sc = special.expit(-t)[:, None]
    from_lo = lo + nu * w[:, None] * s
    from_hi = hi - nu * w[:, None] * sc
    return np.maximum(np.where(lo <= hi, from_lo, from_hi), 0.0)


def _f_and_slope(
    t: np.ndarray,
    lo: np.ndarray,
    hi: np.ndarray,
    w: np.ndarray,
    nu: np.ndarray,
    gas: np.ndarray,
    inert: np.ndarray,
    rhs: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    n = _amounts(t, lo, hi, w, nu)
    ng = np.where(gas, n, 0.0)
    N = ng.sum(axis=1) + inert
    dnu = np.sum(np.where(gas, nu, 0.0), axis=1)
    with np.errstate(divide="ignore"):
        ln_n = np.where(gas, np.log(np.where(gas, n, 1.0)), 0.0)
        lnN = np.log(N)
    f = np.sum(np.where(gas, nu * ln_n, 0.0), axis=1) - np.where(dnu != 0, dnu * lnN, 0.0) - rhs
    with np.errstate(divide="ignore", invalid="ignore"):
        df_dxi = np.sum(np.where(gas, nu**2 / n, 0.0), axis=1) - np.where(dnu != 0, dnu**2 / N, 0.0)
    dxi_dt = w * special.expit(t) * special.expit(-t)
    return f, df_dxi * dxi_dt


def solve_extent(
    nu: np.ndarray,
    gas: np.ndarray,
    n0: np.ndarray,
    inert: np.ndarray,
    ln_k: np.ndarray,
    ln_p: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Extent (M,), amounts (M × J) and a converged mask for M states.

    ``nu`` (J,): stoichiometric numbers; ``gas`` (M × J): which terms are gases in each state;
    ``n0`` (M × J): feed amounts; ``inert`` (M,): inert gas amount; ``ln_k``: ln K°; ``ln_p``:
    ln(P/P°).
    """
    M, J = n0.shape
    nu_b = np.broadcast_to(nu, (M, J))
    with np.errstate(divide="ignore"):
        up = np.where(nu_b < 0, n0 / np.where(nu_b < 0, -nu_b, 1.0), np.inf)
        down = np.where(nu_b > 0, -n0 / np.where(nu_b > 0, nu_b, 1.0), -np.inf)
    xi_hi = np.min(up, axis=1)
    xi_lo = np.max(down, axis=1)
    # a reaction with nothing on one side of the feed cannot run that way: bound at ξ = 0
    xi_hi = np.where(np.isfinite(xi_hi), xi_hi, 0.0)
    xi_lo = np.where(np.isfinite(xi_lo), xi_lo, 0.0)
    lo = n0 + nu_b * xi_lo[:, None]
    hi = n0 + nu_b * xi_hi[:, None]
    # the species that set the bounds run out exactly there
    lo[np.arange(M), np.argmax(down, axis=1)] = np.where(np.any(nu_b > 0, axis=1), 0.0, lo[:, 0])
    hi[np.arange(M), np.argmin(up, axis=1)] = np.where(np.any(nu_b < 0, axis=1), 0.0, hi[:, 0])
    lo, hi = np.maximum(lo, 0.0), np.maximum(hi, 0.0)
    w = xi_hi - xi_lo
    dnu = np.sum(np.where(gas, nu_b, 0.0), axis=1)
    rhs = ln_k - dnu * ln_p

    def fs(t: np.ndarray, sel: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        return _f_and_slope(t, lo[sel], hi[sel], w[sel], nu, gas[sel], inert[sel], rhs[sel])

    everything = np.arange(M)
    f_lo, _ = fs(np.full(M, -_T_END), everything)
    f_hi, _ = fs(np.full(M, _T_END), everything)
    t = np.zeros(M)
    t = np.where(f_lo >= 0, -np.inf, t)
    t = np.where(f_hi <= 0, np.inf, t)
    done = (w <= 0) | ~np.isfinite(t) | np.isnan(f_lo) & np.isnan(f_hi)
    converged = done.copy()
    a = np.full(M, -_T_END)
    b = np.full(M, _T_END)
    idx = np.nonzero(~done)[0]
    for _ in range(_MAX_ITER):
        if idx.size == 0:
            break
        f, d = fs(t[idx], idx)
        neg = f < 0
        a[idx] = np.where(neg, t[idx], a[idx])
        b[idx] = np.where(neg, b[idx], t[idx])
        ok = np.abs(f) <= _F_TOL
        with np.errstate(divide="ignore", invalid="ignore"):
            step = t[idx] - f / d
        inside = np.isfinite(step) & (step > a[idx]) & (step < b[idx])
        nxt = np.where(inside, step, 0.5 * (a[idx] + b[idx]))
        narrow = (b[idx] - a[idx]) <= _T_TOL * np.maximum(1.0, np.abs(t[idx]))
        finished = ok | narrow
        t[idx] = np.where(finished, t[idx], nxt)
        converged[idx[finished]] = True
        idx = idx[~finished]
    xi = np.where(t == -np.inf, xi_lo, np.where(t == np.inf, xi_hi, xi_lo + w * special.expit(t)))
    xi = np.where(w <= 0, xi_lo, xi)
    t_eval = np.where(np.isfinite(t), t, np.sign(t) * 1e4)  # expit(±1e4) is exactly 1 or 0
    n = _amounts(np.where(w <= 0, -1e4, t_eval), lo, hi, w, nu)
    return xi, n, converged
