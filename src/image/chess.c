/*
 * chess.c - the working image and the ChESS corner response of the
 * chessboard detector (Bennett and Lasenby, "ChESS - Quick and robust
 * detection of chess-board features", Computer Vision and Image
 * Understanding 118, 2014).
 *
 * Sixteen samples I_0..I_15 on a ring of radius r around a pixel give
 *     sum response   SR = sum_{n=0..3} |(I_n + I_{n+8}) - (I_{n+4} + I_{n+12})|
 *     diff response  DR = sum_{n=0..7} |I_n - I_{n+8}|
 *     mean response  MR = |mean of the ring - mean of the 5-pixel cross at the centre|
 *     R = SR - DR - 16 MR,
 * large at a chessboard corner (opposite sectors alike, neighbouring
 * sectors different), negative on edges and near zero on flat ground.
 *
 * Both the smoothing and the response run over bands of rows, one band per
 * thread, each with a rolling buffer of a few rows: the horizontal pass of
 * the smoothing keeps 5 rows, the response keeps the 2k + 1 rows that the
 * non-maximum suppression looks at, so no whole-image buffer is needed
 * beyond the working image itself.  The inner loops work on 4 pixels at a
 * time through the compiler's vector extension (GCC and Clang).
 */
#include "image/chess_internal.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "core/tram_internal.h"

/* 4 lanes: the width of the baseline x86-64 and AArch64 vector units */
typedef float v4f __attribute__((vector_size(16)));
typedef int v4i __attribute__((vector_size(16)));

static inline v4f ld4(const float *p)
{
    v4f v;
    memcpy(&v, p, sizeof v);
    return v;
}

static inline void st4(float *p, v4f v) { memcpy(p, &v, sizeof v); }

static inline v4f abs4(v4f a)
{
    v4i m = (v4i)a & 0x7fffffff;
    return (v4f)m;
}

/* Run fn over n jobs of `size` bytes each, on up to n threads (the first
 * in the calling thread; a thread that cannot start runs here too). */
static void run_jobs(void *(*fn)(void *), void *jobs, size_t size, int n)
{
    pthread_t tid[8];
    int started[8] = {0};
    char *base = jobs;
    for (int t = 1; t < n && t < 8; t++)
        started[t] = pthread_create(&tid[t], NULL, fn, base + (size_t)t * size) == 0;
    fn(base);
    for (int t = 1; t < n && t < 8; t++) {
        if (started[t]) pthread_join(tid[t], NULL);
        else fn(base + (size_t)t * size);
    }
}

/* ---- working image ------------------------------------------------------------ */

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

typedef struct smooth_job {
    const float *src;
    float *dst, *ring;    /* ring: 5 rows */
    size_t w, h, y0, y1;
    long have[5];         /* source row held by each ring slot */
} smooth_job;

/* Binomial 1-4-6-4-1 / 16 along source row y into its ring slot. */
static const float *hrow(smooth_job *j, size_t y)
{
    float *t = j->ring + (y % 5) * j->w;
    if (j->have[y % 5] == (long)y) return t;
    const float *s = j->src + y * j->w;
    size_t w = j->w, x = 0;
    const v4f c4 = {4, 4, 4, 4}, c6 = {6, 6, 6, 6};
    const v4f c16 = {0.0625f, 0.0625f, 0.0625f, 0.0625f};
    for (; x < 2 && x < w; x++) {
        size_t xm2 = 0, xm1 = x ? x - 1 : 0, xp1 = x + 1 < w ? x + 1 : w - 1, xp2 = x + 2 < w ? x + 2 : w - 1;
        t[x] = (s[xm2] + s[xp2] + 4.0f * (s[xm1] + s[xp1]) + 6.0f * s[x]) * 0.0625f;
    }
    for (; w >= 12 && x + 4 + 2 <= w; x += 4) {
        v4f a = ld4(s + x - 2) + ld4(s + x + 2), b = ld4(s + x - 1) + ld4(s + x + 1);
        st4(t + x, (a + c4 * b + c6 * ld4(s + x)) * c16);
    }
    for (; x < w; x++) {
        size_t xm2 = x >= 2 ? x - 2 : 0, xm1 = x >= 1 ? x - 1 : 0;
        size_t xp1 = x + 1 < w ? x + 1 : w - 1, xp2 = x + 2 < w ? x + 2 : w - 1;
        t[x] = (s[xm2] + s[xp2] + 4.0f * (s[xm1] + s[xp1]) + 6.0f * s[x]) * 0.0625f;
    }
    j->have[y % 5] = (long)y;
    return t;
}

static void *smooth_band(void *arg)
{
    smooth_job *j = arg;
    const size_t w = j->w, h = j->h;
    for (int k = 0; k < 5; k++) j->have[k] = -1;
    for (size_t y = j->y0; y < j->y1; y++) {
        size_t ym2 = y >= 2 ? y - 2 : 0, ym1 = y >= 1 ? y - 1 : 0;
        size_t yp1 = y + 1 < h ? y + 1 : h - 1, yp2 = y + 2 < h ? y + 2 : h - 1;
        const float *a = hrow(j, ym2), *b = hrow(j, ym1), *c = hrow(j, y);
        const float *d = hrow(j, yp1), *e = hrow(j, yp2);
        float *o = j->dst + y * w;
        size_t x = 0;
        const v4f c4 = {4, 4, 4, 4}, c6 = {6, 6, 6, 6};
        const v4f c16 = {0.0625f, 0.0625f, 0.0625f, 0.0625f};
        for (; x + 4 <= w; x += 4)
            st4(o + x, (ld4(a + x) + ld4(e + x) + c4 * (ld4(b + x) + ld4(d + x)) + c6 * ld4(c + x)) * c16);
        for (; x < w; x++) o[x] = (a[x] + e[x] + 4.0f * (b[x] + d[x]) + 6.0f * c[x]) * 0.0625f;
    }
    return NULL;
}

static int clamp_threads(int threads, size_t pixels)
{
    if (threads > 8) threads = 8;
    if (threads < 1 || pixels < 300000) threads = 1;
    return threads;
}

tram_status tram__chess_level(const tram_grey_image *im, double min_square_px, int threads,
                              tram__level *lv)
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
    threads = clamp_threads(threads, w * h);
    smooth_job jobs[8];
    float *out = tram__malloc(w * h * sizeof *out);
    float *ring = tram__malloc((size_t)threads * 5 * w * sizeof *ring);
    if (!out || !ring) {
        tram__free(out);
        tram__free(ring);
        tram__free(owned);
        return TRAM_ENOMEM;
    }
    for (int t = 0; t < threads; t++) {
        jobs[t].src = cur;
        jobs[t].dst = out;
        jobs[t].ring = ring + (size_t)t * 5 * w;
        jobs[t].w = w;
        jobs[t].h = h;
        jobs[t].y0 = h * (size_t)t / (size_t)threads;
        jobs[t].y1 = h * (size_t)(t + 1) / (size_t)threads;
    }
    run_jobs(smooth_band, jobs, sizeof jobs[0], threads);
    tram__free(ring);
    tram__free(owned);
    lv->w = w;
    lv->h = h;
    lv->px = out;
    lv->scale = scale;
    return TRAM_OK;
}

/* ---- response and peaks ------------------------------------------------------------ */

typedef struct peak_job {
    const tram__level *lv;
    size_t r, k, y0, y1;
    float floor;
    ptrdiff_t off[16];
    float *ring;          /* 2k + 1 rows of R */
    tram__peak *pk;
    size_t n, cap;
    int nomem;
} peak_job;

/* R along working row y (0 within r of the left and right borders). */
static void resp_row(const peak_job *j, size_t y, float *out)
{
    const size_t w = j->lv->w, r = j->r;
    const ptrdiff_t sw = (ptrdiff_t)w;
    const float *row = j->lv->px + y * w;
    const ptrdiff_t *off = j->off;
    const v4f c02 = {0.2f, 0.2f, 0.2f, 0.2f};
    const v4f c16 = {16, 16, 16, 16};
    memset(out, 0, w * sizeof *out);
    size_t x = r;
    for (; x + 4 + r <= w; x += 4) {
        const float *p = row + x;
        v4f s[16];
        for (int q = 0; q < 16; q++) s[q] = ld4(p + off[q]);
        v4f sr = abs4(s[0] + s[8] - s[4] - s[12]) + abs4(s[1] + s[9] - s[5] - s[13]) +
                 abs4(s[2] + s[10] - s[6] - s[14]) + abs4(s[3] + s[11] - s[7] - s[15]);
        v4f dr = abs4(s[0] - s[8]) + abs4(s[1] - s[9]) + abs4(s[2] - s[10]) + abs4(s[3] - s[11]) +
                 abs4(s[4] - s[12]) + abs4(s[5] - s[13]) + abs4(s[6] - s[14]) + abs4(s[7] - s[15]);
        v4f sum = ((s[0] + s[1]) + (s[2] + s[3])) + ((s[4] + s[5]) + (s[6] + s[7])) +
                  ((s[8] + s[9]) + (s[10] + s[11])) + ((s[12] + s[13]) + (s[14] + s[15]));
        v4f local = (ld4(p) + ld4(p - 1) + ld4(p + 1) + ld4(p - sw) + ld4(p + sw)) * c02;
        st4(out + x, sr - dr - abs4(sum - c16 * local));
    }
    for (; x + r < w; x++) {
        const float *p = row + x;
        float s[16];
        for (int q = 0; q < 16; q++) s[q] = p[off[q]];
        float sr = 0.0f, dr = 0.0f, sum = 0.0f;
        for (int n = 0; n < 4; n++) sr += fabsf(s[n] + s[n + 8] - s[n + 4] - s[n + 12]);
        for (int n = 0; n < 8; n++) dr += fabsf(s[n] - s[n + 8]);
        for (int q = 0; q < 16; q++) sum += s[q];
        float local = (p[0] + p[-1] + p[1] + p[-sw] + p[sw]) * 0.2f;
        out[x] = sr - dr - fabsf(sum - 16.0f * local);
    }
}

static float peak_offset(float m, float c, float p)
{
    float den = 2.0f * (2.0f * c - m - p);
    if (den <= 0) return 0.0f;
    float d = (p - m) / den;
    return d > 0.5f ? 0.5f : d < -0.5f ? -0.5f : d;
}

/* The local maxima on centre row yc of the ring (ties: the first in raster
 * order wins). */
static void nms_row(peak_job *j, size_t yc)
{
    const size_t w = j->lv->w, k = j->k, span = 2 * k + 1, bx = j->r + 1;
    const float *c = j->ring + (yc % span) * w;
    for (size_t x = bx; x + bx < w; x++) {
        float v = c[x];
        if (v <= j->floor) continue;
        int ok = 1;
        for (size_t yy = yc - k; yy <= yc + k && ok; yy++) {
            const float *q = j->ring + (yy % span) * w;
            for (size_t xx = x - k; xx <= x + k; xx++) {
                float o = q[xx];
                if (o > v || (o == v && (yy < yc || (yy == yc && xx < x)))) {
                    ok = 0;
                    break;
                }
            }
        }
        if (!ok) continue;
        if (j->n == j->cap) {
            size_t nc = j->cap ? 2 * j->cap : 256;
            tram__peak *np = tram__realloc(j->pk, nc * sizeof *np);
            if (!np) {
                j->nomem = 1;
                return;
            }
            j->pk = np;
            j->cap = nc;
        }
        const float *up = j->ring + ((yc - 1) % span) * w, *dn = j->ring + ((yc + 1) % span) * w;
        tram__peak *p = &j->pk[j->n++];
        p->resp = v;
        p->x = (float)x + peak_offset(c[x - 1], v, c[x + 1]);
        p->y = (float)yc + peak_offset(up[x], v, dn[x]);
    }
}

static void *peak_band(void *arg)
{
    peak_job *j = arg;
    const size_t w = j->lv->w, h = j->lv->h, r = j->r, k = j->k, span = 2 * k + 1;
    size_t ys = j->y0 > r + 1 ? j->y0 : r + 1, ye = j->y1 + r + 1 < h ? j->y1 : h - r - 1;
    if (ys >= ye) return NULL;
    for (size_t y = ys - k; y < ye + k; y++) {
        float *slot = j->ring + (y % span) * w;
        if (y >= r && y + r < h) resp_row(j, y, slot);
        else memset(slot, 0, w * sizeof *slot);
        if (y >= ys + k && !j->nomem) nms_row(j, y - k);
    }
    return NULL;
}

static int peak_cmp(const void *a, const void *b)
{
    float ra = ((const tram__peak *)a)->resp, rb = ((const tram__peak *)b)->resp;
    return (ra < rb) - (ra > rb);
}

tram_status tram__chess_peaks(const tram__level *lv, size_t r, size_t k, float floor, float rel,
                              int threads, tram__peak **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    if (k < 1) k = 1;
    if (k > r) k = r;
    if (lv->w <= 2 * r + 4 || lv->h <= 2 * r + 4) return TRAM_OK;
    threads = clamp_threads(threads, lv->w * lv->h);
    peak_job jobs[8];
    float *ring = tram__malloc((size_t)threads * (2 * k + 1) * lv->w * sizeof *ring);
    if (!ring) return TRAM_ENOMEM;
    memset(jobs, 0, sizeof jobs);
    for (int t = 0; t < threads; t++) {
        peak_job *j = &jobs[t];
        j->lv = lv;
        j->r = r;
        j->k = k;
        j->floor = floor;
        j->ring = ring + (size_t)t * (2 * k + 1) * lv->w;
        j->y0 = lv->h * (size_t)t / (size_t)threads;
        j->y1 = lv->h * (size_t)(t + 1) / (size_t)threads;
        for (int q = 0; q < 16; q++) {
            double a = TRAM_PI * q / 8.0;
            long dx = lround((double)r * cos(a)), dy = lround((double)r * sin(a));
            j->off[q] = (ptrdiff_t)dy * (ptrdiff_t)lv->w + (ptrdiff_t)dx;
        }
    }
    run_jobs(peak_band, jobs, sizeof jobs[0], threads);
    tram__free(ring);
    size_t total = 0;
    int nomem = 0;
    float mx = 0.0f;
    for (int t = 0; t < threads; t++) {
        total += jobs[t].n;
        nomem |= jobs[t].nomem;
        for (size_t i = 0; i < jobs[t].n; i++)
            if (jobs[t].pk[i].resp > mx) mx = jobs[t].pk[i].resp;
    }
    tram__peak *all = nomem ? NULL : tram__malloc((total ? total : 1) * sizeof *all);
    size_t m = 0;
    for (int t = 0; t < threads; t++) {
        for (size_t i = 0; all && i < jobs[t].n; i++)
            if (jobs[t].pk[i].resp >= rel * mx) all[m++] = jobs[t].pk[i];
        tram__free(jobs[t].pk);
    }
    if (!all) return TRAM_ENOMEM;
    qsort(all, m, sizeof *all, peak_cmp);
    *out = all;
    *n = m;
    return TRAM_OK;
}
