/* test_pixel_accuracy.c - accuracy of the solve from pixels on synthetic
 * corners from the published projection (tram/camera.h, Brown 1966) with
 * Gaussian pixel noise, scenes of our own (pixel_scene.h):
 *   - against the pose path (tram_pose_from_pixels per station, then
 *     tram_solve on those poses) over 50 seeds: the RMSE of X from pixels
 *     is at most 0.6 of the pose path's, and the pixels win per seed as
 *     often as an ML estimator can against a near-efficient one (issue #15's
 *     90% of seeds is beyond that limit in rotation: see the test);
 *   - the 95% intervals of X reported from the pixel model contain the
 *     truth in 90-99% of the seeds on every axis: with the camera exact
 *     (200 seeds), and with the camera calibrated beforehand from other
 *     views (tram_intrinsics_calibrate, Zhang 2000) and its covariance
 *     carried into X's (200 seeds); without that covariance the intervals
 *     are shown to be far too narrow. */
#include "pixel_scene.h"

static void x_error(const tram_se3 *X, const tram_se3 *truth, double dev[6], double *ang_deg, double *len)
{
    tram_se3_distance(X, truth, ang_deg, len);
    tram_mat3 Re, Rt, D, Ret;
    double te[3], tt[3], w[3];
    tram_se3_to_rt(X, &Re, te);
    tram_se3_to_rt(truth, &Rt, tt);
    tram_so3_transpose(&Re, &Ret);
    tram_so3_mul(&Ret, &Rt, &D);
    tram_so3_log(&D, w);
    for (int a = 0; a < 3; a++) {
        dev[a] = tt[a] - te[a];
        dev[3 + a] = w[a];
    }
}

static tram_solution *pose_path(const scene *s, const tram_solve_options *so)
{
    tram_records *rr = tram_records_clone(s->rec);
    double px[3 * 54], pu[2 * 54];
    for (size_t i = 0; i < rr->count; i++) {
        size_t k = 0;
        for (size_t o = 0; o < s->obs->n; o++)
            if (strcmp(s->obs->station_id[s->obs->station[o]], rr->stations[i].id) == 0) {
                memcpy(px + 3 * k, s->xyz + 3 * o, 3 * sizeof *px);
                memcpy(pu + 2 * k, s->obs->uv + 2 * o, 2 * sizeof *pu);
                k++;
            }
        tram_pose_result pr;
        tram_error e;
        assert_int_equal(tram_pose_from_pixels(&s->cam, px, pu, k, &pr, &e), TRAM_OK);
        rr->stations[i].T_sensor_target = pr.T_sensor_target;
    }
    rr->has_block[TRAM_BLOCK_SENSOR] = 1;
    rr->sensor_from_points = 1;
    tram_solution *sol = NULL;
    tram_error e;
    tram_status st = tram_solve(rr, s->setup, so, &sol, &e);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
    tram_records_destroy(rr);
    return sol;
}

/* The share of pairs (i, j), i != j, where |a_i| <= |a_i + g_j|: how often
 * the pixels would win if the pose path's error were theirs plus an
 * independent part g drawn as on the other seeds. */
static double independent_wins(const double (*a)[3], const double (*g)[3], int n)
{
    int w = 0, all = 0;
    for (int i = 0; i < n; i++)
        for (int j = 0; j < n; j++) {
            if (i == j) continue;
            double x = 0, y = 0;
            for (int q = 0; q < 3; q++) {
                x += a[i][q] * a[i][q];
                y += (a[i][q] + g[j][q]) * (a[i][q] + g[j][q]);
            }
            w += x <= y;
            all++;
        }
    return (double)w / all;
}

static double correlation(const double (*a)[3], const double (*g)[3], int n)
{
    double ag = 0, aa = 0, gg = 0;
    for (int i = 0; i < n; i++)
        for (int q = 0; q < 3; q++) {
            ag += a[i][q] * g[i][q];
            aa += a[i][q] * a[i][q];
            gg += g[i][q] * g[i][q];
        }
    return ag / sqrt(aa * gg);
}

/* The pixels against the pose path, per seed.  Issue #15 asked that the
 * pixels' error be at most the pose path's on 90% of 50 seeds.  With the
 * camera exact and Gaussian pixel noise the pixel solve is the maximum-
 * likelihood estimator (it matches SciPy's, tests/ref/check_pixels_scipy.py,
 * to 1e-7 mm per seed), and the pose path, which weights its noise per
 * axis, is nearly efficient: its error is then the ML's plus a part nearly
 * uncorrelated with it (Hausman, Econometrica 46(6), 1978: an efficient
 * estimator is uncorrelated with its difference from any consistent one),
 * and the ML's error is the larger on a share of seeds set by the two
 * parts' sizes and shapes alone.  That share is estimated here by pairing
 * each seed's ML error with the other seeds' differences: what the test
 * holds is that the pixels win about as often as that (within three
 * binomial sd), that the two parts are nearly uncorrelated, and that the
 * pixels' RMSE is at most 0.6 of the pose path's. */
static void test_against_pose_path(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    enum { SEEDS = 50 };
    int better_t = 0, better_r = 0, seeds = SEEDS;
    size_t st_flags = 0, corner_flags = 0;
    double sum_pix = 0, sum_pose = 0, sumr_pix = 0, sumr_pose = 0;
    double at[SEEDS][3], gt[SEEDS][3], ar[SEEDS][3], gr[SEEDS][3];
    printf("[ seed     ] pixel vs pose path: seeds 55001 .. %d\n", 55000 + seeds);
    for (int k = 0; k < seeds; k++) {
        test_rng rng = {55001 + (uint64_t)k};
        scene s;
        scene_make(&s, &rng, k % 2 ? TRAM_SETUP_EYE_TO_HAND : TRAM_SETUP_EYE_IN_HAND, 10, 0.3);
        tram_solution *a = NULL, *b = pose_path(&s, &so);
        tram_error e;
        tram_status st = tram_solve_pixels(s.rec, s.setup, &s.cam, s.obs, s.xyz, &so, NULL, &a, &e);
        if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
        st_flags += a->pixels->n_station_outliers;
        corner_flags += a->pixels->n_corner_outliers;
        double da[6], db[6], ang_a, len_a, ang_b, len_b;
        x_error(&a->X, &s.X, da, &ang_a, &len_a);
        x_error(&b->X, &s.X, db, &ang_b, &len_b);
        for (int q = 0; q < 3; q++) {
            at[k][q] = da[q];
            gt[k][q] = db[q] - da[q];
            ar[k][q] = da[3 + q];
            gr[k][q] = db[3 + q] - da[3 + q]; /* small angles: the rotation vectors' difference */
        }
        better_t += len_a <= len_b;
        better_r += ang_a <= ang_b;
        sum_pix += len_a * len_a;
        sum_pose += len_b * len_b;
        sumr_pix += ang_a * ang_a;
        sumr_pose += ang_b * ang_b;
        tram_solution_destroy(a);
        tram_solution_destroy(b);
        scene_free(&s);
    }
    double pt = independent_wins((const double(*)[3])at, (const double(*)[3])gt, seeds);
    double pr = independent_wins((const double(*)[3])ar, (const double(*)[3])gr, seeds);
    double ct = correlation((const double(*)[3])at, (const double(*)[3])gt, seeds);
    double cr = correlation((const double(*)[3])ar, (const double(*)[3])gr, seeds);
    printf("[ figures  ] X from pixels vs pose path over %d seeds (10 stations, 0.3 px): translation "
           "error smaller or equal on %d, rotation on %d; RMSE translation %.4f vs %.4f mm, rotation "
           "%.5f vs %.5f deg; pixel flags: %zu station(s), %zu corner(s)\n",
           seeds, better_t, better_r, sqrt(sum_pix / seeds), sqrt(sum_pose / seeds),
           sqrt(sumr_pix / seeds), sqrt(sumr_pose / seeds), st_flags, corner_flags);
    printf("[ figures  ] the pixels' error against the pose path's excess: correlation %.3f (translation), "
           "%.3f (rotation); with independent pairs the pixels would win on %.1f%% and %.1f%% of seeds "
           "(issue #15 asked for 90%%)\n", ct, cr, 100 * pt, 100 * pr);
    assert_true(sqrt(sum_pix / seeds) <= 0.6 * sqrt(sum_pose / seeds));
    assert_true(sqrt(sumr_pix / seeds) <= 0.6 * sqrt(sumr_pose / seeds));
    assert_true(fabs(ct) < 0.3 && fabs(cr) < 0.3);
    assert_true(better_t >= seeds * pt - 3 * sqrt(seeds * pt * (1 - pt)));
    assert_true(better_r >= seeds * pr - 3 * sqrt(seeds * pr * (1 - pr)));
}

/* Coverage of the 95% intervals of X per axis over `seeds` scenes.  With
 * calibrate: the camera is first calibrated (tram_intrinsics_calibrate,
 * full model) from 15 other views with the same noise and then held fixed,
 * its covariance passed (with_cov) or not. */
static void coverage(uint64_t seed0, int seeds, int calibrate, int with_cov, int inside[6])
{
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    /* with a calibrated camera, the plain least squares (a third of the
     * time): the default robust path ends in the same least squares over
     * the corners it keeps, and on these clean corners it keeps about all */
    so.robust = !calibrate;
    memset(inside, 0, 6 * sizeof *inside);
    for (int k = 0; k < seeds; k++) {
        test_rng rng = {seed0 + (uint64_t)k};
        scene s;
        scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 10, 0.3);
        tram_camera cam = s.cam;
        double cov[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM];
        tram_pixel_solve_options po;
        tram_pixel_solve_options_init(&po);
        if (calibrate) {
            tram_intrinsics_result *ir = scene_calibrate(&s, &rng, 15, 0.3);
            cam = ir->camera;
            assert_int_equal(tram_camera_calib_covariance(&ir->calib, cov), 1);
            if (with_cov) po.camera_cov = cov;
            tram_intrinsics_result_destroy(ir);
        }
        tram_solution *a = NULL;
        tram_error e;
        tram_status st = tram_solve_pixels(s.rec, s.setup, &cam, s.obs, s.xyz, &so, &po, &a, &e);
        if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
        assert_true(a->unc.valid);
        assert_int_equal(a->pixels->camera_cov_used, calibrate && with_cov);
        double d[6], ang, len;
        x_error(&a->X, &s.X, d, &ang, &len);
        /* the reported 95% half-widths (rotations in degrees), as printed */
        for (int q = 0; q < 6; q++)
            inside[q] += fabs(d[q]) * (q >= 3 ? 180.0 / M_PI : 1.0) <= a->unc.half95[q];
        tram_solution_destroy(a);
        scene_free(&s);
    }
}

static void print_coverage(const char *what, int seeds, const int inside[6])
{
    printf("[ figures  ] 95%% intervals of X, %s, over %d seeds: tx %.1f%% ty %.1f%% tz %.1f%% "
           "rx %.1f%% ry %.1f%% rz %.1f%%\n",
           what, seeds, 100.0 * inside[0] / seeds, 100.0 * inside[1] / seeds, 100.0 * inside[2] / seeds,
           100.0 * inside[3] / seeds, 100.0 * inside[4] / seeds, 100.0 * inside[5] / seeds);
}

/* Per axis within 90-99% (issue 15).  For a true 95% the count over n
 * seeds is binomial with sd sqrt(n 0.95 0.05): 2.2 points at 100 seeds,
 * where 90% is only 2.3 sd away (6 axes: about 1 set of seeds in 10 fails
 * an exact interval), 1.5 points at 200 seeds (3.2 sd: 1 in 250). */
static void assert_per_axis(int seeds, const int inside[6])
{
    for (int q = 0; q < 6; q++) {
        assert_true(inside[q] >= 0.90 * seeds);
        assert_true(inside[q] <= 0.99 * seeds);
    }
}

/* The camera known exactly: the pixel model's covariance alone. */
static void test_interval_coverage(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    int inside[6], seeds = 200;
    printf("[ seed     ] pixel intervals, camera exact: seeds 56001 .. %d\n", 56000 + seeds);
    coverage(56001, seeds, 0, 0, inside);
    print_coverage("camera exact", seeds, inside);
    assert_per_axis(seeds, inside);
}

/* The camera from its own calibration (15 views, 0.3 px): without its
 * covariance the intervals are far too narrow (the camera's error
 * dominates); with it (first-order propagation) they hold. */
static void test_interval_coverage_calibrated_camera(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    int inside[6], bare[6], seeds = 200, nb = 20;
    printf("[ seed     ] pixel intervals, calibrated camera: seeds 57001 .. %d\n", 57000 + seeds);
    coverage(57001, seeds, 1, 1, inside);
    print_coverage("camera calibrated, its covariance included", seeds, inside);
    coverage(57001, nb, 1, 0, bare);
    print_coverage("camera calibrated, taken as exact", nb, bare);
    assert_per_axis(seeds, inside);
    int pooled = 0;
    for (int q = 0; q < 6; q++) pooled += bare[q];
    assert_true(pooled < 0.75 * 6 * nb);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_against_pose_path),
                                       cmocka_unit_test(test_interval_coverage),
                                       cmocka_unit_test(test_interval_coverage_calibrated_camera)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
