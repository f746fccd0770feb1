/*
 * noise.c - the station noise model of the pose solve (docs/solve.md,
 * "Noise model"), its estimation by feasible generalised least squares,
 * the degrees of freedom of the intervals, and the per-station test.
 *
 * Model.  The sensor measures S_i = T_sensor_target with rotation noise
 * n_r (S's rotation exp(n_r) R_S) and translation noise n_t, both with
 * independent per-axis variances in the sensor's frame (cameras and 3D
 * sensors measure depth worse than the lateral directions: common
 * practice).  The robot's flange pose has isotropic rotation noise d_r
 * and translation noise d_t.  To first order the station residual of
 * refine.c (rotation log(R_Z^T R_Zhat) in Z's frame, translation
 * t_Zhat - t_Z in Z's parent frame) then has the covariance
 *     Sigma_rot = R_S^T diag(v_r) R_S + s_r^2 I,
 *     Sigma_tr  = M diag(v_t) M^T + s_t^2 I + s_r^2 (|m|^2 I - m m^T),
 * M = R_P R_X (the sensor's axes in Z's parent frame), m the robot's
 * lever arm: the target seen from the flange (eye-in-hand: t_Zhat - t_P;
 * eye-to-hand, where P is the inverse robot pose: t_Zhat).  The
 * rotation-translation coupling of the lever arm is left out.
 *
 * Estimation (feasible GLS, Amemiya, "Advanced Econometrics", 1985, 6.2):
 * refine with the whitening of the current model, then re-estimate the
 * variances from the moment equation E[r r^T] = Sigma - J C J^T of the
 * residuals of a GLS fit, C = (J^T Sigma^-1 J)^-1 - the correction for
 * the 12 fitted parameters that REML makes (Patterson & Thompson,
 * Biometrika 58(3), 1971) - expressed in the sensor's axes, and repeat.
 * The isotropic robot term adds the same to every sensor axis, so the
 * residuals cannot tell it from the sensor's: it is given (or 0) and
 * subtracted, and what is estimated is the sensor's share.
 *
 * Groups: the axes that share one variance are each axis (from
 * TRAM__NOISE_PER_AXIS_MIN stations); else the rotation axes, the lateral
 * translation axes (x, y) and depth (z); else (3 stations) rotation and
 * translation.
 *
 * Small samples: the covariance of the fit is adjusted for the noise being
 * estimated (Kenward & Roger, Biometrics 53(3), 1997).  Each group's
 * variance has nu_g = sum (1 - h), h the leverages of its residual
 * components; a parameter's variance combines them as the contribution-
 * weighted harmonic mean nu_h = sum g_a / sum (g_a / nu_a) and
 * Satterthwaite's (Biometrics Bulletin 2(6), 1946) nu_s = (sum g_g)^2 /
 * sum (g_g^2 / nu_g) over the groups, as their geometric mean: in
 * tests/ref/check_noise_scipy.py nu_s alone covered 91-96% per axis at 15
 * stations, nu_h alone 95-98% (both with the adjustment above).
 */
#include "solve/noise_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

static void mat3_rows(const tram_mat3 *R, double out[9])
{
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) out[3 * i + j] = R->m[i][j];
}

/* out = R diag(d) R^T + iso I (all 3x3 row-major). */
static void rotated_diag(const double R[9], const double d[3], double iso, double out[9])
{
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double s = 0;
            for (int k = 0; k < 3; k++) s += R[3 * i + k] * d[k] * R[3 * j + k];
            out[3 * i + j] = s + (i == j ? iso : 0.0);
        }
}

/* The sensor's axes in Z's parent frame (M = R_P R_X, rows of R_S^T are
 * the sensor's axes in the target frame) and the robot's lever arm m. */
static void station_frames(const tram__noise *nm, const tram_se3 *P, const tram_se3 *S,
                           const tram_se3 *X, double RS[9], double M[9], double m[3])
{
    tram_mat3 Rp, Rx, Rs, Rm;
    double tp[3];
    tram_se3 PX, Zh;
    tram_se3_to_rt(P, &Rp, tp);
    tram_se3_to_rt(X, &Rx, NULL);
    tram_se3_to_rt(S, &Rs, NULL);
    tram_so3_mul(&Rp, &Rx, &Rm);
    mat3_rows(&Rs, RS);
    mat3_rows(&Rm, M);
    tram_se3_compose(P, X, &PX);
    tram_se3_compose(&PX, S, &Zh);
    for (int k = 0; k < 3; k++) m[k] = Zh.m[k][3] - (nm->eye_to_hand ? 0.0 : tp[k]);
}

void tram__noise_station_cov(const tram__noise *nm, const tram_se3 *P, const tram_se3 *S,
                             const tram_se3 *X, const tram_se3 *Z, double Sr[9], double St[9])
{
    (void)Z;
    double RS[9], RSt[9], M[9], m[3];
    station_frames(nm, P, S, X, RS, M, m);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) RSt[3 * i + j] = RS[3 * j + i];
    rotated_diag(RSt, nm->rot_var, nm->robot_rot_var, Sr);
    rotated_diag(M, nm->len_var, nm->robot_len_var, St);
    double mm = tram__dot3(m, m);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            St[3 * i + j] += nm->robot_rot_var * ((i == j ? mm : 0.0) - m[i] * m[j]);
}

/* W = L^-1 with A = L L^T (3x3 Cholesky); a non-positive pivot is
 * floored so that the weight stays finite. */
static void inv_chol3(const double A[9], double W[9])
{
    double L[9] = {0};
    for (int j = 0; j < 3; j++) {
        double d = A[3 * j + j];
        for (int k = 0; k < j; k++) d -= L[3 * j + k] * L[3 * j + k];
        double ref = fabs(A[3 * j + j]) > 0 ? fabs(A[3 * j + j]) : 1e-300;
        L[3 * j + j] = sqrt(d > 1e-14 * ref ? d : 1e-14 * ref);
        for (int i = j + 1; i < 3; i++) {
            double s = A[3 * i + j];
            for (int k = 0; k < j; k++) s -= L[3 * i + k] * L[3 * j + k];
            L[3 * i + j] = s / L[3 * j + j];
        }
    }
    memset(W, 0, 9 * sizeof *W);
    for (int i = 0; i < 3; i++) {
        W[3 * i + i] = 1.0 / L[3 * i + i];
        for (int j = 0; j < i; j++) {
            double s = 0;
            for (int k = j; k < i; k++) s -= L[3 * i + k] * W[3 * k + j];
            W[3 * i + j] = s / L[3 * i + i];
        }
    }
}

void tram__noise_whitening(const tram__noise *nm, const tram_refine_problem *pb,
                           const tram_se3 *X, const tram_se3 *Z, double *W)
{
    for (size_t i = 0; i < pb->n; i++) {
        double Sr[9], St[9];
        tram__noise_station_cov(nm, &pb->P[i], &pb->S[i], X, Z, Sr, St);
        inv_chol3(Sr, W + 18 * i);
        inv_chol3(St, W + 18 * i + 9);
    }
}

/* out (3x12) = R (3x3) times rows k0..k0+2 of J. */
static void rotate_rows(const double R[9], const double J[6][12], int k0, double out[3][12])
{
    for (int a = 0; a < 3; a++)
        for (int p = 0; p < 12; p++)
            out[a][p] = R[3 * a] * J[k0][p] + R[3 * a + 1] * J[k0 + 1][p] + R[3 * a + 2] * J[k0 + 2][p];
}

/* a^T C a for a 12-vector a. */
static double quad12(const double a[12], const double C[144])
{
    double s = 0;
    for (int p = 0; p < 12; p++) {
        double cp = 0;
        for (int q = 0; q < 12; q++) cp += C[p * 12 + q] * a[q];
        s += a[p] * cp;
    }
    return s;
}

/* The station's residual and Jacobian in the sensor's axes: rotation R_S r
 * (the sensor's rotation noise), translation M^T r; and the robot term's
 * variance on each of those axes. */
static void sensor_axes(const tram__noise *nm, const tram_refine_problem *pb, size_t i,
                        const tram_se3 *X, const tram_se3 *Z, double u[6], double A[6][12],
                        double robot[6])
{
    double r[6], J[6][12], RS[9], M[9], Mt[9], m[3], ru[3][12], rt[3][12];
    tram__refine_station_raw(&pb->P[i], &pb->S[i], X, Z, r, J);
    station_frames(nm, &pb->P[i], &pb->S[i], X, RS, M, m);
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++) Mt[3 * a + b] = M[3 * b + a];
    rotate_rows(RS, J, 0, ru);
    rotate_rows(Mt, J, 3, rt);
    double mm = tram__dot3(m, m);
    for (int a = 0; a < 3; a++) {
        u[a] = RS[3 * a] * r[0] + RS[3 * a + 1] * r[1] + RS[3 * a + 2] * r[2];
        u[3 + a] = Mt[3 * a] * r[3] + Mt[3 * a + 1] * r[4] + Mt[3 * a + 2] * r[5];
        memcpy(A[a], ru[a], sizeof ru[a]);
        memcpy(A[3 + a], rt[a], sizeof rt[a]);
        double ma = Mt[3 * a] * m[0] + Mt[3 * a + 1] * m[1] + Mt[3 * a + 2] * m[2];
        robot[a] = nm->robot_rot_var;
        robot[3 + a] = nm->robot_len_var + nm->robot_rot_var * (mm - ma * ma);
    }
}

/* The group of each axis (rotation x y z, translation x y z) whose axes
 * share one variance: per axis; rotation, lateral translation (x, y) and
 * depth (z); or rotation and translation. */
static const int *axis_groups(const tram__noise *nm)
{
    static const int groups[3][6] = {{0, 1, 2, 3, 4, 5}, {0, 0, 0, 1, 1, 2}, {0, 0, 0, 1, 1, 1}};
    return groups[nm->per_axis == 1 ? 0 : nm->per_axis == 2 ? 1 : 2];
}

void tram__noise_estimate(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                          const tram_se3 *Z, const double C[144], int per_axis, tram__noise *nm)
{
    double su[6] = {0}, sq[6] = {0}, m = 0;
    for (size_t i = 0; i < pb->n; i++) {
        if (w && !(w[i] > 0)) continue;
        double u[6], A[6][12], robot[6];
        sensor_axes(nm, pb, i, X, Z, u, A, robot);
        for (int a = 0; a < 6; a++) {
            double q = quad12(A[a], C);
            su[a] += u[a] * u[a] + q - robot[a];
            sq[a] += q;
        }
        m += 1;
    }
    double floor_r = 1e-24, floor_t = tram__sq(1e-12 * pb->length_scale);
    nm->per_axis = per_axis;
    const int *grp = axis_groups(nm);
    for (int g = 0; g < 6; g++) {
        double s = 0, q = 0, k = 0;
        for (int a = 0; a < 6; a++)
            if (grp[a] == g) {
                s += su[a];
                q += sq[a];
                k += 1;
            }
        if (k == 0) continue;
        double v = s / (k * (m > 0 ? m : 1));
        for (int a = 0; a < 6; a++)
            if (grp[a] == g) {
                double vf = fmax(v, a < 3 ? floor_r : floor_t);
                if (a < 3) nm->rot_var[a] = vf;
                else nm->len_var[a - 3] = vf;
                nm->dof[a] = fmax(k * m - q / vf, 0.5);
            }
    }
}

/* Y = W^T (W J) for the 3 rows k0..k0+2: Sigma^-1 J of one block. */
static void sigma_inv_rows(const double W[9], const double J[6][12], int k0, double Y[3][12])
{
    double WJ[3][12];
    for (int a = 0; a < 3; a++)
        for (int p = 0; p < 12; p++)
            WJ[a][p] = W[3 * a] * J[k0][p] + W[3 * a + 1] * J[k0 + 1][p] + W[3 * a + 2] * J[k0 + 2][p];
    for (int a = 0; a < 3; a++)
        for (int p = 0; p < 12; p++)
            Y[a][p] = W[a] * WJ[0][p] + W[3 + a] * WJ[1][p] + W[6 + a] * WJ[2][p];
}

void tram__noise_param_dof(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                           const tram_se3 *Z, const double C[144], const tram__noise *nm,
                           double nu[12])
{
    double g[6][12] = {{0}};
    for (size_t i = 0; i < pb->n; i++) {
        if (w && !(w[i] > 0)) continue;
        double r[6], J[6][12], RS[9], M[9], Mt[9], m[3], Yr[3][12], Yt[3][12], Ar[3][12], At[3][12];
        tram__refine_station_raw(&pb->P[i], &pb->S[i], X, Z, r, J);
        station_frames(nm, &pb->P[i], &pb->S[i], X, RS, M, m);
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++) Mt[3 * a + b] = M[3 * b + a];
        sigma_inv_rows(pb->W + 18 * i, J, 0, Yr);
        sigma_inv_rows(pb->W + 18 * i + 9, J, 0 + 3, Yt);
        double Y6[6][12];
        memcpy(Y6[0], Yr, sizeof Yr);
        memcpy(Y6[3], Yt, sizeof Yt);
        rotate_rows(RS, Y6, 0, Ar); /* e_a^T R_S Sigma_rot^-1 J_rot */
        rotate_rows(Mt, Y6, 3, At); /* e_a^T M^T Sigma_tr^-1 J_tr   */
        for (int a = 0; a < 6; a++) {
            const double *y = a < 3 ? Ar[a] : At[a - 3];
            for (int k = 0; k < 12; k++) {
                double z = 0;
                for (int q = 0; q < 12; q++) z += y[q] * C[q * 12 + k];
                g[a][k] += z * z;
            }
        }
    }
    double var[6];
    memcpy(var, nm->rot_var, sizeof nm->rot_var);
    memcpy(var + 3, nm->len_var, sizeof nm->len_var);
    for (int k = 0; k < 12; k++) {
        double num = 0, den = 0, den2 = 0;
        for (int a = 0; a < 6; a++) {
            double ga = g[a][k] * var[a];
            num += ga;
            den += ga / nm->dof[a]; /* the axes of a group share its dof */
        }
        /* Satterthwaite over the groups (axes of a group add up first) */
        const int *grp = axis_groups(nm);
        for (int gi = 0; gi < 6; gi++) {
            double gg = 0, dg = 0;
            for (int a = 0; a < 6; a++)
                if (grp[a] == gi) {
                    gg += g[a][k] * var[a];
                    dg = nm->dof[a];
                }
            if (dg > 0) den2 += gg * gg / dg;
        }
        double harm = den > 0 ? num / den : INFINITY, satt = den2 > 0 ? num * num / den2 : INFINITY;
        nu[k] = sqrt(harm * satt);
    }
}

/* m (12x12) += f a b^T */
static void outer_add(double *m, double f, const double a[12], const double b[12])
{
    for (int p = 0; p < 12; p++)
        for (int q = 0; q < 12; q++) m[p * 12 + q] += f * a[p] * b[q];
}

/* out = A B (12x12). */
static void mul12(const double *A, const double *B, double *out)
{
    for (int p = 0; p < 12; p++)
        for (int q = 0; q < 12; q++) {
            double s = 0;
            for (int k = 0; k < 12; k++) s += A[p * 12 + k] * B[k * 12 + q];
            out[p * 12 + q] = s;
        }
}

void tram__noise_kr_adjust(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                           const tram_se3 *Z, const double C[144], const tram__noise *nm,
                           double CA[144])
{
    const int *grp = axis_groups(nm);
    double Pg[6][144], Qg[6][144];
    memset(Pg, 0, sizeof Pg);
    memset(Qg, 0, sizeof Qg);
    for (size_t i = 0; i < pb->n; i++) {
        if (w && !(w[i] > 0)) continue;
        double r[6], J[6][12], RS[9], M[9], m[3], d[6][6], sv[6][6], y[6][12];
        tram__refine_station_raw(&pb->P[i], &pb->S[i], X, Z, r, J);
        station_frames(nm, &pb->P[i], &pb->S[i], X, RS, M, m);
        const double *W = pb->W + 18 * i;
        for (int a = 0; a < 6; a++) {
            memset(d[a], 0, sizeof d[a]);
            for (int k = 0; k < 3; k++) d[a][a < 3 ? k : 3 + k] = a < 3 ? RS[3 * a + k] : M[3 * k + a - 3];
            for (int blk = 0; blk < 2; blk++) { /* sv = W^T W d, block by block */
                const double *Wb = W + 9 * blk;
                double wd[3];
                for (int k = 0; k < 3; k++)
                    wd[k] = Wb[3 * k] * d[a][3 * blk] + Wb[3 * k + 1] * d[a][3 * blk + 1] + Wb[3 * k + 2] * d[a][3 * blk + 2];
                for (int k = 0; k < 3; k++)
                    sv[a][3 * blk + k] = Wb[k] * wd[0] + Wb[3 + k] * wd[1] + Wb[6 + k] * wd[2];
            }
            for (int p = 0; p < 12; p++) {
                y[a][p] = 0;
                for (int k = 0; k < 6; k++) y[a][p] += J[k][p] * sv[a][k];
            }
        }
        for (int a = 0; a < 6; a++) {
            outer_add(Pg[grp[a]], 1.0, y[a], y[a]);
            for (int b = 0; b < 6; b++) {
                if (grp[b] != grp[a]) continue;
                double ds = 0;
                for (int k = 0; k < 6; k++) ds += d[a][k] * sv[b][k];
                outer_add(Qg[grp[a]], ds, y[a], y[b]);
            }
        }
    }
    double Ssum[144] = {0}, T1[144], T2[144];
    for (int g = 0; g < 6; g++) {
        int a0 = -1;
        for (int a = 0; a < 6; a++)
            if (grp[a] == g && a0 < 0) a0 = a;
        if (a0 < 0) continue;
        double var[6];
        memcpy(var, nm->rot_var, sizeof nm->rot_var);
        memcpy(var + 3, nm->len_var, sizeof nm->len_var);
        double wv = 2.0 * var[a0] * var[a0] / nm->dof[a0]; /* Var of the variance estimate */
        mul12(Pg[g], C, T1);
        mul12(T1, Pg[g], T2);
        for (int k = 0; k < 144; k++) Ssum[k] += wv * (Qg[g][k] - T2[k]);
    }
    mul12(C, Ssum, T1);
    mul12(T1, C, T2);
    for (int k = 0; k < 144; k++) CA[k] = C[k] + 2.0 * T2[k];
}

tram_status tram__noise_station_stat(const tram_refine_problem *pb, const double *w,
                                     const tram_se3 *X, const tram_se3 *Z, const double C[144],
                                     const tram__noise *nm, double *T)
{
    tram_status st = TRAM_OK;
    for (size_t i = 0; i < pb->n; i++) {
        double r[6], J[6][12], Sr[9], St[9], V[36], x[6];
        tram__refine_station_raw(&pb->P[i], &pb->S[i], X, Z, r, J);
        tram__noise_station_cov(nm, &pb->P[i], &pb->S[i], X, Z, Sr, St);
        double sign = (!w || w[i] > 0) ? -1.0 : 1.0, JC[6][12];
        for (int b = 0; b < 6; b++) /* C J^T once (C symmetric), then J (C J^T) */
            for (int p = 0; p < 12; p++) {
                double cp = 0;
                for (int q = 0; q < 12; q++) cp += C[p * 12 + q] * J[b][q];
                JC[b][p] = cp;
            }
        for (int a = 0; a < 6; a++)
            for (int b = 0; b < 6; b++) {
                double jcj = 0;
                for (int p = 0; p < 12; p++) jcj += J[a][p] * JC[b][p];
                double s = 0;
                if (a < 3 && b < 3) s = Sr[3 * a + b];
                else if (a >= 3 && b >= 3) s = St[3 * (a - 3) + b - 3];
                V[a * 6 + b] = s + sign * jcj;
            }
        if (tram__spd_solve(6, V, r, x) != TRAM_OK) {
            /* a kept station's residual with no variance left (leverage
             * 1) cannot be tested; a left-out one's always can */
            T[i] = sign < 0 ? 0.0 : INFINITY;
            st = TRAM_ENUMERIC;
            continue;
        }
        T[i] = 0;
        for (int a = 0; a < 6; a++) T[i] += r[a] * x[a];
    }
    return st;
}

double tram__noise_rms_rot(const tram__noise *nm)
{
    return sqrt((nm->rot_var[0] + nm->rot_var[1] + nm->rot_var[2]) / 3.0);
}

double tram__noise_rms_len(const tram__noise *nm)
{
    return sqrt((nm->len_var[0] + nm->len_var[1] + nm->len_var[2]) / 3.0);
}
