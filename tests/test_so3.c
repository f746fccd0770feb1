/* test_so3.c - unit tests of so3.c: exp/log, angle, nearest rotation, mean. */
#include "test_util.h"

static void test_exp_log_round_trip(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("so3 exp/log", 1001);
    for (int k = 0; k < 10000; k++) {
        tram_mat3 R, R2;
        double w[3];
        test_random_rotation(&r, &R);
        tram_so3_log(&R, w);
        assert_true(sqrt(w[0]*w[0]+w[1]*w[1]+w[2]*w[2]) <= M_PI + 1e-12);
        tram_so3_exp(w, &R2);
        assert_rot_near(&R, &R2, 1e-12);
    }
}

static void test_log_near_zero_and_pi(void **state)
{
    (void)state;
    double axis[3] = {0.48, -0.6, 0.64}; /* unit */
    const double angles[] = {0.0, 1e-12, 1e-9, 1e-6, 1e-3, M_PI - 1e-3, M_PI - 1e-7,
                             M_PI - 1e-10, M_PI};
    for (size_t i = 0; i < sizeof angles / sizeof angles[0]; i++) {
        double w[3] = {axis[0] * angles[i], axis[1] * angles[i], axis[2] * angles[i]}, back[3];
        tram_mat3 R, R2;
        tram_so3_exp(w, &R);
        tram_so3_log(&R, back);
        tram_so3_exp(back, &R2);
        assert_rot_near(&R, &R2, 1e-13);
        assert_close(tram_so3_angle(&R), angles[i], 1e-12);
        if (angles[i] < M_PI - 1e-8) assert_true(test_max_abs_diff(w, back, 3) < 1e-9);
    }
    /* Exactly pi about z: the axis comes out with its largest component
     * positive (documented choice). */
    tram_mat3 Rz;
    tram_so3_axis_rotation(2, M_PI, &Rz);
    double w[3];
    tram_so3_log(&Rz, w);
    assert_close(w[2], M_PI, 1e-12);
}

static void test_nearest_and_defect(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("so3 nearest", 1002);
    for (int k = 0; k < 200; k++) {
        tram_mat3 R, M, N;
        test_random_rotation(&r, &R);
        M = R;
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++) M.m[i][j] += 1e-4 * (test_rng_uniform(&r) - 0.5);
        assert_true(tram_so3_defect(&M) > 1e-6);
        tram_so3_nearest(&M, &N);
        assert_true(tram_so3_is_valid(&N, 1e-12));
        assert_rot_near(&N, &R, 1e-3);
    }
    /* A reflection is never returned: det -1 input gives det +1 output. */
    tram_mat3 F = {{{1, 0, 0}, {0, 1, 0}, {0, 0, -1}}}, N;
    tram_so3_nearest(&F, &N);
    assert_true(tram_so3_is_valid(&N, 1e-12));
    /* Zero matrix: identity (documented). */
    tram_mat3 Z;
    memset(&Z, 0, sizeof Z);
    tram_so3_nearest(&Z, &N);
    assert_close(N.m[0][0], 1.0, 0.0);
}

static void test_mean(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("so3 mean", 1003);
    tram_mat3 R0, Rs[50], mean;
    test_random_rotation(&r, &R0);
    /* Symmetric perturbations +/-w about R0 average back to R0. */
    for (int k = 0; k < 25; k++) {
        double w[3] = {0.1 * test_rng_normal(&r), 0.1 * test_rng_normal(&r),
                       0.1 * test_rng_normal(&r)};
        double mw[3] = {-w[0], -w[1], -w[2]};
        tram_mat3 E;
        tram_so3_exp(w, &E);
        tram_so3_mul(&R0, &E, &Rs[2 * k]);
        tram_so3_exp(mw, &E);
        tram_so3_mul(&R0, &E, &Rs[2 * k + 1]);
    }
    tram_so3_mean(Rs, NULL, 50, &mean);
    assert_rot_near(&mean, &R0, 1e-3);
    tram_so3_mean(Rs, NULL, 0, &mean);
    assert_close(mean.m[1][1], 1.0, 0.0);
}

static void test_aliasing(void **state)
{
    (void)state;
    tram_mat3 a, b, c;
    tram_so3_axis_rotation(0, 0.3, &a);
    tram_so3_axis_rotation(1, 0.4, &b);
    tram_so3_mul(&a, &b, &c);
    tram_so3_mul(&a, &b, &a); /* out aliases the first input */
    assert_rot_near(&a, &c, 0.0);
    tram_so3_transpose(&a, &a);
    tram_so3_mul(&a, &c, &a);
    assert_close(tram_so3_angle(&a), 0.0, 1e-15);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_exp_log_round_trip), cmocka_unit_test(test_log_near_zero_and_pi),
        cmocka_unit_test(test_nearest_and_defect), cmocka_unit_test(test_mean),
        cmocka_unit_test(test_aliasing)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
