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

/* The skew freed with the camera (a camera calibrated with free skew):
 * from a start 0.5 px off it returns to the scene's 0 on exact pixels;
 * without free_skew it stays where the camera file put it. */
static void test_refine_skew(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("pixels joint camera with skew", 53005);
    scene s;
    scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 15, 0.0);
    tram_camera start = s.cam;
    start.fx *= 1.005;
    start.skew = 0.5;
    tram_pixel_solve_options po;
    tram_pixel_solve_options_init(&po);
    po.refine_intrinsics = 1;
    po.free_skew = 1;
    tram_solution *sol = NULL;
    tram_error e;
    tram_status st = tram_solve_pixels(s.rec, s.setup, &start, s.obs, s.xyz, NULL, &po, &sol, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    printf("[ figures  ] joint camera with free skew from skew 0.5 px: skew %.3e px (1-sigma %.3g), fx %.9f "
           "(true %.9f)\n", sol->pixels->camera.skew, sol->pixels->camera_sigma[TRAM_CAM_SKEW],
           sol->pixels->camera.fx, s.cam.fx);
    assert_true(fabs(sol->pixels->camera.skew) < 1e-6);
    assert_true(sol->pixels->camera_sigma[TRAM_CAM_SKEW] > 0);
    expect_near(&sol->X, &s.X, 1e-7, 1e-5, "X (camera and skew refined)");
    tram_solution_destroy(sol);
    po.free_skew = 0;
    st = tram_solve_pixels(s.rec, s.setup, &start, s.obs, s.xyz, NULL, &po, &sol, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    assert_true(sol->pixels->camera.skew == 0.5);
    assert_true(sol->pixels->camera_sigma[TRAM_CAM_SKEW] == 0);
    tram_solution_destroy(sol);
    scene_free(&s);
}

/* The station bootstrap of the pixel fit: on a noisy scene (0.3 px, 12
 * stations) it uses nearly every resample and its sigma of X agrees with
 * the Gauss-Newton sigma to within the spread of a 12-station bootstrap
 * (a factor 0.5 .. 2 per axis); the pose path's bootstrap is not kept. */
static void test_bootstrap(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("pixels bootstrap", 53006);
    scene s;
    scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 12, 0.3);
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    so.bootstrap = 200;
    so.seed = 7;
    tram_solution *sol = NULL;
    tram_error e;
    tram_status st = tram_solve_pixels(s.rec, s.setup, &s.cam, s.obs, s.xyz, &so, NULL, &sol, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    assert_true(sol->unc.valid && sol->unc.bootstrap_valid);
    assert_true(sol->unc.bootstrap_used >= 190);
    printf("[ figures  ] pixel bootstrap (200 resamples, seed 7, %zu used) / Gauss-Newton sigma of X:",
           sol->unc.bootstrap_used);
    for (int a = 0; a < 6; a++) {
        double ratio = sol->unc.bootstrap_sigma[a] / sol->unc.sigma[a];
        printf(" %.2f", ratio);
        assert_true(ratio > 0.5 && ratio < 2.0);
        assert_true(sol->unc.bootstrap_lo[a] < 0 && sol->unc.bootstrap_hi[a] > 0);
    }
    printf("\n");
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

/* Solve s (robust, default options) and count the flags. */
static tram_solution *solve_flags(const scene *s, size_t *st_flags, size_t *corner_flags)
{
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    tram_solution *sol = NULL;
    tram_error e;
    tram_status st = tram_solve_pixels(s->rec, s->setup, &s->cam, s->obs, s->xyz, &so, NULL, &sol, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    *st_flags = sol->pixels->n_station_outliers;
    *corner_flags = sol->pixels->n_corner_outliers;
    return sol;
}

/* Extra Gaussian noise of sigma extra_px on every corner of station sid. */
static void noisier(scene *s, test_rng *r, const char *sid, double extra_px)
{
    for (size_t o = 0; o < s->obs->n; o++)
        if (strcmp(s->obs->station_id[s->obs->station[o]], sid) == 0) {
            s->obs->uv[2 * o] += extra_px * test_rng_normal(r);
            s->obs->uv[2 * o + 1] += extra_px * test_rng_normal(r);
        }
}

/* The outlier rules (pixels_solve.c): clean stations are not flagged, even
 * when one view's corners are twice as noisy as the others' (as a detector
 * finds corners less well in a blurred or steep view: the pooled chi-square
 * rule used before flagged such stations); a station whose robot pose is
 * off by 0.5 mm and 0.1 degrees is flagged (the pose path's station test),
 * and so are corners moved by 3 px (10 sigmas), and nothing else. */
static void test_outlier_rules(void **state)
{
    (void)state;
    int seeds = 20;
    size_t clean_st = 0, clean_c = 0, noisy_st = 0, noisy_c = 0;
    printf("[ seed     ] pixel outlier rules: seeds 53101 .. %d\n", 53100 + seeds);
    for (int k = 0; k < seeds; k++) {
        test_rng rng = {53101 + (uint64_t)k};
        scene s;
        scene_make(&s, &rng, k % 2 ? TRAM_SETUP_EYE_TO_HAND : TRAM_SETUP_EYE_IN_HAND, 12, 0.3);
        size_t a, b;
        tram_solution_destroy(solve_flags(&s, &a, &b));
        clean_st += a;
        clean_c += b;
        noisier(&s, &rng, "s05", 0.3 * sqrt(3.0)); /* 0.6 px in all */
        tram_solution_destroy(solve_flags(&s, &a, &b));
        noisy_st += a;
        noisy_c += b;
        scene_free(&s);
    }
    printf("[ figures  ] %d clean scenes of 12 stations (0.3 px): %zu station and %zu corner flags; with "
           "one station at 0.6 px: %zu and %zu\n", seeds, clean_st, clean_c, noisy_st, noisy_c);
    assert_int_equal(clean_st, 0);
    assert_int_equal(noisy_st, 0);
    assert_true(clean_c <= 2 && noisy_c <= 2); /* 1% family-wise per scene */

    /* planted: station s04's robot pose moved, 5 corners of s07 moved */
    test_rng rng = test_rng_seeded("pixels planted outliers", 53121);
    scene s;
    scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 12, 0.3);
    tram_station *st4 = &s.rec->stations[3];
    assert_string_equal(st4->id, "s04");
    tram_mat3 R, E, R2;
    double t[3], w[3] = {0.1 * M_PI / 180, 0, 0};
    tram_se3_to_rt(&st4->T_base_flange, &R, t);
    tram_so3_exp(w, &E);
    tram_so3_mul(&R, &E, &R2);
    t[1] += 0.5;
    tram_se3_from_rt(&R2, t, &st4->T_base_flange);
    size_t moved = 0, planted[5];
    for (size_t o = 0; o < s.obs->n && moved < 5; o++)
        if (strcmp(s.obs->station_id[s.obs->station[o]], "s07") == 0 && o % 7 == 0) {
            s.obs->uv[2 * o] += 3.0;
            planted[moved++] = o;
        }
    size_t a, b;
    tram_solution *sol = solve_flags(&s, &a, &b);
    printf("[ figures  ] planted (s04's pose 0.5 mm and 0.1 deg off, 5 corners of s07 3 px off): %zu "
           "station(s) flagged (s04: %d), %zu corner(s)\n", a, sol->pixels->station_excluded[3], b);
    assert_int_equal(a, 1);
    assert_true(sol->pixels->station_excluded[3]);
    assert_true(sol->stations[3].outlier);
    for (size_t q = 0; q < 5; q++) assert_true(sol->pixels->excluded[planted[q]]);
    assert_true(b >= 5 && b <= 6); /* the five, and at most one corner of the noise's tail */
    tram_solution_destroy(sol);
    scene_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_exact),
                                       cmocka_unit_test(test_refine_intrinsics),
                                       cmocka_unit_test(test_refine_skew),
                                       cmocka_unit_test(test_bootstrap),
                                       cmocka_unit_test(test_refusals),
                                       cmocka_unit_test(test_outlier_rules)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
