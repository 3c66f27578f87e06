/* Compiled Newton iteration of feasibly.equilibrium._gibbs_solver for states with no condensed
 * phases: the element-potential iteration of NASA RP-1311 (1994) §2.3 on ln n, ln N and π, each
 * state solved to the end with its few dozen numbers in registers and L1. Four states run side
 * by side, one per lane of a vector (AVX2 where the CPU has it); a lane whose state has left takes
 * the next state at once. Lanes never mix: every operation is the same IEEE operation per lane,
 * so a state's result does not depend on its neighbours, the lane it ran in or the thread count.
 *
 * Every rule is _iterate's for nc == 0, in the same order: the step limits (_MAX_LN_STEP, and
 * 5 |Δln N| for the total), the trace-species rules (_LN_TRACE, _LN_TRACE_TARGET), convergence
 * (_TOL on the step relative to N, trace species settled to _TRACE_STEP_TOL above
 * _LN_TRACE_CHECKED, or to _ROUNDING_STEP of N after _STALL_ITER iterations), elimination with
 * partial pivoting as _solve_small does it (a pivot at or below pivot_tol of its column's largest
 * entry, or a non-finite solution, marks the system singular and the state leaves unconverged),
 * unavailable species held at ln n = −inf. The constants come from Python (one source of truth).
 * Sums run in the order numpy's reductions use; the matrix products (BLAS there) and exp (numpy's
 * vectorised one there, vexp below here) may round differently in the last bit, so the two agree
 * to rounding, not to the bit; the tests say how closely.
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
#include <string.h>

/* The rules' constants, in the order feasibly_newton_gas receives them. */
enum { LN_TRACE, LN_TRACE_TARGET, MAX_LN_STEP, TOL, LN_TRACE_CHECKED, TRACE_STEP_TOL,
       ROUNDING_STEP, PIVOT_TOL, N_RULES };

#define RMAX 16 /* element counts above this are left to numpy (no species set comes near it) */
#define L 4     /* states side by side: one AVX2 vector of doubles */

#if defined(__GNUC__) && defined(__x86_64__) && !defined(__clang__)
/* One binary for every x86-64 machine: an AVX2 clone is picked at load time where the CPU has it
 * (no FMA in either: -ffp-contract=off, so both clones give the same bits). */
#define VECTOR_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define VECTOR_CLONES
#endif
#define INLINE static inline __attribute__((always_inline))

/* Vector arguments and results only ever pass between static always-inline functions, never
 * across a call boundary, so the note on the AVX calling convention does not apply. */
#pragma GCC diagnostic ignored "-Wpsabi"
typedef double v4d __attribute__((vector_size(32)));
typedef int64_t v4i __attribute__((vector_size(32)));

INLINE v4d splat(double x) { return (v4d){x, x, x, x}; }
INLINE v4i splat_i(int64_t x) { return (v4i){x, x, x, x}; }
/* m ? a : b per lane (m: all ones or all zeros per lane, as comparisons give) */
INLINE v4d sel(v4i m, v4d a, v4d b) { return (v4d)((m & (v4i)a) | (~m & (v4i)b)); }
INLINE v4i sel_i(v4i m, v4i a, v4i b) { return (m & a) | (~m & b); }
INLINE v4d vabs(v4d x) { return (v4d)((v4i)x & splat_i(INT64_MAX)); }
INLINE v4i isnan_v(v4d x) { return x != x; }
INLINE v4i isfinite_v(v4d x) { return (x - x) == (x - x); } /* inf − inf and NaN are NaN */
INLINE int any(v4i m) { return (m[0] | m[1] | m[2] | m[3]) != 0; }
/* NaN-propagating maximum and minimum, as np.maximum / np.minimum */
INLINE v4d nan_max(v4d a, v4d b) { return sel(isnan_v(a) | (a >= b), a, b); }
INLINE v4d nan_min(v4d a, v4d b) { return sel(isnan_v(a) | (a <= b), a, b); }

/* exp per lane. On [−708, 709] (results normal and finite): x = k ln 2 + t with |t| ≤ ln 2 / 2,
 * e^t by its Taylor series to t^13 (the remainder t^14/14! < 5e-18, below half an ulp), times
 * 2^k built in the exponent bits; within ~2 ulp of the correctly rounded value. Other lanes
 * (−inf for an absent species, subnormal results, overflow, NaN) go to the C library's exp. */
INLINE v4d vexp_normal(v4d x)
{
    /* ln 2 split so that k · LN2_HI is exact for |k| < 2^11 (the high part has 32 bits) */
    const double LN2_HI = 6.93147180369123816490e-01, LN2_LO = 1.90821492927058770002e-10;
    const double ROUND = 6755399441055744.0; /* 1.5 · 2^52: adding it rounds to an integer */
    v4d kd = x * splat(1.4426950408889634) + splat(ROUND);
    v4i k = (v4i)kd - (v4i)splat(ROUND);
    kd -= splat(ROUND);
    v4d t = (x - kd * splat(LN2_HI)) - kd * splat(LN2_LO);
    /* 1/13!, …, 1/2!, 1, 1 */
    static const double c[14] = {
        1.6059043836821613e-10, 2.08767569878681e-09, 2.505210838544172e-08,
        2.755731922398589e-07, 2.7557319223985893e-06, 2.48015873015873e-05,
        0.0001984126984126984, 0.001388888888888889, 0.008333333333333333,
        0.041666666666666664, 0.16666666666666666, 0.5, 1.0, 1.0};
    /* Estrin's scheme: pairs, then powers t², t⁴, t⁸ (a dependency chain of 5 products, not
     * 13, so the exps of the species of a state overlap) */
    const v4d t2 = t * t, t4 = t2 * t2, t8 = t4 * t4;
    const v4d q0 = splat(c[13]) + splat(c[12]) * t, q1 = splat(c[11]) + splat(c[10]) * t;
    const v4d q2 = splat(c[9]) + splat(c[8]) * t, q3 = splat(c[7]) + splat(c[6]) * t;
    const v4d q4 = splat(c[5]) + splat(c[4]) * t, q5 = splat(c[3]) + splat(c[2]) * t;
    const v4d q6 = splat(c[1]) + splat(c[0]) * t;
    const v4d p = ((q0 + q1 * t2) + (q2 + q3 * t2) * t4) + ((q4 + q5 * t2) + q6 * t4) * t8;
    return p * (v4d)((k + splat_i(1023)) << 52);
}

/* The lanes vexp_normal does not cover, and the C library's exp for them. */
INLINE v4i exp_outside(v4d x) { return ~((x >= splat(-708.0)) & (x <= splat(709.0))); }
INLINE v4d exp_fix(v4d x, v4d y)
{
    const v4i out = exp_outside(x);
    for (int l = 0; l < L; l++)
        if (out[l])
            y[l] = exp(x[l]);
    return y;
}
INLINE v4d vexp(v4d x)
{
    const v4d y = vexp_normal(x);
    return any(exp_outside(x)) ? exp_fix(x, y) : y;
}

/* Solve K × (K + 1) augmented systems (row stride K + 1), one per lane, in place as _solve_small
 * does; x gets the solutions. Returns the lanes whose system is singular. */
INLINE v4i solve_small(const int64_t K, v4d *aug, v4d *x, double pivot_tol)
{
    const int64_t w = K + 1;
    v4i singular = splat_i(0);
    for (int64_t k = 0; k < K; k++) {
        /* the column's largest candidate, NaN winning as in np.maximum.reduce */
        v4d colmax = vabs(aug[k * w + k]);
        for (int64_t i = k + 1; i < K; i++)
            colmax = nan_max(colmax, vabs(aug[i * w + k]));
        v4i need = ~(vabs(aug[k * w + k]) >= colmax);
        if (K - k > 1 && any(need)) {
            /* np.argmax: the first NaN if there is one, else the first maximum */
            v4i row = splat_i(-1);
            for (int64_t i = k; i < K; i++)
                row = sel_i((row < 0) & isnan_v(aug[i * w + k]), splat_i(i), row);
            for (int64_t i = k; i < K; i++)
                row = sel_i((row < 0) & (vabs(aug[i * w + k]) == colmax), splat_i(i), row);
            for (int64_t i = k + 1; i < K; i++) {
                const v4i sw = need & (row == splat_i(i));
                if (!any(sw))
                    continue;
                for (int64_t j = 0; j < w; j++) {
                    const v4d t = aug[k * w + j];
                    aug[k * w + j] = sel(sw, aug[i * w + j], t);
                    aug[i * w + j] = sel(sw, t, aug[i * w + j]);
                }
            }
        }
        v4d piv = aug[k * w + k];
        v4d norm = colmax;
        if (k > 0) {
            v4d above = vabs(aug[k]);
            for (int64_t i = 1; i < k; i++)
                above = nan_max(above, vabs(aug[i * w + k]));
            norm = nan_max(colmax, above);
        }
        const v4i bad = ~(colmax > splat(pivot_tol) * norm);
        singular |= bad;
        piv = sel(bad, splat(1.0), piv);
        for (int64_t j = k + 1; j < w; j++)
            aug[k * w + j] /= piv;
        for (int64_t i = k + 1; i < K; i++) {
            const v4d f = aug[i * w + k];
            for (int64_t j = k + 1; j < w; j++)
                aug[i * w + j] -= f * aug[k * w + j];
        }
    }
    x[K - 1] = aug[(K - 1) * w + K];
    for (int64_t k = K - 2; k >= 0; k--) {
        v4d acc = aug[k * w + k + 1] * x[k + 1];
        for (int64_t j = k + 2; j < K; j++)
            acc += aug[k * w + j] * x[j];
        x[k] = aug[k * w + K] - acc;
    }
    for (int64_t k = 0; k < K; k++)
        singular |= ~isfinite_v(x[k]);
    return singular;
}

/* The iteration's constants and arrays, shared by every state of a call. */
struct problem {
    int64_t ng, max_iter, stall_iter;
    double ln_trace, ln_target, max_step, tol, ln_checked, trace_tol, rounding, pivot_tol;
    const double *At; /* Aᵀ (ng × r) */
    const double *PP; /* a_ij a_kj for i ≤ k (ng × r(r+1)/2), the products numpy's Σ a a n uses */
    const double *g, *b, *ln_p;
    const uint8_t *av;
    double *ln_n, *ln_N, *pi;
    uint8_t *converged;
    int64_t *iterations;
    /* per lane: y = ln n, g, availability (ng each); n, mu, n·mu, Δln n, ln x (ng each) */
    v4d *work;
};

/* Load state s into lane l (ln n of an unavailable species: −inf, as _iterate's mask). */
INLINE void load(const int64_t R, const struct problem *P, int64_t s, int l, v4d *Y, v4d *G,
                 v4i *AV, v4d *B, v4d *lnp, v4d *lnN, v4d *PI, v4i *it)
{
    const int64_t ng = P->ng;
    for (int64_t j = 0; j < ng; j++) {
        const int a = P->av[s * ng + j] != 0;
        Y[j][l] = a ? P->ln_n[s * ng + j] : -INFINITY;
        G[j][l] = P->g[s * ng + j];
        AV[j][l] = a ? -1 : 0;
    }
    for (int64_t i = 0; i < R; i++) {
        B[i][l] = P->b[s * R + i];
        PI[i][l] = P->pi[s * R + i];
    }
    (*lnp)[l] = P->ln_p[s];
    (*lnN)[l] = P->ln_N[s];
    (*it)[l] = 0;
}

/* States lo … hi − 1 to the end, four at a time; R is a compile-time constant in the copies. */
INLINE void solve_states(const int64_t R, const struct problem *P, int64_t lo, int64_t hi)
{
    const int64_t ng = P->ng, K = R + 1, w = K + 1, NP = R * (R + 1) / 2;
    v4d *Y = P->work, *G = Y + ng, *n = G + 2 * ng, *mu = n + ng, *nmu = mu + ng;
    v4d *dln = nmu + ng, *lnx = dln + ng;
    v4i *AV = (v4i *)(G + ng);
    v4d aug[(RMAX + 1) * (RMAX + 2)], x[RMAX + 1], B[RMAX], PI[RMAX];
    v4d aa[RMAX * (RMAX + 1) / 2], an[RMAX], anmu[RMAX];
    v4d lnp = splat(0.0), lnN = splat(0.0);
    v4i it = splat_i(0);
    int64_t state[L];
    int64_t next = lo;
    int live = 0;
    /* empty lanes hold harmless values (y = 0, availability 0) until a state arrives */
    memset(P->work, 0, sizeof(v4d) * (size_t)(8 * ng));
    memset(B, 0, sizeof B);
    memset(PI, 0, sizeof PI);
    for (int l = 0; l < L; l++) {
        state[l] = next < hi ? next++ : -1;
        if (state[l] >= 0) {
            load(R, P, state[l], l, Y, G, AV, B, &lnp, &lnN, PI, &it);
            live++;
        }
    }
    const v4d ln_trace = splat(P->ln_trace), ln_target = splat(P->ln_target);
    const v4d max_step = splat(P->max_step), zero = splat(0.0), one = splat(1.0);
    while (live) {
        const v4d N = vexp(lnN);
        /* the lanes outside exp's fast range (absent species at −inf, say) gathered first, so
         * that the usual iteration tests one mask, not one per species */
        v4i outside = splat_i(0);
        for (int64_t j = 0; j < ng; j++) {
            n[j] = vexp_normal(Y[j]);
            outside |= exp_outside(Y[j]);
        }
        if (any(outside))
            for (int64_t j = 0; j < ng; j++)
                n[j] = exp_fix(Y[j], n[j]);
        for (int64_t j = 0; j < ng; j++) {
            mu[j] = sel(AV[j], ((G[j] + Y[j]) - lnN) + lnp, zero);
            nmu[j] = n[j] * mu[j];
        }
        /* every sum over species in species order (numpy's reductions over the species axis) */
        v4d sum_n = n[0], sum_nmu = nmu[0];
        for (int64_t p = 0; p < NP; p++)
            aa[p] = splat(P->PP[p]) * n[0];
        for (int64_t i = 0; i < R; i++) {
            an[i] = splat(P->At[i]) * n[0];
            anmu[i] = splat(P->At[i]) * nmu[0];
        }
        for (int64_t j = 1; j < ng; j++) {
            const v4d nj = n[j], nmuj = nmu[j];
            const double *pj = P->PP + j * NP, *aj = P->At + j * R;
            sum_n += nj;
            sum_nmu += nmuj;
            for (int64_t p = 0; p < NP; p++)
                aa[p] += splat(pj[p]) * nj;
            for (int64_t i = 0; i < R; i++) {
                an[i] += splat(aj[i]) * nj;
                anmu[i] += splat(aj[i]) * nmuj;
            }
        }
        for (int64_t i = 0, p = 0; i < R; i++) {
            for (int64_t k = i; k < R; k++, p++) {
                aug[i * w + k] = aa[p];
                aug[k * w + i] = aa[p];
            }
            aug[i * w + K - 1] = an[i];
            aug[i * w + K] = (B[i] - an[i]) + anmu[i];
            aug[(K - 1) * w + i] = an[i];
        }
        aug[(K - 1) * w + K - 1] = sum_n - N;
        aug[(K - 1) * w + K] = (N - sum_n) + sum_nmu;
        const v4i singular = solve_small(K, aug, x, P->pivot_tol);
        const v4d dlnN = x[K - 1];
        /* Δln n_j = a_j·π − mu_j + Δln N; the largest rising step of a species above the trace
         * level, and the trace species' own limit (RP-1311 eqs. 3.1, 3.2) */
        v4d rising = zero, l2 = splat(INFINITY);
        v4i any_small = splat_i(0);
        for (int64_t j = 0; j < ng; j++) {
            const double *aj = P->At + j * R;
            v4d d = splat(aj[0]) * x[0];
            for (int64_t i = 1; i < R; i++)
                d += splat(aj[i]) * x[i];
            d -= mu[j];
            d += dlnN;
            d = sel(AV[j], d, zero);
            dln[j] = d;
            const v4d lx = sel(AV[j], Y[j] - lnN, splat(-INFINITY));
            lnx[j] = lx;
            rising = sel((lx > ln_trace) & (d > zero), nan_max(rising, d), rising);
            any_small |= (lx <= ln_trace) & AV[j] & (d >= zero) & ((d - dlnN) > zero);
        }
        if (any(any_small)) {
            for (int64_t j = 0; j < ng; j++) {
                const v4d d = dln[j], lx = lnx[j];
                const v4i small = (lx <= ln_trace) & AV[j] & (d >= zero) & ((d - dlnN) > zero);
                if (any(small))
                    l2 = sel(small, nan_min(l2, (-lx + ln_target) / (d - dlnN)), l2);
            }
        }
        const v4d m1 = nan_max(splat(5.0) * vabs(dlnN), rising);
        v4d lam = sel(m1 > max_step, max_step / sel(m1 > zero, m1, one), one);
        lam = nan_min(lam, vabs(l2));
        lam = sel(singular | ~isfinite_v(lam), zero, sel(lam < one, lam, one));
        v4d step = n[0] * vabs(dln[0]);
        for (int64_t j = 1; j < ng; j++)
            step = nan_max(step, n[j] * vabs(dln[j]));
        step = nan_max(step, N * vabs(dlnN));
        step /= N;
        v4i cand = (lam == one) & (step <= splat(P->tol)) & ~singular;
        if (any(cand)) {
            /* "no checked species has a step above tolerance", so that NaN fails it */
            const v4i stalled = it >= splat_i(P->stall_iter);
            const v4d rounding_N = splat(P->rounding) * N;
            for (int64_t j = 0; j < ng; j++) {
                const v4d ad = vabs(dln[j]);
                v4i unsettled = (lnx[j] > splat(P->ln_checked)) & ~(ad <= splat(P->trace_tol));
                unsettled &= ~(stalled & (n[j] * ad <= rounding_N));
                cand &= ~unsettled;
            }
        }
        for (int64_t j = 0; j < ng; j++)
            Y[j] += lam * dln[j];
        lnN += lam * dlnN;
        for (int64_t i = 0; i < R; i++)
            PI[i] = sel(singular, PI[i], x[i]);
        it += splat_i(1);
        /* converged; or a singular system with no condensed phase to change: given up; or the
         * iteration limit */
        const v4i leave = cand | singular | (it >= splat_i(P->max_iter));
        if (!any(leave))
            continue;
        for (int l = 0; l < L; l++) {
            const int64_t s = state[l];
            if (!leave[l] || s < 0)
                continue;
            for (int64_t j = 0; j < ng; j++)
                P->ln_n[s * ng + j] = Y[j][l];
            for (int64_t i = 0; i < R; i++)
                P->pi[s * R + i] = PI[i][l];
            P->ln_N[s] = lnN[l];
            P->converged[s] = cand[l] != 0;
            P->iterations[s] = it[l];
            state[l] = next < hi ? next++ : -1;
            if (state[l] >= 0)
                load(R, P, state[l], l, Y, G, AV, B, &lnp, &lnN, PI, &it);
            else
                live--;
        }
    }
}

/* States lo … hi − 1 with r = R (a constant in each copy below). */
#define STATES(NAME, R_EXPR)                                                                     \
    VECTOR_CLONES static void NAME(int64_t r, const struct problem *P, int64_t lo, int64_t hi)  \
    {                                                                                            \
        (void)r;                                                                                 \
        solve_states(R_EXPR, P, lo, hi);                                                         \
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
 * space could not be allocated, −2 when r is outside 1 … RMAX or ng < 1 (nothing is then
 * written). */
int feasibly_newton_gas(int64_t r, int64_t ng, int64_t lo, int64_t hi, int64_t max_iter,
                        int64_t stall_iter, const double *rules, const double *A,
                        const double *g, const uint8_t *av, const double *b,
                        const double *ln_p, double *ln_n, double *ln_N, double *pi,
                        uint8_t *converged, int64_t *iterations)
{
    if (r < 1 || r > RMAX || ng < 1)
        return -2;
    if (hi <= lo)
        return 0;
    const int64_t np = r * (r + 1) / 2;
    /* the lanes' vectors (32-byte aligned), then Aᵀ and the products */
    const size_t nvec = (size_t)(8 * ng), nsc = (size_t)(ng * r + ng * np);
    const size_t bytes = (sizeof(v4d) * nvec + sizeof(double) * nsc + 31) / 32 * 32;
    v4d *work = aligned_alloc(32, bytes);
    if (work == NULL)
        return -1;
    double *At = (double *)(work + nvec), *PP = At + ng * r;
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
        At, PP, g, b, ln_p, av, ln_n, ln_N, pi, converged, iterations, work,
    };
    switch (r) {
    case 1: states_r1(r, &P, lo, hi); break;
    case 2: states_r2(r, &P, lo, hi); break;
    case 3: states_r3(r, &P, lo, hi); break;
    case 4: states_r4(r, &P, lo, hi); break;
    case 5: states_r5(r, &P, lo, hi); break;
    case 6: states_r6(r, &P, lo, hi); break;
    default: states_any(r, &P, lo, hi); break;
    }
    free(work);
    return 0;
}
