/*
 * saddle.c - chessboard corner candidates and their sub-pixel positions.
 *
 * Candidates: local maxima of the ChESS response (Bennett and Lasenby,
 * "ChESS - Quick and robust detection of chess-board features", Computer
 * Vision and Image Understanding 118, 2014; src/image/chess.c) on a lightly
 * smoothed image (binomial 1-4-6-4-1, sigma 1) reduced by 2x2 box averages
 * until the smallest square looked for is under 24 working pixels, so that
 * the ring (radius 0.4 of that square, 3 to 9 pixels) stays inside the
 * four squares around a corner.
 *
 * Candidates are local maxima of R above a threshold (a fixed floor and a
 * fraction of the strongest response); each keeps only if a finer ring of
 * 32 samples crosses its mean exactly four times (with hysteresis against
 * noise), the crossings being pairwise near-opposite: the two edge lines
 * through a corner are straight, whatever the perspective.
 *
 * Sub-pixel refinement: Forstner and Gulch ("A fast operator for detection
 * and precise location of distinct points, corners and centres of circular
 * features", ISPRS Intercommission Workshop, Interlaken 1987).  Every
 * pixel x near the corner p lies on an edge line through p, where its
 * gradient g(x) is orthogonal to p - x, or in a flat region, where g = 0;
 * so p minimises sum w(x) (g(x) . (p - x))^2:
 *     (sum w g g^T) p = sum w g g^T x,
 * solved again with the window centred on each new p until p stops
 * moving.  The window weight w = (1 - d^2/R^2)^2 is symmetric about p, so
 * the fixed point is the centre of the locally point-symmetric pattern.
 */
#include "image/saddle_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "core/tram_internal.h"
#include "math/linalg_internal.h"

#define RING_FINE 32
#define MAX_CANDIDATES 40000

static double sample_level_px(const tram__level *lv, double x, double y)
{
    double mx = (double)(lv->w - 1), my = (double)(lv->h - 1);
    if (x < 0) x = 0;
    if (y < 0) y = 0;
    if (x > mx) x = mx;
    if (y > my) y = my;
    size_t x0 = (size_t)x, y0 = (size_t)y;
    if (x0 + 1 >= lv->w) x0 = lv->w >= 2 ? lv->w - 2 : 0;
    if (y0 + 1 >= lv->h) y0 = lv->h >= 2 ? lv->h - 2 : 0;
    double fx = x - (double)x0, fy = y - (double)y0;
    size_t x1 = x0 + 1 < lv->w ? x0 + 1 : x0, y1 = y0 + 1 < lv->h ? y0 + 1 : y0;
    const float *a = lv->px + y0 * lv->w, *b = lv->px + y1 * lv->w;
    double top = a[x0] + fx * (a[x1] - a[x0]);
    double bot = b[x0] + fx * (b[x1] - b[x0]);
    return top + fy * (bot - top);
}

double tram__level_sample(const tram__level *lv, double u, double v)
{
    double off = 0.5 * (lv->scale - 1.0);
    return sample_level_px(lv, (u - off) / lv->scale, (v - off) / lv->scale);
}

/* ---- candidates ---------------------------------------------------------- */

static double wrap2pi(double a)
{
    a = fmod(a, 2.0 * TRAM_PI);
    return a < 0 ? a + 2.0 * TRAM_PI : a;
}

/* Angle between two directions, in [0, pi]. */
static double ang_dist(double a, double b)
{
    double d = fabs(wrap2pi(a - b));
    return d > TRAM_PI ? 2.0 * TRAM_PI - d : d;
}

/* The ring of 32 samples at radius rho (working pixels) around (x, y):
 * four crossings of the mean with hysteresis, pairwise near-opposite. */
static int ring_analyse(const tram__level *lv, double x, double y, const double ring[RING_FINE][2],
                        tram__saddle *s)
{
    double val[RING_FINE], mean = 0.0, lo = 1e30, hi = -1e30;
    int cls[RING_FINE];
    for (int k = 0; k < RING_FINE; k++) {
        val[k] = sample_level_px(lv, x + ring[k][0], y + ring[k][1]);
        mean += val[k];
        if (val[k] < lo) lo = val[k];
        if (val[k] > hi) hi = val[k];
    }
    mean /= RING_FINE;
    if (hi - lo < 8.0) return 0;
    double hyst = 0.12 * (hi - lo);
    for (int k = 0; k < RING_FINE; k++)
        cls[k] = val[k] > mean + hyst ? 1 : val[k] < mean - hyst ? -1 : 0;
    int start = -1;
    for (int k = 0; k < RING_FINE; k++)
        if (cls[k] != 0) {
            start = k;
            break;
        }
    if (start < 0) return 0;
    /* walk once around from a decided sample; a crossing is where the
     * decided class changes, placed where the samples pass the mean */
    int ncross = 0, prev = start;
    double cr[4];
    int crcls[4];
    for (int step = 1; step <= RING_FINE; step++) {
        int k = (start + step) % RING_FINE;
        if (cls[k] == 0) continue;
        if (cls[k] != cls[prev]) {
            if (ncross == 4) return 0;
            /* the last sample pair in prev..k straddling the mean */
            double pos = prev + 0.5 * (double)(((k - prev) + RING_FINE) % RING_FINE);
            for (int i = prev; i != k; i = (i + 1) % RING_FINE) {
                int j = (i + 1) % RING_FINE;
                if ((val[i] - mean) * (val[j] - mean) <= 0.0 && val[i] != val[j]) {
                    double t = (mean - val[i]) / (val[j] - val[i]);
                    pos = i + t;
                    break;
                }
            }
            cr[ncross] = wrap2pi(2.0 * TRAM_PI * pos / RING_FINE);
            crcls[ncross] = cls[k];   /* class of the sector after it */
            ncross++;
        }
        prev = k;
    }
    if (ncross != 4) return 0;
    /* sort the crossings by angle, keeping the class of the following sector */
    for (int i = 1; i < 4; i++)
        for (int j = i; j > 0 && cr[j] < cr[j - 1]; j--) {
            double t = cr[j];
            cr[j] = cr[j - 1];
            cr[j - 1] = t;
            int c = crcls[j];
            crcls[j] = crcls[j - 1];
            crcls[j - 1] = c;
        }
    const double tol = 25.0 * TRAM_PI / 180.0;
    if (ang_dist(cr[0] + TRAM_PI, cr[2]) > tol || ang_dist(cr[1] + TRAM_PI, cr[3]) > tol) return 0;
    for (int i = 0; i < 4; i++)
        if (ang_dist(cr[i], cr[(i + 1) % 4]) < 15.0 * TRAM_PI / 180.0) return 0;
    double dark = 0, bright = 0;
    int nd = 0, nb = 0;
    for (int k = 0; k < RING_FINE; k++) {
        if (cls[k] < 0) { dark += val[k]; nd++; }
        if (cls[k] > 0) { bright += val[k]; nb++; }
    }
    if (!nd || !nb) return 0;
    for (int i = 0; i < 4; i++) s->cross[i] = cr[i];
    s->dark0 = crcls[0] < 0;
    s->contrast = 0.5 * (bright / nb - dark / nd);
    return 1;
}

int tram__saddle_sector(const tram__saddle *s, double ang)
{
    ang = wrap2pi(ang);
    for (int k = 0; k < 3; k++)
        if (ang >= s->cross[k] && ang < s->cross[k + 1]) return k;
    return 3;
}

tram_status tram__saddles_find(const tram_grey_image *im, double min_square_px, int threads,
                               tram__saddles *out)
{
    memset(out, 0, sizeof *out);
    tram_status st = tram__chess_level(im, min_square_px, threads, &out->level);
    if (st != TRAM_OK) return st;
    const tram__level *lv = &out->level;
    double sq = min_square_px / lv->scale;
    long rr = lround(0.4 * sq);
    size_t r = (size_t)(rr < 3 ? 3 : rr > 9 ? 9 : rr);
    out->ring_px = (double)r * lv->scale;
    /* the floor: a corner of contrast ~10 grey levels; and 5% of the strongest */
    tram__peak *pk = NULL;
    size_t npk = 0;
    st = tram__chess_peaks(lv, r, r / 2, 40.0f, 0.05f, threads, &pk, &npk);
    if (st != TRAM_OK) {
        tram__saddles_free(out);
        return st;
    }
    out->nmax = npk;
    if (npk > MAX_CANDIDATES) npk = MAX_CANDIDATES;
    out->s = tram__malloc((npk ? npk : 1) * sizeof *out->s);
    if (!out->s) {
        tram__free(pk);
        tram__saddles_free(out);
        return TRAM_ENOMEM;
    }
    double off = 0.5 * (lv->scale - 1.0), ring[RING_FINE][2];
    for (int k = 0; k < RING_FINE; k++) {
        double a = 2.0 * TRAM_PI * k / RING_FINE;
        ring[k][0] = (double)r * cos(a);
        ring[k][1] = (double)r * sin(a);
    }
    for (size_t i = 0; i < npk; i++) {
        tram__saddle s;
        if (!ring_analyse(lv, pk[i].x, pk[i].y, ring, &s)) continue;
        s.u = pk[i].x * lv->scale + off;
        s.v = pk[i].y * lv->scale + off;
        s.response = pk[i].resp;
        out->s[out->n++] = s;
    }
    tram__free(pk);
    return TRAM_OK;
}

void tram__saddles_free(tram__saddles *s)
{
    if (!s) return;
    tram__free(s->level.px);
    tram__free(s->s);
    memset(s, 0, sizeof *s);
}

/* ---- sub-pixel refinement -------------------------------------------------- */

static double pix(const tram_grey_image *im, long x, long y)
{
    return im->pixels[(size_t)y * im->width + (size_t)x];
}

int tram__corner_refine(const tram_grey_image *im, double radius_px, double uv[2])
{
    const long W = (long)im->width, H = (long)im->height;
    double R = radius_px, R2 = R * R;
    double p[2] = {uv[0], uv[1]};
    for (int it = 0; it < 20; it++) {
        long x0 = (long)floor(p[0] - R), x1 = (long)ceil(p[0] + R);
        long y0 = (long)floor(p[1] - R), y1 = (long)ceil(p[1] + R);
        if (x0 < 2 || y0 < 2 || x1 > W - 3 || y1 > H - 3) return 0;
        double A[4] = {0, 0, 0, 0}, b[2] = {0, 0};
        for (long y = y0; y <= y1; y++)
            for (long x = x0; x <= x1; x++) {
                double dx = (double)x - p[0], dy = (double)y - p[1], d2 = dx * dx + dy * dy;
                if (d2 >= R2) continue;
                double w = tram__sq(1.0 - d2 / R2);
                /* Sobel-like: central difference, smoothed 1-2-1 across */
                double gx = (pix(im, x + 1, y - 1) + 2.0 * pix(im, x + 1, y) + pix(im, x + 1, y + 1) -
                             pix(im, x - 1, y - 1) - 2.0 * pix(im, x - 1, y) - pix(im, x - 1, y + 1)) * 0.125;
                double gy = (pix(im, x - 1, y + 1) + 2.0 * pix(im, x, y + 1) + pix(im, x + 1, y + 1) -
                             pix(im, x - 1, y - 1) - 2.0 * pix(im, x, y - 1) - pix(im, x + 1, y - 1)) * 0.125;
                double gxx = w * gx * gx, gxy = w * gx * gy, gyy = w * gy * gy;
                A[0] += gxx;
                A[1] += gxy;
                A[3] += gyy;
                b[0] += gxx * (double)x + gxy * (double)y;
                b[1] += gxy * (double)x + gyy * (double)y;
            }
        A[2] = A[1];
        double q[2];
        /* edges meeting at a very sharp angle leave p badly determined along
         * their bisector: refuse eigenvalue ratios under about 1:50 */
        if (A[0] * A[3] - A[1] * A[1] <= 0.02 * (A[0] + A[3]) * (A[0] + A[3])) return 0;
        if (tram__spd_solve(2, A, b, q) != TRAM_OK) return 0;
        double step = hypot(q[0] - p[0], q[1] - p[1]);
        p[0] = q[0];
        p[1] = q[1];
        if (hypot(p[0] - uv[0], p[1] - uv[1]) > 0.5 * R) return 0;
        if (step < 1e-4) break;
    }
    uv[0] = p[0];
    uv[1] = p[1];
    return 1;
}

/* ---- edge blur ---------------------------------------------------------------- */

static double sample_image(const tram_grey_image *im, double x, double y)
{
    tram__level lv = {im->width, im->height, im->pixels, 1.0};
    return sample_level_px(&lv, x, y);
}

double tram__edge_blur(const tram_grey_image *im, const double a[2], const double b[2])
{
    double dx = b[0] - a[0], dy = b[1] - a[1], len = hypot(dx, dy);
    if (len < 4.0) return -1.0;
    double nx = -dy / len, ny = dx / len, mx = 0.5 * (a[0] + b[0]), my = 0.5 * (a[1] + b[1]);
    double T = 0.3 * len < 8.0 ? 0.3 * len : 8.0, h = 0.25;
    int n = (int)(T / h);
    double prof[2 * 32 + 3];
    for (int i = -n - 1; i <= n + 1; i++)
        prof[i + n + 1] = sample_image(im, mx + i * h * nx, my + i * h * ny);
    double sgn = prof[2 * n + 2] > prof[0] ? 1.0 : -1.0;
    double D[2 * 32 + 1], dmax = 0;
    int imax = 0;
    for (int i = -n; i <= n; i++) {
        D[i + n] = sgn * (prof[i + n + 2] - prof[i + n]) / (2.0 * h);
        if (D[i + n] > dmax) {
            dmax = D[i + n];
            imax = i;
        }
    }
    /* the moments of the derivative's main peak only: the run around its
     * maximum above a tenth of it (noise in the tails would dominate) */
    int lo = imax, hi = imax;
    while (lo > -n && D[lo - 1 + n] > 0.1 * dmax) lo--;
    while (hi < n && D[hi + 1 + n] > 0.1 * dmax) hi++;
    double s0 = 0, s1 = 0, s2 = 0;
    for (int i = lo; i <= hi; i++) {
        double d = D[i + n], t = i * h;
        s0 += d;
        s1 += d * t;
        s2 += d * t * t;
    }
    if (s0 <= 0) return -1.0;
    double m = s1 / s0, var = s2 / s0 - m * m;
    return var > 0 ? sqrt(var) : 0.0;
}
