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
 *  4. Weights: per-axis noise given by the caller, or estimated robustly
 *     from the residuals (median residual norm / sqrt(2.366), the median of
 *     a chi-square with 3 degrees of freedom being 2.366).
 *  5. Robust refinement (Cauchy loss), noise re-estimated, refined again.
 *  6. Outliers: a station whose rotation or translation residual exceeds
 *     sqrt(chi2_3(0.9999)) = 4.59 robust sigmas (sigma from the median, as
 *     in step 4) is flagged and excluded - a median-based rule in the
 *     spirit of Hampel's (J. Am. Statist. Assoc. 69(346), 1974), scaled for
 *     residual norms of 3-vectors so an honest station is flagged with
 *     probability 1e-4 per residual; the rest are refined by plain least
 *     squares.
 *  7. Noise from the inlier residuals (dof-corrected), covariance
 *     s^2 (J^T W J)^-1, optional station bootstrap.
 *  8. The sensor's length scale, tested or (fit_scale) fitted (scale.c).
 *  9. Convention and unit checks (diagnose.c).
 */
#include "solve/refine_internal.h"
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
    out->median = tram__median(c, k);
    out->max = mx;
    tram__free(c);
    return TRAM_OK;
}

/* Outlier rule on residual norms of 3-vectors: flag x_i above
 * sqrt(chi2_3(0.9999)) = 4.59 robust sigmas, sigma = median / sqrt(2.366).
 * The norms of isotropic 3D Gaussian residuals follow sigma * chi_3, so an
 * honest station is flagged with probability 1e-4 per residual (more with
 * few stations, where the median itself is uncertain). */
#define OUTLIER_K 4.5943 /* sqrt(21.1075), the 0.9999 quantile of chi-square(3) */

static void flag_outliers(const double *x, size_t n, double floor_abs, int *flag)
{
    double sigma = tram__robust_sigma3(x, n);
    for (size_t i = 0; i < n; i++)
        if (x[i] > OUTLIER_K * sigma && x[i] > floor_abs) flag[i] = 1;
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

/* Public uncertainty index (translation, rotation per block) to the
 * refinement's parameter index (rotation, translation per block). */
static int pub_to_param(int a)
{
    int block = a / 6, k = a % 6;
    return block * 6 + (k < 3 ? 3 + k : k - 3);
}

static tram_status refine_all(const tram_se3 *P, const tram_se3 *S, size_t n,
                              const tram_solve_options *opt, tram_solution *sol, tram_error *err)
{
    double *rot = tram__malloc(3 * n * sizeof *rot);
    int *flag = tram__calloc(n, sizeof *flag);
    if (!rot || !flag) {
        tram__free(rot);
        tram__free(flag);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    double *tr = rot + n, *w = rot + 2 * n;
    tram_refine_problem pb = {.P = P, .S = S, .n = n, .sigma_angle = opt->noise_angle_rad,
                              .sigma_length = opt->noise_length,
                              .length_scale = tram__length_scale(P, S, n)};
    int given = opt->noise_angle_rad > 0 && opt->noise_length > 0;
    tram_status st = TRAM_OK;
    tram_handeye_residuals(P, S, n, &sol->X, &sol->Z, rot, tr);
    for (int round = 0; round < 2 && st == TRAM_OK; round++) {
        if (!given) {
            pb.sigma_angle = tram__robust_sigma3(rot, n);
            pb.sigma_length = tram__robust_sigma3(tr, n);
        }
        tram__floor_noise(&pb.sigma_angle, &pb.sigma_length, pb.length_scale);
        st = tram__refine_run(&pb, NULL, opt->robust, &sol->X, &sol->Z);
        tram_handeye_residuals(P, S, n, &sol->X, &sol->Z, rot, tr);
        if (!opt->robust) break;
    }
    if (st == TRAM_OK && opt->robust) {
        flag_outliers(rot, n, 1e-9, flag);
        flag_outliers(tr, n, 1e-9 * pb.length_scale, flag);
        size_t nout = 0;
        for (size_t i = 0; i < n; i++) nout += (size_t)flag[i];
        if (n - nout < 3) memset(flag, 0, n * sizeof *flag); /* too few left: keep all */
    }
    for (size_t i = 0; i < n; i++) w[i] = flag[i] ? 0.0 : 1.0;
    size_t nin = 0;
    for (size_t i = 0; i < n; i++) nin += flag[i] ? 0 : 1;
    if (st == TRAM_OK) st = tram__refine_run(&pb, w, 0, &sol->X, &sol->Z);
    if (st == TRAM_OK) {
        tram_handeye_residuals(P, S, n, &sol->X, &sol->Z, rot, tr);
        if (!given && nin > 2) {
            /* Per-axis noise from the inliers, 6 of the 12 parameters
             * charged to each of rotation and translation. */
            double sr = 0, stt = 0;
            for (size_t i = 0; i < n; i++)
                if (!flag[i]) {
                    sr += rot[i] * rot[i];
                    stt += tr[i] * tr[i];
                }
            pb.sigma_angle = sqrt(sr / (double)(3 * nin - 6));
            pb.sigma_length = sqrt(stt / (double)(3 * nin - 6));
            tram__floor_noise(&pb.sigma_angle, &pb.sigma_length, pb.length_scale);
            st = tram__refine_run(&pb, w, 0, &sol->X, &sol->Z);
            tram_handeye_residuals(P, S, n, &sol->X, &sol->Z, rot, tr);
        }
    }
    if (st == TRAM_OK) {
        sol->refined = 1;
        sol->noise_angle_deg = pb.sigma_angle * 180.0 / TRAM_PI;
        sol->noise_length = pb.sigma_length;
        sol->noise_given = given;
        double chi2 = 0;
        st = tram__refine_chi2(&pb, w, &sol->X, &sol->Z, &chi2);
        double dof = 6.0 * (double)nin - 12.0;
        double s2 = dof > 0 ? chi2 / dof : 1.0;
        tram_status cs = st == TRAM_OK ? tram__refine_covariance(&pb, w, &sol->X, &sol->Z, s2,
                                                                 sol->unc.cov, &sol->condition)
                                       : st;
        if (cs == TRAM_ENOMEM) st = cs; /* an uncertainty lost to memory is a failure */
        if (cs == TRAM_OK) {
            sol->unc.valid = 1;
            /* Public order: translation before rotation in each block. */
            double c[144];
            for (int a = 0; a < 12; a++)
                for (int b = 0; b < 12; b++) c[a * 12 + b] = sol->unc.cov[pub_to_param(a) * 12 + pub_to_param(b)];
            memcpy(sol->unc.cov, c, sizeof c);
            for (int a = 0; a < 12; a++) {
                double sd = sqrt(fmax(sol->unc.cov[a * 12 + a], 0.0));
                sol->unc.sigma[a] = (a % 6) >= 3 ? sd * 180.0 / TRAM_PI : sd;
            }
        } else {
            sol->condition = INFINITY;
        }
        if (st == TRAM_OK && opt->bootstrap > 0) {
            double sg[12], lo[12], hi[12];
            size_t used = 0;
            st = tram__refine_bootstrap(&pb, w, &sol->X, &sol->Z, opt->bootstrap, opt->seed,
                                        opt->progress, opt->progress_ctx, sg, lo, hi, &used);
            if (st == TRAM_OK && used > 1) {
                sol->unc.bootstrap_valid = 1;
                sol->unc.bootstrap_used = used;
                for (int a = 0; a < 12; a++) {
                    int q = pub_to_param(a);
                    double f = (a % 6) >= 3 ? 180.0 / TRAM_PI : 1.0;
                    sol->unc.bootstrap_sigma[a] = sg[q] * f;
                    sol->unc.bootstrap_lo[a] = lo[q] * f;
                    sol->unc.bootstrap_hi[a] = hi[q] * f;
                }
            }
        }
    }
    for (size_t i = 0; i < n; i++) sol->stations[i].outlier = flag[i];
    tram__free(rot);
    tram__free(flag);
    if (st == TRAM_ENOMEM) return tram__fail(err, st, NULL, 0, 0, "out of memory");
    if (st != TRAM_OK) return tram__fail(err, st, NULL, 0, 0, "refinement failed");
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
    if (setup == TRAM_SETUP_UNSET)
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          "no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass --setup");
    if (!r->has_block[TRAM_BLOCK_ROBOT] && r->n_joints)
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          "the record file gives joint readings (joint_1 ...): pass --chain FILE "
                          "to compute the flange poses");
    if (!r->has_block[TRAM_BLOCK_ROBOT] || !r->has_block[TRAM_BLOCK_SENSOR])
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          "solving needs both a robot_ and a sensor_ pose block");
    tram_solution *sol = tram__calloc(1, sizeof *sol);
    if (!sol) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
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
    tram_se3 *P = NULL, *S = NULL;
    tram_pair *pairs = NULL;
    size_t np = 0;
    tram_status st = TRAM_OK;
    if (!sol->stations || tram__station_poses(r, setup, &P, &S) != TRAM_OK) goto nomem;
    if (opt->npair_list > 0) {
        pairs = tram__malloc(opt->npair_list * sizeof *pairs);
        if (!pairs) goto nomem;
        for (size_t k = 0; k < opt->npair_list; k++) {
            if (opt->pair_list[k].i >= n || opt->pair_list[k].j >= n ||
                opt->pair_list[k].i == opt->pair_list[k].j) {
                st = tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                                "station pair %zu: expected two different stations of the file", k + 1);
                goto fail;
            }
            pairs[k] = opt->pair_list[k];
        }
        np = opt->npair_list;
    } else if (tram_handeye_pairs(n, opt->pairs, &pairs, &np) != TRAM_OK) {
        goto nomem;
    }
    if (tram__observability(P, n, setup, sol)) {
        if (tram__check_units(r, sol) != TRAM_OK) goto nomem;
        tram__free(pairs);
        tram__free(P);
        tram__free(S);
        *out = sol;
        return tram__fail(err, TRAM_EUNDETERMINED, r->source, 0, 0, "%s",
                          sol->ndiag ? sol->diag[sol->ndiag - 1].message
                                     : "the data cannot determine the answer");
    }
    st = pick_start(P, S, n, pairs, np, opt, sol, err);
    if (st != TRAM_OK) goto fail;
    if (opt->refine) {
        st = refine_all(P, S, n, opt, sol, err);
        if (st != TRAM_OK) goto fail;
        /* The sensor's length scale, tested or fitted (scale.c); a solve
         * from points or pixels does it on its own residuals. */
        if (!r->sensor_from_points && tram__scale_poses(P, S, n, opt, sol) != TRAM_OK) goto nomem;
    }
    {
        double *rot = tram__malloc(2 * n * sizeof *rot);
        int *skip = tram__malloc(n * sizeof *skip);
        if (!rot || !skip) {
            tram__free(rot);
            tram__free(skip);
            goto nomem;
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
        if (ss != TRAM_OK) goto nomem;
    }
    sol->solved = 1;
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
                goto nomem;
        } else if (tram__diag_add(sol, "outliers", TRAM_SEVERITY_INFO,
                                  "%zu station(s) flagged as outliers and excluded from the final "
                                  "refinement: %s",
                                  sol->n_outliers, list) != TRAM_OK)
            goto nomem;
    }
    if (sol->refined && !(sol->condition < 1e6)) {
        if (tram__diag_add(sol, "ill-conditioned", TRAM_SEVERITY_WARNING,
                           "the refinement is ill-conditioned (condition %.3g): some directions "
                           "of the result are barely determined; add stations with larger and "
                           "more varied rotations",
                           sol->condition) != TRAM_OK)
            goto nomem;
    }
    if (tram__check_units(r, sol) != TRAM_OK) goto nomem;
    if (opt->check_conventions && (st = tram__check_conventions(r, setup, sol, &opt->trust)) != TRAM_OK) {
        st = tram__fail(err, st, NULL, 0, 0, "out of memory");
        goto fail;
    }
    /* Plausibility gate, pairing test and mount geometry (plausibility.c). */
    if (tram__trust_checks(r, setup, P, S, n, &opt->trust, opt->seed, sol) != TRAM_OK) goto nomem;
    tram__free(pairs);
    tram__free(P);
    tram__free(S);
    *out = sol;
    return TRAM_OK;
nomem:
    st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
fail:
    tram__free(pairs);
    tram__free(P);
    tram__free(S);
    tram_solution_destroy(sol);
    return st;
}
