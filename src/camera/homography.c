/*
 * homography.c - plane-to-image homographies by the normalised direct
 * linear transform (Hartley 1997, "In defense of the eight-point
 * algorithm", IEEE PAMI 19(6); the DLT as in Hartley and Zisserman 2003,
 * "Multiple View Geometry", 2nd ed., section 4.4).
 *
 * Both point sets are moved to their centroid and scaled to a mean
 * distance of sqrt(2), which makes the 2n x 9 system well conditioned; the
 * null vector of that system (SVD through LAPACKE, linalg.c) is the
 * normalised homography, which is then mapped back:
 *   H = N_image^-1  H_n  N_target.
 */
#include "camera/homography_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

void tram__mat3_mul(const double A[9], const double B[9], double out[9])
{
    double C[9];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            C[3 * i + j] = A[3 * i] * B[j] + A[3 * i + 1] * B[3 + j] + A[3 * i + 2] * B[6 + j];
    memcpy(out, C, sizeof C);
}

int tram__mat3_inv(const double A[9], double out[9])
{
    double c[9] = {A[4] * A[8] - A[5] * A[7], A[2] * A[7] - A[1] * A[8], A[1] * A[5] - A[2] * A[4],
                   A[5] * A[6] - A[3] * A[8], A[0] * A[8] - A[2] * A[6], A[2] * A[3] - A[0] * A[5],
                   A[3] * A[7] - A[4] * A[6], A[1] * A[6] - A[0] * A[7], A[0] * A[4] - A[1] * A[3]};
    double det = A[0] * c[0] + A[1] * c[3] + A[2] * c[6];
    if (!(fabs(det) > 0) || !isfinite(det)) return 0;
    for (int k = 0; k < 9; k++) out[k] = c[k] / det;
    return 1;
}

void tram__normalising_transform(size_t n, const double *p, double N[9])
{
    double mx = 0, my = 0, d = 0;
    for (size_t i = 0; i < n; i++) {
        mx += p[2 * i];
        my += p[2 * i + 1];
    }
    mx /= (double)(n ? n : 1);
    my /= (double)(n ? n : 1);
    for (size_t i = 0; i < n; i++) d += hypot(p[2 * i] - mx, p[2 * i + 1] - my);
    d /= (double)(n ? n : 1);
    double s = d > 0 ? sqrt(2.0) / d : 1.0;
    double M[9] = {s, 0, -s * mx, 0, s, -s * my, 0, 0, 1};
    memcpy(N, M, sizeof M);
}

static void apply(const double N[9], const double *p, double q[2])
{
    q[0] = N[0] * p[0] + N[1] * p[1] + N[2];
    q[1] = N[3] * p[0] + N[4] * p[1] + N[5];
}

tram_status tram__homography_dlt(size_t n, const double *xy, const double *uv, double H[9])
{
    if (n < 4) return TRAM_EUNDETERMINED;
    double Nt[9], Ni[9], Nii[9];
    tram__normalising_transform(n, xy, Nt);
    tram__normalising_transform(n, uv, Ni);
    /* each pair gives two rows of A h = 0 for h = H_n row-major:
     *   [ x y 1  0 0 0  -u x -u y -u ]
     *   [ 0 0 0  x y 1  -v x -v y -v ] */
    double *A = tram__malloc(2 * n * 9 * sizeof *A);
    if (!A) return TRAM_ENOMEM;
    for (size_t i = 0; i < n; i++) {
        double p[2], q[2];
        apply(Nt, &xy[2 * i], p);
        apply(Ni, &uv[2 * i], q);
        double *r0 = &A[18 * i], *r1 = r0 + 9;
        double a0[9] = {p[0], p[1], 1, 0, 0, 0, -q[0] * p[0], -q[0] * p[1], -q[0]};
        double a1[9] = {0, 0, 0, p[0], p[1], 1, -q[1] * p[0], -q[1] * p[1], -q[1]};
        memcpy(r0, a0, sizeof a0);
        memcpy(r1, a1, sizeof a1);
    }
    double s[9], Vt[81];
    tram_status st = tram__svd((int)(2 * n), 9, A, NULL, s, Vt);
    tram__free(A);
    if (st != TRAM_OK) return st;
    /* a second null direction (collinear points, or fewer than four
     * distinct ones) leaves H undetermined */
    if (!(s[7] > 1e-8 * s[0])) return TRAM_EUNDETERMINED;
    double Hn[9];
    for (int k = 0; k < 9; k++) Hn[k] = Vt[72 + k];
    if (!tram__mat3_inv(Ni, Nii)) return TRAM_EUNDETERMINED;
    tram__mat3_mul(Nii, Hn, H);
    tram__mat3_mul(H, Nt, H);
    double f = 0;
    for (int k = 0; k < 9; k++) f += H[k] * H[k];
    f = sqrt(f);
    if (!(f > 0)) return TRAM_EUNDETERMINED;
    if (H[8] < 0) f = -f;
    for (int k = 0; k < 9; k++) H[k] /= f;
    return TRAM_OK;
}
