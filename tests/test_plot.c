/* test_plot.c - tests of plot.c: rendered in memory and checked on pixels;
 * the PNG written is read back with libpng. */
#include "test_util.h"

#include <png.h>
#include <unistd.h>

static int red(unsigned int p) { return (int)((p >> 16) & 255); }
static int green(unsigned int p) { return (int)((p >> 8) & 255); }
static int blue(unsigned int p) { return (int)(p & 255); }

/* Any pixel within r of (x, y) matching the colour test. */
static int near_colour(const tram_image *img, double x, double y, int r, int (*ok)(unsigned int))
{
    for (int dy = -r; dy <= r; dy++)
        for (int dx = -r; dx <= r; dx++)
            if (ok(tram_image_pixel(img, (int)x + dx, (int)y + dy))) return 1;
    return 0;
}
static int is_red(unsigned int p) { return red(p) > 180 && green(p) < 80 && blue(p) < 80; }
static int is_green(unsigned int p) { return green(p) > 130 && red(p) < 80 && blue(p) < 80; }
static int is_vermillion(unsigned int p) { return red(p) > 190 && green(p) > 70 && green(p) < 120 && blue(p) < 40; }
static int is_bar_blue(unsigned int p) { return red(p) < 30 && green(p) > 90 && green(p) < 140 && blue(p) > 150; }

static void test_frames_projection_and_triads(void **state)
{
    (void)state;
    tram_se3 F[2];
    tram_se3_identity(&F[0]);
    tram_se3_identity(&F[1]);
    F[0].m[0][3] = 500;
    F[0].m[1][3] = 200;
    F[0].m[2][3] = 300;
    F[1].m[0][3] = -300;
    F[1].m[1][3] = 100;
    F[1].m[2][3] = 600;
    const char *ids[2] = {"a", "b"};
    int outl[2] = {0, 1};
    tram_plot_frames_data d = {2, F, ids, outl, TRAM_SETUP_EYE_IN_HAND, 0, F[0], F[0], NULL, 0,
                               TRAM_LENGTH_MM, NULL};
    tram_image *img;
    tram_error e;
    assert_int_equal(tram_plot_frames(&d, 1600, 1000, &img, &e), TRAM_OK);
    assert_int_equal(img->width, 1600);
    assert_int_equal(img->height, 1000);
    /* Station a's flange: in the top view at the projected pixel, with its
     * x axis (red) drawn to the right and its y axis (green) upwards. */
    double px, py, qx, qy;
    double pa[3] = {500, 200, 300};
    tram_plot_frames_project(&d, 1600, 1000, TRAM_VIEW_TOP, pa, &px, &py);
    assert_true(px > 0 && px < 800 && py > 60 && py < 530); /* top-left quadrant */
    double pax[3] = {540, 200, 300}, pay[3] = {500, 240, 300};
    tram_plot_frames_project(&d, 1600, 1000, TRAM_VIEW_TOP, pax, &qx, &qy);
    assert_true(qx > px && fabs(qy - py) < 1e-9); /* x to the right */
    assert_true(near_colour(img, 0.5 * (px + qx), py, 2, is_red));
    tram_plot_frames_project(&d, 1600, 1000, TRAM_VIEW_TOP, pay, &qx, &qy);
    assert_true(qy < py); /* y up */
    assert_true(near_colour(img, px, 0.5 * (py + qy), 2, is_green));
    /* The outlier station b is ringed in vermillion. */
    double pb[3] = {-300, 100, 600};
    tram_plot_frames_project(&d, 1600, 1000, TRAM_VIEW_FRONT, pb, &px, &py);
    assert_true(px > 800); /* front view: top-right quadrant */
    int found = 0;
    for (int a = 0; a < 360 && !found; a += 5)
        for (double rr = 5; rr < 80 && !found; rr += 1)
            found = is_vermillion(tram_image_pixel(img, (int)(px + rr * cos(a * M_PI / 180)),
                                                   (int)(py + rr * sin(a * M_PI / 180))));
    assert_true(found);
    tram_image_destroy(img);
    tram_image_destroy(NULL);
}

static void test_residual_bars_and_png(void **state)
{
    (void)state;
    const char *ids[4] = {"s1", "s2", "s3", "s4"};
    double rot[4] = {0.1, 0.12, 2.0, 0.09}, tr[4] = {0.2, 0.25, 5.0, 0.18};
    int outl[4] = {0, 0, 1, 0};
    tram_plot_residuals_data d = {4, ids, rot, tr, NULL, outl, 0.5, 1.0, TRAM_LENGTH_MM, NULL};
    tram_image *img;
    tram_error e;
    assert_int_equal(tram_plot_residuals(&d, 1600, 1000, &img, &e), TRAM_OK);
    /* plot area x 90 .. 1570, 4 bars: bar 3 (the outlier) is vermillion at
     * the middle of its slot, bar 1 blue; near the bottom of the top panel */
    double bw = (1600 - 90 - 30) / 4.0, ybottom = 80 + (1000 - 80 - 180) / 2.0 - 3;
    assert_true(is_vermillion(tram_image_pixel(img, (int)(90 + 2.5 * bw), (int)ybottom)));
    assert_true(is_bar_blue(tram_image_pixel(img, (int)(90 + 0.5 * bw), (int)ybottom)));
    /* PNG valid: read back with libpng */
    char path[] = "/tmp/tram_plot_XXXXXX";
    int fd = mkstemp(path);
    close(fd);
    unlink(path);
    assert_int_equal(tram_image_write_png(img, path, 0, &e), TRAM_OK);
    assert_int_equal(tram_image_write_png(img, path, 0, &e), TRAM_EINPUT); /* no overwrite */
    FILE *f = fopen(path, "rb");
    assert_non_null(f);
    unsigned char sig[8];
    assert_int_equal(fread(sig, 1, 8, f), 8);
    assert_int_equal(png_sig_cmp(sig, 0, 8), 0);
    png_structp png = png_create_read_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png_create_info_struct(png);
    if (setjmp(png_jmpbuf(png))) fail_msg("libpng could not read the PNG");
    png_init_io(png, f);
    png_set_sig_bytes(png, 8);
    png_read_info(png, info);
    assert_int_equal(png_get_image_width(png, info), 1600);
    assert_int_equal(png_get_image_height(png, info), 1000);
    png_destroy_read_struct(&png, &info, NULL);
    fclose(f);
    unlink(path);
    tram_image_destroy(img);
}

static void test_history_and_points(void **state)
{
    (void)state;
    double t[3] = {1.7e9, 1.7e9 + 86400 * 10, 1.7e9 + 86400 * 20}, tr[3] = {0.1, 0.2, 1.5},
           rot[3] = {0.01, 0.02, 0.4};
    int alarm[3] = {0, 0, 1};
    tram_plot_history_data h = {3, t, tr, rot, alarm, 0.5, 0.1, TRAM_LENGTH_MM, NULL};
    tram_image *img;
    tram_error e;
    assert_int_equal(tram_plot_history(&h, 1600, 1000, &img, &e), TRAM_OK);
    /* the last check (an alarm) is a vermillion dot at the right end */
    assert_true(near_colour(img, 90 + 1470, 80 + 3, 8, is_vermillion) ||
                near_colour(img, 1560, 100, 30, is_vermillion));
    tram_image_destroy(img);
    const char *ids[3] = {"p1", "p2", "p3"};
    double res[3] = {0.1, 3.0, 0.2};
    int outl[3] = {0, 1, 0};
    assert_int_equal(tram_plot_points(3, ids, res, outl, 1.0, TRAM_LENGTH_MM, NULL, 1200, 800, &img, &e), TRAM_OK);
    double bw = (1200 - 120.0) / 3.0;
    assert_true(is_vermillion(tram_image_pixel(img, (int)(90 + 1.5 * bw), 80 + 800 - 170 - 3)));
    tram_image_destroy(img);
    assert_int_equal(tram_plot_points(3, ids, res, outl, 1.0, TRAM_LENGTH_MM, NULL, 10, 10, &img, &e), TRAM_EINPUT);
}

static int teardown(void **state)
{
    (void)state;
    tram_plot_shutdown(); /* cairo's and fontconfig's static data, for leak checks */
    return 0;
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_frames_projection_and_triads),
                                       cmocka_unit_test(test_residual_bars_and_png),
                                       cmocka_unit_test(test_history_and_points)};
    return cmocka_run_group_tests(tests, NULL, teardown);
}
