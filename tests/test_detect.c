/*
 * test_detect.c - chessboard detection (tram_detect_chessboard) on the test
 * renders of tools/render/ (invented scenes: a board seen by the pinhole
 * camera with Brown-Conrady distortion, blurred, unevenly lit, noisy,
 * with clutter and occluders).
 *
 * The outside reference for the accuracy is the renderer's analytic
 * corner positions: the projection of board point (c s, r s, 0) by the
 * published pinhole and Brown-Conrady model (Brown 1966, "Decentering
 * distortion of lenses"), computed by tram_camera_project independently of
 * the detector (tests/ref/check_render_numpy.py checks those against NumPy).
 * Seeds are fixed and printed; the figures (RMS error, detection counts,
 * reasons) are printed.
 */
#include "test_util.h"

#include "render/render.h"

static tram_board board_of(int cols, int rows)
{
    tram_board b = {TRAM_BOARD_CHESSBOARD, cols, rows, 25.0, TRAM_LENGTH_MM};
    return b;
}

static tram_camera camera_of(size_t w, size_t h, double f, double k1)
{
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.width = w;
    c.height = h;
    c.fx = c.fy = f;
    c.cx = 0.5 * (double)(w - 1) + 2.3;
    c.cy = 0.5 * (double)(h - 1) - 1.7;
    c.k1 = k1;
    c.distortion = k1 != 0 ? TRAM_DISTORTION_RADIAL2 : TRAM_DISTORTION_NONE;
    return c;
}

/* A scene of b seen by c with squares of about sq_px pixels, the board's
 * centre at normalised image point (ox, oy), tilted and rolled (degrees);
 * blur 0.6 px, the given noise, 64 lattice samples at mixed pixels. */
static render_scene scene_of(const tram_board *b, const tram_camera *c, double sq_px, double ox,
                             double oy, double tilt, double tilt_dir, double roll, double noise,
                             unsigned long long seed)
{
    tram_se3 T;
    render_pose_facing(b, c->fx * b->square / sq_px, ox, oy, tilt, tilt_dir, roll, &T);
    render_scene s;
    render_scene_init(&s, b, c, &T);
    s.blur_sigma_px = 0.6;
    s.noise_sigma = noise;
    s.supersample = 8;
    s.seed = seed;
    return s;
}

/* Detect the board of s in im; returns 1 when found, with the RMS and max
 * error (pixels) against the true corners t; the reason otherwise. */
static int detect(const tram_grey_image *im, const render_truth *t, const tram_board *b,
                  double min_sq, double *rms, double *maxe, char *reason, size_t rlen)
{
    tram_detect_options opt;
    tram_detect_options_init(&opt);
    opt.min_square_px = min_sq;
    tram_detection *d = NULL;
    tram_error err;
    assert_int_equal(tram_detect_chessboard(im, b, &opt, &d, &err), TRAM_OK);
    int found = d->found;
    snprintf(reason, rlen, "%s", d->reason);
    *rms = *maxe = 0;
    if (found) {
        assert_int_equal(d->ncorners, t->ncorners);
        assert_int_equal(d->nseen, t->ncorners);
        assert_string_equal(d->reason, "");
        double ss = 0;
        for (size_t i = 0; i < t->ncorners; i++) {
            double e = hypot(d->uv[2 * i] - t->uv[2 * i], d->uv[2 * i + 1] - t->uv[2 * i + 1]);
            ss += e * e;
            if (e > *maxe) *maxe = e;
        }
        *rms = sqrt(ss / (double)t->ncorners);
        assert_true(d->sharpness > 0.3 && d->sharpness < 3.0);
    } else {
        assert_int_equal(d->ncorners, 0);
        assert_null(d->uv);
        assert_true(d->reason[0] != '\0');
    }
    tram_detection_destroy(d);
    return found;
}

static tram_grey_image *render_or_fail(const render_scene *s, render_truth *t)
{
    tram_grey_image *im = NULL;
    tram_error err;
    if (render_chessboard(s, &im, t, &err) != TRAM_OK) fail_msg("render: %s", err.message);
    if (t->ninside != t->ncorners || !t->front) fail_msg("the scene does not show the whole board");
    return im;
}

/* Detect in im; fail unless found with every corner (in the board's order)
 * within tol pixels of t.  Adds the squared errors to *ss, *n. */
static void expect_found_in(const char *what, const tram_grey_image *im, const render_truth *t,
                            const tram_board *b, double min_sq, double tol, double *ss, size_t *n)
{
    double rms, mx;
    char why[256];
    if (!detect(im, t, b, min_sq, &rms, &mx, why, sizeof why)) fail_msg("%s: not found: %s", what, why);
    printf("[ figures  ] %s: found, RMS %.4f px, max %.4f px\n", what, rms, mx);
    if (!(mx <= tol)) fail_msg("%s: max error %.3g px (tol %g)", what, mx, tol);
    if (ss) {
        *ss += rms * rms * (double)t->ncorners;
        *n += t->ncorners;
    }
}

static void expect_found(const char *what, const render_scene *s, double min_sq, double tol)
{
    render_truth t;
    tram_grey_image *im = render_or_fail(s, &t);
    expect_found_in(what, im, &t, &s->board, min_sq, tol, NULL, NULL);
    render_image_destroy(im);
    render_truth_free(&t);
}

/* Gaussian noise of sigma grey levels (Box and Muller 1958), clipped to
 * 0 .. 255 as the renderer does, into a copy of im. */
static tram_grey_image *noisy_copy(const tram_grey_image *im, double sigma, test_rng *rng)
{
    tram_grey_image *o = render_image_create(im->width, im->height);
    for (size_t i = 0; i < im->width * im->height; i++) {
        double v = im->pixels[i] + sigma * test_rng_normal(rng);
        o->pixels[i] = (float)(v < 0 ? 0 : v > 255 ? 255 : v);
    }
    return o;
}

/* 1280 x 960, blur 0.6 px: RMS <= 0.02 px without noise, <= 0.05 px with
 * noise sigma 2 grey levels, over 4 poses. */
static void test_accuracy(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_accuracy (noise; scene seeds 101..104)", 20261202);
    tram_board b = board_of(9, 6);
    tram_camera c = camera_of(1280, 960, 1100, 0.0);
    static const double pose[4][5] = {
        {55, 12, 20, 30, 0.02}, {65, 25, 110, -15, -0.05}, {75, 35, 200, 40, 0.04}, {60, 5, 300, -35, 0.0}};
    double ss[2] = {0, 0};
    size_t n[2] = {0, 0};
    for (int k = 0; k < 4; k++) {
        render_scene s = scene_of(&b, &c, pose[k][0], pose[k][4], -pose[k][4], pose[k][1], pose[k][2],
                                  pose[k][3], 0.0, 101 + (unsigned long long)k);
        render_truth t;
        tram_grey_image *im = render_or_fail(&s, &t);
        for (int noisy = 0; noisy < 2; noisy++) {
            tram_grey_image *use = noisy ? noisy_copy(im, 2.0, &rng) : im;
            char what[96];
            snprintf(what, sizeof what, "noise %d, %.0f px squares, tilt %.0f deg, roll %.0f deg", noisy ? 2 : 0,
                     pose[k][0], pose[k][1], pose[k][3]);
            expect_found_in(what, use, &t, &b, 12, noisy ? 0.2 : 0.08, &ss[noisy], &n[noisy]);
            if (noisy) render_image_destroy(use);
        }
        render_image_destroy(im);
        render_truth_free(&t);
    }
    for (int noisy = 0; noisy < 2; noisy++) {
        double rms = sqrt(ss[noisy] / (double)n[noisy]);
        printf("[ figures  ] 1280x960, blur 0.6 px, noise sigma %d: RMS corner error %.4f px over %zu corners "
               "(target %.2f)\n", noisy ? 2 : 0, rms, n[noisy], noisy ? 0.05 : 0.02);
        assert_true(rms <= (noisy ? 0.05 : 0.02));
    }
}

static void test_order(void **state)
{
    (void)state;
    printf("[ seed     ] test_order: scene seeds 200..215\n");
    /* quarter turns of the board, both parities of cols, a near-square board */
    static const int dims[4][2] = {{9, 6}, {6, 9}, {7, 8}, {5, 4}};
    tram_camera c = camera_of(360, 280, 400, 0.0);
    for (int k = 0; k < 4; k++)
        for (int q = 0; q < 4; q++) {
            tram_board b = board_of(dims[k][0], dims[k][1]);
            double roll = q * 90 + 3 * k - 4;
            render_scene s = scene_of(&b, &c, 22, 0.02, -0.03, 20, 40 * q, roll, 1.0,
                                      200 + (unsigned long long)(4 * k + q));
            char what[64];
            snprintf(what, sizeof what, "%d x %d, roll %.0f deg", dims[k][0], dims[k][1], roll);
            expect_found(what, &s, 12, 0.15);
        }
}

static void test_tilt(void **state)
{
    (void)state;
    printf("[ seed     ] test_tilt: scene seeds 300..303\n");
    tram_board b = board_of(9, 6);
    tram_camera c = camera_of(800, 600, 700, 0.0);
    for (int k = 0; k < 4; k++) {
        double dir = 45.0 * k, roll = 23.0 * k - 40;
        render_scene s = scene_of(&b, &c, 40, 0, 0, 60, dir, roll, 2.0, 300 + (unsigned long long)k);
        char what[64];
        snprintf(what, sizeof what, "tilt 60 deg toward %.0f deg, roll %.0f", dir, roll);
        expect_found(what, &s, 12, 0.25);
    }
}

/* Beyond the 60 degrees asked for: at 70 degrees the far corners' edge
 * lines crowd together; a corner is still located, or the board is not
 * found - never found with a misplaced corner. */
static void test_steep(void **state)
{
    (void)state;
    printf("[ seed     ] test_steep: scene seed 310\n");
    tram_board b = board_of(9, 6);
    tram_camera c = camera_of(800, 600, 700, 0.0);
    render_scene s = scene_of(&b, &c, 40, 0.01, 0.02, 70, 30, 10, 2.0, 310);
    render_truth t;
    tram_grey_image *im = render_or_fail(&s, &t);
    double rms, mx;
    char why[256];
    int f = detect(im, &t, &b, 12, &rms, &mx, why, sizeof why);
    printf("[ figures  ] tilt 70 deg: %s, RMS %.4f px, max %.4f px %s\n", f ? "found" : "not found", rms, mx, why);
    if (f) assert_true(mx <= 0.3);
    render_image_destroy(im);
    render_truth_free(&t);
}

/* sharpness follows the blur: about sqrt(sigma^2 + 1/12) for a Gaussian of
 * sigma (the 1/12 from the pixel's area; common practice). */
static void test_sharpness(void **state)
{
    (void)state;
    printf("[ seed     ] test_sharpness: scene seed 800\n");
    tram_board b = board_of(7, 6);
    tram_camera c = camera_of(640, 480, 600, 0.0);
    static const double sig[3] = {0.6, 1.2, 2.4};
    double prev = 0;
    for (int k = 0; k < 3; k++) {
        render_scene s = scene_of(&b, &c, 40, 0, 0, 15, 30, 12, 2.0, 800);
        s.blur_sigma_px = sig[k];
        render_truth t;
        tram_grey_image *im = render_or_fail(&s, &t);
        tram_detection *d = NULL;
        tram_error err;
        assert_int_equal(tram_detect_chessboard(im, &b, NULL, &d, &err), TRAM_OK);
        assert_true(d->found);
        double expect = sqrt(sig[k] * sig[k] + 1.0 / 12.0);
        printf("[ figures  ] blur sigma %.1f px: sharpness %.3f px (sqrt(sigma^2 + 1/12) = %.3f)\n", sig[k],
               d->sharpness, expect);
        assert_true(d->sharpness > prev);
        assert_true(fabs(d->sharpness - expect) <= 0.2 * expect);
        prev = d->sharpness;
        tram_detection_destroy(d);
        render_image_destroy(im);
        render_truth_free(&t);
    }
}

/* A board file of the wrong size: not found, and the reason says to check it. */
static void test_wrong_size(void **state)
{
    (void)state;
    printf("[ seed     ] test_wrong_size: scene seed 900\n");
    tram_board b = board_of(9, 6);
    tram_camera c = camera_of(640, 480, 600, 0.0);
    render_scene s = scene_of(&b, &c, 35, 0, 0, 15, 30, 12, 2.0, 900);
    render_truth t;
    tram_grey_image *im = render_or_fail(&s, &t);
    static const int dims[3][2] = {{8, 5}, {11, 6}, {9, 8}};
    for (int k = 0; k < 3; k++) {
        tram_board w = board_of(dims[k][0], dims[k][1]);
        tram_detection *d = NULL;
        tram_error err;
        assert_int_equal(tram_detect_chessboard(im, &w, NULL, &d, &err), TRAM_OK);
        printf("[ figures  ] a 9 x 6 board detected as %d x %d: %s\n", w.cols, w.rows, d->reason);
        assert_int_equal(d->found, 0);
        assert_non_null(strstr(d->reason, "check the board's size"));
        tram_detection_destroy(d);
    }
    render_image_destroy(im);
    render_truth_free(&t);
}

static void test_small_squares(void **state)
{
    (void)state;
    printf("[ seed     ] test_small_squares: scene seeds 400..402\n");
    tram_board b = board_of(11, 8);
    tram_camera c = camera_of(400, 300, 700, 0.0);
    for (int k = 0; k < 3; k++) {
        render_scene s = scene_of(&b, &c, 12.5, 0.05 * k, -0.03, 10 * k, 70 * k, 20 * k - 15, 2.0,
                                  400 + (unsigned long long)k);
        char what[64];
        snprintf(what, sizeof what, "12.5 px squares, tilt %d deg", 10 * k);
        expect_found(what, &s, 12, 0.3);
    }
}

static void test_large_squares(void **state)
{
    (void)state;
    printf("[ seed     ] test_large_squares: scene seed 500\n");
    tram_board b = board_of(5, 4);
    tram_camera c = camera_of(1280, 960, 1100, 0.0);
    render_scene s = scene_of(&b, &c, 150, 0, 0, 20, 45, 12, 2.0, 500);
    s.blur_sigma_px = 1.5;
    render_truth t;
    tram_grey_image *im = render_or_fail(&s, &t);
    expect_found_in("150 px squares, blur 1.5 px", im, &t, &b, 12, 0.2, NULL, NULL);
    expect_found_in("150 px squares, blur 1.5 px, min_square_px 60", im, &t, &b, 60, 0.2, NULL, NULL);
    /* one thread and two give the same corners, bit for bit */
    tram_detection *d1 = NULL, *d2 = NULL;
    tram_detect_options o1, o2;
    tram_error err;
    tram_detect_options_init(&o1);
    o2 = o1;
    o1.threads = 1;
    o2.threads = 2;
    assert_int_equal(tram_detect_chessboard(im, &b, &o1, &d1, &err), TRAM_OK);
    assert_int_equal(tram_detect_chessboard(im, &b, &o2, &d2, &err), TRAM_OK);
    assert_true(d1->found && d2->found);
    assert_memory_equal(d1->uv, d2->uv, 2 * d1->ncorners * sizeof *d1->uv);
    tram_detection_destroy(d1);
    tram_detection_destroy(d2);
    render_image_destroy(im);
    render_truth_free(&t);
}

static void test_lighting(void **state)
{
    (void)state;
    printf("[ seed     ] test_lighting: scene seeds 600..603\n");
    tram_board b = board_of(9, 6);
    tram_camera c = camera_of(640, 480, 560, 0.0);
    for (int k = 0; k < 4; k++) {
        render_scene s = scene_of(&b, &c, 35, 0, 0, 25, 90 * k, 10 - 5 * k, 2.0, 600 + (unsigned long long)k);
        s.gain_min = 0.5;
        s.gain_max = 1.0;
        s.gain_angle_deg = 45.0 * k;
        s.clutter = 20;
        if (k == 3) s.background = 210;
        char what[80];
        snprintf(what, sizeof what, "light 2:1 across the image at %d deg, clutter", 45 * k);
        expect_found(what, &s, 12, 0.15);
    }
}

static void test_distortion(void **state)
{
    (void)state;
    printf("[ seed     ] test_distortion: scene seeds 700..703\n");
    /* the board fills most of the view, where k1 = -0.35 bends it most */
    tram_board b = board_of(13, 10);
    tram_camera c = camera_of(800, 600, 900, -0.35);
    for (int k = 0; k < 4; k++) {
        render_scene s = scene_of(&b, &c, 40, 0.03 * k, -0.02 * k, 15 * k, 50 * k, 8 * k - 10, 2.0,
                                  700 + (unsigned long long)k);
        char what[64];
        snprintf(what, sizeof what, "k1 -0.35, tilt %d deg", 15 * k);
        expect_found(what, &s, 12, 0.25);
    }
}

/* The renderer's 20 images with no board or only part of one: nothing is
 * found, and a board running off the image says so. */
static void test_no_false_detection(void **state)
{
    (void)state;
    printf("[ seed     ] test_no_false_detection: render_negative images 0..19\n");
    tram_board b = board_of(9, 6);
    tram_camera c = camera_of(640, 480, 550, -0.1);
    int found = 0;
    for (int i = 0; i < RENDER_NEGATIVE_COUNT; i++) {
        tram_grey_image *im = NULL;
        render_truth t;
        tram_error err;
        if (render_negative(i, &b, &c, &im, &t, &err) != TRAM_OK) fail_msg("render: %s", err.message);
        double rms, mx;
        char why[256];
        int f = detect(im, &t, &b, 12, &rms, &mx, why, sizeof why);
        printf("[ figures  ] image %2d (%zu of %zu corners visible): %s\n", i, t.nvisible, t.ncorners,
               f ? "FOUND" : why);
        found += f;
        if (i >= 7 && i < 14 && !f && t.nvisible > 6 && !strstr(why, "runs off the"))
            fail_msg("image %d: reason \"%s\" does not say the board runs off the image", i, why);
        render_image_destroy(im);
        render_truth_free(&t);
    }
    printf("[ figures  ] false detections: %d of %d\n", found, RENDER_NEGATIVE_COUNT);
    assert_int_equal(found, 0);
}

static void test_arguments(void **state)
{
    (void)state;
    float px[64 * 64];
    memset(px, 0, sizeof px);
    tram_grey_image im = {64, 64, px};
    tram_board b = board_of(9, 6);
    tram_detection *d = (tram_detection *)1;
    tram_error err;
    assert_int_equal(tram_detect_chessboard(NULL, &b, NULL, &d, &err), TRAM_EINPUT);
    assert_null(d);
    assert_int_equal(tram_detect_chessboard(&im, NULL, NULL, &d, &err), TRAM_EINPUT);
    tram_board sym = board_of(6, 6);
    assert_int_equal(tram_detect_chessboard(&im, &sym, NULL, &d, &err), TRAM_EINPUT);
    assert_non_null(strstr(err.message, "6 x 6"));
    tram_detect_options opt;
    tram_detect_options_init(&opt);
    assert_true(opt.min_square_px == 12.0 && opt.threads == 0);
    opt.min_square_px = NAN;
    assert_int_equal(tram_detect_chessboard(&im, &b, &opt, &d, &err), TRAM_EINPUT);
    opt.min_square_px = 12;
    opt.threads = -1;
    assert_int_equal(tram_detect_chessboard(&im, &b, &opt, &d, &err), TRAM_EINPUT);
    /* a blank image: not found, a reason, no corners */
    assert_int_equal(tram_detect_chessboard(&im, &b, NULL, &d, &err), TRAM_OK);
    assert_int_equal(d->found, 0);
    assert_int_equal(d->ncorners, 0);
    assert_null(d->uv);
    assert_true(d->reason[0] != '\0');
    tram_detection_destroy(d);
    tram_detection_destroy(NULL);
    /* a tiny image */
    tram_grey_image tiny = {3, 2, px};
    assert_int_equal(tram_detect_chessboard(&tiny, &b, NULL, &d, &err), TRAM_OK);
    assert_int_equal(d->found, 0);
    tram_detection_destroy(d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_accuracy),
        cmocka_unit_test(test_order),
        cmocka_unit_test(test_tilt),
        cmocka_unit_test(test_steep),
        cmocka_unit_test(test_sharpness),
        cmocka_unit_test(test_wrong_size),
        cmocka_unit_test(test_small_squares),
        cmocka_unit_test(test_large_squares),
        cmocka_unit_test(test_lighting),
        cmocka_unit_test(test_distortion),
        cmocka_unit_test(test_no_false_detection),
        cmocka_unit_test(test_arguments),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
