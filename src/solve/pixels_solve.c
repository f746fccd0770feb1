/*
 * pixels_solve.c - hand-eye calibration refined on pixels.
 *
 * Model (tram/pixel_solve.h): corner m of the target, seen at station i,
 * projects to uv = project(K, X^-1 P_i^-1 Z m) with the Brown-Conrady
 * camera of tram/camera.h (Brown 1966).  The start: each station's target
 * pose from its pixels (camera/pose.c: Zhang 2000's homography or EPnP,
 * Lepetit, Moreno-Noguer & Fua 2009, then Levenberg-Marquardt), and the
 * pose pipeline of solve.c on those poses (closed forms, convention checks,
 * observability, robust refinement).  Then X and Z - and with
 * refine_intrinsics the camera, as in a joint calibration - are refined by
 * Levenberg-Marquardt (math/lm.c) on the 2 residuals (pixels) per corner,
 * with analytic Jacobians: with p = X^-1 P^-1 Z m and the perturbations
 * X = (R_X exp(w_X), t_X + d_X), Z likewise,
 *     dp/dd_X = -R_X^T,   dp/dw_X = [p]x,
 *     dp/dd_Z = R_X^T R_P^T,   dp/dw_Z = -R_X^T R_P^T R_Z [m]x.
 * Robustness: Cauchy's loss on each corner's residual in robust sigmas
 * (c = 2.3849, Holland & Welsch, Commun. Statist. A6(9), 1977) by
 * iteratively reweighted least squares; the robust sigma is the median
 * distance over sqrt(2 ln 2) = 1.1774, the median of a 2D normal's
 * distance.  A corner is flagged beyond sqrt(-2 ln(0.01 / n)) sigmas of
 * its station (a 1% family-wise rate by Bonferroni's bound; the larger of
 * the station's and the pooled robust sigma).  A station is left out when
 * it fails both sides of the station test: the pose path's (its pose
 * against the other stations' scatter, leave-one-out F test at 1%
 * family-wise, solve_refine.c) and the nested-model F test of its pixels
 * against its own pose fit (each station in its own corner noise).  The
 * final plain least squares uses the corners not flagged; Cov = s^2
 * (J^T J)^-1 with s^2 = chi^2 / (2N - p), plus a fixed camera's own
 * covariance carried through to first order (the 95% half-widths from the
 * widened sigmas); on request a station bootstrap (Efron 1979).
 */
#include "solve/pixels_solve_internal.h"
#include "solve/pixels_outliers_internal.h"
#include "camera/camera_jac_internal.h"
#include "camera/pose_internal.h"
#include "math/linalg_internal.h"
#include "math/lm_internal.h"
#include "solve/diagnose_internal.h"
#include "solve/pipeline_internal.h"
#include "math/stats_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define CAUCHY_C 2.3849

void tram_pixel_solve_options_init(tram_pixel_solve_options *opt)
{
    memset(opt, 0, sizeof *opt);
}

/* ---- the pixel refinement ---------------------------------------------- */

typedef struct pctx {
    const tram_pixel_obs *obs;
    const double *xyz;
    const size_t *ost;      /* observation -> station of the solve (SIZE_MAX: none) */
    const tram_se3 *P;      /* per station: the generic P_i                          */
    const double *w;        /* per observation weight (0: not used)                  */
    size_t *used;           /* observations with w > 0                               */
    size_t nused;
    tram_se3 X, Z;
    tram_camera cam;
    int ncam, cam_idx[TRAM__CAM_NPARAM];
} pctx;

static void apply_delta(const pctx *c, const double *d, tram_se3 *X, tram_se3 *Z, tram_camera *cam)
{
    const tram_se3 *src[2] = {&c->X, &c->Z};
    tram_se3 *dst[2] = {X, Z};
    for (int k = 0; k < 2; k++) {
        tram_mat3 R, E;
        double t[3];
        tram_se3_to_rt(src[k], &R, t);
        tram_so3_exp(d + 6 * k + 3, &E);
        tram_so3_mul(&R, &E, &R);
        for (int a = 0; a < 3; a++) t[a] += d[6 * k + a];
        tram_se3_from_rt(&R, t, dst[k]);
    }
    *cam = c->cam;
    if (c->ncam) {
        double v[TRAM__CAM_NPARAM];
        tram__camera_params(&c->cam, v);
        for (int k = 0; k < c->ncam; k++) v[c->cam_idx[k]] += d[12 + k];
        tram__camera_set_params(cam, v);
    }
}

/* The point of observation o in the sensor frame for X, Z. */
static void sensor_point(const pctx *c, size_t o, const tram_se3 *X, const tram_se3 *Z,
                         double ps[3], double b_out[3])
{
    double q[3], b[3], d[3];
    const tram_se3 *P = &c->P[c->ost[o]];
    tram_se3_apply_point(Z, c->xyz + 3 * o, q);
    for (int a = 0; a < 3; a++) d[a] = q[a] - P->m[a][3];
    for (int a = 0; a < 3; a++) b[a] = P->m[0][a] * d[0] + P->m[1][a] * d[1] + P->m[2][a] * d[2];
    for (int a = 0; a < 3; a++) d[a] = b[a] - X->m[a][3];
    for (int a = 0; a < 3; a++) ps[a] = X->m[0][a] * d[0] + X->m[1][a] * d[1] + X->m[2][a] * d[2];
    if (b_out) memcpy(b_out, b, sizeof b);
}

static int pix_eval(void *vctx, const double *delta, double *r, double *J)
{
    pctx *c = vctx;
    tram_se3 X = c->X, Z = c->Z;
    tram_camera cam = c->cam;
    if (delta) apply_delta(c, delta, &X, &Z, &cam);
    int np = 12 + c->ncam;
    for (size_t k = 0; k < c->nused; k++) {
        size_t o = c->used[k];
        double ps[3], uv[2], Jp[6], Ji[2 * TRAM__CAM_NPARAM], sw = sqrt(c->w[o]);
        sensor_point(c, o, &X, &Z, ps, NULL);
        if (!tram__camera_project_jac(&cam, ps, uv, Jp, J ? Ji : NULL)) return -1;
        r[2 * k] = sw * (uv[0] - c->obs->uv[2 * o]);
        r[2 * k + 1] = sw * (uv[1] - c->obs->uv[2 * o + 1]);
        if (!J) continue;
        /* D = d ps / d (d_X, w_X, d_Z, w_Z), 3 x 12 */
        double D[3][12];
        const tram_se3 *P = &c->P[c->ost[o]];
        double A[3][3]; /* R_X^T R_P^T */
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++) {
                double s = 0;
                for (int k2 = 0; k2 < 3; k2++) s += X.m[k2][a] * P->m[b][k2];
                A[a][b] = s;
            }
        const double *m = c->xyz + 3 * o;
        for (int a = 0; a < 3; a++) {
            for (int b = 0; b < 3; b++) {
                D[a][b] = -X.m[b][a];        /* -R_X^T */
                D[a][6 + b] = A[a][b];       /* R_X^T R_P^T */
            }
        }
        /* [ps]x */
        D[0][3] = 0;      D[0][4] = -ps[2]; D[0][5] = ps[1];
        D[1][3] = ps[2];  D[1][4] = 0;      D[1][5] = -ps[0];
        D[2][3] = -ps[1]; D[2][4] = ps[0];  D[2][5] = 0;
        for (int k2 = 0; k2 < 3; k2++) {
            double e[3] = {0, 0, 0}, ex[3], rz[3];
            e[k2] = 1;
            tram__cross3(e, m, ex);
            for (int a = 0; a < 3; a++) rz[a] = Z.m[a][0] * ex[0] + Z.m[a][1] * ex[1] + Z.m[a][2] * ex[2];
            for (int a = 0; a < 3; a++) D[a][9 + k2] = A[a][0] * rz[0] + A[a][1] * rz[1] + A[a][2] * rz[2];
        }
        for (int row = 0; row < 2; row++) {
            double *Jr = J + (2 * k + (size_t)row) * (size_t)np;
            for (int p = 0; p < 12; p++)
                Jr[p] = sw * (Jp[3 * row] * D[0][p] + Jp[3 * row + 1] * D[1][p] + Jp[3 * row + 2] * D[2][p]);
            for (int q = 0; q < c->ncam; q++) Jr[12 + q] = sw * Ji[row * TRAM__CAM_NPARAM + c->cam_idx[q]];
        }
    }
    return 0;
}

static void pix_commit(void *vctx, const double *delta)
{
    pctx *c = vctx;
    tram_se3 X, Z;
    tram_camera cam;
    apply_delta(c, delta, &X, &Z, &cam);
    c->X = X;
    c->Z = Z;
    c->cam = cam;
}

static void set_used(pctx *c)
{
    c->nused = 0;
    for (size_t o = 0; o < c->obs->n; o++)
        if (c->w[o] > 0) c->used[c->nused++] = o;
}

/* Reprojection distance of every observation (NaN for no station). */
static void distances(const pctx *c, double *res)
{
    for (size_t o = 0; o < c->obs->n; o++) {
        double ps[3], uv[2];
        if (c->ost[o] == (size_t)-1) {
            res[o] = NAN;
            continue;
        }
        sensor_point(c, o, &c->X, &c->Z, ps, NULL);
        if (!tram_camera_project(&c->cam, ps, uv)) res[o] = INFINITY;
        else res[o] = hypot(uv[0] - c->obs->uv[2 * o], uv[1] - c->obs->uv[2 * o + 1]);
    }
}

typedef struct work {
    double *w, *res, *scratch;
    int *excl;          /* per observation: flagged corner or station */
    int *st_excl;       /* per station of the solve                   */
    size_t *used;
} work;

static int lm_on(pctx *c, int iters, int *it_out)
{
    set_used(c);
    if (c->nused == 0) return -1;
    tram__lm_problem pb = {12 + c->ncam, 2 * c->nused, pix_eval, pix_commit, c};
    tram__lm_info info;
    tram_status st = tram__lm_run(&pb, iters, &info);
    if (it_out) *it_out += info.iterations;
    return st == TRAM_OK ? 0 : st == TRAM_ENOMEM ? -2 : -1;
}

/* Cauchy-weighted rounds (IRLS) over the corners not flagged. */
static int robust_rounds(pctx *c, work *wk, int *iters)
{
    size_t n = c->obs->n;
    int rc = 0;
    for (int outer = 0; outer < 6 && rc == 0; outer++) {
        distances(c, wk->res);
        double sig = tram__pixel_robust_sigma(wk->res, wk->excl, n, wk->scratch);
        for (size_t o = 0; o < n; o++) {
            double u = wk->res[o] / sig;
            wk->w[o] = wk->excl[o] || !isfinite(u) ? 0.0 : 1.0 / (1.0 + u * u / (CAUCHY_C * CAUCHY_C));
        }
        tram_se3 X0 = c->X;
        rc = lm_on(c, 30, iters);
        double ang, len;
        tram_se3_distance(&X0, &c->X, &ang, &len);
        if (ang < 1e-10 && len < 1e-10 * (1.0 + fabs(c->X.m[2][3]))) break;
    }
    return rc;
}

/* The robust rounds, the flags (pixels_outliers.c) and the final plain
 * least squares.  A station is left out when it fails both sides of the
 * station test: the pose path's (wk->st_excl on entry; solve_refine.c: its
 * leave-one-out residual against the scatter of the other stations, F test
 * at a 1% family-wise rate) and the pixel side (against its own corner
 * noise), tested after robust rounds over every station.  The first alone flags clean views whose pose errors are larger
 * than the others' (steeper or farther views), the second alone every view
 * when the robot's own errors exceed the pixel noise. */
static int refine_pixels(pctx *c, work *wk, size_t nst, int robust, const double *pose_rms, int *iters)
{
    size_t n = c->obs->n;
    for (size_t o = 0; o < n; o++) wk->excl[o] = c->ost[o] == (size_t)-1;
    if (robust) {
        int rc = robust_rounds(c, wk, iters);
        if (rc == 0) {
            distances(c, wk->res);
            if (tram__pixel_station_test(wk->res, c->ost, n, nst, pose_rms, wk->st_excl, wk->excl) > 0)
                rc = robust_rounds(c, wk, iters);
        }
        if (rc) return rc;
        distances(c, wk->res);
        tram__pixel_flag_corners(wk->res, c->ost, n, nst, wk->excl, wk->scratch);
    }
    for (size_t o = 0; o < n; o++) wk->w[o] = wk->excl[o] ? 0.0 : 1.0;
    return lm_on(c, 100, iters);
}

static void stats_of(const double *v, const int *skip, size_t n, double *scratch, tram_stats *s)
{
    size_t k = 0;
    double ss = 0, mx = 0;
    for (size_t i = 0; i < n; i++) {
        if ((skip && skip[i]) || !isfinite(v[i])) continue;
        scratch[k++] = v[i];
        ss += v[i] * v[i];
        if (v[i] > mx) mx = v[i];
    }
    s->rms = k ? sqrt(ss / (double)k) : NAN;
    s->median = k ? tram__median(scratch, k) : NAN;
    s->max = k ? mx : NAN;
}

/* The camera's share of the covariance of X, Z when it is held fixed at
 * values calibrated beforehand with covariance C (TRAM_CAM order): to
 * first order the optimum moves by dx = -(J^T J)^-1 J^T J_cam dcam, so
 * Cov(x) gains G C G^T with G = (J^T J)^-1 J^T J_cam (the propagation of
 * covariance through a least-squares estimator; Hartley & Zisserman,
 * "Multiple View Geometry", 2nd ed. 2004, ch. 5, from memory).  Hi is
 * (J^T J)^-1 of X, Z (12 x 12); the calibration's errors are taken as
 * independent of this solve's pixels (other images). */
static tram_status camera_share(const pctx *c, const double *cam_cov, const double *Hi,
                                tram_solution *sol, tram_pixel_result *pr)
{
    pctx cc = *c;
    cc.ncam = 0;
    for (int k = 0; k < TRAM__CAM_NPARAM; k++)
        if (cam_cov[k * TRAM__CAM_NPARAM + k] > 0) cc.cam_idx[cc.ncam++] = k;
    if (cc.ncam == 0) return TRAM_OK;
    int np = 12 + cc.ncam;
    double H[TRAM__LM_MAX_PARAMS * TRAM__LM_MAX_PARAMS], g[TRAM__LM_MAX_PARAMS], r2;
    tram__lm_problem pb = {np, 2 * cc.nused, pix_eval, pix_commit, &cc};
    tram_status st = tram__lm_normal(&pb, H, g, &r2);
    if (st != TRAM_OK) return st;
    double G[12 * TRAM__CAM_NPARAM], GC[12 * TRAM__CAM_NPARAM];
    for (int a = 0; a < 12; a++)
        for (int k = 0; k < cc.ncam; k++) {
            double s = 0;
            for (int b = 0; b < 12; b++) s += Hi[a * 12 + b] * H[b * np + 12 + k];
            G[a * cc.ncam + k] = s;
        }
    for (int a = 0; a < 12; a++)
        for (int k = 0; k < cc.ncam; k++) {
            double s = 0;
            for (int q = 0; q < cc.ncam; q++)
                s += G[a * cc.ncam + q] * cam_cov[cc.cam_idx[q] * TRAM__CAM_NPARAM + cc.cam_idx[k]];
            GC[a * cc.ncam + k] = s;
        }
    for (int a = 0; a < 12; a++)
        for (int b = 0; b < 12; b++) {
            double s = 0;
            for (int k = 0; k < cc.ncam; k++) s += GC[a * cc.ncam + k] * G[b * cc.ncam + k];
            sol->unc.cov[a * 12 + b] += s;
            if (a == b) {
                double v = fmax(sol->unc.cov[a * 12 + a], 0.0);
                pr->camera_share[a] = v > 0 ? fmax(s, 0.0) / v : 0.0;
                sol->unc.sigma[a] = (a % 6) >= 3 ? sqrt(v) * 180.0 / TRAM_PI : sqrt(v);
            }
        }
    pr->camera_cov_used = 1;
    return TRAM_OK;
}

/* Covariance of the pixel model into sol->unc (and the camera's sigmas);
 * cam_cov: the fixed camera's own covariance, or NULL. */
static tram_status pixel_covariance(pctx *c, work *wk, tram_solution *sol, tram_pixel_result *pr,
                                    const double *cam_cov)
{
    int np = 12 + c->ncam;
    double H[TRAM__LM_MAX_PARAMS * TRAM__LM_MAX_PARAMS], g[TRAM__LM_MAX_PARAMS], r2;
    double Hi[TRAM__LM_MAX_PARAMS * TRAM__LM_MAX_PARAMS];
    for (size_t o = 0; o < c->obs->n; o++) wk->w[o] = wk->excl[o] ? 0.0 : 1.0;
    set_used(c);
    tram__lm_problem pb = {np, 2 * c->nused, pix_eval, pix_commit, c};
    sol->unc.valid = 0;
    sol->unc.bootstrap_valid = 0; /* filled by pixel_bootstrap when asked */
    pr->sigma_px = NAN;
    if (c->nused == 0) return TRAM_OK;
    tram_status st = tram__lm_normal(&pb, H, g, &r2);
    if (st != TRAM_OK) return st == TRAM_ENOMEM ? st : TRAM_OK;
    double dof = 2.0 * (double)c->nused - (double)np;
    if (!(dof > 0)) return TRAM_OK;
    double s2 = r2 / dof;
    pr->sigma_px = sqrt(s2);
    double C[TRAM__LM_MAX_PARAMS * TRAM__LM_MAX_PARAMS], ev[TRAM__LM_MAX_PARAMS];
    double V[TRAM__LM_MAX_PARAMS * TRAM__LM_MAX_PARAMS];
    for (int a = 0; a < np; a++)
        for (int b = 0; b < np; b++) C[a * np + b] = H[a * np + b] / sqrt(H[a * np + a] * H[b * np + b]);
    st = tram__symeig(np, C, ev, V);
    if (st == TRAM_ENOMEM) return st;
    sol->condition = st == TRAM_OK && ev[0] > 0 ? sqrt(ev[np - 1] / ev[0]) : INFINITY;
    if (tram__spd_inverse(np, H, Hi) != TRAM_OK) return TRAM_OK;
    for (int a = 0; a < 12; a++) {
        double sd = sqrt(fmax(Hi[a * np + a] * s2, 0.0));
        sol->unc.sigma[a] = (a % 6) >= 3 ? sd * 180.0 / TRAM_PI : sd;
        for (int b = 0; b < 12; b++) sol->unc.cov[a * 12 + b] = Hi[a * np + b] * s2;
    }
    sol->unc.valid = 1;
    tram__unc_intervals(&sol->unc, dof);
    for (int k = 0; k < c->ncam; k++)
        pr->camera_sigma[c->cam_idx[k]] = sqrt(fmax(Hi[(12 + k) * np + 12 + k] * s2, 0.0));
    if (c->ncam == 0 && cam_cov) {
        st = camera_share(c, cam_cov, Hi, sol, pr);
        if (st == TRAM_ENOMEM) return st;
        tram__unc_intervals(&sol->unc, dof); /* the 95% half-widths of the widened sigmas */
    }
    return TRAM_OK;
}

static int cmp_dbl(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* The deviation of (X, Z) from (X0, Z0) in the public order of
 * tram_uncertainty: translations, then rotations log(R0^T R) (rad). */
static void deviation(const tram_se3 *X0, const tram_se3 *Z0, const tram_se3 *X, const tram_se3 *Z,
                      double d[12])
{
    const tram_se3 *a[2] = {X0, Z0}, *b[2] = {X, Z};
    for (int k = 0; k < 2; k++) {
        tram_mat3 R0, R, R0t, D;
        double t0[3], t[3], w[3];
        tram_se3_to_rt(a[k], &R0, t0);
        tram_se3_to_rt(b[k], &R, t);
        tram_so3_transpose(&R0, &R0t);
        tram_so3_mul(&R0t, &R, &D);
        tram_so3_log(&D, w);
        for (int q = 0; q < 3; q++) {
            d[6 * k + q] = t[q] - t0[q];
            d[6 * k + 3 + q] = w[q];
        }
    }
}

/* The station bootstrap of the pixel fit (Efron 1979, "Bootstrap methods:
 * another look at the jackknife", Ann. Statist. 7(1)): the stations kept
 * by the outlier rules are drawn with replacement (seeded splitmix64), each
 * corner weighted by its station's count, and X, Z (and a freed camera)
 * refitted from the solution; the sigma and the 2.5 / 97.5 percentiles of
 * the deviations go into sol->unc.bootstrap_*.  It resamples the views, so
 * it does not include a fixed camera's own calibration error. */
static tram_status pixel_bootstrap(pctx *c, work *wk, size_t nst, const tram_solve_options *opt,
                                   tram_solution *sol)
{
    size_t B = opt->bootstrap, n = c->obs->n, nin = 0, good = 0;
    size_t *in = tram__malloc((nst ? nst : 1) * sizeof *in);
    double *mult = tram__malloc((nst ? nst : 1) * sizeof *mult);
    double *dev = tram__malloc(B * 12 * sizeof *dev), *col = tram__malloc(B * sizeof *col);
    tram_status st = TRAM_OK;
    if (!in || !mult || !dev || !col) st = TRAM_ENOMEM;
    for (size_t i = 0; st == TRAM_OK && i < nst; i++) {
        int any = 0;
        for (size_t o = 0; o < n && !any; o++) any = c->ost[o] == i && !wk->excl[o];
        if (any) in[nin++] = i;
    }
    unsigned long long state = opt->seed;
    for (size_t b = 0; st == TRAM_OK && b < B; b++) {
        memset(mult, 0, nst * sizeof *mult);
        size_t distinct = 0;
        for (size_t j = 0; j < nin; j++) {
            size_t pick = in[tram__splitmix64(&state) % nin];
            distinct += mult[pick] == 0;
            mult[pick] += 1.0;
        }
        if (opt->progress) opt->progress(opt->progress_ctx, "bootstrap", b + 1, B);
        if (distinct < 3) continue;
        for (size_t o = 0; o < n; o++) wk->w[o] = wk->excl[o] ? 0.0 : mult[c->ost[o]];
        pctx cb = *c;
        int rc = lm_on(&cb, 30, NULL);
        if (rc == -2) st = TRAM_ENOMEM;
        if (rc) continue;
        deviation(&c->X, &c->Z, &cb.X, &cb.Z, dev + 12 * good);
        good++;
    }
    for (int a = 0; st == TRAM_OK && good > 1 && a < 12; a++) {
        double m = 0, v = 0, f = (a % 6) >= 3 ? 180.0 / TRAM_PI : 1.0;
        for (size_t b = 0; b < good; b++) m += dev[12 * b + (size_t)a];
        m /= (double)good;
        for (size_t b = 0; b < good; b++) v += tram__sq(dev[12 * b + (size_t)a] - m);
        for (size_t b = 0; b < good; b++) col[b] = dev[12 * b + (size_t)a];
        qsort(col, good, sizeof *col, cmp_dbl);
        sol->unc.bootstrap_sigma[a] = sqrt(v / (double)(good - 1)) * f;
        sol->unc.bootstrap_lo[a] = col[(size_t)(0.025 * (double)(good - 1))] * f;
        sol->unc.bootstrap_hi[a] = col[(size_t)(0.975 * (double)(good - 1) + 0.5)] * f;
    }
    if (st == TRAM_OK && good > 1) {
        sol->unc.bootstrap_valid = 1;
        sol->unc.bootstrap_used = good;
    }
    for (size_t o = 0; o < n; o++) wk->w[o] = wk->excl[o] ? 0.0 : 1.0;
    set_used(c);
    tram__free(in);
    tram__free(mult);
    tram__free(dev);
    tram__free(col);
    return st;
}

/* Says whether the intervals of X include the fixed camera's own error. */
static tram_status camera_note(tram_solution *sol, const tram_pixel_result *pr)
{
    if (!pr->camera_cov_used)
        return tram__diag_add(sol, "camera-taken-as-exact", TRAM_SEVERITY_INFO,
                              "the camera is taken as exact (no calibration uncertainty given): the "
                              "intervals of X and Z leave out the error of its intrinsics, which "
                              "often dominates; give the camera file from tram intrinsics, or "
                              "--refine-intrinsics");
    double t = 0, rr = 0;
    for (int a = 0; a < 3; a++) {
        t = fmax(t, pr->camera_share[a]);
        rr = fmax(rr, pr->camera_share[3 + a]);
    }
    return tram__diag_add(sol, "camera-uncertainty", TRAM_SEVERITY_INFO,
                          "the intervals of X and Z include the camera's calibration uncertainty "
                          "(first-order propagation): it makes up to %.0f%% of the variance of X's "
                          "translation and %.0f%% of its rotation",
                          100.0 * t, 100.0 * rr);
}

/* Observed stations of r: each observation's station in r, or an error. */
static tram_status map_stations(const tram_records *r, const tram_pixel_obs *obs, size_t *obs_r,
                                tram_error *err)
{
    for (size_t s = 0; s < obs->nstations; s++) {
        size_t i;
        for (i = 0; i < r->count; i++)
            if (strcmp(r->stations[i].id, obs->station_id[s]) == 0) break;
        if (i == r->count) {
            long line = 0;
            for (size_t o = 0; o < obs->n && !line; o++)
                if (obs->station[o] == s) line = obs->line[o];
            return tram__fail(err, TRAM_EINPUT, obs->source, line, 0,
                              "station '%s' has pixels but no robot pose in %s: expected a "
                              "station id of the record file",
                              obs->station_id[s], r->source);
        }
        for (size_t o = 0; o < obs->n; o++)
            if (obs->station[o] == s) obs_r[o] = i;
    }
    return TRAM_OK;
}

/* Each kept station's target pose from its own pixels. */
static tram_status station_poses(const tram_camera *cam, const tram_pixel_obs *obs,
                                 const double *xyz, const size_t *ost, tram_records *rr,
                                 double *pose_rms, tram_error *err)
{
    size_t n = obs->n;
    double *pxyz = tram__malloc((n ? n : 1) * 3 * sizeof *pxyz), *puv = tram__malloc((n ? n : 1) * 2 * sizeof *puv);
    tram_status st = TRAM_OK;
    if (!pxyz || !puv) st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    for (size_t j = 0; st == TRAM_OK && j < rr->count; j++) {
        size_t k = 0;
        for (size_t o = 0; o < n; o++)
            if (ost[o] == j) {
                memcpy(pxyz + 3 * k, xyz + 3 * o, 3 * sizeof *pxyz);
                memcpy(puv + 2 * k, obs->uv + 2 * o, 2 * sizeof *puv);
                k++;
            }
        tram_pose_result pr;
        tram_error e;
        tram_status ps = tram_pose_from_pixels(cam, pxyz, puv, k, &pr, &e);
        if (ps == TRAM_ENOMEM) st = tram__fail(err, ps, NULL, 0, 0, "out of memory");
        else if (ps != TRAM_OK)
            st = tram__fail(err, TRAM_EUNDETERMINED, obs->source, 0, 0,
                            "station '%s': no target pose from its %zu corner(s): %s",
                            rr->stations[j].id, k, e.message);
        else {
            rr->stations[j].T_sensor_target = pr.T_sensor_target;
            pose_rms[j] = pr.rms_px;
        }
    }
    tram__free(pxyz);
    tram__free(puv);
    return st;
}

/* Per-station results, residual statistics and notes into sol and pr. */
static tram_status fill_results(pctx *c, work *wk, const tram_records *rr, const tram_se3 *P,
                                tram_solution *sol, tram_pixel_result *pr)
{
    size_t n = c->obs->n, nst = rr->count;
    distances(c, wk->res);
    memcpy(pr->residual_px, wk->res, n * sizeof *wk->res);
    for (size_t o = 0; o < n; o++) pr->excluded[o] = wk->excl[o] != 0;
    double *acc = tram__calloc(2 * (nst ? nst : 1), sizeof *acc);
    if (!acc) return TRAM_ENOMEM;
    pr->n_corner_outliers = 0;
    for (size_t o = 0; o < n; o++) {
        if (wk->excl[o] == 2) pr->n_corner_outliers++;
        if (c->ost[o] == (size_t)-1) continue;
        pr->nobs_station[c->ost[o]]++;
        if (wk->excl[o]) continue;
        pr->nused_station[c->ost[o]]++;
        acc[2 * c->ost[o]] += wk->res[o] * wk->res[o];
        acc[2 * c->ost[o] + 1] += 1;
    }
    pr->n_station_outliers = 0;
    for (size_t i = 0; i < nst; i++) {
        pr->station_rms_px[i] = acc[2 * i + 1] > 0 ? sqrt(acc[2 * i] / acc[2 * i + 1]) : NAN;
        pr->station_excluded[i] = wk->st_excl[i];
        pr->n_station_outliers += (size_t)wk->st_excl[i];
    }
    tram__free(acc);
    stats_of(wk->res, wk->excl, n, wk->scratch, &pr->px);
    /* The station pose residuals against the pixel solution. */
    double *rot = tram__malloc((nst ? nst : 1) * 2 * sizeof *rot);
    int *skip = tram__malloc((nst ? nst : 1) * sizeof *skip);
    if (!rot || !skip) {
        tram__free(rot);
        tram__free(skip);
        return TRAM_ENOMEM;
    }
    sol->n_outliers = 0;
    for (size_t i = 0; i < nst; i++) {
        double ra, tr;
        tram_handeye_residuals(&P[i], &rr->stations[i].T_sensor_target, 1, &c->X, &c->Z, &ra, &tr);
        sol->stations[i].rot_deg = ra * 180.0 / TRAM_PI;
        sol->stations[i].trans = tr;
        sol->stations[i].outlier = wk->st_excl[i];
        sol->n_outliers += (size_t)wk->st_excl[i];
        rot[i] = sol->stations[i].rot_deg;
        rot[nst + i] = tr;
        skip[i] = wk->st_excl[i];
    }
    stats_of(rot, skip, nst, wk->scratch, &sol->rot_deg);
    stats_of(rot + nst, skip, nst, wk->scratch, &sol->trans);
    tram__free(rot);
    tram__free(skip);
    sol->X = c->X;
    sol->Z = c->Z;
    pr->camera = c->cam;
    return TRAM_OK;
}

static tram_status check_inputs(const tram_records *r, tram_setup setup, const tram_camera *cam,
                                const tram_pixel_obs *obs, tram_error *err)
{
    if (setup == TRAM_SETUP_UNSET)
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          "no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass --setup");
    if (!r->has_block[TRAM_BLOCK_ROBOT] && !r->robot_from_chain)
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          r->n_joints ? "the record file gives joint readings: pass --chain FILE"
                                      : "solving from pixels needs the robot poses (robot_ columns)");
    if (cam->width && cam->height && (cam->width != obs->width || cam->height != obs->height))
        return tram__fail(err, TRAM_EINPUT, obs->source, obs->image_size_line, 0,
                          "image size %zux%zu, but the camera was calibrated for %zux%zu images",
                          obs->width, obs->height, cam->width, cam->height);
    if (obs->n == 0)
        return tram__fail(err, TRAM_EINPUT, obs->source, 0, 0, "no pixel observations");
    return TRAM_OK;
}

/* Keep the observed stations of r in rr, in the records' order: keep[i] gets
 * the index in rr of record station i (or (size_t)-1), ost[o] the rr station
 * of observation o.  Returns the number kept. */
static size_t keep_observed(const tram_records *r, const tram_pixel_obs *obs, const size_t *obs_r,
                            tram_records *rr, size_t *keep, size_t *ost)
{
    size_t n = obs->n, nr = r->count;
    size_t nk = 0;
    for (size_t i = 0; i < nr; i++) keep[i] = (size_t)-1;
    for (size_t o = 0; o < n; o++) keep[obs_r[o]] = 0;
    for (size_t i = 0; i < nr; i++)
        if (keep[i] == 0) {
            rr->stations[nk] = r->stations[i];
            keep[i] = nk++;
        }
    rr->count = nk;
    for (size_t o = 0; o < n; o++) ost[o] = keep[obs_r[o]];
    return nk;
}

/* The refinement of a solved pose-path result sol on the reprojection error
 * of the nk stations' corners, its uncertainty, and its diagnostics. */
static tram_status refine_on_pixels(const tram_pixel_obs *obs, const double *xyz,
                                    const size_t *ost, const tram_se3 *P, const tram_camera *cam,
                                    const tram_solve_options *opt,
                                    const tram_pixel_solve_options *popt, work *wk, size_t nk,
                                    const tram_records *rr, tram_solution *sol,
                                    tram_pixel_result *pr, tram_error *err)
{
    size_t n = obs->n;
    pctx c;
    memset(&c, 0, sizeof c);
    c.obs = obs;
    c.xyz = xyz;
    c.ost = ost;
    c.P = P;
    c.w = wk->w;
    c.used = wk->used;
    c.X = sol->X;
    c.Z = sol->Z;
    c.cam = *cam;
    if (popt && popt->refine_intrinsics && opt->refine) {
        c.ncam = tram__camera_free_params(cam, c.cam_idx);
        if (popt->free_skew) c.cam_idx[c.ncam++] = TRAM_CAM_SKEW;
    }
    for (size_t i = 0; i < nk; i++) wk->st_excl[i] = opt->robust && sol->stations[i].outlier;
    int rc = 0;
    if (opt->refine) rc = refine_pixels(&c, wk, nk, opt->robust, pr->pose_rms_px, &pr->iterations);
    else
        for (size_t o = 0; o < n; o++) wk->excl[o] = 0;
    if (rc == -2) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    if (rc != 0)
        return tram__fail(err, TRAM_EUNDETERMINED, obs->source, 0, 0,
                          "the refinement on pixels put target corners behind the camera: "
                          "the views or the robot poses do not fit the target");
    pr->intrinsics_refined = c.ncam > 0;
    if (fill_results(&c, wk, rr, P, sol, pr) != TRAM_OK) goto nomem;
    if (opt->refine && pixel_covariance(&c, wk, sol, pr, popt ? popt->camera_cov : NULL) != TRAM_OK)
        goto nomem;
    if (opt->refine && opt->bootstrap > 0 && pixel_bootstrap(&c, wk, nk, opt, sol) != TRAM_OK)
        goto nomem;
    sol->refined = sol->refined || opt->refine;
    if (opt->refine && sol->unc.valid && c.ncam == 0 && camera_note(sol, pr) != TRAM_OK) goto nomem;
    if (tram__diag_add(sol, "pixel-refinement", TRAM_SEVERITY_INFO,
                       "refined on the reprojection error of %zu corner(s) of %zu station(s): "
                       "RMS %.4g px; %zu corner(s) and %zu station(s) flagged and left out%s",
                       n - pr->n_corner_outliers, nk - pr->n_station_outliers, pr->px.rms,
                       pr->n_corner_outliers, pr->n_station_outliers,
                       pr->intrinsics_refined ? "; the camera's intrinsics were refined too" : "") != TRAM_OK)
        goto nomem;
    if (pr->n_station_outliers * 3 > nk &&
        tram__diag_add(sol, "many-pixel-outliers", TRAM_SEVERITY_WARNING,
                       "%zu of %zu stations do not fit the others on pixels: check the robot "
                       "poses, the camera file and the board before using this result",
                       pr->n_station_outliers, nk) != TRAM_OK)
        goto nomem;
    return TRAM_OK;
nomem:
    return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
}

tram_status tram_solve_pixels(const tram_records *r, tram_setup setup, const tram_camera *cam,
                              const tram_pixel_obs *obs, const double *xyz,
                              const tram_solve_options *opt_in,
                              const tram_pixel_solve_options *popt, tram_solution **out,
                              tram_error *err)
{
    *out = NULL;
    tram_status tool_st = tram_records_require_flange(r, err);
    if (tool_st != TRAM_OK) return tool_st;
    tram_solve_options defaults;
    tram_solve_options_init(&defaults);
    const tram_solve_options *opt = opt_in ? opt_in : &defaults;
    tram_status st = check_inputs(r, setup, cam, obs, err);
    if (st != TRAM_OK) return st;
    size_t n = obs->n, nr = r->count;
    size_t *obs_r = tram__malloc(n * sizeof *obs_r), *keep = tram__malloc((nr ? nr : 1) * sizeof *keep);
    size_t *ost = tram__malloc(n * sizeof *ost);
    tram_records *rr = tram_records_clone(r);
    tram_se3 *P = tram__malloc((nr ? nr : 1) * sizeof *P);
    double *pose_rms = tram__malloc((nr ? nr : 1) * sizeof *pose_rms);
    work wk = {tram__malloc(n * sizeof(double)), tram__malloc(n * sizeof(double)),
               tram__malloc((2 * n + 2 * nr + 2) * sizeof(double)), tram__malloc(n * sizeof(int)),
               tram__calloc(nr ? nr : 1, sizeof(int)), tram__malloc(n * sizeof(size_t))};
    tram_solution *sol = NULL;
    tram_pixel_result *pr = NULL;
    if (!obs_r || !keep || !ost || !rr || !P || !pose_rms || !wk.w || !wk.res || !wk.scratch ||
        !wk.excl || !wk.st_excl || !wk.used) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    if ((st = map_stations(r, obs, obs_r, err)) != TRAM_OK) goto out;
    size_t nk = keep_observed(r, obs, obs_r, rr, keep, ost);
    rr->has_block[TRAM_BLOCK_SENSOR] = 1;
    rr->sensor_from_points = 1; /* no raw sensor numbers to re-read */
    if ((st = station_poses(cam, obs, xyz, ost, rr, pose_rms, err)) != TRAM_OK) goto out;
    tram_solve_options inner = *opt;
    inner.bootstrap = 0; /* the pose path's bootstrap would not describe the pixel fit */
    st = tram_solve(rr, setup, &inner, &sol, err);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) goto out;
    if (tram__pixel_result_alloc(nk, n, &pr) != TRAM_OK) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    memcpy(pr->pose_rms_px, pose_rms, nk * sizeof *pose_rms);
    tram__pixel_result_inputs(pr, obs, popt);
    for (size_t i = 0; i < nk; i++) {
        if (setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(&rr->stations[i].T_base_flange, &P[i]);
        else P[i] = rr->stations[i].T_base_flange;
    }
    if (sol->solved) {
        tram_status rst =
            refine_on_pixels(obs, xyz, ost, P, cam, opt, popt, &wk, nk, rr, sol, pr, err);
        if (rst != TRAM_OK) {
            st = rst;
            goto out;
        }
    }
    if (nk < nr &&
        tram__diag_add(sol, "stations-without-pixels", TRAM_SEVERITY_INFO,
                       "%zu station(s) of %s have no pixels in %s and were left out", nr - nk,
                       r->source, obs->source) != TRAM_OK)
        goto nomem;
    sol->pixels = pr;
    pr = NULL;
    if (tram__pixel_result_expand(sol, r, keep) != TRAM_OK) goto nomem;
    goto out;
nomem:
    st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
out:
    tram__pixel_result_free(pr);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) {
        tram_solution_destroy(sol);
        sol = NULL;
    }
    if (st == TRAM_EUNDETERMINED && sol && !sol->pixels) {
        tram_solution_destroy(sol); /* a view without a pose: nothing to report */
        sol = NULL;
    }
    *out = sol;
    tram__free(obs_r);
    tram__free(keep);
    tram__free(ost);
    tram_records_destroy(rr);
    tram__free(P);
    tram__free(pose_rms);
    tram__free(wk.w);
    tram__free(wk.res);
    tram__free(wk.scratch);
    tram__free(wk.excl);
    tram__free(wk.st_excl);
    tram__free(wk.used);
    return st;
}
