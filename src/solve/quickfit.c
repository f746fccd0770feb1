/*
 * quickfit.c - the capped quick fit of P_i X S_i = Z (tram/handeye.h) that
 * scores a reading of the data.
 *
 * Start: Park & Martin's closed form (IEEE T-RA 10(5), 1994) on 2n station
 * pairs, which needs no initial guess.  Then a few Gauss-Newton steps (Marquardt's damping,
 * SIAM J. Appl. Math. 11(2), 1963, kept small) on the same whitened
 * station residual as the full refinement (refine.c), each station
 * weighted by Cauchy's loss, w_i = 1 / (1 + (u_i / c)^2), u_i^2 = |r_i|^2
 * / 6, c = 2.3849 (Holland & Welsch, Commun. Statist. A6(9), 1977), with
 * the noise from the medians of the closed form's residuals, and the
 * Jacobian in closed form (refine.c's, the SO(3) Jacobians).
 * A reading
 * that does not fit cannot be made to fit by more iterations, so the
 * cost of a wrong reading is bounded by the cap instead of by the full
 * refinement's iteration limits.
 */
#include "solve/quickfit_internal.h"
#include "solve/refine_internal.h"
#include "solve/pipeline_internal.h"
#include "math/linalg_internal.h"
#include "math/stats_internal.h"
#include "tram/handeye.h"

#include <math.h>
#include <string.h>

#define CAUCHY_C 2.3849

/* Cauchy-weighted cost and, when H != NULL, the normal equations. */
static double weighted_system(const tram_se3 *P, const tram_se3 *S, size_t n, const tram_se3 *X,
                              const tram_se3 *Z, double inv_sa, double inv_sl, double H[144],
                              double g[12])
{
    double cost = 0;
    if (H) {
        memset(H, 0, 144 * sizeof *H);
        memset(g, 0, 12 * sizeof *g);
    }
    for (size_t i = 0; i < n; i++) {
        double r[6], J[6][12];
        if (H) {
            tram__refine_station_jacobian(&P[i], &S[i], X, Z, inv_sa, inv_sl, 0.0, r, J);
        } else {
            tram__refine_residual(&P[i], &S[i], X, Z, r);
            for (int k = 0; k < 3; k++) {
                r[k] *= inv_sa;
                r[3 + k] *= inv_sl;
            }
        }
        double rr = 0;
        for (int k = 0; k < 6; k++) rr += r[k] * r[k];
        double c2 = CAUCHY_C * CAUCHY_C;
        cost += c2 * log1p(rr / 6.0 / c2);
        if (!H) continue;
        double w = 1.0 / (1.0 + rr / 6.0 / c2);
        for (int a = 0; a < 12; a++) {
            double ga = 0;
            for (int k = 0; k < 6; k++) ga += J[k][a] * r[k];
            g[a] += w * ga;
            for (int b = a; b < 12; b++) {
                double h = 0;
                for (int k = 0; k < 6; k++) h += J[k][a] * J[k][b];
                H[a * 12 + b] += w * h;
            }
        }
    }
    if (H)
        for (int a = 0; a < 12; a++)
            for (int b = 0; b < a; b++) H[a * 12 + b] = H[b * 12 + a];
    return cost;
}

/* At most max_steps damped Gauss-Newton steps from (X, Z). */
static void capped_steps(const tram_se3 *P, const tram_se3 *S, size_t n, double inv_sa,
                         double inv_sl, int max_steps, tram_se3 *X, tram_se3 *Z)
{
    double H[144], g[12], lambda = 1e-4;
    double cost = weighted_system(P, S, n, X, Z, inv_sa, inv_sl, H, g);
    for (int it = 0; it < max_steps; it++) {
        int accepted = 0;
        double cn = cost;
        for (int tries = 0; tries < 4 && !accepted; tries++) {
            double A[144], mg[12], dx[12];
            memcpy(A, H, sizeof A);
            for (int a = 0; a < 12; a++) {
                A[a * 12 + a] += lambda * (H[a * 12 + a] > 1e-300 ? H[a * 12 + a] : 1e-300);
                mg[a] = -g[a];
            }
            if (tram__spd_solve(12, A, mg, dx) != TRAM_OK) {
                lambda *= 100;
                continue;
            }
            tram_se3 Xn, Zn;
            tram__refine_apply(X, Z, dx, &Xn, &Zn);
            cn = weighted_system(P, S, n, &Xn, &Zn, inv_sa, inv_sl, NULL, NULL);
            if (cn <= cost) {
                *X = Xn;
                *Z = Zn;
                accepted = 1;
            } else {
                lambda *= 100;
            }
        }
        if (!accepted) break;
        int small = cost - cn < 1e-3 * cost;
        cost = cn;
        if (small || it + 1 == max_steps) break;
        cost = weighted_system(P, S, n, X, Z, inv_sa, inv_sl, H, g);
    }
}

tram_status tram__capped_fit(const tram_se3 *P, const tram_se3 *S, size_t n, int max_steps,
                             double *med_rot, double *med_trans, tram_se3 *Xo, tram_se3 *Zo)
{
    /* Each station with the next and with the one half the file away: 2n
     * pairs carry the motion's information at a fraction of all pairs' cost. */
    if (n < 3) return TRAM_EUNDETERMINED;
    tram_pair *pairs = tram__malloc(2 * n * sizeof *pairs);
    if (!pairs) return TRAM_ENOMEM;
    size_t np = 0;
    for (size_t i = 0; i < n; i++) {
        pairs[np].i = i;
        pairs[np++].j = (i + 1) % n;
        size_t j = (i + n / 2) % n;
        if (n > 3 && j != i && (j + 1) % n != i) {
            pairs[np].i = i;
            pairs[np++].j = j;
        }
    }
    tram_se3 X, Z;
    tram_error e;
    tram_status st =
        tram_handeye_closed_form(TRAM_METHOD_PARK_MARTIN, P, S, n, pairs, np, &X, &Z, &e);
    tram__free(pairs);
    if (st != TRAM_OK) return st;
    double *rot = tram__malloc(2 * (n ? n : 1) * sizeof *rot);
    if (!rot) return TRAM_ENOMEM;
    double *tr = rot + n;
    tram_handeye_residuals(P, S, n, &X, &Z, rot, tr);
    double sa = tram__robust_sigma3(rot, n), sl = tram__robust_sigma3(tr, n);
    tram__floor_noise(&sa, &sl, tram__length_scale(P, S, n));
    capped_steps(P, S, n, 1.0 / sa, 1.0 / sl, max_steps, &X, &Z);
    tram_handeye_residuals(P, S, n, &X, &Z, rot, tr);
    *med_rot = tram__median(rot, n);
    *med_trans = tram__median(tr, n);
    if (Xo) *Xo = X;
    if (Zo) *Zo = Z;
    tram__free(rot);
    return TRAM_OK;
}
