/*
 * register_robust.c - robust point-set registration: RANSAC on minimal
 * samples (Fischler & Bolles, Commun. ACM 24(6), 1981), scored by inlier
 * count when the inlier distance is given, else by the median residual
 * (least median of squares, Rousseeuw, J. Am. Statist. Assoc. 79(388),
 * 1984), then least squares on the inliers.
 *
 * Without a given threshold the inlier distance is 2.5 times Rousseeuw's
 * robust scale of the best sample, s = 1.4826 (1 + 5 / (n - p)) sqrt(med r^2)
 * (Rousseeuw & Leroy, "Robust Regression and Outlier Detection", 1987),
 * here with 3D residual norms, for which the factor makes s the per-point
 * distance scale rather than a per-axis one.  The number of samples adapts
 * to the inlier fraction seen so far for 99.9% confidence (at least 100,
 * at most 20,000).
 */
#include "tram/register.h"
#include "core/tram_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

tram_status tram_register_robust(const double *from, const double *to, const double *weights,
                                 size_t n, const tram_register_options *opt_in, double threshold,
                                 unsigned long long seed, tram_register_progress_fn progress,
                                 void *pctx, tram_register_result *out, int *inlier,
                                 double *used_threshold, tram_error *err)
{
    tram_register_options opt = {TRAM_REGISTER_SVD, 0, 3, 1};
    if (opt_in) opt = *opt_in;
    if (opt.dim != 2) opt.dim = 3;
    const int d = opt.dim;
    const size_t s = d == 3 ? 3 : 2;
    if (n < s + 1)
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "%zu point pair(s): robust registration needs more than %zu", n, s);
    double *res = tram__malloc(2 * n * sizeof *res);
    double *wsel = tram__malloc(n * sizeof *wsel);
    if (!res || !wsel) {
        tram__free(res);
        tram__free(wsel);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    double *sorted = res + n;
    double sx[9], sy[9];
    tram_register_result best, cand;
    memset(&best, 0, sizeof best);
    double best_score = INFINITY;
    size_t best_count = 0;
    size_t iters = 100, it;
    tram_register_options mo = opt;
    mo.threads = 1;
    tram_error e;
    for (it = 0; it < iters && it < 20000; it++) {
        size_t idx[3];
        for (size_t k = 0; k < s; k++) {
            int dup;
            do {
                idx[k] = (size_t)(tram__splitmix64(&seed) % n);
                dup = 0;
                for (size_t l = 0; l < k; l++) dup |= idx[l] == idx[k];
            } while (dup);
            memcpy(sx + (size_t)d * k, from + (size_t)d * idx[k], (size_t)d * sizeof *sx);
            memcpy(sy + (size_t)d * k, to + (size_t)d * idx[k], (size_t)d * sizeof *sy);
        }
        tram_status cs = tram_register_points(sx, sy, NULL, s, &mo, &cand, &e);
        if (cs == TRAM_ENOMEM || cs == TRAM_EINPUT) { /* not a degenerate sample: give up */
            tram__free(res);
            tram__free(wsel);
            if (err) *err = e;
            return cs;
        }
        if (cs != TRAM_OK) continue;
        tram_register_residuals(from, to, n, d, &cand, res);
        double score;
        size_t count = 0;
        if (threshold > 0) {
            for (size_t i = 0; i < n; i++) count += res[i] <= threshold;
            score = -(double)count;
        } else {
            memcpy(sorted, res, n * sizeof *res);
            qsort(sorted, n, sizeof *sorted, cmp_double);
            score = sorted[n / 2];
            for (size_t i = 0; i < n; i++) count += res[i] <= 2.5 * score;
        }
        if (score < best_score) {
            best_score = score;
            best = cand;
            best_count = count;
            double frac = (double)best_count / (double)n;
            double p_all = pow(frac, (double)s);
            if (p_all > 1e-12 && p_all < 1.0) {
                double need = log(1e-3) / log(1.0 - p_all);
                if (need > (double)iters) iters = need < 20000 ? (size_t)need + 1 : 20000;
            } else if (p_all >= 1.0) {
                iters = it + 1 > 100 ? it + 1 : 100;
            }
        }
        if (progress && (it % 100 == 0)) progress(pctx, it, iters);
    }
    if (!isfinite(best_score)) {
        tram__free(res);
        tram__free(wsel);
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "no sample of %zu points determined a transform (degenerate points)", s);
    }
    double thr = threshold;
    if (!(thr > 0)) {
        /* Rousseeuw's robust scale of the least-median sample. */
        tram_register_residuals(from, to, n, d, &best, res);
        memcpy(sorted, res, n * sizeof *res);
        qsort(sorted, n, sizeof *sorted, cmp_double);
        double scale = 1.4826 * (1.0 + 5.0 / (double)(n - s)) * sorted[n / 2];
        thr = 2.5 * scale;
        if (!(thr > 0)) thr = 1e-12;
    }
    tram_status st = TRAM_OK;
    tram_register_result cur = best;
    for (int round = 0; round < 3; round++) {
        tram_register_residuals(from, to, n, d, &cur, res);
        size_t k = 0;
        for (size_t i = 0; i < n; i++) {
            inlier[i] = res[i] <= thr;
            wsel[i] = inlier[i] ? (weights ? weights[i] : 1.0) : 0.0;
            k += (size_t)inlier[i];
        }
        if (k < s) break;
        st = tram_register_points(from, to, wsel, n, &opt, &cur, err);
        if (st != TRAM_OK) break;
    }
    if (st == TRAM_OK) {
        tram_register_residuals(from, to, n, d, &cur, res);
        for (size_t i = 0; i < n; i++) inlier[i] = res[i] <= thr;
        *out = cur;
        *used_threshold = thr;
    }
    if (progress) progress(pctx, iters, iters);
    tram__free(res);
    tram__free(wsel);
    return st;
}
