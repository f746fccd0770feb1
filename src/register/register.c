/*
 * register.c - point-set registration from weighted moments: Kabsch /
 * Arun et al. (SVD), Horn (unit quaternion), Umeyama (similarity), in 3D and
 * 2D, with the uncertainty of the result.
 *
 * One streaming pass accumulates, about the first pair (x0, y0), the sums
 *   W, sum w dx, sum w dy, sum w dx dx^T, sum w dx dy^T, sum w |dy|^2
 * (dx = x - x0, dy = y - y0), in blocks of 1024 points to limit rounding
 * growth, optionally split over threads.  Then with centroids mu and the
 * centred cross-covariance S_xy = E[(y - mu_y)(x - mu_x)^T] = U D V^T:
 *   R = U diag(1, .., det(U V^T)) V^T            (Arun et al. 1987; Umeyama 1991)
 *   or R from the eigenvector of the largest eigenvalue of Horn's 4x4
 *   matrix N built from S_xy                    (Horn 1987),
 *   c = tr(R^T S_xy) / sigma_x^2 (similarity) or 1,  t = mu_y - c R mu_x,
 *   mean squared residual = sigma_y^2 - 2 c tr(R^T S_xy) + c^2 sigma_x^2.
 * Uncertainty: with r_i = y_i - c exp(w) R x_i - t, the normal matrix
 * sum w J^T J follows from the same moments (no second pass), and
 * Cov = s^2 (J^T W J)^-1 with s^2 the weighted residual sum over 3n - 6
 * (3D rigid; 3n - 7 with scale; 2n - 3 / 2n - 4 in 2D).
 */
#include "math/so3_internal.h"
#include "tram/register.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <pthread.h>
#include <string.h>

#define RAD2DEG (180.0 / TRAM_PI)
#define BLOCK 1024

typedef struct moments {
    double W, sx[3], sy[3], sxx[3][3], sxy[3][3], syy;
} moments;

typedef struct pass {
    const double *from, *to, *w;
    size_t n, begin, end;
    int dim;
    double x0[3], y0[3];
    moments m;
} pass;

static void add_moments(moments *a, const moments *b)
{
    a->W += b->W;
    a->syy += b->syy;
    for (int i = 0; i < 3; i++) {
        a->sx[i] += b->sx[i];
        a->sy[i] += b->sy[i];
        for (int j = 0; j < 3; j++) {
            a->sxx[i][j] += b->sxx[i][j];
            a->sxy[i][j] += b->sxy[i][j];
        }
    }
}

static int moments_finite(const moments *m)
{
    int ok = isfinite(m->W) && isfinite(m->syy);
    for (int i = 0; i < 3; i++) {
        ok = ok && isfinite(m->sx[i]) && isfinite(m->sy[i]);
        for (int j = 0; j < 3; j++) ok = ok && isfinite(m->sxx[i][j]) && isfinite(m->sxy[i][j]);
    }
    return ok;
}

#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define HAVE_AVX2_PASS 1
/* Unweighted 3D block with AVX2/FMA, chosen at run time when the processor
 * has them: each point's offsets dx, dy are held as 4-lane vectors (the
 * fourth lane 0), and the moments are accumulated as outer products -
 * row k of sum dx dx^T is sum dx_k dx, row k of sum dx dy^T is sum dx_k dy
 * - nine independent vector sums, so the pass runs at memory speed
 * (docs/performance.md).  Lane 3 is not used.  Same sums as the portable
 * loop, in another order of rounding (and with fused multiply-adds).  n: the number of points in the
 * arrays (for the last one no load may reach past the end). */
typedef double v4d __attribute__((vector_size(32)));

/* a + b * c with one rounding (vfmadd).  -std=c11 turns off the compiler's
 * contraction of a + b * c, so the fused form is asked for explicitly. */
__attribute__((target("avx2,fma"))) static inline v4d fma4(v4d a, v4d b, v4d c)
{
    return (v4d)_mm256_fmadd_pd((__m256d)b, (__m256d)c, (__m256d)a);
}

__attribute__((target("avx2,fma"))) static inline v4d splat4(double x)
{
    return (v4d)_mm256_set1_pd(x);
}

__attribute__((target("avx2,fma"))) static void block3_avx2(const double *from, const double *to,
                                                             size_t n, size_t b0, size_t b1,
                                                             const double o_x[3],
                                                             const double o_y[3], moments *m)
{
    const v4d ox = {o_x[0], o_x[1], o_x[2], 0.0}, oy = {o_y[0], o_y[1], o_y[2], 0.0};
    v4d sx = {0}, sy = {0}, a0 = {0}, a1 = {0}, a2 = {0}, c0 = {0}, c1 = {0}, c2 = {0}, yy = {0};
    for (size_t i = b0; i < b1; i++) {
        const double *x = from + 3 * i, *y = to + 3 * i;
        v4d dx, dy;
        if (i + 1 < n) {
            /* one unaligned load each; lane 3 (the next point's first
             * coordinate) rides along and is never read back */
            memcpy(&dx, x, sizeof dx);
            memcpy(&dy, y, sizeof dy);
        } else { /* the last point: no reading past the arrays */
            dx = (v4d){x[0], x[1], x[2], 0.0};
            dy = (v4d){y[0], y[1], y[2], 0.0};
        }
        dx -= ox;
        dy -= oy;
        sx += dx;
        sy += dy;
        const v4d d0 = splat4(dx[0]), d1 = splat4(dx[1]), d2 = splat4(dx[2]);
        a0 = fma4(a0, d0, dx);
        a1 = fma4(a1, d1, dx);
        a2 = fma4(a2, d2, dx);
        c0 = fma4(c0, d0, dy);
        c1 = fma4(c1, d1, dy);
        c2 = fma4(c2, d2, dy);
        yy = fma4(yy, dy, dy);
    }
    m->W = (double)(b1 - b0);
    for (int k = 0; k < 3; k++) {
        m->sx[k] = sx[k];
        m->sy[k] = sy[k];
        m->sxx[0][k] = a0[k];
        m->sxx[1][k] = a1[k];
        m->sxx[2][k] = a2[k];
        m->sxy[0][k] = c0[k];
        m->sxy[1][k] = c1[k];
        m->sxy[2][k] = c2[k];
    }
    m->syy = yy[0] + yy[1] + yy[2];
}
#endif

/* The hot loop: 3D and 2D versions so the compiler can keep the sums in
 * registers. */
static void *run_pass(void *arg)
{
    pass *p = arg;
    memset(&p->m, 0, sizeof p->m);
    const int d = p->dim;
#ifdef HAVE_AVX2_PASS
    const int fast = d == 3 && !p->w && __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma");
#endif
    for (size_t b0 = p->begin; b0 < p->end; b0 += BLOCK) {
        size_t b1 = b0 + BLOCK < p->end ? b0 + BLOCK : p->end;
        moments m;
        memset(&m, 0, sizeof m);
#ifdef HAVE_AVX2_PASS
        if (fast) {
            block3_avx2(p->from, p->to, p->n, b0, b1, p->x0, p->y0, &m);
            add_moments(&p->m, &m);
            continue;
        }
#endif
        if (d == 3) {
            double W = 0, sx0 = 0, sx1 = 0, sx2 = 0, sy0 = 0, sy1 = 0, sy2 = 0;
            double a00 = 0, a01 = 0, a02 = 0, a11 = 0, a12 = 0, a22 = 0;
            double c00 = 0, c01 = 0, c02 = 0, c10 = 0, c11 = 0, c12 = 0, c20 = 0, c21 = 0, c22 = 0;
            double yy = 0;
            for (size_t i = b0; i < b1; i++) {
                const double *x = p->from + 3 * i, *y = p->to + 3 * i;
                double w = p->w ? p->w[i] : 1.0;
                double x0 = x[0] - p->x0[0], x1 = x[1] - p->x0[1], x2 = x[2] - p->x0[2];
                double y0 = y[0] - p->y0[0], y1 = y[1] - p->y0[1], y2 = y[2] - p->y0[2];
                double wx0 = w * x0, wx1 = w * x1, wx2 = w * x2;
                W += w;
                sx0 += wx0; sx1 += wx1; sx2 += wx2;
                sy0 += w * y0; sy1 += w * y1; sy2 += w * y2;
                a00 += wx0 * x0; a01 += wx0 * x1; a02 += wx0 * x2;
                a11 += wx1 * x1; a12 += wx1 * x2; a22 += wx2 * x2;
                c00 += wx0 * y0; c01 += wx0 * y1; c02 += wx0 * y2;
                c10 += wx1 * y0; c11 += wx1 * y1; c12 += wx1 * y2;
                c20 += wx2 * y0; c21 += wx2 * y1; c22 += wx2 * y2;
                yy += w * (y0 * y0 + y1 * y1 + y2 * y2);
            }
            m.W = W;
            m.sx[0] = sx0; m.sx[1] = sx1; m.sx[2] = sx2;
            m.sy[0] = sy0; m.sy[1] = sy1; m.sy[2] = sy2;
            m.sxx[0][0] = a00; m.sxx[0][1] = m.sxx[1][0] = a01; m.sxx[0][2] = m.sxx[2][0] = a02;
            m.sxx[1][1] = a11; m.sxx[1][2] = m.sxx[2][1] = a12; m.sxx[2][2] = a22;
            m.sxy[0][0] = c00; m.sxy[0][1] = c01; m.sxy[0][2] = c02;
            m.sxy[1][0] = c10; m.sxy[1][1] = c11; m.sxy[1][2] = c12;
            m.sxy[2][0] = c20; m.sxy[2][1] = c21; m.sxy[2][2] = c22;
            m.syy = yy;
        } else {
            for (size_t i = b0; i < b1; i++) {
                const double *x = p->from + 2 * i, *y = p->to + 2 * i;
                double w = p->w ? p->w[i] : 1.0;
                double dx[2] = {x[0] - p->x0[0], x[1] - p->x0[1]};
                double dy[2] = {y[0] - p->y0[0], y[1] - p->y0[1]};
                m.W += w;
                for (int a = 0; a < 2; a++) {
                    m.sx[a] += w * dx[a];
                    m.sy[a] += w * dy[a];
                    for (int c = 0; c < 2; c++) {
                        m.sxx[a][c] += w * dx[a] * dx[c];
                        m.sxy[a][c] += w * dx[a] * dy[c];
                    }
                }
                m.syy += w * (dy[0] * dy[0] + dy[1] * dy[1]);
            }
        }
        add_moments(&p->m, &m);
    }
    return NULL;
}

static void accumulate(const double *from, const double *to, const double *w, size_t n, int dim,
                       int threads, double x0[3], double y0[3], moments *out)
{
    memset(out, 0, sizeof *out);
    for (int a = 0; a < 3; a++) x0[a] = y0[a] = 0;
    for (int a = 0; a < dim; a++) {
        x0[a] = from[a];
        y0[a] = to[a];
    }
    if (threads > 8) threads = 8;
    if (threads < 2 || n < 200000) threads = 1;
    pass ps[8];
    pthread_t tid[8];
    int started[8] = {0};
    for (int k = 0; k < threads; k++) {
        ps[k].from = from;
        ps[k].to = to;
        ps[k].w = w;
        ps[k].dim = dim;
        ps[k].n = n;
        ps[k].begin = n * (size_t)k / (size_t)threads;
        ps[k].end = n * (size_t)(k + 1) / (size_t)threads;
        memcpy(ps[k].x0, x0, sizeof ps[k].x0);
        memcpy(ps[k].y0, y0, sizeof ps[k].y0);
        if (k > 0 && pthread_create(&tid[k], NULL, run_pass, &ps[k]) == 0) started[k] = 1;
    }
    run_pass(&ps[0]);
    for (int k = 1; k < threads; k++) {
        if (started[k]) pthread_join(tid[k], NULL);
        else run_pass(&ps[k]); /* no thread: do it here */
    }
    for (int k = 0; k < threads; k++) add_moments(out, &ps[k].m);
}

/* Horn's N matrix from S[a][b] = E[dx_a dy_b] (centred). */
static void horn_rotation(const double S[3][3], tram_mat3 *R)
{
    double Sxx = S[0][0], Sxy = S[0][1], Sxz = S[0][2], Syx = S[1][0], Syy = S[1][1],
           Syz = S[1][2], Szx = S[2][0], Szy = S[2][1], Szz = S[2][2];
    double N[16] = {Sxx + Syy + Szz, Syz - Szy,        Szx - Sxz,        Sxy - Syx,
                    Syz - Szy,       Sxx - Syy - Szz,  Sxy + Syx,        Szx + Sxz,
                    Szx - Sxz,       Sxy + Syx,        -Sxx + Syy - Szz, Syz + Szy,
                    Sxy - Syx,       Szx + Sxz,        Syz + Szy,        -Sxx - Syy + Szz};
    double ev[4], V[16];
    if (tram__symeig(4, N, ev, V) != TRAM_OK) {
        tram_so3_identity(R);
        return;
    }
    double q[4] = {V[0 * 4 + 3], V[1 * 4 + 3], V[2 * 4 + 3], V[3 * 4 + 3]};
    double n = sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2] + q[3] * q[3]);
    double w = q[0] / n, x = q[1] / n, y = q[2] / n, z = q[3] / n;
    R->m[0][0] = 1 - 2 * (y * y + z * z); R->m[0][1] = 2 * (x * y - w * z); R->m[0][2] = 2 * (x * z + w * y);
    R->m[1][0] = 2 * (x * y + w * z); R->m[1][1] = 1 - 2 * (x * x + z * z); R->m[1][2] = 2 * (y * z - w * x);
    R->m[2][0] = 2 * (x * z - w * y); R->m[2][1] = 2 * (y * z + w * x); R->m[2][2] = 1 - 2 * (x * x + y * y);
}

/* The moments about the means, from the raw sums about the first pair. */
typedef struct centred {
    double mx[3], my[3];  /* means of the offsets from x0, y0            */
    double Cxx[3][3];     /* E[dx dx^T]                                  */
    double S[3][3];       /* S[a][b] = E[dx_a dy_b]                      */
    double sig_x, sig_y;  /* E|dx|^2, E|dy|^2                            */
} centred;

static void centre_moments(const moments *m, int d, centred *c)
{
    memset(c, 0, sizeof *c);
    for (int a = 0; a < d; a++) {
        c->mx[a] = m->sx[a] / m->W;
        c->my[a] = m->sy[a] / m->W;
    }
    c->sig_y = m->syy / m->W;
    for (int a = 0; a < d; a++) {
        c->sig_y -= c->my[a] * c->my[a];
        for (int b = 0; b < d; b++) {
            c->Cxx[a][b] = m->sxx[a][b] / m->W - c->mx[a] * c->mx[b];
            c->S[a][b] = m->sxy[a][b] / m->W - c->mx[a] * c->my[b];
        }
        c->sig_x += c->Cxx[a][a];
    }
}

/* The arguments that no pass over the points can fix. */
static tram_status check_arguments(const double *weights, size_t n, int d, tram_error *err)
{
    if (n < (size_t)d)
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "%zu point pair(s): at least %d are needed in %dD to determine a "
                          "rotation and translation",
                          n, d, d);
    for (size_t i = 0; weights && i < n; i++)
        if (!(weights[i] >= 0) || !isfinite(weights[i]))
            return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "weight %zu is not a finite number >= 0",
                              i + 1);
    return TRAM_OK;
}

/* The weights' sum and the sums' size: refuse rather than hand Inf to
 * LAPACK when coordinates (or weights) are so large that the sums
 * overflow. */
static tram_status check_moments(const moments *m, tram_error *err)
{
    if (!(m->W > 0)) return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0, "all weights are zero");
    if (!moments_finite(m))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "the coordinates or weights are too large for double precision: "
                          "their weighted squares overflow (rescale the points, e.g. to "
                          "another length unit)");
    return TRAM_OK;
}

/* Spread of the from-points (the singular values of their scatter) into
 * out->spread; refuses coincident and (in 3D) collinear points. */
static tram_status check_spread(const centred *c, int d, const double x0[3],
                                tram_register_result *out, tram_error *err)
{
    double C9[9] = {0}, ev[3] = {0}, V[9];
    for (int a = 0; a < d; a++)
        for (int b = 0; b < d; b++) C9[a * d + b] = c->Cxx[a][b];
    if (tram__symeig(d, C9, ev, V) != TRAM_OK)
        return tram__fail(err, TRAM_ENUMERIC, NULL, 0, 0, "eigen decomposition failed");
    for (int a = 0; a < d; a++) out->spread[a] = sqrt(fmax(ev[d - 1 - a], 0.0));
    double big = out->spread[0];
    if (!(big > 1e-12 * (1.0 + fabs(x0[0]) + fabs(x0[1]) + fabs(x0[2]))))
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "all 'from' points coincide: the rotation cannot be determined");
    if (d == 3 && !(out->spread[1] > 1e-6 * big)) { /* eigenvalue ratio 1e-12 */
        const double *u = V + 0; /* eigenvector of the largest eigenvalue: column 2 */
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "the 'from' points are collinear (along %.3f, %.3f, %.3f): the rotation "
                          "about that line cannot be determined; add a point off the line",
                          u[2], u[5], u[8]);
    }
    return TRAM_OK;
}

/* The rotation maximising tr(R^T Sigma_xy) (Kabsch / Arun et al. by SVD
 * with the reflection fix, or Horn's quaternion; in 2D the angle in closed
 * form, which both give). */
static tram_status best_rotation(const double S[3][3], int d, tram_register_method method,
                                 tram_mat3 *R, tram_error *err)
{
    tram_so3_identity(R);
    if (d == 2) {
        double ang = atan2(S[0][1] - S[1][0], S[0][0] + S[1][1]);
        R->m[0][0] = cos(ang); R->m[0][1] = -sin(ang);
        R->m[1][0] = sin(ang); R->m[1][1] = cos(ang);
        return TRAM_OK;
    }
    if (method == TRAM_REGISTER_QUATERNION) {
        horn_rotation(S, R);
        return TRAM_OK;
    }
    /* Sigma_xy[a][b] = E[dy_a dx_b] = S[b][a] */
    double Sig[9], U[9], s[3], Vt[9];
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++) Sig[a * 3 + b] = S[b][a];
    tram_status ls = tram__svd(3, 3, Sig, U, s, Vt);
    if (ls != TRAM_OK)
        return tram__fail(err, ls, NULL, 0, 0, ls == TRAM_ENOMEM ? "out of memory" : "SVD failed");
    tram_mat3 Um, Vm;
    memcpy(&Um.m[0][0], U, sizeof U);
    memcpy(&Vm.m[0][0], Vt, sizeof Vt);
    double sgn = tram__det3(&Um) * tram__det3(&Vm) < 0 ? -1.0 : 1.0;
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++)
            R->m[a][b] = U[a * 3 + 0] * Vt[0 * 3 + b] + U[a * 3 + 1] * Vt[1 * 3 + b] +
                         sgn * U[a * 3 + 2] * Vt[2 * 3 + b];
    return TRAM_OK;
}

/* The information matrix H of the parameters (rotation, translation[,
 * scale]; np of them) from the moments, for rotation R and scale c. */
static int information(const moments *m, const double x0[3], const tram_mat3 *R, double c,
                       int d, int with_scale, double H[49])
{
    double Mabs[3][3], s_abs[3];
    for (int a = 0; a < 3; a++) {
        s_abs[a] = m->W * x0[a] + m->sx[a];
        for (int b = 0; b < 3; b++)
            Mabs[a][b] = m->W * x0[a] * x0[b] + x0[a] * m->sx[b] + m->sx[a] * x0[b] + m->sxx[a][b];
    }
    /* v = R x: sum w v v^T = R Mabs R^T, sum w v = R s_abs */
    double M[3][3] = {{0}}, sv[3] = {0, 0, 0};
    for (int a = 0; a < d; a++) {
        for (int b = 0; b < d; b++) sv[a] += R->m[a][b] * s_abs[b];
        for (int b = 0; b < d; b++)
            for (int k = 0; k < d; k++)
                for (int l = 0; l < d; l++) M[a][b] += R->m[a][k] * Mabs[k][l] * R->m[b][l];
    }
    int np = (d == 3 ? 6 : 3) + (with_scale ? 1 : 0);
    memset(H, 0, 49 * sizeof *H);
    if (d == 3) {
        double trM = M[0][0] + M[1][1] + M[2][2];
        tram_mat3 K;
        tram_so3_hat(sv, &K);
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++) {
                H[a * np + b] = c * c * ((a == b) * trM - M[a][b]);
                H[a * np + 3 + b] = c * K.m[a][b];
                H[(3 + a) * np + b] = -c * K.m[a][b];
                H[(3 + a) * np + 3 + b] = (a == b) * m->W;
            }
        if (with_scale) {
            H[6 * np + 6] = trM;
            for (int a = 0; a < 3; a++) H[6 * np + 3 + a] = H[(3 + a) * np + 6] = sv[a];
        }
    } else {
        double trM = M[0][0] + M[1][1];
        double perp[2] = {-sv[1], sv[0]};
        H[0] = c * c * trM;
        for (int a = 0; a < 2; a++) {
            H[0 * np + 1 + a] = H[(1 + a) * np + 0] = c * perp[a];
            H[(1 + a) * np + 1 + a] = m->W;
        }
        if (with_scale) {
            H[3 * np + 3] = trM;
            for (int a = 0; a < 2; a++) H[3 * np + 1 + a] = H[(1 + a) * np + 3] = sv[a];
        }
    }
    return np;
}

/* The 1-sigma uncertainties of out's parameters from the moments, the
 * mean squared residual msr and n pairs (left 0 without degrees of
 * freedom or when H is singular). */
static void fill_sigmas(const moments *m, const double x0[3], const tram_mat3 *R, int d,
                        int with_scale, size_t n, double msr, tram_register_result *out)
{
    double H[49], Ci[49];
    int np = information(m, x0, R, out->scale, d, with_scale, H);
    double dof = (double)d * (double)n - (double)np;
    if (!(dof > 0) || tram__spd_inverse(np, H, Ci) != TRAM_OK) return;
    double s2 = msr * m->W / dof;
    if (s2 < 0) s2 = 0;
    if (d == 3) {
        for (int a = 0; a < 3; a++) {
            out->rotation_sigma_deg[a] = sqrt(s2 * Ci[a * np + a]) * RAD2DEG;
            out->translation_sigma[a] = sqrt(s2 * Ci[(3 + a) * np + 3 + a]);
        }
        if (with_scale) out->scale_sigma = sqrt(s2 * Ci[6 * np + 6]);
    } else {
        out->rotation_sigma_deg[2] = sqrt(s2 * Ci[0]) * RAD2DEG;
        for (int a = 0; a < 2; a++) out->translation_sigma[a] = sqrt(s2 * Ci[(1 + a) * np + 1 + a]);
        if (with_scale) out->scale_sigma = sqrt(s2 * Ci[3 * np + 3]);
    }
}

tram_status tram_register_points(const double *from, const double *to, const double *weights,
                                 size_t n, const tram_register_options *opt_in,
                                 tram_register_result *out, tram_error *err)
{
    tram_register_options opt = {TRAM_REGISTER_SVD, 0, 3, 1};
    if (opt_in) opt = *opt_in;
    if (opt.dim != 2) opt.dim = 3;
    const int d = opt.dim;
    memset(out, 0, sizeof *out);
    tram_se3_identity(&out->T_to_from);
    out->scale = 1.0;
    out->n = n;
    tram_status st = check_arguments(weights, n, d, err);
    if (st != TRAM_OK) return st;
    double x0[3], y0[3];
    moments m;
    accumulate(from, to, weights, n, d, opt.threads, x0, y0, &m);
    if ((st = check_moments(&m, err)) != TRAM_OK) return st;
    out->weight_sum = m.W;
    centred c;
    centre_moments(&m, d, &c);
    if ((st = check_spread(&c, d, x0, out, err)) != TRAM_OK) return st;
    tram_mat3 R;
    if ((st = best_rotation(c.S, d, opt.method, &R, err)) != TRAM_OK) return st;
    /* tr(R^T Sigma_xy) = sum_ab R[a][b] Sigma[a][b] = sum_ab R[a][b] S[b][a] */
    double tr = 0;
    for (int a = 0; a < d; a++)
        for (int b = 0; b < d; b++) tr += R.m[a][b] * c.S[b][a];
    double scale = opt.scale ? tr / c.sig_x : 1.0;
    double rx[3] = {0, 0, 0}, t[3] = {0, 0, 0};
    for (int a = 0; a < d; a++) {
        for (int b = 0; b < d; b++) rx[a] += R.m[a][b] * (x0[b] + c.mx[b]);
        t[a] = y0[a] + c.my[a] - scale * rx[a];
    }
    tram_se3_from_rt(&R, t, &out->T_to_from);
    out->scale = scale;
    double msr = c.sig_y - 2 * scale * tr + scale * scale * c.sig_x;
    out->rms = sqrt(fmax(msr, 0.0));
    fill_sigmas(&m, x0, &R, d, opt.scale != 0, n, msr, out);
    return TRAM_OK;
}

void tram_register_residuals(const double *from, const double *to, size_t n, int dim,
                             const tram_register_result *r, double *res)
{
    const tram_se3 *T = &r->T_to_from;
    for (size_t i = 0; i < n; i++) {
        const double *x = from + (size_t)dim * i, *y = to + (size_t)dim * i;
        double s = 0;
        for (int a = 0; a < dim; a++) {
            double p = T->m[a][3];
            for (int b = 0; b < dim; b++) p += r->scale * T->m[a][b] * x[b];
            s += tram__sq(y[a] - p);
        }
        res[i] = sqrt(s);
    }
}
