/*
 * epnp.c - the pose of a non-planar target from normalised image points by
 * EPnP: V. Lepetit, F. Moreno-Noguer, P. Fua, "EPnP: an accurate O(n)
 * solution to the PnP problem", Int. J. Computer Vision 81(2), 2009.
 *
 * Every target point is a weighted sum of four control points (the
 * centroid and the centroid plus the principal axes scaled by the extent),
 * p_i = sum_j a_ij c_j with sum_j a_ij = 1; the same weights hold in the
 * camera frame.  Each point's projection gives two linear equations in the
 * 12 camera-frame control coordinates (M x = 0, section 3.2); x lies in the
 * span of the N right singular vectors of M with the smallest singular
 * values (eigenvectors of M^T M, LAPACKE).  As in the paper (section 3.3)
 * N = 1, 2, 3 are tried, the coefficients fixed by the six distances
 * between control points (linearised with the products b_k b_l as
 * unknowns, least squares through LAPACKE), and the candidate with the
 * smallest reprojection error is kept, each after the paper's Gauss-Newton
 * on four coefficients (section 3.4, which also covers N = 4 for 4 or 5
 * points).  The camera-frame points then give
 * R, t by absolute orientation (Arun, Huang & Blostein, IEEE PAMI 9(5),
 * 1987; SVD through LAPACKE); the pixel refinement follows (pose.c).
 */
#include "math/so3_internal.h"
#include "camera/pose_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

/* R, t minimising sum |R pw + t - pc|^2 (Arun et al. 1987). */
static tram_status absolute_orientation(const double *pw, const double *pc, size_t n, tram_se3 *T)
{
    double cw[3] = {0}, cc[3] = {0}, H[9] = {0}, U[9], s[3], Vt[9];
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++) {
            cw[a] += pw[3 * i + (size_t)a] / (double)n;
            cc[a] += pc[3 * i + (size_t)a] / (double)n;
        }
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
                H[3 * a + b] += (pw[3 * i + (size_t)a] - cw[a]) * (pc[3 * i + (size_t)b] - cc[b]);
    tram_status st = tram__svd(3, 3, H, U, s, Vt);
    if (st != TRAM_OK) return st;
    /* R = V diag(1, 1, d) U^T */
    tram_mat3 R;
    double V[9], Ut[9];
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++) {
            V[3 * a + b] = Vt[3 * b + a];
            Ut[3 * a + b] = U[3 * b + a];
        }
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++)
            R.m[a][b] = V[3 * a] * Ut[b] + V[3 * a + 1] * Ut[3 + b] + V[3 * a + 2] * Ut[6 + b];
    if (tram__det3(&R) < 0) {
        for (int a = 0; a < 3; a++) V[3 * a + 2] = -V[3 * a + 2];
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
                R.m[a][b] = V[3 * a] * Ut[b] + V[3 * a + 1] * Ut[3 + b] + V[3 * a + 2] * Ut[6 + b];
    }
    double t[3], rc[3];
    tram_so3_apply(&R, cw, rc);
    for (int a = 0; a < 3; a++) t[a] = cc[a] - rc[a];
    tram_se3_from_rt(&R, t, T);
    return TRAM_OK;
}

typedef struct epnp {
    const double *xyz, *xy;
    size_t n;
    double cw[4][3];   /* control points, target frame */
    double *alpha;     /* n x 4 */
    double *pc;        /* n x 3 scratch */
    double V[144];     /* eigenvectors of M^T M (columns), ascending */
} epnp;

/* Candidate from the control points x (12) in the camera frame: pose and
 * squared reprojection error in normalised coordinates. */
static double candidate(epnp *e, const double x[12], tram_se3 *T)
{
    double zs = 0;
    for (size_t i = 0; i < e->n; i++)
        for (int a = 0; a < 3; a++) {
            double v = 0;
            for (int j = 0; j < 4; j++) v += e->alpha[4 * i + (size_t)j] * x[3 * j + a];
            e->pc[3 * i + (size_t)a] = v;
        }
    for (size_t i = 0; i < e->n; i++) zs += e->pc[3 * i + 2];
    if (zs < 0) /* the null vector's sign: points in front of the camera */
        for (size_t k = 0; k < 3 * e->n; k++) e->pc[k] = -e->pc[k];
    if (absolute_orientation(e->xyz, e->pc, e->n, T) != TRAM_OK) return INFINITY;
    double err = 0;
    for (size_t i = 0; i < e->n; i++) {
        double p[3];
        tram_se3_apply_point(T, e->xyz + 3 * i, p);
        if (!(p[2] > 0)) return INFINITY;
        err += tram__sq(p[0] / p[2] - e->xy[2 * i]) + tram__sq(p[1] / p[2] - e->xy[2 * i + 1]);
    }
    return err;
}

static void null_vec(const epnp *e, int k, double v[12])
{
    for (int r = 0; r < 12; r++) v[r] = e->V[r * 12 + k];
}

static const int pairs[6][2] = {{0, 1}, {0, 2}, {0, 3}, {1, 2}, {1, 3}, {2, 3}};

/* Coefficients b of x = sum_k b_k v_k (N vectors) from the six control
 * point distances, linearised in the products b_k b_l (section 3.3). */
static int betas(const epnp *e, int N, double b[3])
{
    double v[3][12];
    for (int k = 0; k < N; k++) null_vec(e, k, v[k]);
    int nu = N * (N + 1) / 2;
    double L[36] = {0}, rho[6], sol[6];
    for (int p = 0; p < 6; p++) {
        int i = pairs[p][0], j = pairs[p][1];
        double S[3][3];
        for (int k = 0; k < N; k++)
            for (int a = 0; a < 3; a++) S[k][a] = v[k][3 * i + a] - v[k][3 * j + a];
        int col = 0;
        for (int k = 0; k < N; k++)
            for (int l = k; l < N; l++) {
                double d = tram__dot3(S[k], S[l]);
                L[p * nu + col++] = k == l ? d : 2 * d;
            }
        rho[p] = tram__sq(e->cw[i][0] - e->cw[j][0]) + tram__sq(e->cw[i][1] - e->cw[j][1]) +
                 tram__sq(e->cw[i][2] - e->cw[j][2]);
    }
    if (tram__lstsq(6, nu, L, rho, sol) != TRAM_OK) return -1;
    /* sol: b11, b12, (b13,) b22, (b23,) b33 */
    if (N == 1) b[0] = sqrt(fabs(sol[0]));
    if (N == 2) {
        b[0] = sqrt(fabs(sol[0]));
        b[1] = sqrt(fabs(sol[2])) * (sol[1] * sol[0] >= 0 ? 1 : -1);
    }
    if (N == 3) {
        b[0] = sqrt(fabs(sol[0]));
        b[1] = sqrt(fabs(sol[3])) * (sol[1] >= 0 ? 1 : -1);
        b[2] = sqrt(fabs(sol[5])) * (sol[2] >= 0 ? 1 : -1);
    }
    return 0;
}

/* Gauss-Newton on the four coefficients b (section 3.4): the six
 * squared control-point distances of x = sum_k b_k v_k against the
 * target's; from the start b (the N-vector solution padded with zeros). */
static void gauss_newton(const epnp *e, double b[4])
{
    double v[4][12], SS[6][4][4], rho[6];
    for (int k = 0; k < 4; k++) null_vec(e, k, v[k]);
    for (int p = 0; p < 6; p++) {
        int i = pairs[p][0], j = pairs[p][1];
        double S[4][3];
        for (int k = 0; k < 4; k++)
            for (int a = 0; a < 3; a++) S[k][a] = v[k][3 * i + a] - v[k][3 * j + a];
        for (int k = 0; k < 4; k++)
            for (int l = 0; l < 4; l++) SS[p][k][l] = tram__dot3(S[k], S[l]);
        rho[p] = tram__sq(e->cw[i][0] - e->cw[j][0]) + tram__sq(e->cw[i][1] - e->cw[j][1]) +
                 tram__sq(e->cw[i][2] - e->cw[j][2]);
    }
    for (int it = 0; it < 10; it++) {
        double A[24], r[6], d[4];
        for (int p = 0; p < 6; p++) {
            double q = 0;
            for (int k = 0; k < 4; k++) {
                double g = 0;
                for (int l = 0; l < 4; l++) g += SS[p][k][l] * b[l];
                A[4 * p + k] = 2 * g;
                q += b[k] * g;
            }
            r[p] = rho[p] - q;
        }
        if (tram__lstsq(6, 4, A, r, d) != TRAM_OK) return;
        for (int k = 0; k < 4; k++) b[k] += d[k];
    }
}

static tram_status setup(epnp *e)
{
    size_t n = e->n;
    double c[3] = {0}, C[9] = {0}, ev[3], W[9];
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++) c[a] += e->xyz[3 * i + (size_t)a] / (double)n;
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
                C[3 * a + b] += (e->xyz[3 * i + (size_t)a] - c[a]) * (e->xyz[3 * i + (size_t)b] - c[b]) / (double)n;
    tram_status st = tram__symeig(3, C, ev, W);
    if (st != TRAM_OK) return st;
    if (!(ev[0] > 1e-18 * ev[2])) return TRAM_EUNDETERMINED;
    double sd[3];
    for (int k = 0; k < 3; k++) sd[k] = sqrt(ev[k]);
    memcpy(e->cw[0], c, sizeof c);
    for (int k = 0; k < 3; k++)
        for (int a = 0; a < 3; a++) e->cw[1 + k][a] = c[a] + sd[k] * W[3 * a + k];
    /* alphas: the principal coordinates scaled by the extents */
    for (size_t i = 0; i < n; i++) {
        double d[3], s = 0;
        for (int a = 0; a < 3; a++) d[a] = e->xyz[3 * i + (size_t)a] - c[a];
        for (int k = 0; k < 3; k++) {
            double ak = (d[0] * W[k] + d[1] * W[3 + k] + d[2] * W[6 + k]) / sd[k];
            e->alpha[4 * i + 1 + (size_t)k] = ak;
            s += ak;
        }
        e->alpha[4 * i] = 1.0 - s;
    }
    /* M^T M accumulated row pair by row pair (12 x 12) */
    double MtM[144] = {0}, w[12];
    for (size_t i = 0; i < n; i++) {
        double r0[12] = {0}, r1[12] = {0};
        for (int j = 0; j < 4; j++) {
            double a = e->alpha[4 * i + (size_t)j];
            r0[3 * j] = a;
            r0[3 * j + 2] = -a * e->xy[2 * i];
            r1[3 * j + 1] = a;
            r1[3 * j + 2] = -a * e->xy[2 * i + 1];
        }
        for (int p = 0; p < 12; p++)
            for (int q = 0; q < 12; q++) MtM[p * 12 + q] += r0[p] * r0[q] + r1[p] * r1[q];
    }
    return tram__symeig(12, MtM, w, e->V);
}

tram_status tram__pose_epnp(const double *xyz, const double *xy, size_t n, tram_se3 *T,
                            tram_error *err)
{
    epnp e;
    memset(&e, 0, sizeof e);
    e.xyz = xyz;
    e.xy = xy;
    e.n = n;
    e.alpha = tram__malloc(4 * n * sizeof *e.alpha);
    e.pc = tram__malloc(3 * n * sizeof *e.pc);
    tram_status st = TRAM_OK;
    if (!e.alpha || !e.pc) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    if ((st = setup(&e)) != TRAM_OK) {
        st = tram__fail(err, st == TRAM_EUNDETERMINED ? st : TRAM_ENUMERIC, NULL, 0, 0,
                        st == TRAM_EUNDETERMINED ? "the target points are coplanar: EPnP needs "
                                                   "points spread in 3D"
                                                 : "EPnP: the eigen decomposition failed");
        goto out;
    }
    double best = INFINITY;
    for (int N = 1; N <= 3; N++) {
        double b[4] = {0}, x[12] = {0}, v[12];
        if (betas(&e, N, b) != 0) continue;
        gauss_newton(&e, b);
        for (int k = 0; k < 4; k++) {
            null_vec(&e, k, v);
            for (int r = 0; r < 12; r++) x[r] += b[k] * v[r];
        }
        tram_se3 Tc;
        double c = candidate(&e, x, &Tc);
        if (c < best) {
            best = c;
            *T = Tc;
        }
    }
    if (!isfinite(best))
        st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                        "EPnP found no pose with the points in front of the camera");
out:
    tram__free(e.alpha);
    tram__free(e.pc);
    return st;
}
