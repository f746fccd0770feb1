/*
 * se3.c - rigid transforms as 4x4 homogeneous matrices.
 *
 * Math (notation T_a_b: pose of b in a, p_a = T_a_b p_b):
 *   compose: T_a_c = T_a_b T_b_c  (R = R_ab R_bc, t = R_ab t_bc + t_ab)
 *   invert:  T_b_a = (R^T, -R^T t)  -- no general 4x4 inverse
 *   exp(rho, w) = (exp(w), V(w) rho),  V = I + B K + C K^2 with
 *            B = (1 - cos t)/t^2, C = (t - sin t)/t^3, K = hat(w), t = |w|;
 *   log inverts it with V^-1 = I - K/2 + (1/t^2)(1 - A/(2B)) K^2,
 *            A = sin t / t  (Barfoot 2017, section 7.1.3).
 */
#include "math/so3_internal.h"
#include "core/tram_internal.h"

#include <math.h>
#include <string.h>

void tram_se3_identity(tram_se3 *out)
{
    memset(out, 0, sizeof *out);
    for (int i = 0; i < 4; i++) out->m[i][i] = 1.0;
}

void tram_se3_from_rt(const tram_mat3 *R, const double t[3], tram_se3 *out)
{
    tram_se3 r;
    for (int i = 0; i < 3; i++) {
        for (int j = 0; j < 3; j++) r.m[i][j] = R->m[i][j];
        r.m[i][3] = t[i];
        r.m[3][i] = 0.0;
    }
    r.m[3][3] = 1.0;
    *out = r;
}

void tram_se3_to_rt(const tram_se3 *T, tram_mat3 *R, double t[3])
{
    tram_se3 c = *T;
    if (R)
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++) R->m[i][j] = c.m[i][j];
    if (t)
        for (int i = 0; i < 3; i++) t[i] = c.m[i][3];
}

void tram_se3_compose(const tram_se3 *T_a_b, const tram_se3 *T_b_c, tram_se3 *T_a_c)
{
    tram_se3 r;
    for (int i = 0; i < 3; i++) {
        for (int j = 0; j < 4; j++)
            r.m[i][j] = T_a_b->m[i][0] * T_b_c->m[0][j] + T_a_b->m[i][1] * T_b_c->m[1][j] +
                        T_a_b->m[i][2] * T_b_c->m[2][j];
        r.m[i][3] += T_a_b->m[i][3];
    }
    r.m[3][0] = r.m[3][1] = r.m[3][2] = 0.0;
    r.m[3][3] = 1.0;
    *T_a_c = r;
}

void tram_se3_invert(const tram_se3 *T_a_b, tram_se3 *T_b_a)
{
    tram_se3 r;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) r.m[i][j] = T_a_b->m[j][i];
    for (int i = 0; i < 3; i++)
        r.m[i][3] = -(r.m[i][0] * T_a_b->m[0][3] + r.m[i][1] * T_a_b->m[1][3] +
                      r.m[i][2] * T_a_b->m[2][3]);
    r.m[3][0] = r.m[3][1] = r.m[3][2] = 0.0;
    r.m[3][3] = 1.0;
    *T_b_a = r;
}

void tram_se3_apply_point(const tram_se3 *T_a_b, const double p_b[3], double p_a[3])
{
    double r[3];
    for (int i = 0; i < 3; i++)
        r[i] = T_a_b->m[i][0] * p_b[0] + T_a_b->m[i][1] * p_b[1] + T_a_b->m[i][2] * p_b[2] +
               T_a_b->m[i][3];
    memcpy(p_a, r, sizeof r);
}

void tram_se3_apply_direction(const tram_se3 *T_a_b, const double d_b[3], double d_a[3])
{
    double r[3];
    for (int i = 0; i < 3; i++)
        r[i] = T_a_b->m[i][0] * d_b[0] + T_a_b->m[i][1] * d_b[1] + T_a_b->m[i][2] * d_b[2];
    memcpy(d_a, r, sizeof r);
}

void tram_se3_distance(const tram_se3 *a, const tram_se3 *b, double *angle_deg, double *length)
{
    tram_mat3 Ra, Rb;
    double ta[3], tb[3];
    tram_se3_to_rt(a, &Ra, ta);
    tram_se3_to_rt(b, &Rb, tb);
    if (angle_deg) *angle_deg = tram_so3_distance(&Ra, &Rb) * 180.0 / TRAM_PI;
    if (length) {
        double d[3] = {ta[0] - tb[0], ta[1] - tb[1], ta[2] - tb[2]};
        *length = tram__norm3(d);
    }
}

/* Coefficients A = sin t/t, B = (1-cos t)/t^2, C = (t - sin t)/t^3. */
static void se3_coeffs(double t2, double *A, double *B, double *C)
{
    double t = sqrt(t2);
    if (t < 1e-5) {
        *A = 1.0 - t2 / 6.0;
        *B = 0.5 - t2 / 24.0;
        *C = 1.0 / 6.0 - t2 / 120.0;
    } else {
        double h = sin(0.5 * t);
        *A = sin(t) / t;
        *B = 2.0 * h * h / t2;
        *C = (t - sin(t)) / (t2 * t);
    }
}

void tram_se3_exp(const double xi[6], tram_se3 *out)
{
    const double *rho = xi, *w = xi + 3;
    double A, B, C, t2 = tram__dot3(w, w);
    se3_coeffs(t2, &A, &B, &C);
    tram_mat3 R, K, K2;
    tram_so3_exp(w, &R);
    tram_so3_hat(w, &K);
    tram_so3_mul(&K, &K, &K2);
    double t[3];
    for (int i = 0; i < 3; i++) {
        t[i] = 0.0;
        for (int j = 0; j < 3; j++)
            t[i] += ((i == j ? 1.0 : 0.0) + B * K.m[i][j] + C * K2.m[i][j]) * rho[j];
    }
    tram_se3_from_rt(&R, t, out);
}

void tram_se3_log(const tram_se3 *T, double out_xi[6])
{
    tram_mat3 R, K, K2;
    double t[3], w[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_log(&R, w);
    double th2 = tram__dot3(w, w), A, B, C, D;
    se3_coeffs(th2, &A, &B, &C);
    /* D = (1 - A/(2B)) / t^2, with its series 1/12 + t^2/720 near 0. */
    if (th2 < 1e-10)
        D = 1.0 / 12.0 + th2 / 720.0;
    else
        D = (1.0 - A / (2.0 * B)) / th2;
    tram_so3_hat(w, &K);
    tram_so3_mul(&K, &K, &K2);
    double rho[3];
    for (int i = 0; i < 3; i++) {
        rho[i] = 0.0;
        for (int j = 0; j < 3; j++)
            rho[i] += ((i == j ? 1.0 : 0.0) - 0.5 * K.m[i][j] + D * K2.m[i][j]) * t[j];
    }
    for (int i = 0; i < 3; i++) {
        out_xi[i] = rho[i];
        out_xi[3 + i] = w[i];
    }
}

double tram_se3_defect(const tram_se3 *T)
{
    tram_mat3 R;
    tram_se3_to_rt(T, &R, NULL);
    double worst = tram_so3_defect(&R);
    for (int j = 0; j < 4; j++) {
        double e = fabs(T->m[3][j] - (j == 3 ? 1.0 : 0.0));
        if (!(e <= worst)) worst = e;
    }
    for (int i = 0; i < 3; i++)
        if (!isfinite(T->m[i][3])) return INFINITY;
    return worst;
}

int tram_se3_is_valid(const tram_se3 *T, double tol)
{
    tram_mat3 R;
    tram_se3_to_rt(T, &R, NULL);
    if (!tram_so3_is_valid(&R, tol)) return 0;
    for (int j = 0; j < 4; j++)
        if (!(fabs(T->m[3][j] - (j == 3 ? 1.0 : 0.0)) <= TRAM_SE3_ROW_TOL)) return 0;
    for (int i = 0; i < 3; i++)
        if (!isfinite(T->m[i][3])) return 0;
    return 1;
}

void tram_se3_scale_translation(const tram_se3 *T, double s, tram_se3 *out)
{
    *out = *T;
    for (int i = 0; i < 3; i++) out->m[i][3] *= s;
}
