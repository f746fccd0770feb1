/*
 * intrinsics_lm.c - the non-linear refinement of a planar calibration:
 * Levenberg-Marquardt (Levenberg 1944; Marquardt 1963, "An algorithm for
 * least-squares estimation of nonlinear parameters", SIAM J. Appl. Math.
 * 11(2)) over the intrinsics, the Brown-Conrady distortion (Brown 1966)
 * and every view's pose, as in Zhang (2000), section 3.3, with a Huber
 * loss (Huber 1964, "Robust estimation of a location parameter") applied
 * by reweighting.
 *
 * Jacobians are analytic.  A view's rotation is updated on the left,
 * R <- exp([d]x) R, so that d is a small rotation about the sensor's axes
 * and dp/dd = -[R X]x; the covariance of d is then that of the rotation in
 * the sensor frame.  The normal equations are dense (at most 10 + 6 views
 * unknowns) and solved by Cholesky through LAPACKE (linalg.c), with
 * Marquardt's scaling of the damping by the diagonal.
 */
#include "camera/camera_internal.h"
#include "camera/intrinsics_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

int tram__bundle_project(const tram_camera *c, const tram_mat3 *R, const double t[3],
                         const double xy[2], double uv[2], double *Jint, double *Jpose)
{
    double X[3] = {xy[0], xy[1], 0.0}, q[3], p[3];
    tram_so3_apply(R, X, q);
    for (int a = 0; a < 3; a++) p[a] = q[a] + t[a];
    if (!(p[2] > 0)) return 0;
    double x = p[0] / p[2], y = p[1] / p[2], d[2];
    tram_camera_distort(c, (double[2]){x, y}, d);
    uv[0] = c->fx * d[0] + c->skew * d[1] + c->cx;
    uv[1] = c->fy * d[1] + c->cy;
    if (!Jint) return 1;
    double r2 = x * x + y * y, r4 = r2 * r2, r6 = r4 * r2;
    /* d(xd, yd) / d(coefficient), then through the intrinsic matrix */
    double dd[5][2] = {{x * r2, y * r2}, {x * r4, y * r4}, {x * r6, y * r6},
                       {2 * x * y, r2 + 2 * y * y}, {r2 + 2 * x * x, 2 * x * y}};
    double *Ju = Jint, *Jv = Jint + TRAM_CAM_NPARAM;
    memset(Jint, 0, 2 * TRAM_CAM_NPARAM * sizeof *Jint);
    Ju[TRAM_CAM_FX] = d[0];
    Ju[TRAM_CAM_SKEW] = d[1];
    Ju[TRAM_CAM_CX] = 1;
    Jv[TRAM_CAM_FY] = d[1];
    Jv[TRAM_CAM_CY] = 1;
    for (int k = 0; k < 5; k++) {
        Ju[TRAM_CAM_K1 + k] = c->fx * dd[k][0] + c->skew * dd[k][1];
        Jv[TRAM_CAM_K1 + k] = c->fy * dd[k][1];
    }
    /* pose: d uv / d p = Kp D dxy/dp, then dp/d(rot, t) = [-[q]x | I] */
    double D[4];
    tram__camera_distort_jacobian(c, x, y, D);
    double KD[4] = {c->fx * D[0] + c->skew * D[2], c->fx * D[1] + c->skew * D[3], c->fy * D[2],
                    c->fy * D[3]};
    double iz = 1.0 / p[2];
    double P[2][3] = {{KD[0] * iz, KD[1] * iz, -(KD[0] * x + KD[1] * y) * iz},
                      {KD[2] * iz, KD[3] * iz, -(KD[2] * x + KD[3] * y) * iz}};
    for (int i = 0; i < 2; i++) {
        const double *g = P[i];
        double *J = Jpose + 6 * i;
        /* g^T (-[q]x) = (q x g)^T */
        J[0] = q[1] * g[2] - q[2] * g[1];
        J[1] = q[2] * g[0] - q[0] * g[2];
        J[2] = q[0] * g[1] - q[1] * g[0];
        J[3] = g[0];
        J[4] = g[1];
        J[5] = g[2];
    }
    return 1;
}

int tram__bundle_residuals(const tram__bundle *b, const tram__bundle_state *s, double *res)
{
    for (size_t i = 0; i < b->nobs; i++) {
        size_t k = b->view[i];
        double uv[2];
        if (!tram__bundle_project(&s->cam, &s->R[k], s->t[k], &b->xy[2 * i], uv, NULL, NULL))
            return 0;
        res[2 * i] = b->uv[2 * i] - uv[0];
        res[2 * i + 1] = b->uv[2 * i + 1] - uv[1];
    }
    return 1;
}

/* The Huber weight of a residual of length e, and its loss. */
static double huber_weight(double e, double c) { return c > 0 && e > c ? c / e : 1.0; }
static double huber_loss(double e, double c) { return c > 0 && e > c ? c * e - 0.5 * c * c : 0.5 * e * e; }

/* Robust cost, or HUGE_VAL when a point is behind the camera. */
static double cost_of(const tram__bundle *b, const tram__bundle_state *s, const double *w, double c)
{
    double sum = 0;
    for (size_t i = 0; i < b->nobs; i++) {
        if (w && w[i] == 0) continue;
        double uv[2];
        if (!tram__bundle_project(&s->cam, &s->R[b->view[i]], s->t[b->view[i]], &b->xy[2 * i], uv, NULL, NULL))
            return HUGE_VAL;
        double e = hypot(b->uv[2 * i] - uv[0], b->uv[2 * i + 1] - uv[1]);
        sum += (w ? w[i] : 1.0) * huber_loss(e, c);
    }
    return sum;
}

/* J^T W J into A and J^T W r into g at s (the Huber weights at s). */
static void normal_equations(const tram__bundle *b, const tram__bundle_state *s, const double *w,
                             double c, double *A, double *g)
{
    size_t P = tram__bundle_nparam(b), ni = (size_t)b->nint;
    int map[TRAM_CAM_NPARAM], m = 0;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) map[k] = b->free_param[k] ? m++ : -1;
    memset(A, 0, P * P * sizeof *A);
    memset(g, 0, P * sizeof *g);
    for (size_t i = 0; i < b->nobs; i++) {
        if (w && w[i] == 0) continue;
        size_t k = b->view[i];
        double uv[2], Ji[2 * TRAM_CAM_NPARAM], Jp[12];
        if (!tram__bundle_project(&s->cam, &s->R[k], s->t[k], &b->xy[2 * i], uv, Ji, Jp)) continue;
        double r[2] = {b->uv[2 * i] - uv[0], b->uv[2 * i + 1] - uv[1]};
        double wi = (w ? w[i] : 1.0) * huber_weight(hypot(r[0], r[1]), c);
        /* the row's non-zero entries: free intrinsics, then the view's six */
        size_t idx[TRAM_CAM_NPARAM + 6];
        double row[2][TRAM_CAM_NPARAM + 6];
        size_t nz = 0;
        for (int q = 0; q < TRAM_CAM_NPARAM; q++)
            if (map[q] >= 0) {
                idx[nz] = (size_t)map[q];
                row[0][nz] = Ji[q];
                row[1][nz] = Ji[TRAM_CAM_NPARAM + q];
                nz++;
            }
        for (int q = 0; q < 6; q++) {
            idx[nz] = ni + 6 * k + (size_t)q;
            row[0][nz] = Jp[q];
            row[1][nz] = Jp[6 + q];
            nz++;
        }
        for (size_t a = 0; a < nz; a++) {
            g[idx[a]] += wi * (row[0][a] * r[0] + row[1][a] * r[1]);
            for (size_t bb = 0; bb < nz; bb++)
                A[idx[a] * P + idx[bb]] += wi * (row[0][a] * row[0][bb] + row[1][a] * row[1][bb]);
        }
    }
}

/* s + delta into out (out's arrays already allocated). */
static void step(const tram__bundle *b, const tram__bundle_state *s, const double *delta,
                 tram__bundle_state *out)
{
    out->cam = s->cam;
    int m = 0;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        if (!b->free_param[k]) continue;
        double *v[TRAM_CAM_NPARAM] = {&out->cam.fx, &out->cam.fy, &out->cam.cx, &out->cam.cy,
                                      &out->cam.skew, &out->cam.k1, &out->cam.k2, &out->cam.k3,
                                      &out->cam.p1, &out->cam.p2};
        *v[k] += delta[m++];
    }
    for (size_t k = 0; k < b->nviews; k++) {
        const double *d = &delta[(size_t)b->nint + 6 * k];
        tram_mat3 E;
        tram_so3_exp(d, &E);
        tram_so3_mul(&E, &s->R[k], &out->R[k]);
        for (int a = 0; a < 3; a++) out->t[k][a] = s->t[k][a] + d[3 + a];
    }
}

tram_status tram__bundle_refine(const tram__bundle *b, tram__bundle_state *s, const double *w,
                                double huber_px, int max_iterations, int *iterations, double *JtJ)
{
    size_t P = tram__bundle_nparam(b);
    double *A = tram__malloc((2 * P * P + 3 * P) * sizeof *A);
    tram__bundle_state trial = {s->cam, tram__malloc((b->nviews ? b->nviews : 1) * sizeof(tram_mat3)),
                                tram__malloc((b->nviews ? b->nviews : 1) * sizeof *s->t)};
    tram_status st = TRAM_OK;
    if (!A || !trial.R || !trial.t) {
        st = TRAM_ENOMEM;
        goto done;
    }
    double *Ad = A + P * P, *g = Ad + P * P, *delta = g + P, *diag = delta + P;
    double cost = cost_of(b, s, w, huber_px), lambda = 1e-3;
    *iterations = 0;
    if (!isfinite(cost)) {
        st = TRAM_EUNDETERMINED;
        goto done;
    }
    for (int it = 0; it < max_iterations; it++) {
        normal_equations(b, s, w, huber_px, A, g);
        double dmax = 0;
        for (size_t a = 0; a < P; a++) dmax = fmax(dmax, A[a * P + a]);
        for (size_t a = 0; a < P; a++) diag[a] = fmax(A[a * P + a], 1e-12 * dmax);
        int accepted = 0, converged = 0;
        while (!accepted && lambda < 1e16) {
            memcpy(Ad, A, P * P * sizeof *A);
            for (size_t a = 0; a < P; a++) Ad[a * P + a] += lambda * diag[a];
            memcpy(delta, g, P * sizeof *g);
            tram_status ss = tram__spd_solve_overwrite((int)P, Ad, delta);
            if (ss == TRAM_ENOMEM) {
                st = ss;
                goto done;
            }
            double c2 = ss == TRAM_OK ? (step(b, s, delta, &trial), cost_of(b, &trial, w, huber_px)) : HUGE_VAL;
            if (c2 < cost) {
                converged = cost - c2 <= 1e-16 * cost;
                s->cam = trial.cam;
                memcpy(s->R, trial.R, b->nviews * sizeof *s->R);
                memcpy(s->t, trial.t, b->nviews * sizeof *s->t);
                cost = c2;
                lambda = fmax(lambda * 0.1, 1e-12);
                accepted = 1;
                (*iterations)++;
            } else {
                lambda *= 10;
            }
        }
        if (!accepted || converged) break;
    }
    if (JtJ) normal_equations(b, s, w, huber_px, JtJ, g);
done:
    tram__free(A);
    tram__free(trial.R);
    tram__free(trial.t);
    return st;
}
