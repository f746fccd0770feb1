/*
 * euler.c - Euler angles in all 24 named conventions (12 axis sequences,
 * each intrinsic or extrinsic).
 *
 * Math: an intrinsic sequence (i, j, k) with angles (a, b, c) is
 * R = R_i(a) R_j(b) R_k(c); the extrinsic sequence (i, j, k) equals the
 * intrinsic sequence (k, j, i) with the angles reversed.  Extraction reads
 * b and c from row i of R, which does not depend on a:
 *   Tait-Bryan (i != k), s = +1 for cyclic (i, j, k), else -1:
 *     R[i][i] = cos b cos c, R[i][j] = -s cos b sin c, R[i][k] = s sin b;
 *   proper Euler (i == k), m the third axis, s the sign of (i, j, m):
 *     R[i][i] = cos b, R[i][j] = sin b sin c, R[i][m] = s sin b cos c.
 * Then M = R R_k(c)^T R_j(b)^T is a rotation about i by a, and
 * a = atan2(s M[n][j], M[j][j]) with n = k (or m).  Taking a from M rather
 * than from two more matrix entries keeps the round trip exact to rounding
 * near gimbal lock, where a and c are individually ill-determined.  At lock
 * (|cos b| resp. |sin b| below 1e-12) the third angle of the named
 * convention is set to 0 (c for intrinsic, a of the reversed sequence for
 * extrinsic) and the first carries the rotation about the locked axis.
 *
 * Covariance of the angles (tram_euler_covariance): first-order
 * propagation of a small rotation w about R's own axes (R exp(w)) through
 * de/dw = M^-1, where omega = M de/dt is the body angular velocity of the
 * Euler parametrisation (the Euler kinematic equations; e.g. Diebel,
 * "Representing attitude: Euler angles, unit quaternions, and rotation
 * vectors", Stanford, 2006, from memory).  det M is +-cos e2 (Tait-Bryan)
 * or +-sin e2 (proper), which vanishes at gimbal lock.
 */
#include "tram/rotation.h"
#include "core/tram_internal.h"

#include <math.h>
#include <string.h>

static const char *const seq_names[12] = {"xyz", "xzy", "yxz", "yzx", "zxy", "zyx",
                                          "xyx", "xzx", "yxy", "yzy", "zxz", "zyz"};

#define EULER_LOCK_TOL 1e-12

tram_euler_seq tram_euler_parse(const char *name)
{
    if (!name || strlen(name) < 4 || name[3] != '-') return TRAM_EULER_UNSET;
    int base = -1;
    for (int i = 0; i < 12; i++)
        if (strncmp(name, seq_names[i], 3) == 0) base = i;
    if (base < 0) return TRAM_EULER_UNSET;
    if (strcmp(name + 4, "intrinsic") == 0) return (tram_euler_seq)base;
    if (strcmp(name + 4, "extrinsic") == 0) return (tram_euler_seq)(base + 12);
    return TRAM_EULER_UNSET;
}

const char *tram_euler_name(tram_euler_seq seq)
{
    static const char *const names[TRAM_EULER_COUNT] = {
        "xyz-intrinsic", "xzy-intrinsic", "yxz-intrinsic", "yzx-intrinsic", "zxy-intrinsic",
        "zyx-intrinsic", "xyx-intrinsic", "xzx-intrinsic", "yxy-intrinsic", "yzy-intrinsic",
        "zxz-intrinsic", "zyz-intrinsic", "xyz-extrinsic", "xzy-extrinsic", "yxz-extrinsic",
        "yzx-extrinsic", "zxy-extrinsic", "zyx-extrinsic", "xyx-extrinsic", "xzx-extrinsic",
        "yxy-extrinsic", "yzy-extrinsic", "zxz-extrinsic", "zyz-extrinsic"};
    if ((int)seq < 0 || (int)seq >= TRAM_EULER_COUNT) return "unset";
    return names[seq];
}

void tram_euler_axes(tram_euler_seq seq, int out_axes[3])
{
    if ((int)seq < 0 || (int)seq >= TRAM_EULER_COUNT) {
        out_axes[0] = out_axes[1] = out_axes[2] = -1;
        return;
    }
    const char *s = seq_names[(int)seq % 12];
    for (int i = 0; i < 3; i++) out_axes[i] = s[i] - 'x';
}

void tram_euler_to_mat3(tram_euler_seq seq, const double e[3], tram_mat3 *out)
{
    if ((int)seq < 0 || (int)seq >= TRAM_EULER_COUNT) {
        tram_so3_identity(out);
        return;
    }
    int ax[3];
    tram_euler_axes(seq, ax);
    tram_mat3 r1, r2, r3, t;
    tram_so3_axis_rotation(ax[0], e[0], &r1);
    tram_so3_axis_rotation(ax[1], e[1], &r2);
    tram_so3_axis_rotation(ax[2], e[2], &r3);
    if ((int)seq < 12) { /* intrinsic: R1 R2 R3 */
        tram_so3_mul(&r1, &r2, &t);
        tram_so3_mul(&t, &r3, out);
    } else { /* extrinsic: R3 R2 R1 */
        tram_so3_mul(&r3, &r2, &t);
        tram_so3_mul(&t, &r1, out);
    }
}

/* Sign of the permutation (i, j, k) of (0, 1, 2): +1 cyclic, -1 otherwise. */
static double perm_sign(int i, int j) { return ((j - i + 3) % 3 == 1) ? 1.0 : -1.0; }

/* Intrinsic decomposition R = R_i(a) R_j(b) R_k(c).  At gimbal lock the
 * angle that is set to 0 is c, or a when zero_first (used for extrinsic
 * sequences, so that their third angle is the one set to 0). */
static void decompose_intrinsic(int i, int j, int k, const tram_mat3 *R, int zero_first,
                                double out[3])
{
    const double(*m)[3] = R->m;
    double a, b, c, s = perm_sign(i, j), h;
    int n; /* the axis completing (i, j, n) */
    if (i != k) {
        n = k;
        h = hypot(m[i][i], m[i][j]);
        b = atan2(s * m[i][k], h);
        c = atan2(-s * m[i][j], m[i][i]);
    } else {
        n = 3 - i - j;
        h = hypot(m[i][j], m[i][n]);
        b = atan2(h, m[i][i]);
        c = atan2(m[i][j], s * m[i][n]);
    }
    tram_mat3 rk, rj, M;
    if (h < EULER_LOCK_TOL && zero_first) {
        /* a = 0: R_j(b)^T R = R_k(c), read c from the image of e_j. */
        a = 0.0;
        tram_so3_axis_rotation(j, -b, &rj);
        tram_so3_mul(&rj, R, &M);
        if (i != k) c = atan2(-s * M.m[i][j], M.m[j][j]);
        else c = atan2(s * M.m[n][j], M.m[j][j]);
    } else {
        if (h < EULER_LOCK_TOL) c = 0.0;
        tram_so3_axis_rotation(k, -c, &rk);
        tram_so3_axis_rotation(j, -b, &rj);
        tram_so3_mul(R, &rk, &M);
        tram_so3_mul(&M, &rj, &M);
        a = atan2(s * M.m[n][j], M.m[j][j]);
    }
    out[0] = a;
    out[1] = b;
    out[2] = c;
}

void tram_euler_from_mat3(tram_euler_seq seq, const tram_mat3 *R, double out_e[3])
{
    if ((int)seq < 0 || (int)seq >= TRAM_EULER_COUNT) {
        out_e[0] = out_e[1] = out_e[2] = 0.0;
        return;
    }
    int ax[3];
    tram_euler_axes(seq, ax);
    if ((int)seq < 12) {
        decompose_intrinsic(ax[0], ax[1], ax[2], R, 0, out_e);
    } else {
        double f[3];
        decompose_intrinsic(ax[2], ax[1], ax[0], R, 1, f);
        out_e[0] = f[2];
        out_e[1] = f[1];
        out_e[2] = f[0];
    }
}

/* The matrix M of omega = M de/dt, omega the body angular velocity
 * (R^T dR/dt = [omega]x) of R(e) in the named convention:
 *   intrinsic R = R_i(e1) R_j(e2) R_k(e3):
 *     omega = e1' R_k(e3)^T R_j(e2)^T u_i + e2' R_k(e3)^T u_j + e3' u_k;
 *   extrinsic R = R_k(e3) R_j(e2) R_i(e1):
 *     omega = e3' R_i(e1)^T R_j(e2)^T u_k + e2' R_i(e1)^T u_j + e1' u_i.
 * Returns det M: +-cos e2 (Tait-Bryan) or +-sin e2 (proper Euler). */
static double euler_rate_matrix(tram_euler_seq seq, const double e[3], double M[3][3])
{
    int ax[3];
    tram_euler_axes(seq, ax);
    int intr = (int)seq < 12;
    /* the rotations about the first and last axes, in the order applied */
    tram_mat3 Rf, Rm, P;
    if (intr) {
        tram_so3_axis_rotation(ax[2], e[2], &Rf);
    } else {
        tram_so3_axis_rotation(ax[0], e[0], &Rf);
    }
    tram_so3_axis_rotation(ax[1], e[1], &Rm);
    tram_so3_mul(&Rm, &Rf, &P); /* (Rf^T Rm^T)^T */
    int first = intr ? ax[0] : ax[2], last = intr ? ax[2] : ax[0];
    /* columns of M for (outer, middle, inner) angle: P^T u_first, Rf^T u_j, u_last */
    double col[3][3];
    for (int r = 0; r < 3; r++) {
        col[0][r] = P.m[first][r];
        col[1][r] = Rf.m[ax[1]][r];
        col[2][r] = r == last ? 1.0 : 0.0;
    }
    /* outer is e1 for intrinsic, e3 for extrinsic */
    int outer = intr ? 0 : 2, inner = intr ? 2 : 0;
    for (int r = 0; r < 3; r++) {
        M[r][outer] = col[0][r];
        M[r][1] = col[1][r];
        M[r][inner] = col[2][r];
    }
    return M[0][0] * (M[1][1] * M[2][2] - M[1][2] * M[2][1]) -
           M[0][1] * (M[1][0] * M[2][2] - M[1][2] * M[2][0]) +
           M[0][2] * (M[1][0] * M[2][1] - M[1][1] * M[2][0]);
}

int tram_euler_covariance(tram_euler_seq seq, const tram_mat3 *R, const double cov_body[9],
                          double out_cov[9], double *out_lock_rad)
{
    for (int i = 0; i < 9; i++) out_cov[i] = NAN;
    if (out_lock_rad) *out_lock_rad = NAN;
    if ((int)seq < 0 || (int)seq >= TRAM_EULER_COUNT) return 0;
    double e[3], M[3][3];
    tram_euler_from_mat3(seq, R, e);
    double det = euler_rate_matrix(seq, e, M);
    double lock = asin(fmin(1.0, fabs(det)));
    if (out_lock_rad) *out_lock_rad = lock;
    double tr = cov_body[0] + cov_body[4] + cov_body[8];
    if (!(tr >= 0.0) || !(lock >= TRAM_EULER_COV_LOCK_MIN_DEG * TRAM_PI / 180.0) ||
        !(lock >= TRAM_EULER_COV_LOCK_SIGMAS * sqrt(tr)))
        return 0;
    /* J = M^-1 by the adjugate; the covariance J Sigma J^T */
    double J[3][3];
    for (int r = 0; r < 3; r++)
        for (int c = 0; c < 3; c++) {
            int r1 = (c + 1) % 3, r2 = (c + 2) % 3, c1 = (r + 1) % 3, c2 = (r + 2) % 3;
            J[r][c] = (M[r1][c1] * M[r2][c2] - M[r1][c2] * M[r2][c1]) / det;
        }
    double JS[3][3];
    for (int r = 0; r < 3; r++)
        for (int c = 0; c < 3; c++) {
            double s = 0.0;
            for (int k = 0; k < 3; k++) s += J[r][k] * cov_body[3 * k + c];
            JS[r][c] = s;
        }
    for (int r = 0; r < 3; r++)
        for (int c = 0; c < 3; c++) {
            double s = 0.0;
            for (int k = 0; k < 3; k++) s += JS[r][k] * J[c][k];
            out_cov[3 * r + c] = s;
        }
    return 1;
}
