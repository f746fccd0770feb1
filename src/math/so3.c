/*
 * so3.c - the rotation group SO(3): products, exp and log maps, the
 * rotation angle, projection onto SO(3) and the chordal mean.
 *
 * Math:
 *   exp(w) = I + (sin t / t) K + ((1 - cos t) / t^2) K^2, K = hat(w), t = |w|
 *            (Rodrigues' formula).
 *   log(R): t = atan2(|vee(R - R^T)| / 2, (tr R - 1) / 2); the axis from the
 *            antisymmetric part, or near t = pi (where that part vanishes)
 *            from the symmetric part (R + R^T)/2 - cos t I = (1 - cos t) n n^T.
 *   nearest(M) = U diag(1, 1, det(U V^T)) V^T for M = U S V^T: the
 *            orthogonal Procrustes solution (Kabsch 1976; Horn, Hilden &
 *            Negahdaripour 1988).
 *   mean   = nearest(sum w_i R_i): the chordal L2 mean (Hartley, Trumpf,
 *            Dai & Li, "Rotation averaging", IJCV 2013).
 */
#include "math/so3_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

double tram__norm3(const double a[3]) { return sqrt(tram__dot3(a, a)); }

void tram_so3_identity(tram_mat3 *out)
{
    memset(out, 0, sizeof *out);
    out->m[0][0] = out->m[1][1] = out->m[2][2] = 1.0;
}

void tram_so3_mul(const tram_mat3 *a, const tram_mat3 *b, tram_mat3 *out)
{
    tram_mat3 r;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            r.m[i][j] = a->m[i][0] * b->m[0][j] + a->m[i][1] * b->m[1][j] + a->m[i][2] * b->m[2][j];
    *out = r;
}

void tram_so3_transpose(const tram_mat3 *a, tram_mat3 *out)
{
    tram_mat3 r;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) r.m[i][j] = a->m[j][i];
    *out = r;
}

void tram_so3_apply(const tram_mat3 *R, const double v[3], double out[3])
{
    double r[3];
    for (int i = 0; i < 3; i++) r[i] = R->m[i][0] * v[0] + R->m[i][1] * v[1] + R->m[i][2] * v[2];
    memcpy(out, r, sizeof r);
}

void tram_so3_hat(const double w[3], tram_mat3 *out)
{
    double a = w[0], b = w[1], c = w[2];
    out->m[0][0] = 0.0; out->m[0][1] = -c;  out->m[0][2] = b;
    out->m[1][0] = c;   out->m[1][1] = 0.0; out->m[1][2] = -a;
    out->m[2][0] = -b;  out->m[2][1] = a;   out->m[2][2] = 0.0;
}

void tram_so3_exp(const double w[3], tram_mat3 *out)
{
    double t2 = tram__dot3(w, w), t = sqrt(t2);
    double A, B; /* sin t / t and (1 - cos t) / t^2 */
    if (t < 1e-8) {
        A = 1.0 - t2 / 6.0;
        B = 0.5 - t2 / 24.0;
    } else {
        double h = sin(0.5 * t);
        A = sin(t) / t;
        B = 2.0 * h * h / t2; /* 1 - cos t without cancellation */
    }
    tram_mat3 K, K2;
    tram_so3_hat(w, &K);
    tram_so3_mul(&K, &K, &K2);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            out->m[i][j] = (i == j ? 1.0 : 0.0) + A * K.m[i][j] + B * K2.m[i][j];
}

double tram_so3_angle(const tram_mat3 *R)
{
    double v[3] = {R->m[2][1] - R->m[1][2], R->m[0][2] - R->m[2][0], R->m[1][0] - R->m[0][1]};
    double s = 0.5 * tram__norm3(v);
    double c = 0.5 * (R->m[0][0] + R->m[1][1] + R->m[2][2] - 1.0);
    return atan2(s, c);
}

void tram_so3_log(const tram_mat3 *R, double out_w[3])
{
    double v[3] = {R->m[2][1] - R->m[1][2], R->m[0][2] - R->m[2][0], R->m[1][0] - R->m[0][1]};
    double s = 0.5 * tram__norm3(v);
    double c = 0.5 * (R->m[0][0] + R->m[1][1] + R->m[2][2] - 1.0);
    double t = atan2(s, c);
    if (c > -0.5) {
        /* vee(R - R^T) = 2 sin(t) n: well conditioned away from pi. */
        double f = t < 1e-6 ? 0.5 * (1.0 + t * t / 6.0) : 0.5 * t / s;
        for (int i = 0; i < 3; i++) out_w[i] = f * v[i];
        return;
    }
    /* Near pi: (R + R^T)/2 - c I = (1 - c) n n^T. */
    double one_c = 1.0 - c;
    double B[3][3];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            B[i][j] = 0.5 * (R->m[i][j] + R->m[j][i]) - (i == j ? c : 0.0);
    int k = 0;
    for (int i = 1; i < 3; i++)
        if (B[i][i] > B[k][k]) k = i;
    double n[3];
    double nk = sqrt(fmax(B[k][k], 0.0) / one_c);
    for (int i = 0; i < 3; i++) n[i] = (i == k) ? nk : B[k][i] / (one_c * nk);
    double len = tram__norm3(n);
    for (int i = 0; i < 3; i++) n[i] /= len;
    double d = tram__dot3(n, v);
    if (d < 0.0) {
        for (int i = 0; i < 3; i++) n[i] = -n[i];
    } else if (d == 0.0) {
        /* Exactly pi: n and -n are the same rotation; make the largest
         * component positive so the output is unique. */
        int big = 0;
        for (int i = 1; i < 3; i++)
            if (fabs(n[i]) > fabs(n[big])) big = i;
        if (n[big] < 0.0)
            for (int i = 0; i < 3; i++) n[i] = -n[i];
    }
    for (int i = 0; i < 3; i++) out_w[i] = t * n[i];
}

double tram_so3_distance(const tram_mat3 *a, const tram_mat3 *b)
{
    tram_mat3 at, d;
    tram_so3_transpose(a, &at);
    tram_so3_mul(&at, b, &d);
    return tram_so3_angle(&d);
}

void tram_so3_nearest(const tram_mat3 *M, tram_mat3 *out)
{
    double A[9], U[9], s[3], Vt[9];
    int zero = 1;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            A[i * 3 + j] = M->m[i][j];
            if (M->m[i][j] != 0.0 || !isfinite(M->m[i][j])) zero = 0;
        }
    if (zero) {
        tram_so3_identity(out);
        return;
    }
    if (tram__svd(3, 3, A, U, s, Vt) != TRAM_OK) {
        /* NaN or Inf in M, or LAPACK out of memory: NaN, so that the
         * failure can never pass as a rotation. */
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++) out->m[i][j] = NAN;
        return;
    }
    tram_mat3 Um, Vm;
    memcpy(&Um.m[0][0], U, sizeof U);
    memcpy(&Vm.m[0][0], Vt, sizeof Vt);
    double d = tram__det3(&Um) * tram__det3(&Vm) < 0.0 ? -1.0 : 1.0;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            out->m[i][j] = U[i * 3 + 0] * Vt[0 * 3 + j] + U[i * 3 + 1] * Vt[1 * 3 + j] +
                           d * U[i * 3 + 2] * Vt[2 * 3 + j];
}

double tram_so3_defect(const tram_mat3 *R)
{
    double worst = 0.0;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double g = R->m[0][i] * R->m[0][j] + R->m[1][i] * R->m[1][j] + R->m[2][i] * R->m[2][j];
            double e = fabs(g - (i == j ? 1.0 : 0.0));
            if (!(e <= worst)) worst = e; /* also catches NaN */
        }
    double det = tram__det3(R);
    double e = fabs(det - 1.0);
    if (!(e <= worst)) worst = e;
    return worst;
}

int tram_so3_is_valid(const tram_mat3 *R, double tol) { return tram_so3_defect(R) <= tol; }

void tram_so3_mean(const tram_mat3 *R, const double *weights, size_t n, tram_mat3 *out)
{
    tram_mat3 sum;
    memset(&sum, 0, sizeof sum);
    for (size_t k = 0; k < n; k++) {
        double w = weights ? weights[k] : 1.0;
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++) sum.m[i][j] += w * R[k].m[i][j];
    }
    tram_so3_nearest(&sum, out);
}

void tram_so3_axis_rotation(int axis, double angle_rad, tram_mat3 *out)
{
    double c = cos(angle_rad), s = sin(angle_rad);
    tram_so3_identity(out);
    int i = (axis + 1) % 3, j = (axis + 2) % 3;
    if (axis < 0 || axis > 2) return;
    out->m[i][i] = c;
    out->m[i][j] = -s;
    out->m[j][i] = s;
    out->m[j][j] = c;
}
