/* test_se3.c - unit tests of se3.c, including facts of the trade. */
#include "test_util.h"

static void test_invert_is_transpose_rule(void **state)
{
    (void)state;
    /* Common practice: inverse of [R t; 0 1] is [R^T -R^T t; 0 1]. */
    test_rng r = test_rng_seeded("se3 invert", 2001);
    for (int k = 0; k < 1000; k++) {
        tram_se3 T, Ti, I;
        test_random_pose(&r, 1000.0, &T);
        tram_se3_invert(&T, &Ti);
        for (int i = 0; i < 3; i++) {
            for (int j = 0; j < 3; j++) assert_close(Ti.m[i][j], T.m[j][i], 0.0);
            double e = -(T.m[0][i] * T.m[0][3] + T.m[1][i] * T.m[1][3] + T.m[2][i] * T.m[2][3]);
            assert_close(Ti.m[i][3], e, 1e-9);
        }
        tram_se3_compose(&T, &Ti, &I);
        for (int i = 0; i < 4; i++)
            for (int j = 0; j < 4; j++) assert_close(I.m[i][j], i == j ? 1.0 : 0.0, 1e-9); /* |t| up to 1000 */
    }
}

static void test_direction_ignores_translation(void **state)
{
    (void)state;
    /* Common practice: a direction (homogeneous 0) is unaffected by translation. */
    tram_mat3 R;
    tram_so3_axis_rotation(2, M_PI / 2, &R);
    double t[3] = {100, -50, 7}, d[3] = {1, 0, 0}, out[3];
    tram_se3 T;
    tram_se3_from_rt(&R, t, &T);
    tram_se3_apply_direction(&T, d, out);
    assert_close(out[0], 0.0, 1e-15);
    assert_close(out[1], 1.0, 1e-15);
    assert_close(out[2], 0.0, 0.0);
    tram_se3_apply_point(&T, d, out);
    assert_close(out[0], 100.0, 1e-12);
    assert_close(out[1], -49.0, 1e-12);
}

static void test_origin_round_trip(void **state)
{
    (void)state;
    /* Common practice: the origin of frame b, mapped into a and back with
     * the inverse, is (0, 0, 0); and T_a_b maps b's origin to t_a_b. */
    test_rng r = test_rng_seeded("se3 origin", 2002);
    for (int k = 0; k < 1000; k++) {
        tram_se3 T_a_b, T_b_a;
        test_random_pose(&r, 500.0, &T_a_b);
        tram_se3_invert(&T_a_b, &T_b_a);
        double o[3] = {0, 0, 0}, pa[3], pb[3];
        tram_se3_apply_point(&T_a_b, o, pa);
        for (int i = 0; i < 3; i++) assert_close(pa[i], T_a_b.m[i][3], 0.0);
        tram_se3_apply_point(&T_b_a, pa, pb);
        for (int i = 0; i < 3; i++) assert_close(pb[i], 0.0, 1e-12);
    }
}

static void test_compose_chain(void **state)
{
    (void)state;
    /* T_a_c = T_a_b T_b_c: a point in c mapped in two steps equals one step. */
    test_rng r = test_rng_seeded("se3 compose", 2003);
    tram_se3 T_a_b, T_b_c, T_a_c;
    test_random_pose(&r, 10.0, &T_a_b);
    test_random_pose(&r, 10.0, &T_b_c);
    tram_se3_compose(&T_a_b, &T_b_c, &T_a_c);
    double p_c[3] = {1, 2, 3}, p_b[3], p_a[3], q_a[3];
    tram_se3_apply_point(&T_b_c, p_c, p_b);
    tram_se3_apply_point(&T_a_b, p_b, p_a);
    tram_se3_apply_point(&T_a_c, p_c, q_a);
    assert_true(test_max_abs_diff(p_a, q_a, 3) < 1e-12);
    /* aliasing: output may be an input */
    tram_se3_compose(&T_a_b, &T_b_c, &T_a_b);
    assert_true(test_max_abs_diff(&T_a_b.m[0][0], &T_a_c.m[0][0], 16) == 0.0);
}

static void test_exp_log(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("se3 exp/log", 2004);
    for (int k = 0; k < 2000; k++) {
        tram_se3 T, T2;
        double xi[6];
        test_random_pose(&r, 100.0, &T);
        tram_se3_log(&T, xi);
        tram_se3_exp(xi, &T2);
        double ang, len;
        tram_se3_distance(&T, &T2, &ang, &len);
        assert_true(ang < 1e-9 && len < 1e-9);
    }
    double small[6] = {1, 2, 3, 1e-9, -2e-9, 0}, back[6];
    tram_se3 T;
    tram_se3_exp(small, &T);
    tram_se3_log(&T, back);
    assert_true(test_max_abs_diff(small, back, 6) < 1e-12);
}

static void test_validity(void **state)
{
    (void)state;
    tram_se3 T;
    tram_se3_identity(&T);
    assert_true(tram_se3_is_valid(&T, TRAM_SO3_VALID_TOL));
    T.m[3][0] = 1e-3;
    assert_false(tram_se3_is_valid(&T, TRAM_SO3_VALID_TOL));
    tram_se3_identity(&T);
    T.m[0][0] = -1.0; /* reflection */
    assert_false(tram_se3_is_valid(&T, TRAM_SO3_VALID_TOL));
    tram_se3_identity(&T);
    T.m[0][3] = NAN;
    assert_false(tram_se3_is_valid(&T, TRAM_SO3_VALID_TOL));
}

static void test_distance_units(void **state)
{
    (void)state;
    tram_se3 a, b;
    tram_mat3 R;
    tram_se3_identity(&a);
    tram_so3_axis_rotation(0, M_PI / 6, &R);
    double t[3] = {3, 4, 0};
    tram_se3_from_rt(&R, t, &b);
    double ang, len;
    tram_se3_distance(&a, &b, &ang, &len);
    assert_close(ang, 30.0, 1e-12);
    assert_close(len, 5.0, 1e-12);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_invert_is_transpose_rule),
        cmocka_unit_test(test_direction_ignores_translation),
        cmocka_unit_test(test_origin_round_trip), cmocka_unit_test(test_compose_chain),
        cmocka_unit_test(test_exp_log), cmocka_unit_test(test_validity),
        cmocka_unit_test(test_distance_units)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
