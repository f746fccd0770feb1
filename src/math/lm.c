/*
 * lm.c - dense Levenberg-Marquardt over a caller-owned manifold state.
 *
 * Marquardt (SIAM J. Appl. Math. 11(2), 1963): the step solves
 * (J^T J + lambda diag(J^T J)) dx = -J^T r; a step that lowers the cost is
 * taken and lambda divided by 10, a step that does not is refused and
 * lambda multiplied by 10.  The normal equations go through LAPACKE
 * (tram__spd_solve_overwrite, dposv).  Stops when the relative decrease of the cost
 * falls below 1e-15, the step below 1e-14 (parameter units), or no damping
 * gives a descent.
 */
#include "math/lm_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

#define NPMAX TRAM__LM_MAX_PARAMS

static double sumsq(const double *r, size_t n)
{
    double s = 0;
    for (size_t i = 0; i < n; i++) s += r[i] * r[i];
    return s;
}

static void normal_from(const tram__lm_problem *pb, const double *r, const double *J, double *JtJ,
                        double *Jtr)
{
    int np = pb->np;
    memset(JtJ, 0, (size_t)(np * np) * sizeof *JtJ);
    memset(Jtr, 0, (size_t)np * sizeof *Jtr);
    for (size_t k = 0; k < pb->nr; k++) {
        const double *row = J + k * (size_t)np;
        for (int a = 0; a < np; a++) {
            if (row[a] == 0.0) continue;
            Jtr[a] += row[a] * r[k];
            for (int b = a; b < np; b++) JtJ[a * np + b] += row[a] * row[b];
        }
    }
    for (int a = 0; a < np; a++)
        for (int b = 0; b < a; b++) JtJ[a * np + b] = JtJ[b * np + a];
}

tram_status tram__lm_normal(const tram__lm_problem *pb, double *JtJ, double *Jtr, double *r2)
{
    size_t nr = pb->nr ? pb->nr : 1;
    double *r = tram__malloc(nr * sizeof *r), *J = tram__malloc(nr * (size_t)pb->np * sizeof *J);
    tram_status st = TRAM_OK;
    if (!r || !J) st = TRAM_ENOMEM;
    else if (pb->eval(pb->ctx, NULL, r, J) != 0) st = TRAM_EUNDETERMINED;
    else {
        normal_from(pb, r, J, JtJ, Jtr);
        if (r2) *r2 = sumsq(r, pb->nr);
    }
    tram__free(r);
    tram__free(J);
    return st;
}

tram_status tram__lm_run(const tram__lm_problem *pb, int max_iter, tram__lm_info *info)
{
    int np = pb->np;
    if (np <= 0 || np > NPMAX) return TRAM_EINPUT;
    size_t nr = pb->nr ? pb->nr : 1;
    double *r = tram__malloc(nr * sizeof *r), *rt = tram__malloc(nr * sizeof *rt);
    double *J = tram__malloc(nr * (size_t)np * sizeof *J);
    tram_status st = TRAM_OK;
    int it = 0;
    double cost = NAN;
    if (!r || !rt || !J) {
        st = TRAM_ENOMEM;
        goto out;
    }
    if (pb->eval(pb->ctx, NULL, r, J) != 0) {
        st = TRAM_EUNDETERMINED;
        goto out;
    }
    cost = sumsq(r, pb->nr);
    double lambda = 1e-3, H[NPMAX * NPMAX], g[NPMAX];
    normal_from(pb, r, J, H, g);
    for (it = 0; it < max_iter; it++) {
        int accepted = 0, done = 0;
        for (int tries = 0; tries < 14 && !accepted; tries++) {
            double A[NPMAX * NPMAX], dx[NPMAX] = {0};
            memcpy(A, H, (size_t)(np * np) * sizeof *A);
            for (int a = 0; a < np; a++) {
                double d = H[a * np + a];
                A[a * np + a] += lambda * (d > 1e-300 ? d : 1e-300);
                dx[a] = -g[a];
            }
            if (tram__spd_solve_overwrite(np, A, dx) != TRAM_OK) {
                lambda *= 10;
                continue;
            }
            if (pb->eval(pb->ctx, dx, rt, NULL) != 0) {
                lambda *= 10;
                continue;
            }
            double cn = sumsq(rt, pb->nr);
            if (!(cn <= cost)) {
                lambda *= 10;
                continue;
            }
            double rel = (cost - cn) / (cost > 1e-300 ? cost : 1e-300), step = 0;
            for (int a = 0; a < np; a++) step += dx[a] * dx[a];
            pb->commit(pb->ctx, dx);
            cost = cn;
            accepted = 1;
            lambda = lambda / 10 > 1e-12 ? lambda / 10 : 1e-12;
            if (rel < 1e-15 || step < 1e-28 || cost < 1e-30) done = 1;
        }
        if (!accepted) break;
        if (pb->eval(pb->ctx, NULL, r, J) != 0) {
            st = TRAM_EUNDETERMINED;
            break;
        }
        cost = sumsq(r, pb->nr);
        normal_from(pb, r, J, H, g);
        if (done) {
            it++;
            break;
        }
    }
out:
    if (info) {
        info->iterations = it;
        info->cost = cost;
    }
    tram__free(r);
    tram__free(rt);
    tram__free(J);
    return st;
}
