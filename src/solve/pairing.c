/*
 * pairing.c - the pairing test: solve again with the robot and sensor rows
 * paired at random, and see whether the file's pairing fits far better.
 *
 * A calibration is only as good as the pairing of each robot pose with
 * the sensor reading taken at it.  When the rows are shifted against each
 * other, sorted differently, or the sensor poses are unrelated to the
 * robot's (noise, the wrong file), the file's pairing fits no better than
 * any other, and no threshold on the residuals is needed to see it: this
 * is a permutation test (Fisher, "The Design of Experiments", 1935; Good,
 * "Permutation Tests", Springer 2000) with the median station residual as
 * its statistic.
 *
 * Decision rule (docs/solve.md): K random derangements (permutations in
 * which no station keeps its own sensor row; drawn by Fisher-Yates
 * shuffles with splitmix64 from the given seed, redrawn while a fixed
 * point remains) are each fitted with the same fit as the file's pairing.
 * The data tell the mount when the smallest median rotation residual and
 * the smallest median translation residual over the K random pairings are
 * both at least `factor` (default 3) times the file's.  With K = 30
 * derangements, a pairing that carries no information passes only if it
 * beats all 30 by that factor, which random data do not do.
 */
#include "solve/pairing_internal.h"
#include "solve/quickfit_internal.h"

#include <math.h>
#include <string.h>

#define MAX_STATIONS 40

/* A random derangement of 0..n-1 (n >= 2) into p. */
static void derangement(size_t n, unsigned long long *state, size_t *p)
{
    for (;;) {
        for (size_t i = 0; i < n; i++) p[i] = i;
        for (size_t i = n - 1; i > 0; i--) {
            size_t j = (size_t)(tram__splitmix64(state) % (i + 1));
            size_t t = p[i];
            p[i] = p[j];
            p[j] = t;
        }
        size_t fixed = 0;
        for (size_t i = 0; i < n; i++) fixed += p[i] == i;
        if (!fixed) return;
    }
}

tram_status tram__pairing_test(size_t n, size_t perms, unsigned long long seed, double factor,
                               double rot_floor, double len_floor, tram__pairing_fit_fn fit,
                               const void *ctx, tram__pairing_result *out)
{
    memset(out, 0, sizeof *out);
    out->ratio_rot = out->ratio_trans = INFINITY;
    if (n < 3 || perms == 0) return TRAM_OK;
    double r0, t0;
    tram_status st = fit(ctx, NULL, n, &r0, &t0);
    if (st == TRAM_ENOMEM) return st;
    if (st != TRAM_OK) {
        out->failed = 1;
        out->ratio_rot = out->ratio_trans = 0;
        return TRAM_OK;
    }
    size_t *p = tram__malloc(n * sizeof *p);
    if (!p) return TRAM_ENOMEM;
    unsigned long long state = seed;
    double best_r = INFINITY, best_t = INFINITY;
    for (size_t k = 0; k < perms; k++) {
        derangement(n, &state, p);
        double rk, tk;
        st = fit(ctx, p, n, &rk, &tk);
        if (st == TRAM_ENOMEM) break;
        st = TRAM_OK;
        if (rk < best_r) best_r = rk;
        if (tk < best_t) best_t = tk;
        out->permutations++;
    }
    tram__free(p);
    if (st != TRAM_OK) return st;
    /* A statistic that is 0 for every pairing (point fits have no
     * rotation residual) says nothing: it passes. */
    out->ratio_rot = (best_r == 0 && r0 == 0) ? INFINITY : best_r / fmax(r0, rot_floor);
    out->ratio_trans = best_t / fmax(t0, len_floor);
    out->failed = !(out->ratio_rot >= factor) || !(out->ratio_trans >= factor);
    return TRAM_OK;
}

typedef struct pose_ctx {
    const tram_se3 *P, *S;
    tram_se3 *Sp; /* scratch: permuted sensor rows */
} pose_ctx;

static tram_status pose_fit(const void *ctx, const size_t *perm, size_t n, double *med_rot,
                            double *med_trans)
{
    const pose_ctx *c = ctx;
    const tram_se3 *S = c->S;
    if (perm) {
        for (size_t i = 0; i < n; i++) c->Sp[i] = c->S[perm[i]];
        S = c->Sp;
    }
    return tram__capped_fit(c->P, S, n, TRAM_QUICKFIT_STEPS, med_rot, med_trans, NULL, NULL);
}

tram_status tram__pairing_test_poses(const tram_se3 *P, const tram_se3 *S, size_t n, size_t perms,
                                     unsigned long long seed, double factor,
                                     tram__pairing_result *out)
{
    size_t m = n < MAX_STATIONS ? n : MAX_STATIONS;
    tram_se3 *buf = tram__malloc(3 * (m ? m : 1) * sizeof *buf);
    if (!buf) return TRAM_ENOMEM;
    /* Stations spread evenly over the file, so shifted blocks stay shifted. */
    for (size_t i = 0; i < m; i++) {
        size_t src = m == n ? i : (size_t)((double)i * (double)n / (double)m);
        buf[i] = P[src];
        buf[m + i] = S[src];
    }
    double lscale = 0;
    for (size_t i = 0; i < m; i++)
        lscale += sqrt(tram__sq(buf[m + i].m[0][3]) + tram__sq(buf[m + i].m[1][3]) +
                       tram__sq(buf[m + i].m[2][3]));
    lscale = m ? lscale / (double)m : 1.0;
    if (!(lscale > 0)) lscale = 1.0;
    pose_ctx c = {buf, buf + m, buf + 2 * m};
    tram_status st = tram__pairing_test(m, perms, seed, factor, 1e-9, 1e-9 * lscale, pose_fit, &c,
                                        out);
    tram__free(buf);
    return st;
}
