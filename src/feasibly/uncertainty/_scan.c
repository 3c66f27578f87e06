/* Compiled kernels of feasibly._scan: one read of a range of Monte Carlo trials, a chunk at a time,
 * for every temperature row, and the gathering of the values kept inside the brackets.
 *
 * The arithmetic mirrors scan_numpy / product_numpy in _scan.py operation for operation (the inputs
 * summed left to right, then the nominal), and the
 * build passes -ffp-contract=off, so no multiply-add is fused: the two give the same bits, which
 * the tests check. Layouts are C order; every array is contiguous (the Python side checks).
 */
#include <stdint.h>
#include <string.h>
#include <math.h>

#define NB 3 /* brackets per row */
#define CHUNK 256 /* trials per chunk: up to twelve inputs of a chunk (24 KB) stay in L1 */

#if defined(__GNUC__) && defined(__x86_64__) && !defined(__clang__)
/* One binary for every x86-64 machine: an AVX2 clone is picked at load time where the CPU has it. */
#define VECTOR_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define VECTOR_CLONES
#endif

typedef double v4d __attribute__((vector_size(32)));
typedef int64_t v4i __attribute__((vector_size(32)));

/* Four doubles from any address (a may_alias, unaligned view, as the AVX headers define theirs). */
typedef double v4d_u __attribute__((vector_size(32), may_alias, aligned(8)));
#define load4(p) ((v4d) * (const v4d_u *)(p))

/* Append x to the buffers of the brackets whose bits are set in f; past the capacity count on
 * but store nothing, so an overflow is seen and never truncates silently. */
static inline __attribute__((always_inline)) void keep(double x, int f, int64_t *k,
                                                       double *const *out, int64_t cap)
{
    for (int j = 0; j < NB; j++) {
        if ((f >> j) & 1) {
            if (k[j] < cap)
                out[j][k[j]] = x;
            k[j]++;
        }
    }
}

/* Count and keep four outputs x (trials i .. i + 3 of one row): below the threshold, below each
 * bracket's lower edge, and appended where inside a bracket. */
#define COUNT4(x)                                                                                  \
    do {                                                                                           \
        const v4i b0 = (x) < L0, b1 = (x) < L1, b2 = (x) < L2;                                     \
        ct -= (x) < T;                                                                             \
        c0 -= b0;                                                                                  \
        c1 -= b1;                                                                                  \
        c2 -= b2;                                                                                  \
        /* Inside a bracket: not below its lower edge and not above its upper edge. */             \
        const v4i in0 = ~b0 & ((x) <= H0), in1 = ~b1 & ((x) <= H1), in2 = ~b2 & ((x) <= H2);      \
        const v4i any = in0 | in1 | in2;                                                           \
        if (any[0] | any[1] | any[2] | any[3]) { /* rare: about 1 % of the outputs */              \
            for (int l = 0; l < 4; l++)                                                            \
                keep((x)[l],                                                                       \
                     (int)((in0[l] & 1) | ((in1[l] & 1) << 1) | ((in2[l] & 1) << 2)), k, out,      \
                     cap);                                                                         \
        }                                                                                          \
    } while (0)

/* One chunk of m trials (zc points at its first trial in input row 0) for every row: the
 * outputs, eight trials at a time, are counted against the threshold and the bracket edges, and
 * the few inside a bracket appended at once (so they are never stored or read again). Each
 * output is summed as in product_numpy: the inputs left to right, then the nominal. */
static inline __attribute__((always_inline)) void
scan_chunk(int64_t k_all, int64_t ld, int64_t m, int64_t rows, int64_t cap, const double *zc,
           const int64_t *zoff, const double *coef, const double *nominal,
           const double *threshold, const double *lo, const double *hi,
           int64_t *below_threshold, int64_t *below, int64_t *filled, double *values, v4d *av)
{
    for (int64_t r = 0; r < rows; r++) {
        const double *a = coef + r * k_all;
        const double *zr = zc + zoff[r] * ld;
        for (int64_t j = 0; j < k_all; j++)
            av[j] = (v4d){a[j], a[j], a[j], a[j]};
        const double g = nominal[r], t = threshold[r];
        const double l0 = lo[r * NB], l1 = lo[r * NB + 1], l2 = lo[r * NB + 2];
        const double h0 = hi[r * NB], h1 = hi[r * NB + 1], h2 = hi[r * NB + 2];
        const v4d G = {g, g, g, g}, T = {t, t, t, t};
        const v4d L0 = {l0, l0, l0, l0}, L1 = {l1, l1, l1, l1}, L2 = {l2, l2, l2, l2};
        const v4d H0 = {h0, h0, h0, h0}, H1 = {h1, h1, h1, h1}, H2 = {h2, h2, h2, h2};
        v4i ct = {0, 0, 0, 0}, c0 = ct, c1 = ct, c2 = ct;
        int64_t k[NB] = {filled[r * NB], filled[r * NB + 1], filled[r * NB + 2]};
        double *const out[NB] = {values + (r * NB) * cap, values + (r * NB + 1) * cap,
                                 values + (r * NB + 2) * cap};
        /* Eight trials at a time: two independent sums keep the adder busy while each waits for
         * its previous term (the inputs of a chunk are in L1). */
        const int64_t m8 = m / 8 * 8;
        int64_t i = 0;
        for (; i < m8; i += 8) {
            v4d s = av[0] * load4(zr + i), u = av[0] * load4(zr + i + 4);
            for (int64_t j = 1; j < k_all; j++) {
                s = s + av[j] * load4(zr + j * ld + i);
                u = u + av[j] * load4(zr + j * ld + i + 4);
            }
            const v4d x = s + G, y = u + G;
            COUNT4(x);
            COUNT4(y);
        }
        int64_t nt = ct[0] + ct[1] + ct[2] + ct[3];
        int64_t n0 = c0[0] + c0[1] + c0[2] + c0[3];
        int64_t n1 = c1[0] + c1[1] + c1[2] + c1[3];
        int64_t n2 = c2[0] + c2[1] + c2[2] + c2[3];
        for (; i < m; i++) { /* the last few trials of the range, one at a time */
            double v = a[0] * zr[i];
            for (int64_t j = 1; j < k_all; j++)
                v = v + a[j] * zr[j * ld + i];
            const double x = v + g;
            nt += x < t;
            n0 += x < l0;
            n1 += x < l1;
            n2 += x < l2;
            keep(x, ((x >= l0) & (x <= h0)) | (((x >= l1) & (x <= h1)) << 1) |
                        (((x >= l2) & (x <= h2)) << 2),
                 k, out, cap);
        }
        below_threshold[r] += nt;
        below[r * NB] += n0;
        below[r * NB + 1] += n1;
        below[r * NB + 2] += n2;
        filled[r * NB] = k[0];
        filled[r * NB + 1] = k[1];
        filled[r * NB + 2] = k[2];
    }
}

VECTOR_CLONES
void feasibly_scan(int64_t k_all, int64_t ld, int64_t start, int64_t stop, int64_t rows,
                   int64_t cap, const double *zall, const int64_t *zoff, const double *coef,
                   const double *nominal, const double *threshold, const double *lo,
                   const double *hi, int64_t *below_threshold, int64_t *below, int64_t *filled,
                   double *values, double *room)
{
    /* Trials start .. stop of the inputs zall (rows of length ld), CHUNK at a time (the chunk's
     * inputs stay in L1 while every row reads them: fewer trials per chunk when there are many
     * inputs); output row r reads the k_all input rows from zoff[r] on. room holds 8 k_all + 8
     * doubles: the broadcast coefficients, aligned. */
    v4d *av = (v4d *)(((uintptr_t)room + 31) & ~(uintptr_t)31);
    const int64_t chunk = k_all <= 12 ? CHUNK : k_all <= 24 ? CHUNK / 2 : CHUNK / 4;
    for (int64_t c0 = start; c0 < stop; c0 += chunk) {
        const int64_t m = stop - c0 < chunk ? stop - c0 : chunk;
        scan_chunk(k_all, ld, m, rows, cap, zall + c0, zoff, coef, nominal, threshold, lo, hi,
                   below_threshold, below, filled, values, av);
    }
}

/* Order statistics at the sorted ranks r[0..nr) of v[lo..hi) (every rank inside), in place: after
 * the call v[r[i]] is the r[i]-th smallest value. Quickselect with a three-way partition (runs
 * of equal values end a branch), descending only into the sides that hold a wanted rank. */
static void multiselect(double *v, int64_t lo, int64_t hi, const int64_t *r, int nr)
{
    while (nr > 0 && hi - lo > 16) {
        const int64_t mid = lo + (hi - lo) / 2;
        double a = v[lo], b = v[mid], c = v[hi - 1]; /* median of three as the pivot */
        const double p = a < b ? (b < c ? b : (a < c ? c : a)) : (a < c ? a : (b < c ? c : b));
        int64_t lt = lo, i = lo, gt = hi; /* [lo, lt) < p, [lt, i) == p, [gt, hi) > p */
        while (i < gt) {
            const double x = v[i];
            if (x < p) {
                v[i] = v[lt];
                v[lt++] = x;
                i++;
            } else if (x > p) {
                v[i] = v[--gt];
                v[gt] = x;
            } else {
                i++;
            }
        }
        int left = 0;
        while (left < nr && r[left] < lt)
            left++;
        int right = left;
        while (right < nr && r[right] < gt)
            right++;
        multiselect(v, lo, lt, r, left); /* the ranks below the pivot's run */
        r += right; /* ranks inside the run hold p already; go on with those above it */
        nr -= right;
        lo = gt;
    }
    if (nr > 0) { /* a few values left: insertion sort */
        for (int64_t i = lo + 1; i < hi; i++) {
            const double x = v[i];
            int64_t j = i;
            while (j > lo && v[j - 1] > x) {
                v[j] = v[j - 1];
                j--;
            }
            v[j] = x;
        }
    }
}

void feasibly_pick(int64_t threads, int64_t rows, int64_t cap, const double *values,
                   const int64_t *filled, int64_t bracket, int64_t nr, const int64_t *ranks,
                   double *out, int64_t *count, double *work)
{
    /* For every row: the values one bracket kept in each thread's buffer, side by side in work
     * (room for threads × cap), and the order statistics at the row's ranks (sorted; counted
     * from the bracket's lowest value) into out (rows × nr). count gets how many values there
     * are, or −1 where a buffer overflowed; out holds NaN where a rank is not inside. */
    for (int64_t r = 0; r < rows; r++) {
        int64_t k = 0;
        for (int64_t t = 0; t < threads; t++) {
            const int64_t n = filled[(t * rows + r) * NB + bracket];
            if (n > cap) {
                k = -1;
                break;
            }
            memcpy(work + k, values + ((t * rows + r) * NB + bracket) * cap, (size_t)n * 8);
            k += n;
        }
        count[r] = k;
        const int64_t *rk = ranks + r * nr;
        double *o = out + r * nr;
        int inside = k >= 0 && nr > 0 && rk[0] >= 0 && rk[nr - 1] < k;
        for (int64_t i = 1; i < nr; i++)
            inside &= rk[i - 1] <= rk[i];
        if (!inside) {
            for (int64_t i = 0; i < nr; i++)
                o[i] = NAN;
            continue;
        }
        multiselect(work, 0, k, rk, (int)nr);
        for (int64_t i = 0; i < nr; i++)
            o[i] = work[rk[i]];
    }
}
