/*
 * scale.c - the sensor's length scale: one factor s by which the sensor's
 * lengths differ from the robot's (a 3D camera's depth calibration, a
 * wrong unit or sensor model).  With s free, P_i X S_i(s) = Z is the
 * similarity form of the hand-eye problem: S_i(s) has the rotation of S_i
 * and s times its translation, as in Umeyama's registration with scale
 * (IEEE Trans. PAMI 13(4), 1991).  The refinement (refine.c) carries s as
 * a 13th parameter; its variance comes from the same s^2 (J^T W J)^-1 as
 * X's and Z's.  The stations are weighed as in the 12-parameter
 * refinement (solve_refine.c): by the whitening of the per-axis noise
 * model (noise.c) at the fit, the noise re-estimated with the scale free
 * when it came from the data (the scale's one degree of freedom is not
 * charged to the noise estimate).  The test of s = 1 is z = (s - 1) / sigma with the normal
 * approximation, two-sided.  Thresholds (docs/solve.md, common practice):
 * |z| > 3 is significant (a note suggests fitting it when it was not);
 * a significant s more than 2% from 1 is a warning.
 */
#include "solve/scale_internal.h"
#include "solve/refine_internal.h"
#include "solve/pipeline_internal.h"
#include "solve/noise_internal.h"

#include <math.h>
#include <string.h>

tram_status tram__scale_report(tram_solution *sol, double s, double var, int fitted)
{
    tram_scale_result *r = &sol->sensor_scale;
    memset(r, 0, sizeof *r);
    if (!(var > 0) || !isfinite(var) || !isfinite(s)) return TRAM_OK;
    r->estimated = 1;
    r->fitted = fitted;
    r->scale = s;
    r->sigma = sqrt(var);
    r->z = (s - 1.0) / r->sigma;
    r->p_value = erfc(fabs(r->z) / sqrt(2.0));
    int significant = fabs(r->z) > TRAM__SCALE_NOTE_Z;
    if (significant && fabs(s - 1.0) > TRAM__SCALE_WARN_REL)
        return tram__diag_add(sol, "sensor-scale-far", TRAM_SEVERITY_WARNING,
                              "the sensor's lengths differ from the robot's by the factor %.5f "
                              "(%+.2f%%, 1 sigma %.2f%%), more than 2%%: check the sensor's length "
                              "unit (mm, m, in) and its model (intrinsics, depth calibration) "
                              "before using this result",
                              s, 100.0 * (s - 1.0), 100.0 * r->sigma);
    if (significant && !fitted)
        return tram__diag_add(sol, "sensor-scale-significant", TRAM_SEVERITY_INFO,
                              "the sensor's lengths fit the robot's better scaled by %.5f (1 sigma "
                              "%.5f, %.1f sigma from 1): pass --fit-scale to solve the scale with "
                              "the mount",
                              s, r->sigma, r->z);
    return TRAM_OK;
}

/* sol's uncertainty from the fit's covariance (parameter order). */
static void store_cov(const double cov[144], double cond, tram_solution *sol)
{
    for (int a = 0; a < 12; a++) {
        int q = tram__pub_param(a);
        for (int b = 0; b < 12; b++) sol->unc.cov[a * 12 + b] = cov[q * 12 + tram__pub_param(b)];
        double sd = sqrt(fmax(sol->unc.cov[a * 13], 0.0));
        sol->unc.sigma[a] = (a % 6) >= 3 ? sd * 180.0 / TRAM_PI : sd;
    }
    sol->unc.valid = 1;
    sol->condition = cond;
}

/* The station bootstrap again, the scale free in every resample. */
static tram_status rebootstrap(const tram_refine_problem *pb, const double *w,
                               const tram_solve_options *opt, tram_solution *sol)
{
    double sg[12], lo[12], hi[12];
    size_t used = 0;
    tram_status st = tram__refine_bootstrap(pb, w, &sol->X, &sol->Z, opt->bootstrap, opt->seed,
                                            opt->progress, opt->progress_ctx, sg, lo, hi, &used);
    tram__unc_store_bootstrap(&sol->unc, sg, lo, hi, st == TRAM_OK ? used : 0);
    return st == TRAM_ENOMEM ? st : TRAM_OK;
}

/* The pipeline's noise model (solve_refine.c) back from the solution:
 * per-axis sensor variances in the sensor's frame, the robot term. */
static void solution_noise(const tram_solution *sol, tram__noise *nm)
{
    memset(nm, 0, sizeof *nm);
    nm->eye_to_hand = sol->setup == TRAM_SETUP_EYE_TO_HAND;
    nm->per_axis = sol->noise_per_axis;
    nm->robot_rot_var = tram__sq(sol->robot_noise_angle_deg * TRAM_PI / 180.0);
    nm->robot_len_var = tram__sq(sol->robot_noise_length);
    for (int a = 0; a < 3; a++) {
        nm->rot_var[a] = tram__sq(sol->noise_angle_axis_deg[a] * TRAM_PI / 180.0);
        nm->len_var[a] = tram__sq(sol->noise_length_axis[a]);
    }
    for (int a = 0; a < 6; a++) nm->dof[a] = sol->noise_dof[a];
}

/* The scaled problem as a 12-parameter one at the current scale: Ss gets
 * the sensor poses with their translations times *pb->scale. */
static tram_refine_problem scaled_problem(const tram_refine_problem *pb, tram_se3 *Ss)
{
    for (size_t i = 0; i < pb->n; i++) {
        Ss[i] = pb->S[i];
        for (int k = 0; k < 3; k++) Ss[i].m[k][3] *= *pb->scale;
    }
    return (tram_refine_problem){.P = pb->P, .S = Ss, .n = pb->n, .sigma_angle = pb->sigma_angle,
                                 .sigma_length = pb->sigma_length,
                                 .length_scale = pb->length_scale, .W = pb->W};
}

/* The per-station whitening W of the noise model nm at (X, Z) and the
 * current scale, as the 12-parameter refinement weighs its stations. */
static void whiten(const tram__noise *nm, const tram_refine_problem *pb, tram_se3 *Ss,
                   const tram_se3 *X, const tram_se3 *Z, double *W)
{
    tram_refine_problem q = scaled_problem(pb, Ss);
    tram__noise_whitening(nm, &q, X, Z, W);
}

/* The per-axis noise re-estimated from the scaled fit's inlier residuals
 * (noise.c's moment equation, with the covariance of the 12 pose
 * parameters at the fitted scale), and the whitening at it; as the
 * pipeline's FGLS does for s = 1.  TRAM_ENOMEM only. */
static tram_status renoise(const tram_refine_problem *pb, const double *w, tram_se3 *Ss,
                           const tram_se3 *X, const tram_se3 *Z, tram__noise *nm, double *W)
{
    tram_refine_problem q = scaled_problem(pb, Ss);
    double C[144], cond;
    tram_status st = tram__refine_covariance(&q, w, X, Z, 1.0, C, &cond);
    if (st == TRAM_ENOMEM) return st;
    if (st != TRAM_OK) return TRAM_OK; /* keep the pipeline's noise */
    tram__noise_estimate(&q, w, X, Z, C, nm->per_axis, nm);
    tram__noise_whitening(nm, &q, X, Z, W);
    return TRAM_OK;
}

/* The noise used by the fitted scale's solve, into the solution. */
static void report_noise(const tram__noise *nm, tram_solution *sol)
{
    sol->noise_angle_deg = tram__noise_rms_rot(nm) * 180.0 / TRAM_PI;
    sol->noise_length = tram__noise_rms_len(nm);
    for (int a = 0; a < 3; a++) {
        sol->noise_angle_axis_deg[a] = sqrt(nm->rot_var[a]) * 180.0 / TRAM_PI;
        sol->noise_length_axis[a] = sqrt(nm->len_var[a]);
    }
    for (int a = 0; a < 6; a++) sol->noise_dof[a] = nm->dof[a];
}

/* Refine with the scale free from (X, Z, scale): Gauss-Newton from the
 * 12-parameter solution, which leaves the covariance (unscaled), the
 * scale's variance and the condition with *have = 1; when it does not
 * settle, LM and a polish from the same start (*have = 0). */
static tram_status refine_scaled(tram_refine_problem *pb, const double *w, tram_se3 *X,
                                 tram_se3 *Z, double cov[144], double *var, double *cond, int *have)
{
    tram_se3 X0 = *X, Z0 = *Z;
    double s0 = *pb->scale;
    tram_status st = tram__refine_settle(pb, w, 8, 1e-5, X, Z, cov, cond, var);
    *have = st == TRAM_OK;
    if (st != TRAM_ENUMERIC) return st;
    *X = X0;
    *Z = Z0;
    *pb->scale = s0;
    return tram__refine_run(pb, w, 0, X, Z);
}

/* The fit with the scale free: refined with the noise model's whitening,
 * the noise re-estimated when it came from the data and refined again;
 * its chi-square, covariance, scale variance and condition. */
static tram_status fit_scaled(tram_refine_problem *pb, const double *w, double dof,
                              tram__noise *nm, double *W, tram_se3 *Ss, int given, tram_se3 *X,
                              tram_se3 *Z, double cov[144], double *var, double *cond)
{
    whiten(nm, pb, Ss, X, Z, W);
    pb->W = W;
    int have = 0;
    tram_status st = refine_scaled(pb, w, X, Z, cov, var, cond, &have);
    /* Noise estimated from the data: re-estimated with the scale, so that
     * a large scale does not inflate the translation's weight. */
    if (st == TRAM_OK && !given && (st = renoise(pb, w, Ss, X, Z, nm, W)) == TRAM_OK)
        st = refine_scaled(pb, w, X, Z, cov, var, cond, &have);
    double chi2 = 0;
    if (st == TRAM_OK) st = tram__refine_chi2(pb, w, X, Z, &chi2);
    if (st == TRAM_OK && !have)
        st = tram__refine_covariance_scale(pb, w, X, Z, chi2 / dof, cov, cond, var, NULL);
    else if (st == TRAM_OK) { /* the last pass's covariance, scaled by chi^2 / dof */
        for (int k = 0; k < 144; k++) cov[k] *= chi2 / dof;
        *var *= chi2 / dof;
    }
    return st;
}

tram_status tram__scale_poses(const tram_se3 *P, tram_se3 *S, size_t n,
                              const tram_solve_options *opt, tram_solution *sol)
{
    size_t m = n ? n : 1;
    double *w = tram__malloc(m * 19 * sizeof *w);
    tram_se3 *Ss = tram__malloc(m * sizeof *Ss);
    if (!w || !Ss) {
        tram__free(w);
        tram__free(Ss);
        return TRAM_ENOMEM;
    }
    double *W = w + m;
    size_t nin = 0;
    for (size_t i = 0; i < n; i++) {
        w[i] = sol->stations[i].outlier ? 0.0 : 1.0;
        nin += sol->stations[i].outlier ? 0 : 1;
    }
    double s = 1.0;
    tram__noise nm;
    solution_noise(sol, &nm);
    tram_refine_problem pb = {.P = P, .S = S, .n = n, .sigma_angle = sol->noise_angle_deg * TRAM_PI / 180.0,
                              .sigma_length = sol->noise_length,
                              .length_scale = tram__length_scale(P, S, n), .scale = &s};
    tram_se3 X = sol->X, Z = sol->Z;
    double cov[144], var = NAN, cond = INFINITY;
    double dof = 6.0 * (double)nin - 13.0;
    tram_status st = TRAM_OK;
    if (dof > 0 && pb.sigma_angle > 0 && pb.sigma_length > 0)
        st = fit_scaled(&pb, w, dof, &nm, W, Ss, sol->noise_given, &X, &Z, cov, &var, &cond);
    if (st == TRAM_ENOMEM) goto out;
    if (st != TRAM_OK) var = NAN; /* the data do not determine it: not estimated */
    int fitted = opt->fit_scale && var > 0;
    if (fitted) {
        sol->X = X;
        sol->Z = Z;
        report_noise(&nm, sol);
        store_cov(cov, cond, sol);
        for (size_t i = 0; i < n; i++)
            for (int k = 0; k < 3; k++) S[i].m[k][3] *= s;
        if (opt->bootstrap > 0) {
            double s_fit = s;
            st = rebootstrap(&pb, w, opt, sol);
            s = s_fit;
            if (st != TRAM_OK) goto out;
        }
    }
    st = tram__scale_report(sol, s, var, fitted);
out:
    tram__free(w);
    tram__free(Ss);
    return st;
}
