/*
 * handeye_axxb.c - closed-form AX=XB hand-eye solvers on relative motions.
 *
 * For a station pair (i, j): A = P_j^-1 P_i, B = S_j S_i^-1 and A X = X B
 * (see tram/handeye.h).  The rotation part R_A R_X = R_X R_B is solved by
 * one of five published methods; the translation part
 *     (R_A - I) t_X = R_X t_B - t_A
 * is stacked over all pairs and solved by linear least squares (LAPACKE
 * dgels), except where a method solves both together.
 *
 *   Tsai & Lenz (IEEE T-RA 5(3), 1989): with P = 2 sin(theta/2) n for each
 *     motion, skew(P_A + P_B) g = P_B - P_A, g = tan(phi/2) u the Gibbs
 *     vector of R_X; singular at phi = 180 deg, so a first estimate beyond
 *     90 deg is used as a known offset and the problem solved again near
 *     the identity (docs/methods.md).
 *   Park & Martin (IEEE T-RA 10(5), 1994): alpha = log R_A, beta = log R_B,
 *     M = sum beta alpha^T, R_X = (M^T M)^(-1/2) M^T, evaluated as V U^T
 *     from M = U S V^T (equal for full rank, and defined for rank 2).
 *   Horaud & Dornaika (IJRR 14(3), 1995), linear quaternion form:
 *     (L(q_A) - R(q_B)) q_X = 0 stacked, q_X the smallest right singular
 *     vector.
 *   Daniilidis (IJRR 18(3), 1999): dual quaternions; the 6x8 blocks
 *     [a-b, [a+b]x, 0, 0; a'-b', [a'+b']x, a-b, [a+b]x] stacked, the solution
 *     in the span of the two smallest right singular vectors fixed by the
 *     unit and orthogonality constraints of a unit dual quaternion.
 *   Andreff, Horaud & Espiau (IJRR 20(3), 2001), linear Kronecker form:
 *     (R_A (x) I - I (x) R_B^T) vec(R_X) = 0 (row-major vec), the null
 *     vector scaled to det +1 and projected onto SO(3).
 */
#include "math/so3_internal.h"
#include "tram/handeye.h"
#include "tram/rotation.h"
#include "solve/handeye_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef struct motion {
    tram_mat3 RA, RB;
    double tA[3], tB[3];
} motion;

static tram_status build_motions(const tram_se3 *P, const tram_se3 *S, const tram_pair *pairs,
                                 size_t npairs, motion **out)
{
    motion *m = tram__malloc((npairs ? npairs : 1) * sizeof *m);
    if (!m) return TRAM_ENOMEM;
    for (size_t k = 0; k < npairs; k++) {
        tram_se3 Pj_inv, Si_inv, A, B;
        tram_se3_invert(&P[pairs[k].j], &Pj_inv);
        tram_se3_compose(&Pj_inv, &P[pairs[k].i], &A);
        tram_se3_invert(&S[pairs[k].i], &Si_inv);
        tram_se3_compose(&S[pairs[k].j], &Si_inv, &B);
        tram_se3_to_rt(&A, &m[k].RA, m[k].tA);
        tram_se3_to_rt(&B, &m[k].RB, m[k].tB);
    }
    *out = m;
    return TRAM_OK;
}

/* Stacked (R_A - I) t = R_X t_B - t_A. */
static tram_status solve_translation(const motion *m, size_t n, const tram_mat3 *RX, double t[3])
{
    size_t rows = 3 * n;
    double *A = tram__malloc(rows * 3 * sizeof *A), *b = tram__malloc(rows * sizeof *b);
    if (!A || !b) {
        tram__free(A);
        tram__free(b);
        return TRAM_ENOMEM;
    }
    for (size_t k = 0; k < n; k++) {
        double rtb[3];
        tram_so3_apply(RX, m[k].tB, rtb);
        for (int r = 0; r < 3; r++) {
            for (int c = 0; c < 3; c++) A[(3 * k + (size_t)r) * 3 + (size_t)c] = m[k].RA.m[r][c] - (r == c);
            b[3 * k + (size_t)r] = rtb[r] - m[k].tA[r];
        }
    }
    tram_status st = tram__lstsq((int)rows, 3, A, b, t);
    tram__free(A);
    tram__free(b);
    return st;
}

static void quat_of(const tram_mat3 *R, double q[4])
{
    tram_quat_wxyz c;
    tram_quat_wxyz_from_mat3(R, &c); /* canonical: w >= 0 */
    q[0] = c.w; q[1] = c.x; q[2] = c.y; q[3] = c.z;
}

static void mat_of_quat(const double q[4], tram_mat3 *R)
{
    tram_quat_wxyz c = {q[0], q[1], q[2], q[3]};
    tram_quat_wxyz_to_mat3(&c, R);
}

void tram__quat_left(const double q[4], double L[16])
{
    const double w = q[0], x = q[1], y = q[2], z = q[3];
    const double v[16] = {w, -x, -y, -z, x, w, -z, y, y, z, w, -x, z, -y, x, w};
    memcpy(L, v, sizeof v);
}

void tram__quat_right(const double q[4], double R[16])
{
    const double w = q[0], x = q[1], y = q[2], z = q[3];
    const double v[16] = {w, -x, -y, -z, x, w, z, -y, y, -z, w, x, z, y, -x, w};
    memcpy(R, v, sizeof v);
}

static tram_status rot_tsai_lenz(const motion *m, size_t n, tram_mat3 *RX)
{
    size_t rows = 3 * n;
    double *A = tram__malloc(rows * 3 * sizeof *A), *b = tram__malloc(rows * sizeof *b);
    if (!A || !b) {
        tram__free(A);
        tram__free(b);
        return TRAM_ENOMEM;
    }
    for (size_t k = 0; k < n; k++) {
        double wa[3], wb[3], pa[3], pb[3], s[3];
        tram_so3_log(&m[k].RA, wa);
        tram_so3_log(&m[k].RB, wb);
        double ta = tram__norm3(wa), tb = tram__norm3(wb);
        double fa = ta > 0 ? 2.0 * sin(0.5 * ta) / ta : 1.0;
        double fb = tb > 0 ? 2.0 * sin(0.5 * tb) / tb : 1.0;
        for (int i = 0; i < 3; i++) {
            pa[i] = fa * wa[i];
            pb[i] = fb * wb[i];
            s[i] = pa[i] + pb[i];
        }
        tram_mat3 K;
        tram_so3_hat(s, &K);
        for (int r = 0; r < 3; r++) {
            for (int c = 0; c < 3; c++) A[(3 * k + (size_t)r) * 3 + (size_t)c] = K.m[r][c];
            b[3 * k + (size_t)r] = pb[r] - pa[r];
        }
    }
    double g[3];
    tram_status st = tram__lstsq((int)rows, 3, A, b, g);
    tram__free(A);
    tram__free(b);
    if (st != TRAM_OK) return st;
    double gn = tram__norm3(g);
    double phi = 2.0 * atan(gn);
    double w[3] = {0, 0, 0};
    if (gn > 0)
        for (int i = 0; i < 3; i++) w[i] = g[i] / gn * phi;
    tram_so3_exp(w, RX);
    return TRAM_OK;
}

/* Tsai & Lenz near a half turn.  The Gibbs vector tan(phi/2) u of R_X is
 * unbounded as phi -> 180 deg, so the least-squares solve above loses
 * accuracy there (several degrees at 180.0).  A known offset Q removes the
 * singularity: with R_X = R' Q, R_A R_X = R_X R_B becomes R_A R' = R' (Q R_B
 * Q^T), whose solution R' is near the identity when Q is near R_X.  Q is
 * the first estimate itself, used when it turns by more than 90 deg. */
static tram_status rot_tsai_lenz_offset(const motion *m, size_t n, tram_mat3 *RX)
{
    tram_status st = rot_tsai_lenz(m, n, RX);
    if (st != TRAM_OK || tram_so3_angle(RX) < 0.5 * TRAM_PI) return st;
    motion *q = tram__malloc((n ? n : 1) * sizeof *q);
    if (!q) return TRAM_ENOMEM;
    tram_mat3 Q = *RX, Qt, T, Rp;
    tram_so3_transpose(&Q, &Qt);
    for (size_t k = 0; k < n; k++) {
        q[k] = m[k];
        tram_so3_mul(&Q, &m[k].RB, &T);
        tram_so3_mul(&T, &Qt, &q[k].RB);
    }
    st = rot_tsai_lenz(q, n, &Rp);
    tram__free(q);
    if (st == TRAM_OK) tram_so3_mul(&Rp, &Q, RX);
    return st;
}

static tram_status rot_park_martin(const motion *m, size_t n, tram_mat3 *RX)
{
    double M[9] = {0}, U[9], s[3], Vt[9];
    for (size_t k = 0; k < n; k++) {
        double a[3], b[3];
        tram_so3_log(&m[k].RA, a);
        tram_so3_log(&m[k].RB, b);
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++) M[i * 3 + j] += b[i] * a[j];
    }
    tram_status st = tram__svd(3, 3, M, U, s, Vt);
    if (st != TRAM_OK) return st;
    /* R_X = V U^T, with the last singular direction flipped if det = -1. */
    tram_mat3 V, Ut, R;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            V.m[i][j] = Vt[j * 3 + i];
            Ut.m[i][j] = U[j * 3 + i];
        }
    tram_so3_mul(&V, &Ut, &R);
    if (tram__det3(&R) < 0) {
        for (int i = 0; i < 3; i++) V.m[i][2] = -V.m[i][2];
        tram_so3_mul(&V, &Ut, &R);
    }
    *RX = R;
    return TRAM_OK;
}

static tram_status rot_horaud_dornaika(const motion *m, size_t n, tram_mat3 *RX)
{
    /* the 4n x 4 system L(q_A) - R(q_B), streamed into its QR triangle */
    tram__qrs qr;
    tram__qrs_init(&qr, 4);
    for (size_t k = 0; k < n; k++) {
        double qa[4], qb[4], L[16], R[16];
        double *A = tram__qrs_rows(&qr, 4);
        if (!A) break;
        quat_of(&m[k].RA, qa);
        quat_of(&m[k].RB, qb);
        tram__quat_left(qa, L);
        tram__quat_right(qb, R);
        for (int i = 0; i < 16; i++) A[i] = L[i] - R[i];
    }
    double q[4];
    tram_status st = tram__qrs_finish(&qr);
    if (st == TRAM_OK) st = tram__nullvec(qr.rows, 4, qr.a, q, NULL, NULL);
    if (st != TRAM_OK) return st;
    mat_of_quat(q, RX);
    return TRAM_OK;
}

static void skew_into(double *A, size_t ld, size_t r0, size_t c0, const double v[3], double sgn)
{
    tram_mat3 K;
    tram_so3_hat(v, &K);
    for (int r = 0; r < 3; r++)
        for (int c = 0; c < 3; c++) A[(r0 + (size_t)r) * ld + c0 + (size_t)c] = sgn * K.m[r][c];
}

static tram_status solve_daniilidis(const motion *m, size_t n, tram_mat3 *RX, double tX[3])
{
    /* the 6n x 8 system, streamed into its QR triangle 6 rows a motion */
    tram__qrs qr;
    tram__qrs_init(&qr, 8);
    for (size_t k = 0; k < n; k++) {
        double qa[4], qb[4], da[4], db[4];
        double *T = tram__qrs_rows(&qr, 6);
        if (!T) break;
        quat_of(&m[k].RA, qa);
        quat_of(&m[k].RB, qb);
        /* dual parts q' = 0.5 (0, t) q */
        double ta[4] = {0, m[k].tA[0], m[k].tA[1], m[k].tA[2]};
        double tb[4] = {0, m[k].tB[0], m[k].tB[1], m[k].tB[2]};
        tram_quat_wxyz x, y, r;
        x = (tram_quat_wxyz){ta[0], ta[1], ta[2], ta[3]};
        y = (tram_quat_wxyz){qa[0], qa[1], qa[2], qa[3]};
        tram_quat_wxyz_mul(&x, &y, &r);
        da[0] = 0.5 * r.w; da[1] = 0.5 * r.x; da[2] = 0.5 * r.y; da[3] = 0.5 * r.z;
        x = (tram_quat_wxyz){tb[0], tb[1], tb[2], tb[3]};
        y = (tram_quat_wxyz){qb[0], qb[1], qb[2], qb[3]};
        tram_quat_wxyz_mul(&x, &y, &r);
        db[0] = 0.5 * r.w; db[1] = 0.5 * r.x; db[2] = 0.5 * r.y; db[3] = 0.5 * r.z;
        double d[3], s[3], dd[3], ds[3];
        for (int i = 0; i < 3; i++) {
            d[i] = qa[1 + i] - qb[1 + i];
            s[i] = qa[1 + i] + qb[1 + i];
            dd[i] = da[1 + i] - db[1 + i];
            ds[i] = da[1 + i] + db[1 + i];
        }
        const size_t r0 = 0;
        for (int i = 0; i < 3; i++) {
            T[(r0 + (size_t)i) * 8 + 0] = d[i];
            T[(r0 + 3 + (size_t)i) * 8 + 0] = dd[i];
            T[(r0 + 3 + (size_t)i) * 8 + 4] = d[i];
        }
        skew_into(T, 8, r0, 1, s, 1.0);
        skew_into(T, 8, r0 + 3, 1, ds, 1.0);
        skew_into(T, 8, r0 + 3, 5, s, 1.0);
    }
    double v7[8], v8[8];
    tram_status st = tram__qrs_finish(&qr);
    if (st == TRAM_OK) st = tram__null2(qr.rows, 8, qr.a, v7, v8);
    if (st != TRAM_OK) return st;
    const double *u1 = v7, *w1 = v7 + 4, *u2 = v8, *w2 = v8 + 4;
    double a = 0, b = 0, c = 0, uu11 = 0, uu12 = 0, uu22 = 0;
    for (int i = 0; i < 4; i++) {
        a += u1[i] * w1[i];
        b += u1[i] * w2[i] + u2[i] * w1[i];
        c += u2[i] * w2[i];
        uu11 += u1[i] * u1[i];
        uu12 += u1[i] * u2[i];
        uu22 += u2[i] * u2[i];
    }
    /* a s^2 + b s + c = 0 with s = lambda1 / lambda2 */
    double roots[2];
    int nr;
    if (fabs(a) < 1e-14 * (fabs(b) + fabs(c) + 1e-300)) {
        roots[0] = fabs(b) > 0 ? -c / b : 0.0;
        nr = 1;
    } else {
        double disc = b * b - 4 * a * c;
        if (disc < 0) disc = 0; /* noise */
        double sq = sqrt(disc);
        roots[0] = (-b + sq) / (2 * a);
        roots[1] = (-b - sq) / (2 * a);
        nr = 2;
    }
    double best_val = -1, best_s = 0;
    for (int i = 0; i < nr; i++) {
        double val = roots[i] * roots[i] * uu11 + 2 * roots[i] * uu12 + uu22;
        if (val > best_val) {
            best_val = val;
            best_s = roots[i];
        }
    }
    double l2, l1;
    if (best_val > 1e-300) {
        l2 = 1.0 / sqrt(best_val);
        l1 = best_s * l2;
    } else { /* v7 alone carries the real part */
        l1 = 1.0 / sqrt(uu11);
        l2 = 0.0;
    }
    double q[8];
    for (int i = 0; i < 8; i++) q[i] = l1 * v7[i] + l2 * v8[i];
    double qn = sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2] + q[3] * q[3]);
    for (int i = 0; i < 8; i++) q[i] /= qn;
    mat_of_quat(q, RX);
    /* t = 2 q' q* (vector part) */
    tram_quat_wxyz dq = {q[4], q[5], q[6], q[7]}, qc = {q[0], -q[1], -q[2], -q[3]}, t;
    tram_quat_wxyz_mul(&dq, &qc, &t);
    tX[0] = 2 * t.x;
    tX[1] = 2 * t.y;
    tX[2] = 2 * t.z;
    return TRAM_OK;
}

static tram_status rot_andreff(const motion *m, size_t n, tram_mat3 *RX)
{
    /* the 9n x 9 system, streamed into its QR triangle 9 rows a motion */
    tram__qrs qr;
    tram__qrs_init(&qr, 9);
    for (size_t k = 0; k < n; k++) {
        double *A = tram__qrs_rows(&qr, 9);
        if (!A) break;
        for (int i = 0; i < 3; i++)
            for (int kk = 0; kk < 3; kk++)
                for (int j = 0; j < 3; j++)
                    for (int l = 0; l < 3; l++) {
                        /* (R_A (x) I - I (x) R_B^T)[(i,kk),(j,l)] */
                        double v = m[k].RA.m[i][j] * (kk == l) - (i == j) * m[k].RB.m[l][kk];
                        A[(size_t)(3 * i + kk) * 9 + (size_t)(3 * j + l)] = v;
                    }
    }
    double x[9];
    tram_status st = tram__qrs_finish(&qr);
    if (st == TRAM_OK) st = tram__nullvec(qr.rows, 9, qr.a, x, NULL, NULL);
    if (st != TRAM_OK) return st;
    tram_mat3 M;
    for (int i = 0; i < 9; i++) M.m[i / 3][i % 3] = x[i];
    tram__scale_to_det1(&M);
    tram_so3_nearest(&M, RX);
    return TRAM_OK;
}

void tram__scale_to_det1(tram_mat3 *M)
{
    double det = tram__det3(M);
    double f = det < 0 ? -1.0 / cbrt(-det) : (det > 0 ? 1.0 / cbrt(det) : 1.0);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) M->m[i][j] *= f;
}

void tram__target_from_x(const tram_se3 *P, const tram_se3 *S, size_t n, const tram_se3 *X,
                         tram_se3 *Z)
{
    tram_mat3 sumR;
    double t[3] = {0, 0, 0};
    memset(&sumR, 0, sizeof sumR);
    for (size_t i = 0; i < n; i++) {
        tram_se3 PX, Zi;
        tram_se3_compose(&P[i], X, &PX);
        tram_se3_compose(&PX, &S[i], &Zi);
        for (int r = 0; r < 3; r++) {
            for (int c = 0; c < 3; c++) sumR.m[r][c] += Zi.m[r][c];
            t[r] += Zi.m[r][3];
        }
    }
    tram_mat3 R;
    tram_so3_nearest(&sumR, &R);
    for (int r = 0; r < 3; r++) t[r] /= (double)(n ? n : 1);
    tram_se3_from_rt(&R, t, Z);
}

tram_status tram__solve_axxb(tram_method method, const tram_se3 *P, const tram_se3 *S, size_t n,
                             const tram_pair *pairs, size_t npairs, tram_se3 *X, tram_se3 *Z)
{
    motion *m = NULL;
    tram_status st = build_motions(P, S, pairs, npairs, &m);
    if (st != TRAM_OK) return st;
    tram_mat3 RX;
    double tX[3];
    int have_t = 0;
    switch (method) {
    case TRAM_METHOD_TSAI_LENZ: st = rot_tsai_lenz_offset(m, npairs, &RX); break;
    case TRAM_METHOD_PARK_MARTIN: st = rot_park_martin(m, npairs, &RX); break;
    case TRAM_METHOD_HORAUD_DORNAIKA: st = rot_horaud_dornaika(m, npairs, &RX); break;
    case TRAM_METHOD_ANDREFF: st = rot_andreff(m, npairs, &RX); break;
    case TRAM_METHOD_DANIILIDIS:
        st = solve_daniilidis(m, npairs, &RX, tX);
        have_t = 1;
        break;
    default: st = TRAM_ENUMERIC; break;
    }
    if (st == TRAM_OK && !have_t) st = solve_translation(m, npairs, &RX, tX);
    tram__free(m);
    if (st != TRAM_OK) return st;
    tram_se3_from_rt(&RX, tX, X);
    tram__target_from_x(P, S, n, X, Z);
    return TRAM_OK;
}
