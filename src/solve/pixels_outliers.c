/*
 * pixels_outliers.c - the outlier rules of the solve from pixels
 * (pixels_solve.c): the robust sigma of the corners' reprojection
 * distances, the corner rule and the pixel side of the station test.
 *
 *  - Robust sigma: the median distance over sqrt(2 ln 2) = 1.1774, the
 *    median distance of a 2D normal with unit sigma per coordinate.
 *  - Corners: flagged beyond sqrt(-2 ln(0.01 / n)) sigmas, a 1% family-wise
 *    rate by Bonferroni's bound, each in the larger of its station's and
 *    the pooled robust sigma.
 *  - Stations: the nested-model F test of a station's pixels at the joint
 *    solution against its own pose fit, F(6, 2k - 6) at 1 - 0.01 / n (the
 *    F test of a linear hypothesis, e.g. Seber & Lee, "Linear Regression
 *    Analysis", 2nd ed. 2003, ch. 4, from memory), for the stations that
 *    the pose path's leave-one-out test flagged.
 */
#include "solve/pixels_outliers_internal.h"
#include "core/tram_internal.h"
#include "math/stats_internal.h"

#include <math.h>

#define MEDIAN_2D 1.17741   /* sqrt(2 ln 2) */

double tram__pixel_robust_sigma(const double *res, const int *excl, size_t n, double *scratch)
{
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        if (!excl[i] && isfinite(res[i])) scratch[k++] = res[i];
    double s = tram__median(scratch, k) / MEDIAN_2D;
    return s > 1e-9 ? s : 1e-9;
}

/* A corner is flagged when its distance exceeds sqrt(-2 ln(0.01 / n))
 * sigmas: the distance of a 2D normal with unit sigma per coordinate
 * exceeds k with probability exp(-k^2 / 2), so by Bonferroni's bound a
 * clean set of n corners has any flag in 1% of cases (the family-wise rate
 * of the pose path's station test). */
static double corner_k(size_t n)
{
    return sqrt(-2.0 * log(0.01 / (double)(n ? n : 1)));
}

/* The corner flags after the robust rounds.  Each corner is measured in
 * the larger of its own station's robust sigma and the pooled one: a
 * detector does not find corners equally well in every view (blur, tilt,
 * distance: on the demo's clean renders the stations' corner noise ranges
 * from 0.009 to 0.02 px), and a pooled sigma alone would flag the good
 * corners of the noisier views; the pooled floor keeps a quiet station's
 * 54-corner median from flagging its ordinary corners. */
void tram__pixel_flag_corners(const double *res, const size_t *ost, size_t n, size_t nst, int *excl,
                              double *scratch)
{
    size_t tested = 0;
    double pooled = tram__pixel_robust_sigma(res, excl, n, scratch);
    for (size_t o = 0; o < n; o++) tested += !excl[o];
    double k = corner_k(tested);
    for (size_t i = 0; i < nst; i++) {
        size_t m = 0;
        for (size_t o = 0; o < n; o++)
            if (!excl[o] && ost[o] == i && isfinite(res[o])) scratch[m++] = res[o];
        double sig = m ? fmax(tram__median(scratch, m) / MEDIAN_2D, pooled) : pooled;
        for (size_t o = 0; o < n; o++)
            if (!excl[o] && ost[o] == i && !(res[o] <= k * sig)) excl[o] = 2;
    }
}

/* The pixel side of the station test, for the stations the pose path
 * flagged: station i's k corners against the robust solution (sum of
 * squared distances S) and against its own pose fit (tram pose, S0 with
 * 2k - 6 degrees of freedom).  Its own 6 pose parameters buy F = ((S - S0)
 * / 6) / (S0 / (2k - 6)), tested against F(6, 2k - 6) at 1 - 0.01 / n (the
 * nested-model F test; each station in the units of its own corner noise,
 * so a view whose corners are merely noisier is not flagged).  The robust
 * solution includes the station: a clean one is then tested in sample (the
 * conservative side), while Cauchy's loss gives the corners of a real
 * outlier almost no weight, so its S is nearly its leave-one-out
 * prediction.  A flagged station that passes gets 0 in st_excl, one that
 * fails has its corners left out (3); returns how many fail. */
size_t tram__pixel_station_test(const double *res, const size_t *ost, size_t n, size_t nst,
                                const double *pose_rms, int *st_excl, int *excl)
{
    size_t out = 0;
    for (size_t i = 0; i < nst; i++) {
        if (!st_excl[i]) continue;
        double S = 0, k = 0;
        for (size_t o = 0; o < n; o++)
            if (ost[o] == i) {
                S += tram__sq(res[o]);
                k += 1;
            }
        double S0 = k * tram__sq(pose_rms[i]), nu = 2.0 * k - 6.0;
        int fails = 1; /* without a usable own fit, the pose path's flag stands */
        if (nu > 0 && S0 > 0 && isfinite(S))
            fails = ((S - S0) / 6.0) / (S0 / nu) > tram__f_quantile(1.0 - 0.01 / (double)nst, 6.0, nu);
        st_excl[i] = fails;
        out += (size_t)fails;
        for (size_t o = 0; fails && o < n; o++)
            if (ost[o] == i) excl[o] = 3;
    }
    return out;
}
