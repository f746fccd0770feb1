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

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_rendered_demo)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
