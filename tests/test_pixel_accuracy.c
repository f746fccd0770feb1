/* test_pixel_accuracy.c - accuracy of the solve from pixels on synthetic
 * corners from the published projection (tram/camera.h, Brown 1966) with
 * Gaussian pixel noise, scenes of our own (pixel_scene.h):
 *   - against the pose path (tram_pose_from_pixels per station, then
 *     tram_solve on those poses): the error of X from pixels is at most the
 *     pose path's on at least 90% of 50 seeds;
 *   - the 95% intervals of X reported from the pixel model contain the
 *     truth in 90-99% of 100 seeds (pooled over the 6 axes). */
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

static void test_against_pose_path(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    int better_t = 0, better_r = 0, seeds = 50;
    double sum_pix = 0, sum_pose = 0, sumr_pix = 0, sumr_pose = 0;
    printf("[ seed     ] pixel vs pose path: seeds 55001 .. %d\n", 55000 + seeds);
    for (int k = 0; k < seeds; k++) {
        test_rng rng = {55001 + (uint64_t)k};
        scene s;
        scene_make(&s, &rng, k % 2 ? TRAM_SETUP_EYE_TO_HAND : TRAM_SETUP_EYE_IN_HAND, 10, 0.3);
        tram_solution *a = NULL, *b = pose_path(&s, &so);
        tram_error e;
        tram_status st = tram_solve_pixels(s.rec, s.setup, &s.cam, s.obs, s.xyz, &so, NULL, &a, &e);
        if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
        double d[6], ang_a, len_a, ang_b, len_b;
        x_error(&a->X, &s.X, d, &ang_a, &len_a);
        x_error(&b->X, &s.X, d, &ang_b, &len_b);
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
    printf("[ figures  ] X from pixels vs pose path over %d seeds (10 stations, 0.3 px): translation "
           "error smaller or equal on %d, rotation on %d; RMSE translation %.4f vs %.4f mm, rotation "
           "%.5f vs %.5f deg\n",
           seeds, better_t, better_r, sqrt(sum_pix / seeds), sqrt(sum_pose / seeds),
           sqrt(sumr_pix / seeds), sqrt(sumr_pose / seeds));
    assert_true(better_t >= 0.9 * seeds);
    assert_true(better_r >= 0.9 * seeds);
}

static void test_interval_coverage(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    int inside[6] = {0}, seeds = 100, total = 0;
    printf("[ seed     ] pixel intervals: seeds 56001 .. %d\n", 56000 + seeds);
    for (int k = 0; k < seeds; k++) {
        test_rng rng = {56001 + (uint64_t)k};
        scene s;
        scene_make(&s, &rng, TRAM_SETUP_EYE_IN_HAND, 10, 0.3);
        tram_solution *a = NULL;
        tram_error e;
        tram_status st = tram_solve_pixels(s.rec, s.setup, &s.cam, s.obs, s.xyz, &so, NULL, &a, &e);
        if (st != TRAM_OK && st != TRAM_EUNDETERMINED) fail_msg("%s", e.message);
        assert_true(a->unc.valid);
        double d[6], ang, len;
        x_error(&a->X, &s.X, d, &ang, &len);
        for (int q = 0; q < 6; q++) {
            int in = fabs(d[q]) <= 1.96 * sqrt(a->unc.cov[13 * q]);
            inside[q] += in;
            total += in;
        }
        tram_solution_destroy(a);
        scene_free(&s);
    }
    printf("[ figures  ] 95%% intervals of X over %d seeds: tx %d%% ty %d%% tz %d%% rx %d%% ry %d%% "
           "rz %d%%; pooled %.1f%%\n",
           seeds, inside[0], inside[1], inside[2], inside[3], inside[4], inside[5],
           100.0 * total / (6.0 * seeds));
    assert_true(total >= 0.90 * 6 * seeds);
    assert_true(total <= 0.99 * 6 * seeds);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_against_pose_path),
                                       cmocka_unit_test(test_interval_coverage)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
