/*
 * detect.c - chessboard detection (tram/image.h): saddle points
 * (src/image/saddle.c: the ChESS response of Bennett and Lasenby 2014),
 * the board's lattice among them (src/image/grid.c), and the sub-pixel
 * position of every corner by the gradient-orthogonality condition of
 * Forstner and Gulch (1987), with the edge blur behind `sharpness`.
 *
 * A board is reported whole or not at all: any corner that cannot be
 * found or measured makes the detection fail with the reason.
 */
#include "tram/image.h"

#include <math.h>
#include <stdio.h>
#include <string.h>
#include <unistd.h>

#include "core/tram_internal.h"
#include "image/grid_internal.h"
#include "image/saddle_internal.h"

void tram_detect_options_init(tram_detect_options *opt)
{
    if (!opt) return;
    opt->min_square_px = 12.0;
    opt->threads = 0;
}

void tram_detection_destroy(tram_detection *d)
{
    if (!d) return;
    tram__free(d->uv);
    tram__free(d);
}

static tram_status check_args(const tram_grey_image *im, const tram_board *b,
                              const tram_detect_options *opt, tram_detection **out, tram_error *err)
{
    if (!out) return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detect: no place for the result");
    *out = NULL;
    if (!im || !im->pixels || im->width == 0 || im->height == 0)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detect: no image");
    if ((unsigned long long)im->width * (unsigned long long)im->height > TRAM_IMAGE_MAX_PIXELS)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detect: image of %zu x %zu pixels is over the limit",
                          im->width, im->height);
    if (!b || b->kind != TRAM_BOARD_CHESSBOARD)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detect: expected a chessboard");
    if (b->cols < 2 || b->rows < 2 || b->cols > 1000 || b->rows > 1000 || (b->cols + b->rows) % 2 == 0)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "detect: a board of %d x %d inner corners; expected at least 2 x 2 with one "
                          "count odd and the other even", b->cols, b->rows);
    if (opt && (!(opt->min_square_px >= 4.0) || !(opt->min_square_px <= 4096.0)))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "detect: min_square_px %g; expected 4 to 4096 pixels", opt->min_square_px);
    if (opt && (opt->threads < 0 || opt->threads > 64))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detect: threads %d; expected 0 to 64",
                          opt->threads);
    return TRAM_OK;
}

/* Refine every corner of the ordered lattice in place; the window is set
 * by the nearest lattice neighbour so that no other corner enters it.
 * Returns the id of a corner that could not be measured, or -1. */
static long refine_all(const tram_grey_image *im, const tram_board *b, double *uv)
{
    int cols = b->cols, rows = b->rows;
    size_t N = (size_t)cols * (size_t)rows;
    double *start = tram__malloc(2 * N * sizeof *start);
    if (!start) return -2;
    memcpy(start, uv, 2 * N * sizeof *start);
    for (int r = 0; r < rows; r++)
        for (int c = 0; c < cols; c++) {
            size_t id = (size_t)r * (size_t)cols + (size_t)c;
            const double *p = start + 2 * id;
            double dmin = 1e300;
            static const int nb[4][2] = {{-1, 0}, {1, 0}, {0, -1}, {0, 1}};
            for (int k = 0; k < 4; k++) {
                int cc = c + nb[k][0], rr = r + nb[k][1];
                if (cc < 0 || rr < 0 || cc >= cols || rr >= rows) continue;
                const double *q = start + 2 * ((size_t)rr * (size_t)cols + (size_t)cc);
                double d = hypot(q[0] - p[0], q[1] - p[1]);
                if (d < dmin) dmin = d;
            }
            double R = 0.7 * dmin - 1.5;
            if (R > 15.0) R = 15.0;
            double border = p[0];
            if (p[1] < border) border = p[1];
            if ((double)im->width - 1 - p[0] < border) border = (double)im->width - 1 - p[0];
            if ((double)im->height - 1 - p[1] < border) border = (double)im->height - 1 - p[1];
            if (R > border - 3.5) R = border - 3.5;
            if (R < 2.5 || !tram__corner_refine(im, R, uv + 2 * id)) {
                tram__free(start);
                return (long)id;
            }
        }
    tram__free(start);
    return -1;
}

/* Mean edge blur over the lattice's edges (see tram/image.h). */
static double sharpness(const tram_grey_image *im, const tram_board *b, const double *uv)
{
    double sum = 0;
    size_t n = 0;
    for (int r = 0; r < b->rows; r++)
        for (int c = 0; c < b->cols; c++) {
            const double *p = uv + 2 * ((size_t)r * (size_t)b->cols + (size_t)c);
            double s;
            if (c + 1 < b->cols && (s = tram__edge_blur(im, p, p + 2)) >= 0) {
                sum += s;
                n++;
            }
            if (r + 1 < b->rows && (s = tram__edge_blur(im, p, p + 2 * b->cols)) >= 0) {
                sum += s;
                n++;
            }
        }
    return n ? sum / (double)n : -1.0;
}

tram_status tram_detect_chessboard(const tram_grey_image *im, const tram_board *b,
                                   const tram_detect_options *opt, tram_detection **out,
                                   tram_error *err)
{
    tram_status st = check_args(im, b, opt, out, err);
    if (st != TRAM_OK) return st;
    tram_detect_options defaults;
    tram_detect_options_init(&defaults);
    if (!opt) opt = &defaults;
    int threads = opt->threads;
    if (threads == 0) {
        long nc = sysconf(_SC_NPROCESSORS_ONLN);
        threads = nc >= 2 ? 2 : 1;
    }
    tram_detection *d = tram__calloc(1, sizeof *d);
    if (!d) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "detect: out of memory");
    d->sharpness = -1.0;
    tram__saddles S;
    tram__grid_result g;
    memset(&g, 0, sizeof g);
    st = tram__saddles_find(im, opt->min_square_px, threads, &S);
    if (st == TRAM_OK) {
        st = tram__grid_find(&S, b, im->width, im->height, opt->min_square_px, &g);
        tram__saddles_free(&S);
    }
    if (st != TRAM_OK) {
        tram__free(g.uv);
        tram__free(d);
        return tram__fail(err, st, NULL, 0, 0, "detect: out of memory");
    }
    d->nseen = g.nseen;
    if (!g.found) {
        snprintf(d->reason, sizeof d->reason, "%s", g.reason);
        *out = d;
        return TRAM_OK;
    }
    long bad = refine_all(im, b, g.uv);
    if (bad == -2) {
        tram__free(g.uv);
        tram__free(d);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "detect: out of memory");
    }
    if (bad >= 0) {
        snprintf(d->reason, sizeof d->reason,
                 "corner %ld (column %ld, row %ld) could not be located to sub-pixel precision "
                 "(too near the image edge or another corner)",
                 bad, bad % b->cols, bad / b->cols);
        tram__free(g.uv);
        *out = d;
        return TRAM_OK;
    }
    d->found = 1;
    d->ncorners = (size_t)b->cols * (size_t)b->rows;
    d->uv = g.uv;
    d->sharpness = sharpness(im, b, g.uv);
    *out = d;
    return TRAM_OK;
}
