/*
 * points_fit.c - the parts of hand-eye calibration from observed 3D points
 * (points_solve.c) that both its solves share.
 *
 * Per observation (station i, point k, p the point in the sensor frame,
 * s the sensor's length scale, 1 unless fitted or tested):
 *   with a model     r = P_i X (s p) - Z m_k   (one block per station);
 *   without a model  r = P_i X (s p) - q_k, q_k eliminated as the mean of its
 *                    observations (variable projection, Golub & Pereyra,
 *                    SIAM J. Numer. Anal. 10(2), 1973; one block).
 * The linear start without a model solves vec(R_X), t_X and all q_k from
 *   R_Pi (p^T (x) I) vec(R_X) + R_Pi t_X - q_k = -t_Pi
 * by least squares (LAPACKE), projects R_X onto SO(3) and re-solves t_X and
 * the q_k.  The scale's test refines with s free (the similarity form, as in
 * Umeyama, IEEE Trans. PAMI 13(4), 1991) and reports it (scale.c).
 */
#include "solve/points_fit_internal.h"
#include "solve/pipeline_internal.h"
#include "math/linalg_internal.h"
#include "math/stats_internal.h"
#include "solve/scale_internal.h"

#include <math.h>
#include <string.h>

#define CHI3_MEDIAN_SQRT 1.5381722

static void obs_world(const tram__pts_ctx *c, size_t o, const tram_se3 *X, double out[3])
{
    double s[3], p[3];
    for (int a = 0; a < 3; a++) p[a] = *c->scale * c->obs->xyz[3 * o + (size_t)a];
    tram_se3_apply_point(X, p, s);
    tram_se3_apply_point(&c->P[c->obs->station[o]], s, out);
}

/* With a model: block = station, residuals (P X p - Z m) / sigma. */
size_t tram__pts_eval_model(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                            const tram_se3 *Z, double *r)
{
    const tram__pts_ctx *c = pb->ctx;
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
void tram__pts_eliminate(const tram__pts_ctx *c, const tram_se3 *X)
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
size_t tram__pts_eval_free(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                           const tram_se3 *Z, double *r)
{
    (void)i;
    (void)Z;
    const tram__pts_ctx *c = pb->ctx;
    tram__pts_eliminate(c, X);
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
void tram__pts_residuals(const tram__pts_ctx *c, const tram_se3 *X, const tram_se3 *Z, double *res)
{
    if (!c->model) tram__pts_eliminate(c, X);
    for (size_t o = 0; o < c->obs->n; o++) {
        double w[3], q[3];
        obs_world(c, o, X, w);
        if (c->model) tram_se3_apply_point(Z, c->model + 3 * c->obs->point[o], q);
        else memcpy(q, c->q + 3 * c->obs->point[o], sizeof q);
        res[o] = sqrt(tram__sq(w[0] - q[0]) + tram__sq(w[1] - q[1]) + tram__sq(w[2] - q[2]));
    }
}

/* Linear start without a model (see the file comment). */
tram_status tram__pts_linear_start(const tram__pts_ctx *c, tram_se3 *X, tram_error *err)
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
    if (st == TRAM_ENOMEM) tram__fail(err, st, NULL, 0, 0, "out of memory");
    return st;
}

/* Target frame from solved points: centroid and principal axes. */
void tram__pts_target_frame(const double *q, size_t m, const char *first_id, tram_se3 *Z)
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


void tram__pts_setup_free(tram__pts_setup *d)
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

tram_status tram__pts_prepare(const tram_records *r, tram_setup setup, const tram_point_obs *obs,
                              tram__pts_setup *d, tram__pts_ctx *c)
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
    d->scale = 1.0;
    c->scale = &d->scale;
    return TRAM_OK;
}

/* Robust per-axis sigma of the included residual norms into *sigma;
 * TRAM_ENOMEM when the work copy cannot be had. */
tram_status tram__pts_robust_sigma(const double *res, const int *excl, size_t n, double *sigma)
{
    double *v = tram__malloc((n ? n : 1) * sizeof *v);
    if (!v) return TRAM_ENOMEM;
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        if (!excl[i]) v[k++] = res[i];
    *sigma = tram__median(v, k) / CHI3_MEDIAN_SQRT;
    tram__free(v);
    return TRAM_OK;
}

/* Median distance of the observed points from the sensor: the working
 * distance of the plausibility gate (plausibility.c). */
static double obs_dist(const void *ctx, size_t o)
{
    const double *p = (const double *)ctx + 3 * o;
    return sqrt(p[0] * p[0] + p[1] * p[1] + p[2] * p[2]);
}

double tram__pts_working_distance(const tram_point_obs *obs)
{
    return obs->n ? tram__median_of(obs->n, obs_dist, obs->xyz) : 0.0;
}

/* Fill the point statistics of the solution. */
tram_status tram__pts_stats(const tram_records *r, const tram_point_obs *obs,
                            const tram__pts_ctx *c, const tram__pts_setup *d,
                            const tram_solution *sol, const double *model, tram_point_result *pr)
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

/* The first nblk*6 public sigmas and covariance of sol from the
 * refinement's covariance (parameter order, length and rad). */
void tram__pts_store_uncertainty(const double cov[144], int nblk, double cond, double dof,
                                 tram_solution *sol)
{
    for (int a = 0; a < 6 * nblk; a++) {
        int q = tram__pub_param(a);
        double sd = sqrt(fmax(cov[q * 12 + q], 0.0));
        sol->unc.sigma[a] = (a % 6) >= 3 ? sd * 180.0 / TRAM_PI : sd;
        for (int b = 0; b < 6 * nblk; b++)
            sol->unc.cov[a * 12 + b] = cov[q * 12 + tram__pub_param(b)];
    }
    sol->unc.valid = 1;
    tram__unc_intervals(&sol->unc, dof); /* Student-t half-widths */
    sol->condition = cond;
}

/* Sum of squared residual norms of the observations used (not excluded,
 * of a station with weight w > 0; w NULL: all stations); *k their count. */
double tram__pts_used_ss(const tram_point_obs *obs, const tram__pts_setup *d, const double *w,
                         size_t *k)
{
    double ss = 0;
    *k = 0;
    for (size_t o = 0; o < obs->n; o++)
        if (!d->excluded[o] && (!w || w[obs->station[o]] > 0)) {
            ss += d->res[o] * d->res[o];
            (*k)++;
        }
    return ss;
}

/* The scale test of a solve that keeps s = 1 (scale.c): pb0's problem
 * refined from (X, Z) with the sensor's scale free, its noise from those
 * residuals (dof0 - 1 degrees of freedom: one parameter more) and
 * the scale's variance; then back to s = 1 and the residuals at (X, Z).
 * TRAM_ENOMEM only. */
tram_status tram__pts_scale_test(const tram_refine_problem *pb0, const double *w,
                                 const tram_point_obs *obs, tram__pts_setup *d, tram__pts_ctx *c,
                                 double dof0, const tram_se3 *X, const tram_se3 *Z, tram_solution *sol)
{
    tram_refine_problem pb = *pb0;
    pb.scale = &d->scale;
    double inv0 = c->inv_sigma, var = NAN;
    tram_se3 Xs = *X, Zs = *Z;
    d->scale = 1.0;
    tram_status st = dof0 - 1.0 > 0 ? tram__refine_run(&pb, w, 0, &Xs, &Zs) : TRAM_EUNDETERMINED;
    if (st == TRAM_OK) {
        size_t k;
        tram__pts_residuals(c, &Xs, &Zs, d->res);
        double sig = sqrt(tram__pts_used_ss(obs, d, w, &k) / (dof0 - 1.0));
        c->inv_sigma = 1.0 / fmax(sig, 1e-12);
        double cov[144];
        st = tram__refine_covariance_scale(&pb, w, &Xs, &Zs, 1.0, cov, NULL, &var, NULL);
    }
    double s = d->scale;
    d->scale = 1.0;
    c->inv_sigma = inv0;
    tram__pts_residuals(c, X, Z, d->res);
    if (st == TRAM_ENOMEM) return st;
    return tram__scale_report(sol, s, st == TRAM_OK ? var : NAN, 0);
}
