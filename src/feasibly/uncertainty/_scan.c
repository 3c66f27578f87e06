/* Compiled kernels of feasibly._scan: one read of a chunk of Monte Carlo trials per temperature
 * row, and the gathering of the values kept inside the brackets.
 *
 * The arithmetic mirrors scan_numpy / product_numpy in _scan.py operation for operation (inputs in
 * blocks of eight summed left to right, the blocks added in turn, then the nominal), and the
 * build passes -ffp-contract=off, so no multiply-add is fused: the two give the same bits, which
 * the tests check. Layouts are C order; every array is contiguous (the Python side checks).
 */
#include <stdint.h>
#include <string.h>
#include <math.h>

#define NB 3 /* brackets per row */

#if defined(__GNUC__) && defined(__x86_64__) && !defined(__clang__)
/* One binary for every x86-64 machine: an AVX2 clone is picked at load time where the CPU has it. */
#define VECTOR_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define VECTOR_CLONES
#endif

VECTOR_CLONES
void feasibly_scan(int64_t k_all, int64_t m, int64_t rows, int64_t cap, const double *z,
                   const double *coef, const double *nominal, const double *threshold,
                   const double *lo, const double *hi, int64_t *below_threshold, int64_t *below,
                   int64_t *filled, double *values, double *scratch, uint8_t *flags,
                   int64_t flags_len)
{
    double *restrict v = scratch;
    for (int64_t i = m; i < flags_len; i++)
        flags[i] = 0;
    for (int64_t r = 0; r < rows; r++) {
        const double *a = coef + r * k_all;
        for (int64_t kb = 0; kb < k_all; kb += 8) {
            const double a0 = a[kb], a1 = a[kb + 1], a2 = a[kb + 2], a3 = a[kb + 3];
            const double a4 = a[kb + 4], a5 = a[kb + 5], a6 = a[kb + 6], a7 = a[kb + 7];
            const double *restrict z0 = z + kb * m, *restrict z1 = z0 + m, *restrict z2 = z1 + m;
            const double *restrict z3 = z2 + m, *restrict z4 = z3 + m, *restrict z5 = z4 + m;
            const double *restrict z6 = z5 + m, *restrict z7 = z6 + m;
            if (kb == 0) {
                for (int64_t i = 0; i < m; i++)
                    v[i] = a0 * z0[i] + a1 * z1[i] + a2 * z2[i] + a3 * z3[i] + a4 * z4[i] +
                           a5 * z5[i] + a6 * z6[i] + a7 * z7[i];
            } else {
                for (int64_t i = 0; i < m; i++)
                    v[i] = v[i] + (a0 * z0[i] + a1 * z1[i] + a2 * z2[i] + a3 * z3[i] +
                                   a4 * z4[i] + a5 * z5[i] + a6 * z6[i] + a7 * z7[i]);
            }
        }
        const double g = nominal[r], t = threshold[r];
        const double l0 = lo[r * NB], l1 = lo[r * NB + 1], l2 = lo[r * NB + 2];
        const double h0 = hi[r * NB], h1 = hi[r * NB + 1], h2 = hi[r * NB + 2];
        int64_t ct = 0, c0 = 0, c1 = 0, c2 = 0;
        /* Branch-free (vectorised): the nominal added, the counts, and a flag byte per value
         * with a bit for each bracket it lies inside. */
        for (int64_t i = 0; i < m; i++) {
            const double x = v[i] + g;
            v[i] = x;
            ct += x < t;
            c0 += x < l0;
            c1 += x < l1;
            c2 += x < l2;
            flags[i] = (uint8_t)(((x >= l0) & (x <= h0)) | (((x >= l1) & (x <= h1)) << 1) |
                                 (((x >= l2) & (x <= h2)) << 2));
        }
        below_threshold[r] += ct;
        below[r * NB] += c0;
        below[r * NB + 1] += c1;
        below[r * NB + 2] += c2;
        /* The kept values are few (about 1 %): skip eight flags at a time when none is set and
         * append without branches inside a word that has one; near the capacity, count on but
         * store only what fits, so an overflow is seen and never truncates silently. */
        int64_t k0 = filled[r * NB], k1 = filled[r * NB + 1], k2 = filled[r * NB + 2];
        double *out0 = values + (r * NB) * cap, *out1 = out0 + cap, *out2 = out1 + cap;
        for (int64_t j = 0; j < flags_len; j += 8) {
            uint64_t word;
            memcpy(&word, flags + j, 8);
            if (word == 0)
                continue;
            const int64_t end = j + 8 < m ? j + 8 : m;
            int64_t top = k0 > k1 ? k0 : k1;
            top = top > k2 ? top : k2;
            if (top + 8 <= cap) {
                for (int64_t i = j; i < end; i++) {
                    const double x = v[i];
                    const int f = flags[i];
                    out0[k0] = x;
                    k0 += f & 1;
                    out1[k1] = x;
                    k1 += (f >> 1) & 1;
                    out2[k2] = x;
                    k2 += (f >> 2) & 1;
                }
            } else {
                for (int64_t i = j; i < end; i++) {
                    const double x = v[i];
                    const int f = flags[i];
                    if (f & 1) {
                        if (k0 < cap)
                            out0[k0] = x;
                        k0++;
                    }
                    if (f & 2) {
                        if (k1 < cap)
                            out1[k1] = x;
                        k1++;
                    }
                    if (f & 4) {
                        if (k2 < cap)
                            out2[k2] = x;
                        k2++;
                    }
                }
            }
        }
        filled[r * NB] = k0;
        filled[r * NB + 1] = k1;
        filled[r * NB + 2] = k2;
    }
}

void feasibly_gather(int64_t threads, int64_t rows, int64_t cap, const double *values,
                     const int64_t *filled, int64_t bracket, int64_t width, double *out,
                     int64_t *count)
{
    for (int64_t r = 0; r < rows; r++) {
        double *row = out + r * width;
        int64_t k = 0;
        for (int64_t t = 0; t < threads; t++) {
            const int64_t n = filled[(t * rows + r) * NB + bracket];
            if (n > cap || k + n > width) {
                k = -1;
                break;
            }
            memcpy(row + k, values + ((t * rows + r) * NB + bracket) * cap, (size_t)n * 8);
            k += n;
        }
        count[r] = k;
        for (int64_t i = k > 0 ? k : 0; i < width; i++)
            row[i] = INFINITY;
    }
}
