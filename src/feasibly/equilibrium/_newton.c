/* Compiled Newton iteration of feasibly.equilibrium._gibbs_solver for states with no condensed
 * phases: the element-potential iteration of NASA RP-1311 (1994) §2.3 on ln n, ln N and π, one
 * state at a time, each solved to the end with its few dozen numbers in registers and L1.
 *
 * Every rule is _iterate's for nc == 0, in the same order: the step limits (_MAX_LN_STEP, and
 * 5 |Δln N| for the total), the trace-species rules (_LN_TRACE, _LN_TRACE_TARGET), convergence
 * (_TOL on the step relative to N, trace species settled to _TRACE_STEP_TOL above
 * _LN_TRACE_CHECKED, or to _ROUNDING_STEP of N after _STALL_ITER iterations), elimination with
 * partial pivoting as _solve_small does it (a pivot at or below pivot_tol of its column's largest
 * entry, or a non-finite solution, marks the system singular and the state leaves unconverged),
 * unavailable species held at ln n = −inf. The constants come from Python (one source of truth).
 * Sums run in the order numpy's reductions use; the matrix products (BLAS there) and exp (numpy's
 * vectorised one there) may round differently in the last bit, so the two agree to rounding, not
 * to the bit; the tests say how closely.
 *
 * Layouts are C order, every array contiguous (the Python side checks): A (r × ng), g, av,
 * ln_n (B × ng), b, pi (B × r), ln_p, ln_N, converged, iterations (B).
 *
 * Speed: the iteration body is compiled once per element count r = 1 … 6 with r a constant, so
 * the sums over species accumulate in registers and the elimination is unrolled; larger r (up to
 * RMAX) share one body with r variable. Only the upper triangle of the symmetric Σ a_i a_k n is
 * summed, each entry in the same order as the full product.
 */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

/* The rules' constants, in the order feasibly_newton_gas receives them. */
enum { LN_TRACE, LN_TRACE_TARGET, MAX_LN_STEP, TOL, LN_TRACE_CHECKED, TRACE_STEP_TOL,
       ROUNDING_STEP, PIVOT_TOL, N_RULES };

/* NaN-propagating maximum and minimum, as np.maximum / np.minimum. */
static inline double nan_max(double a, double b) { return (isnan(a) || a >= b) ? a : b; }
static inline double nan_min(double a, double b) { return (isnan(a) || a <= b) ? a : b; }

#define RMAX 16 /* element counts above this are left to numpy (no species set comes near it) */

/* Solve the K × (K + 1) augmented system in place (row stride K + 1) as _solve_small does for one
 * state; x gets the solution. Returns 1 when the system is singular. */
static inline __attribute__((always_inline)) int solve_small(const int64_t K, double *aug,
                                                             double *x, double pivot_tol)
{
    const int64_t w = K + 1;
    int singular = 0;
    for (int64_t k = 0; k < K; k++) {
        /* the column's largest candidate, NaN winning as in np.maximum.reduce */
        double colmax = fabs(aug[k * w + k]);
        for (int64_t i = k + 1; i < K; i++)
            colmax = nan_max(colmax, fabs(aug[i * w + k]));
        if (K - k > 1 && !(fabs(aug[k * w + k]) >= colmax)) {
            /* np.argmax: the first NaN if there is one, else the first maximum */
            int64_t row = -1;
            for (int64_t i = k; i < K && row < 0; i++)
                if (isnan(aug[i * w + k]))
                    row = i;
            for (int64_t i = k; i < K && row < 0; i++)
                if (fabs(aug[i * w + k]) == colmax)
                    row = i;
            for (int64_t j = 0; j < w; j++) {
                double t = aug[k * w + j];
                aug[k * w + j] = aug[row * w + j];
                aug[row * w + j] = t;
            }
        }
        double piv = aug[k * w + k];
        double norm = colmax;
        if (k > 0) {
            double above = fabs(aug[k]);
            for (int64_t i = 1; i < k; i++)
                above = nan_max(above, fabs(aug[i * w + k]));
            norm = nan_max(colmax, above);
        }
        if (!(colmax > pivot_tol * norm)) {
            singular = 1;
            piv = 1.0;
        }
        for (int64_t j = k + 1; j < w; j++)
            aug[k * w + j] /= piv;
        for (int64_t i = k + 1; i < K; i++) {
            const double f = aug[i * w + k];
            for (int64_t j = k + 1; j < w; j++)
                aug[i * w + j] -= f * aug[k * w + j];
        }
    }
    x[K - 1] = aug[(K - 1) * w + K];
    for (int64_t k = K - 2; k >= 0; k--) {
        double acc = aug[k * w + k + 1] * x[k + 1];
        for (int64_t j = k + 2; j < K; j++)
            acc += aug[k * w + j] * x[j];
        x[k] = aug[k * w + K] - acc;
    }
    for (int64_t k = 0; k < K; k++)
        if (!isfinite(x[k]))
            singular = 1;
    return singular;
}

/* The iteration's constants and read-only arrays, shared by every state of a call. */
struct problem {
    int64_t ng, max_iter, stall_iter;
    double ln_trace, ln_target, max_step, tol, ln_checked, trace_tol, rounding, pivot_tol;
    const double *At;  /* Aᵀ (ng × r) */
    const double *PP;  /* a_ij a_kj for i ≤ k (ng × r(r+1)/2), the products numpy's Σ a a n uses */
    double *work;      /* n, mu, n·mu, Δln n, ln x (ng each) */
};

/* One state to the end, in place (y: ln n, *lnN_io, pp: π); returns the iterations done and sets
 * *ok when the state converged. R is a compile-time constant in the specialised copies. */
static inline __attribute__((always_inline)) int64_t
solve_state(const int64_t R, const struct problem *P, const double *gs, const uint8_t *as,
            const double *bs, const double lnp, double *y, double *lnN_io, double *pp, int *ok)
{
    const int64_t ng = P->ng, K = R + 1, w = K + 1, NP = R * (R + 1) / 2;
    double *n = P->work, *mu = n + ng, *nmu = mu + ng, *dln = nmu + ng, *lnx = dln + ng;
    double aug[(RMAX + 1) * (RMAX + 2)], x[RMAX + 1];
    double aa[RMAX * (RMAX + 1) / 2], an[RMAX], anmu[RMAX];
    double lnN = *lnN_io;
    for (int64_t j = 0; j < ng; j++)
        if (!as[j])
            y[j] = -INFINITY;
    *ok = 0;
    for (int64_t it = 0; it < P->max_iter; it++) {
        const double N = exp(lnN);
        for (int64_t j = 0; j < ng; j++) {
            n[j] = exp(y[j]);
            mu[j] = as[j] ? ((gs[j] + y[j]) - lnN) + lnp : 0.0;
            nmu[j] = n[j] * mu[j];
        }
        /* every sum over species in species order (numpy's reductions over the species axis) */
        double sum_n = n[0], sum_nmu = nmu[0];
        for (int64_t p = 0; p < NP; p++)
            aa[p] = P->PP[p] * n[0];
        for (int64_t i = 0; i < R; i++) {
            an[i] = P->At[i] * n[0];
            anmu[i] = P->At[i] * nmu[0];
        }
        for (int64_t j = 1; j < ng; j++) {
            const double nj = n[j], nmuj = nmu[j];
            const double *pj = P->PP + j * NP, *aj = P->At + j * R;
            sum_n += nj;
            sum_nmu += nmuj;
            for (int64_t p = 0; p < NP; p++)
                aa[p] += pj[p] * nj;
            for (int64_t i = 0; i < R; i++) {
                an[i] += aj[i] * nj;
                anmu[i] += aj[i] * nmuj;
            }
        }
        for (int64_t i = 0, p = 0; i < R; i++) {
            for (int64_t k = i; k < R; k++, p++) {
                aug[i * w + k] = aa[p];
                aug[k * w + i] = aa[p];
            }
            aug[i * w + K - 1] = an[i];
            aug[i * w + K] = (bs[i] - an[i]) + anmu[i];
            aug[(K - 1) * w + i] = an[i];
        }
        aug[(K - 1) * w + K - 1] = sum_n - N;
        aug[(K - 1) * w + K] = (N - sum_n) + sum_nmu;
        const int singular = solve_small(K, aug, x, P->pivot_tol);
        const double dlnN = x[K - 1];
        /* Δln n_j = a_j·π − mu_j + Δln N; the largest rising step of a species above the trace
         * level, and the trace species' own limit (RP-1311 eqs. 3.1, 3.2) */
        double rising = 0.0, l2 = INFINITY;
        for (int64_t j = 0; j < ng; j++) {
            const double *aj = P->At + j * R;
            double d = aj[0] * x[0];
            for (int64_t i = 1; i < R; i++)
                d += aj[i] * x[i];
            d -= mu[j];
            d += dlnN;
            d = as[j] ? d : 0.0;
            dln[j] = d;
            const double lx = as[j] ? y[j] - lnN : -INFINITY;
            lnx[j] = lx;
            if (lx > P->ln_trace && d > 0)
                rising = nan_max(rising, d);
            if (lx <= P->ln_trace && as[j] && d >= 0 && d - dlnN > 0)
                l2 = nan_min(l2, (-lx + P->ln_target) / (d - dlnN));
        }
        const double m1 = nan_max(5.0 * fabs(dlnN), rising);
        double lam = m1 > P->max_step ? P->max_step / (m1 > 0 ? m1 : 1.0) : 1.0;
        lam = nan_min(lam, fabs(l2));
        lam = (singular || !isfinite(lam)) ? 0.0 : (lam < 1.0 ? lam : 1.0);
        double step = n[0] * fabs(dln[0]);
        for (int64_t j = 1; j < ng; j++)
            step = nan_max(step, n[j] * fabs(dln[j]));
        step = nan_max(step, N * fabs(dlnN));
        step /= N;
        int cand = lam == 1.0 && step <= P->tol && !singular;
        if (cand) {
            /* "no checked species has a step above tolerance", so that NaN fails it */
            for (int64_t j = 0; j < ng && cand; j++) {
                const double ad = fabs(dln[j]);
                int unsettled = lnx[j] > P->ln_checked && !(ad <= P->trace_tol);
                if (it >= P->stall_iter)
                    unsettled = unsettled && !(n[j] * ad <= P->rounding * N);
                if (unsettled)
                    cand = 0;
            }
        }
        for (int64_t j = 0; j < ng; j++)
            y[j] += lam * dln[j];
        lnN += lam * dlnN;
        if (!singular)
            for (int64_t i = 0; i < R; i++)
                pp[i] = x[i];
        /* converged; or a singular system with no condensed phase to change: given up */
        if (cand || singular) {
            *lnN_io = lnN;
            *ok = cand;
            return it + 1;
        }
    }
    *lnN_io = lnN;
    return P->max_iter;
}

/* States lo … hi − 1 with r = R (a constant in each copy below). */
#define STATES(NAME, R_EXPR)                                                                     \
    static void NAME(int64_t r, const struct problem *P, int64_t lo, int64_t hi, const double *g, \
                     const uint8_t *av, const double *b, const double *ln_p, double *ln_n,        \
                     double *ln_N, double *pi, uint8_t *converged, int64_t *iterations)           \
    {                                                                                            \
        (void)r;                                                                                 \
        const int64_t ng = P->ng;                                                                \
        for (int64_t s = lo; s < hi; s++) {                                                      \
            int ok;                                                                              \
            iterations[s] = solve_state(R_EXPR, P, g + s * ng, av + s * ng, b + s * (R_EXPR),    \
                                        ln_p[s], ln_n + s * ng, ln_N + s, pi + s * (R_EXPR), &ok); \
            converged[s] = (uint8_t)ok;                                                          \
        }                                                                                        \
    }
STATES(states_r1, 1)
STATES(states_r2, 2)
STATES(states_r3, 3)
STATES(states_r4, 4)
STATES(states_r5, 5)
STATES(states_r6, 6)
STATES(states_any, r)

/* Iterate states lo … hi − 1 to the end, in place: ln_n, ln_N and pi hold the start values and
 * get the final ones; converged (0/1) and iterations are written. Returns 0; −1 when the work
 * space could not be allocated, −2 when r is outside 1 … RMAX (nothing is then written). */
int feasibly_newton_gas(int64_t r, int64_t ng, int64_t lo, int64_t hi, int64_t max_iter,
                        int64_t stall_iter, const double *rules, const double *A,
                        const double *g, const uint8_t *av, const double *b,
                        const double *ln_p, double *ln_n, double *ln_N, double *pi,
                        uint8_t *converged, int64_t *iterations)
{
    if (r < 1 || r > RMAX || ng < 1)
        return -2;
    const int64_t np = r * (r + 1) / 2;
    double *mem = malloc(sizeof(double) * (size_t)(5 * ng + ng * r + ng * np));
    if (mem == NULL)
        return -1;
    double *At = mem + 5 * ng, *PP = At + ng * r;
    for (int64_t j = 0; j < ng; j++) {
        for (int64_t i = 0, p = 0; i < r; i++) {
            At[j * r + i] = A[i * ng + j];
            for (int64_t k = i; k < r; k++, p++)
                PP[j * np + p] = A[i * ng + j] * A[k * ng + j];
        }
    }
    const struct problem P = {
        ng, max_iter, stall_iter,
        rules[LN_TRACE], rules[LN_TRACE_TARGET], rules[MAX_LN_STEP], rules[TOL],
        rules[LN_TRACE_CHECKED], rules[TRACE_STEP_TOL], rules[ROUNDING_STEP], rules[PIVOT_TOL],
        At, PP, mem,
    };
    void (*run)(int64_t, const struct problem *, int64_t, int64_t, const double *,
                const uint8_t *, const double *, const double *, double *, double *, double *,
                uint8_t *, int64_t *) = states_any;
    switch (r) {
    case 1: run = states_r1; break;
    case 2: run = states_r2; break;
    case 3: run = states_r3; break;
    case 4: run = states_r4; break;
    case 5: run = states_r5; break;
    case 6: run = states_r6; break;
    default: break;
    }
    run(r, &P, lo, hi, g, av, b, ln_p, ln_n, ln_N, pi, converged, iterations);
    free(mem);
    return 0;
}
