/*
 * design.c - D-optimal choice of calibration stations (docs/plan.md,
 * "Method").
 *
 * Information.  A station (P, S) at the estimate (X, Z) contributes J^T J
 * to the information of the 12 parameters of refine.c (w_X, dt_X, w_Z,
 * dt_Z), with J its residual's Jacobian weighted by 1/sigma - the
 * refinement's own (tram__refine_station_jacobian), so that what is
 * planned is what the solve will fit.  The covariance the solve will
 * report for those stations is H^-1 (Gauss-Markov, to first order).
 *
 * Choice.  D-optimality: maximise log det H (Kiefer & Wolfowitz, Canad. J.
 * Math. 12, 1960; Pukelsheim, "Optimal Design of Experiments", Wiley 1993,
 * ch. 9), which is unchanged by the choice of units of the parameters, so
 * translation and rotation are weighed together without a trade-off
 * factor.  Greedy: add the candidate with the largest
 *     log det(H + J^T J) - log det H = log det(I_6 + J H^-1 J^T)
 * (the matrix determinant lemma), then exchange chosen and unchosen
 * candidates while that raises log det (Fedorov, "Theory of Optimal
 * Experiments", 1972).  A weak prior (planning from scratch has no H yet)
 * keeps H positive definite; it is left out of every reported sigma.
 * Cholesky factors and inverses go through LAPACKE (math/linalg.c).
 */
#include "plan/design_internal.h"
#include "solve/refine_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

#define NP 12
#define EXCHANGE_PASSES 4

void tram__plan_jacobian(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X, const tram_se3 *Z,
                         double sigma_length, double sigma_angle, double length_scale, double J[72])
{
    double r[6], Jm[6][NP];
    tram__refine_station_jacobian(P, S, X, Z, 1.0 / sigma_angle, 1.0 / sigma_length,
                                  1e-4 * length_scale, r, Jm);
    for (int i = 0; i < 6; i++)
        for (int p = 0; p < NP; p++) J[i * NP + p] = Jm[i][p];
}

void tram__plan_add_info(double H[144], const double J[72])
{
    for (int a = 0; a < NP; a++)
        for (int b = a; b < NP; b++) {
            double s = 0;
            for (int k = 0; k < 6; k++) s += J[k * NP + a] * J[k * NP + b];
            H[a * NP + b] += s;
            if (b != a) H[b * NP + a] += s;
        }
}

/* log det of the n x n SPD A by Cholesky; -INFINITY when not PD. */
static tram_status logdet_n(int n, const double *A, double *out)
{
    double L[NP * NP], b[NP] = {0};
    memcpy(L, A, (size_t)(n * n) * sizeof *L);
    tram_status st = tram__spd_solve_overwrite(n, L, b);
    if (st == TRAM_ENUMERIC) {
        *out = -INFINITY;
        return TRAM_OK;
    }
    if (st != TRAM_OK) return st;
    double s = 0;
    for (int i = 0; i < n; i++) s += log(L[i * n + i]);
    *out = 2 * s;
    return TRAM_OK;
}

tram_status tram__plan_logdet(const double H[144], double *logdet)
{
    return logdet_n(NP, H, logdet);
}

void tram__plan_sigma(const double H[144], tram_plan_sigma *sg)
{
    memset(sg, 0, sizeof *sg);
    double C[144], ev[NP], V[144];
    /* Singular when the correlation form's smallest eigenvalue is lost in
     * rounding: the data cannot determine every parameter. */
    for (int a = 0; a < NP; a++) {
        if (!(H[a * NP + a] > 0)) return;
        for (int b = 0; b < NP; b++) C[a * NP + b] = H[a * NP + b] / sqrt(H[a * NP + a] * H[b * NP + b]);
    }
    if (tram__symeig(NP, C, ev, V) != TRAM_OK || !(ev[0] > 1e-10 * ev[NP - 1])) return;
    double cov[144];
    if (tram__spd_inverse(NP, H, cov) != TRAM_OK) return;
    double t2 = 0, r2 = 0;
    for (int k = 0; k < 3; k++) {
        sg->rot_axis_deg[k] = sqrt(cov[k * NP + k]) * 180 / TRAM_PI;
        sg->trans_axis[k] = sqrt(cov[(3 + k) * NP + 3 + k]);
        r2 += cov[k * NP + k];
        t2 += cov[(3 + k) * NP + 3 + k];
    }
    sg->trans = sqrt(t2);
    sg->rot_deg = sqrt(r2) * 180 / TRAM_PI;
    sg->valid = 1;
}

/* log det(I_6 + J Hi J^T) for one candidate, Hi = H^-1. */
static tram_status gain_of(const double Hi[144], const double J[72], double *g)
{
    double JH[6 * NP], M[36];
    for (int i = 0; i < 6; i++)
        for (int p = 0; p < NP; p++) {
            double s = 0;
            for (int q = 0; q < NP; q++) s += J[i * NP + q] * Hi[q * NP + p];
            JH[i * NP + p] = s;
        }
    for (int i = 0; i < 6; i++)
        for (int j = i; j < 6; j++) {
            double s = 0;
            for (int p = 0; p < NP; p++) s += JH[i * NP + p] * J[j * NP + p];
            M[i * 6 + j] = M[j * 6 + i] = s + (i == j ? 1.0 : 0.0);
        }
    return logdet_n(6, M, g);
}

/* The best candidate not in `used` to add to H: index into *best (n when
 * none) and its gain. */
static tram_status best_addition(const double H[144], const tram__plan_cand *cand, size_t n,
                                 const unsigned char *used, size_t *best, double *gain)
{
    double Hi[144];
    *best = n;
    *gain = -INFINITY;
    tram_status st = tram__spd_inverse(NP, H, Hi);
    if (st != TRAM_OK) return st;
    for (size_t c = 0; c < n; c++) {
        if (used[c]) continue;
        double g;
        if ((st = gain_of(Hi, cand[c].J, &g)) != TRAM_OK) return st;
        if (g > *gain) {
            *gain = g;
            *best = c;
        }
    }
    return TRAM_OK;
}

static void base_info(const double H0[144], const double prior[12], double H[144])
{
    memcpy(H, H0, 144 * sizeof *H);
    for (int a = 0; a < NP; a++) H[a * NP + a] += prior[a];
}

/* Exchange passes: swap a chosen candidate for a better unchosen one. */
static tram_status exchange_pass(const double H0[144], const double prior[12],
                                 const tram__plan_cand *cand, size_t n, size_t k, size_t *chosen,
                                 unsigned char *used, int *improved)
{
    *improved = 0;
    for (size_t s = 0; s < k; s++) {
        double H[144];
        base_info(H0, prior, H);
        for (size_t j = 0; j < k; j++)
            if (j != s) tram__plan_add_info(H, cand[chosen[j]].J);
        double g_now;
        size_t best;
        double g_best;
        tram_status st;
        double Hi[144];
        if ((st = tram__spd_inverse(NP, H, Hi)) != TRAM_OK) return st;
        if ((st = gain_of(Hi, cand[chosen[s]].J, &g_now)) != TRAM_OK) return st;
        if ((st = best_addition(H, cand, n, used, &best, &g_best)) != TRAM_OK) return st;
        if (best < n && g_best > g_now + 1e-9) {
            used[chosen[s]] = 0;
            used[best] = 1;
            chosen[s] = best;
            *improved = 1;
        }
    }
    return TRAM_OK;
}

tram_status tram__plan_choose(const double H0[144], const double prior[12],
                              const tram__plan_cand *cand, size_t n, size_t k, int exchange,
                              size_t *chosen, double *gain)
{
    unsigned char *used = tram__calloc(n ? n : 1, 1);
    if (!used) return TRAM_ENOMEM;
    double H[144];
    base_info(H0, prior, H);
    tram_status st = TRAM_OK;
    for (size_t s = 0; s < k && st == TRAM_OK; s++) {
        size_t best;
        st = best_addition(H, cand, n, used, &best, &gain[s]);
        if (st != TRAM_OK) break;
        if (best == n) {
            st = TRAM_EUNDETERMINED;
            break;
        }
        used[best] = 1;
        chosen[s] = best;
        tram__plan_add_info(H, cand[best].J);
    }
    for (int pass = 0; exchange && st == TRAM_OK && pass < EXCHANGE_PASSES; pass++) {
        int improved;
        st = exchange_pass(H0, prior, cand, n, k, chosen, used, &improved);
        if (!improved) break;
    }
    /* Each station's worth in the final choice: log det lost without it. */
    for (size_t s = 0; s < k && st == TRAM_OK; s++) {
        double Hs[144], Hi[144];
        base_info(H0, prior, Hs);
        for (size_t j = 0; j < k; j++)
            if (j != s) tram__plan_add_info(Hs, cand[chosen[j]].J);
        if ((st = tram__spd_inverse(NP, Hs, Hi)) == TRAM_OK) st = gain_of(Hi, cand[chosen[s]].J, &gain[s]);
    }
    tram__free(used);
    return st;
}
