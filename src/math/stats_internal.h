/*
 * stats_internal.h - order statistics without allocation (stats.c).
 */
#ifndef TRAM_STATS_INTERNAL_H
#define TRAM_STATS_INTERNAL_H

#include "core/tram_internal.h"

/* Median of n values (the input is not reordered, and nothing is
 * allocated: a radix selection, tram__kth).  0 for n = 0. */
double tram__median(const double *v, size_t n);

/* The k-th smallest (0-based, k < n) of the n values get(ctx, 0 .. n-1),
 * by a bitwise radix selection over the values' order-preserving 64-bit
 * keys: 64 passes of n calls, no allocation, exact. */
double tram__kth(size_t n, double (*get)(const void *ctx, size_t i), const void *ctx, size_t k);

/* Robust per-axis noise from per-station residual norms of 3-vectors:
 * median / sqrt(median of chi-square with 3 dof). */
double tram__robust_sigma3(const double *norms, size_t n);

/* Median of get(ctx, 0 .. n-1) without a copy; 0 for n = 0. */
double tram__median_of(size_t n, double (*get)(const void *ctx, size_t i), const void *ctx);

#endif
