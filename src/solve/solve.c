/*
 * solve.c - the hand-eye calibration pipeline (tram_solve).
 *
 *  1. Reduce the setup to P_i X S_i = Z (tram/handeye.h).
 *  2. Observability: refuse (TRAM_EUNDETERMINED) with fewer than 3
 *     stations, rotations that are too small, or rotation axes that are
 *     (nearly) parallel (Tsai & Lenz 1989, section on station selection).
 *  3. Every closed form; the one with the smallest robust residual score
 *     (median rotation and translation residuals, each relative to the best
 *     median over all methods) is the start, unless one is requested.
 *  4. Refinement (solve_refine.c): robust start, feasible generalised
 *     least squares with the noise model (noise.c: per-axis noise in the
 *     sensor's frame, a robot term), the per-station outlier test with a
 *     family-wise rate of 1%, covariance and Student-t intervals, optional
 *     station bootstrap.
 *  5. The sensor's length scale, tested or (fit_scale) fitted (scale.c).
 *  6. Convention and unit checks (diagnose.c), plausibility (plausibility.c).
 */
#include "solve/refine_internal.h"
#include "solve/solve_refine_internal.h"
#include "solve/diagnose_internal.h"
#include "solve/pipeline_internal.h"
#include "math/stats_internal.h"
#include "solve/plausibility_internal.h"
#include "solve/scale_internal.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>


void tram_solve_options_init(tram_solve_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->method = TRAM_METHOD_AUTO;
    opt->refine = 1;
    opt->robust = 1;
    opt->pairs = TRAM_PAIRS_AUTO;
    opt->seed = 1;
    opt->check_conventions = 1;
    tram_trust_options_init(&opt->trust);
}

/* RMS, median and max of v[i] * f over the stations not skipped;
 * TRAM_ENOMEM (out untouched) when the work copy cannot be had. */
static tram_status stats_of(const double *v, const int *skip, size_t n, double f,
                            tram_stats *out)
{
    double *c = tram__malloc((n ? n : 1) * sizeof *c);
    size_t k = 0;
    double ss = 0, mx = 0;
    if (!c) return TRAM_ENOMEM;
    for (size_t i = 0; i < n; i++) {
        if (skip && skip[i]) continue;
        c[k++] = v[i] * f;
        ss += tram__sq(v[i] * f);
        if (v[i] * f > mx) mx = v[i] * f;
    }
    out->rms = k ? sqrt(ss / (double)k) : 0.0;
    out->median = tram__median_inplace(c, k); /* c is our copy */
    out->max = mx;
    tram__free(c);
    return TRAM_OK;
}

static tram_status pick_start(const tram_se3 *P, const tram_se3 *S, size_t n,
                              const tram_pair *pairs, size_t np, const tram_solve_options *opt,
                              tram_solution *sol, tram_error *err)
{
    double med_rot[TRAM_METHOD_COUNT], med_tr[TRAM_METHOD_COUNT];
    tram_se3 Xs[TRAM_METHOD_COUNT], Zs[TRAM_METHOD_COUNT];
    int ok[TRAM_METHOD_COUNT] = {0};
    double *rot = tram__malloc(2 * n * sizeof *rot);
    if (!rot) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    double *tr = rot + n;
    tram_status last = TRAM_ENUMERIC;
    tram_error e;
    for (int m = 1; m < TRAM_METHOD_COUNT; m++) {
        sol->closed_rot_rms_deg[m] = NAN;
        sol->closed_trans_rms[m] = NAN;
        tram_status st = tram_handeye_closed_form((tram_method)m, P, S, n, pairs, np, &Xs[m],
                                                  &Zs[m], &e);
        if (st != TRAM_OK) {
            last = st;
            if (st == TRAM_ENOMEM) break;
            continue;
        }
        tram_handeye_residuals(P, S, n, &Xs[m], &Zs[m], rot, tr);
        tram_stats a, b;
        if (stats_of(rot, NULL, n, 180.0 / TRAM_PI, &a) != TRAM_OK ||
            stats_of(tr, NULL, n, 1.0, &b) != TRAM_OK) {
            last = TRAM_ENOMEM;
            break;
        }
        sol->closed_rot_rms_deg[m] = a.rms;
        sol->closed_trans_rms[m] = b.rms;
        med_rot[m] = a.median;
        med_tr[m] = b.median;
        ok[m] = 1;
    }
    tram__free(rot);
    if (last == TRAM_ENOMEM) /* never pick from a partial comparison */
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    double best_rot = INFINITY, best_tr = INFINITY;
    for (int m = 1; m < TRAM_METHOD_COUNT; m++)
        if (ok[m]) {
            if (med_rot[m] < best_rot) best_rot = med_rot[m];
            if (med_tr[m] < best_tr) best_tr = med_tr[m];
        }
    int pick = 0;
    if (opt->method != TRAM_METHOD_AUTO) {
        pick = ok[opt->method] ? (int)opt->method : 0;
        if (!pick)
            return tram__fail(err, last == TRAM_ENOMEM ? TRAM_ENOMEM : TRAM_ENUMERIC, NULL, 0, 0,
                              "method %s failed on this data", tram_method_name(opt->method));
    } else {
        double best = INFINITY;
        if (best_rot < 1e-12) best_rot = 1e-12;
        if (best_tr < 1e-12) best_tr = 1e-12;
        for (int m = 1; m < TRAM_METHOD_COUNT; m++) {
            if (!ok[m]) continue;
            double score = med_rot[m] / best_rot + med_tr[m] / best_tr;
            if (score < best) {
                best = score;
                pick = m;
            }
        }
        if (!pick)
            return tram__fail(err, last == TRAM_ENOMEM ? TRAM_ENOMEM : TRAM_ENUMERIC, NULL, 0, 0,
                              "no closed-form method succeeded on this data");
    }
    sol->start_method = (tram_method)pick;
    sol->X = Xs[pick];
    sol->Z = Zs[pick];
    return TRAM_OK;
}

/* The inputs a solve needs; TRAM_EINPUT with the fix otherwise. */
static tram_status check_inputs(const tram_records *r, tram_setup setup, tram_error *err)
{
    if (setup == TRAM_SETUP_UNSET)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass --setup");
    if (!r->has_block[TRAM_BLOCK_ROBOT] && r->n_joints)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "the record file gives joint readings (joint_1 ...): pass --chain FILE "
                          "to compute the flange poses");
    if (!r->has_block[TRAM_BLOCK_ROBOT] || !r->has_block[TRAM_BLOCK_SENSOR])
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "solving needs both a robot_ and a sensor_ pose block");
    return TRAM_OK;
}

/* An empty solution for n stations of the setup; NULL when out of memory. */
static tram_solution *solution_create(const tram_records *r, tram_setup setup)
{
    tram_solution *sol = tram__calloc(1, sizeof *sol);
    if (!sol) return NULL;
    size_t n = r->count;
    sol->setup = setup;
    sol->length_unit = r->length_unit;
    sol->n = n;
    sol->trustworthy = 1;
    sol->X_name = setup == TRAM_SETUP_EYE_IN_HAND ? "T_flange_sensor" : "T_base_sensor";
    sol->Z_name = setup == TRAM_SETUP_EYE_IN_HAND ? "T_base_target" : "T_flange_target";
    tram_se3_identity(&sol->X);
    tram_se3_identity(&sol->Z);
    sol->stations = tram__calloc(n ? n : 1, sizeof *sol->stations);
    if (!sol->stations) {
        tram__free(sol);
        return NULL;
    }
    return sol;
}

/* The station pairs of the AX=XB closed forms: the caller's selection or
 * the options' mode.  *pairs is freed by the caller. */
static tram_status station_pairs(const tram_solve_options *opt, size_t n, tram_pair **pairs,
                                 size_t *np, tram_error *err)
{
    *pairs = NULL;
    *np = 0;
    if (opt->npair_list == 0) {
        if (tram_handeye_pairs(n, opt->pairs, pairs, np) != TRAM_OK)
            return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        return TRAM_OK;
    }
    for (size_t k = 0; k < opt->npair_list; k++)
        if (opt->pair_list[k].i >= n || opt->pair_list[k].j >= n ||
            opt->pair_list[k].i == opt->pair_list[k].j)
            return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                              "station pair %zu: expected two different stations of the file", k + 1);
    *pairs = tram__malloc(opt->npair_list * sizeof **pairs);
    if (!*pairs) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    memcpy(*pairs, opt->pair_list, opt->npair_list * sizeof **pairs);
    *np = opt->npair_list;
    return TRAM_OK;
}

/* Per-station residuals of the solution and their statistics over the
 * stations not flagged; TRAM_ENOMEM when out of memory. */
static tram_status residual_stats(const tram_se3 *P, const tram_se3 *S, size_t n,
                                  tram_solution *sol)
{
    double *rot = tram__malloc(2 * (n ? n : 1) * sizeof *rot);
    int *skip = tram__malloc((n ? n : 1) * sizeof *skip);
    if (!rot || !skip) {
        tram__free(rot);
        tram__free(skip);
        return TRAM_ENOMEM;
    }
    tram_handeye_residuals(P, S, n, &sol->X, &sol->Z, rot, rot + n);
    for (size_t i = 0; i < n; i++) {
        sol->stations[i].rot_deg = rot[i] * 180.0 / TRAM_PI;
        sol->stations[i].trans = rot[n + i];
        skip[i] = sol->stations[i].outlier;
        sol->n_outliers += (size_t)skip[i];
    }
    tram_status ss = stats_of(rot, skip, n, 180.0 / TRAM_PI, &sol->rot_deg);
    if (ss == TRAM_OK) ss = stats_of(rot + n, skip, n, 1.0, &sol->trans);
    tram__free(rot);
    tram__free(skip);
    return ss;
}

/* The outlier and conditioning diagnostics of a solved solution. */
static tram_status solve_diagnostics(const tram_records *r, tram_solution *sol)
{
    size_t n = sol->n;
    if (sol->n_outliers) {
        char list[400] = "";
        size_t used = 0;
        for (size_t i = 0; i < n && used < sizeof list - 70; i++)
            if (sol->stations[i].outlier)
                used += (size_t)snprintf(list + used, sizeof list - used, "%s%s", used ? ", " : "",
                                         r->stations[i].id);
        if (3 * sol->n_outliers > n) {
            if (tram__diag_add(sol, "many-outliers", TRAM_SEVERITY_WARNING,
                               "%zu of %zu stations disagree with the rest (%s): more than a "
                               "third, so this is a data problem, not a few bad stations",
                               sol->n_outliers, n, list) != TRAM_OK)
                return TRAM_ENOMEM;
        } else if (tram__diag_add(sol, "outliers", TRAM_SEVERITY_INFO,
                                  "%zu station(s) flagged as outliers and excluded from the final "
                                  "refinement: %s",
                                  sol->n_outliers, list) != TRAM_OK)
            return TRAM_ENOMEM;
    }
    if (sol->refined && !(sol->condition < 1e6) &&
        tram__diag_add(sol, "ill-conditioned", TRAM_SEVERITY_WARNING,
                       "the refinement is ill-conditioned (condition %.3g): some directions "
                       "of the result are barely determined; add stations with larger and "
                       "more varied rotations",
                       sol->condition) != TRAM_OK)
        return TRAM_ENOMEM;
    return TRAM_OK;
}

/* Everything after the closed-form start: refinement, residuals, checks. */
static tram_status solve_stages(const tram_records *r, tram_setup setup, const tram_se3 *P,
                                tram_se3 *S, const tram_solve_options *opt,
                                tram_solution *sol, tram_error *err)
{
    size_t n = r->count;
    tram_status st;
    if (opt->refine && (st = tram__solve_refine(P, S, n, setup, opt, sol, err)) != TRAM_OK)
        return st;
    /* The sensor's length scale, tested or fitted (scale.c); a solve from
     * points or pixels does it on its own residuals. */
    if (opt->refine && !r->sensor_from_points && tram__scale_poses(P, S, n, opt, sol) != TRAM_OK)
        return TRAM_ENOMEM;
    if (residual_stats(P, S, n, sol) != TRAM_OK) return TRAM_ENOMEM;
    sol->solved = 1;
    if (solve_diagnostics(r, sol) != TRAM_OK || tram__check_units(r, sol) != TRAM_OK)
        return TRAM_ENOMEM;
    if (opt->check_conventions && tram__check_conventions(r, setup, sol, &opt->trust) != TRAM_OK)
        return TRAM_ENOMEM;
    /* Plausibility gate, pairing test and mount geometry (plausibility.c). */
    if (tram__trust_checks(r, setup, P, S, n, &opt->trust, opt->seed, sol) != TRAM_OK)
        return TRAM_ENOMEM;
    return TRAM_OK;
}

tram_status tram_solve(const tram_records *r, tram_setup setup, const tram_solve_options *opt_in,
                       tram_solution **out, tram_error *err)
{
    *out = NULL;
    tram_status tool_st = tram_records_require_flange(r, err);
    if (tool_st != TRAM_OK) return tool_st;
    tram_solve_options defaults;
    if (!opt_in) {
        tram_solve_options_init(&defaults);
        opt_in = &defaults;
    }
    const tram_solve_options *opt = opt_in;
    tram_status st = check_inputs(r, setup, err);
    if (st != TRAM_OK) return st;
    tram_solution *sol = solution_create(r, setup);
    if (!sol) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    size_t n = r->count, np = 0;
    tram_se3 *P = NULL, *S = NULL;
    tram_pair *pairs = NULL;
    if (tram__station_poses(r, setup, &P, &S) != TRAM_OK) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    } else if ((st = station_pairs(opt, n, &pairs, &np, err)) == TRAM_OK) {
        if (tram__observability(P, n, setup, sol)) {
            st = tram__check_units(r, sol) != TRAM_OK
                     ? tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory")
                     : tram__fail(err, TRAM_EUNDETERMINED, r->source, 0, 0, "%s",
                                  sol->ndiag ? sol->diag[sol->ndiag - 1].message
                                             : "the data cannot determine the answer");
        } else if ((st = pick_start(P, S, n, pairs, np, opt, sol, err)) == TRAM_OK &&
                   (st = solve_stages(r, setup, P, S, opt, sol, err)) == TRAM_ENOMEM) {
            st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        }
    }
    tram__free(pairs);
    tram__free(P);
    tram__free(S);
    if (st == TRAM_OK || st == TRAM_EUNDETERMINED) {
        *out = sol; /* undetermined: filled, solved = 0 */
        return st;
    }
    tram_solution_destroy(sol);
    return st;
}
