/*
 * register_trust.c - plausibility of a point-set registration: the
 * absolute gate on the residual RMS and the pairing test.
 *
 * Gate (common practice): a registration of points measured by a working
 * sensor and robot leaves an RMS residual of tenths of a millimetre to a
 * few millimetres; above max_rms plus 1% of the working distance (the
 * larger median distance of the points from their frame's origin - the
 * sensor's range for sensor-measured points) the pairs are not what they
 * claim to be: rows out of order, a unit, or the wrong file.
 *
 * Pairing test: a permutation test (Fisher 1935; Good, "Permutation
 * Tests", 2000).  The 'to' points are paired at random with the 'from'
 * points (derangements: no point keeps its partner, Fisher-Yates with
 * splitmix64 from the seed), each pairing registered by the same method;
 * the file's pairing must fit at least `factor` times better (RMS) than
 * every random one.  Below 5 pairs there are too few distinct pairings to
 * tell, and the test is not run.
 */
#include "tram/register.h"
#include "core/tram_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static double dist_from_origin(const double *p, int dim)
{
    double s = 0;
    for (int k = 0; k < dim; k++) s += p[k] * p[k];
    return sqrt(s);
}

static int cmp_d(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Median distance of n points (dim coordinates each) from the origin. */
static tram_status median_distance(const double *p, size_t n, int dim, double *out)
{
    double *d = tram__malloc((n ? n : 1) * sizeof *d);
    if (!d) return TRAM_ENOMEM;
    for (size_t i = 0; i < n; i++) d[i] = dist_from_origin(p + (size_t)dim * i, dim);
    qsort(d, n, sizeof *d, cmp_d);
    *out = n ? (n % 2 ? d[n / 2] : 0.5 * (d[n / 2 - 1] + d[n / 2])) : 0.0;
    tram__free(d);
    return TRAM_OK;
}

static void derangement(size_t n, unsigned long long *state, size_t *p)
{
    for (;;) {
        for (size_t i = 0; i < n; i++) p[i] = i;
        for (size_t i = n - 1; i > 0; i--) {
            size_t j = (size_t)(tram__splitmix64(state) % (i + 1)), t = p[i];
            p[i] = p[j];
            p[j] = t;
        }
        size_t fixed = 0;
        for (size_t i = 0; i < n; i++) fixed += p[i] == i;
        if (!fixed) return;
    }
}

/* The pairing test on the m pairs kept in (from, to, w). */
static tram_status pairing(const double *from, const double *to, const double *w, size_t m,
                           const tram_register_options *opt, const tram_register_trust_options *t,
                           double rms0, tram_register_trust *out)
{
    int dim = opt && opt->dim == 2 ? 2 : 3;
    size_t *p = tram__malloc(m * sizeof *p);
    double *tp = tram__malloc(m * (size_t)dim * sizeof *tp);
    double *wp = w ? tram__malloc(m * sizeof *wp) : NULL;
    if (!p || !tp || (w && !wp)) {
        tram__free(p);
        tram__free(tp);
        tram__free(wp);
        return TRAM_ENOMEM;
    }
    unsigned long long state = t->seed;
    double best = INFINITY;
    tram_register_options o = opt ? *opt : (tram_register_options){TRAM_REGISTER_SVD, 0, 3, 1};
    o.threads = 1;
    for (size_t k = 0; k < t->permutations; k++) {
        derangement(m, &state, p);
        for (size_t i = 0; i < m; i++) {
            memcpy(tp + (size_t)dim * i, to + (size_t)dim * p[i], (size_t)dim * sizeof *tp);
            if (wp) wp[i] = w[i] * w[p[i]] > 0 ? 0.5 * (w[i] + w[p[i]]) : 0.0;
        }
        tram_register_result r;
        tram_error e;
        /* A pairing that cannot be registered (degenerate) counts as not fitting. */
        if (tram_register_points(from, tp, wp, m, &o, &r, &e) == TRAM_OK && r.rms < best)
            best = r.rms;
        out->permutations++;
    }
    tram__free(p);
    tram__free(tp);
    tram__free(wp);
    double floor = 1e-12 * (out->working_distance > 0 ? out->working_distance : 1.0);
    out->pairing_ratio = best / fmax(rms0, floor);
    out->pairing_failed = !(out->pairing_ratio >= t->factor);
    return TRAM_OK;
}

tram_status tram_register_trust_check(const double *from, const double *to, const double *weights,
                                      size_t n, const tram_register_options *opt,
                                      const tram_register_result *res, const int *inlier,
                                      const tram_register_trust_options *t,
                                      tram_register_trust *out, tram_error *err)
{
    memset(out, 0, sizeof *out);
    int dim = opt && opt->dim == 2 ? 2 : 3;
    /* The pairs the registration used. */
    size_t m = 0;
    for (size_t i = 0; i < n; i++) m += !inlier || inlier[i];
    double *f = tram__malloc((m ? m : 1) * (size_t)dim * sizeof *f);
    double *g = tram__malloc((m ? m : 1) * (size_t)dim * sizeof *g);
    double *w = weights ? tram__malloc((m ? m : 1) * sizeof *w) : NULL;
    if (!f || !g || (weights && !w)) {
        tram__free(f);
        tram__free(g);
        tram__free(w);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        if (inlier && !inlier[i]) continue;
        memcpy(f + (size_t)dim * k, from + (size_t)dim * i, (size_t)dim * sizeof *f);
        memcpy(g + (size_t)dim * k, to + (size_t)dim * i, (size_t)dim * sizeof *g);
        if (w) w[k] = weights[i];
        k++;
    }
    double df = 0, dt = 0;
    tram_status st = median_distance(f, m, dim, &df);
    if (st == TRAM_OK) st = median_distance(g, m, dim, &dt);
    out->rms = res->rms;
    out->working_distance = fmax(df, dt);
    out->limit = t->max_rms + t->max_rms_fraction * out->working_distance;
    out->gate_failed = out->limit > 0 && res->rms > out->limit;
    if (st == TRAM_OK && t->permutations > 0 && m >= 5)
        st = pairing(f, g, w, m, opt, t, res->rms, out);
    tram__free(f);
    tram__free(g);
    tram__free(w);
    if (st != TRAM_OK) return tram__fail(err, st, NULL, 0, 0, "out of memory");
    return TRAM_OK;
}
