/* test_euler.c - unit tests of euler.c: all 24 conventions, ranges, and
 * gimbal lock. */
#include "test_util.h"

static void test_names(void **state)
{
    (void)state;
    for (int s = 0; s < TRAM_EULER_COUNT; s++)
        assert_int_equal(tram_euler_parse(tram_euler_name((tram_euler_seq)s)), s);
    assert_int_equal(tram_euler_parse("zyx"), TRAM_EULER_UNSET);
    assert_int_equal(tram_euler_parse("ZYX-intrinsic"), TRAM_EULER_UNSET);
    assert_int_equal(tram_euler_parse("zzx-intrinsic"), TRAM_EULER_UNSET);
}

static void test_round_trip_all(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("euler round trip", 4001);
    for (int s = 0; s < TRAM_EULER_COUNT; s++) {
        int ax[3];
        tram_euler_axes((tram_euler_seq)s, ax);
        int proper = ax[0] == ax[2];
        for (int k = 0; k < 10000; k++) {
            tram_mat3 R, R2;
            double e[3];
            test_random_rotation(&r, &R);
            tram_euler_from_mat3((tram_euler_seq)s, &R, e);
            if (proper) assert_true(e[1] >= 0.0 && e[1] <= M_PI);
            else assert_true(e[1] >= -M_PI / 2 && e[1] <= M_PI / 2);
            tram_euler_to_mat3((tram_euler_seq)s, e, &R2);
            assert_rot_near(&R, &R2, 1e-12);
        }
    }
}

static void test_definition(void **state)
{
    (void)state;
    /* zyx-intrinsic (e1, e2, e3) = Rz(e1) Ry(e2) Rx(e3); xyz-extrinsic
     * (e1, e2, e3) = Rz(e3) Ry(e2) Rx(e1): both the same matrix here. */
    double e[3] = {0.3, -0.2, 1.1}, f[3] = {1.1, -0.2, 0.3};
    tram_mat3 Rz, Ry, Rx, t, A, B, C;
    tram_so3_axis_rotation(2, 0.3, &Rz);
    tram_so3_axis_rotation(1, -0.2, &Ry);
    tram_so3_axis_rotation(0, 1.1, &Rx);
    tram_so3_mul(&Rz, &Ry, &t);
    tram_so3_mul(&t, &Rx, &A);
    tram_euler_to_mat3(TRAM_EULER_ZYX_INTRINSIC, e, &B);
    tram_euler_to_mat3(TRAM_EULER_XYZ_EXTRINSIC, f, &C);
    assert_rot_near(&A, &B, 1e-15);
    assert_rot_near(&A, &C, 1e-15);
}

static void test_gimbal_lock(void **state)
{
    (void)state;
    /* Middle angle at +/-90 (Tait-Bryan) or 0/180 (proper): the round trip
     * is exact and the third angle is 0 (documented rule). */
    for (int s = 0; s < TRAM_EULER_COUNT; s++) {
        int ax[3];
        tram_euler_axes((tram_euler_seq)s, ax);
        int proper = ax[0] == ax[2];
        const double mids[2] = {proper ? 0.0 : M_PI / 2, proper ? M_PI : -M_PI / 2};
        for (int m = 0; m < 2; m++) {
            double e[3] = {0.7, mids[m], -0.4}, back[3];
            tram_mat3 R, R2;
            tram_euler_to_mat3((tram_euler_seq)s, e, &R);
            tram_euler_from_mat3((tram_euler_seq)s, &R, back);
            tram_euler_to_mat3((tram_euler_seq)s, back, &R2);
            assert_rot_near(&R, &R2, 1e-12);
            assert_close(back[2], 0.0, 1e-12);
        }
        /* Near lock: still exact to rounding. */
        for (int p = 4; p <= 14; p += 2) {
            double d = pow(10.0, -p);
            double e[3] = {0.7, (proper ? 0.0 : M_PI / 2) + (proper ? d : -d), -0.4}, back[3];
            tram_mat3 R, R2;
            tram_euler_to_mat3((tram_euler_seq)s, e, &R);
            tram_euler_from_mat3((tram_euler_seq)s, &R, back);
            tram_euler_to_mat3((tram_euler_seq)s, back, &R2);
            assert_rot_near(&R, &R2, 1e-12);
        }
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_names),
                                       cmocka_unit_test(test_round_trip_all),
                                       cmocka_unit_test(test_definition),
                                       cmocka_unit_test(test_gimbal_lock)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
