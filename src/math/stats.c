/*
 * stats.c - order statistics without allocation: the k-th smallest of n
 * values by a radix selection on order-preserving keys (64 passes, O(n)
 * memory-free), the median, and the robust per-axis noise of 3-vector
 * residual norms (the median norm over sqrt of the median of a chi-square
 * with 3 degrees of freedom, 2.36597: SciPy stats.chi2.median(3), checked
 * in tests/ref/check_stats_scipy.py).
 */
#include "math/stats_internal.h"

#include <math.h>
#include <string.h>

#define CHI3_MEDIAN_SQRT 1.5381722 /* sqrt(2.36597) */

/* Order-preserving key of a double: negative numbers have every bit
 * flipped, others the sign bit set, so that unsigned order is numeric
 * order (-0 sorts just below +0). */
static unsigned long long order_key(double x)
{
    unsigned long long u;
    memcpy(&u, &x, sizeof u);
    return (u >> 63) ? ~u : (u | 0x8000000000000000ULL);
}

static double from_order_key(unsigned long long k)
{
    unsigned long long u = (k >> 63) ? (k & 0x7FFFFFFFFFFFFFFFULL) : ~k;
    double x;
    memcpy(&x, &u, sizeof x);
    return x;
}

double tram__kth(size_t n, double (*get)(const void *ctx, size_t i), const void *ctx, size_t k)
{
    /* Decide the result's key bit by bit from the top: count the values
     * that share the bits decided so far and have a 0 in this one. */
    unsigned long long prefix = 0;
    for (int b = 63; b >= 0; b--) {
        unsigned long long bit = 1ULL << b, above = b == 63 ? 0 : ~((bit << 1) - 1);
        size_t zeros = 0;
        for (size_t i = 0; i < n; i++) {
            unsigned long long key = order_key(get(ctx, i));
            zeros += (key & above) == prefix && !(key & bit);
        }
        if (k >= zeros) {
            k -= zeros;
            prefix |= bit;
        }
    }
    return from_order_key(prefix);
}

/* Median of get(ctx, 0 .. n-1); 0 for n = 0.  For even n the upper middle
 * value follows from the lower in one more pass: the lower itself when it
 * is repeated past the middle, else the smallest value above it. */
double tram__median_of(size_t n, double (*get)(const void *ctx, size_t i), const void *ctx)
{
    if (n == 0) return 0.0;
    if (n % 2) return tram__kth(n, get, ctx, n / 2);
    double lo = tram__kth(n, get, ctx, n / 2 - 1), hi = INFINITY;
    unsigned long long klo = order_key(lo);
    size_t at_most = 0;
    for (size_t i = 0; i < n; i++) {
        double x = get(ctx, i);
        unsigned long long k = order_key(x);
        if (k <= klo) at_most++;
        else if (k < order_key(hi)) hi = x;
    }
    return 0.5 * (lo + (at_most > n / 2 ? lo : hi));
}

static double array_get(const void *ctx, size_t i) { return ((const double *)ctx)[i]; }

double tram__median(const double *v, size_t n) { return tram__median_of(n, array_get, v); }

double tram__robust_sigma3(const double *norms, size_t n)
{
    return tram__median(norms, n) / CHI3_MEDIAN_SQRT;
}
