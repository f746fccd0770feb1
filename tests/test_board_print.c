/*
 * test_board_print.c - the printable board (src/plot/board_print.c) and
 * the detection pictures (src/plot/detect_plot.c), checked on pixels.
 *
 * The board PNG is read back with tram's own image reader and measured:
 * the pattern must be (cols + 1) squares of the board's size at the given
 * resolution (1 in = 25.4 mm), the square at corner 0's -x,-y side (the
 * top-left one on the page) black and the colours alternating, a white
 * quiet zone of one square around the pattern, and the resolution in the
 * PNG's pHYs chunk.  Page sizes: A4 210 x 297 mm (ISO 216), US letter
 * 8.5 x 11 in.
 */
#include "test_util.h"

#include <png.h>
#include <unistd.h>

static void test_pages(void **state)
{
    (void)state;
    tram_plot_page p;
    tram_error err;
    assert_int_equal(tram_plot_page_parse("a4", &p, &err), TRAM_OK);
    assert_true(p.width_mm == 210 && p.height_mm == 297 && p.named);
    assert_int_equal(tram_plot_page_parse("letter", &p, &err), TRAM_OK);
    assert_true(fabs(p.width_mm - 215.9) < 1e-12 && fabs(p.height_mm - 279.4) < 1e-12);
    assert_int_equal(tram_plot_page_parse("420x297", &p, &err), TRAM_OK);
    assert_true(p.width_mm == 420 && p.height_mm == 297 && !p.named);
    assert_int_equal(tram_plot_page_parse("a5", &p, &err), TRAM_EINPUT);
    assert_int_equal(tram_plot_page_parse("10x10", &p, &err), TRAM_EINPUT);
    assert_int_equal(tram_plot_page_parse("300x", &p, &err), TRAM_EINPUT);
    assert_int_equal(tram_plot_page_parse("300x200mm", &p, &err), TRAM_EINPUT);
    tram_board b;
    assert_int_equal(tram_board_init(&b, 9, 6, 25, TRAM_LENGTH_MM, &err), TRAM_OK);
    assert_int_equal(tram_plot_page_parse("a4", &p, &err), TRAM_OK);
    assert_int_equal(tram_plot_board_check_page(&b, &p, &err), TRAM_EINPUT);
    assert_non_null(strstr(err.message, "needs 312.0 x 261.0 mm"));
    assert_non_null(strstr(err.message, "the page is 210.0 x 297.0 mm (landscape tried too)"));
    assert_int_equal(tram_plot_page_parse("420x297", &p, &err), TRAM_OK);
    assert_int_equal(tram_plot_board_check_page(&b, &p, &err), TRAM_OK);
    b.rows = 7; /* symmetric: refused by the drawing too */
    assert_int_equal(tram_plot_board_write_pdf(&b, &p, "/nonexistent/x.pdf", 0, &err), TRAM_EINPUT);
    assert_non_null(strstr(err.message, "symmetric"));
}

/* Sub-pixel position where row y crosses grey level 128 going from x0 in
 * direction dir (+1/-1); -1 when it does not. */
static double crossing(const tram_grey_image *im, size_t y, double x0, int dir)
{
    const float *row = im->pixels + y * im->width;
    for (long x = (long)x0; x + dir >= 0 && x + dir < (long)im->width; x += dir) {
        float a = row[x], c = row[x + dir];
        if ((a - 128) * (c - 128) <= 0 && a != c) return (double)x + (double)dir * (a - 128.0) / (double)(a - c);
    }
    return -1;
}

static void test_board_png(void **state)
{
    (void)state;
    char dir[] = "/tmp/tram-test-board-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char path[128];
    snprintf(path, sizeof path, "%s/b.png", dir);
    tram_board b;
    tram_plot_page p;
    tram_error err;
    tram_error_clear(&err);
    assert_int_equal(tram_board_init(&b, 9, 6, 18, TRAM_LENGTH_MM, &err), TRAM_OK);
    assert_int_equal(tram_plot_page_parse("a4", &p, &err), TRAM_OK);
    const double dpi = 100, sq = 18 / 25.4 * dpi; /* 70.866 px */
    if (tram_plot_board_write_png(&b, &p, dpi, path, 0, &err) != TRAM_OK) fail_msg("%s", err.message);
    assert_int_equal(tram_plot_board_write_png(&b, &p, dpi, path, 0, &err), TRAM_EINPUT); /* exists */
    tram_grey_image *im = NULL;
    assert_int_equal(tram_grey_image_read_file(path, &im, &err), TRAM_OK);
    /* A4 landscape at 100 dpi: ceil(297 / 25.4 * 100) x ceil(210 / 25.4 * 100) */
    assert_int_equal(im->width, 1170);
    assert_int_equal(im->height, 827);
    /* the first row of squares: find the pattern's top edge in the column
     * through the page's centre, then measure the row half a square lower */
    size_t top = 0;
    for (size_t y = 0; y < im->height && !top; y++)
        for (size_t x = im->width / 4; x < 3 * im->width / 4; x++)
            if (im->pixels[y * im->width + x] < 128) {
                top = y;
                break;
            }
    assert_true(top > 0);
    size_t y1 = top + (size_t)(sq / 2);
    double left = crossing(im, y1, 0, +1), right = crossing(im, y1, (double)im->width - 1, -1);
    /* the first row starts black and ends white (10 squares): its dark span
     * is 9 squares wide */
    double span = right - left, want = 9 * sq;
    printf("[ board    ] 9x6 at 18 mm, 100 dpi: first row's dark span %.2f px, expected %.2f\n", span, want);
    assert_true(fabs(span - want) < 1.0);
    for (int i = 0; i < 10; i++) {
        float v = im->pixels[y1 * im->width + (size_t)(left + (i + 0.5) * sq)];
        if ((i % 2 == 0) != (v < 64)) fail_msg("square %d of the first row: grey %g", i, (double)v);
    }
    /* white around the pattern, one square wide (the first row's left edge
     * is the pattern's left edge, its top the pattern's top) */
    double pw = 10 * sq, ph = 7 * sq;
    for (double y = (double)top - sq + 2; y < (double)top + ph + sq - 2; y += 1)
        for (double x = left - sq + 2; x < left + pw + sq - 2; x += 1) {
            int inside = x > left - 2 && x < left + pw + 2 && y > (double)top - 2 && y < (double)top + ph + 2;
            if (!inside && im->pixels[(size_t)y * im->width + (size_t)x] < 250)
                fail_msg("quiet zone not white at (%g, %g)", x, y);
        }
    tram_grey_image_destroy(im);
    /* the resolution in pHYs: 100 / 0.0254 = 3937 pixels per metre */
    FILE *f = fopen(path, "rb");
    assert_non_null(f);
    png_structp png = png_create_read_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png_create_info_struct(png);
    if (setjmp(png_jmpbuf(png))) fail_msg("libpng could not read the board PNG");
    png_init_io(png, f);
    png_read_info(png, info);
    png_uint_32 rx = 0, ry = 0;
    int unit = -1;
    assert_true(png_get_pHYs(png, info, &rx, &ry, &unit) != 0);
    assert_int_equal(rx, 3937);
    assert_int_equal(ry, 3937);
    assert_int_equal(unit, PNG_RESOLUTION_METER);
    png_destroy_read_struct(&png, &info, NULL);
    fclose(f);
    unlink(path);
    snprintf(path, sizeof path, "%s/b.pdf", dir);
    assert_int_equal(tram_plot_board_write_pdf(&b, &p, path, 0, &err), TRAM_OK);
    f = fopen(path, "rb");
    char head[5] = {0};
    assert_int_equal(fread(head, 1, 4, f), 4);
    fclose(f);
    assert_string_equal(head, "%PDF");
    unlink(path);
    rmdir(dir);
}

static int is_orange(unsigned int p)
{
    int r = (int)((p >> 16) & 255), g = (int)((p >> 8) & 255), bl = (int)(p & 255);
    return r > 200 && g > 130 && g < 180 && bl < 40;
}
static int is_red(unsigned int p)
{
    int r = (int)((p >> 16) & 255), g = (int)((p >> 8) & 255), bl = (int)(p & 255);
    return r > 180 && g < 60 && bl < 60;
}

static void test_pictures(void **state)
{
    (void)state;
    tram_board b;
    tram_error err;
    assert_int_equal(tram_board_init(&b, 9, 6, 18, TRAM_LENGTH_MM, &err), TRAM_OK);
    tram_grey_image *im = NULL;
    assert_int_equal(tram_grey_image_create(800, 600, &im, &err), TRAM_OK);
    for (size_t i = 0; i < 800 * 600; i++) im->pixels[i] = 128;
    tram_detection d;
    memset(&d, 0, sizeof d);
    double uv[2 * 54];
    for (int r = 0; r < 6; r++)
        for (int c = 0; c < 9; c++) {
            uv[2 * (r * 9 + c)] = 100 + 50 * c;
            uv[2 * (r * 9 + c) + 1] = 120 + 50 * r;
        }
    d.found = 1;
    d.ncorners = d.nseen = 54;
    d.uv = uv;
    d.sharpness = 0.7;
    tram_image *pic = NULL;
    assert_int_equal(tram_plot_detection(im, &b, &d, "test", &pic, &err), TRAM_OK);
    assert_int_equal(pic->width, 800); /* 640 .. 1600: drawn 1:1 */
    /* pixel (u, v) at ((u + 0.5), 36 + (v + 0.5)): corner 0 ringed orange
     * (radius 9), the x arrow red along the first row */
    int ring = 0, arrow = 0;
    for (int a = 0; a < 360; a += 10) {
        double x = 100.5 + 9 * cos(a * M_PI / 180), y = 36 + 120.5 + 9 * sin(a * M_PI / 180);
        ring += is_orange(tram_image_pixel(pic, (int)lround(x), (int)lround(y)));
    }
    for (int x = 120; x < 230; x += 5) arrow += is_red(tram_image_pixel(pic, x, 36 + 120));
    printf("[ pictures ] corner 0 ring: %d of 36 samples orange; x arrow: %d of 22 samples red\n", ring, arrow);
    assert_true(ring >= 24);
    assert_true(arrow >= 20);
    tram_image_destroy(pic);
    /* coverage: the cell holding corner 0 (cell 1 of 8 across, 1 of 6 down) shaded */
    const tram_detection *dets[1] = {&d};
    tram_plot_coverage_data cd = {800, 600, 1, dets, &b, NULL};
    assert_int_equal(tram_plot_coverage(&cd, &pic, &err), TRAM_OK);
    /* frame at (20, 36), 100 x 100 picture pixels a cell */
    unsigned int shaded = tram_image_pixel(pic, 20 + 180, 36 + 104);  /* cell (1, 1), off the marks */
    unsigned int empty = tram_image_pixel(pic, 20 + 780, 36 + 580);   /* cell (7, 5) */
    assert_true((shaded & 255) > ((shaded >> 16) & 255) + 30);        /* light blue  */
    assert_true((empty & 255) == ((empty >> 16) & 255) && (empty & 255) > 220); /* light grey */
    tram_image_destroy(pic);
    d.found = 0;
    d.uv = NULL;
    d.ncorners = 0;
    snprintf(d.reason, sizeof d.reason, "no board");
    assert_int_equal(tram_plot_detection(im, &b, &d, NULL, &pic, &err), TRAM_OK);
    tram_image_destroy(pic);
    tram_grey_image_destroy(im);
    tram_plot_shutdown();
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_pages),
        cmocka_unit_test(test_board_png),
        cmocka_unit_test(test_pictures),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
