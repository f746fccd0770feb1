/*
 * scale.c - the sensor's length scale: one factor s by which the sensor's
 * lengths differ from the robot's (a 3D camera's depth calibration, a
 * wrong unit or sensor model).  With s free, P_i X S_i(s) = Z is the
 * similarity form of the hand-eye problem: S_i(s) has the rotation of S_i
 * and s times its translation, as in Umeyama's registration with scale
 * (IEEE Trans. PAMI 13(4), 1991).  The refinement (refine.c) carries s as
 * a 13th parameter; its variance comes from the same s^2 (J^T W J)^-1 as
 * X's and Z's.  The test of s = 1 is z = (s - 1) / sigma with the normal
 * approximation, two-sided.  Thresholds (docs/solve.md, common practice):
 * |z| > 3 is significant (a note suggests fitting it when it was not);
 * a significant s more than 2% from 1 is a warning.
 */
#include "solve/scale_internal.h"
#include "solve/refine_internal.h"
#include "solve/pipeline_internal.h"

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

/* The per-axis noise of the scaled fit's inlier residuals into pb (as the
 * pipeline's last step does for s = 1, with the scale charged to the
 * translation); TRAM_ENOMEM only. */
static tram_status renoise(tram_refine_problem *pb, const double *w, size_t nin,
                           const tram_se3 *X, const tram_se3 *Z)
{
    size_t n = pb->n;
    tram_se3 *Ss = tram__malloc((n ? n : 1) * sizeof *Ss);
    double *rot = tram__malloc((n ? n : 1) * 2 * sizeof *rot);
    if (!Ss || !rot) {
        tram__free(Ss);
        tram__free(rot);
        return TRAM_ENOMEM;
    }
    for (size_t i = 0; i < n; i++) {
        Ss[i] = pb->S[i];
        for (int k = 0; k < 3; k++) Ss[i].m[k][3] *= *pb->scale;
    }
    tram_handeye_residuals(pb->P, Ss, n, X, Z, rot, rot + n);
    double sr = 0, stt = 0;
    for (size_t i = 0; i < n; i++)
        if (w[i] > 0) {
            sr += rot[i] * rot[i];
            stt += rot[n + i] * rot[n + i];
        }
    pb->sigma_angle = sqrt(sr / (double)(3 * nin - 6));
    pb->sigma_length = sqrt(stt / (double)(3 * nin - 7));
    tram__floor_noise(&pb->sigma_angle, &pb->sigma_length, pb->length_scale);
    tram__free(Ss);
    tram__free(rot);
    return TRAM_OK;
}

tram_status tram__scale_poses(const tram_se3 *P, tram_se3 *S, size_t n,
                              const tram_solve_options *opt, tram_solution *sol)
{
    double *w = tram__malloc((n ? n : 1) * sizeof *w);
    if (!w) return TRAM_ENOMEM;
    size_t nin = 0;
    for (size_t i = 0; i < n; i++) {
        w[i] = sol->stations[i].outlier ? 0.0 : 1.0;
        nin += sol->stations[i].outlier ? 0 : 1;
    }
    double s = 1.0;
    tram_refine_problem pb = {.P = P, .S = S, .n = n, .sigma_angle = sol->noise_angle_deg * TRAM_PI / 180.0,
                              .sigma_length = sol->noise_length,
                              .length_scale = tram__length_scale(P, S, n), .scale = &s};
    tram_se3 X = sol->X, Z = sol->Z;
    double chi2 = 0, cov[144], var = NAN, cond = INFINITY;
    double dof = 6.0 * (double)nin - 13.0;
    tram_status st = TRAM_OK;
    if (dof > 0 && pb.sigma_angle > 0 && pb.sigma_length > 0) {
        st = tram__refine_run(&pb, w, 0, &X, &Z);
        /* Noise estimated from the data: re-estimated with the scale, so
         * that a large scale does not inflate the translation's weight. */
        if (st == TRAM_OK && !sol->noise_given && (st = renoise(&pb, w, nin, &X, &Z)) == TRAM_OK)
            st = tram__refine_run(&pb, w, 0, &X, &Z);
        if (st == TRAM_OK) st = tram__refine_chi2(&pb, w, &X, &Z, &chi2);
        if (st == TRAM_OK)
            st = tram__refine_covariance_scale(&pb, w, &X, &Z, chi2 / dof, cov, &cond, &var, NULL);
    }
    if (st == TRAM_ENOMEM) goto out;
    if (st != TRAM_OK) var = NAN; /* the data do not determine it: not estimated */
    int fitted = opt->fit_scale && var > 0;
    if (fitted) {
        sol->X = X;
        sol->Z = Z;
        sol->noise_angle_deg = pb.sigma_angle * 180.0 / TRAM_PI;
        sol->noise_length = pb.sigma_length;
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
    return st;
}
