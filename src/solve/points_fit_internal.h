/*
 * points_fit_internal.h - what the solves from observed 3D points share
 * (points_fit.c, used by points_solve.c): the observations' context, the
 * residuals with and without a model, the linear start, the target frame,
 * the point statistics and the sensor scale's test.
 */
#ifndef TRAM_POINTS_FIT_INTERNAL_H
#define TRAM_POINTS_FIT_INTERNAL_H

#include "tram/point_solve.h"
#include "solve/refine_internal.h"
#include "core/tram_internal.h"

/* The observations, ordered by station, and the current weights. */
typedef struct tram__pts_ctx {
    const tram_se3 *P;
    const tram_point_obs *obs;
    const double *model;   /* per point id (3 each), or NULL */
    const size_t *order;   /* observations sorted by station */
    const size_t *first;   /* per station: start in order[]  */
    const size_t *count;   /* per station: number of obs     */
    const int *excluded;   /* per observation                */
    double inv_sigma;
    double *q;             /* scratch: npoints * 3           */
    double *qn;            /* scratch: npoints               */
    const double *scale;   /* the sensor's length scale (1 unless fitted or tested) */
} tram__pts_ctx;

typedef struct tram__pts_setup {
    tram_se3 *P;
    size_t *order, *first, *count;
    int *excluded;
    double *q, *qn, *res;
    double scale; /* the sensor's length scale: the refinement's 13th parameter */
} tram__pts_setup;

/* With a model: block = station, residuals (P X p - Z m) / sigma. */
size_t tram__pts_eval_model(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                            const tram_se3 *Z, double *r);

/* The least-squares positions q_k for X: the mean of the observations. */
void tram__pts_eliminate(const tram__pts_ctx *c, const tram_se3 *X);

/* Without a model: one block, q eliminated (variable projection). */
size_t tram__pts_eval_free(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                           const tram_se3 *Z, double *r);

/* Residual norms of every observation at (X, Z or the eliminated q). */
void tram__pts_residuals(const tram__pts_ctx *c, const tram_se3 *X, const tram_se3 *Z, double *res);

/* Linear start without a model (see the file comment). */
tram_status tram__pts_linear_start(const tram__pts_ctx *c, tram_se3 *X, tram_error *err);

/* Target frame from solved points: centroid and principal axes. */
void tram__pts_target_frame(const double *q, size_t m, const char *first_id, tram_se3 *Z);

/* Free the buffers of a setup (prepared or zeroed). */
void tram__pts_setup_free(tram__pts_setup *d);

/* The station poses P_i of the setup, the observations ordered by station
 * and the scratch buffers into d, and c pointing at them (scale 1, weight
 * 1); TRAM_ENOMEM. */
tram_status tram__pts_prepare(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                              tram__pts_setup *d, tram__pts_ctx *c);

/* Robust per-axis sigma of the included residual norms into *sigma;
 * TRAM_ENOMEM when the work copy cannot be had. */
tram_status tram__pts_robust_sigma(const double *res, const int *excl, size_t n, double *sigma);

/* Median distance of the observed points from the sensor: the working
 * distance of the plausibility gate (plausibility.c). */
double tram__pts_working_distance(const tram_point_obs *obs);

/* Fill the point statistics of the solution. */
tram_status tram__pts_stats(const tram_records *r, const tram_point_obs *obs,
                            const tram__pts_ctx *c, const tram__pts_setup *d,
                            const tram_solution *sol, const double *model, tram_point_result *pr);

/* The first nblk*6 public sigmas and covariance of sol from the
 * refinement's covariance (parameter order, length and rad). */
void tram__pts_store_uncertainty(const double cov[144], int nblk, double cond, double dof,
                                 tram_solution *sol);

/* Sum of squared residual norms of the observations used (not excluded,
 * of a station with weight w > 0; w NULL: all stations); *k their count. */
double tram__pts_used_ss(const tram_point_obs *obs, const tram__pts_setup *d, const double *w,
                         size_t *k);

/* The scale test of a solve that keeps s = 1 (scale.c): pb0's problem
 * refined from (X, Z) with the sensor's scale free, its noise from those
 * residuals (dof0 - 1 degrees of freedom: one parameter more) and
 * the scale's variance; then back to s = 1 and the residuals at (X, Z).
 * TRAM_ENOMEM only. */
tram_status tram__pts_scale_test(const tram_refine_problem *pb0, const double *w,
                                 const tram_point_obs *obs, tram__pts_setup *d, tram__pts_ctx *c,
                                 double dof0, const tram_se3 *X, const tram_se3 *Z, tram_solution *sol);

#endif
