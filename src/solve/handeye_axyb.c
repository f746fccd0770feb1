/*
 * handeye_axyb.c - closed-form AX=YB solvers on absolute poses, and the
 * public entry points of the closed forms (method names, station pairs,
 * observability pre-checks, residuals).
 *
 * With A_i = P_i and B_i = S_i^-1, every station gives A_i X = Z B_i:
 *   Shah (J. Mechanisms Robotics 5(3), 2013), Kronecker form:
 *     [R_A (x) I, -I (x) R_B^T] [vec R_X; vec R_Z] = 0 (row-major vec),
 *     the null vector scaled so det R_X = 1, both parts projected onto
 *     SO(3); then [R_A, -I][t_X; t_Z] = R_Z t_B - t_A by least squares.
 *   Zhuang, Roth & Sudhakar (IEEE T-RA 10(4), 1994), quaternion form:
 *     L(q_A) q_X - R(q_B) q_Z = 0, solved here as the null vector of the
 *     stacked 4n x 8 system (SVD) instead of the paper's normalisation of
 *     one component; the quaternion signs of B_i are made consistent first
 *     from the scalar parts of the relative motions, which AX=XB forces to
 *     agree.  Translation as for Shah.
 */
#include "math/so3_internal.h"
#include "tram/rotation.h"
#include "solve/handeye_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char *const method_names[TRAM_METHOD_COUNT] = {
    "auto", "tsai-lenz", "park-martin", "horaud-dornaika", "daniilidis", "andreff", "shah",
    "zhuang"};

const char *tram_method_name(tram_method m)
{
    if ((int)m < 0 || m >= TRAM_METHOD_COUNT) return "unknown";
    return method_names[m];
}

tram_method tram_method_parse(const char *name)
{
    for (int m = 0; name && m < TRAM_METHOD_COUNT; m++)
        if (strcmp(name, method_names[m]) == 0) return (tram_method)m;
    return TRAM_METHOD_COUNT;
}

int tram_method_is_axyb(tram_method m) { return m == TRAM_METHOD_SHAH || m == TRAM_METHOD_ZHUANG; }

tram_status tram_handeye_pairs(size_t n, tram_pairs_mode mode, tram_pair **out, size_t *count)
{
    *out = NULL;
    *count = 0;
    if (n < 2) return TRAM_OK;
    if (mode == TRAM_PAIRS_AUTO) mode = n <= 60 ? TRAM_PAIRS_ALL : TRAM_PAIRS_AUTO;
    size_t cap = mode == TRAM_PAIRS_ALL ? n * (n - 1) / 2 : 2 * n;
    tram_pair *p = tram__malloc(cap * sizeof *p);
    if (!p) return TRAM_ENOMEM;
    size_t k = 0;
    if (mode == TRAM_PAIRS_ALL) {
        for (size_t i = 0; i < n; i++)
            for (size_t j = i + 1; j < n; j++) p[k++] = (tram_pair){i, j};
    } else if (mode == TRAM_PAIRS_CONSECUTIVE) {
        for (size_t i = 0; i + 1 < n; i++) p[k++] = (tram_pair){i, i + 1};
    } else {
        /* Large sets: each station with the next and with the station half
         * the list away, so every station takes part in two motions and the
         * long-range pairs carry large rotations. */
        for (size_t i = 0; i + 1 < n; i++) p[k++] = (tram_pair){i, i + 1};
        for (size_t i = 0; i < n / 2; i++) p[k++] = (tram_pair){i, i + n / 2};
    }
    *out = p;
    *count = k;
    return TRAM_OK;
}

static void qvec(const tram_mat3 *R, double q[4])
{
    tram_quat_wxyz c;
    tram_quat_wxyz_from_mat3(R, &c);
    q[0] = c.w; q[1] = c.x; q[2] = c.y; q[3] = c.z;
}

static double qdot(const double *a, const double *b)
{
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2] + a[3] * b[3];
}

/* Translation of A X = Z B: [R_A, -I][t_X; t_Z] = R_Z t_B - t_A. */
static tram_status axyb_translation(const tram_se3 *A, const tram_se3 *B, size_t n,
                                    const tram_mat3 *RZ, double tX[3], double tZ[3])
{
    size_t rows = 3 * n;
    double *M = tram__malloc(rows * 6 * sizeof *M), *b = tram__malloc(rows * sizeof *b);
    if (!M || !b) {
        tram__free(M);
        tram__free(b);
        return TRAM_ENOMEM;
    }
    for (size_t k = 0; k < n; k++) {
        double tb[3] = {B[k].m[0][3], B[k].m[1][3], B[k].m[2][3]}, rz[3];
        tram_so3_apply(RZ, tb, rz);
        for (int r = 0; r < 3; r++) {
            for (int c = 0; c < 3; c++) {
                M[(3 * k + (size_t)r) * 6 + (size_t)c] = A[k].m[r][c];
                M[(3 * k + (size_t)r) * 6 + 3 + (size_t)c] = -(double)(r == c);
            }
            b[3 * k + (size_t)r] = rz[r] - A[k].m[r][3];
        }
    }
    double x[6];
    tram_status st = tram__lstsq((int)rows, 6, M, b, x);
    tram__free(M);
    tram__free(b);
    if (st != TRAM_OK) return st;
    memcpy(tX, x, 3 * sizeof *x);
    memcpy(tZ, x + 3, 3 * sizeof *x);
    return TRAM_OK;
}

static tram_status rot_shah(const tram_se3 *A, const tram_se3 *B, size_t n, tram_mat3 *RX,
                            tram_mat3 *RZ)
{
    /* the 9n x 18 system, streamed into its QR triangle 9 rows a station */
    tram__qrs qr;
    tram__qrs_init(&qr, 18);
    for (size_t k = 0; k < n; k++) {
        double *K = tram__qrs_rows(&qr, 9);
        if (!K) break;
        for (int i = 0; i < 3; i++)
            for (int kk = 0; kk < 3; kk++)
                for (int j = 0; j < 3; j++)
                    for (int l = 0; l < 3; l++) {
                        size_t row = (size_t)(3 * i + kk) * 18;
                        /* vec(R_A R_X I) = (R_A (x) I) vec R_X;
                         * vec(I R_Z R_B) = (I (x) R_B^T) vec R_Z */
                        K[row + (size_t)(3 * j + l)] = A[k].m[i][j] * (kk == l);
                        K[row + 9 + (size_t)(3 * j + l)] = -(double)(i == j) * B[k].m[l][kk];
                    }
    }
    double v[18];
    tram_status st = tram__qrs_finish(&qr);
    if (st == TRAM_OK) st = tram__nullvec(qr.rows, 18, qr.a, v, NULL, NULL);
    if (st != TRAM_OK) return st;
    tram_mat3 MX, MZ;
    for (int i = 0; i < 9; i++) {
        MX.m[i / 3][i % 3] = v[i];
        MZ.m[i / 3][i % 3] = v[9 + i];
    }
    /* One common scale: det R_X = 1 fixes it (and its sign) for both. */
    double det = tram__det3(&MX);
    double f = det < 0 ? -1.0 / cbrt(-det) : 1.0 / cbrt(det);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            MX.m[i][j] *= f;
            MZ.m[i][j] *= f;
        }
    tram_so3_nearest(&MX, RX);
    tram_so3_nearest(&MZ, RZ);
    return TRAM_OK;
}

static tram_status rot_zhuang(const tram_se3 *A, const tram_se3 *B, size_t n, tram_mat3 *RX,
                              tram_mat3 *RZ)
{
    double *qa = tram__malloc(n * 4 * sizeof *qa), *qb = tram__malloc(n * 4 * sizeof *qb);
    tram_status st = TRAM_OK;
    if (!qa || !qb) {
        st = TRAM_ENOMEM;
        goto out;
    }
    for (size_t k = 0; k < n; k++) {
        tram_mat3 R;
        tram_se3_to_rt(&A[k], &R, NULL);
        qvec(&R, qa + 4 * k);
        tram_se3_to_rt(&B[k], &R, NULL);
        qvec(&R, qb + 4 * k);
    }
    /* Sign of each q_B relative to station 0: scalar(q_Aj* q_Ai) must equal
     * scalar(q_Bj* q_Bi) once the signs agree; the scalar of p* q is p.q.
     * The sign is read off the most telling station already fixed (largest
     * |p.q| on both sides), searched among at most ZHUANG_ANCHORS anchors
     * instead of every earlier station (O(n), not O(n^2)): a station
     * becomes an anchor when no anchor tells its sign well (weight below
     * 1/2, i.e. both relative rotations beyond about 120 degrees), so
     * every station is compared with one that is close to it on both
     * sides whenever the anchors are not all taken. */
    enum { ZHUANG_ANCHORS = 32 };
    size_t anchor[ZHUANG_ANCHORS];
    int n_anchor = 1;
    anchor[0] = 0;
    for (size_t i = 1; i < n; i++) {
        double best = -1.0, sign = 1.0;
        for (int a = 0; a < n_anchor; a++) {
            size_t j = anchor[a];
            double sa = qdot(qa + 4 * j, qa + 4 * i), sb = qdot(qb + 4 * j, qb + 4 * i);
            double w = fabs(sa) * fabs(sb);
            if (w > best) {
                best = w;
                sign = sa * sb < 0 ? -1.0 : 1.0;
            }
        }
        if (sign < 0)
            for (int c = 0; c < 4; c++) qb[4 * i + (size_t)c] = -qb[4 * i + (size_t)c];
        if (best < 0.5 && n_anchor < ZHUANG_ANCHORS) anchor[n_anchor++] = i;
    }
    /* the 4n x 8 system [L(q_A) -R(q_B)], streamed into its QR triangle */
    tram__qrs qr;
    tram__qrs_init(&qr, 8);
    for (size_t k = 0; k < n; k++) {
        double L[16], R[16];
        double *M = tram__qrs_rows(&qr, 4);
        if (!M) break;
        tram__quat_left(qa + 4 * k, L);
        tram__quat_right(qb + 4 * k, R);
        for (int r = 0; r < 4; r++)
            for (int c = 0; c < 4; c++) {
                M[(size_t)r * 8 + (size_t)c] = L[4 * r + c];
                M[(size_t)r * 8 + 4 + (size_t)c] = -R[4 * r + c];
            }
    }
    double v[8];
    st = tram__qrs_finish(&qr);
    if (st == TRAM_OK) st = tram__nullvec(qr.rows, 8, qr.a, v, NULL, NULL);
    if (st != TRAM_OK) goto out;
    tram_quat_wxyz q1 = {v[0], v[1], v[2], v[3]}, q2 = {v[4], v[5], v[6], v[7]};
    tram_quat_wxyz_to_mat3(&q1, RX);
    tram_quat_wxyz_to_mat3(&q2, RZ);
out:
    tram__free(qa);
    tram__free(qb);
    return st;
}

tram_status tram__solve_axyb(tram_method method, const tram_se3 *P, const tram_se3 *S, size_t n,
                             tram_se3 *X, tram_se3 *Z)
{
    tram_se3 *B = tram__malloc(n * sizeof *B);
    if (!B) return TRAM_ENOMEM;
    for (size_t k = 0; k < n; k++) tram_se3_invert(&S[k], &B[k]);
    tram_mat3 RX, RZ;
    tram_status st = method == TRAM_METHOD_SHAH ? rot_shah(P, B, n, &RX, &RZ)
                                                : rot_zhuang(P, B, n, &RX, &RZ);
    double tX[3], tZ[3];
    if (st == TRAM_OK) st = axyb_translation(P, B, n, &RZ, tX, tZ);
    tram__free(B);
    if (st != TRAM_OK) return st;
    tram_se3_from_rt(&RX, tX, X);
    tram_se3_from_rt(&RZ, tZ, Z);
    return TRAM_OK;
}

void tram__motion_axes(const tram_se3 *P, const tram_pair *pairs, size_t npairs, double min_rad,
                       double M[9], size_t *used, double *min_angle, double *max_angle)
{
    double mn = INFINITY, mx = 0;
    memset(M, 0, 9 * sizeof *M);
    *used = 0;
    for (size_t k = 0; k < npairs; k++) {
        tram_se3 Pj_inv, A;
        tram_se3_invert(&P[pairs[k].j], &Pj_inv);
        tram_se3_compose(&Pj_inv, &P[pairs[k].i], &A);
        tram_mat3 R;
        double w[3];
        tram_se3_to_rt(&A, &R, NULL);
        tram_so3_log(&R, w);
        double t = tram__norm3(w);
        if (t < mn) mn = t;
        if (t > mx) mx = t;
        if (t < min_rad) continue;
        (*used)++;
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++) M[i * 3 + j] += w[i] * w[j] / (t * t);
    }
    if (min_angle) *min_angle = mn;
    if (max_angle) *max_angle = mx;
}

/* Spread of the relative rotation axes: the second eigenvalue of the
 * scatter of unit axes over the largest, for motions above 1e-3 rad. */
static double axis_spread_ratio(const tram_se3 *P, const tram_pair *pairs, size_t npairs,
                                size_t *used)
{
    double M[9], ev[3], V[9];
    tram__motion_axes(P, pairs, npairs, 1e-3, M, used, NULL, NULL);
    if (*used < 2 || tram__symeig(3, M, ev, V) != TRAM_OK || ev[2] <= 0) return 0.0;
    return ev[1] / ev[2];
}

tram_status tram_handeye_closed_form(tram_method method, const tram_se3 *P, const tram_se3 *S,
                                     size_t n, const tram_pair *pairs, size_t npairs, tram_se3 *X,
                                     tram_se3 *Z, tram_error *err)
{
    if (method <= TRAM_METHOD_AUTO || method >= TRAM_METHOD_COUNT)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "closed form: no such method");
    if (n < 3)
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "%zu station(s): at least 3 are needed", n);
    tram_pair *own = NULL;
    if (!tram_method_is_axyb(method) && !pairs) {
        if (tram_handeye_pairs(n, TRAM_PAIRS_AUTO, &own, &npairs) != TRAM_OK)
            return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        pairs = own;
    }
    tram_pair *all = NULL;
    size_t nall = 0;
    const tram_pair *chk = pairs;
    size_t nchk = npairs;
    if (tram_method_is_axyb(method)) {
        if (tram_handeye_pairs(n, TRAM_PAIRS_CONSECUTIVE, &all, &nall) != TRAM_OK) {
            tram__free(own);
            return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        }
        chk = all;
        nchk = nall;
    }
    size_t used;
    double ratio = axis_spread_ratio(P, chk, nchk, &used);
    tram__free(all);
    tram_status st;
    if (used < 2 || ratio < 1e-10) {
        st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                        "the relative rotations are all about one axis (or too small): the "
                        "transform is not determined");
    } else if (tram_method_is_axyb(method)) {
        st = tram__solve_axyb(method, P, S, n, X, Z);
    } else {
        st = tram__solve_axxb(method, P, S, n, pairs, npairs, X, Z);
    }
    tram__free(own);
    if (st == TRAM_ENOMEM) return tram__fail(err, st, NULL, 0, 0, "out of memory");
    if (st == TRAM_ENUMERIC)
        return tram__fail(err, st, NULL, 0, 0, "%s: a LAPACK routine did not converge",
                          tram_method_name(method));
    return st;
}

void tram_handeye_residuals(const tram_se3 *P, const tram_se3 *S, size_t n, const tram_se3 *X,
                            const tram_se3 *Z, double *rot_rad, double *trans)
{
    for (size_t i = 0; i < n; i++) {
        tram_se3 PX, Zi;
        tram_se3_compose(&P[i], X, &PX);
        tram_se3_compose(&PX, &S[i], &Zi);
        double ang, len;
        tram_se3_distance(Z, &Zi, &ang, &len);
        if (rot_rad) rot_rad[i] = ang * TRAM_PI / 180.0;
        if (trans) trans[i] = len;
    }
}
