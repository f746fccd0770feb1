/*
 * refine.c - nonlinear least-squares refinement of P_i X S_i = Z over both
 * unknowns, with a robust loss, the covariance of the result and a station
 * bootstrap.
 *
 * Parameters: x = (w_X, dt_X, w_Z, dt_Z) with X(x) = (R_X exp(w_X), t_X + dt_X)
 * and likewise Z (rotation perturbed on the right, about the solved frame's
 * own axes; translation in the parent frame).  Residual of station i, with
 * Zhat_i = P_i X S_i the target pose predicted by the station:
 *     r_i = ( log(R_Z^T R_Zhat_i) / sigma_angle ,  (t_Zhat_i - t_Z) / sigma_length )
 * i.e. the rotation and translation between prediction and observation,
 * each whitened by the station's noise (noise.c: per-axis noise in the
 * sensor's frame plus the robot's) or scaled by per-axis sigmas.
 * Minimised by Levenberg-Marquardt (Marquardt, SIAM J. Appl. Math. 11(2),
 * 1963) with the analytic Jacobian on SE(3): with D = R_Z^T R_P R_X R_S
 * and phi = log D, a rotation w_X of X on the right gives D exp(R_S^T w_X),
 * a rotation w_Z of Z gives exp(-w_Z) D, so d phi = Jr^-1(phi) R_S^T w_X
 * - Jl^-1(phi) w_Z; the translation R_P (R_X t_S + t_X) + t_P - t_Z moves
 * by -R_P R_X [t_S]x w_X + R_P dt_X - dt_Z (generic residual blocks keep
 * central differences); the normal equations are solved through LAPACKE
 * (dposv).
 * The robust loss is Cauchy's, applied per station by iteratively
 * reweighted least squares: w_i = 1 / (1 + (u_i / c)^2), u_i^2 = |r_i|^2 / 6,
 * c = 2.3849 (95% efficiency at the normal; Holland & Welsch, Commun.
 * Statist. A6(9), 1977).
 * Sensor scale (tram solve --fit-scale; docs/solve.md): with pb->scale set,
 * one more parameter s multiplies the sensor's lengths (the translation of
 * S_i, or the observed points through eval): the similarity form of the
 * problem, as in Umeyama's (1991) registration with scale.  On station
 * residuals its Jacobian column is analytic too: d r_t / ds = R_P R_X t_S.
 * Covariance: Cov(x) = s^2 (J^T J)^-1 at the solution (s^2 = chi^2 / dof).
 * Bootstrap: stations resampled with replacement (Efron, Ann. Statist. 7(1),
 * 1979), each resample refined from the solution; every station's J^T J,
 * J^T r and cost at the solution are computed once and weighted per
 * resample for its first step.
 */
#include "tram/se3.h"
#include "solve/refine_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define NP 12
#define NPX (NP + 1) /* with the sensor scale */
#define CAUCHY_C 2.3849

void tram__refine_apply(const tram_se3 *X0, const tram_se3 *Z0, const double x[NP], tram_se3 *X,
                        tram_se3 *Z)
{
    tram_mat3 R, E;
    double t[3];
    tram_se3_to_rt(X0, &R, t);
    tram_so3_exp(x, &E);
    tram_so3_mul(&R, &E, &R);
    for (int i = 0; i < 3; i++) t[i] += x[3 + i];
    tram_se3_from_rt(&R, t, X);
    tram_se3_to_rt(Z0, &R, t);
    tram_so3_exp(x + 6, &E);
    tram_so3_mul(&R, &E, &R);
    for (int i = 0; i < 3; i++) t[i] += x[9 + i];
    tram_se3_from_rt(&R, t, Z);
}

/* T_a_c = T_a_b T_b_c, with tram_se3_compose's arithmetic (same rounding),
 * inline for the per-station loops. */
static inline void compose(const tram_se3 *A, const tram_se3 *B, tram_se3 *C)
{
    for (int i = 0; i < 3; i++) {
        for (int j = 0; j < 4; j++)
            C->m[i][j] = A->m[i][0] * B->m[0][j] + A->m[i][1] * B->m[1][j] + A->m[i][2] * B->m[2][j];
        C->m[i][3] += A->m[i][3];
    }
}

/* The residual of (P, S) at (X, Z), and P X (rotation and translation;
 * rows 0-2 only) into *PX. */
static inline void residual_px(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                               const tram_se3 *Z, double r[6], tram_se3 *PX)
{
    tram_se3 Zh;
    compose(P, X, PX);
    compose(PX, S, &Zh);
    tram_mat3 D; /* R_Z^T R_Zhat, as tram_so3_mul of the transpose */
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            D.m[i][j] = Z->m[0][i] * Zh.m[0][j] + Z->m[1][i] * Zh.m[1][j] + Z->m[2][i] * Zh.m[2][j];
    tram_so3_log(&D, r);
    for (int i = 0; i < 3; i++) r[3 + i] = Zh.m[i][3] - Z->m[i][3];
}

void tram__refine_residual(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                           const tram_se3 *Z, double r[6])
{
    tram_se3 PX;
    residual_px(P, S, X, Z, r, &PX);
}

/* Inverse right and left Jacobians of SO(3) at phi (Chirikjian,
 * "Stochastic Models, Information Theory, and Lie Groups", vol. 2, 2012):
 *   Jr^-1 = I + 1/2 [phi]x + (1/th^2 - (1 + cos th) / (2 th sin th)) [phi]x^2,
 * and Jl^-1(phi) = Jr^-1(-phi) = I - 1/2 [phi]x + (same) [phi]x^2. */
static void jr_jl_inv(const double phi[3], double Jr[3][3], double Jl[3][3])
{
    const double *p = phi;
    double th2 = p[0] * p[0] + p[1] * p[1] + p[2] * p[2], th = sqrt(th2);
    double c = th < 1e-6 ? 1.0 / 12.0 : 1.0 / th2 - (1.0 + cos(th)) / (2.0 * th * sin(th));
    if (th > 3.1) c = 1.0 / th2; /* near pi the series is ill-defined; a bounded step */
    tram_mat3 K;
    tram_so3_hat(p, &K);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double k2 = 0;
            for (int m = 0; m < 3; m++) k2 += K.m[i][m] * K.m[m][j];
            double h = 0.5 * K.m[i][j], e = (i == j), q = c * k2;
            Jr[i][j] = e + h + q;
            Jl[i][j] = e - h + q;
        }
}

void tram__refine_station_raw(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                              const tram_se3 *Z, double r[6], double J[6][NP])
{
    tram_se3 PX;
    residual_px(P, S, X, Z, r, &PX); /* PX's rotation is R_P R_X */
    double Jr[3][3], Jl[3][3];
    jr_jl_inv(r, Jr, Jl);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double a = 0; /* (Jr^-1 R_S^T)_ij */
            for (int m = 0; m < 3; m++) a += Jr[i][m] * S->m[j][m];
            J[i][j] = a;
            J[i][3 + j] = 0.0;
            J[i][6 + j] = -Jl[i][j];
            J[i][9 + j] = 0.0;
        }
    /* -R_P R_X [t_S]x, with [t_S]x as tram_so3_hat builds it */
    const double t0 = S->m[0][3], t1 = S->m[1][3], t2 = S->m[2][3];
    const double K[3][3] = {{0.0, -t2, t1}, {t2, 0.0, -t0}, {-t1, t0, 0.0}};
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            double a = 0;
            for (int m = 0; m < 3; m++) a += PX.m[i][m] * K[m][j];
            J[3 + i][j] = -a;
            J[3 + i][3 + j] = P->m[i][j];
            J[3 + i][6 + j] = 0.0;
            J[3 + i][9 + j] = -(double)(i == j);
        }
}

void tram__refine_station_jacobian(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X,
                                   const tram_se3 *Z, double inv_sa, double inv_sl, double ht,
                                   double r[6], double J[6][NP])
{
    (void)ht; /* the Jacobian is analytic */
    tram__refine_station_raw(P, S, X, Z, r, J);
    for (int k = 0; k < 6; k++) {
        double f = k < 3 ? inv_sa : inv_sl;
        r[k] *= f;
        for (int p = 0; p < NP; p++) J[k][p] *= f;
    }
}

/* v (3 values, stride `stride`) <- W v for the 3x3 row-major W. */
static void whiten3(const double *W, double *v, size_t stride)
{
    double a = v[0], b = v[stride], c = v[2 * stride];
    for (int i = 0; i < 3; i++) v[(size_t)i * stride] = W[3 * i] * a + W[3 * i + 1] * b + W[3 * i + 2] * c;
}

/* Which rows of a station's Jacobian column p can be nonzero: 1 the
 * rotation rows, 2 the translation rows.  A translation parameter (dt_X,
 * dt_Z, the scale) leaves the rotation residual alone and w_Z the
 * translation residual, before and after the whitening (which mixes
 * rotation rows and translation rows only among themselves). */
static int column_rows(int p, int nb)
{
    if (p >= nb) return 2; /* the scale */
    int k = p % 12;
    return k < 3 ? 3 : k < 6 ? 2 : k < 9 ? 1 : 2;
}

/* Weight a station's raw residual (and its Jacobian J when J != NULL: 6
 * rows of nc columns, row stride ld, the pose parameters before column
 * nb) in place: by the per-station whitening of the noise model (the
 * blocks known to be 0 stay 0), or by the sigmas. */
static void station_weigh(const tram_refine_problem *pb, size_t i, double r[6], double *J,
                          size_t ld, int nc, int nb)
{
    if (pb->W) {
        const double *W = pb->W + 18 * i;
        whiten3(W, r, 1);
        whiten3(W + 9, r + 3, 1);
        if (J)
            for (int p = 0; p < nc; p++) {
                int rows = column_rows(p, nb);
                if (rows & 1) whiten3(W, &J[p], ld);
                if (rows & 2) whiten3(W + 9, &J[3 * ld + (size_t)p], ld);
            }
        return;
    }
    for (int k = 0; k < 6; k++) {
        double f = k < 3 ? 1.0 / pb->sigma_angle : 1.0 / pb->sigma_length;
        r[k] *= f;
        if (J)
            for (int p = 0; p < nc; p++) J[(size_t)k * ld + (size_t)p] *= f;
    }
}

void tram__refine_weighted(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                           const tram_se3 *Z, double r[6], double J[6][NP])
{
    tram_se3 S = pb->S[i];
    if (pb->scale)
        for (int k = 0; k < 3; k++) S.m[k][3] *= *pb->scale;
    if (J) tram__refine_station_raw(&pb->P[i], &S, X, Z, r, J);
    else tram__refine_residual(&pb->P[i], &S, X, Z, r);
    station_weigh(pb, i, r, J ? &J[0][0] : NULL, NP, NP, NP);
}

static size_t nblocks(const tram_refine_problem *pb) { return pb->eval ? pb->nblocks : pb->n; }
static int nbase(const tram_refine_problem *pb) { return pb->nfree > 0 ? pb->nfree : NP; }
static int nparams(const tram_refine_problem *pb) { return nbase(pb) + (pb->scale ? 1 : 0); }
static size_t maxdim(const tram_refine_problem *pb) { return pb->eval ? pb->maxdim : 6; }

/* Weighted residual of block i; returns its length. */
static size_t block_eval(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                         const tram_se3 *Z, double *r)
{
    if (pb->eval) return pb->eval(pb, i, X, Z, r);
    tram__refine_weighted(pb, i, X, Z, r, NULL);
    return 6;
}

static double block_cost(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                         const tram_se3 *Z, double *buf, size_t *dim)
{
    size_t d = block_eval(pb, i, X, Z, buf);
    double c = 0;
    for (size_t k = 0; k < d; k++) c += buf[k] * buf[k];
    if (dim) *dim = d;
    return c;
}

static double total_cost(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                         const tram_se3 *Z, double *buf)
{
    double c = 0;
    for (size_t i = 0; i < nblocks(pb); i++)
        if (w[i] > 0) c += w[i] * block_cost(pb, i, X, Z, buf, NULL);
    return c;
}

/* Scratch for one block: r, r+, r-, and J (maxdim x NP). */
typedef struct scratch {
    double *r, *rp, *rm, *J;
} scratch;

static int scratch_alloc(const tram_refine_problem *pb, scratch *s)
{
    size_t m = maxdim(pb);
    s->r = tram__malloc(m * (3 + NPX) * sizeof *s->r);
    if (!s->r) return -1;
    s->rp = s->r + m;
    s->rm = s->rp + m;
    s->J = s->rm + m;
    return 0;
}

/* Add w J^T J and w J^T r of one block (d rows of J, row stride ld). */
static void accumulate(int np, size_t ld, size_t d, double w, const double *J, const double *r,
                       double H[NPX * NPX], double g[NPX])
{
    for (int a = 0; a < np; a++) {
        double ga = 0;
        for (size_t k = 0; k < d; k++) ga += J[k * ld + (size_t)a] * r[k];
        g[a] += w * ga;
        for (int b = a; b < np; b++) {
            double hsum = 0;
            for (size_t k = 0; k < d; k++) hsum += J[k * ld + (size_t)a] * J[k * ld + (size_t)b];
            H[a * np + b] += w * hsum;
        }
    }
}

/* accumulate for a 6-row block (a station), the products known to be 0
 * skipped: the sums that remain are the same in the same order (a sum of
 * exact zeros adds nothing), so H and g round as accumulate's. */
static void accumulate6(int np, int nb, size_t ld, double w, const double *J, const double r[6],
                        double H[NPX * NPX], double g[NPX])
{
    double Jt[NPX][6];
    int rows[NPX];
    for (int a = 0; a < np; a++) {
        rows[a] = column_rows(a, nb);
        for (int k = 0; k < 6; k++) Jt[a][k] = J[(size_t)k * ld + (size_t)a];
    }
    for (int a = 0; a < np; a++) {
        const double *x = Jt[a];
        double ga = x[0] * r[0];
        for (int k = 1; k < 6; k++) ga += x[k] * r[k];
        g[a] += w * ga;
        double *Ha = H + a * np;
        for (int b = a; b < np; b++) {
            const double *y = Jt[b];
            int both = rows[a] & rows[b];
            if (!both) continue;
            double hsum;
            if (both & 1) {
                hsum = x[0] * y[0] + x[1] * y[1] + x[2] * y[2];
                if (both & 2) hsum = hsum + x[3] * y[3] + x[4] * y[4] + x[5] * y[5];
            } else {
                hsum = x[3] * y[3] + x[4] * y[4] + x[5] * y[5];
            }
            Ha[b] += w * hsum;
        }
    }
}

/* accumulate6 for the 12 pose parameters of a station (np = nb = NP,
 * row stride NP), with the zero pattern of column_rows written out: the
 * rotation rows touch columns 0-2 and 6-8, the translation rows 0-5 and
 * 9-11.  Every sum is accumulate6's, term for term in the same order, so
 * H and g are bit-identical; only the transposition, the per-pair test
 * and the loop over skipped pairs are gone. */
static inline double dot_rot(const double J[6][NP], int a, int b)
{
    return J[0][a] * J[0][b] + J[1][a] * J[1][b] + J[2][a] * J[2][b];
}

static inline double dot_tr(const double J[6][NP], int a, int b)
{
    return J[3][a] * J[3][b] + J[4][a] * J[4][b] + J[5][a] * J[5][b];
}

static void accumulate_station(double w, const double J[6][NP], const double r[6],
                               double H[NPX * NPX], double g[NPX])
{
    for (int a = 0; a < NP; a++) {
        double ga = J[0][a] * r[0];
        for (int k = 1; k < 6; k++) ga += J[k][a] * r[k];
        g[a] += w * ga;
    }
    for (int a = 0; a < 3; a++) { /* w_X: both blocks */
        double *Ha = H + a * NP;
        for (int b = a; b < 3; b++) {
            double hsum = dot_rot(J, a, b);
            hsum = hsum + J[3][a] * J[3][b] + J[4][a] * J[4][b] + J[5][a] * J[5][b];
            Ha[b] += w * hsum;
        }
        for (int b = 3; b < 6; b++) Ha[b] += w * dot_tr(J, a, b);
        for (int b = 6; b < 9; b++) Ha[b] += w * dot_rot(J, a, b);
        for (int b = 9; b < 12; b++) Ha[b] += w * dot_tr(J, a, b);
    }
    for (int a = 3; a < 6; a++) { /* dt_X: translation rows */
        double *Ha = H + a * NP;
        for (int b = a; b < 6; b++) Ha[b] += w * dot_tr(J, a, b);
        for (int b = 9; b < 12; b++) Ha[b] += w * dot_tr(J, a, b);
    }
    for (int a = 6; a < 9; a++) { /* w_Z: rotation rows */
        double *Ha = H + a * NP;
        for (int b = a; b < 9; b++) Ha[b] += w * dot_rot(J, a, b);
    }
    for (int a = 9; a < 12; a++) { /* dt_Z: translation rows */
        double *Ha = H + a * NP;
        for (int b = a; b < 12; b++) Ha[b] += w * dot_tr(J, a, b);
    }
}

/* The step x (nparams values) from (X, Z) and the scale: the moved poses,
 * and the moved scale into *scale (unchanged without pb->scale). */
static void step_apply(const tram_refine_problem *pb, const tram_se3 *X, const tram_se3 *Z,
                       const double *x, tram_se3 *Xn, tram_se3 *Zn, double *scale)
{
    double x12[NP] = {0};
    memcpy(x12, x, (size_t)nbase(pb) * sizeof *x);
    tram__refine_apply(X, Z, x12, Xn, Zn);
    if (pb->scale) *scale = *pb->scale + x[nbase(pb)];
}

/* Block i's residual with parameter p moved by h (the scale restored). */
static void eval_moved(const tram_refine_problem *pb, size_t i, const tram_se3 *X,
                       const tram_se3 *Z, int p, double h, double *r)
{
    double x[NPX] = {0}, s0 = pb->scale ? *pb->scale : 1.0, s1 = s0;
    tram_se3 Xp, Zp;
    x[p] = h;
    step_apply(pb, X, Z, x, &Xp, &Zp, &s1);
    if (pb->scale) *pb->scale = s1;
    block_eval(pb, i, &Xp, &Zp, r);
    if (pb->scale) *pb->scale = s0;
}

/* Station residuals (eval == NULL): the analytic Jacobian. */
static void normal_stations(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                            const tram_se3 *Z, int np, size_t lo, size_t hi, double H[NPX * NPX], double g[NPX])
{
    for (size_t i = lo; i < hi; i++) {
        if (!(w[i] > 0)) continue;
        double r[6], J[6][NP];
        tram__refine_weighted(pb, i, X, Z, r, J);
        if (np == NP) accumulate_station(w[i], J, r, H, g);
        else accumulate6(np, nbase(pb), NP, w[i], &J[0][0], r, H, g);
    }
}

/* Generic blocks: central differences over the free parameters, with the
 * 2 np perturbed (X, Z) built once for all blocks (they do not depend on
 * the block). */
static tram_status normal_blocks(const tram_refine_problem *pb, const double *w,
                                 const tram_se3 *X, const tram_se3 *Z, int np, size_t lo, size_t hi,
                                 double H[NPX * NPX], double g[NPX])
{
    scratch sc;
    if (scratch_alloc(pb, &sc)) return TRAM_ENOMEM;
    double ht = 1e-4 * pb->length_scale, hs[NP];
    tram_se3 Xp[2 * NP], Zp[2 * NP];
    for (int p = 0; p < np; p++) {
        double x[NP] = {0};
        hs[p] = (p % 6) < 3 ? 1e-6 : ht;
        x[p] = hs[p];
        tram__refine_apply(X, Z, x, &Xp[2 * p], &Zp[2 * p]);
        x[p] = -hs[p];
        tram__refine_apply(X, Z, x, &Xp[2 * p + 1], &Zp[2 * p + 1]);
    }
    for (size_t i = lo; i < hi; i++) {
        if (!(w[i] > 0)) continue;
        size_t d = block_eval(pb, i, X, Z, sc.r);
        for (int p = 0; p < np; p++) {
            block_eval(pb, i, &Xp[2 * p], &Zp[2 * p], sc.rp);
            block_eval(pb, i, &Xp[2 * p + 1], &Zp[2 * p + 1], sc.rm);
            for (size_t k = 0; k < d; k++)
                sc.J[k * NP + (size_t)p] = (sc.rp[k] - sc.rm[k]) / (2 * hs[p]);
        }
        accumulate(np, NP, d, w[i], sc.J, sc.r, H, g);
    }
    tram__free(sc.r);
    return TRAM_OK;
}

/* With the sensor scale free (pb->scale) on station residuals: the
 * analytic Jacobian over the nbase pose parameters, and the scale's
 * column.  S's translation enters as s t_S, so the translation residual
 * R_P (R_X s t_S + t_X) + t_P - t_Z moves by R_P R_X t_S per unit of s
 * (t_S unscaled) and the rotation residual not at all. */
static void normal_stations_scaled(const tram_refine_problem *pb, const double *w,
                                   const tram_se3 *X, const tram_se3 *Z, int np, size_t lo, size_t hi,
                                   double H[NPX * NPX], double g[NPX])
{
    int nb = nbase(pb);
    tram_mat3 RX;
    tram_se3_to_rt(X, &RX, NULL);
    for (size_t i = lo; i < hi; i++) {
        if (!(w[i] > 0)) continue;
        tram_se3 S = pb->S[i];
        double r[6], J[6][NP], Js[6][NPX], tS[3], RPX[3][3];
        for (int k = 0; k < 3; k++) {
            tS[k] = S.m[k][3];
            S.m[k][3] *= *pb->scale;
        }
        tram__refine_station_raw(&pb->P[i], &S, X, Z, r, J);
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++) {
                double v = 0;
                for (int m = 0; m < 3; m++) v += pb->P[i].m[a][m] * RX.m[m][b];
                RPX[a][b] = v;
            }
        for (int k = 0; k < 6; k++) {
            for (int p = 0; p < nb; p++) Js[k][p] = J[k][p];
            Js[k][nb] = k < 3 ? 0.0
                              : RPX[k - 3][0] * tS[0] + RPX[k - 3][1] * tS[1] + RPX[k - 3][2] * tS[2];
        }
        station_weigh(pb, i, r, &Js[0][0], NPX, np, nb);
        accumulate6(np, nb, NPX, w[i], &Js[0][0], r, H, g);
    }
}

/* With the sensor scale free on generic blocks (pb->eval): central
 * differences over the nbase pose parameters and the scale, block by
 * block. */
static tram_status normal_blocks_scaled(const tram_refine_problem *pb, const double *w,
                                        const tram_se3 *X, const tram_se3 *Z, int np, size_t lo, size_t hi,
                                        double H[NPX * NPX], double g[NPX])
{
    scratch sc;
    if (scratch_alloc(pb, &sc)) return TRAM_ENOMEM;
    double ht = 1e-4 * pb->length_scale;
    for (size_t i = lo; i < hi; i++) {
        if (!(w[i] > 0)) continue;
        size_t d = block_eval(pb, i, X, Z, sc.r);
        for (int p = 0; p < np; p++) {
            double h = p == nbase(pb) ? 1e-6 : (p % 6) < 3 ? 1e-6 : ht;
            eval_moved(pb, i, X, Z, p, h, sc.rp);
            eval_moved(pb, i, X, Z, p, -h, sc.rm);
            for (size_t k = 0; k < d; k++)
                sc.J[k * NPX + (size_t)p] = (sc.rp[k] - sc.rm[k]) / (2 * h);
        }
        accumulate(np, NPX, d, w[i], sc.J, sc.r, H, g);
    }
    tram__free(sc.r);
    return TRAM_OK;
}

/* Normal equations H = sum w J^T J, g = sum w J^T r at (X, Z) (np x np,
 * np = nparams). */
/* Blocks lo..hi-1's sum of w J^T J (upper triangle) and w J^T r added to
 * H and g (np = nparams). */
static tram_status normal_range(const tram_refine_problem *pb, const double *w, const tram_se3 *X,
                                const tram_se3 *Z, size_t lo, size_t hi, double H[NPX * NPX],
                                double g[NPX])
{
    int np = nparams(pb);
    if (pb->scale && !pb->eval) normal_stations_scaled(pb, w, X, Z, np, lo, hi, H, g);
    else if (pb->scale) return normal_blocks_scaled(pb, w, X, Z, np, lo, hi, H, g);
    else if (!pb->eval) normal_stations(pb, w, X, Z, np, lo, hi, H, g);
    else return normal_blocks(pb, w, X, Z, np, lo, hi, H, g);
    return TRAM_OK;
}

static void symmetrize(int np, double H[NPX * NPX])
{
    for (int a = 0; a < np; a++)
        for (int b = 0; b < a; b++) H[a * np + b] = H[b * np + a];
}

static tram_status normal_equations(const tram_refine_problem *pb, const double *w,
                                    const tram_se3 *X, const tram_se3 *Z, double H[NPX * NPX],
                                    double g[NPX])
{
    memset(H, 0, NPX * NPX * sizeof *H);
    memset(g, 0, NPX * sizeof *g);
    tram_status st = normal_range(pb, w, X, Z, 0, nblocks(pb), H, g);
    if (st != TRAM_OK) return st;
    symmetrize(nparams(pb), H);
    return TRAM_OK;
}

/* What every block contributes at one point (X, Z) with unit weight: its
 * cost, J^T J (upper triangle) and J^T r.  The bootstrap's resamples all
 * start at the solution, where only the weights change: their first
 * normal equations and cost are weighted sums of these, in block order,
 * with the same rounding as a fresh evaluation. */
typedef struct start_point {
    double *cost, *H, *g; /* per block: 1, NPX * NPX, NPX values */
} start_point;

static void start_point_free(start_point *sp) { tram__free(sp->cost); }

static tram_status start_point_build(const tram_refine_problem *pb, const tram_se3 *X,
                                     const tram_se3 *Z, start_point *sp)
{
    size_t nb = nblocks(pb), m = nb ? nb : 1;
    sp->cost = tram__calloc(m * (1 + NPX * NPX + NPX) + m + maxdim(pb), sizeof *sp->cost);
    if (!sp->cost) return TRAM_ENOMEM;
    sp->H = sp->cost + m;
    sp->g = sp->H + m * NPX * NPX;
    double *one = sp->g + m * NPX, *buf = one + m;
    tram_status st = TRAM_OK;
    for (size_t i = 0; i < nb && st == TRAM_OK; i++) {
        one[i] = 1.0;
        sp->cost[i] = block_cost(pb, i, X, Z, buf, NULL);
        st = normal_range(pb, one, X, Z, i, i + 1, sp->H + i * NPX * NPX, sp->g + i * NPX);
    }
    if (st != TRAM_OK) start_point_free(sp);
    return st;
}

/* The weighted cost, H and g at the start point from its blocks. */
static double start_point_sum(const tram_refine_problem *pb, const start_point *sp,
                              const double *w, double H[NPX * NPX], double g[NPX])
{
    int np = nparams(pb);
    double c = 0;
    memset(H, 0, NPX * NPX * sizeof *H);
    memset(g, 0, NPX * sizeof *g);
    for (size_t i = 0; i < nblocks(pb); i++) {
        if (!(w[i] > 0)) continue;
        const double *Hb = sp->H + i * NPX * NPX, *gb = sp->g + i * NPX;
        c += w[i] * sp->cost[i];
        for (int a = 0; a < np; a++) {
            g[a] += w[i] * gb[a];
            for (int b = a; b < np; b++) H[a * np + b] += w[i] * Hb[a * np + b];
        }
    }
    symmetrize(np, H);
    return c;
}

/* Levenberg-Marquardt with fixed block weights w; sp: NULL, or the
 * blocks' contributions at the starting (X, Z). */
static tram_status lm(const tram_refine_problem *pb, const double *w, int max_iter, tram_se3 *X,
                      tram_se3 *Z, int *iters, const start_point *sp)
{
    int np = nparams(pb);
    double H[NPX * NPX], g[NPX], lambda = 1e-3;
    double *buf = tram__malloc(maxdim(pb) * sizeof *buf);
    if (!buf) return TRAM_ENOMEM;
    double cost = sp ? start_point_sum(pb, sp, w, H, g) : total_cost(pb, w, X, Z, buf);
    int it;
    tram_status st = TRAM_OK;
    for (it = 0; it < max_iter; it++) {
        if (!(it == 0 && sp) && (st = normal_equations(pb, w, X, Z, H, g)) != TRAM_OK) break;
        int accepted = 0, done = 0;
        for (int tries = 0; tries < 12 && !accepted; tries++) {
            double A[NPX * NPX], mg[NPX], dx[NPX] = {0};
            memcpy(A, H, sizeof A);
            for (int a = 0; a < np; a++) {
                A[a * np + a] += lambda * (H[a * np + a] > 1e-300 ? H[a * np + a] : 1e-300);
                mg[a] = -g[a];
            }
            memcpy(dx, mg, (size_t)np * sizeof *dx); /* A is scratch: solved in place */
            if (tram__spd_solve_overwrite(np, A, dx) != TRAM_OK) {
                lambda *= 10;
                continue;
            }
            tram_se3 Xn, Zn;
            double s0 = pb->scale ? *pb->scale : 1.0, sn = s0;
            step_apply(pb, X, Z, dx, &Xn, &Zn, &sn);
            if (pb->scale) *pb->scale = sn;
            double cn = total_cost(pb, w, &Xn, &Zn, buf);
            if (!(cn <= cost) && pb->scale) *pb->scale = s0; /* rejected: back */
            if (cn <= cost) {
                double rel = (cost - cn) / (cost > 1e-300 ? cost : 1e-300);
                *X = Xn;
                *Z = Zn;
                cost = cn;
                lambda = lambda / 10 > 1e-12 ? lambda / 10 : 1e-12;
                accepted = 1;
                double step = 0;
                for (int a = 0; a < np; a++) step += dx[a] * dx[a];
                if (rel < 1e-14 || step < 1e-26) done = 1;
            } else {
                lambda *= 10;
            }
        }
        if (done) {
            it++;
            break;
        }
        if (!accepted) break; /* no descent direction left: converged */
    }
    if (iters) *iters = it;
    tram__free(buf);
    return st;
}

tram_status tram__refine_run(const tram_refine_problem *pb, const double *station_w, int robust,
                             tram_se3 *X, tram_se3 *Z)
{
    size_t nb = nblocks(pb);
    double *w = tram__malloc((nb ? nb : 1) * sizeof *w);
    double *buf = tram__malloc(maxdim(pb) * sizeof *buf);
    if (!w || !buf) {
        tram__free(w);
        tram__free(buf);
        return TRAM_ENOMEM;
    }
    for (size_t i = 0; i < nb; i++) w[i] = station_w ? station_w[i] : 1.0;
    tram_status st = TRAM_OK;
    if (!robust) {
        st = lm(pb, w, 100, X, Z, NULL, NULL);
        /* settle station problems to rounding level (tram__refine_polish) */
        if (st == TRAM_OK && !pb->eval) st = tram__refine_polish(pb, w, 2, X, Z);
    } else {
        /* IRLS: re-derive the Cauchy weights from the residuals, refit. */
        for (int outer = 0; outer < 8 && st == TRAM_OK; outer++) {
            tram_se3 X0 = *X;
            for (size_t i = 0; i < nb; i++) {
                double base = station_w ? station_w[i] : 1.0;
                if (!(base > 0)) {
                    w[i] = 0;
                    continue;
                }
                size_t d;
                double c = block_cost(pb, i, X, Z, buf, &d);
                double u2 = c / (double)(d ? d : 1);
                w[i] = base / (1.0 + u2 / (CAUCHY_C * CAUCHY_C));
            }
            st = lm(pb, w, 50, X, Z, NULL, NULL);
            double ang, len;
            tram_se3_distance(&X0, X, &ang, &len);
            if (ang < 1e-9 && len < 1e-9 * pb->length_scale) break;
        }
    }
    tram__free(w);
    tram__free(buf);
    return st;
}

tram_status tram__refine_polish(const tram_refine_problem *pb, const double *station_w, int steps,
                                tram_se3 *X, tram_se3 *Z)
{
    size_t nb = nblocks(pb);
    int np = nparams(pb);
    double *w = tram__malloc((nb ? nb : 1) * sizeof *w);
    if (!w) return TRAM_ENOMEM;
    for (size_t i = 0; i < nb; i++) w[i] = station_w ? station_w[i] : 1.0;
    tram_status st = TRAM_OK;
    for (int it = 0; it < steps && st == TRAM_OK; it++) {
        double H[NPX * NPX], g[NPX], dx[NPX] = {0};
        if ((st = normal_equations(pb, w, X, Z, H, g)) != TRAM_OK) break;
        for (int a = 0; a < np; a++) dx[a] = -g[a];
        if (tram__spd_solve_overwrite(np, H, dx) != TRAM_OK) break; /* singular: keep LM's answer */
        tram_se3 Xn, Zn;
        double sn = pb->scale ? *pb->scale : 1.0;
        step_apply(pb, X, Z, dx, &Xn, &Zn, &sn);
        if (pb->scale) *pb->scale = sn;
        *X = Xn;
        *Z = Zn;
    }
    tram__free(w);
    return st;
}

tram_status tram__refine_covariance(const tram_refine_problem *pb, const double *station_w,
                                    const tram_se3 *X, const tram_se3 *Z, double scale2,
                                    double cov[NP * NP], double *condition)
{
    return tram__refine_covariance_scale(pb, station_w, X, Z, scale2, cov, condition, NULL, NULL);
}

/* scale2 * H^-1 into the 12x12 layout (NaN where not free), the
 * condition of H's correlation form, and the scale's variance and
 * covariances (either may be NULL); H (np x np, symmetric) is kept. */
static tram_status cov_from_normal(const tram_refine_problem *pb, const double *H, double scale2,
                                   double cov[NP * NP], double *condition, double *var_scale,
                                   double cov_scale[NP])
{
    int np = nparams(pb);
    if (condition) {
        /* Condition of the correlation form of H: independent of units. */
        double C[NPX * NPX], ev[NPX], V[NPX * NPX];
        for (int a = 0; a < np; a++)
            for (int b = 0; b < np; b++)
                C[a * np + b] = H[a * np + b] / sqrt(H[a * np + a] * H[b * np + b]);
        if (tram__symeig(np, C, ev, V) == TRAM_OK && ev[0] > 0)
            *condition = sqrt(ev[np - 1] / ev[0]);
        else
            *condition = INFINITY;
    }
    double Ci[NPX * NPX];
    tram_status st = tram__spd_inverse(np, H, Ci);
    if (st != TRAM_OK) return st;
    /* Into the 12x12 layout; parameters that were not free get NaN. */
    int nx = nbase(pb), ks = pb->scale ? nx : -1;
    for (int a = 0; a < NP; a++)
        for (int b = 0; b < NP; b++)
            cov[a * NP + b] = (a < nx && b < nx) ? Ci[a * np + b] * scale2 : NAN;
    if (var_scale) *var_scale = ks >= 0 ? Ci[ks * np + ks] * scale2 : NAN;
    if (cov_scale)
        for (int a = 0; a < NP; a++) cov_scale[a] = ks >= 0 && a < nx ? Ci[a * np + ks] * scale2 : NAN;
    return TRAM_OK;
}

tram_status tram__refine_covariance_scale(const tram_refine_problem *pb, const double *station_w,
                                          const tram_se3 *X, const tram_se3 *Z, double scale2,
                                          double cov[NP * NP], double *condition, double *var_scale,
                                          double cov_scale[NP])
{
    size_t nb = nblocks(pb);
    double *w = tram__malloc((nb ? nb : 1) * sizeof *w);
    if (!w) return TRAM_ENOMEM;
    for (size_t i = 0; i < nb; i++) w[i] = station_w ? station_w[i] : 1.0;
    double H[NPX * NPX], g[NPX];
    tram_status st = normal_equations(pb, w, X, Z, H, g);
    tram__free(w);
    if (st != TRAM_OK) return st;
    return cov_from_normal(pb, H, scale2, cov, condition, var_scale, cov_scale);
}

/* Largest step (in units of its standard deviation) that a warm start
 * may take before Gauss-Newton is not trusted without a line search. */
#define SETTLE_MAX_SIGMAS 100.0

tram_status tram__refine_settle(const tram_refine_problem *pb, const double *station_w,
                                int max_steps, double tol_sigma, tram_se3 *X, tram_se3 *Z,
                                double cov[NP * NP], double *condition, double *var_scale)
{
    if (pb->eval || !station_w) return TRAM_ENUMERIC; /* station problems only */
    int np = nparams(pb);
    for (int it = 0; it < max_steps; it++) {
        double H[NPX * NPX], g[NPX], A[NPX * NPX], dx[NPX] = {0};
        tram_status st = normal_equations(pb, station_w, X, Z, H, g);
        if (st != TRAM_OK) return st;
        memcpy(A, H, sizeof A);
        for (int a = 0; a < np; a++) dx[a] = -g[a];
        if (tram__spd_solve_overwrite(np, A, dx) != TRAM_OK) return TRAM_ENUMERIC;
        /* H dx = -g: dx^T H dx is the step's squared length in sigmas
         * (H^-1 is the covariance of the whitened problem) */
        double q = 0;
        for (int a = 0; a < np; a++) q -= dx[a] * g[a];
        if (!(q <= SETTLE_MAX_SIGMAS * SETTLE_MAX_SIGMAS)) return TRAM_ENUMERIC;
        tram_se3 Xn, Zn;
        double sn = pb->scale ? *pb->scale : 1.0;
        step_apply(pb, X, Z, dx, &Xn, &Zn, &sn);
        if (pb->scale) *pb->scale = sn;
        *X = Xn;
        *Z = Zn;
        if (q < tol_sigma * tol_sigma)
            return cov_from_normal(pb, H, 1.0, cov, condition, var_scale, NULL);
    }
    return TRAM_ENUMERIC;
}

tram_status tram__refine_chi2(const tram_refine_problem *pb, const double *station_w,
                              const tram_se3 *X, const tram_se3 *Z, double *chi2)
{
    double *buf = tram__malloc(maxdim(pb) * sizeof *buf);
    if (!buf) return TRAM_ENOMEM;
    double c = 0;
    for (size_t i = 0; i < nblocks(pb); i++) {
        double w = station_w ? station_w[i] : 1.0;
        if (w > 0) c += w * block_cost(pb, i, X, Z, buf, NULL);
    }
    tram__free(buf);
    *chi2 = c;
    return TRAM_OK;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

tram_status tram__refine_bootstrap(const tram_refine_problem *pb, const double *station_w,
                                   const tram_se3 *X, const tram_se3 *Z, size_t resamples,
                                   unsigned long long seed, tram__progress_fn progress,
                                   void *ctx, double sigma[NP], double lo[NP], double hi[NP],
                                   size_t *used)
{
    size_t nin = 0, nb = nblocks(pb);
    for (size_t i = 0; i < nb; i++)
        if (!station_w || station_w[i] > 0) nin++;
    size_t *in = tram__malloc((nin ? nin : 1) * sizeof *in);
    double *w = tram__malloc((nb ? nb : 1) * sizeof *w);
    double *dev = tram__malloc((resamples ? resamples : 1) * NP * sizeof *dev);
    double *col = tram__malloc((resamples ? resamples : 1) * sizeof *col);
    if (!in || !w || !dev || !col) {
        tram__free(in);
        tram__free(w);
        tram__free(dev);
        tram__free(col);
        return TRAM_ENOMEM;
    }
    start_point sp;
    if (start_point_build(pb, X, Z, &sp) != TRAM_OK) {
        tram__free(in);
        tram__free(w);
        tram__free(dev);
        tram__free(col);
        return TRAM_ENOMEM;
    }
    size_t k = 0;
    for (size_t i = 0; i < nb; i++)
        if (!station_w || station_w[i] > 0) in[k++] = i;
    unsigned long long state = seed;
    size_t good = 0;
    tram_mat3 RX, RZ;
    double tX[3], tZ[3];
    tram_se3_to_rt(X, &RX, tX);
    tram_se3_to_rt(Z, &RZ, tZ);
    for (size_t b = 0; b < resamples; b++) {
        memset(w, 0, nb * sizeof *w);
        size_t distinct = 0;
        for (size_t j = 0; j < nin; j++) {
            size_t pick = in[tram__splitmix64(&state) % nin];
            if (w[pick] == 0) distinct++;
            w[pick] += 1.0;
        }
        if (progress) progress(ctx, "bootstrap", b + 1, resamples);
        if (distinct < 3) continue;
        tram_se3 Xb = *X, Zb = *Z;
        double s0 = pb->scale ? *pb->scale : 1.0;
        tram_status bs = lm(pb, w, 30, &Xb, &Zb, NULL, &sp);
        if (pb->scale) *pb->scale = s0; /* each resample starts from the solution */
        if (bs == TRAM_ENOMEM) { /* not a failed resample: stop, do not under-report */
            start_point_free(&sp);
            tram__free(in);
            tram__free(w);
            tram__free(dev);
            tram__free(col);
            return bs;
        }
        if (bs != TRAM_OK) continue;
        tram_mat3 R, Rt, D;
        double t[3], wv[3];
        double *d = dev + good * NP;
        tram_se3_to_rt(&Xb, &R, t);
        tram_so3_transpose(&RX, &Rt);
        tram_so3_mul(&Rt, &R, &D);
        tram_so3_log(&D, wv);
        for (int a = 0; a < 3; a++) {
            d[a] = wv[a];
            d[3 + a] = t[a] - tX[a];
        }
        tram_se3_to_rt(&Zb, &R, t);
        tram_so3_transpose(&RZ, &Rt);
        tram_so3_mul(&Rt, &R, &D);
        tram_so3_log(&D, wv);
        for (int a = 0; a < 3; a++) {
            d[6 + a] = wv[a];
            d[9 + a] = t[a] - tZ[a];
        }
        good++;
    }
    for (int a = 0; a < NP; a++) {
        double m = 0, v = 0;
        for (size_t b = 0; b < good; b++) m += dev[b * NP + (size_t)a];
        m /= (double)(good ? good : 1);
        for (size_t b = 0; b < good; b++) v += tram__sq(dev[b * NP + (size_t)a] - m);
        sigma[a] = good > 1 ? sqrt(v / (double)(good - 1)) : 0.0;
        for (size_t b = 0; b < good; b++) col[b] = dev[b * NP + (size_t)a];
        qsort(col, good, sizeof *col, cmp_double);
        lo[a] = good ? col[(size_t)(0.025 * (double)(good - 1))] : 0.0;
        hi[a] = good ? col[(size_t)(0.975 * (double)(good - 1) + 0.5)] : 0.0;
    }
    *used = good;
    start_point_free(&sp);
    tram__free(in);
    tram__free(w);
    tram__free(dev);
    tram__free(col);
    return TRAM_OK;
}
