/*
 * stats.c - order statistics without allocation: the k-th smallest of n
 * values by a radix selection on order-preserving keys (64 passes, O(n)
 * memory-free), the median, and the robust per-axis noise of 3-vector
 * residual norms (the median norm over sqrt of the median of a chi-square
 * with 3 degrees of freedom, 2.36597: SciPy stats.chi2.median(3), checked
 * in tests/ref/check_stats_scipy.py); and the quantiles of Student's t
 * and Fisher's F through the regularised incomplete beta function
 * I_x(a, b), evaluated by its continued fraction (Abramowitz & Stegun,
 * "Handbook of Mathematical Functions", 1964, 26.5.8) with the modified
 * Lentz algorithm (Thompson & Barnett, J. Comput. Phys. 64, 1986) and
 * inverted by bisection: t_nu CDF(t) = 1 - I_{nu/(nu+t^2)}(nu/2, 1/2) / 2,
 * F(d1, d2) CDF(f) = I_{d1 f/(d1 f + d2)}(d1/2, d2/2) (checked against
 * SciPy stats.t.ppf and stats.f.ppf in tests/ref/check_stats_scipy.py);
 * the chi-square quantile through the regularised incomplete gamma
 * function (A&S 6.5.29, 6.5.31), by bisection (stats.chi2.ppf).
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

/* The k-th smallest of v[0..n-1] in order_key's order (so the same value
 * as tram__kth), by Hoare's selection (Comm. ACM 4(7), 1961, "FIND") with
 * a median-of-three pivot: v is reordered so that v[k] is it, v[0..k-1]
 * no larger and v[k+1..n-1] no smaller. */
static void select_inplace(double *v, size_t n, size_t k)
{
    size_t lo = 0, hi = n - 1;
    while (hi > lo) {
        size_t mid = lo + (hi - lo) / 2;
        unsigned long long a = order_key(v[lo]), b = order_key(v[mid]), c = order_key(v[hi]);
        unsigned long long piv = a < b ? (b < c ? b : a < c ? c : a) : (a < c ? a : b < c ? c : b);
        size_t i = lo, j = hi;
        while (i <= j) {
            while (order_key(v[i]) < piv) i++;
            while (order_key(v[j]) > piv) j--;
            if (i <= j) {
                double t = v[i];
                v[i] = v[j];
                v[j] = t;
                i++;
                if (j == 0) break;
                j--;
            }
        }
        if (k <= j) hi = j;
        else if (k >= i) lo = i;
        else return; /* between j and i: equal to the pivot */
    }
}

double tram__median_inplace(double *v, size_t n)
{
    if (n == 0) return 0.0;
    select_inplace(v, n, n / 2);
    double hi = v[n / 2];
    if (n % 2) return hi;
    /* the lower middle: the largest of v[0 .. n/2-1] */
    double lo = v[0];
    for (size_t i = 1; i < n / 2; i++)
        if (order_key(v[i]) > order_key(lo)) lo = v[i];
    return 0.5 * (lo + hi);
}

static double array_get(const void *ctx, size_t i) { return ((const double *)ctx)[i]; }

double tram__median(const double *v, size_t n) { return tram__median_of(n, array_get, v); }

double tram__robust_sigma3(const double *norms, size_t n)
{
    return tram__median(norms, n) / CHI3_MEDIAN_SQRT;
}

/* Continued fraction of I_x(a, b) (A&S 26.5.8), for x < (a + 1) / (a + b + 2). */
static double beta_cf(double a, double b, double x)
{
    const double tiny = 1e-300;
    double c = 1.0, d = 1.0 - (a + b) * x / (a + 1.0);
    if (fabs(d) < tiny) d = tiny;
    d = 1.0 / d;
    double f = d;
    for (int m = 1; m <= 300; m++) {
        double m2 = 2.0 * m;
        double num = m * (b - m) * x / ((a + m2 - 1.0) * (a + m2));
        d = 1.0 + num * d;
        if (fabs(d) < tiny) d = tiny;
        c = 1.0 + num / c;
        if (fabs(c) < tiny) c = tiny;
        d = 1.0 / d;
        f *= d * c;
        num = -(a + m) * (a + b + m) * x / ((a + m2) * (a + m2 + 1.0));
        d = 1.0 + num * d;
        if (fabs(d) < tiny) d = tiny;
        c = 1.0 + num / c;
        if (fabs(c) < tiny) c = tiny;
        d = 1.0 / d;
        double delta = d * c;
        f *= delta;
        if (fabs(delta - 1.0) < 1e-15) break;
    }
    return f;
}

double tram__beta_inc(double a, double b, double x)
{
    if (!(x > 0)) return 0.0;
    if (!(x < 1)) return 1.0;
    double lfront = lgamma(a + b) - lgamma(a) - lgamma(b) + a * log(x) + b * log1p(-x);
    if (x < (a + 1.0) / (a + b + 2.0)) return exp(lfront) * beta_cf(a, b, x) / a;
    return 1.0 - exp(lfront) * beta_cf(b, a, 1.0 - x) / b;
}

/* x in (0, 1) with I_x(a, b) = p, by bisection (monotone; 200 halvings
 * reach the spacing of doubles). */
static double beta_quantile(double a, double b, double p)
{
    double lo = 0.0, hi = 1.0;
    for (int it = 0; it < 200; it++) {
        double mid = 0.5 * (lo + hi);
        if (mid <= lo || mid >= hi) break;
        if (tram__beta_inc(a, b, mid) < p) lo = mid;
        else hi = mid;
    }
    return 0.5 * (lo + hi);
}

double tram__t_quantile(double p, double nu)
{
    if (!(nu > 0) || !(p > 0) || !(p < 1)) return NAN;
    if (p == 0.5) return 0.0;
    double q = p > 0.5 ? 2.0 * (1.0 - p) : 2.0 * p; /* two-sided tail */
    double x = beta_quantile(0.5 * nu, 0.5, q);       /* nu / (nu + t^2) */
    double t = sqrt(nu * (1.0 - x) / x);
    return p > 0.5 ? t : -t;
}

double tram__f_quantile(double p, double d1, double d2)
{
    if (!(d1 > 0) || !(d2 > 0) || !(p > 0) || !(p < 1)) return NAN;
    double x = beta_quantile(0.5 * d1, 0.5 * d2, p); /* d1 f / (d1 f + d2) */
    return d2 * x / (d1 * (1.0 - x));
}

/* Regularised lower incomplete gamma P(a, x): its series for x < a + 1,
 * else 1 - the continued fraction of Q (A&S 6.5.29 and 6.5.31, Lentz). */
static double gamma_p(double a, double x)
{
    if (!(x > 0)) return 0.0;
    double lfront = a * log(x) - x - lgamma(a);
    if (x < a + 1.0) {
        double term = 1.0 / a, sum = term;
        for (int n = 1; n < 1000 && fabs(term) > 1e-17 * fabs(sum); n++) {
            term *= x / (a + n);
            sum += term;
        }
        return exp(lfront) * sum;
    }
    const double tiny = 1e-300;
    double b = x + 1.0 - a, c = 1.0 / tiny, d = 1.0 / b, h = d;
    for (int i = 1; i < 1000; i++) {
        double an = -i * (i - a);
        b += 2.0;
        d = an * d + b;
        if (fabs(d) < tiny) d = tiny;
        c = b + an / c;
        if (fabs(c) < tiny) c = tiny;
        d = 1.0 / d;
        double delta = d * c;
        h *= delta;
        if (fabs(delta - 1.0) < 1e-15) break;
    }
    return 1.0 - exp(lfront) * h;
}

double tram__chi2_quantile(double p, double k)
{
    if (!(k > 0) || !(p > 0) || !(p < 1)) return NAN;
    double lo = 0.0, hi = k + 10.0 * sqrt(2.0 * k) + 100.0;
    while (gamma_p(0.5 * k, 0.5 * hi) < p) hi *= 2.0;
    for (int it = 0; it < 200; it++) {
        double mid = 0.5 * (lo + hi);
        if (mid <= lo || mid >= hi) break;
        if (gamma_p(0.5 * k, 0.5 * mid) < p) lo = mid;
        else hi = mid;
    }
    return 0.5 * (lo + hi);
}
