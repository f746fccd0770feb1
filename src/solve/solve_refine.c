/*
 * solve_refine.c - the refinement stage of the solve pipeline (solve.c):
 * robust start, feasible generalised least squares with the noise model
 * of noise.c, the per-station outlier test, and the uncertainty with
 * Student-t intervals.
 *
 *  1. Robust start: Cauchy-weighted refinement (refine.c) with isotropic
 *     noise from the medians of the residual norms (median / sqrt(2.366),
 *     the median of a chi-square with 3 degrees of freedom), twice.
 *     Candidate outliers: a rotation or translation residual above
 *     sqrt(chi2_3(0.9999)) = 4.59 such robust sigmas (a median rule in the
 *     spirit of Hampel's, J. Am. Statist. Assoc. 69(346), 1974).
 *  2. Feasible GLS on the stations kept: refine with the whitening of the
 *     noise model, re-estimate the noise (per axis in the sensor's frame
 *     from TRAM__NOISE_PER_AXIS_MIN stations, else pooled over the axes),
 *     until the variances settle (noise.c).
 *  3. Outlier test: each station's chi-square T_i (6 dof) of its
 *     leave-one-out residual (kept stations) or prediction error (left-out
 *     stations), as F = T_i / 6 against the F(6, nu) quantile at
 *     1 - 0.01 / n: Bonferroni's bound keeps the rate of honest files with
 *     any flag at 1% (nu: the harmonic mean of the noise estimates' degrees
 *     of freedom).  Candidates that pass come back; stations that fail are
 *     left out; steps 2-3 repeat until the flags settle.
 *  4. Covariance (J^T W J)^-1 with Kenward & Roger's adjustment for the
 *     estimated noise; 95% intervals sigma * t_0.975(nu_k), nu_k the
 *     degrees of freedom of parameter k (noise.c).  With the noise given,
 *     the covariance is scaled by chi^2 / (6 m - 12) and nu_k = 6 m - 12
 *     (m stations kept).
 */
#include "solve/solve_refine_internal.h"
#include "solve/noise_internal.h"
#include "solve/pipeline_internal.h"
#include "math/stats_internal.h"

#include <math.h>
#include <string.h>

#define OUTLIER_K 4.5943     /* sqrt(21.1075), the 0.9999 quantile of chi-square(3) */
#define FAMILY_ALPHA 0.01    /* rate of honest files with any station flagged */
#define FGLS_MAX_ROUNDS 60
#define FGLS_VAR_TOL 1e-6    /* relative change of every variance (sigmas: 5e-7) */
#define FGLS_PARAM_TOL 1e-3  /* change of every parameter, in its sigmas */
#define SETTLE_TOL 1e-5      /* a refit's last Gauss-Newton step, in sigmas */
#define SETTLE_STEPS 8
#define FLAG_MAX_ROUNDS 6

typedef struct fit {
    const tram_solve_options *opt;
    tram_refine_problem pb;
    tram__noise nm;
    double *W, *w, *T, *rot, *tr;
    int *flag, *cand;
    size_t n, nin;
    int given, have_C;
    double C[144], cond; /* (J^T W J)^-1 at the last refit, its condition */
} fit;

/* The noise the caller gave (per axis, or one value for the three axes),
 * and the robot term; 1 when the sensor noise is given. */
static int given_noise(const tram_solve_options *opt, tram_setup setup, tram__noise *nm)
{
    memset(nm, 0, sizeof *nm);
    nm->eye_to_hand = setup == TRAM_SETUP_EYE_TO_HAND;
    nm->robot_rot_var = tram__sq(opt->robot_noise_angle_rad);
    nm->robot_len_var = tram__sq(opt->robot_noise_length);
    int axes = 1;
    for (int a = 0; a < 3; a++)
        axes = axes && opt->noise_length_axis[a] > 0 && opt->noise_angle_axis_rad[a] > 0;
    for (int a = 0; a < 3; a++) {
        nm->rot_var[a] = tram__sq(axes ? opt->noise_angle_axis_rad[a] : opt->noise_angle_rad);
        nm->len_var[a] = tram__sq(axes ? opt->noise_length_axis[a] : opt->noise_length);
        nm->dof[a] = nm->dof[3 + a] = INFINITY;
    }
    nm->per_axis = axes ? TRAM__NOISE_PER_AXIS : TRAM__NOISE_POOLED;
    return axes || (opt->noise_angle_rad > 0 && opt->noise_length > 0);
}

static tram_status fit_alloc(fit *f, size_t n)
{
    size_t m = n ? n : 1;
    f->W = tram__malloc(m * 22 * sizeof *f->W);
    f->flag = tram__calloc(2 * m, sizeof *f->flag);
    if (!f->W || !f->flag) {
        tram__free(f->W);
        tram__free(f->flag);
        return TRAM_ENOMEM;
    }
    f->w = f->W + 18 * m;
    f->T = f->w + m;
    f->rot = f->T + m;
    f->tr = f->rot + m;
    f->cand = f->flag + m;
    return TRAM_OK;
}

/* Isotropic robust noise from the residual norms at (X, Z). */
static void robust_noise(fit *f, const tram_se3 *X, const tram_se3 *Z)
{
    tram_handeye_residuals(f->pb.P, f->pb.S, f->n, X, Z, f->rot, f->tr);
    double sa = tram__robust_sigma3(f->rot, f->n), sl = tram__robust_sigma3(f->tr, f->n);
    tram__floor_noise(&sa, &sl, f->pb.length_scale);
    f->pb.sigma_angle = sa;
    f->pb.sigma_length = sl;
    for (int a = 0; a < 3; a++) {
        f->nm.rot_var[a] = sa * sa;
        f->nm.len_var[a] = sl * sl;
    }
}

static void mark_candidates(const double *x, size_t n, double floor_abs, int *flag)
{
    double sigma = tram__robust_sigma3(x, n);
    for (size_t i = 0; i < n; i++)
        if (x[i] > OUTLIER_K * sigma && x[i] > floor_abs) flag[i] = 1;
}

/* Step 1: the robust start and the candidate outliers. */
static tram_status robust_start(fit *f, tram_se3 *X, tram_se3 *Z)
{
    tram_status st = TRAM_OK;
    int robust = f->opt->robust;
    for (int round = 0; round < 2 && st == TRAM_OK; round++) {
        if (f->given) {
            tram__noise_whitening(&f->nm, &f->pb, X, Z, f->W);
            f->pb.W = f->W;
        } else {
            robust_noise(f, X, Z);
        }
        st = tram__refine_run(&f->pb, NULL, robust, X, Z);
        if (!robust) break;
    }
    if (!f->given) robust_noise(f, X, Z);
    else tram_handeye_residuals(f->pb.P, f->pb.S, f->n, X, Z, f->rot, f->tr);
    memset(f->cand, 0, f->n * sizeof *f->cand);
    if (st == TRAM_OK && robust) {
        mark_candidates(f->rot, f->n, 1e-9, f->cand);
        mark_candidates(f->tr, f->n, 1e-9 * f->pb.length_scale, f->cand);
    }
    return st;
}

/* (J^T W J)^-1 at (X, Z) into f->C (parameter order, unscaled). */
static tram_status fit_cov(fit *f, const tram_se3 *X, const tram_se3 *Z, double *cond)
{
    double c;
    return tram__refine_covariance(&f->pb, f->w, X, Z, 1.0, f->C, cond ? cond : &c);
}

static double rel_change(const tram__noise *a, const tram__noise *b)
{
    double m = 0;
    for (int k = 0; k < 3; k++) {
        m = fmax(m, fabs(a->rot_var[k] - b->rot_var[k]) / b->rot_var[k]);
        m = fmax(m, fabs(a->len_var[k] - b->len_var[k]) / b->len_var[k]);
    }
    return m;
}

/* Least squares with the current whitening, settled to rounding level,
 * and its covariance into f->C.  From the previous fit (weights changed
 * a little) Gauss-Newton settles in 2-3 normal-equation passes, the last
 * one's J^T W J giving the covariance; when it does not settle, LM from
 * the same start, a polish and a separate covariance. */
static tram_status refit(fit *f, tram_se3 *X, tram_se3 *Z)
{
    tram_se3 X0 = *X, Z0 = *Z;
    f->have_C = 0;
    tram_status st = tram__refine_settle(&f->pb, f->w, SETTLE_STEPS, SETTLE_TOL, X, Z, f->C, &f->cond,
                                         NULL);
    if (st == TRAM_ENUMERIC) {
        *X = X0;
        *Z = Z0;
        st = tram__refine_run(&f->pb, f->w, 0, X, Z); /* ends with a polish */
        if (st == TRAM_OK) st = fit_cov(f, X, Z, &f->cond);
    }
    f->have_C = st == TRAM_OK;
    return st;
}

/* The largest change of a parameter from (X0, Z0) to (X, Z), in its
 * standard deviations (f->C; the parameterisation of refine.c). */
static double param_change(const fit *f, const tram_se3 *X0, const tram_se3 *Z0,
                           const tram_se3 *X, const tram_se3 *Z)
{
    double d[12], m = 0;
    const tram_se3 *a[2] = {X0, Z0}, *b[2] = {X, Z};
    for (int k = 0; k < 2; k++) {
        tram_mat3 Ra, Rb, Rt, D;
        double ta[3], tb[3];
        tram_se3_to_rt(a[k], &Ra, ta);
        tram_se3_to_rt(b[k], &Rb, tb);
        tram_so3_transpose(&Ra, &Rt);
        tram_so3_mul(&Rt, &Rb, &D);
        tram_so3_log(&D, d + 6 * k);
        for (int i = 0; i < 3; i++) d[6 * k + 3 + i] = tb[i] - ta[i];
    }
    for (int p = 0; p < 12; p++) {
        double sd = sqrt(f->C[p * 12 + p]);
        m = fmax(m, sd > 0 ? fabs(d[p]) / sd : INFINITY);
    }
    return m;
}

/* Step 2: feasible GLS on the stations with w > 0. */
static tram_status fgls(fit *f, tram_se3 *X, tram_se3 *Z)
{
    f->pb.W = f->W;
    int per_axis = f->nin >= TRAM__NOISE_PER_AXIS_MIN ? TRAM__NOISE_PER_AXIS
                   : f->nin >= TRAM__NOISE_DEPTH_MIN   ? TRAM__NOISE_DEPTH
                                                       : TRAM__NOISE_POOLED;
    tram_status st = TRAM_OK;
    tram__noise_whitening(&f->nm, &f->pb, X, Z, f->W);
    if ((st = refit(f, X, Z)) != TRAM_OK) return st;
    /* until the variances and the parameters settle: a further round
     * would move them by under FGLS_VAR_TOL and FGLS_PARAM_TOL sigma */
    for (int round = 0; !f->given && round < FGLS_MAX_ROUNDS; round++) {
        tram__noise prev = f->nm;
        tram_se3 X0 = *X, Z0 = *Z;
        tram__noise_estimate(&f->pb, f->w, X, Z, f->C, per_axis, &f->nm);
        tram__noise_whitening(&f->nm, &f->pb, X, Z, f->W);
        if ((st = refit(f, X, Z)) != TRAM_OK) return st;
        if (rel_change(&f->nm, &prev) < FGLS_VAR_TOL && param_change(f, &X0, &Z0, X, Z) < FGLS_PARAM_TOL)
            break;
    }
    return TRAM_OK;
}

static void set_weights(fit *f, const int *flag)
{
    size_t nout = 0;
    for (size_t i = 0; i < f->n; i++) nout += (size_t)(flag[i] != 0);
    int keep_all = f->n - nout < 3; /* too few left: keep all */
    f->nin = 0;
    for (size_t i = 0; i < f->n; i++) {
        f->flag[i] = keep_all ? 0 : flag[i];
        f->w[i] = f->flag[i] ? 0.0 : 1.0;
        f->nin += f->flag[i] ? 0 : 1;
    }
}

/* Step 3: the stations whose test fails, into flag. */
static void station_test(fit *f, const tram_se3 *X, const tram_se3 *Z, int *flag)
{
    tram__noise_station_stat(&f->pb, f->w, X, Z, f->C, &f->nm, f->T);
    double inv = 0;
    for (int a = 0; a < 6; a++) inv += 1.0 / f->nm.dof[a];
    double nu = inv > 0 ? 6.0 / inv : INFINITY, p = 1.0 - FAMILY_ALPHA / (double)f->n;
    /* noise given (known): chi-square(6) / 6, the limit of F(6, nu) */
    double q = isfinite(nu) ? tram__f_quantile(p, 6.0, nu) : tram__chi2_quantile(p, 6.0) / 6.0;
    for (size_t i = 0; i < f->n; i++) flag[i] = !(f->T[i] / 6.0 <= q);
}

/* Steps 2 and 3 until the flags settle. */
static tram_status fit_and_flag(fit *f, tram_se3 *X, tram_se3 *Z)
{
    int *next = f->cand; /* the candidates seed the first round */
    tram_status st = TRAM_OK;
    for (int round = 0; round < FLAG_MAX_ROUNDS; round++) {
        set_weights(f, next);
        if ((st = fgls(f, X, Z)) != TRAM_OK) return st;
        if (!f->opt->robust || round + 1 == FLAG_MAX_ROUNDS) break;
        station_test(f, X, Z, f->cand);
        int same = 1;
        size_t nflag = 0;
        for (size_t i = 0; i < f->n; i++) {
            same = same && f->cand[i] == f->flag[i];
            nflag += (size_t)f->cand[i];
        }
        if (same || (f->n - nflag < 3 && round > 0)) break;
        next = f->cand;
    }
    return TRAM_OK;
}

/* Step 4: the covariance, sigmas and 95% half-widths into sol->unc. */
static tram_status uncertainty(fit *f, const tram_se3 *X, const tram_se3 *Z, tram_solution *sol)
{
    double cov[144], nu[12], scale = 1.0;
    tram_status cs = TRAM_OK; /* the last refit's covariance is at (X, Z) */
    if (f->have_C) {
        memcpy(cov, f->C, sizeof cov);
        sol->condition = f->cond;
    } else {
        cs = tram__refine_covariance(&f->pb, f->w, X, Z, 1.0, cov, &sol->condition);
    }
    if (cs == TRAM_ENOMEM) return cs; /* an uncertainty lost to memory is a failure */
    if (cs != TRAM_OK) {
        sol->condition = INFINITY;
        return TRAM_OK;
    }
    double dof = 6.0 * (double)f->nin - 12.0;
    if (f->given) {
        double chi2 = 0;
        if ((cs = tram__refine_chi2(&f->pb, f->w, X, Z, &chi2)) != TRAM_OK) return cs;
        scale = dof > 0 ? chi2 / dof : 1.0;
        for (int k = 0; k < 12; k++) nu[k] = dof > 0 ? dof : 1.0;
    } else {
        double ca[144];
        tram__noise_param_dof(&f->pb, f->w, X, Z, cov, &f->nm, nu);
        tram__noise_kr_adjust(&f->pb, f->w, X, Z, cov, &f->nm, ca);
        memcpy(cov, ca, sizeof ca);
    }
    sol->unc.valid = 1;
    for (int a = 0; a < 12; a++) {
        int p = tram__pub_param(a);
        for (int b = 0; b < 12; b++) sol->unc.cov[a * 12 + b] = cov[p * 12 + tram__pub_param(b)] * scale;
    }
    for (int a = 0; a < 12; a++) {
        double sd = sqrt(fmax(sol->unc.cov[a * 12 + a], 0.0));
        sol->unc.sigma[a] = (a % 6) >= 3 ? sd * 180.0 / TRAM_PI : sd;
        sol->unc.dof[a] = nu[tram__pub_param(a)];
        double t = isfinite(sol->unc.dof[a]) ? tram__t_quantile(0.975, sol->unc.dof[a]) : 1.959964;
        sol->unc.half95[a] = t * sol->unc.sigma[a];
    }
    return TRAM_OK;
}

static tram_status bootstrap(fit *f, const tram_se3 *X, const tram_se3 *Z, tram_solution *sol)
{
    const tram_solve_options *opt = f->opt;
    double sg[12], lo[12], hi[12];
    size_t used = 0;
    tram_status st = tram__refine_bootstrap(&f->pb, f->w, X, Z, opt->bootstrap, opt->seed,
                                            opt->progress, opt->progress_ctx, sg, lo, hi, &used);
    if (st == TRAM_OK) tram__unc_store_bootstrap(&sol->unc, sg, lo, hi, used);
    return st;
}

/* The noise model used, into the solution. */
static void report_noise(const fit *f, tram_solution *sol)
{
    const tram__noise *nm = &f->nm;
    sol->noise_angle_deg = tram__noise_rms_rot(nm) * 180.0 / TRAM_PI;
    sol->noise_length = tram__noise_rms_len(nm);
    sol->noise_given = f->given;
    sol->noise_per_axis = nm->per_axis;
    for (int a = 0; a < 3; a++) {
        sol->noise_angle_axis_deg[a] = sqrt(nm->rot_var[a]) * 180.0 / TRAM_PI;
        sol->noise_length_axis[a] = sqrt(nm->len_var[a]);
        sol->noise_dof[a] = nm->dof[a];
        sol->noise_dof[3 + a] = nm->dof[3 + a];
    }
    sol->robot_noise_angle_deg = sqrt(nm->robot_rot_var) * 180.0 / TRAM_PI;
    sol->robot_noise_length = sqrt(nm->robot_len_var);
}

tram_status tram__solve_refine(const tram_se3 *P, const tram_se3 *S, size_t n, tram_setup setup,
                               const tram_solve_options *opt, tram_solution *sol, tram_error *err)
{
    fit f;
    memset(&f, 0, sizeof f);
    f.opt = opt;
    f.n = n;
    f.pb = (tram_refine_problem){.P = P, .S = S, .n = n, .sigma_angle = 1.0, .sigma_length = 1.0,
                                 .length_scale = tram__length_scale(P, S, n)};
    f.given = given_noise(opt, setup, &f.nm);
    if (fit_alloc(&f, n) != TRAM_OK) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    tram_status st = robust_start(&f, &sol->X, &sol->Z);
    if (st == TRAM_OK) st = fit_and_flag(&f, &sol->X, &sol->Z);
    if (st == TRAM_OK) {
        sol->refined = 1;
        report_noise(&f, sol);
        st = uncertainty(&f, &sol->X, &sol->Z, sol);
    }
    if (st == TRAM_OK && opt->bootstrap > 0) st = bootstrap(&f, &sol->X, &sol->Z, sol);
    for (size_t i = 0; i < n; i++) sol->stations[i].outlier = f.flag[i];
    tram__free(f.W);
    tram__free(f.flag);
    if (st == TRAM_ENOMEM) return tram__fail(err, st, NULL, 0, 0, "out of memory");
    if (st != TRAM_OK) return tram__fail(err, st, NULL, 0, 0, "refinement failed");
    return TRAM_OK;
}
