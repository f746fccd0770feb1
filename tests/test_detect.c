/*
 * test_detect.c - chessboard detection (tram_detect_chessboard).
 *
 * The images are test renders of our own (invented scenes): a board under
 * a pinhole camera with the radial term k1 of the Brown-Conrady model
 * (Brown 1966, "Decentering distortion of lenses"), supersampled at the edges
 * (89 samples of a Fibonacci lattice per pixel), blurred by a Gaussian, lit unevenly, with Gaussian noise and
 * quantised to 8 bits.  The outside reference for the accuracy is the
 * analytic position of each corner: the published pinhole and
 * Brown-Conrady projection of the board point (c s, r s, 0), independent
 * of the detector.  Seeds are fixed and printed; the figures (RMS error,
 * detection counts) are printed.
 */
#include "test_util.h"

typedef struct scene {
    size_t W, H;
    double f, cx, cy, k1;        /* camera, pixels */
    double R[3][3], t[3];        /* T_camera_board */
    int cols, rows;
    double square;               /* board unit (mm) */
    double black, white, bg;     /* grey levels */
    double light0, light1;       /* gain at u = 0 and u = W-1 */
    double blur, noise;          /* sigma, pixels / grey levels */
    int occlude;                 /* grey rectangle over part of the board */
    double occ[4];               /* u0, v0, u1, v1 */
    int clutter;                 /* random rectangles in the background */
} scene;

static void rot_xyz(double roll, double tx, double ty, double R[3][3])
{
    double Rz[3][3] = {{cos(roll), -sin(roll), 0}, {sin(roll), cos(roll), 0}, {0, 0, 1}};
    double Rx[3][3] = {{1, 0, 0}, {0, cos(tx), -sin(tx)}, {0, sin(tx), cos(tx)}};
    double Ry[3][3] = {{cos(ty), 0, sin(ty)}, {0, 1, 0}, {-sin(ty), 0, cos(ty)}};
    double A[3][3];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            A[i][j] = 0;
            for (int k = 0; k < 3; k++) A[i][j] += Rx[i][k] * Ry[k][j];
        }
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            R[i][j] = 0;
            for (int k = 0; k < 3; k++) R[i][j] += Rz[i][k] * A[k][j];
        }
}

/* A scene whose board centre is seen at pixel (uc, vc) with squares of
 * about sq_px pixels (before tilt), rolled and tilted (radians). */
static scene make_scene(size_t W, size_t H, int cols, int rows, double sq_px, double roll,
                        double tilt_x, double tilt_y, double uc, double vc)
{
    scene s;
    memset(&s, 0, sizeof s);
    s.W = W;
    s.H = H;
    s.f = 1000.0;
    s.cx = 0.5 * (double)(W - 1) + 3.3;
    s.cy = 0.5 * (double)(H - 1) - 2.1;
    s.cols = cols;
    s.rows = rows;
    s.square = 20.0;
    s.black = 35;
    s.white = 215;
    s.bg = 120;
    s.light0 = s.light1 = 1.0;
    s.blur = 0.6;
    double Z = s.f * s.square / sq_px;
    rot_xyz(roll, tilt_x, tilt_y, s.R);
    double ctr[3] = {0.5 * (cols - 1) * s.square, 0.5 * (rows - 1) * s.square, 0};
    double want[3] = {(uc - s.cx) / s.f * Z, (vc - s.cy) / s.f * Z, Z};
    for (int i = 0; i < 3; i++) {
        s.t[i] = want[i];
        for (int k = 0; k < 3; k++) s.t[i] -= s.R[i][k] * ctr[k];
    }
    return s;
}

/* Brown-Conrady radial projection of board point (X, Y, 0). */
static void project(const scene *s, double X, double Y, double uv[2])
{
    double p[3];
    for (int i = 0; i < 3; i++) p[i] = s->R[i][0] * X + s->R[i][1] * Y + s->t[i];
    double x = p[0] / p[2], y = p[1] / p[2], r2 = x * x + y * y, rad = 1 + s->k1 * r2;
    uv[0] = s->f * x * rad + s->cx;
    uv[1] = s->f * y * rad + s->cy;
}

/* Board-plane point seen at pixel (u, v); 0 when the ray misses it. */
static int unproject(const scene *s, const double Hinv[3][3], double u, double v, double XY[2])
{
    double xd = (u - s->cx) / s->f, yd = (v - s->cy) / s->f, rd = hypot(xd, yd), ru = rd;
    if (s->k1 != 0 && rd > 0) {
        for (int it = 0; it < 30; it++) {
            double fval = ru * (1 + s->k1 * ru * ru) - rd, fd = 1 + 3 * s->k1 * ru * ru;
            if (fd <= 0.05) return 0;
            ru -= fval / fd;
        }
        if (fabs(ru * (1 + s->k1 * ru * ru) - rd) > 1e-9) return 0;
    }
    double sc = rd > 0 ? ru / rd : 1.0, x = xd * sc, y = yd * sc;
    double q[3];
    for (int i = 0; i < 3; i++) q[i] = Hinv[i][0] * x + Hinv[i][1] * y + Hinv[i][2];
    if (q[2] <= 0) return 0;   /* behind the camera */
    XY[0] = q[0] / q[2];
    XY[1] = q[1] / q[2];
    return 1;
}

static double board_colour(const scene *s, double X, double Y)
{
    double a = floor(X / s->square), b = floor(Y / s->square);
    if (a >= -1 && a <= s->cols - 1 && b >= -1 && b <= s->rows - 1)
        return fmod(fabs(a + b), 2.0) == 0.0 ? s->black : s->white;
    if (a >= -2 && a <= s->cols && b >= -2 && b <= s->rows) return s->white;   /* margin */
    return -1.0;
}

static void inv3(double M[3][3], double out[3][3])
{
    double det = M[0][0] * (M[1][1] * M[2][2] - M[1][2] * M[2][1]) -
                 M[0][1] * (M[1][0] * M[2][2] - M[1][2] * M[2][0]) +
                 M[0][2] * (M[1][0] * M[2][1] - M[1][1] * M[2][0]);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            int a = (j + 1) % 3, b = (j + 2) % 3, c = (i + 1) % 3, d = (i + 2) % 3;
            out[i][j] = (M[a][c] * M[b][d] - M[a][d] * M[b][c]) / det;
        }
}

static void blur_image(float *px, size_t W, size_t H, double sigma)
{
    if (sigma <= 0) return;
    int rad = (int)ceil(3.5 * sigma);
    double k[64], sum = 0;
    for (int i = -rad; i <= rad; i++) sum += k[i + rad] = exp(-0.5 * i * i / (sigma * sigma));
    for (int i = 0; i <= 2 * rad; i++) k[i] /= sum;
    float *tmp = malloc(W * H * sizeof *tmp);
    for (size_t y = 0; y < H; y++)
        for (size_t x = 0; x < W; x++) {
            double a = 0;
            for (int i = -rad; i <= rad; i++) {
                long xx = (long)x + i;
                xx = xx < 0 ? 0 : xx >= (long)W ? (long)W - 1 : xx;
                a += k[i + rad] * px[y * W + (size_t)xx];
            }
            tmp[y * W + x] = (float)a;
        }
    for (size_t y = 0; y < H; y++)
        for (size_t x = 0; x < W; x++) {
            double a = 0;
            for (int i = -rad; i <= rad; i++) {
                long yy = (long)y + i;
                yy = yy < 0 ? 0 : yy >= (long)H ? (long)H - 1 : yy;
                a += k[i + rad] * tmp[(size_t)yy * W + x];
            }
            px[y * W + x] = (float)a;
        }
    free(tmp);
}

/* Render s into a new image (free with free_image); truth gets the
 * cols*rows corner pixels in board order. */
static tram_grey_image *render(const scene *s, test_rng *rng, double *truth)
{
    size_t W = s->W, H = s->H, CW = W + 1;
    tram_grey_image *im = malloc(sizeof *im);
    im->width = W;
    im->height = H;
    im->pixels = malloc(W * H * sizeof *im->pixels);
    double Hn[3][3], Hinv[3][3];
    for (int i = 0; i < 3; i++) {
        Hn[i][0] = s->R[i][0];
        Hn[i][1] = s->R[i][1];
        Hn[i][2] = s->t[i];
    }
    inv3(Hn, Hinv);
    /* board coordinates at the pixel corners (u - 0.5, v - 0.5) */
    double *XY = malloc(CW * (H + 1) * 2 * sizeof *XY);
    unsigned char *ok = malloc(CW * (H + 1));
    for (size_t y = 0; y <= H; y++)
        for (size_t x = 0; x <= W; x++)
            ok[y * CW + x] = (unsigned char)unproject(s, Hinv, (double)x - 0.5, (double)y - 0.5,
                                                      XY + 2 * (y * CW + x));
    /* background clutter: fixed rectangles from the rng */
    double rect[40][5];
    int nrect = s->clutter;
    for (int i = 0; i < nrect; i++) {
        double u0 = test_rng_uniform(rng) * (double)W, v0 = test_rng_uniform(rng) * (double)H;
        rect[i][0] = u0;
        rect[i][1] = v0;
        rect[i][2] = u0 + 20 + test_rng_uniform(rng) * 0.3 * (double)W;
        rect[i][3] = v0 + 20 + test_rng_uniform(rng) * 0.3 * (double)H;
        rect[i][4] = 20 + 220 * test_rng_uniform(rng);
    }
    const int SS = 89;
    for (size_t y = 0; y < H; y++)
        for (size_t x = 0; x < W; x++) {
            size_t c00 = y * CW + x, c10 = c00 + 1, c01 = c00 + CW, c11 = c01 + 1;
            int all = ok[c00] && ok[c10] && ok[c01] && ok[c11];
            double col[4] = {-2, -2, -2, -2};
            if (all) {
                col[0] = board_colour(s, XY[2 * c00], XY[2 * c00 + 1]);
                col[1] = board_colour(s, XY[2 * c10], XY[2 * c10 + 1]);
                col[2] = board_colour(s, XY[2 * c01], XY[2 * c01 + 1]);
                col[3] = board_colour(s, XY[2 * c11], XY[2 * c11 + 1]);
            }
            double val, bgv = s->bg;
            for (int i = 0; i < nrect; i++) {
                /* painter's order, by the area of the pixel the rectangle covers */
                double ox = fmin((double)x + 0.5, rect[i][2]) - fmax((double)x - 0.5, rect[i][0]);
                double oy = fmin((double)y + 0.5, rect[i][3]) - fmax((double)y - 0.5, rect[i][1]);
                if (ox > 0 && oy > 0) bgv += ox * oy * (rect[i][4] - bgv);
            }
            if (col[0] != -2 && col[0] == col[1] && col[0] == col[2] && col[0] == col[3]) {
                val = col[0] >= 0 ? col[0] : bgv;
            } else if (!all && !ok[c00] && !ok[c10] && !ok[c01] && !ok[c11]) {
                val = bgv;
            } else {
                double acc = 0;
                for (int k = 0; k < SS; k++) {
                        /* Fibonacci lattice: every sample on its own row and column, so
                         * edges along the pixel axes are not quantised to a coarse step */
                        double fx = (k + 0.5) / SS, fy = ((k * 55) % SS + 0.5) / SS, c = -1;
                        if (all) {
                            double X = (1 - fy) * ((1 - fx) * XY[2 * c00] + fx * XY[2 * c10]) +
                                       fy * ((1 - fx) * XY[2 * c01] + fx * XY[2 * c11]);
                            double Y = (1 - fy) * ((1 - fx) * XY[2 * c00 + 1] + fx * XY[2 * c10 + 1]) +
                                       fy * ((1 - fx) * XY[2 * c01 + 1] + fx * XY[2 * c11 + 1]);
                            c = board_colour(s, X, Y);
                        }
                        acc += c < 0 ? bgv : c;
                    }
                val = acc / SS;
            }
            if (s->occlude && (double)x >= s->occ[0] && (double)x < s->occ[2] && (double)y >= s->occ[1] &&
                (double)y < s->occ[3])
                val = 90;
            double gain = s->light0 + (s->light1 - s->light0) * (double)x / (double)(W - 1);
            im->pixels[y * W + x] = (float)(val * gain);
        }
    blur_image(im->pixels, W, H, s->blur);
    for (size_t i = 0; i < W * H; i++) {
        double v = im->pixels[i] + s->noise * test_rng_normal(rng);
        v = floor(v + 0.5);
        im->pixels[i] = (float)(v < 0 ? 0 : v > 255 ? 255 : v);
    }
    free(XY);
    free(ok);
    if (truth)
        for (int r = 0; r < s->rows; r++)
            for (int c = 0; c < s->cols; c++)
                project(s, c * s->square, r * s->square, truth + 2 * (r * s->cols + c));
    return im;
}

static void free_image(tram_grey_image *im)
{
    if (!im) return;
    free(im->pixels);
    free(im);
}

static tram_board board_of(int cols, int rows)
{
    tram_board b;
    memset(&b, 0, sizeof b);
    b.kind = TRAM_BOARD_CHESSBOARD;
    b.cols = cols;
    b.rows = rows;
    b.square = 20.0;
    b.unit = TRAM_LENGTH_MM;
    return b;
}

/* Detect s; returns 1 when found, with the RMS and max error (pixels)
 * against the analytic corners. */
static int run_scene(const scene *s, test_rng *rng, double min_sq, double *rms, double *maxe,
                     char *reason, size_t rlen)
{
    size_t N = (size_t)s->cols * (size_t)s->rows;
    double *truth = malloc(2 * N * sizeof *truth);
    tram_grey_image *im = render(s, rng, truth);
    tram_board b = board_of(s->cols, s->rows);
    tram_detect_options opt;
    tram_detect_options_init(&opt);
    opt.min_square_px = min_sq;
    tram_detection *d = NULL;
    tram_error err;
    assert_int_equal(tram_detect_chessboard(im, &b, &opt, &d, &err), TRAM_OK);
    int found = d->found;
    if (reason) snprintf(reason, rlen, "%s", d->reason);
    if (found) {
        assert_int_equal(d->ncorners, N);
        double ss = 0, mx = 0;
        for (size_t i = 0; i < N; i++) {
            double e2 = tram__sq_t(d->uv[2 * i] - truth[2 * i]) + tram__sq_t(d->uv[2 * i + 1] - truth[2 * i + 1]);
            ss += e2;
            if (sqrt(e2) > mx) mx = sqrt(e2);
        }
        *rms = sqrt(ss / (double)N);
        *maxe = mx;
        assert_true(d->sharpness > 0 && d->sharpness < 5);
    }
    tram_detection_destroy(d);
    free_image(im);
    free(truth);
    return found;
}

static void test_accuracy(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_accuracy", 20261202);
    for (int noisy = 0; noisy < 2; noisy++) {
        double ss = 0, worst = 0;
        int n = 0;
        for (int k = 0; k < 4; k++) {
            scene s = make_scene(1280, 960, 9, 6, 55 + 10 * k, 0.1 + 0.4 * k, 0.3 * (k % 2), 0.2 * k - 0.3,
                                 600 + 20 * k, 500 - 15 * k);
            s.noise = noisy ? 2.0 : 0.0;
            double rms = 0, mx = 0;
            char why[256];
            int found = run_scene(&s, &rng, 12, &rms, &mx, why, sizeof why);
            if (!found) fail_msg("pose %d not found: %s", k, why);
            ss += rms * rms;
            n++;
            if (mx > worst) worst = mx;
        }
        double rms = sqrt(ss / n);
        printf("[ figures  ] blur 0.6 px, noise %g: RMS corner error %.4f px, max %.4f px (4 poses)\n",
               noisy ? 2.0 : 0.0, rms, worst);
        assert_true(rms <= (noisy ? 0.05 : 0.02));
    }
}

/* Found with every corner within tol pixels of the truth (the order
 * included); prints the RMS. */
static void expect_found(const char *what, const scene *s, test_rng *rng, double min_sq, double tol)
{
    double rms = 0, mx = 0;
    char why[256];
    int found = run_scene(s, rng, min_sq, &rms, &mx, why, sizeof why);
    if (!found) fail_msg("%s: not found: %s", what, why);
    printf("[ figures  ] %s: found, RMS %.4f px, max %.4f px\n", what, rms, mx);
    if (!(mx <= tol)) fail_msg("%s: max error %.3g px (tol %g)", what, mx, tol);
}

static void test_order(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_order", 7);
    /* quarter turns of the board, both parities of cols, a near-square board */
    static const int dims[4][2] = {{9, 6}, {6, 9}, {7, 8}, {5, 4}};
    for (int k = 0; k < 4; k++)
        for (int q = 0; q < 4; q++) {
            double roll = q * M_PI / 2 + 0.05 * k;
            scene s = make_scene(640, 480, dims[k][0], dims[k][1], 30, roll, 0.2, -0.15, 320, 240);
            s.noise = 1.0;
            char what[64];
            snprintf(what, sizeof what, "%d x %d, roll %.0f deg", dims[k][0], dims[k][1], roll * 180 / M_PI);
            expect_found(what, &s, &rng, 12, 0.1);
        }
}

static void test_tilt(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_tilt", 60);
    static const double tilt[4][3] = {{60, 0, 0}, {0, 60, 20}, {42.4, 42.4, 45}, {-60, 0, -30}};
    for (int k = 0; k < 4; k++) {
        scene s = make_scene(1280, 960, 9, 6, 60, tilt[k][2] * M_PI / 180, tilt[k][0] * M_PI / 180,
                             tilt[k][1] * M_PI / 180, 640, 480);
        s.noise = 2.0;
        char what[64];
        snprintf(what, sizeof what, "tilt %.0f/%.0f deg, roll %.0f", tilt[k][0], tilt[k][1], tilt[k][2]);
        expect_found(what, &s, &rng, 12, 0.2);
    }
}

static void test_small_squares(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_small_squares", 12);
    for (int k = 0; k < 3; k++) {
        scene s = make_scene(640, 480, 11, 8, 12.5, 0.3 * k, 0.1 * k, 0.0, 300, 250);
        s.noise = 2.0;
        char what[64];
        snprintf(what, sizeof what, "12 px squares, pose %d", k);
        expect_found(what, &s, &rng, 12, 0.25);
    }
}

static void test_large_squares(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_large_squares", 150);
    scene s = make_scene(1280, 960, 5, 4, 150, 0.2, 0.2, 0.1, 640, 480);
    s.noise = 2.0;
    s.blur = 1.5;
    expect_found("150 px squares, blur 1.5 px", &s, &rng, 12, 0.2);
    s.blur = 0.6;
    expect_found("150 px squares, min_square_px 60", &s, &rng, 60, 0.2);
}

static void test_lighting(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_lighting", 21);
    scene s = make_scene(1280, 960, 9, 6, 70, 0.1, 0.3, 0.2, 640, 480);
    s.noise = 2.0;
    s.light0 = 0.5;
    s.light1 = 1.0;
    expect_found("light 1:2 across the image", &s, &rng, 12, 0.15);
    s.light0 = 1.1;
    s.light1 = 0.45;
    s.bg = 200;
    expect_found("light 2.4:1, bright background", &s, &rng, 12, 0.15);
}

static void test_distortion(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_distortion", 35);
    /* the board fills most of the view, where k1 = -0.35 bends it most */
    for (int k = 0; k < 3; k++) {
        scene s = make_scene(1280, 960, 13, 10, 70, 0.1 * k, 0.15 * k, -0.1 * k, 640, 480);
        s.f = 1400;
        double Z = s.f * s.square / 70;
        /* keep the board's centre on the optical axis region */
        double ctr[3] = {0.5 * (s.cols - 1) * s.square, 0.5 * (s.rows - 1) * s.square, 0};
        for (int i = 0; i < 3; i++) {
            s.t[i] = (i == 2 ? Z : 0.0) + (i == 0 ? 12.0 * k : 0.0);
            for (int j = 0; j < 3; j++) s.t[i] -= s.R[i][j] * ctr[j];
        }
        s.k1 = -0.35;
        s.noise = 2.0;
        char what[64];
        snprintf(what, sizeof what, "k1 -0.35, pose %d", k);
        expect_found(what, &s, &rng, 12, 0.2);
    }
}

/* 20 images with no board or only part of one: nothing is found. */
static void test_no_false_detection(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("test_no_false_detection", 404);
    int found = 0;
    for (int k = 0; k < 20; k++) {
        scene s;
        const char *kind;
        if (k < 6) {
            /* no board: clutter of rectangles only */
            s = make_scene(640, 480, 9, 6, 30, 0, 0, 0, 5000, 5000);
            s.clutter = 10 + 5 * (k % 3);
            kind = "no board, clutter";
        } else if (k < 14) {
            /* the board runs off one image edge (cycling left, right, top, bottom) */
            static const double at[4][2] = {{60, 240}, {580, 240}, {320, 50}, {320, 430}};
            s = make_scene(640, 480, 9, 6, 35, 0.1 * k, 0.2, 0.1, at[k % 4][0], at[k % 4][1]);
            s.clutter = k % 2 ? 8 : 0;
            kind = "board off an edge";
        } else {
            /* a grey patch covers part of the board */
            s = make_scene(640, 480, 9, 6, 35, 0.1 * k, -0.2, 0.1, 320, 240);
            s.occlude = 1;
            s.occ[0] = 300 + 10 * (k - 14);
            s.occ[1] = 100;
            s.occ[2] = 640;
            s.occ[3] = 480;
            kind = "board partly covered";
        }
        s.noise = 2.0;
        double rms, mx;
        char why[256];
        int f = run_scene(&s, &rng, 12, &rms, &mx, why, sizeof why);
        printf("[ figures  ] image %2d (%s): %s\n", k, kind, f ? "FOUND" : why);
        found += f;
        if (k >= 6 && k < 14 && !f) {
            static const char *edge[4] = {"left edge", "right edge", "top edge", "bottom edge"};
            if (!strstr(why, edge[k % 4])) fail_msg("image %d: reason \"%s\" does not name the %s", k, why, edge[k % 4]);
        }
    }
    printf("[ figures  ] false detections: %d of 20\n", found);
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
        cmocka_unit_test(test_small_squares),
        cmocka_unit_test(test_large_squares),
        cmocka_unit_test(test_lighting),
        cmocka_unit_test(test_distortion),
        cmocka_unit_test(test_no_false_detection),
        cmocka_unit_test(test_arguments),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
