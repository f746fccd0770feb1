/*
 * stats_internal.h - order statistics without allocation, and the t and F
 * quantiles (stats.c).
 */
#ifndef TRAM_STATS_INTERNAL_H
#define TRAM_STATS_INTERNAL_H

#include "core/tram_internal.h"

/* Median of n values (the input is not reordered, and nothing is
 * allocated: a radix selection, tram__kth).  0 for n = 0. */
double tram__median(const double *v, size_t n);
/* The same median (bit for bit) in O(n) by selection, reordering v (the
 * caller's scratch copy). */
double tram__median_inplace(double *v, size_t n);

/* The k-th smallest (0-based, k < n) of the n values get(ctx, 0 .. n-1),
 * by a bitwise radix selection over the values' order-preserving 64-bit
 * keys: 64 passes of n calls, no allocation, exact. */
double tram__kth(size_t n, double (*get)(const void *ctx, size_t i), const void *ctx, size_t k);

/* Robust per-axis noise from per-station residual norms of 3-vectors:
 * median / sqrt(median of chi-square with 3 dof). */
double tram__robust_sigma3(const double *norms, size_t n);

/* Median of get(ctx, 0 .. n-1) without a copy; 0 for n = 0. */
double tram__median_of(size_t n, double (*get)(const void *ctx, size_t i), const void *ctx);

/* Regularised incomplete beta function I_x(a, b) (a, b > 0); 0 for
 * x <= 0 and 1 for x >= 1. */
double tram__beta_inc(double a, double b, double x);

/* Quantile of Student's t with nu (> 0, not necessarily whole) degrees
 * of freedom at probability p in (0, 1); NaN outside. */
double tram__t_quantile(double p, double nu);

/* Quantile of Fisher's F(d1, d2) at probability p in (0, 1); NaN outside. */
double tram__f_quantile(double p, double d1, double d2);

/* Quantile of the chi-square distribution with k (> 0) degrees of freedom
 * at probability p in (0, 1); NaN outside. */
double tram__chi2_quantile(double p, double k);

#endif
