/*
 * refine_internal.h - the refinement of P_i X S_i = Z (refine.c), shared
 * with the solve pipeline and the convention checks.
 */
#ifndef TRAM_REFINE_INTERNAL_H
#define TRAM_REFINE_INTERNAL_H

#include "tram/se3.h"
#include "core/tram_internal.h"

typedef struct tram_refine_problem {
    const tram_se3 *P, *S; /* n stations */
    size_t n;
    double sigma_angle;    /* per-axis rotation noise (rad) used as weight  */
    double sigma_length;   /* per-axis translation noise (length unit)      */
    double length_scale;   /* typical translation size, for the FD step     */
    const double *W;       /* NULL, or per station the 3x3 whitening of the
                              rotation residual then of the translation
                              residual (row-major, 18 values; noise.c),
                              used instead of the two sigmas               */
    /* Generic residual blocks.  eval == NULL: block i is station i's pose
     * residual weighted by the sigmas.  Otherwise eval fills the weighted
     * residual of block i (at most maxdim values) and returns its length. */
    size_t (*eval)(const struct tram_refine_problem *pb, size_t block, const tram_se3 *X,
                   const tram_se3 *Z, double *r);
    size_t nblocks, maxdim;
    const void *ctx;
    int nfree;             /* free parameters: 12 (0 = 12), or 6 for X only */
    /* NULL, or the sensor's length scale s (sensor length * s = robot
     * length): one more free parameter after the nfree, updated in place.
     * eval reads it; the built-in residual scales S's translation by it. */
    double *scale;
} tram_refine_problem;

typedef void (*tram__progress_fn)(void *ctx, const char *what, size_t done, size_t total);

/* Parameter order: w_X(3, rad), dt_X(3), w_Z(3, rad), dt_Z(3). */
void tram__refine_apply(const tram_se3 *X0, const tram_se3 *Z0, const double x[12], tram_se3 *X,
                        tram_se3 *Z);
/* Unweighted residual of one station: rotation vector (rad), translation. */
void tram__refine_residual(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                           const tram_se3 *Z, double r[6]);
/* Unweighted residual of one station and its analytic Jacobian with
 * respect to the 12 parameters of tram__refine_apply. */
void tram__refine_station_raw(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                              const tram_se3 *Z, double r[6], double J[6][12]);
/* Station i's residual whitened as the problem weighs it (pb->W or the
 * sigmas), and its Jacobian when J != NULL (pb->eval must be NULL). */
void tram__refine_weighted(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                           const tram_se3 *Z, double r[6], double J[6][12]);
/* Weighted residual r (rotation / sigma_angle, translation / sigma_length)
 * of one station and its Jacobian with respect to the 12 parameters
 * (analytic; ht, once the finite-difference step, is not used). */
void tram__refine_station_jacobian(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                                   const tram_se3 *Z, double inv_sa, double inv_sl, double ht,
                                   double r[6], double J[6][12]);
/* Refine X, Z in place.  station_w: per-station weights (NULL = 1; 0
 * excludes a station).  robust: Cauchy IRLS on top of the weights;
 * without it, station problems end with tram__refine_polish. */
tram_status tram__refine_run(const tram_refine_problem *pb, const double *station_w, int robust,
                             tram_se3 *X, tram_se3 *Z);
/* `steps` plain Gauss-Newton steps from a converged (X, Z): they settle
 * the parameters to rounding level, where the cost no longer changes
 * measurably (so that answers are smooth functions of the data). */
tram_status tram__refine_polish(const tram_refine_problem *pb, const double *station_w, int steps,
                                tram_se3 *X, tram_se3 *Z);
/* Covariance (12x12, parameter units) = scale2 * (J^T W J)^-1 and the
 * condition number of the correlation form of J^T W J; entries of
 * parameters that are not free are NaN. */
tram_status tram__refine_covariance(const tram_refine_problem *pb, const double *station_w,
                                    const tram_se3 *X, const tram_se3 *Z, double scale2,
                                    double cov[144], double *condition);
/* As tram__refine_covariance, with pb->scale set: also the variance of
 * the scale (*var_scale) and its covariance with the 12 (cov_scale, NaN
 * where not free); either may be NULL. */
tram_status tram__refine_covariance_scale(const tram_refine_problem *pb, const double *station_w,
                                          const tram_se3 *X, const tram_se3 *Z, double scale2,
                                          double cov[144], double *condition, double *var_scale,
                                          double cov_scale[12]);
/* Station problems with the weights of a converged fit changed a little
 * (feasible GLS rounds; station_w required): Gauss-Newton steps from (X, Z) until a step is
 * under tol_sigma standard deviations of every direction (dx^T H dx <
 * tol_sigma^2), at most max_steps; then the unscaled covariance H^-1
 * of the last step's J^T W J (taken one step before the end, which
 * moved the parameters by under tol_sigma sigma) and its condition, as
 * tram__refine_covariance gives them (with pb->scale: the scale moves too,
 * and *var_scale, when not NULL, is its variance).  TRAM_ENUMERIC when it does not
 * settle (a singular H, a step over 100 sigma, max_steps reached): the
 * caller then refines with tram__refine_run.  (X, Z) moved either way. */
tram_status tram__refine_settle(const tram_refine_problem *pb, const double *station_w,
                                int max_steps, double tol_sigma, tram_se3 *X, tram_se3 *Z,
                                double cov[144], double *condition, double *var_scale);
/* Weighted chi-square of the residuals into *chi2; TRAM_ENOMEM when the
 * work buffer cannot be had. */
tram_status tram__refine_chi2(const tram_refine_problem *pb, const double *station_w,
                              const tram_se3 *X, const tram_se3 *Z, double *chi2);
/* Station bootstrap: per-parameter standard deviation and 2.5 / 97.5
 * percentiles of the resampled solutions' deviations from (X, Z). */
tram_status tram__refine_bootstrap(const tram_refine_problem *pb, const double *station_w,
                                   const tram_se3 *X, const tram_se3 *Z, size_t resamples,
                                   unsigned long long seed, tram__progress_fn progress,
                                   void *ctx, double sigma[12], double lo[12], double hi[12],
                                   size_t *used);

#endif
