/*
 * noise_internal.h - the station noise model of the pose solve (noise.c):
 * per-axis variances of the sensor's rotation and translation noise in
 * the sensor's frame, an isotropic robot term, the per-station whitening
 * of the refinement's residual, their estimation from the residuals, the
 * degrees of freedom of the intervals and the per-station outlier test.
 */
#ifndef TRAM_NOISE_INTERNAL_H
#define TRAM_NOISE_INTERNAL_H

#include "solve/refine_internal.h"

/* Fewest stations for per-axis estimates; with fewer (down to
 * TRAM__NOISE_DEPTH_MIN), one variance for the rotation axes, one for the
 * lateral translation axes (x, y) and one for depth (z); with fewer still,
 * one for rotation and one for translation. */
#define TRAM__NOISE_PER_AXIS_MIN 10
#define TRAM__NOISE_DEPTH_MIN 4
#define TRAM__NOISE_POOLED 0   /* tram__noise.per_axis values */
#define TRAM__NOISE_PER_AXIS 1
#define TRAM__NOISE_DEPTH 2

typedef struct tram__noise {
    double rot_var[3];    /* sensor rotation noise per axis, sensor frame (rad^2) */
    double len_var[3];    /* sensor translation noise per axis, sensor frame (length^2) */
    double robot_rot_var; /* robot: isotropic rotation noise of the flange (rad^2)  */
    double robot_len_var; /* robot: isotropic translation noise (length^2)          */
    int eye_to_hand;      /* P_i is the inverse of the robot pose                   */
    int per_axis;         /* grouping of the estimate: TRAM__NOISE_PER_AXIS, _DEPTH
                             or _POOLED                                           */
    double dof[6];        /* effective degrees of freedom of each estimate
                             (rotation x y z, translation x y z; pooled: equal)     */
} tram__noise;

/* The 6x6 covariance of station (P, S)'s residual at (X, Z) (block
 * diagonal: rotation, translation; the rotation-translation coupling of
 * the robot's lever arm is left out) as two row-major 3x3 blocks. */
void tram__noise_station_cov(const tram__noise *nm, const tram_se3 *P, const tram_se3 *S,
                             const tram_se3 *X, const tram_se3 *Z, double Sr[9], double St[9]);

/* Per-station whitening (tram_refine_problem.W) of all pb->n stations at
 * (X, Z): the inverses of the Cholesky factors of the two blocks. */
void tram__noise_whitening(const tram__noise *nm, const tram_refine_problem *pb,
                           const tram_se3 *X, const tram_se3 *Z, double *W);

/* One estimate of the sensor variances (grouped as per_axis says) from
 * the residuals at (X, Z) of the stations with w > 0, given C = (J^T W J)^-1 (12x12, parameter order) at
 * the same point: the moment equation of generalised least squares,
 * E[r r^T] = Sigma - J C J^T, in the sensor's axes (REML's correction for
 * the fitted parameters), robot term subtracted.  Fills nm->*_var and
 * nm->dof; the robot term and the setup are kept. */
void tram__noise_estimate(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                          const tram_se3 *Z, const double C[144], int per_axis, tram__noise *nm);

/* Effective degrees of freedom of each parameter's variance C_kk, a sum
 * of the noise estimates' contributions g_a (each with nm->dof[a]):
 * nu_k = sum g_a / sum (g_a / dof_a) (noise.c's opening comment).  W must
 * be the whitening for nm at (X, Z). */
void tram__noise_param_dof(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                           const tram_se3 *Z, const double C[144], const tram__noise *nm,
                           double nu[12]);

/* Kenward & Roger's small-sample adjustment (Biometrics 53(3), 1997) of
 * the covariance C of the GLS fit for the noise being estimated:
 * CA = C + 2 C [sum_g Var(v_g) (Q_gg - P_g C P_g)] C over the variance
 * groups g, P_g = J^T dSigma^-1/dv_g J, Q_gg = J^T (dSigma^-1/dv_g) Sigma
 * (dSigma^-1/dv_g) J, Var(v_g) = 2 v_g^2 / dof_g.  W must be the whitening
 * for nm at (X, Z). */
void tram__noise_kr_adjust(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                           const tram_se3 *Z, const double C[144], const tram__noise *nm,
                           double CA[144]);

/* Per-station test statistic T_i = r_i^T V_i^-1 r_i with V_i the variance
 * of the station's residual given the fit: Sigma_i - J_i C J_i^T for a
 * station in the fit (w > 0: the leave-one-out form of its residual),
 * Sigma_i + J_i C J_i^T for one left out (its prediction error).  Chi-
 * square with 6 degrees of freedom under the model.  Never allocates;
 * returns TRAM_ENUMERIC when a V_i is not positive definite (T_i = 0 for
 * a kept station, which cannot be tested, inf for a left-out one). */
tram_status tram__noise_station_stat(const tram_refine_problem *pb, const double *w,
                                     const tram_se3 *X, const tram_se3 *Z, const double C[144],
                                     const tram__noise *nm, double *T);

/* Root-mean-square over the three axes of the sensor's rotation (rad) and
 * translation noise. */
double tram__noise_rms_rot(const tram__noise *nm);
double tram__noise_rms_len(const tram__noise *nm);

#endif
