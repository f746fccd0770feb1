/*
 * test_render.c - checks of the test renderer (tools/render/): the board
 * convention in the image (the square at corner 0's -x,-y side is black),
 * true corners against the pinhole model (Brown 1966 without distortion:
 * u = fx X/Z + cx), the pixel convention of the sampling grid (edges at
 * sub-pixel positions give the exact area fraction), convergence of the
 * supersampling, the blur against the Gaussian edge profile, the lighting
 * ramp, the noise level, the false-detection image set and PNG output.
 * The independent NumPy projection check is tests/ref/check_render_numpy.py.
 */
#include "test_util.h"

#include <png.h>

#include "render/render.h"

static tram_board board96(void)
{
    tram_board b = {TRAM_BOARD_CHESSBOARD, 9, 6, 25.0, TRAM_LENGTH_MM};
    return b;
}

static tram_camera camera(size_t w, size_t h, double f, double k1)
{
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.width = w;
    c.height = h;
    c.fx = c.fy = f;
    c.cx = 0.5 * (double)(w - 1);
    c.cy = 0.5 * (double)(h - 1);
    c.k1 = k1;
    c.distortion = k1 != 0 ? TRAM_DISTORTION_RADIAL2 : TRAM_DISTORTION_NONE;
    return c;
}

/* A clean scene (no blur, noise, lighting or clutter). */
static tram_grey_image *render_clean(render_scene *s, render_truth *t)
{
    tram_grey_image *im = NULL;
    tram_error err;
    tram_status st = render_chessboard(s, &im, t, &err);
    if (st != TRAM_OK) fail_msg("render: %s", err.message);
    return im;
}

static double pixel_at(const tram_grey_image *im, double u, double v)
{
    long i = lround(u), j = lround(v);
    assert_true(i >= 0 && j >= 0 && (size_t)i < im->width && (size_t)j < im->height);
    return im->pixels[(size_t)j * im->width + (size_t)i];
}

/* Colour of board cell (a, b) by the convention of tram/image.h. */
static double cell_colour(const render_scene *s, int a, int b)
{
    int in = a >= -1 && a <= s->board.cols - 1 && b >= -1 && b <= s->board.rows - 1;
    return in && ((a + b) & 1) == 0 ? s->black : s->white;
}

static void project(const render_scene *s, double X, double Y, double uv[2])
{
    double p[3] = {X, Y, 0}, q[3];
    tram_se3_apply_point(&s->T_sensor_target, p, q);
    assert_true(tram_camera_project(&s->camera, q, uv));
}

/* Every square's and border cell's centre has its colour; corner 0's -x,-y
 * square is black; outside is the background; the back is the plate. */
static void check_cells(render_scene *s, const tram_grey_image *im)
{
    int B = s->border_squares;
    for (int b = -1 - B; b <= s->board.rows - 1 + B; b++)
        for (int a = -1 - B; a <= s->board.cols - 1 + B; a++) {
            double uv[2];
            project(s, (a + 0.5) * s->board.square, (b + 0.5) * s->board.square, uv);
            assert_close(pixel_at(im, uv[0], uv[1]), cell_colour(s, a, b), 1e-4);
        }
}

static void test_board_convention(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(640, 480, 800, 0.0);
    tram_se3 T;
    render_pose_facing(&b, 500, 0, 0, 0, 0, 0, &T); /* 40 px squares */
    render_scene s;
    render_scene_init(&s, &b, &c, &T);
    render_truth t;
    tram_grey_image *im = render_clean(&s, &t);
    assert_int_equal(t.front, 1);
    assert_int_equal(t.ninside, 54);
    check_cells(&s, im);
    /* around corner 0: -x,-y black, +x,-y white, +x,+y black (tram/image.h) */
    double u = t.uv[0], v = t.uv[1];
    assert_close(pixel_at(im, u - 10, v - 10), 30.0, 1e-4);
    assert_close(pixel_at(im, u + 10, v - 10), 220.0, 1e-4);
    assert_close(pixel_at(im, u - 10, v + 10), 220.0, 1e-4);
    assert_close(pixel_at(im, u + 10, v + 10), 30.0, 1e-4);
    assert_close(im->pixels[0], 110.0, 1e-4); /* background at the image corner */
    render_image_destroy(im);
    render_truth_free(&t);

    /* Seen from behind (camera on the +z side): the plain plate. */
    tram_mat3 R;
    tram_so3_axis_rotation(1, M_PI, &R);
    tram_se3 flip, Tb;
    tram_se3_from_rt(&R, (double[3]){0, 0, 0}, &flip);
    tram_se3_compose(&T, &flip, &Tb);
    Tb.m[0][3] += 100.0; /* bring the mirrored board back into view */
    s.T_sensor_target = Tb;
    im = render_clean(&s, &t);
    assert_int_equal(t.front, 0);
    assert_int_equal(t.nvisible, 0); /* corners in the image, but not printed on this side */
    double uvc[2];
    project(&s, 100.0, 62.5, uvc);
    assert_close(pixel_at(im, uvc[0], uvc[1]), 140.0, 1e-4);
    render_image_destroy(im);
    render_truth_free(&t);
}

/* Fronto-parallel, no distortion: corner (c, r) at u = cx + f (c s + tx)/Z,
 * v = cy + f (r s + ty)/Z (the pinhole model, Brown 1966 with all
 * coefficients 0); and the pixel the vertical edge through a corner
 * crosses has the area fraction of the pixel convention [u-0.5, u+0.5]. */
static void test_pinhole_and_pixel_convention(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(640, 480, 800, 0.0);
    c.cx = 317.3;
    c.cy = 241.85;
    tram_se3 T;
    tram_se3_identity(&T);
    double tx = -101.37, ty = -60.21, Z = 500.0;
    T.m[0][3] = tx;
    T.m[1][3] = ty;
    T.m[2][3] = Z;
    render_scene s;
    render_scene_init(&s, &b, &c, &T);
    render_truth t;
    tram_grey_image *im = render_clean(&s, &t);
    double worst = 0, worst_px = 0, bound = (s.white - s.black) * 0.5 / s.supersample + 1e-3;
    for (int r = 0; r < b.rows; r++)
        for (int k = 0; k < b.cols; k++) {
            size_t id = (size_t)(r * b.cols + k);
            double u = c.cx + c.fx * (k * b.square + tx) / Z, v = c.cy + c.fy * (r * b.square + ty) / Z;
            worst = fmax(worst, fmax(fabs(t.uv[2 * id] - u), fabs(t.uv[2 * id + 1] - v)));
            /* the row 10 px below the corner: the edge x = k s at u, cells
             * (k-1, r) left and (k, r) right */
            long i = lround(u), j = lround(v + 10);
            double left = u - ((double)i - 0.5); /* fraction of the pixel left of the edge */
            double expect = left * cell_colour(&s, k - 1, r) + (1 - left) * cell_colour(&s, k, r);
            double got = im->pixels[(size_t)j * im->width + (size_t)i];
            worst_px = fmax(worst_px, fabs(got - expect));
        }
    printf("[ render   ] pinhole corners: max |uv - model| %.3g px; edge pixels: max %.3g grey "
           "levels (bound %.3g for %dx%d samples)\n", worst, worst_px, bound, s.supersample,
           s.supersample);
    assert_true(worst < 1e-9);
    assert_true(worst_px <= bound);
    render_image_destroy(im);
    render_truth_free(&t);
}

/* Area of the part of the pixel square around (i, j) where n.p <= d
 * (Sutherland-Hodgman clip against one half-plane, then the shoelace). */
static double clipped_area(double i, double j, const double n[2], double d)
{
    double in[4][2] = {{i - .5, j - .5}, {i + .5, j - .5}, {i + .5, j + .5}, {i - .5, j + .5}};
    double out[8][2];
    int m = 0;
    for (int k = 0; k < 4; k++) {
        const double *p = in[k], *q = in[(k + 1) % 4];
        double fp = n[0] * p[0] + n[1] * p[1] - d, fq = n[0] * q[0] + n[1] * q[1] - d;
        if (fp <= 0) {
            out[m][0] = p[0];
            out[m++][1] = p[1];
        }
        if ((fp < 0) != (fq < 0) && fp != fq) {
            double t = fp / (fp - fq);
            out[m][0] = p[0] + t * (q[0] - p[0]);
            out[m++][1] = p[1] + t * (q[1] - p[1]);
        }
    }
    double a = 0;
    for (int k = 0; k < m; k++)
        a += out[k][0] * out[(k + 1) % m][1] - out[(k + 1) % m][0] * out[k][1];
    return 0.5 * fabs(a);
}

/* Supersampling converges to the exact area fraction: a board rolled by
 * 7 degrees (straight edges at every sub-pixel offset), pixels on the
 * vertical edges away from the corners, n = 2 .. 32. */
static void test_supersampling_converges(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(640, 480, 800, 0.0);
    tram_se3 T;
    render_pose_facing(&b, 500, 0.01, -0.02, 0, 0, 7, &T);
    double prev = 1e9;
    for (int n = 2; n <= 32; n *= 2) {
        render_scene s;
        render_scene_init(&s, &b, &c, &T);
        s.supersample = n;
        tram_grey_image *im = render_clean(&s, NULL);
        double worst = 0;
        size_t count = 0;
        for (int r = 0; r < b.rows - 1; r++)
            for (int k = 0; k < b.cols; k++) {
                double p0[2], p1[2], pc[2];
                project(&s, k * b.square, r * b.square, p0);
                project(&s, k * b.square, (r + 1) * b.square, p1);
                project(&s, (k + 0.5) * b.square, (r + 0.5) * b.square, pc); /* in cell (k, r) */
                double nrm[2] = {p1[1] - p0[1], -(p1[0] - p0[0])};
                double d = nrm[0] * p0[0] + nrm[1] * p0[1];
                int right_neg = nrm[0] * pc[0] + nrm[1] * pc[1] - d <= 0;
                for (double f = 0.2; f <= 0.8; f += 0.01) {
                    double v = p0[1] + f * (p1[1] - p0[1]), u = p0[0] + f * (p1[0] - p0[0]);
                    double i = (double)lround(u), j = (double)lround(v);
                    double aneg = clipped_area(i, j, nrm, d);
                    double cr = cell_colour(&s, k, r), cl = cell_colour(&s, k - 1, r);
                    double expect = right_neg ? aneg * cr + (1 - aneg) * cl : aneg * cl + (1 - aneg) * cr;
                    double got = im->pixels[(size_t)j * im->width + (size_t)i];
                    worst = fmax(worst, fabs(got - expect));
                    count++;
                }
            }
        printf("[ render   ] %2dx%-2d samples: max |pixel - exact area| %.3f grey levels over %zu "
               "edge pixels (= %.4f of the contrast)\n", n, n, worst, count, worst / 190.0);
        assert_true(worst <= 190.0 / n + 1e-3); /* one sample per row at most */
        assert_true(worst <= prev + 1e-3);
        prev = worst;
        render_image_destroy(im);
    }
    assert_true(prev < 190.0 / 64.0);
}

/* Axis-aligned edges (pinhole, board facing the camera, no roll): the
 * mixed pixels' samples form a rank-1 lattice with one sample in every
 * column and row of the N x N grid (N = n^2), so an edge parallel to an
 * image axis is resolved to 1/N of a pixel: the error is at most half a
 * sample, 190 / (2 N) grey levels (1.48 at the default n = 8, where the
 * 8 x 8 grid it replaced rounded such edges to 1/8 px: up to 11.9). */
static void test_axis_aligned_edges(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(640, 480, 800, 0.0);
    for (int n = 4; n <= 8; n *= 2) {
        double worst = 0;
        size_t count = 0;
        for (int view = 0; view < 3; view++) {
            tram_se3 T;
            render_pose_facing(&b, 500 + 7.3 * view, 0.0123 * view, -0.0171 * view, 0, 0, 0, &T);
            render_scene s;
            render_scene_init(&s, &b, &c, &T);
            s.supersample = n;
            tram_grey_image *im = render_clean(&s, NULL);
            for (int r = 0; r < b.rows - 1; r++)
                for (int k = 0; k < b.cols - 1; k++)
                    for (int dir = 0; dir < 2; dir++) { /* the cell's left (0) or top (1) edge */
                        double p0[2], p1[2], pc[2];
                        project(&s, k * b.square, r * b.square, p0);
                        project(&s, (k + dir) * b.square, (r + 1 - dir) * b.square, p1);
                        project(&s, (k + 0.5) * b.square, (r + 0.5) * b.square, pc);
                        double nrm[2] = {p1[1] - p0[1], -(p1[0] - p0[0])};
                        double d = nrm[0] * p0[0] + nrm[1] * p0[1];
                        int in_neg = nrm[0] * pc[0] + nrm[1] * pc[1] - d <= 0;
                        double cin = cell_colour(&s, k, r), cout = cell_colour(&s, k - 1 + dir, r - dir);
                        for (double f = 0.2; f <= 0.8; f += 0.05) {
                            double u = p0[0] + f * (p1[0] - p0[0]), v = p0[1] + f * (p1[1] - p0[1]);
                            double i = (double)lround(u), j = (double)lround(v);
                            double aneg = clipped_area(i, j, nrm, d);
                            double expect = in_neg ? aneg * cin + (1 - aneg) * cout : aneg * cout + (1 - aneg) * cin;
                            double got = im->pixels[(size_t)j * im->width + (size_t)i];
                            worst = fmax(worst, fabs(got - expect));
                            count++;
                        }
                    }
            render_image_destroy(im);
        }
        printf("[ render   ] axis-aligned edges, %d lattice samples: max |pixel - exact area| %.3f grey "
               "levels over %zu edge pixels (half a sample: %.3f; the %dx%d grid: up to %.3f)\n",
               n * n, worst, count, 95.0 / (n * n), n, n, 95.0 / n);
        assert_true(worst <= 95.0 / (n * n) + 0.6); /* + the float image's rounding */
    }
}

/* With distortion (k1, k2, p1, p2), the forward projection of every cell's
 * centre lands on a pixel of that cell's colour: the inverse mapping
 * through tram_camera_unproject agrees with tram_camera_project. */
static void test_distorted_cells(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(1280, 960, 1000, -0.25);
    c.k2 = 0.08;
    c.p1 = 0.0015;
    c.p2 = -0.001;
    c.distortion = TRAM_DISTORTION_FULL;
    tram_se3 T;
    render_pose_facing(&b, 420, 0.12, -0.08, 25, 40, -12, &T);
    render_scene s;
    render_scene_init(&s, &b, &c, &T);
    render_truth t;
    tram_grey_image *im = render_clean(&s, &t);
    assert_int_equal(t.ninside, 54);
    check_cells(&s, im);
    /* the pixel on an edge's midpoint is a mixture */
    double uv[2];
    project(&s, 2 * b.square, 1.5 * b.square, uv);
    double p = pixel_at(im, uv[0], uv[1]);
    assert_true(p > 35 && p < 215);
    printf("[ render   ] distorted board: %zu cells at their colour; square %.1f px\n",
           (size_t)((b.cols + 3) * (b.rows + 3)), t.square_px);
    render_image_destroy(im);
    render_truth_free(&t);
}

/* Gaussian blur of sigma: a vertical edge becomes the Gaussian CDF with
 * variance sigma^2 + 1/12 (the pixel box), common practice. */
static void test_blur_profile(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(640, 480, 800, 0.0);
    tram_se3 T;
    tram_se3_identity(&T);
    T.m[0][3] = -100.0 + 0.3 * 500.0 / 800.0; /* corner 4 off the pixel grid */
    T.m[1][3] = -62.5;
    T.m[2][3] = 500.0;
    render_scene s;
    render_scene_init(&s, &b, &c, &T);
    s.blur_sigma_px = 1.6;
    s.supersample = 32;
    render_truth t;
    tram_grey_image *im = render_clean(&s, &t);
    /* the edge x = 4 s between cells (3, 2) (white: 5 odd) and (4, 2) black */
    double ue = t.uv[2 * (2 * 9 + 4)], v = t.uv[2 * (2 * 9 + 4) + 1] + 20;
    double se = sqrt(1.6 * 1.6 + 1.0 / 12.0), worst = 0;
    for (int d = -5; d <= 5; d++) {
        double u = (double)(lround(ue) + d);
        double expect = 220.0 - 190.0 * 0.5 * erfc(-(u - ue) / (se * sqrt(2.0)));
        worst = fmax(worst, fabs(pixel_at(im, u, v) - expect));
    }
    printf("[ render   ] blur 1.6 px: edge profile within %.3f grey levels of the Gaussian CDF\n",
           worst);
    assert_true(worst < 1.0);
    render_image_destroy(im);
    render_truth_free(&t);
}

static void test_lighting_ramp(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(320, 240, 300, 0.0);
    render_scene s;
    render_scene_init(&s, &b, &c, NULL);
    s.board_present = 0;
    s.background = 100;
    s.gain_min = 0.5;
    s.gain_max = 1.0;
    tram_grey_image *im = render_clean(&s, NULL);
    assert_close(im->pixels[0], 50.0, 1e-3);
    assert_close(im->pixels[319], 100.0, 1e-3);
    assert_close(im->pixels[239 * 320 + 160], 75.0 + 25.0 / 319.0, 1e-3);
    render_image_destroy(im);
    /* vignetting 0.3 alone: 1 at the principal point, 0.7 at the far corner's edge */
    s.gain_min = s.gain_max = 1.0;
    s.vignetting = 0.3;
    im = render_clean(&s, NULL);
    assert_close(im->pixels[120 * 320 + 160], 100.0 * (1 - 0.3 * (0.25 + 0.25) / (160.0 * 160.0 + 120.0 * 120.0)), 1e-3);
    assert_close(im->pixels[0], 100.0 * (1 - 0.3 * (159.5 * 159.5 + 119.5 * 119.5) / (160.0 * 160.0 + 120.0 * 120.0)), 1e-3);
    render_image_destroy(im);
}

static void test_noise_sigma(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(400, 300, 300, 0.0);
    const double sigmas[3] = {1.0, 2.5, 6.0};
    for (int k = 0; k < 3; k++) {
        render_scene s;
        render_scene_init(&s, &b, &c, NULL);
        s.board_present = 0;
        s.background = 128;
        s.noise_sigma = sigmas[k];
        s.seed = 4242 + (unsigned long long)k;
        printf("[ seed     ] render noise: %llu\n", s.seed);
        tram_grey_image *im = render_clean(&s, NULL);
        double m = 0, q = 0, N = 400.0 * 300.0;
        for (size_t i = 0; i < 400 * 300; i++) m += im->pixels[i];
        m /= N;
        for (size_t i = 0; i < 400 * 300; i++) q += (im->pixels[i] - m) * (im->pixels[i] - m);
        double sd = sqrt(q / (N - 1));
        printf("[ render   ] noise sigma %.2f: sample mean %.4f, std %.4f (%+.2f%%)\n", sigmas[k],
               m, sd, 100.0 * (sd / sigmas[k] - 1));
        assert_true(fabs(sd / sigmas[k] - 1) < 0.05);
        assert_true(fabs(m - 128) < 0.05 * sigmas[k]);
        render_image_destroy(im);
    }
}

/* The same scene renders the same image; another seed other noise. */
static void test_reproducible(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(320, 240, 300, -0.1);
    tram_se3 T;
    render_pose_facing(&b, 700, 0, 0, 20, 10, 5, &T);
    render_scene s;
    render_scene_init(&s, &b, &c, &T);
    s.noise_sigma = 2;
    s.clutter = 20;
    s.occluder = 1;
    s.blur_sigma_px = 0.7;
    tram_grey_image *a = render_clean(&s, NULL), *bb = render_clean(&s, NULL);
    assert_memory_equal(a->pixels, bb->pixels, 320 * 240 * sizeof(float));
    render_image_destroy(bb);
    s.seed = 2;
    bb = render_clean(&s, NULL);
    assert_memory_not_equal(a->pixels, bb->pixels, 320 * 240 * sizeof(float));
    render_image_destroy(a);
    render_image_destroy(bb);
}

/* None of the 20 false-detection images shows the whole board. */
static void test_negative_set(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(640, 480, 600, -0.1);
    for (int i = 0; i < RENDER_NEGATIVE_COUNT; i++) {
        tram_grey_image *im = NULL;
        render_truth t;
        tram_error err;
        tram_status st = render_negative(i, &b, &c, &im, &t, &err);
        if (st != TRAM_OK) fail_msg("negative %d: %s", i, err.message);
        printf("[ render   ] negative %2d: corners inside %2zu, visible %2zu of %zu\n", i, t.ninside,
               t.nvisible, t.ncorners);
        assert_true(t.nvisible < t.ncorners);
        if (i < 7) assert_int_equal(t.ninside, 0);
        else if (i < 14) assert_true(t.ninside > 0 && t.ninside < t.ncorners);
        else assert_true(t.ninside == t.ncorners && t.nvisible < t.ncorners);
        render_image_destroy(im);
        render_truth_free(&t);
    }
    tram_error err;
    tram_grey_image *im = (tram_grey_image *)&err;
    assert_int_equal(render_negative(20, &b, &c, &im, NULL, &err), TRAM_EINPUT);
    assert_null(im);
}

static void test_5mp_scene_in_view(void **state)
{
    (void)state;
    tram_board b = board96();
    for (unsigned long long seed = 1; seed <= 5; seed++) {
        render_scene s;
        render_truth t;
        render_scene_5mp(&b, seed, &s);
        assert_int_equal(render_truth_compute(&s, &t), 0);
        assert_int_equal(s.camera.width * s.camera.height, 2592 * 1944);
        assert_int_equal(t.nvisible, t.ncorners);
        render_truth_free(&t);
    }
}

static void test_bad_scene(void **state)
{
    (void)state;
    tram_board b = board96();
    tram_camera c = camera(320, 240, 300, 0.0);
    render_scene s;
    render_scene_init(&s, &b, &c, NULL);
    s.supersample = 0;
    tram_grey_image *im = NULL;
    tram_error err;
    assert_int_equal(render_chessboard(&s, &im, NULL, &err), TRAM_EINPUT);
    assert_null(im);
    s.supersample = 8;
    s.camera.width = 0;
    assert_int_equal(render_chessboard(&s, &im, NULL, &err), TRAM_EINPUT);
}

/* The PNG holds the rounded, clipped grey levels (read back with libpng). */
static void test_png(void **state)
{
    (void)state;
    tram_grey_image *im = render_image_create(7, 3);
    for (size_t i = 0; i < 21; i++) im->pixels[i] = (float)i * 13.4f - 10.0f;
    char path[] = "/tmp/tram_render_XXXXXX";
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    tram_error err;
    assert_int_equal(render_png_write(im, path, &err), TRAM_OK);
    png_image pi;
    memset(&pi, 0, sizeof pi);
    pi.version = PNG_IMAGE_VERSION;
    assert_true(png_image_begin_read_from_file(&pi, path));
    assert_int_equal(pi.width, 7);
    assert_int_equal(pi.height, 3);
    pi.format = PNG_FORMAT_GRAY;
    unsigned char buf[21];
    assert_true(png_image_finish_read(&pi, NULL, buf, 0, NULL));
    for (size_t i = 0; i < 21; i++) {
        double v = fmin(255.0, fmax(0.0, (double)im->pixels[i]));
        assert_int_equal(buf[i], (unsigned)lround(v));
    }
    remove(path);
    render_image_destroy(im);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_board_convention),
        cmocka_unit_test(test_pinhole_and_pixel_convention),
        cmocka_unit_test(test_supersampling_converges),
        cmocka_unit_test(test_axis_aligned_edges),
        cmocka_unit_test(test_distorted_cells),
        cmocka_unit_test(test_blur_profile),
        cmocka_unit_test(test_lighting_ramp),
        cmocka_unit_test(test_noise_sigma),
        cmocka_unit_test(test_reproducible),
        cmocka_unit_test(test_negative_set),
        cmocka_unit_test(test_5mp_scene_in_view),
        cmocka_unit_test(test_bad_scene),
        cmocka_unit_test(test_png),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
