/*
 * solve_internal.h - pieces of the solve pipeline shared between solve.c
 * (the pipeline) and diagnose.c (observability, convention and unit
 * checks).
 */
#ifndef TRAM_SOLVE_INTERNAL_H
#define TRAM_SOLVE_INTERNAL_H

#include "tram/solve.h"
#include "core/tram_internal.h"

/* Append a diagnostic; returns TRAM_ENOMEM when it cannot. */
tram_status tram__diag_add(tram_solution *s, const char *code, tram_severity sev,
                           const char *fmt, ...) TRAM_PRINTF(4, 5);

/* P and S arrays of the generic problem P_i X S_i = Z for the setup
 * (tram/handeye.h).  Caller frees both with tram__free. */
tram_status tram__station_poses(const tram_records *r, tram_setup setup, tram_se3 **P,
                                tram_se3 **S);

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

/* A quick robust solve (Park-Martin start, Cauchy refinement) used to
 * compare readings of the same data: median rotation residual (rad) and
 * median translation residual.  Returns TRAM_OK or a failure status. */
tram_status tram__quick_fit(const tram_se3 *P, const tram_se3 *S, size_t n, double *med_rot,
                            double *med_trans, tram_se3 *X, tram_se3 *Z);

/* Observability figures into s; adds error diagnostics and returns 1 when
 * the data cannot determine the answer. */
int tram__observability(const tram_se3 *P, size_t n, tram_setup setup, tram_solution *s);

/* Convention checks: re-read the data under the usual mistakes and report
 * a reading that fits far better. */
tram_status tram__check_conventions(const tram_records *r, tram_setup setup, tram_solution *s);

/* The fit the convention doctor runs on each reading of the data. */
typedef tram_status (*tram__fit_fn)(const tram_records *r, tram_setup setup, const void *ctx,
                                    double *med_rot, double *med_tr, double *mount_len);
/* The doctor with another fit (e.g. of observed points); max_n > 0
 * subsamples the stations. */
tram_status tram__check_conventions_with(const tram_records *r, tram_setup setup, tram_solution *s,
                                         tram__fit_fn fit, const void *ctx, size_t max_n);

/* Plausibility of the declared length unit from the robot's translations. */
tram_status tram__check_units(const tram_records *r, tram_solution *s);

#endif
