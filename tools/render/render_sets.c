/*
 * render_sets.c - output and ready-made scenes of the test renderer
 * (tools/render/render.h): the 8-bit grey PNG writer (libpng into memory,
 * then one atomic write), the false-detection image set and the 5 MP
 * scene of the detection benchmark.
 */
#include "render/render.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <png.h>

#include "render/render_internal.h"
#include "tram/fileio.h"

/* ---------------------------------------------------------------------------
 * PNG output (libpng into memory, then one atomic write). */
typedef struct membuf {
    unsigned char *data;
    size_t len, cap;
    int failed;
} membuf;

static void png_mem_write(png_structp png, png_bytep data, png_size_t len)
{
    membuf *m = png_get_io_ptr(png);
    if (m->failed) return;
    if (m->len + len > m->cap) {
        size_t cap = m->cap ? 2 * m->cap : 65536;
        while (cap < m->len + len) cap *= 2;
        unsigned char *p = realloc(m->data, cap);
        if (!p) {
            m->failed = 1;
            return;
        }
        m->data = p;
        m->cap = cap;
    }
    memcpy(m->data + m->len, data, len);
    m->len += len;
}

static void png_mem_flush(png_structp png) { (void)png; }

/* Encode rows (volatile across setjmp). */
static int png_encode(const tram_grey_image *im, unsigned char *row, membuf *m)
{
    png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png ? png_create_info_struct(png) : NULL;
    if (!png || !info) {
        png_destroy_write_struct(&png, &info);
        return -1;
    }
    if (setjmp(png_jmpbuf(png))) {
        png_destroy_write_struct(&png, &info);
        return -1;
    }
    png_set_write_fn(png, m, png_mem_write, png_mem_flush);
    png_set_IHDR(png, info, (png_uint_32)im->width, (png_uint_32)im->height, 8, PNG_COLOR_TYPE_GRAY,
                 PNG_INTERLACE_NONE, PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
    png_set_compression_level(png, 1); /* noisy images hardly compress; write fast */
    png_write_info(png, info);
    for (size_t j = 0; j < im->height; j++) {
        const float *p = im->pixels + j * im->width;
        for (size_t i = 0; i < im->width; i++) {
            float v = p[i] < 0 ? 0.0f : p[i] > 255 ? 255.0f : p[i];
            row[i] = (unsigned char)lrintf(v);
        }
        png_write_row(png, row);
    }
    png_write_end(png, NULL);
    png_destroy_write_struct(&png, &info);
    return m->failed ? -1 : 0;
}

tram_status render_png_write(const tram_grey_image *im, const char *path, tram_error *err)
{
    membuf m = {NULL, 0, 0, 0};
    unsigned char *row = malloc(im->width);
    if (!row || png_encode(im, row, &m) != 0) {
        free(row);
        free(m.data);
        return tram__fail(err, TRAM_ENOMEM, path, 0, 0, "PNG encoding failed");
    }
    free(row);
    tram_status st = tram_file_write_atomic(path, (const char *)m.data, m.len, 1, err);
    free(m.data);
    return st;
}

/* ---------------------------------------------------------------------------
 * Image sets for the detector's tests and benchmark. */
static void common_realism(render_scene *s, rng *r)
{
    s->blur_sigma_px = rng_range(r, 0.5, 1.0);
    s->noise_sigma = rng_range(r, 1.0, 3.0);
    s->gain_min = rng_range(r, 0.6, 0.8);
    s->gain_max = rng_range(r, 1.05, 1.25);
    s->gain_angle_deg = rng_range(r, 0, 360);
    s->vignetting = rng_range(r, 0.0, 0.3);
}

/* Normalised image point of pixel (u, v). */
static void pixel_ray(const tram_camera *c, double u, double v, double xy[2])
{
    if (!tram_camera_unproject(c, (double[2]){u, v}, xy)) {
        xy[0] = (u - c->cx) / c->fx;
        xy[1] = (v - c->cy) / c->fy;
    }
}

tram_status render_negative(int i, const tram_board *b, const tram_camera *c,
                            tram_grey_image **out, render_truth *truth, tram_error *err)
{
    *out = NULL;
    if (i < 0 || i >= RENDER_NEGATIVE_COUNT)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "render_negative: image %d of 0..%d", i,
                          RENDER_NEGATIVE_COUNT - 1);
    double W = (double)c->width, H = (double)c->height;
    /* distance at which the pattern spans about half the image width */
    double dist = c->fx * (b->cols + 1) * b->square / (0.5 * W);
    render_scene s;
    render_truth t;
    for (int attempt = 0; attempt < 200; attempt++) {
        rng r = rng_stream(1000 + (unsigned long long)i, (unsigned long long)attempt + 10);
        tram_se3 T;
        double xy[2];
        render_scene_init(&s, b, c, NULL);
        s.seed = 7000 + (unsigned long long)(i * 1000 + attempt);
        common_realism(&s, &r);
        s.clutter = 15 + (int)rng_range(&r, 0, 25);
        if (i < 7) {
            s.board_present = 0;
            s.clutter += 25;
            pixel_ray(c, 0.5 * W, 0.5 * H, xy);
        } else if (i < 14) { /* centre near an edge or a corner of the image */
            double fu = rng_uniform(&r) < 0.5 ? rng_range(&r, 0.0, 0.1) : rng_range(&r, 0.9, 1.0);
            double fv = rng_range(&r, 0.0, 1.0);
            if (i & 1) {
                double tmp = fu;
                fu = fv;
                fv = tmp;
            }
            pixel_ray(c, fu * (W - 1), fv * (H - 1), xy);
        } else {
            pixel_ray(c, rng_range(&r, 0.45, 0.55) * W, rng_range(&r, 0.45, 0.55) * H, xy);
            s.occluder = 1;
            s.occluder_radius_px = 0; /* set below from the square size */
        }
        render_pose_facing(b, dist * rng_range(&r, 0.9, 1.2), xy[0], xy[1], rng_range(&r, 0, 35),
                           rng_range(&r, 0, 360), rng_range(&r, -30, 30), &T);
        s.T_sensor_target = T;
        if (render_truth_compute(&s, &t) != 0)
            return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "render: out of memory");
        if (s.occluder) s.occluder_radius_px = rng_range(&r, 1.2, 2.2) * t.square_px;
        render_truth_free(&t);
        if (render_truth_compute(&s, &t) != 0)
            return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "render: out of memory");
        int ok = i < 7 ? 1
                 : i < 14 ? t.ninside < t.ncorners && 4 * t.ninside >= t.ncorners && t.front
                          : t.ninside == t.ncorners && t.nvisible < t.ncorners && t.front;
        render_truth_free(&t);
        if (ok) return render_chessboard(&s, out, truth, err);
    }
    return tram__fail(err, TRAM_EINPUT, "", 0, 0,
                      "render_negative: no scene of kind %d found for this board and camera", i);
}

void render_scene_5mp(const tram_board *b, unsigned long long seed, render_scene *s)
{
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.width = 2592;
    c.height = 1944;
    c.fx = c.fy = 2200.0;
    c.cx = 1295.5;
    c.cy = 971.5;
    c.k1 = -0.08;
    c.distortion = TRAM_DISTORTION_RADIAL2;
    rng r = rng_stream(seed, 20);
    double dist = c.fx * (b->cols + 1) * b->square / (0.5 * (double)c.width);
    tram_se3 T;
    render_pose_facing(b, dist, rng_range(&r, -0.1, 0.1), rng_range(&r, -0.1, 0.1),
                       rng_range(&r, 15, 35), rng_range(&r, 0, 360), rng_range(&r, -20, 20), &T);
    render_scene_init(s, b, &c, &T);
    s->seed = seed;
    s->blur_sigma_px = 0.8;
    s->noise_sigma = 2.0;
    s->gain_min = 0.7;
    s->gain_max = 1.2;
    s->gain_angle_deg = rng_range(&r, 0, 360);
    s->vignetting = 0.2;
    s->clutter = 40;
}
