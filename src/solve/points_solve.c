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
 */
#include "tram/point_solve.h"
#include "tram/register.h"
#include "math/linalg_internal.h"
#include "solve/refine_internal.h"
#include "solve/diagnose_internal.h"
#include "solve/pipeline_internal.h"
#include "math/stats_internal.h"
#include "solve/plausibility_internal.h"
#include "solve/pairing_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define FAMILY_ALPHA 0.01 /* rate of honest files with any observation excluded */
#define CHI3_MEDIAN_SQRT 1.5381722

typedef struct pctx {
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
} pctx;

static void obs_world(const pctx *c, size_t o, const tram_se3 *X, double out[3])
{
    double s[3];
    tram_se3_apply_point(X, c->obs->xyz + 3 * o, s);
    tram_se3_apply_point(&c->P[c->obs->station[o]], s, out);
}

/* With a model: block = station, residuals (P X p - Z m) / sigma. */
static size_t eval_model(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                         const tram_se3 *Z, double *r)
{
    const pctx *c = pb->ctx;
    size_t d = 0;
    for (size_t k = 0; k < c->count[i]; k++) {
        size_t o = c->order[c->first[i] + k];
        double w[3], zm[3];
        obs_world(c, o, X, w);
        tram_se3_apply_point(Z, c->model + 3 * c->obs->point[o], zm);
        for (int a = 0; a < 3; a++) r[d++] = c->excluded[o] ? 0.0 : (w[a] - zm[a]) * c->inv_sigma;
    }
    return d;
}

/* The least-squares positions q_k for X: the mean of the observations. */
static void eliminate(const pctx *c, const tram_se3 *X)
{
    size_t m = c->obs->npoints;
    memset(c->q, 0, 3 * m * sizeof *c->q);
    memset(c->qn, 0, m * sizeof *c->qn);
    for (size_t o = 0; o < c->obs->n; o++) {
        if (c->excluded[o]) continue;
        double w[3];
        obs_world(c, o, X, w);
        for (int a = 0; a < 3; a++) c->q[3 * c->obs->point[o] + (size_t)a] += w[a];
        c->qn[c->obs->point[o]] += 1.0;
    }
    for (size_t k = 0; k < m; k++)
        for (int a = 0; a < 3; a++)
            if (c->qn[k] > 0) c->q[3 * k + (size_t)a] /= c->qn[k];
}

/* Without a model: one block, q eliminated (variable projection). */
static size_t eval_free(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                        const tram_se3 *Z, double *r)
{
    (void)i;
    (void)Z;
    const pctx *c = pb->ctx;
    eliminate(c, X);
    for (size_t o = 0; o < c->obs->n; o++) {
        double w[3];
        obs_world(c, o, X, w);
        for (int a = 0; a < 3; a++)
            r[3 * o + (size_t)a] =
                c->excluded[o] ? 0.0 : (w[a] - c->q[3 * c->obs->point[o] + (size_t)a]) * c->inv_sigma;
    }
    return 3 * c->obs->n;
}

/* Residual norms of every observation at (X, Z or the eliminated q). */
static void obs_residuals(const pctx *c, const tram_se3 *X, const tram_se3 *Z, double *res)
{
    if (!c->model) eliminate(c, X);
    for (size_t o = 0; o < c->obs->n; o++) {
        double w[3], q[3];
        obs_world(c, o, X, w);
        if (c->model) tram_se3_apply_point(Z, c->model + 3 * c->obs->point[o], q);
        else memcpy(q, c->q + 3 * c->obs->point[o], sizeof q);
        res[o] = sqrt(tram__sq(w[0] - q[0]) + tram__sq(w[1] - q[1]) + tram__sq(w[2] - q[2]));
    }
}

/* Linear start without a model (see the file comment). */
static tram_status linear_start(const pctx *c, tram_se3 *X, tram_error *err)
{
    const tram_point_obs *o = c->obs;
    size_t m = o->npoints, nu = 12 + 3 * m, rows = 3 * o->n;
    if (rows < nu + 3)
        return tram__fail(err, TRAM_EUNDETERMINED, o->source, 0, 0,
                          "%zu observation(s) of %zu point(s): too few to solve the sensor's mount "
                          "and the points' positions (the linear start needs %zu equations, has "
                          "%zu); add stations (at least 5 for a single point)",
                          o->n, m, nu + 3, rows);
    double *A = tram__calloc(rows * nu, sizeof *A), *b = tram__malloc(rows * sizeof *b);
    double *x = tram__malloc(nu * sizeof *x), *sv = tram__malloc(nu * sizeof *sv);
    tram_status st = TRAM_OK;
    if (!A || !b || !x || !sv) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    for (size_t i = 0; i < o->n; i++) {
        const tram_se3 *P = &c->P[o->station[i]];
        const double *p = o->xyz + 3 * i;
        for (int a = 0; a < 3; a++) {
            double *row = A + (3 * i + (size_t)a) * nu;
            for (int k = 0; k < 3; k++)
                for (int l = 0; l < 3; l++) row[3 * k + l] += P->m[a][k] * p[l];
            for (int k = 0; k < 3; k++) row[9 + k] = P->m[a][k];
            row[12 + 3 * o->point[i] + (size_t)a] = -1.0;
            b[3 * i + (size_t)a] = -P->m[a][3];
        }
    }
    /* Rank: the smallest singular value relative to the largest. */
    if ((st = tram__svd((int)rows, (int)nu, A, NULL, sv, NULL)) != TRAM_OK) goto out;
    if (!(sv[nu - 1] > 1e-9 * sv[0])) {
        st = tram__fail(err, TRAM_EUNDETERMINED, o->source, 0, 0,
                        "the stations do not determine the sensor's mount from these points: "
                        "rotate the flange about at least two different axes (20 deg or more, "
                        "common practice) and let the sensor see the points at different places");
        goto out;
    }
    if ((st = tram__lstsq((int)rows, (int)nu, A, b, x)) != TRAM_OK) goto out;
    tram_mat3 M, R;
    for (int i = 0; i < 9; i++) M.m[i / 3][i % 3] = x[i];
    tram_so3_nearest(&M, &R);
    /* Re-solve t_X and q with R_X fixed. */
    size_t nu2 = 3 + 3 * m;
    memset(A, 0, rows * nu * sizeof *A);
    for (size_t i = 0; i < o->n; i++) {
        const tram_se3 *P = &c->P[o->station[i]];
        double rp[3];
        tram_so3_apply(&R, o->xyz + 3 * i, rp);
        for (int a = 0; a < 3; a++) {
            double *row = A + (3 * i + (size_t)a) * nu2;
            for (int k = 0; k < 3; k++) row[k] = P->m[a][k];
            row[3 + 3 * o->point[i] + (size_t)a] = -1.0;
            b[3 * i + (size_t)a] = -P->m[a][3] - (P->m[a][0] * rp[0] + P->m[a][1] * rp[1] + P->m[a][2] * rp[2]);
        }
    }
    if ((st = tram__lstsq((int)rows, (int)nu2, A, b, x)) != TRAM_OK) goto out;
    tram_se3_from_rt(&R, x, X);
out:
    tram__free(A);
    tram__free(b);
    tram__free(x);
    tram__free(sv);
    if (st == TRAM_ENUMERIC) tram__fail(err, st, NULL, 0, 0, "a LAPACK routine did not converge");
    return st;
}

/* Target frame from solved points: centroid and principal axes. */
static void target_frame(const double *q, size_t m, const char *first_id, tram_se3 *Z)
{
    (void)first_id;
    double c[3] = {0, 0, 0};
    for (size_t k = 0; k < m; k++)
        for (int a = 0; a < 3; a++) c[a] += q[3 * k + (size_t)a] / (double)m;
    tram_mat3 R;
    tram_so3_identity(&R);
    if (m >= 3) {
        double C[9] = {0}, ev[3], V[9];
        for (size_t k = 0; k < m; k++)
            for (int a = 0; a < 3; a++)
                for (int b = 0; b < 3; b++)
                    C[a * 3 + b] += (q[3 * k + (size_t)a] - c[a]) * (q[3 * k + (size_t)b] - c[b]);
        if (tram__symeig(3, C, ev, V) == TRAM_OK && ev[1] > 1e-12 * ev[2]) {
            double x[3] = {V[2], V[5], V[8]}, y[3] = {V[1], V[4], V[7]}, z[3];
            /* signs: the first point has negative x and y coordinates */
            double d0[3] = {q[0] - c[0], q[1] - c[1], q[2] - c[2]};
            if (tram__dot3(d0, x) > 0)
                for (int a = 0; a < 3; a++) x[a] = -x[a];
            if (tram__dot3(d0, y) > 0)
                for (int a = 0; a < 3; a++) y[a] = -y[a];
            tram__cross3(x, y, z);
            for (int a = 0; a < 3; a++) {
                R.m[a][0] = x[a];
                R.m[a][1] = y[a];
                R.m[a][2] = z[a];
            }
        }
    }
    tram_se3_from_rt(&R, c, Z);
}

typedef struct setup_data {
    tram_se3 *P;
    size_t *order, *first, *count;
    int *excluded;
    double *q, *qn, *res;
} setup_data;

static void free_setup(setup_data *d)
{
    tram__free(d->P);
    tram__free(d->order);
    tram__free(d->first);
    tram__free(d->count);
    tram__free(d->excluded);
    tram__free(d->q);
    tram__free(d->qn);
    tram__free(d->res);
}

static tram_status prepare(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                           setup_data *d, pctx *c)
{
    size_t n = r->count, m = obs->npoints;
    memset(d, 0, sizeof *d);
    d->P = tram__malloc((n ? n : 1) * sizeof *d->P);
    d->order = tram__malloc((obs->n ? obs->n : 1) * sizeof *d->order);
    d->first = tram__calloc(n ? n : 1, sizeof *d->first);
    d->count = tram__calloc(n ? n : 1, sizeof *d->count);
    d->excluded = tram__calloc(obs->n ? obs->n : 1, sizeof *d->excluded);
    d->q = tram__malloc((m ? m : 1) * 3 * sizeof *d->q);
    d->qn = tram__malloc((m ? m : 1) * sizeof *d->qn);
    d->res = tram__malloc((obs->n ? obs->n : 1) * sizeof *d->res);
    if (!d->P || !d->order || !d->first || !d->count || !d->excluded || !d->q || !d->qn || !d->res)
        return TRAM_ENOMEM;
    for (size_t i = 0; i < n; i++) {
        if (setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(&r->stations[i].T_base_flange, &d->P[i]);
        else d->P[i] = r->stations[i].T_base_flange;
    }
    for (size_t o = 0; o < obs->n; o++) d->count[obs->station[o]]++;
    for (size_t i = 1; i < n; i++) d->first[i] = d->first[i - 1] + d->count[i - 1];
    size_t *fill = tram__calloc(n ? n : 1, sizeof *fill);
    if (!fill) return TRAM_ENOMEM;
    for (size_t o = 0; o < obs->n; o++) {
        size_t s = obs->station[o];
        d->order[d->first[s] + fill[s]++] = o;
    }
    tram__free(fill);
    c->P = d->P;
    c->obs = obs;
    c->order = d->order;
    c->first = d->first;
    c->count = d->count;
    c->excluded = d->excluded;
    c->q = d->q;
    c->qn = d->qn;
    c->inv_sigma = 1.0;
    return TRAM_OK;
}

/* Robust per-axis sigma of the included residual norms. */
static double robust_sigma(const double *res, const int *excl, size_t n)
{
    double *v = tram__malloc((n ? n : 1) * sizeof *v);
    if (!v) return NAN;
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        if (!excl[i]) v[k++] = res[i];
    double s = tram__median(v, k) / CHI3_MEDIAN_SQRT;
    tram__free(v);
    return s;
}

/* Median distance of the observed points from the sensor: the working
 * distance of the plausibility gate (plausibility.c). */
static double obs_dist(const void *ctx, size_t o)
{
    const double *p = (const double *)ctx + 3 * o;
    return sqrt(p[0] * p[0] + p[1] * p[1] + p[2] * p[2]);
}

static double points_working_distance(const tram_point_obs *obs)
{
    return obs->n ? tram__median_of(obs->n, obs_dist, obs->xyz) : 0.0;
}

/* Fill the point statistics of the solution. */
static tram_status point_stats(const tram_records *r, const tram_point_obs *obs, const pctx *c,
                               const setup_data *d, const tram_solution *sol, const double *model,
                               tram_point_result *pr)
{
    size_t n = r->count, m = obs->npoints;
    pr->nstations = n;
    pr->npoints = m;
    pr->nobs = obs->n;
    pr->station_rms = tram__malloc((n ? n : 1) * sizeof *pr->station_rms);
    pr->point_rms = tram__malloc((m ? m : 1) * sizeof *pr->point_rms);
    pr->point_id = tram__malloc((m ? m : 1) * sizeof *pr->point_id);
    pr->residual = tram__malloc((obs->n ? obs->n : 1) * sizeof *pr->residual);
    pr->excluded = tram__malloc((obs->n ? obs->n : 1) * sizeof *pr->excluded);
    pr->model_xyz = tram__malloc((m ? m : 1) * 3 * sizeof *pr->model_xyz);
    double *acc = tram__calloc(2 * (n + m) + 2, sizeof *acc);
    double *inl = tram__malloc((obs->n ? obs->n : 1) * sizeof *inl);
    if (!pr->station_rms || !pr->point_rms || !pr->point_id || !pr->residual || !pr->excluded ||
        !pr->model_xyz || !acc || !inl) {
        tram__free(acc);
        tram__free(inl);
        return TRAM_ENOMEM;
    }
    memcpy(pr->point_id, obs->point_id, m * sizeof *pr->point_id);
    memcpy(pr->residual, d->res, obs->n * sizeof *pr->residual);
    memcpy(pr->excluded, d->excluded, obs->n * sizeof *pr->excluded);
    memcpy(pr->model_xyz, model, 3 * m * sizeof *pr->model_xyz);
    size_t k = 0;
    double ss = 0, mx = 0;
    for (size_t o = 0; o < obs->n; o++) {
        size_t s = obs->station[o], p = obs->point[o];
        int skip = d->excluded[o] || sol->stations[s].outlier;
        if (skip) continue;
        double e2 = d->res[o] * d->res[o];
        acc[2 * s] += e2;
        acc[2 * s + 1] += 1;
        acc[2 * (n + p)] += e2;
        acc[2 * (n + p) + 1] += 1;
        inl[k++] = d->res[o];
        ss += e2;
        if (d->res[o] > mx) mx = d->res[o];
    }
    for (size_t s = 0; s < n; s++) pr->station_rms[s] = acc[2 * s + 1] > 0 ? sqrt(acc[2 * s] / acc[2 * s + 1]) : NAN;
    for (size_t p = 0; p < m; p++)
        pr->point_rms[p] = acc[2 * (n + p) + 1] > 0 ? sqrt(acc[2 * (n + p)] / acc[2 * (n + p) + 1]) : NAN;
    pr->point.rms = k ? sqrt(ss / (double)k) : 0;
    pr->point.median = tram__median(inl, k);
    pr->point.max = mx;
    tram__free(acc);
    tram__free(inl);
    (void)c;
    return TRAM_OK;
}

static tram_status solve_with_model(const tram_records *r, tram_setup setup,
                                    const tram_point_obs *obs, const tram_point_model *model,
                                    const tram_solve_options *opt, tram_solution **out,
                                    tram_error *err)
{
    size_t n = r->count, m = obs->npoints;
    /* Model coordinates per observed point id. */
    double *mxyz = tram__malloc((m ? m : 1) * 3 * sizeof *mxyz);
    tram_records *rr = tram_records_clone(r);
    setup_data d;
    pctx c;
    memset(&c, 0, sizeof c);
    tram_status st = TRAM_OK;
    tram_solution *sol = NULL;
    if (!mxyz || !rr || prepare(r, setup, obs, &d, &c) != TRAM_OK) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    for (size_t k = 0; k < m; k++) {
        size_t j;
        for (j = 0; j < model->n; j++)
            if (strcmp(model->id[j], obs->point_id[k]) == 0) break;
        if (j == model->n) {
            long line = 0;
            for (size_t o = 0; o < obs->n && !line; o++)
                if (obs->point[o] == k) line = obs->line[o];
            st = tram__fail(err, TRAM_EINPUT, obs->source, line, 0,
                            "point '%s' is not in the model %s", obs->point_id[k], model->source);
            goto out;
        }
        memcpy(mxyz + 3 * k, model->xyz + 3 * j, 3 * sizeof *mxyz);
    }
    c.model = mxyz;
    /* Each station's target pose from its points. */
    double *from = tram__malloc((m ? m : 1) * 3 * sizeof *from), *to = tram__malloc((m ? m : 1) * 3 * sizeof *to);
    if (!from || !to) {
        tram__free(from);
        tram__free(to);
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    for (size_t i = 0; i < n && st == TRAM_OK; i++) {
        for (size_t k = 0; k < d.count[i]; k++) {
            size_t o = d.order[d.first[i] + k];
            memcpy(from + 3 * k, mxyz + 3 * obs->point[o], 3 * sizeof *from);
            memcpy(to + 3 * k, obs->xyz + 3 * o, 3 * sizeof *to);
        }
        tram_register_result reg;
        tram_error e;
        if (tram_register_points(from, to, NULL, d.count[i], NULL, &reg, &e) != TRAM_OK)
            st = tram__fail(err, TRAM_EUNDETERMINED, obs->source, 0, 0,
                            "station '%s': %zu model point(s) seen: at least 3 non-collinear "
                            "points are needed to find the target's pose (%s)",
                            r->stations[i].id, d.count[i], e.message);
        else
            rr->stations[i].T_sensor_target = reg.T_to_from;
    }
    tram__free(from);
    tram__free(to);
    if (st != TRAM_OK) goto out;
    rr->has_block[TRAM_BLOCK_SENSOR] = 1;
    rr->sensor_from_points = 1;
    st = tram_solve(rr, setup, opt, &sol, err);
    if (st != TRAM_OK || !sol->solved || !opt->refine) goto finish;
    {
        /* Refinement on the 3D point residuals. */
        double *w = tram__malloc((n ? n : 1) * sizeof *w);
        if (!w) {
            st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
            goto finish;
        }
        size_t maxc = 0;
        for (size_t i = 0; i < n; i++) {
            w[i] = sol->stations[i].outlier ? 0.0 : 1.0;
            if (d.count[i] > maxc) maxc = d.count[i];
        }
        obs_residuals(&c, &sol->X, &sol->Z, d.res);
        double sig = robust_sigma(d.res, d.excluded, obs->n);
        if (!(sig > 1e-12)) sig = 1e-12;
        c.inv_sigma = 1.0 / sig;
        tram_refine_problem pb = {.n = n, .length_scale = 1.0, .eval = eval_model, .nblocks = n,
                                  .maxdim = 3 * (maxc ? maxc : 1), .ctx = &c};
        st = tram__refine_run(&pb, w, 0, &sol->X, &sol->Z);
        if (st == TRAM_OK) {
            obs_residuals(&c, &sol->X, &sol->Z, d.res);
            size_t k = 0;
            double ss = 0;
            for (size_t o = 0; o < obs->n; o++)
                if (w[obs->station[o]] > 0) {
                    ss += d.res[o] * d.res[o];
                    k++;
                }
            double dof = 3.0 * (double)k - 12.0;
            if (dof > 0) c.inv_sigma = 1.0 / fmax(sqrt(ss / dof), 1e-12);
            double cov[144], cond;
            if (tram__refine_covariance(&pb, w, &sol->X, &sol->Z, 1.0, cov, &cond) == TRAM_OK) {
                for (int a = 0; a < 12; a++) {
                    int q = (a / 6) * 6 + (a % 6 < 3 ? 3 + a % 6 : a % 6 - 3);
                    double sd = sqrt(fmax(cov[q * 12 + q], 0.0));
                    sol->unc.sigma[a] = (a % 6) >= 3 ? sd * 180.0 / TRAM_PI : sd;
                    for (int b = 0; b < 12; b++) {
                        int q2 = (b / 6) * 6 + (b % 6 < 3 ? 3 + b % 6 : b % 6 - 3);
                        sol->unc.cov[a * 12 + b] = cov[q * 12 + q2];
                    }
                }
                sol->unc.valid = 1;
                tram__unc_intervals(&sol->unc, dof);
                sol->unc.bootstrap_valid = 0; /* it measured the pose refinement */
                sol->condition = cond;
            }
            /* Station pose residuals against the refined solution. */
            double rot, tr;
            for (size_t i = 0; i < n; i++) {
                tram_se3 Pi = d.P[i];
                tram_handeye_residuals(&Pi, &rr->stations[i].T_sensor_target, 1, &sol->X, &sol->Z, &rot, &tr);
                sol->stations[i].rot_deg = rot * 180.0 / TRAM_PI;
                sol->stations[i].trans = tr;
            }
        }
        tram__free(w);
        if (st != TRAM_OK) {
            st = tram__fail(err, st, NULL, 0, 0, "point refinement failed");
            goto finish;
        }
    }
finish:
    if (sol && sol->solved) {
        tram_point_result *pr = tram__calloc(1, sizeof *pr);
        obs_residuals(&c, &sol->X, &sol->Z, d.res);
        if (!pr || point_stats(r, obs, &c, &d, sol, mxyz, pr) != TRAM_OK) {
            tram__point_result_free(pr);
            if (st == TRAM_OK) st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        } else {
            pr->with_model = 1;
            pr->noise_length = 1.0 / c.inv_sigma;
            sol->points = pr;
            /* The pose solve ran the pairing test; gate the point residuals
             * (once: not again when the station residuals failed already). */
            if (st == TRAM_OK && !sol->trust.gate_failed &&
                tram__gate(sol, &opt->trust, points_working_distance(obs), NAN, pr->point.rms,
                           "3D point") != TRAM_OK)
                st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        }
    }
out:
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) {
        tram_solution_destroy(sol);
        sol = NULL;
    }
    *out = sol;
    free_setup(&d);
    tram__free(mxyz);
    tram_records_destroy(rr);
    return st;
}

/* The convention doctor's fit for observed points without a model. */
typedef struct doc_ctx {
    const tram_point_obs *obs;
} doc_ctx;

static tram_status free_fit(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                            tram_se3 *X, tram_se3 *Z, setup_data *d, pctx *c, int robust,
                            tram_error *err);

static tram_status doctor_fit(const tram_records *r, tram_setup setup, const void *ctx,
                              double *med_rot, double *med_tr, double *mount_len)
{
    const doc_ctx *dc = ctx;
    setup_data d;
    pctx c;
    memset(&c, 0, sizeof c);
    tram_se3 X, Z;
    tram_error e;
    tram_status st = free_fit(r, setup, dc->obs, &X, &Z, &d, &c, 0, &e);
    if (st == TRAM_OK) {
        obs_residuals(&c, &X, &Z, d.res);
        *med_rot = 0.0;
        *med_tr = tram__median(d.res, dc->obs->n);
        const tram_se3 *M = setup == TRAM_SETUP_EYE_TO_HAND ? &Z : &X;
        *mount_len = sqrt(tram__sq(M->m[0][3]) + tram__sq(M->m[1][3]) + tram__sq(M->m[2][3]));
    }
    free_setup(&d);
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
    setup_data d;
    pctx c;
    memset(&c, 0, sizeof c);
    tram_se3 X;
    tram_error e;
    tram_status st = prepare(pc->work, pc->setup, pc->dc.obs, &d, &c);
    if (st == TRAM_OK) st = linear_start(&c, &X, &e);
    if (st == TRAM_OK) {
        obs_residuals(&c, &X, NULL, d.res);
        *med_rot = 0.0;
        *med_tr = tram__median(d.res, pc->dc.obs->n);
    }
    free_setup(&d);
    return st;
}

/* Gate on the 3D point residuals and the pairing test of a solve from
 * points (plausibility.c, pairing.c). */
static tram_status points_trust(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                                const tram_solve_options *opt, tram_solution *sol)
{
    const tram_trust_options *t = &opt->trust;
    tram_status st = tram__gate(sol, t, points_working_distance(obs), NAN, sol->points->point.rms,
                                "3D point");
    if (st != TRAM_OK || t->pairing_permutations == 0 || r->count < 3) return st;
    pair_ctx pc = {r, tram_records_clone(r), setup, {obs}};
    if (!pc.work) return TRAM_ENOMEM;
    tram__pairing_result pr;
    double lscale = points_working_distance(obs);
    st = tram__pairing_test(r->count, t->pairing_permutations, opt->seed, t->pairing_factor, 0,
                            1e-9 * (lscale > 0 ? lscale : 1), pairing_fit, &pc, &pr);
    tram_records_destroy(pc.work);
    if (st == TRAM_OK && pr.permutations > 0)
        st = tram__pairing_report(sol, pr.permutations, opt->seed, pr.ratio_rot, pr.ratio_trans,
                                  pr.failed, t->pairing_factor);
    return st;
}

static tram_status free_fit(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                            tram_se3 *X, tram_se3 *Z, setup_data *d, pctx *c, int robust,
                            tram_error *err)
{
    if (prepare(r, setup, obs, d, c) != TRAM_OK)
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    tram_status st = linear_start(c, X, err);
    if (st != TRAM_OK) return st;
    tram_se3_identity(Z);
    tram_refine_problem pb = {.n = r->count, .length_scale = 1.0, .eval = eval_free, .nblocks = 1,
                              .maxdim = 3 * obs->n, .ctx = c, .nfree = 6};
    for (int round = 0; round < (robust ? 2 : 1); round++) {
        obs_residuals(c, X, Z, d->res);
        double sig = robust_sigma(d->res, d->excluded, obs->n);
        c->inv_sigma = 1.0 / (sig > 1e-12 ? sig : 1e-12);
        if ((st = tram__refine_run(&pb, NULL, 0, X, Z)) != TRAM_OK) return st;
        if (!robust) break;
        obs_residuals(c, X, Z, d->res);
        sig = robust_sigma(d->res, d->excluded, obs->n);
        double k = sqrt(tram__chi2_quantile(1.0 - FAMILY_ALPHA / (double)obs->n, 3.0));
        size_t nex = 0;
        for (size_t o = 0; o < obs->n; o++) {
            d->excluded[o] = d->res[o] > k * sig && d->res[o] > 1e-9;
            nex += (size_t)d->excluded[o];
        }
        if (nex == 0) break;
    }
    eliminate(c, X);
    target_frame(c->q, obs->npoints, obs->point_id[0], Z);
    return TRAM_OK;
}

static tram_status solve_free(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                              const tram_solve_options *opt, tram_solution **out, tram_error *err)
{
    size_t n = r->count, m = obs->npoints;
    tram_solution *sol = tram__calloc(1, sizeof *sol);
    setup_data d;
    pctx c;
    memset(&c, 0, sizeof c);
    memset(&d, 0, sizeof d);
    tram_status st = TRAM_OK;
    double *model = NULL;
    if (!sol || !(sol->stations = tram__calloc(n ? n : 1, sizeof *sol->stations))) {
        tram__free(sol);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    sol->setup = setup;
    sol->length_unit = r->length_unit;
    sol->n = n;
    sol->trustworthy = 1;
    sol->start_method = TRAM_METHOD_AUTO;
    sol->X_name = setup == TRAM_SETUP_EYE_IN_HAND ? "T_flange_sensor" : "T_base_sensor";
    sol->Z_name = setup == TRAM_SETUP_EYE_IN_HAND ? "T_base_target" : "T_flange_target";
    for (int k = 0; k < TRAM_METHOD_COUNT; k++) sol->closed_rot_rms_deg[k] = sol->closed_trans_rms[k] = NAN;
    {
        tram_se3 *P, *S;
        if (tram__station_poses(r, setup, &P, &S) == TRAM_OK) {
            int bad = tram__observability(P, n, setup, sol);
            tram__free(P);
            tram__free(S);
            if (bad) {
                *out = sol;
                return tram__fail(err, TRAM_EUNDETERMINED, r->source, 0, 0, "%s",
                                  sol->diag[sol->ndiag - 1].message);
            }
        }
    }
    st = free_fit(r, setup, obs, &sol->X, &sol->Z, &d, &c, opt->robust, err);
    if (st != TRAM_OK) goto out;
    sol->solved = 1;
    sol->refined = 1;
    model = tram__malloc((m ? m : 1) * 3 * sizeof *model);
    if (!model) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    for (size_t k = 0; k < m; k++) {
        double pz[3];
        tram_se3 Zi;
        tram_se3_invert(&sol->Z, &Zi);
        tram_se3_apply_point(&Zi, c.q + 3 * k, pz);
        memcpy(model + 3 * k, pz, sizeof pz);
    }
    /* Noise and uncertainty of X (the point positions are eliminated). */
    obs_residuals(&c, &sol->X, &sol->Z, d.res);
    size_t k = 0;
    double ss = 0;
    for (size_t o = 0; o < obs->n; o++)
        if (!d.excluded[o]) {
            ss += d.res[o] * d.res[o];
            k++;
        }
    double dof = 3.0 * (double)k - 6.0 - 3.0 * (double)m;
    double sig = dof > 0 ? sqrt(ss / dof) : NAN;
    if (sig > 0) c.inv_sigma = 1.0 / sig;
    tram_refine_problem pb = {.n = n, .length_scale = 1.0, .eval = eval_free, .nblocks = 1,
                              .maxdim = 3 * obs->n, .ctx = &c, .nfree = 6};
    double cov[144], cond;
    for (int a = 0; a < 12; a++) sol->unc.sigma[a] = NAN;
    for (int a = 0; a < 144; a++) sol->unc.cov[a] = NAN;
    if (sig > 0 && tram__refine_covariance(&pb, NULL, &sol->X, &sol->Z, 1.0, cov, &cond) == TRAM_OK) {
        for (int a = 0; a < 6; a++) {
            int q = a < 3 ? 3 + a : a - 3;
            double sd = sqrt(fmax(cov[q * 12 + q], 0.0));
            sol->unc.sigma[a] = a >= 3 ? sd * 180.0 / TRAM_PI : sd;
            for (int b = 0; b < 6; b++) {
                int q2 = b < 3 ? 3 + b : b - 3;
                sol->unc.cov[a * 12 + b] = cov[q * 12 + q2];
            }
        }
        sol->unc.valid = 1;
        tram__unc_intervals(&sol->unc, dof);
        sol->condition = cond;
    }
    sol->noise_length = sig;
    sol->noise_angle_deg = NAN;
    /* Station pose residuals where a station saw 3 or more points. */
    for (size_t i = 0; i < n; i++) {
        sol->stations[i].rot_deg = NAN;
        sol->stations[i].trans = NAN;
    }
    {
        tram_point_result *pr = tram__calloc(1, sizeof *pr);
        if (!pr || point_stats(r, obs, &c, &d, sol, model, pr) != TRAM_OK) {
            tram__point_result_free(pr);
            st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
            goto out;
        }
        pr->with_model = 0;
        pr->noise_length = sig;
        sol->points = pr;
        for (size_t i = 0; i < n; i++) sol->stations[i].trans = pr->station_rms[i];
        sol->trans = pr->point;
        sol->rot_deg.rms = sol->rot_deg.median = sol->rot_deg.max = NAN;
        size_t nex = 0;
        for (size_t o = 0; o < obs->n; o++) nex += (size_t)d.excluded[o];
        if (nex) {
            char msg[120];
            snprintf(msg, sizeof msg, "%zu observed point(s) flagged as outliers and excluded", nex);
            if (tram__diag_add(sol, "point-outliers", TRAM_SEVERITY_INFO, "%s", msg) != TRAM_OK) goto nomem;
        }
        if (m == 1 && tram__diag_add(sol, "single-point", TRAM_SEVERITY_INFO,
                                     "one point per station: the sensor's mount and the point's "
                                     "fixed position were solved; the point has no orientation, "
                                     "so %s is a translation only",
                                     sol->Z_name) != TRAM_OK)
            goto nomem;
    }
    if (tram__check_units(r, sol) != TRAM_OK) goto nomem;
    if (opt->check_conventions) {
        doc_ctx dc = {obs};
        if ((st = tram__check_conventions_with(r, setup, sol, doctor_fit, &dc, 0, &opt->trust, points_working_distance(obs))) != TRAM_OK) {
            st = tram__fail(err, st, NULL, 0, 0, "out of memory");
            goto out;
        }
    }
    if (points_trust(r, setup, obs, opt, sol) != TRAM_OK) goto nomem;
    goto out;
nomem:
    st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
out:
    free_setup(&d);
    tram__free(model);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) {
        tram_solution_destroy(sol);
        sol = NULL;
    }
    *out = sol;
    return st;
}

tram_status tram_solve_points(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                              const tram_point_model *model, const tram_solve_options *opt_in,
                              tram_solution **out, tram_error *err)
{
    *out = NULL;
    tram_solve_options defaults;
    tram_solve_options_init(&defaults);
    const tram_solve_options *opt = opt_in ? opt_in : &defaults;
    if (setup == TRAM_SETUP_UNSET)
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          "no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass --setup");
    if (!r->has_block[TRAM_BLOCK_ROBOT])
        return tram__fail(err, TRAM_EINPUT, r->source, 0, 0,
                          r->n_joints ? "the record file gives joint readings: pass --chain FILE"
                                      : "solving from points needs the robot poses (robot_ columns)");
    if (model) return solve_with_model(r, setup, obs, model, opt, out, err);
    return solve_free(r, setup, obs, opt, out, err);
}
