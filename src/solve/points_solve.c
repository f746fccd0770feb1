/*
 * points_solve.c - hand-eye calibration from observed 3D points.
 *
 * Per observation (station i, point k, p the point in the sensor frame), in
 * the generic form of tram/handeye.h:  P_i X p = q_k, with q_k the point's
 * fixed position in the frame of Z (the base for eye-in-hand, the flange
 * for eye-to-hand) and q_k = Z m_k for a model point m_k.
 *
 * With a model: each station's T_sensor_target is the registration of the
 * model to the station's points (Arun et al. 1987), the pose pipeline of
 * solve.c runs on those, and the final refinement minimises
 * sum |P_i X p - Z m_k|^2 over X and Z.
 * Without a model: a linear start solves vec(R_X), t_X and all q_k from
 *   R_Pi (p^T (x) I) vec(R_X) + R_Pi t_X - q_k = -t_Pi
 * (least squares through LAPACKE), R_X is projected onto SO(3) and t_X, q_k
 * re-solved; then X is refined by variable projection (Golub & Pereyra,
 * SIAM J. Numer. Anal. 10(2), 1973): for each X the q_k are their least-
 * squares values, the mean of P_i X p over the point's observations.
 * Observations whose residual exceeds sqrt(chi2_3(1 - 0.01 / n)) robust
 * sigmas (n observations: Bonferroni's bound keeps the rate of honest
 * files with any exclusion at 1%, as for stations in solve_refine.c) are
 * excluded and the refinement repeated.
 * The residuals, the linear start and the statistics are in points_fit.c;
 * the sensor's length scale (--fit-scale) is one more parameter of both
 * refinements (scale.c).
 */
#include "tram/point_solve.h"
#include "tram/register.h"
#include "solve/points_fit_internal.h"
#include "solve/diagnose_internal.h"
#include "solve/pipeline_internal.h"
#include "math/stats_internal.h"
#include "solve/plausibility_internal.h"
#include "solve/pairing_internal.h"
#include "solve/scale_internal.h"
#include "io/records_schema_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define FAMILY_ALPHA 0.01 /* rate of honest files with any observation excluded */

/* Model coordinates per observed point id into mxyz (3 per id). */
static tram_status model_lookup(const tram_point_obs *obs, const tram_point_model *model,
                                double *mxyz, tram_error *err)
{
    for (size_t k = 0; k < obs->npoints; k++) {
        size_t j;
        for (j = 0; j < model->n; j++)
            if (strcmp(model->id[j], obs->point_id[k]) == 0) break;
        if (j == model->n) {
            long line = 0;
            for (size_t o = 0; o < obs->n && !line; o++)
                if (obs->point[o] == k) line = obs->line[o];
            return tram__fail(err, TRAM_EINPUT, obs->source, line, 0,
                              "point '%s' is not in the model %s", obs->point_id[k], model->source);
        }
        memcpy(mxyz + 3 * k, model->xyz + 3 * j, 3 * sizeof *mxyz);
    }
    return TRAM_OK;
}

/* Each station's T_sensor_target into rr: the registration of the model to
 * the station's points (Arun et al. 1987). */
static tram_status register_stations(const tram_records *r, const tram_point_obs *obs,
                                     const tram__pts_setup *d, const double *mxyz, tram_records *rr,
                                     tram_error *err)
{
    size_t m = obs->npoints;
    tram_status st = TRAM_OK;
    double *from = tram__malloc((m ? m : 1) * 3 * sizeof *from), *to = tram__malloc((m ? m : 1) * 3 * sizeof *to);
    if (!from || !to) {
        tram__free(from);
        tram__free(to);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    for (size_t i = 0; i < r->count && st == TRAM_OK; i++) {
        for (size_t k = 0; k < d->count[i]; k++) {
            size_t o = d->order[d->first[i] + k];
            memcpy(from + 3 * k, mxyz + 3 * obs->point[o], 3 * sizeof *from);
            memcpy(to + 3 * k, obs->xyz + 3 * o, 3 * sizeof *to);
        }
        tram_register_result reg;
        tram_error e;
        if (tram_register_points(from, to, NULL, d->count[i], NULL, &reg, &e) != TRAM_OK)
            st = tram__fail(err, TRAM_EUNDETERMINED, obs->source, 0, 0,
                            "station '%s': %zu model point(s) seen: at least 3 non-collinear "
                            "points are needed to find the target's pose (%s)",
                            r->stations[i].id, d->count[i], e.message);
        else
            rr->stations[i].T_sensor_target = reg.T_to_from;
    }
    tram__free(from);
    tram__free(to);
    return st;
}

/* With a model: the final refinement of X and Z on the 3D point residuals
 * of the stations the pose solve kept, its noise and covariance, and the
 * station pose residuals against it. */
static tram_status refine_on_points(const tram_records *rr, const tram_point_obs *obs,
                                    int fit_scale, tram__pts_setup *d, tram__pts_ctx *c, tram_solution *sol)
{
    size_t n = rr->count;
    double *w = tram__malloc((n ? n : 1) * sizeof *w);
    if (!w) return TRAM_ENOMEM;
    size_t maxc = 0;
    for (size_t i = 0; i < n; i++) {
        w[i] = sol->stations[i].outlier ? 0.0 : 1.0;
        if (d->count[i] > maxc) maxc = d->count[i];
    }
    tram__pts_residuals(c, &sol->X, &sol->Z, d->res);
    double sig;
    if (tram__pts_robust_sigma(d->res, d->excluded, obs->n, &sig) != TRAM_OK) {
        tram__free(w);
        return TRAM_ENOMEM;
    }
    if (!(sig > 1e-12)) sig = 1e-12;
    c->inv_sigma = 1.0 / sig;
    tram_refine_problem pb = {.n = n, .length_scale = 1.0, .eval = tram__pts_eval_model, .nblocks = n,
                              .maxdim = 3 * (maxc ? maxc : 1), .ctx = c,
                              .scale = fit_scale ? &d->scale : NULL};
    tram_status st = tram__refine_run(&pb, w, 0, &sol->X, &sol->Z);
    if (st == TRAM_OK) {
        tram__pts_residuals(c, &sol->X, &sol->Z, d->res);
        size_t k;
        double ss = tram__pts_used_ss(obs, d, w, &k);
        double dof = 3.0 * (double)k - 12.0 - (fit_scale ? 1.0 : 0.0);
        if (dof > 0) c->inv_sigma = 1.0 / fmax(sqrt(ss / dof), 1e-12);
        double cov[144], cond, var = NAN;
        tram_status cs = tram__refine_covariance_scale(&pb, w, &sol->X, &sol->Z, 1.0, cov, &cond, &var, NULL);
        if (cs == TRAM_OK) {
            tram__pts_store_uncertainty(cov, 2, cond, dof, sol);
            sol->unc.bootstrap_valid = 0; /* it measured the pose refinement */
        }
        st = cs == TRAM_ENOMEM ? cs
           : fit_scale ? tram__scale_report(sol, d->scale, var, 1)
                       : tram__pts_scale_test(&pb, w, obs, d, c, dof, &sol->X, &sol->Z, sol);
        /* Station pose residuals against the refined solution. */
        double rot, tr;
        for (size_t i = 0; i < n; i++) {
            tram_se3 Pi = d->P[i];
            tram_handeye_residuals(&Pi, &rr->stations[i].T_sensor_target, 1, &sol->X, &sol->Z, &rot, &tr);
            sol->stations[i].rot_deg = rot * 180.0 / TRAM_PI;
            sol->stations[i].trans = tr;
        }
    }
    tram__free(w);
    return st;
}

/* The point results of a solve with a model, and the plausibility gate on
 * the 3D point residuals. */
static tram_status model_point_result(const tram_records *r, const tram_point_obs *obs,
                                      const tram_solve_options *opt, tram__pts_ctx *c, tram__pts_setup *d,
                                      const double *mxyz, tram_solution *sol, tram_status st,
                                      tram_error *err)
{
    tram_point_result *pr = tram__calloc(1, sizeof *pr);
    tram__pts_residuals(c, &sol->X, &sol->Z, d->res);
    if (!pr || tram__pts_stats(r, obs, c, d, sol, mxyz, pr) != TRAM_OK) {
        tram__point_result_free(pr);
        return st == TRAM_OK ? tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory") : st;
    }
    pr->with_model = 1;
    pr->noise_length = 1.0 / c->inv_sigma;
    sol->points = pr;
    /* The pose solve ran the pairing test; gate the point residuals
     * (once: not again when the station residuals failed already). */
    if (st == TRAM_OK && !sol->trust.gate_failed &&
        tram__gate(sol, &opt->trust, tram__pts_working_distance(obs), NAN, pr->point.rms,
                                                                "3D point") != TRAM_OK)
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    return st;
}

static tram_status solve_with_model(const tram_records *r, tram_setup setup,
                                    const tram_point_obs *obs, const tram_point_model *model,
                                    const tram_solve_options *opt, tram_solution **out,
                                    tram_error *err)
{
    size_t m = obs->npoints;
    double *mxyz = tram__malloc((m ? m : 1) * 3 * sizeof *mxyz);
    tram_records *rr = tram_records_clone(r);
    tram__pts_setup d;
    tram__pts_ctx c;
    memset(&c, 0, sizeof c);
    memset(&d, 0, sizeof d); /* freed at out: even when tram__pts_prepare is not reached */
    tram_status st = TRAM_OK;
    tram_solution *sol = NULL;
    if (!mxyz || !rr || tram__pts_prepare(r, setup, obs, &d, &c) != TRAM_OK) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    if ((st = model_lookup(obs, model, mxyz, err)) != TRAM_OK) goto out;
    c.model = mxyz;
    if ((st = register_stations(r, obs, &d, mxyz, rr, err)) != TRAM_OK) goto out;
    rr->has_block[TRAM_BLOCK_SENSOR] = 1;
    rr->sensor_from_points = 1;
    st = tram_solve(rr, setup, opt, &sol, err);
    if (st == TRAM_OK && sol->solved && opt->refine &&
        (st = refine_on_points(rr, obs, opt->fit_scale, &d, &c, sol)) != TRAM_OK)
        st = tram__fail(err, st, NULL, 0, 0,
                        st == TRAM_ENOMEM ? "out of memory" : "point refinement failed");
    if (sol && sol->solved) st = model_point_result(r, obs, opt, &c, &d, mxyz, sol, st, err);
out:
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) {
        tram_solution_destroy(sol);
        sol = NULL;
    }
    *out = sol;
    tram__pts_setup_free(&d);
    tram__free(mxyz);
    tram_records_destroy(rr);
    return st;
}

/* The convention doctor's fit for observed points without a model. */
typedef struct doc_ctx {
    const tram_point_obs *obs;
} doc_ctx;

static tram_status free_fit(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                            tram_se3 *X, tram_se3 *Z, tram__pts_setup *d, tram__pts_ctx *c, int robust,
                            int fit_scale, tram_error *err);

static tram_status doctor_fit(const tram_records *r, tram_setup setup, const void *ctx,
                              double *med_rot, double *med_tr, double *mount_len)
{
    const doc_ctx *dc = ctx;
    tram__pts_setup d;
    tram__pts_ctx c;
    memset(&c, 0, sizeof c);
    tram_se3 X, Z;
    tram_error e;
    tram_status st = free_fit(r, setup, dc->obs, &X, &Z, &d, &c, 0, 0, &e);
    if (st == TRAM_OK) {
        tram__pts_residuals(&c, &X, &Z, d.res);
        *med_rot = 0.0;
        *med_tr = tram__median(d.res, dc->obs->n);
        const tram_se3 *M = setup == TRAM_SETUP_EYE_TO_HAND ? &Z : &X;
        *mount_len = sqrt(tram__sq(M->m[0][3]) + tram__sq(M->m[1][3]) + tram__sq(M->m[2][3]));
    }
    tram__pts_setup_free(&d);
    return st;
}

/* The pairing test's fit (pairing.c): the robot rows permuted against the
 * stations' observed points, scored by the doctor's fit. */
typedef struct pair_ctx {
    const tram_records *r;
    tram_records *work; /* scratch copy whose robot rows are permuted */
    tram_setup setup;
    doc_ctx dc;
} pair_ctx;

static tram_status pairing_fit(const void *ctx, const size_t *perm, size_t n, double *med_rot,
                               double *med_tr)
{
    const pair_ctx *pc = ctx;
    for (size_t i = 0; i < n; i++)
        pc->work->stations[i].T_base_flange = pc->r->stations[perm ? perm[i] : i].T_base_flange;
    /* The linear start alone (a capped fit): a pairing that fits is within
     * the noise of its optimum already, one that does not stays far off. */
    tram__pts_setup d;
    tram__pts_ctx c;
    memset(&c, 0, sizeof c);
    tram_se3 X;
    tram_error e;
    tram_status st = tram__pts_prepare(pc->work, pc->setup, pc->dc.obs, &d, &c);
    if (st == TRAM_OK) st = tram__pts_linear_start(&c, &X, &e);
    if (st == TRAM_OK) {
        tram__pts_residuals(&c, &X, NULL, d.res);
        *med_rot = 0.0;
        *med_tr = tram__median(d.res, pc->dc.obs->n);
    }
    tram__pts_setup_free(&d);
    return st;
}

/* Gate on the 3D point residuals and the pairing test of a solve from
 * points (plausibility.c, pairing.c). */
static tram_status points_trust(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                                const tram_solve_options *opt, tram_solution *sol)
{
    const tram_trust_options *t = &opt->trust;
    tram_status st = tram__gate(sol, t, tram__pts_working_distance(obs), NAN, sol->points->point.rms,
                                                                   "3D point");
    if (st != TRAM_OK || t->pairing_permutations == 0 || r->count < 3) return st;
    pair_ctx pc = {r, tram_records_clone(r), setup, {obs}};
    if (!pc.work) return TRAM_ENOMEM;
    tram__pairing_result pr;
    double lscale = tram__pts_working_distance(obs);
    st = tram__pairing_test(r->count, t->pairing_permutations, opt->seed, t->pairing_factor, 0,
                            1e-9 * (lscale > 0 ? lscale : 1), pairing_fit, &pc, &pr);
    tram_records_destroy(pc.work);
    if (st == TRAM_OK && pr.permutations > 0)
        st = tram__pairing_report(sol, pr.permutations, opt->seed, pr.ratio_rot, pr.ratio_trans,
                                  pr.failed, t->pairing_factor);
    return st;
}

static tram_status free_fit(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                            tram_se3 *X, tram_se3 *Z, tram__pts_setup *d, tram__pts_ctx *c, int robust,
                            int fit_scale, tram_error *err)
{
    if (tram__pts_prepare(r, setup, obs, d, c) != TRAM_OK)
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    tram_status st = tram__pts_linear_start(c, X, err);
    if (st != TRAM_OK) return st;
    tram_se3_identity(Z);
    tram_refine_problem pb = {.n = r->count, .length_scale = 1.0, .eval = tram__pts_eval_free, .nblocks = 1,
                              .maxdim = 3 * obs->n, .ctx = c, .nfree = 6,
                              .scale = fit_scale ? &d->scale : NULL};
    for (int round = 0; round < (robust ? 2 : 1); round++) {
        tram__pts_residuals(c, X, Z, d->res);
        double sig = 1.0;
        if (tram__pts_robust_sigma(d->res, d->excluded, obs->n, &sig) != TRAM_OK) st = TRAM_ENOMEM;
        c->inv_sigma = 1.0 / (sig > 1e-12 ? sig : 1e-12);
        if (st == TRAM_OK) st = tram__refine_run(&pb, NULL, 0, X, Z);
        if (st == TRAM_OK && robust) {
            tram__pts_residuals(c, X, Z, d->res);
            if (tram__pts_robust_sigma(d->res, d->excluded, obs->n, &sig) != TRAM_OK) st = TRAM_ENOMEM;
        }
        if (st != TRAM_OK)
            return tram__fail(err, st, NULL, 0, 0,
                              st == TRAM_ENOMEM ? "out of memory" : "point refinement failed");
        if (!robust) break;
        double k_out = sqrt(tram__chi2_quantile(1.0 - FAMILY_ALPHA / (double)obs->n, 3.0));
        size_t nex = 0;
        for (size_t o = 0; o < obs->n; o++) {
            d->excluded[o] = d->res[o] > k_out * sig && d->res[o] > 1e-9;
            nex += (size_t)d->excluded[o];
        }
        if (nex == 0) break;
    }
    tram__pts_eliminate(c, X);
    tram__pts_target_frame(c->q, obs->npoints, obs->point_id[0], Z);
    return TRAM_OK;
}

/* A solution of the model-free solve before any fit: names and NaNs. */
static tram_solution *free_solution_new(const tram_records *r, tram_setup setup)
{
    tram_solution *sol = tram__calloc(1, sizeof *sol);
    if (!sol || !(sol->stations = tram__calloc(r->count ? r->count : 1, sizeof *sol->stations))) {
        tram__free(sol);
        return NULL;
    }
    sol->setup = setup;
    sol->length_unit = r->length_unit;
    sol->n = r->count;
    sol->trustworthy = 1;
    sol->start_method = TRAM_METHOD_AUTO;
    sol->X_name = setup == TRAM_SETUP_EYE_IN_HAND ? "T_flange_sensor" : "T_base_sensor";
    sol->Z_name = setup == TRAM_SETUP_EYE_IN_HAND ? "T_base_target" : "T_flange_target";
    for (int k = 0; k < TRAM_METHOD_COUNT; k++) sol->closed_rot_rms_deg[k] = sol->closed_trans_rms[k] = NAN;
    return sol;
}

/* The model in the target frame: the solved positions q_k mapped by Z^-1. */
static void free_model(const tram__pts_ctx *c, size_t m, const tram_se3 *Z, double *model)
{
    tram_se3 Zi;
    tram_se3_invert(Z, &Zi);
    for (size_t k = 0; k < m; k++) tram_se3_apply_point(&Zi, c->q + 3 * k, model + 3 * k);
}

/* Noise and uncertainty of X (the point positions are eliminated, and
 * charged to the degrees of freedom); returns the per-axis noise. */
static tram_status free_uncertainty(const tram_point_obs *obs, int fit_scale, tram__pts_setup *d,
                                    tram__pts_ctx *c, tram_solution *sol, double *noise)
{
    size_t m = obs->npoints, k;
    tram__pts_residuals(c, &sol->X, &sol->Z, d->res);
    double ss = tram__pts_used_ss(obs, d, NULL, &k);
    double dof = 3.0 * (double)k - 6.0 - 3.0 * (double)m - (fit_scale ? 1.0 : 0.0);
    double sig = dof > 0 ? sqrt(ss / dof) : NAN;
    if (sig > 0) c->inv_sigma = 1.0 / sig;
    tram_refine_problem pb = {.n = sol->n, .length_scale = 1.0, .eval = tram__pts_eval_free, .nblocks = 1,
                              .maxdim = 3 * obs->n, .ctx = c, .nfree = 6,
                              .scale = fit_scale ? &d->scale : NULL};
    double cov[144], cond, var = NAN;
    for (int a = 0; a < 12; a++) sol->unc.sigma[a] = NAN;
    for (int a = 0; a < 144; a++) sol->unc.cov[a] = NAN;
    tram_status cs = sig > 0 ? tram__refine_covariance_scale(&pb, NULL, &sol->X, &sol->Z, 1.0, cov,
                                                             &cond, &var, NULL)
                             : TRAM_EUNDETERMINED;
    if (cs == TRAM_ENOMEM) return cs; /* an uncertainty lost to memory is a failure */
    if (cs == TRAM_OK) tram__pts_store_uncertainty(cov, 1, cond, dof, sol);
    sol->noise_length = sig;
    sol->noise_angle_deg = NAN;
    *noise = sig;
    if (fit_scale) return tram__scale_report(sol, d->scale, var, 1);
    return sig > 0 ? tram__pts_scale_test(&pb, NULL, obs, d, c, dof, &sol->X, &sol->Z, sol) : TRAM_OK;
}

/* The point results of the model-free solve and their notes. */
static tram_status free_point_result(const tram_records *r, const tram_point_obs *obs,
                                     const tram__pts_ctx *c, const tram__pts_setup *d, const double *model,
                                     double sig, tram_solution *sol)
{
    size_t n = r->count;
    /* Station pose residuals where a station saw 3 or more points. */
    for (size_t i = 0; i < n; i++) {
        sol->stations[i].rot_deg = NAN;
        sol->stations[i].trans = NAN;
    }
    tram_point_result *pr = tram__calloc(1, sizeof *pr);
    if (!pr || tram__pts_stats(r, obs, c, d, sol, model, pr) != TRAM_OK) {
        tram__point_result_free(pr);
        return TRAM_ENOMEM;
    }
    pr->with_model = 0;
    pr->noise_length = sig;
    sol->points = pr;
    for (size_t i = 0; i < n; i++) sol->stations[i].trans = pr->station_rms[i];
    sol->trans = pr->point;
    sol->rot_deg.rms = sol->rot_deg.median = sol->rot_deg.max = NAN;
    size_t nex = 0;
    for (size_t o = 0; o < obs->n; o++) nex += (size_t)d->excluded[o];
    if (nex && tram__diag_add(sol, "point-outliers", TRAM_SEVERITY_INFO,
                              "%zu observed point(s) flagged as outliers and excluded", nex) != TRAM_OK)
        return TRAM_ENOMEM;
    if (obs->npoints == 1 && tram__diag_add(sol, "single-point", TRAM_SEVERITY_INFO,
                                            "one point per station: the sensor's mount and the point's "
                                            "fixed position were solved; the point has no orientation, "
                                            "so %s is a translation only",
                                            sol->Z_name) != TRAM_OK)
        return TRAM_ENOMEM;
    return TRAM_OK;
}

/* Units, conventions and plausibility of the model-free solve; only
 * TRAM_ENOMEM fails. */
static tram_status free_checks(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                               const tram_solve_options *opt, tram_solution *sol)
{
    if (tram__check_units(r, sol) != TRAM_OK) return TRAM_ENOMEM;
    if (opt->check_conventions) {
        doc_ctx dc = {obs};
        tram_status st = tram__check_conventions_with(r, setup, sol, doctor_fit, &dc, 0, &opt->trust,
                                                      tram__pts_working_distance(obs));
        if (st != TRAM_OK) return st;
    }
    return points_trust(r, setup, obs, opt, sol) != TRAM_OK ? TRAM_ENOMEM : TRAM_OK;
}

static tram_status solve_free(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                              const tram_solve_options *opt, tram_solution **out, tram_error *err)
{
    size_t m = obs->npoints;
    tram_solution *sol = free_solution_new(r, setup);
    tram__pts_setup d;
    tram__pts_ctx c;
    memset(&c, 0, sizeof c);
    memset(&d, 0, sizeof d);
    tram_status st = TRAM_OK;
    double *model = NULL;
    if (!sol) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    {
        tram_se3 *P, *S;
        if (tram__station_poses(r, setup, &P, &S) != TRAM_OK) {
            tram_solution_destroy(sol);
            return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        }
        int bad = tram__observability(P, r->count, setup, sol);
        tram__free(P);
        tram__free(S);
        if (bad && !sol->ndiag) { /* refused without a diagnostic: out of memory */
            tram_solution_destroy(sol);
            return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        }
        if (bad) {
            *out = sol;
            return tram__fail(err, TRAM_EUNDETERMINED, r->source, 0, 0, "%s",
                              sol->diag[sol->ndiag - 1].message);
        }
    }
    st = free_fit(r, setup, obs, &sol->X, &sol->Z, &d, &c, opt->robust, opt->fit_scale, err);
    if (st != TRAM_OK) goto out;
    sol->solved = 1;
    sol->refined = 1;
    if (!(model = tram__malloc((m ? m : 1) * 3 * sizeof *model))) goto nomem;
    free_model(&c, m, &sol->Z, model);
    double sig;
    if (free_uncertainty(obs, opt->fit_scale, &d, &c, sol, &sig) != TRAM_OK) goto nomem;
    if (free_point_result(r, obs, &c, &d, model, sig, sol) != TRAM_OK) goto nomem;
    if (free_checks(r, setup, obs, opt, sol) != TRAM_OK) goto nomem;
    goto out;
nomem:
    st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
out:
    tram__pts_setup_free(&d);
    tram__free(model);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) {
        tram_solution_destroy(sol);
        sol = NULL;
    }
    *out = sol;
    return st;
}

/* A record file with sensor pose columns beside the observed points: the
 * solve uses the points only, and says so (diagnostic
 * sensor-columns-ignored, naming the columns).  Nonzero when out of memory. */
static int note_ignored_sensor(const tram_records *r, const tram_point_obs *obs,
                               tram_solution *sol)
{
    if (!r->has_block[TRAM_BLOCK_SENSOR] || r->sensor_from_points) return 0;
    char cols[200] = "";
    size_t len = 0;
    tram_rep_kind k = r->conv[TRAM_BLOCK_SENSOR].rep;
    for (int i = 0; i < tram__rep_slots(k) && len < sizeof cols; i++)
        len += (size_t)snprintf(cols + len, sizeof cols - len, "%ssensor_%s", i ? ", " : "",
                                tram__rep_slot_name(k, i));
    return tram__diag_add(sol, "sensor-columns-ignored", TRAM_SEVERITY_INFO,
                          "the record file %s also has sensor pose columns (%s): they are "
                          "ignored; this solve uses the observed points of %s only (solve "
                          "without --points to use the sensor poses)",
                          r->source, cols, obs->source) != TRAM_OK;
}

tram_status tram_solve_points(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                              const tram_point_model *model, const tram_solve_options *opt_in,
                              tram_solution **out, tram_error *err)
{
    *out = NULL;
    tram_status tool_st = tram_records_require_flange(r, err);
    if (tool_st != TRAM_OK) return tool_st;
    tram_solve_options defaults;
    tram_solve_options_init(&defaults);
    const tram_solve_options *opt = opt_in ? opt_in : &defaults;
    if (setup == TRAM_SETUP_UNSET)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass --setup");
    if (!r->has_block[TRAM_BLOCK_ROBOT])
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          r->n_joints ? "the record file gives joint readings: pass --chain FILE"
                                      : "solving from points needs the robot poses (robot_ columns)");
    tram_status st = model ? solve_with_model(r, setup, obs, model, opt, out, err)
                           : solve_free(r, setup, obs, opt, out, err);
    if ((st == TRAM_OK || st == TRAM_EUNDETERMINED) && *out && note_ignored_sensor(r, obs, *out))
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    return st;
}
