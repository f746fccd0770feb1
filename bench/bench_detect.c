/*
 * bench_detect.c - benchmark of chessboard detection (tram_detect_chessboard)
 * against the PNG decode of the same image: the 5 MP scene of the test
 * renderer (render_scene_5mp: an oblique 15 x 10 board, k1 -0.08, blur,
 * noise, uneven light, clutter) and boards drawn with cairo (rotated,
 * sheared, with clutter and Gaussian noise), each written as an 8-bit grey
 * PNG, then timed (median of repeats) for
 *   decode:  libpng reading the file to 8-bit rows, converted to float grey
 *            levels (what reading a grey PNG into a tram_grey_image costs);
 *   detect:  tram_detect_chessboard on that image, 1 thread and the default.
 * Target (docs/images.md): a 5 MP image in under ~100 ms on two cores and no
 * more than 2x its decode.  Writes a JSON array to argv[1].  A benchmark,
 * not a test: `make bench`.
 */
#include <math.h>
#include <png.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cairo.h>

#include "tram/tram.h"
#include "bench_util.h"
#include "render/render.h"

/* A cols x rows board (black square at corner 0's -x,-y side) with squares
 * of sq pixels, turned by `angle`, on a cluttered background; grey levels
 * 0..255 with noise sigma 2. */
static unsigned char *draw(int W, int H, int cols, int rows, double sq, double angle)
{
    cairo_surface_t *s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, W, H);
    cairo_t *cr = cairo_create(s);
    cairo_set_source_rgb(cr, 0.45, 0.45, 0.45);
    cairo_paint(cr);
    for (int i = 0; i < 40; i++) {
        double g = uniform();
        cairo_set_source_rgb(cr, g, g, g);
        cairo_rectangle(cr, uniform() * W, uniform() * H, 20 + uniform() * 0.2 * W, 20 + uniform() * 0.2 * H);
        cairo_fill(cr);
    }
    cairo_translate(cr, 0.5 * W, 0.5 * H);
    cairo_rotate(cr, angle);
    cairo_matrix_t shear = {1.0, 0.0, 0.15, 0.9, 0.0, 0.0};
    cairo_transform(cr, &shear);
    cairo_scale(cr, sq, sq);
    cairo_translate(cr, -0.5 * (cols - 1), -0.5 * (rows - 1));
    cairo_set_source_rgb(cr, 0.9, 0.9, 0.9);
    cairo_rectangle(cr, -2, -2, cols + 3, rows + 3);
    cairo_fill(cr);
    cairo_set_source_rgb(cr, 0.1, 0.1, 0.1);
    for (int b = -1; b < rows; b++)
        for (int a = -1; a < cols; a++)
            if (((a + b) & 1) == 0) cairo_rectangle(cr, a, b, 1, 1);
    cairo_fill(cr);
    cairo_destroy(cr);
    cairo_surface_flush(s);
    unsigned char *grey = malloc((size_t)W * (size_t)H);
    const unsigned char *data = cairo_image_surface_get_data(s);
    int stride = cairo_image_surface_get_stride(s);
    for (int y = 0; y < H; y++)
        for (int x = 0; x < W; x++) {
            const unsigned char *p = data + (size_t)y * (size_t)stride + 4 * (size_t)x;
            double v = p[1] + 2.0 * normal();
            grey[(size_t)y * (size_t)W + (size_t)x] = (unsigned char)(v < 0 ? 0 : v > 255 ? 255 : v + 0.5);
        }
    cairo_surface_destroy(s);
    return grey;
}

static int write_png(const char *path, const unsigned char *grey, int W, int H)
{
    FILE *f = fopen(path, "wb");
    if (!f) return -1;
    png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png_create_info_struct(png);
    if (setjmp(png_jmpbuf(png))) {
        fclose(f);
        return -1;
    }
    png_init_io(png, f);
    png_set_IHDR(png, info, (png_uint_32)W, (png_uint_32)H, 8, PNG_COLOR_TYPE_GRAY, PNG_INTERLACE_NONE,
                 PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
    png_write_info(png, info);
    for (int y = 0; y < H; y++) png_write_row(png, grey + (size_t)y * (size_t)W);
    png_write_end(png, NULL);
    png_destroy_write_struct(&png, &info);
    fclose(f);
    return 0;
}

/* Decode the grey PNG to float grey levels (into px, W*H). */
static int decode_png(const char *path, float *px, int W, int H)
{
    FILE *f = fopen(path, "rb");
    if (!f) return -1;
    png_structp png = png_create_read_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png_create_info_struct(png);
    unsigned char *row = malloc((size_t)W);
    if (setjmp(png_jmpbuf(png))) {
        fclose(f);
        free(row);
        return -1;
    }
    png_init_io(png, f);
    png_read_info(png, info);
    if ((int)png_get_image_width(png, info) != W || (int)png_get_image_height(png, info) != H) longjmp(png_jmpbuf(png), 1);
    for (int y = 0; y < H; y++) {
        png_read_row(png, row, NULL);
        float *o = px + (size_t)y * (size_t)W;
        for (int x = 0; x < W; x++) o[x] = row[x];
    }
    png_read_end(png, NULL);
    png_destroy_read_struct(&png, &info, NULL);
    fclose(f);
    free(row);
    return 0;
}

static int cmp_d(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double median(double *v, int n)
{
    qsort(v, (size_t)n, sizeof *v, cmp_d);
    return v[n / 2];
}

#define REPS 9

/* Time the decode of path and the detection of a cols x rows board in it. */
static void bench_file(FILE *out, const char *path, const char *scene, int W, int H, int cols, int rows,
                       double sq, int last)
{
    float *px = malloc((size_t)W * (size_t)H * sizeof *px);
    double dec[REPS], det1[REPS], det[REPS];
    for (int k = 0; k < REPS; k++) {
        double t0 = now();
        if (decode_png(path, px, W, H) != 0) exit(1);
        dec[k] = now() - t0;
    }
    tram_grey_image im = {(size_t)W, (size_t)H, px};
    tram_board b = {TRAM_BOARD_CHESSBOARD, cols, rows, 20.0, TRAM_LENGTH_MM};
    tram_detect_options opt;
    tram_detect_options_init(&opt);
    int found = 1;
    for (int pass = 0; pass < 2; pass++) {
        opt.threads = pass == 0 ? 1 : 0;
        for (int k = 0; k < REPS; k++) {
            tram_detection *d;
            tram_error e;
            double t0 = now();
            if (tram_detect_chessboard(&im, &b, &opt, &d, &e) != TRAM_OK) exit(1);
            (pass == 0 ? det1 : det)[k] = now() - t0;
            if (!d->found) {
                if (found) fprintf(stderr, "bench: board not found: %s\n", d->reason);
                found = 0;
            }
            tram_detection_destroy(d);
        }
    }
    double md = median(dec, REPS), m1 = median(det1, REPS), m = median(det, REPS);
    printf("%s %dx%d (%.1f MP), %dx%d corners, %.0f px squares: PNG decode %.1f ms, detect %.1f ms "
           "(1 thread %.1f ms), detect/decode %.2f%s\n",
           scene, W, H, W * (double)H * 1e-6, cols, rows, sq, 1e3 * md, 1e3 * m, 1e3 * m1, m / md,
           found ? "" : " [NOT FOUND]");
    fprintf(out,
            "  {\"name\": \"detect_chessboard_%s\", \"n\": %d, \"width\": %d, \"height\": %d, "
            "\"seconds\": %.6g, \"seconds_1_thread\": %.6g, \"decode_seconds\": %.6g, "
            "\"ratio_vs_decode\": %.4g, \"found\": %s}%s\n",
            scene, W * H, W, H, m, m1, md, m / md, found ? "true" : "false", last ? "" : ",");
    remove(path);
    free(px);
}

static void bench_cairo(FILE *out, const char *dir, int W, int H, int cols, int rows, double sq, int last)
{
    char path[512];
    snprintf(path, sizeof path, "%s/bench_detect_%dx%d.png", dir, W, H);
    unsigned char *grey = draw(W, H, cols, rows, sq, 0.35);
    if (write_png(path, grey, W, H) != 0) {
        fprintf(stderr, "bench: cannot write %s\n", path);
        exit(1);
    }
    free(grey);
    bench_file(out, path, "cairo", W, H, cols, rows, sq, last);
}

static void bench_render_5mp(FILE *out, const char *dir)
{
    char path[512];
    snprintf(path, sizeof path, "%s/bench_detect_5mp.png", dir);
    tram_board b = {TRAM_BOARD_CHESSBOARD, 15, 10, 20.0, TRAM_LENGTH_MM};
    render_scene s;
    render_scene_5mp(&b, 20261202, &s);
    tram_grey_image *im = NULL;
    render_truth t;
    tram_error e;
    if (render_chessboard(&s, &im, &t, &e) != TRAM_OK || render_png_write(im, path, &e) != TRAM_OK) {
        fprintf(stderr, "bench: render: %s\n", e.message);
        exit(1);
    }
    double sq = t.square_px;
    render_image_destroy(im);
    render_truth_free(&t);
    bench_file(out, path, "render_5mp", (int)s.camera.width, (int)s.camera.height, b.cols, b.rows, sq, 0);
}

int main(int argc, char **argv)
{
    const char *json = argc > 1 ? argv[1] : "build/bench_detect.json";
    const char *dir = argc > 2 ? argv[2] : "build";
    bench_state = 20261202;
    FILE *out = fopen(json, "w");
    if (!out) return 1;
    fprintf(out, "[\n");
    bench_render_5mp(out, dir);
    bench_cairo(out, dir, 1280, 960, 9, 6, 60, 0);
    bench_cairo(out, dir, 2592, 1944, 15, 10, 70, 0);
    bench_cairo(out, dir, 2592, 1944, 29, 20, 30, 1);
    fprintf(out, "]\n");
    fclose(out);
    return 0;
}
