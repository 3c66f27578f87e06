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
        /* Sixteen trials at a time: four independent sums keep both adders busy while each waits
         * for its previous term (the inputs of a chunk are in L1), then eight at a time. */
        const int64_t m16 = m / 16 * 16, m8 = m / 8 * 8;
        int64_t i = 0;
        for (; i < m16; i += 16) {
            const double *z0 = zr + i;
            v4d s0 = av[0] * load4(z0), s1 = av[0] * load4(z0 + 4);
            v4d s2 = av[0] * load4(z0 + 8), s3 = av[0] * load4(z0 + 12);
            for (int64_t j = 1; j < k_all; j++) {
                const double *zj = z0 + j * ld;
                s0 = s0 + av[j] * load4(zj);
                s1 = s1 + av[j] * load4(zj + 4);
                s2 = s2 + av[j] * load4(zj + 8);
                s3 = s3 + av[j] * load4(zj + 12);
            }
            const v4d x0 = s0 + G, x1 = s1 + G, x2 = s2 + G, x3 = s3 + G;
            COUNT4(x0);
            COUNT4(x1);
            COUNT4(x2);
            COUNT4(x3);
        }
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

/* The order statistics of the n values a[0..n) at the sorted ranks r[0..nr) (counted from
 * off: rank r[i] − off within a), into out[0..nr). Quickselect that descends only into the sides
 * holding a wanted rank, partitioning out of place into t (as large as a): each value is
 * written both at the low end and at the high end of t, and only the end it belongs to advances,
 * so the loop has no branch on the values and no load that waits for a store (an in-place
 * partition swaps through memory: each step waits for the one before; measured, 10^4 trials ×
 * 50 rows, about 9 % of the outputs kept: twice the time). a serves as the scratch of the
 * parts. When no value is below the pivot (the pivot is the smallest), the run of values equal
 * to it is split off instead, so long runs of equal values end a branch. */
static void select_ranks(double *a, double *t, int64_t n, const int64_t *r, int nr, int64_t off,
                         double *out)
{
    while (nr > 0 && n > 16) {
        const double x = a[0], y = a[n / 2], z = a[n - 1]; /* median of three as the pivot */
        const double p = x < y ? (y < z ? y : (x < z ? z : x)) : (x < z ? x : (y < z ? z : y));
        int64_t nl = 0, nh = 0;
        for (int64_t i = 0; i < n; i++) {
            const double v = a[i];
            const int64_t below = v < p;
            t[nl] = v;
            t[n - 1 - nh] = v;
            nl += below;
            nh += 1 - below;
        }
        if (nl == 0) { /* nothing below the pivot: t[0, eq) == p, the rest above it */
            int64_t eq = 0, nm = 0;
            for (int64_t i = 0; i < n; i++) {
                const double v = t[i];
                const int64_t same = v == p;
                a[eq] = v;
                a[n - 1 - nm] = v;
                eq += same;
                nm += 1 - same;
            }
            while (nr > 0 && r[0] - off < eq) { /* ranks inside the run are p */
                *out++ = p;
                r++;
                nr--;
            }
            a += eq;
            t += eq;
            n -= eq;
            off += eq;
            continue;
        }
        int left = 0;
        while (left < nr && r[left] - off < nl)
            left++;
        select_ranks(t, a, nl, r, left, off, out); /* the ranks below the pivot */
        r += left; /* go on with those at or above it, now in t */
        out += left;
        nr -= left;
        double *const was = a;
        a = t + nl;
        t = was + nl;
        n -= nl;
        off += nl;
    }
    if (nr > 0) { /* a few values left: insertion sort */
        for (int64_t i = 1; i < n; i++) {
            const double v = a[i];
            int64_t j = i;
            while (j > 0 && a[j - 1] > v) {
                a[j] = a[j - 1];
                j--;
            }
            a[j] = v;
        }
        for (int i = 0; i < nr; i++)
            out[i] = a[r[i] - off];
    }
}

void feasibly_pick(int64_t threads, int64_t rows, int64_t cap, const double *values,
                   const int64_t *filled, int64_t bracket, int64_t nr, const int64_t *ranks,
                   double *out, int64_t *count, double *work, int64_t row_start,
                   int64_t row_stop)
{
    /* For every row: the values one bracket kept in each thread's buffer, side by side in work
     * (its first threads × cap doubles), and the order statistics at the row's ranks (sorted;
     * counted from the bracket's lowest value) into out (rows × nr). count gets how many values
     * there are, or −1 where a buffer overflowed; out holds NaN where a rank is not inside. Only
     * the rows row_start .. row_stop are done (several threads share the rows, each with its own
     * work, which holds twice threads × cap: the second half is the selection's scratch). */
    for (int64_t r = row_start; r < row_stop; r++) {
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
        select_ranks(work, work + threads * cap, k, rk, (int)nr, 0, o);
    }
}

/* Moments of the rows of z in lanes: lane l sums the trials t ≡ l (mod 4) of a call in order,
 * and the lanes are combined as (l0 + l1) + (l2 + l3) at the end of the call (moments_numpy in
 * _scan.py does the same). Four independent sums per row keep the adders busy. */
static inline __attribute__((always_inline)) void lane_sums(const double *zr, int64_t m,
                                                            double *lane)
{
    v4d acc = load4(lane);
    const int64_t m4 = m / 4 * 4;
    for (int64_t t = 0; t < m4; t += 4)
        acc = acc + load4(zr + t);
    memcpy(lane, &acc, 32);
    for (int64_t t = m4; t < m; t++)
        lane[t % 4] = lane[t % 4] + zr[t];
}

/* The same for the products of row zr with rows zs[0 .. ns), ns ≤ 4: lane[q] (4 doubles each)
 * for pair q; four pairs at a time keep the adders busy. */
static inline __attribute__((always_inline)) void lane_products(const double *zr,
                                                                const double *const *zs, int ns,
                                                                int64_t m, double *const *lane)
{
    const int64_t m4 = m / 4 * 4;
    if (ns == 4) {
        v4d a0 = load4(lane[0]), a1 = load4(lane[1]), a2 = load4(lane[2]), a3 = load4(lane[3]);
        for (int64_t t = 0; t < m4; t += 4) {
            const v4d r = load4(zr + t);
            a0 = a0 + r * load4(zs[0] + t);
            a1 = a1 + r * load4(zs[1] + t);
            a2 = a2 + r * load4(zs[2] + t);
            a3 = a3 + r * load4(zs[3] + t);
        }
        memcpy(lane[0], &a0, 32);
        memcpy(lane[1], &a1, 32);
        memcpy(lane[2], &a2, 32);
        memcpy(lane[3], &a3, 32);
    } else {
        for (int q = 0; q < ns; q++) {
            v4d a = load4(lane[q]);
            for (int64_t t = 0; t < m4; t += 4)
                a = a + load4(zr + t) * load4(zs[q] + t);
            memcpy(lane[q], &a, 32);
        }
    }
    for (int64_t t = m4; t < m; t++)
        for (int q = 0; q < ns; q++)
            lane[q][t % 4] = lane[q][t % 4] + zr[t] * zs[q][t];
}

/* z (rz × m, rows of length ldz) = right (rz × kt) @ the merged inputs rows[0 .. kt), each
 * sum left to right (the first product, then each further one added): four rows of z and
 * eight trials at a time, so eight sums are independent and each input is read once for four
 * rows. */
static inline __attribute__((always_inline)) void product(int64_t rz, int64_t kt, int64_t m,
                                                          const double *right,
                                                          const double *const *rows, double *zc,
                                                          int64_t ldz)
{
    int64_t r = 0;
    for (; r + 4 <= rz; r += 4) {
        const double *a = right + r * kt;
        int64_t t = 0;
        for (; t + 8 <= m; t += 8) {
            v4d s[4][2];
            for (int q = 0; q < 4; q++) {
                const double c = a[q * kt];
                const v4d cq = {c, c, c, c};
                s[q][0] = cq * load4(rows[0] + t);
                s[q][1] = cq * load4(rows[0] + t + 4);
            }
            for (int64_t i = 1; i < kt; i++) {
                const v4d w0 = load4(rows[i] + t), w1 = load4(rows[i] + t + 4);
                for (int q = 0; q < 4; q++) {
                    const double c = a[q * kt + i];
                    const v4d cq = {c, c, c, c};
                    s[q][0] = s[q][0] + cq * w0;
                    s[q][1] = s[q][1] + cq * w1;
                }
            }
            for (int q = 0; q < 4; q++) {
                memcpy(zc + (r + q) * ldz + t, &s[q][0], 32);
                memcpy(zc + (r + q) * ldz + t + 4, &s[q][1], 32);
            }
        }
        for (; t < m; t++) {
            for (int q = 0; q < 4; q++) {
                double v = a[q * kt] * rows[0][t];
                for (int64_t i = 1; i < kt; i++)
                    v = v + a[q * kt + i] * rows[i][t];
                zc[(r + q) * ldz + t] = v;
            }
        }
    }
    for (; r < rz; r++) {
        const double *a = right + r * kt;
        double *zr = zc + r * ldz;
        for (int64_t t = 0; t < m; t++) {
            double v = a[0] * rows[0][t];
            for (int64_t i = 1; i < kt; i++)
                v = v + a[i] * rows[i][t];
            zr[t] = v;
        }
    }
}

/* The factored inputs z of trials start .. stop of the draws x (inputs × trials, rows of length
 * ldx), written to z (rz rows of length ldz, its column 0 being trial start).
 *
 * First the merged inputs w: set s is the weighted sum of its draws, set_idx[set_ptr[s] ..
 * set_ptr[s + 1]) with weights set_w (the first weight times its draw, then each further product
 * added, left to right), and after the sets each single input is its own draw. Then z = right @ w
 * (product), or z = w when right is NULL. The order is product_numpy's, and no multiply-add is
 * fused, so form_numpy gives the same bits. work holds nsets × FORM_CHUNK doubles, rows kt
 * pointers.
 *
 * With sums not NULL the moments of z are added too: sums[r] (rz) gets the sum of row r over
 * the trials, and gram (rz × rz) the sums of products of rows r and s of the same group (ngroups
 * groups of kg rows from row group_off[g]; other entries are not touched), each summed in lanes
 * (lane_sums); lanes holds 4 (rz + ngroups kg kg) doubles.
 *
 * FORM_CHUNK trials at a time: each of the k draws' rows is read in runs of 8 KB, long enough for
 * the prefetchers on all k streams at once (with 128 trials, 1 KB runs: 20 species × 10^5 trials,
 * 60 rows of 0.8 MB each, took 10.4 against 8.7 ms on one thread; a whole summary 6–10 % longer
 * at 10^5 and 10^6 trials, measured interleaved). Any multiple of four gives the same bits. */
#define FORM_CHUNK 1024

VECTOR_CLONES
void feasibly_form(int64_t ldx, const double *x, int64_t start, int64_t stop, int64_t nsets,
                   const int64_t *set_ptr, const int64_t *set_idx, const double *set_w,
                   int64_t nsingle, const int64_t *single, int64_t rz, const double *right,
                   double *z, int64_t ldz, double *work, const double **rows, int64_t ngroups,
                   const int64_t *group_off, int64_t kg, double *sums, double *gram,
                   double *lanes)
{
    const int64_t kt = nsets + nsingle;
    double *const lane_gram = lanes + 4 * rz;
    if (sums)
        memset(lanes, 0, (size_t)(4 * (rz + ngroups * kg * kg)) * sizeof(double));
    for (int64_t c = start; c < stop; c += FORM_CHUNK) {
        const int64_t m = stop - c < FORM_CHUNK ? stop - c : FORM_CHUNK;
        double *const zc = z + (c - start);
        for (int64_t s = 0; s < nsets; s++) {
            double *w = right ? work + s * FORM_CHUNK : zc + s * ldz;
            const int64_t p0 = set_ptr[s];
            const double w0 = set_w[p0];
            const double *x0 = x + set_idx[p0] * ldx + c;
            for (int64_t t = 0; t < m; t++)
                w[t] = w0 * x0[t];
            for (int64_t p = p0 + 1; p < set_ptr[s + 1]; p++) {
                const double wp = set_w[p];
                const double *xp = x + set_idx[p] * ldx + c;
                for (int64_t t = 0; t < m; t++)
                    w[t] = w[t] + wp * xp[t];
            }
            rows[s] = w;
        }
        for (int64_t i = 0; i < nsingle; i++) {
            const double *xi = x + single[i] * ldx + c;
            if (right) {
                rows[nsets + i] = xi;
            } else {
                double *zi = zc + (nsets + i) * ldz;
                for (int64_t t = 0; t < m; t++)
                    zi[t] = xi[t];
            }
        }
        if (right)
            product(rz, kt, m, right, rows, zc, ldz);
        if (!sums)
            continue;
        for (int64_t r = 0; r < rz; r++)
            lane_sums(zc + r * ldz, m, lanes + 4 * r);
        for (int64_t g = 0; g < ngroups; g++) {
            const double *zg = zc + group_off[g] * ldz;
            double *lg = lane_gram + 4 * g * kg * kg;
            for (int64_t r = 0; r < kg; r++) {
                for (int64_t s0 = 0; s0 <= r; s0 += 4) {
                    const int ns = r + 1 - s0 < 4 ? (int)(r + 1 - s0) : 4;
                    const double *zs[4];
                    double *lq[4];
                    for (int q = 0; q < ns; q++) {
                        zs[q] = zg + (s0 + q) * ldz;
                        lq[q] = lg + 4 * (r * kg + s0 + q);
                    }
                    lane_products(zg + r * ldz, zs, ns, m, lq);
                }
            }
        }
    }
    if (!sums)
        return;
    for (int64_t r = 0; r < rz; r++) {
        const double *l = lanes + 4 * r;
        sums[r] = sums[r] + ((l[0] + l[1]) + (l[2] + l[3]));
    }
    for (int64_t g = 0; g < ngroups; g++) {
        const int64_t o = group_off[g];
        const double *lg = lane_gram + 4 * g * kg * kg;
        for (int64_t r = 0; r < kg; r++) {
            for (int64_t s = 0; s <= r; s++) {
                const double *l = lg + 4 * (r * kg + s);
                double *at = gram + (o + r) * rz + o + s;
                *at = *at + ((l[0] + l[1]) + (l[2] + l[3]));
                gram[(o + s) * rz + o + r] = *at;
            }
        }
    }
}
