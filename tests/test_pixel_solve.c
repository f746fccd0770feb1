/* test_pixel_solve.c - unit tests of the hand-eye solve from pixels
 * (solve/pixels_solve.c) on synthetic scenes of our own (pixel_scene.h):
 * exact recovery without noise in both setups, with distortion; refusals
 * of bad input; joint refinement of the camera. */
#include "pixel_scene.h"

static void expect_near(const tram_se3 *a, const tram_se3 *b, double tol_rad, double tol_len,
                        const char *what)
{
    double ang, len;
    tram_se3_distance(a, b, &ang, &len);
    if (!(ang * M_PI / 180 <= tol_rad) || !(len <= tol_len))
        fail_msg("%s differs by %.3g rad, %.3g mm", what, ang * M_PI / 180, len);
}

static void test_exact(void **state)
{
    (void)state;
    for (int k = 0; k < 2; k++) {
        tram_setup setup = k ? TRAM_SETUP_EYE_TO_HAND : TRAM_SETUP_EYE_IN_HAND;
        test_rng rng = test_rng_seeded(k ? "pixels exact eye-to-hand" : "pixels exact eye-in-hand", 53001 + (uint64_t)k);
        scene s;
        scene_make(&s, &rng, setup, 12, 0.0);
        tram_solution *sol = NULL;
        tram_error e;
        tram_status st = tram_solve_pixels(s.rec, setup, &s.cam, s.obs, s.xyz, NULL, NULL, &sol, &e);
        if (st != TRAM_OK) fail_msg("%s", e.message);
        assert_non_null(sol->pixels);
        expect_near(&sol->X, &s.X, 1e-9, 1e-7, "X");
        expect_near(&sol->Z, &s.Z, 1e-9, 1e-7, "Z");
        assert_true(sol->pixels->px.rms < 1e-8);
        assert_int_equal(sol->pixels->n_corner_outliers, 0);
        double ang, len;
        tram_se3_distance(&sol->X, &s.X, &ang, &len);
        printf("[ figures  ] %s, no noise: X off by %.2e rad, %.2e mm; rms %.2e px\n",
               tram_setup_name(setup), ang * M_PI / 180, len, sol->pixels->px.rms);
        tram_solution_destroy(sol);
        scene_free(&s);
    }
}

static void test_refine_intrinsics(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("pixels joint camera", 53003);
    scene s;
    scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 15, 0.0);
    tram_camera start = s.cam;
    start.fx *= 1.01;
    start.fy *= 1.01;
    start.cx += 4;
    start.k1 *= 0.9;
    tram_pixel_solve_options po;
    tram_pixel_solve_options_init(&po);
    po.refine_intrinsics = 1;
    tram_solution *sol = NULL;
    tram_error e;
    tram_status st = tram_solve_pixels(s.rec, s.setup, &start, s.obs, s.xyz, NULL, &po, &sol, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    assert_true(sol->pixels->intrinsics_refined);
    expect_near(&sol->X, &s.X, 1e-7, 1e-5, "X (camera refined)");
    assert_close(sol->pixels->camera.fx, s.cam.fx, 1e-5);
    assert_close(sol->pixels->camera.cx, s.cam.cx, 1e-5);
    assert_close(sol->pixels->camera.k1, s.cam.k1, 1e-8);
    printf("[ figures  ] joint camera from fx +1%%, cx +4 px, k1 -10%%: fx %.9f (true %.9f), rms %.2e px\n",
           sol->pixels->camera.fx, s.cam.fx, sol->pixels->px.rms);
    tram_solution_destroy(sol);
    scene_free(&s);
}

static void test_refusals(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("pixels refusals", 53004);
    scene s;
    scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 6, 0.0);
    tram_solution *sol = NULL;
    tram_error e;
    /* a station with pixels but no robot pose */
    tram_pixel_obs *o2 = NULL;
    char *text = NULL;
    assert_int_equal(tram_pixel_obs_write(s.obs, &text, &e), TRAM_OK);
    size_t len = strlen(text);
    char *t2 = malloc(len + 64);
    memcpy(t2, text, len);
    len += (size_t)sprintf(t2 + len, "s99,0,100.5,200.5\n");
    free(text);
    assert_int_equal(tram_pixel_obs_read_buffer("px.csv", t2, len, &o2, &e), TRAM_OK);
    double *xyz = NULL;
    assert_int_equal(tram_pixel_target_from_board(o2, &s.board, TRAM_LENGTH_MM, &xyz, &e), TRAM_OK);
    assert_int_equal(tram_solve_pixels(s.rec, s.setup, &s.cam, o2, xyz, NULL, NULL, &sol, &e), TRAM_EINPUT);
    assert_null(sol);
    assert_string_equal(e.file, "px.csv");
    assert_true(e.line > 0);
    assert_non_null(strstr(e.message, "s99"));
    printf("[ message  ] %s:%ld: %s\n", e.file, e.line, e.message);
    tram_pixel_target_free(xyz);
    tram_pixel_obs_destroy(o2);
    /* a point id that is not a corner of the board */
    len -= strlen("s99,0,100.5,200.5\n");
    len += (size_t)sprintf(t2 + len, "s01,54,100.5,200.5\n");
    assert_int_equal(tram_pixel_obs_read_buffer("px.csv", t2, len, &o2, &e), TRAM_OK);
    assert_int_equal(tram_pixel_target_from_board(o2, &s.board, TRAM_LENGTH_MM, &xyz, &e), TRAM_EINPUT);
    assert_true(e.line > 0);
    printf("[ message  ] %s:%ld: %s\n", e.file, e.line, e.message);
    tram_pixel_obs_destroy(o2);
    free(t2);
    /* a station whose corners lie on one line: no pose, exit 3 */
    tram_pixel_obs *o3 = NULL;
    assert_int_equal(tram_pixel_obs_create(1280, 960, NULL, &o3, &e), TRAM_OK);
    double *x3 = malloc(s.obs->n * 3 * sizeof *x3);
    size_t k = 0;
    for (size_t i = 0; i < s.obs->n; i++) {
        const char *sid = s.obs->station_id[s.obs->station[i]];
        long pid = strtol(s.obs->point_id[s.obs->point[i]], NULL, 10);
        if (strcmp(sid, "s03") == 0 && pid >= 9) continue; /* only the first row */
        assert_int_equal(tram_pixel_obs_add(o3, sid, s.obs->point_id[s.obs->point[i]], s.obs->uv[2 * i],
                                            s.obs->uv[2 * i + 1], &e), TRAM_OK);
        memcpy(x3 + 3 * k++, s.xyz + 3 * i, 3 * sizeof *x3);
    }
    assert_int_equal(tram_solve_pixels(s.rec, s.setup, &s.cam, o3, x3, NULL, NULL, &sol, &e),
                     TRAM_EUNDETERMINED);
    assert_non_null(strstr(e.message, "s03"));
    printf("[ message  ] %s\n", e.message);
    tram_solution_destroy(sol);
    free(x3);
    tram_pixel_obs_destroy(o3);
    /* a camera for another image size */
    tram_camera c2 = s.cam;
    c2.width = 640;
    assert_int_equal(tram_solve_pixels(s.rec, s.setup, &c2, s.obs, s.xyz, NULL, NULL, &sol, &e), TRAM_EINPUT);
    scene_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_exact),
                                       cmocka_unit_test(test_refine_intrinsics),
                                       cmocka_unit_test(test_refusals)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
