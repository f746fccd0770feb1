/* test_pixel_render.c - the solve from pixels on rendered images at the
 * demo's stations: the wrist camera of datasets/demo (truth.json,
 * truth_images.json: camera, board, T_base_target; robot poses of
 * wrist_camera.csv taken as exact - an invented scenario) renders the board
 * at each station with the test renderer (tools/render/), the corners come
 * from the chessboard detector (Bennett & Lasenby 2014 saddle points), and
 * X from pixels is compared with the truth and with the pose path
 * (tram_pose_from_pixels per station, then tram_solve). */
#include "pixel_scene.h"
#include "render/render.h"

#include <cjson/cJSON.h>
#include <sys/stat.h>

static cJSON *read_json(const char *path)
{
    FILE *f = fopen(path, "rb");
    assert_non_null(f);
    static char buf[1 << 16];
    size_t n = fread(buf, 1, sizeof buf - 1, f);
    fclose(f);
    buf[n] = 0;
    cJSON *d = cJSON_Parse(buf);
    assert_non_null(d);
    return d;
}

static void matrix_of(const cJSON *m, tram_se3 *T)
{
    for (int i = 0; i < 4; i++)
        for (int j = 0; j < 4; j++) T->m[i][j] = cJSON_GetArrayItem(cJSON_GetArrayItem(m, i), j)->valuedouble;
}

static double num(const cJSON *o, const char *k) { return cJSON_GetObjectItemCaseSensitive(o, k)->valuedouble; }

/* X errors (mm, deg) of the solve from pixels (al, aa) and of the pose
 * path on the same corners (bl, ba); the 95% bound of tx and the pixel RMS. */
static void compare(const tram_records *rec, const tram_camera *cam, const tram_pixel_obs *obs,
                    const double *xyz, const tram_se3 *Xt, double out[6])
{
    tram_error e;
    const tram_se3 X = *Xt;
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    tram_solution *a = NULL;
    tram_status st = tram_solve_pixels(rec, TRAM_SETUP_EYE_IN_HAND, cam, obs, xyz, &so, NULL, &a, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    /* the pose path on the same corners */
    tram_records *rr = tram_records_clone(rec);
    size_t nk = 0;
    for (size_t i = 0; i < rec->count; i++) {
        double px[3 * 54], pu[2 * 54];
        size_t m = 0;
        for (size_t o = 0; o < obs->n; o++)
            if (strcmp(obs->station_id[obs->station[o]], rec->stations[i].id) == 0) {
                memcpy(px + 3 * m, xyz + 3 * o, 3 * sizeof *px);
                memcpy(pu + 2 * m, obs->uv + 2 * o, 2 * sizeof *pu);
                m++;
            }
        if (!m) continue;
        tram_pose_result pr;
        assert_int_equal(tram_pose_from_pixels(cam, px, pu, m, &pr, &e), TRAM_OK);
        rr->stations[nk] = rec->stations[i];
        rr->stations[nk++].T_sensor_target = pr.T_sensor_target;
    }
    rr->count = nk;
    rr->has_block[TRAM_BLOCK_SENSOR] = 1;
    rr->sensor_from_points = 1;
    tram_solution *b = NULL;
    st = tram_solve(rr, TRAM_SETUP_EYE_IN_HAND, &so, &b, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    tram_se3_distance(&a->X, &X, &out[1], &out[0]);
    tram_se3_distance(&b->X, &X, &out[3], &out[2]);
    out[4] = a->unc.half95[0];
    out[5] = a->pixels->px.rms;
    assert_true(out[0] < 0.5 && out[1] < 0.05);
    tram_solution_destroy(a);
    tram_solution_destroy(b);
    tram_records_destroy(rr);
}

static void test_rendered_demo(void **state)
{
    (void)state;
    cJSON *ti = read_json("datasets/demo/truth_images.json"), *tr = read_json("datasets/demo/truth.json");
    const cJSON *jc = cJSON_GetObjectItemCaseSensitive(ti, "camera"), *jb = cJSON_GetObjectItemCaseSensitive(ti, "board");
    tram_camera cam;
    memset(&cam, 0, sizeof cam);
    cam.fx = num(jc, "fx"); cam.fy = num(jc, "fy"); cam.cx = num(jc, "cx"); cam.cy = num(jc, "cy");
    cam.k1 = num(jc, "k1"); cam.k2 = num(jc, "k2"); cam.distortion = TRAM_DISTORTION_RADIAL2;
    cam.width = (size_t)num(jc, "width"); cam.height = (size_t)num(jc, "height");
    tram_board board;
    tram_error e;
    assert_int_equal(tram_board_init(&board, (int)num(jb, "cols"), (int)num(jb, "rows"), num(jb, "square"),
                                     TRAM_LENGTH_MM, &e), TRAM_OK);
    tram_se3 Z, X;
    matrix_of(cJSON_GetObjectItemCaseSensitive(ti, "T_base_target"), &Z);
    matrix_of(cJSON_GetObjectItemCaseSensitive(cJSON_GetObjectItemCaseSensitive(tr, "wrist_camera"), "T_flange_sensor"), &X);
    cJSON_Delete(ti);
    cJSON_Delete(tr);
    tram_records *rec = NULL;
    assert_int_equal(tram_records_read_file("datasets/demo/wrist_camera.csv", NULL, &rec, &e), TRAM_OK);
    tram_pixel_obs *obs = NULL, *noisy = NULL;
    assert_int_equal(tram_pixel_obs_create(cam.width, cam.height, NULL, &obs, &e), TRAM_OK);
    assert_int_equal(tram_pixel_obs_create(cam.width, cam.height, NULL, &noisy, &e), TRAM_OK);
    test_rng rng = test_rng_seeded("rendered demo, corner noise", 58000);
    size_t nc = tram_board_corner_count(&board), k = 0;
    double *xyz = malloc(rec->count * nc * 3 * sizeof *xyz);
    double *tuv = malloc(rec->count * nc * 2 * sizeof *tuv); /* the true corners */
    tram_detect_options dopt;
    tram_detect_options_init(&dopt);
    dopt.threads = 1;
    size_t found = 0;
    double det_err2 = 0;
    size_t det_n = 0;
    printf("[ seed     ] rendered demo: render seeds 58001 + station index\n");
    for (size_t i = 0; i < rec->count; i++) {
        tram_se3 PX, S;
        tram_se3_compose(&rec->stations[i].T_base_flange, &X, &PX);
        tram_se3_invert(&PX, &S);
        tram_se3_compose(&S, &Z, &S);
        render_scene sc;
        render_scene_init(&sc, &board, &cam, &S);
        sc.blur_sigma_px = 0.8;
        sc.noise_sigma = 1.5;
        sc.gain_min = 0.7;
        sc.gain_max = 1.15;
        sc.seed = 58001 + i;
        tram_grey_image *im = NULL;
        render_truth truth;
        assert_int_equal(render_chessboard(&sc, &im, &truth, &e), TRAM_OK);
        tram_detection *d = NULL;
        assert_int_equal(tram_detect_chessboard(im, &board, &dopt, &d, &e), TRAM_OK);
        if (d->found) {
            found++;
            for (size_t c = 0; c < nc; c++) {
                char pid[32];
                snprintf(pid, sizeof pid, "%zu", c);
                assert_int_equal(tram_pixel_obs_add(obs, rec->stations[i].id, pid, d->uv[2 * c], d->uv[2 * c + 1], &e), TRAM_OK);
                assert_int_equal(tram_pixel_obs_add(noisy, rec->stations[i].id, pid,
                                                    truth.uv[2 * c] + 0.3 * test_rng_normal(&rng),
                                                    truth.uv[2 * c + 1] + 0.3 * test_rng_normal(&rng), &e), TRAM_OK);
                tuv[2 * k] = truth.uv[2 * c];
                tuv[2 * k + 1] = truth.uv[2 * c + 1];
                tram_board_corner(&board, c, xyz + 3 * k++);
                det_err2 += tram__sq_t(d->uv[2 * c] - truth.uv[2 * c]) + tram__sq_t(d->uv[2 * c + 1] - truth.uv[2 * c + 1]);
                det_n++;
            }
        }
        tram_detection_destroy(d);
        render_truth_free(&truth);
        render_image_destroy(im);
    }
    double f[6];
    compare(rec, &cam, obs, xyz, &X, f);
    printf("[ figures  ] rendered demo, detector corners (%zu of %zu boards detected; corner error rms "
           "%.3f px): X error from pixels %.4f mm / %.5f deg (rms %.3f px, 95%% bound of tx %.4f mm), "
           "pose path %.4f mm / %.5f deg\n",
           found, rec->count, sqrt(det_err2 / (double)(det_n ? det_n : 1)), f[0], f[1], f[5], f[4], f[2], f[3]);
    assert_true(found >= 10);
    /* True corners + 0.3 px: the solve from pixels is the maximum-likelihood
     * answer for this noise and the pose path is not, so pixels must do at
     * least as well - over several noise draws, in RMS: once the pose path
     * weighs each pose's depth noise as it is (the noise model of
     * src/solve/noise.c), a single draw can go either way. */
    enum { DRAWS = 8 };
    double ss[4] = {0};
    printf("[ seed     ] rendered demo, corner noise: draw 0 as above, draw k > 0 seed 58000 + 1000 k\n");
    for (int d = 0; d < DRAWS; d++) {
        tram_pixel_obs *nz = noisy;
        if (d > 0) {
            test_rng rk = {58000 + 1000 * (uint64_t)d};
            assert_int_equal(tram_pixel_obs_create(cam.width, cam.height, NULL, &nz, &e), TRAM_OK);
            for (size_t o = 0; o < noisy->n; o++)
                assert_int_equal(tram_pixel_obs_add(nz, noisy->station_id[noisy->station[o]],
                                                    noisy->point_id[noisy->point[o]],
                                                    tuv[2 * o] + 0.3 * test_rng_normal(&rk),
                                                    tuv[2 * o + 1] + 0.3 * test_rng_normal(&rk), &e),
                                 TRAM_OK);
        }
        compare(rec, &cam, nz, xyz, &X, f);
        if (d == 0)
            printf("[ figures  ] rendered demo, true corners + 0.3 px, draw 0: X error from pixels %.4f mm / "
                   "%.5f deg (rms %.3f px, 95%% bound of tx %.4f mm), pose path %.4f mm / %.5f deg\n",
                   f[0], f[1], f[5], f[4], f[2], f[3]);
        for (int q = 0; q < 4; q++) ss[q] += f[q] * f[q] / DRAWS;
        if (d > 0) tram_pixel_obs_destroy(nz);
    }
    for (int q = 0; q < 4; q++) ss[q] = sqrt(ss[q]);
    printf("[ figures  ] rendered demo, true corners + 0.3 px, %d draws: RMS X error from pixels %.4f mm / "
           "%.5f deg, pose path %.4f mm / %.5f deg\n", DRAWS, ss[0], ss[1], ss[2], ss[3]);
    assert_true(ss[0] <= ss[2] && ss[1] <= ss[3]);
    free(tuv);
    tram_pixel_obs_destroy(noisy);
    tram_records_destroy(rec);
    tram_pixel_obs_destroy(obs);
    free(xyz);
}

/* Seed k's detections as TRAM_TEST_OUT/render-seeds/seed_K.csv. */
static void dump_seed(const char *dir, int k, const tram_pixel_obs *obs)
{
    char path[1024], *text = NULL;
    tram_error e;
    snprintf(path, sizeof path, "%s/render-seeds", dir);
    mkdir(dir, 0777);
    mkdir(path, 0777);
    snprintf(path, sizeof path, "%s/render-seeds/seed_%d.csv", dir, k);
    assert_int_equal(tram_pixel_obs_write(obs, &text, &e), TRAM_OK);
    FILE *f = fopen(path, "wb");
    assert_non_null(f);
    fputs(text, f);
    assert_int_equal(fclose(f), 0);
    free(text);
}

/* The rendered demo over many noise draws: each station's image is rendered
 * once without noise (blur, lighting ramp as above), and each seed adds its
 * own Gaussian grey-level noise (sigma 1.5, clipped to 0 .. 255) before the
 * detector runs, so every seed is a new set of detections of the same
 * scene.  Held (issue #15, on rendered and detected scenes):
 *   - the pixel path against the pose path over 50 seeds: its RMSE of X at
 *     most 0.8 of the pose path's (translation and rotation), and it wins
 *     on at least 90% of the seeds (issue #15; here the detector's corners
 *     are far better than the 0.3 px of test_pixel_accuracy.c, where that
 *     share is beyond an ML estimator: docs/pixels.md);
 *   - the reported intervals over 100 seeds, split into what varies with
 *     the noise (its sd within the reported 1-sigma per axis) and what the
 *     scene fixes (the detector's bias on these renders: the mean error
 *     within 2 reported sigma).  Coverage over noise draws of ONE scene is
 *     printed, not held: the fixed part puts tz at 1.6 sigma on every draw
 *     (docs/pixels.md).  Coverage over different scenes, which is what the
 *     intervals promise, is test_rendered_scene_coverage below.
 * The reference for the corners themselves is the renderer's exact
 * projection (tools/render, checked against NumPy in check_render_numpy.py). */
static void test_rendered_seeds(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    cJSON *ti = read_json("datasets/demo/truth_images.json"), *tr = read_json("datasets/demo/truth.json");
    const cJSON *jc = cJSON_GetObjectItemCaseSensitive(ti, "camera"), *jb = cJSON_GetObjectItemCaseSensitive(ti, "board");
    tram_camera cam;
    memset(&cam, 0, sizeof cam);
    cam.fx = num(jc, "fx"); cam.fy = num(jc, "fy"); cam.cx = num(jc, "cx"); cam.cy = num(jc, "cy");
    cam.k1 = num(jc, "k1"); cam.k2 = num(jc, "k2"); cam.distortion = TRAM_DISTORTION_RADIAL2;
    cam.width = (size_t)num(jc, "width"); cam.height = (size_t)num(jc, "height");
    tram_board board;
    tram_error e;
    assert_int_equal(tram_board_init(&board, (int)num(jb, "cols"), (int)num(jb, "rows"), num(jb, "square"),
                                     TRAM_LENGTH_MM, &e), TRAM_OK);
    tram_se3 Z, X;
    matrix_of(cJSON_GetObjectItemCaseSensitive(ti, "T_base_target"), &Z);
    matrix_of(cJSON_GetObjectItemCaseSensitive(cJSON_GetObjectItemCaseSensitive(tr, "wrist_camera"), "T_flange_sensor"), &X);
    cJSON_Delete(ti);
    cJSON_Delete(tr);
    tram_records *rec = NULL;
    assert_int_equal(tram_records_read_file("datasets/demo/wrist_camera.csv", NULL, &rec, &e), TRAM_OK);
    size_t n = rec->count, nc = tram_board_corner_count(&board);
    tram_grey_image **clean = calloc(n, sizeof *clean);
    double *tuv = malloc(n * nc * 2 * sizeof *tuv);
    for (size_t i = 0; i < n; i++) {
        tram_se3 PX, S;
        tram_se3_compose(&rec->stations[i].T_base_flange, &X, &PX);
        tram_se3_invert(&PX, &S);
        tram_se3_compose(&S, &Z, &S);
        render_scene sc;
        render_scene_init(&sc, &board, &cam, &S);
        sc.blur_sigma_px = 0.8;
        sc.noise_sigma = 0;
        sc.gain_min = 0.7;
        sc.gain_max = 1.15;
        sc.seed = 58001 + i;
        render_truth truth;
        assert_int_equal(render_chessboard(&sc, &clean[i], &truth, &e), TRAM_OK);
        memcpy(tuv + 2 * nc * i, truth.uv, 2 * nc * sizeof *tuv);
        render_truth_free(&truth);
    }
    double *xyz = malloc(n * nc * 3 * sizeof *xyz);
    tram_detect_options dopt;
    tram_detect_options_init(&dopt);
    dopt.threads = 1;
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    enum { SEEDS = 100, VERSUS = 50, DUMPED = 20 };
    /* the first seeds' detections, for the SciPy reference
     * (tests/ref/check_render_scipy.py) */
    const char *out_dir = getenv("TRAM_TEST_OUT");
    int inside[6] = {0}, wins_t = 0, wins_r = 0, used = 0;
    double ss[4] = {0}, bias[2] = {0}, err2 = 0;
    size_t ncorner = 0, flagged = 0;
    const size_t npx = cam.width * cam.height;
    tram_grey_image *im = NULL;
    assert_int_equal(tram_grey_image_create(cam.width, cam.height, &im, &e), TRAM_OK);
    /* a field of standard normals (seed 59000), 3.3x the image's pixels */
    enum { NFIELD = 4000037 };
    float *field = malloc(NFIELD * sizeof *field);
    test_rng frng = {59000};
    for (size_t p = 0; p < NFIELD; p++) field[p] = (float)test_rng_normal(&frng);
    double esum[6] = {0}, esq[6] = {0}, sig[6] = {0};
    printf("[ seed     ] rendered demo, many draws: images rendered once (seeds 58001 + station), "
           "grey-level noise seeds 59001 .. %d\n", 59000 + SEEDS);
    for (int k = 0; k < SEEDS; k++) {
        test_rng rng = {59001 + (uint64_t)k};
        tram_pixel_obs *obs = NULL;
        assert_int_equal(tram_pixel_obs_create(cam.width, cam.height, NULL, &obs, &e), TRAM_OK);
        size_t m = 0;
        for (size_t i = 0; i < n; i++) {
            /* white noise read from the field at a random offset (a fresh
             * normal per pixel would cost 2e9 draws) */
            const size_t off = (size_t)(test_rng_uniform(&rng) * (double)(NFIELD - npx));
            const float *fz = field + off, *cl = clean[i]->pixels;
            for (size_t p = 0; p < npx; p++) {
                float v = cl[p] + 1.5f * fz[p];
                im->pixels[p] = v < 0 ? 0 : v > 255 ? 255 : v;
            }
            tram_detection *d = NULL;
            assert_int_equal(tram_detect_chessboard(im, &board, &dopt, &d, &e), TRAM_OK);
            if (d->found)
                for (size_t c = 0; c < nc; c++) {
                    char pid[32];
                    snprintf(pid, sizeof pid, "%zu", c);
                    assert_int_equal(tram_pixel_obs_add(obs, rec->stations[i].id, pid, d->uv[2 * c],
                                                        d->uv[2 * c + 1], &e), TRAM_OK);
                    tram_board_corner(&board, c, xyz + 3 * m++);
                    const double du = d->uv[2 * c] - tuv[2 * (nc * i + c)],
                                 dv = d->uv[2 * c + 1] - tuv[2 * (nc * i + c) + 1];
                    bias[0] += du;
                    bias[1] += dv;
                    err2 += du * du + dv * dv;
                    ncorner++;
                }
            tram_detection_destroy(d);
        }
        if (out_dir && k < DUMPED) dump_seed(out_dir, k, obs);
        double f[6];
        if (k < VERSUS) {
            compare(rec, &cam, obs, xyz, &X, f);
            wins_t += f[0] <= f[2];
            wins_r += f[1] <= f[3];
            for (int q = 0; q < 4; q++) ss[q] += f[q] * f[q];
            used++;
        }
        tram_solution *a = NULL;
        tram_status st = tram_solve_pixels(rec, TRAM_SETUP_EYE_IN_HAND, &cam, obs, xyz, &so, NULL, &a, &e);
        if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
        assert_true(a->unc.valid);
        flagged += a->pixels->n_station_outliers;
        tram_se3 Xe = a->X, Xt = X;
        tram_mat3 Re, Rt, Ret, D;
        double te[3], tt[3], w[3];
        tram_se3_to_rt(&Xe, &Re, te);
        tram_se3_to_rt(&Xt, &Rt, tt);
        tram_so3_transpose(&Re, &Ret);
        tram_so3_mul(&Ret, &Rt, &D);
        tram_so3_log(&D, w);
        for (int q = 0; q < 6; q++) {
            const double dq = q < 3 ? tt[q] - te[q] : w[q - 3] * 180.0 / M_PI;
            inside[q] += fabs(dq) <= a->unc.half95[q];
            esum[q] += dq;
            esq[q] += dq * dq;
            sig[q] += a->unc.sigma[q];
        }
        tram_solution_destroy(a);
        tram_pixel_obs_destroy(obs);
    }
    for (int q = 0; q < 4; q++) ss[q] = sqrt(ss[q] / used);
    const double cn = (double)(ncorner ? ncorner : 1);
    printf("[ figures  ] rendered demo, %d draws of grey-level noise 1.5: detector corners against the "
           "renderer's truth: mean (%.4f, %.4f) px, rms %.4f px\n",
           SEEDS, bias[0] / cn, bias[1] / cn, sqrt(err2 / cn));
    printf("[ figures  ] rendered demo, %d seeds: X from pixels vs pose path: translation error smaller "
           "or equal on %d (%.0f%%), rotation on %d (%.0f%%) (issue #15 asked 90%%); RMSE translation "
           "%.4f vs %.4f mm, rotation %.5f vs %.5f deg\n",
           used, wins_t, 100.0 * wins_t / used, wins_r, 100.0 * wins_r / used, ss[0], ss[2], ss[1], ss[3]);
    printf("[ figures  ] rendered demo, 95%% intervals of X over %d seeds: tx %d%% ty %d%% tz %d%% "
           "rx %d%% ry %d%% rz %d%%; stations flagged %zu\n",
           SEEDS, inside[0], inside[1], inside[2], inside[3], inside[4], inside[5], flagged);
    for (int q = 0; q < 6; q++) {
        const double mu = esum[q] / SEEDS, sd = sqrt(fmax(esq[q] / SEEDS - mu * mu, 0));
        /* the noise part within the reported sigma, the scene's fixed part
         * (the detector's bias on these renders) within 2 of them */
        assert_true(sd <= sig[q] / SEEDS);
        assert_true(fabs(mu) <= 2 * sig[q] / SEEDS);
        printf("[ figures  ]   axis %s: error mean %+.5f, sd %.5f, reported 1-sigma %.5f (%s)\n",
               (const char *[]){"tx", "ty", "tz", "rx", "ry", "rz"}[q], mu, sd, sig[q] / SEEDS,
               q < 3 ? "mm" : "deg");
    }
    free(field);
    assert_true(ss[0] <= 0.8 * ss[2] && ss[1] <= 0.8 * ss[3]);
    assert_true(wins_t >= 0.9 * used && wins_r >= 0.9 * used);
    tram_grey_image_destroy(im);
    for (size_t i = 0; i < n; i++) render_image_destroy(clean[i]);
    free(clean);
    free(tuv);
    free(xyz);
    tram_records_destroy(rec);
}

/* Coverage of the reported 95% intervals over 100 different rendered
 * scenes (issue #15): per seed, the first 10 stations of the demo with each
 * robot pose moved by a random 0.3 deg and 1 mm (so every corner falls on
 * a new sub-pixel phase and the detector's bias is drawn anew), rendered at
 * 640 x 480 by a camera of our own (half the demo's focal length, the same
 * distortion) with noise 1.5, detected, and solved from pixels with the
 * camera known.  Each axis within 88-99% (binomial sd 2.2 points at 100
 * seeds: 90% is 2.3 sd from 95%, so with six axes a correct interval would
 * fail 90% in about one set of seeds in ten; 88% is 3.2 sd). */
static void test_rendered_scene_coverage(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    cJSON *ti = read_json("datasets/demo/truth_images.json"), *tr = read_json("datasets/demo/truth.json");
    const cJSON *jc = cJSON_GetObjectItemCaseSensitive(ti, "camera"), *jb = cJSON_GetObjectItemCaseSensitive(ti, "board");
    tram_camera cam;
    memset(&cam, 0, sizeof cam);
    cam.fx = 500; cam.fy = 500; cam.cx = 320.3; cam.cy = 239.05;
    cam.k1 = num(jc, "k1"); cam.k2 = num(jc, "k2"); cam.distortion = TRAM_DISTORTION_RADIAL2;
    cam.width = 640; cam.height = 480;
    tram_board board;
    tram_error e;
    assert_int_equal(tram_board_init(&board, (int)num(jb, "cols"), (int)num(jb, "rows"), num(jb, "square"),
                                     TRAM_LENGTH_MM, &e), TRAM_OK);
    tram_se3 Z, X;
    matrix_of(cJSON_GetObjectItemCaseSensitive(ti, "T_base_target"), &Z);
    matrix_of(cJSON_GetObjectItemCaseSensitive(cJSON_GetObjectItemCaseSensitive(tr, "wrist_camera"), "T_flange_sensor"), &X);
    cJSON_Delete(ti);
    cJSON_Delete(tr);
    tram_records *rec0 = NULL;
    assert_int_equal(tram_records_read_file("datasets/demo/wrist_camera.csv", NULL, &rec0, &e), TRAM_OK);
    enum { SEEDS = 100, NST = 10 };
    const size_t nc = tram_board_corner_count(&board);
    double *xyz = malloc(NST * nc * 3 * sizeof *xyz);
    tram_detect_options dopt;
    tram_detect_options_init(&dopt);
    dopt.threads = 1;
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    int inside[6] = {0}, solved = 0;
    printf("[ seed     ] rendered scenes: seeds 60001 .. %d (pose moves, then the render's noise)\n",
           60000 + SEEDS);
    for (int k = 0; k < SEEDS; k++) {
        test_rng rng = {60001 + (uint64_t)k};
        tram_records *rec = tram_records_clone(rec0);
        assert_non_null(rec);
        rec->count = NST;
        tram_pixel_obs *obs = NULL;
        assert_int_equal(tram_pixel_obs_create(cam.width, cam.height, NULL, &obs, &e), TRAM_OK);
        size_t m = 0;
        for (size_t i = 0; i < NST; i++) {
            double xi[6];
            for (int q = 0; q < 3; q++) xi[q] = 1.0 * test_rng_normal(&rng);                /* mm */
            for (int q = 3; q < 6; q++) xi[q] = 0.3 * M_PI / 180 * test_rng_normal(&rng); /* rad */
            tram_se3 D, P, PX, S;
            tram_se3_exp(xi, &D);
            tram_se3_compose(&rec->stations[i].T_base_flange, &D, &P);
            rec->stations[i].T_base_flange = P;
            tram_se3_compose(&P, &X, &PX);
            tram_se3_invert(&PX, &S);
            tram_se3_compose(&S, &Z, &S);
            render_scene sc;
            render_scene_init(&sc, &board, &cam, &S);
            sc.supersample = 4;
            sc.blur_sigma_px = 0.8;
            sc.noise_sigma = 1.5;
            sc.gain_min = 0.7;
            sc.gain_max = 1.15;
            sc.seed = 60001 + 100 * (uint64_t)k + i;
            tram_grey_image *im = NULL;
            render_truth truth;
            assert_int_equal(render_chessboard(&sc, &im, &truth, &e), TRAM_OK);
            tram_detection *d = NULL;
            assert_int_equal(tram_detect_chessboard(im, &board, &dopt, &d, &e), TRAM_OK);
            if (d->found)
                for (size_t c = 0; c < nc; c++) {
                    char pid[32];
                    snprintf(pid, sizeof pid, "%zu", c);
                    assert_int_equal(tram_pixel_obs_add(obs, rec->stations[i].id, pid, d->uv[2 * c],
                                                        d->uv[2 * c + 1], &e), TRAM_OK);
                    tram_board_corner(&board, c, xyz + 3 * m++);
                }
            tram_detection_destroy(d);
            render_truth_free(&truth);
            render_image_destroy(im);
        }
        tram_solution *a = NULL;
        tram_status st = tram_solve_pixels(rec, TRAM_SETUP_EYE_IN_HAND, &cam, obs, xyz, &so, NULL, &a, &e);
        if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("seed %d: %s", 60001 + k, e.message);
        assert_true(a->unc.valid);
        tram_mat3 Re, Rt, Ret, Dr;
        double te[3], tt[3], w[3];
        tram_se3_to_rt(&a->X, &Re, te);
        tram_se3_to_rt(&X, &Rt, tt);
        tram_so3_transpose(&Re, &Ret);
        tram_so3_mul(&Ret, &Rt, &Dr);
        tram_so3_log(&Dr, w);
        for (int q = 0; q < 6; q++) {
            const double dq = q < 3 ? tt[q] - te[q] : w[q - 3] * 180.0 / M_PI;
            inside[q] += fabs(dq) <= a->unc.half95[q];
        }
        solved++;
        tram_solution_destroy(a);
        tram_pixel_obs_destroy(obs);
        tram_records_destroy(rec);
    }
    printf("[ figures  ] rendered scenes (640 x 480, 10 stations), 95%% intervals of X over %d scenes: "
           "tx %d%% ty %d%% tz %d%% rx %d%% ry %d%% rz %d%%\n",
           solved, inside[0], inside[1], inside[2], inside[3], inside[4], inside[5]);
    for (int q = 0; q < 6; q++) {
        assert_true(inside[q] >= 88);
        assert_true(inside[q] <= 99);
    }
    free(xyz);
    tram_records_destroy(rec0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_rendered_demo),
                                       cmocka_unit_test(test_rendered_seeds),
                                       cmocka_unit_test(test_rendered_scene_coverage)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
