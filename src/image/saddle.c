/*
 * saddle.c - chessboard corner candidates and their sub-pixel positions.
 *
 * Response: ChESS (Bennett and Lasenby, "ChESS - Quick and robust detection
 * of chess-board features", Computer Vision and Image Understanding 118,
 * 2014).  Sixteen samples I_0..I_15 on a ring of radius r around a pixel
 * give
 *     sum response   SR = sum_{n=0..3} |(I_n + I_{n+8}) - (I_{n+4} + I_{n+12})|
 *     diff response  DR = sum_{n=0..7} |I_n - I_{n+8}|
 *     mean response  MR = |mean of the ring - mean of the 5-pixel cross at the centre|
 *     R = SR - DR - 16 MR,
 * large at a chessboard corner (opposite sectors alike, neighbouring
 * sectors different), negative on edges and near zero on flat ground.  It
 * is computed on a lightly smoothed image (binomial 1-4-6-4-1, sigma 1)
 * reduced by 2x2 box averages until the smallest square looked for is
 * under 24 working pixels, so that the ring (radius 0.4 of that square,
 * 3 to 9 pixels) stays inside the four squares around a corner.
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
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "core/tram_internal.h"
#include "math/linalg_internal.h"

#define RING_FINE 32
#define MAX_CANDIDATES 40000

/* ---- working image ------------------------------------------------------ */

/* 2x2 box average (the last odd row or column is dropped). */
static float *halve(const float *src, size_t w, size_t h, size_t *ow, size_t *oh)
{
    size_t w2 = w / 2, h2 = h / 2;
    float *dst = tram__malloc(w2 * h2 * sizeof *dst);
    if (!dst) return NULL;
    for (size_t y = 0; y < h2; y++) {
        const float *a = src + 2 * y * w, *b = a + w;
        float *o = dst + y * w2;
        for (size_t x = 0; x < w2; x++)
            o[x] = 0.25f * (a[2 * x] + a[2 * x + 1] + b[2 * x] + b[2 * x + 1]);
    }
    *ow = w2;
    *oh = h2;
    return dst;
}

/* Binomial 1-4-6-4-1 / 16 in both directions, edges clamped. */
static void smooth5(const float *src, float *tmp, float *dst, size_t w, size_t h)
{
    for (size_t y = 0; y < h; y++) {
        const float *s = src + y * w;
        float *t = tmp + y * w;
        for (size_t x = 0; x < w; x++) {
            size_t xm2 = x >= 2 ? x - 2 : 0, xm1 = x >= 1 ? x - 1 : 0;
            size_t xp1 = x + 1 < w ? x + 1 : w - 1, xp2 = x + 2 < w ? x + 2 : w - 1;
            t[x] = (s[xm2] + s[xp2] + 4.0f * (s[xm1] + s[xp1]) + 6.0f * s[x]) * (1.0f / 16.0f);
        }
    }
    for (size_t y = 0; y < h; y++) {
        size_t ym2 = y >= 2 ? y - 2 : 0, ym1 = y >= 1 ? y - 1 : 0;
        size_t yp1 = y + 1 < h ? y + 1 : h - 1, yp2 = y + 2 < h ? y + 2 : h - 1;
        const float *a = tmp + ym2 * w, *b = tmp + ym1 * w, *c = tmp + y * w;
        const float *d = tmp + yp1 * w, *e = tmp + yp2 * w;
        float *o = dst + y * w;
        for (size_t x = 0; x < w; x++)
            o[x] = (a[x] + e[x] + 4.0f * (b[x] + d[x]) + 6.0f * c[x]) * (1.0f / 16.0f);
    }
}

static tram_status make_level(const tram_grey_image *im, double min_square_px, tram__level *lv)
{
    size_t w = im->width, h = im->height;
    float *cur = im->pixels, *owned = NULL;
    double scale = 1.0, sq = min_square_px;
    while (sq >= 24.0 && scale < 8.0 && w >= 64 && h >= 64) {
        size_t w2, h2;
        float *next = halve(cur, w, h, &w2, &h2);
        tram__free(owned);
        if (!next) return TRAM_ENOMEM;
        owned = cur = next;
        w = w2;
        h = h2;
        scale *= 2.0;
        sq *= 0.5;
    }
    float *tmp = tram__malloc(w * h * sizeof *tmp);
    float *out = tram__malloc(w * h * sizeof *out);
    if (!tmp || !out) {
        tram__free(tmp);
        tram__free(out);
        tram__free(owned);
        return TRAM_ENOMEM;
    }
    smooth5(cur, tmp, out, w, h);
    tram__free(tmp);
    tram__free(owned);
    lv->w = w;
    lv->h = h;
    lv->px = out;
    lv->scale = scale;
    return TRAM_OK;
}

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

/* ---- ChESS response ------------------------------------------------------ */

typedef struct resp_job {
    const float *src;
    float *dst;
    size_t w, h, y0, y1, r;
    ptrdiff_t off[16];
    float max;
} resp_job;

static void *resp_rows(void *arg)
{
    resp_job *j = arg;
    const size_t w = j->w, r = j->r;
    const ptrdiff_t *off = j->off;
    const ptrdiff_t sw = (ptrdiff_t)w;
    float mx = 0.0f;
    for (size_t y = j->y0; y < j->y1; y++) {
        float *out = j->dst + y * w;
        memset(out, 0, w * sizeof *out);
        if (y < r || y + r >= j->h || w <= 2 * r) continue;
        const float *row = j->src + y * w;
        for (size_t x = r; x < w - r; x++) {
            const float *p = row + x;
            float s[16];
            for (int k = 0; k < 16; k++) s[k] = p[off[k]];
            float sr = 0.0f, dr = 0.0f, sum = 0.0f;
            for (int n = 0; n < 4; n++) sr += fabsf(s[n] + s[n + 8] - s[n + 4] - s[n + 12]);
            for (int n = 0; n < 8; n++) dr += fabsf(s[n] - s[n + 8]);
            for (int k = 0; k < 16; k++) sum += s[k];
            float local = (p[0] + p[-1] + p[1] + p[-sw] + p[sw]) * 0.2f;
            float resp = sr - dr - fabsf(sum - 16.0f * local);
            out[x] = resp;
            if (resp > mx) mx = resp;
        }
    }
    j->max = mx;
    return NULL;
}

/* R for every working pixel (0 within r of the border); returns the max. */
static float chess_response(const tram__level *lv, size_t r, int threads, float *dst)
{
    resp_job jobs[8];
    pthread_t tid[8];
    int started[8] = {0};
    if (threads > 8) threads = 8;
    if (threads < 1) threads = 1;
    if (lv->w * lv->h < 500000) threads = 1;
    for (int t = 0; t < threads; t++) {
        resp_job *j = &jobs[t];
        j->src = lv->px;
        j->dst = dst;
        j->w = lv->w;
        j->h = lv->h;
        j->r = r;
        j->y0 = lv->h * (size_t)t / (size_t)threads;
        j->y1 = lv->h * (size_t)(t + 1) / (size_t)threads;
        for (int k = 0; k < 16; k++) {
            double a = TRAM_PI * k / 8.0;
            long dx = lround((double)r * cos(a)), dy = lround((double)r * sin(a));
            j->off[k] = (ptrdiff_t)dy * (ptrdiff_t)lv->w + (ptrdiff_t)dx;
        }
    }
    for (int t = 1; t < threads; t++)
        started[t] = pthread_create(&tid[t], NULL, resp_rows, &jobs[t]) == 0;
    resp_rows(&jobs[0]);
    for (int t = 1; t < threads; t++) {
        if (started[t]) pthread_join(tid[t], NULL);
        else resp_rows(&jobs[t]);   /* no thread: do its rows here */
    }
    float mx = 0.0f;
    for (int t = 0; t < threads; t++)
        if (jobs[t].max > mx) mx = jobs[t].max;
    return mx;
}

/* ---- candidates ---------------------------------------------------------- */

typedef struct peak {
    float resp;
    unsigned x, y;
} peak;

static int peak_cmp(const void *a, const void *b)
{
    float ra = ((const peak *)a)->resp, rb = ((const peak *)b)->resp;
    return (ra < rb) - (ra > rb);
}

/* Local maxima of R above thr within a (2k+1)^2 window (ties: the first in
 * raster order wins). */
static tram_status find_peaks(const float *R, size_t w, size_t h, size_t border, size_t k,
                              float thr, peak **out, size_t *n)
{
    size_t cap = 1024, cnt = 0;
    peak *pk = tram__malloc(cap * sizeof *pk);
    if (!pk) return TRAM_ENOMEM;
    if (border < k) border = k;
    for (size_t y = border; y + border < h; y++) {
        const float *row = R + y * w;
        for (size_t x = border; x + border < w; x++) {
            float c = row[x];
            if (c <= thr) continue;
            int ok = 1;
            for (size_t yy = y - k; yy <= y + k && ok; yy++) {
                const float *q = R + yy * w;
                for (size_t xx = x - k; xx <= x + k; xx++) {
                    float o = q[xx];
                    if (o > c || (o == c && (yy < y || (yy == y && xx < x)))) {
                        ok = 0;
                        break;
                    }
                }
            }
            if (!ok) continue;
            if (cnt == cap) {
                peak *np = tram__realloc(pk, 2 * cap * sizeof *pk);
                if (!np) {
                    tram__free(pk);
                    return TRAM_ENOMEM;
                }
                pk = np;
                cap *= 2;
            }
            pk[cnt].resp = c;
            pk[cnt].x = (unsigned)x;
            pk[cnt].y = (unsigned)y;
            cnt++;
        }
    }
    qsort(pk, cnt, sizeof *pk, peak_cmp);
    *out = pk;
    *n = cnt;
    return TRAM_OK;
}

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
static int ring_analyse(const tram__level *lv, double x, double y, double rho, tram__saddle *s)
{
    double val[RING_FINE], mean = 0.0, lo = 1e30, hi = -1e30;
    int cls[RING_FINE];
    for (int k = 0; k < RING_FINE; k++) {
        double a = 2.0 * TRAM_PI * k / RING_FINE;
        val[k] = sample_level_px(lv, x + rho * cos(a), y + rho * sin(a));
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

/* Sub-pixel peak of R by a parabola through the 3 samples on each axis. */
static double peak_offset(float m, float c, float p)
{
    double den = 2.0 * (2.0 * c - m - p);
    if (den <= 0) return 0.0;
    double d = (double)(p - m) / den;
    return d > 0.5 ? 0.5 : d < -0.5 ? -0.5 : d;
}

tram_status tram__saddles_find(const tram_grey_image *im, double min_square_px, int threads,
                               tram__saddles *out)
{
    memset(out, 0, sizeof *out);
    tram_status st = make_level(im, min_square_px, &out->level);
    if (st != TRAM_OK) return st;
    const tram__level *lv = &out->level;
    double sq = min_square_px / lv->scale;
    long rr = lround(0.4 * sq);
    size_t r = (size_t)(rr < 3 ? 3 : rr > 9 ? 9 : rr);
    out->ring_px = (double)r * lv->scale;
    if (lv->w <= 2 * r + 4 || lv->h <= 2 * r + 4) return TRAM_OK;
    float *R = tram__malloc(lv->w * lv->h * sizeof *R);
    if (!R) {
        tram__saddles_free(out);
        return TRAM_ENOMEM;
    }
    float mx = chess_response(lv, r, threads, R);
    /* the floor: a corner of contrast ~10 grey levels */
    float thr = 0.05f * mx;
    if (thr < 40.0f) thr = 40.0f;
    peak *pk = NULL;
    size_t npk = 0;
    st = find_peaks(R, lv->w, lv->h, r + 1, r / 2 > 1 ? r / 2 : 1, thr, &pk, &npk);
    if (st != TRAM_OK) {
        tram__free(R);
        tram__saddles_free(out);
        return st;
    }
    out->nmax = npk;
    if (npk > MAX_CANDIDATES) npk = MAX_CANDIDATES;
    out->s = tram__malloc((npk ? npk : 1) * sizeof *out->s);
    if (!out->s) {
        tram__free(pk);
        tram__free(R);
        tram__saddles_free(out);
        return TRAM_ENOMEM;
    }
    double off = 0.5 * (lv->scale - 1.0);
    for (size_t i = 0; i < npk; i++) {
        size_t x = pk[i].x, y = pk[i].y, w = lv->w;
        const float *c = R + y * w + x;
        double fx = (double)x + peak_offset(c[-1], c[0], c[1]);
        double fy = (double)y + peak_offset(c[-(ptrdiff_t)w], c[0], c[w]);
        tram__saddle s;
        if (!ring_analyse(lv, fx, fy, (double)r, &s)) continue;
        s.u = fx * lv->scale + off;
        s.v = fy * lv->scale + off;
        s.response = pk[i].resp;
        out->s[out->n++] = s;
    }
    tram__free(pk);
    tram__free(R);
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
        if (A[0] * A[3] - A[1] * A[1] <= 1e-9 * (A[0] + A[3]) * (A[0] + A[3])) return 0;
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
    double s0 = 0, s1 = 0, s2 = 0;
    for (int i = -n; i <= n; i++) {
        double d = sgn * (prof[i + n + 2] - prof[i + n]) / (2.0 * h);
        if (d <= 0) continue;
        double t = i * h;
        s0 += d;
        s1 += d * t;
        s2 += d * t * t;
    }
    if (s0 <= 0) return -1.0;
    double m = s1 / s0, var = s2 / s0 - m * m;
    return var > 0 ? sqrt(var) : 0.0;
}
