/* test_rotation.c - unit tests of rotation.c: quaternions, rotation vectors,
 * axis-angle. */
#include "test_util.h"

static void test_quat_round_trip(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("quat round trip", 3001);
    for (int k = 0; k < 10000; k++) {
        tram_mat3 R, R2;
        tram_quat_wxyz q;
        test_random_rotation(&r, &R);
        tram_quat_wxyz_from_mat3(&R, &q);
        assert_close(tram_quat_wxyz_norm(&q), 1.0, 1e-14);
        assert_true(q.w >= 0.0); /* canonical sign */
        tram_quat_wxyz_to_mat3(&q, &R2);
        assert_rot_near(&R, &R2, 1e-13);
    }
}

static void test_quat_sign_and_product(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("quat product", 3002);
    for (int k = 0; k < 1000; k++) {
        tram_mat3 A, B, AB, P;
        tram_quat_wxyz qa, qb, qab, neg;
        test_random_rotation(&r, &A);
        test_random_rotation(&r, &B);
        tram_quat_wxyz_from_mat3(&A, &qa);
        tram_quat_wxyz_from_mat3(&B, &qb);
        tram_quat_wxyz_mul(&qa, &qb, &qab);
        tram_quat_wxyz_to_mat3(&qab, &P);
        tram_so3_mul(&A, &B, &AB);
        assert_rot_near(&P, &AB, 1e-13); /* R(a b) = R(a) R(b) */
        neg = (tram_quat_wxyz){-qa.w, -qa.x, -qa.y, -qa.z};
        tram_quat_wxyz_to_mat3(&neg, &P);
        assert_rot_near(&P, &A, 1e-14); /* q and -q: same rotation */
    }
    /* 180 degrees: w = 0, canonical sign makes the first non-zero positive. */
    tram_quat_wxyz q = {0, 0, -1, 0}, c;
    tram_quat_wxyz_canonical(&q, &c);
    assert_close(c.y, 1.0, 0.0);
    tram_mat3 R;
    tram_so3_axis_rotation(0, M_PI, &R);
    tram_quat_wxyz_from_mat3(&R, &c);
    assert_close(fabs(c.x), 1.0, 1e-15);
    assert_true(c.x > 0);
}

static void test_known_values(void **state)
{
    (void)state;
    /* Textbook fact (common practice): 90 degrees about z is
     * q = (cos 45, 0, 0, sin 45) and maps x to y. */
    tram_quat_wxyz q = {sqrt(0.5), 0, 0, sqrt(0.5)};
    tram_mat3 R;
    tram_quat_wxyz_to_mat3(&q, &R);
    double x[3] = {1, 0, 0}, y[3];
    tram_so3_apply(&R, x, y);
    assert_close(y[0], 0.0, 1e-15);
    assert_close(y[1], 1.0, 1e-15);
}

static void test_rotvec_axis_angle(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("rotvec", 3003);
    for (int k = 0; k < 10000; k++) {
        tram_mat3 R, R2, R3;
        double rv[3], axis[3], ang;
        test_random_rotation(&r, &R);
        tram_rotvec_from_mat3(&R, rv);
        tram_rotvec_to_mat3(rv, &R2);
        assert_rot_near(&R, &R2, 1e-12);
        tram_axis_angle_from_mat3(&R, axis, &ang);
        assert_close(sqrt(axis[0] * axis[0] + axis[1] * axis[1] + axis[2] * axis[2]), 1.0, 1e-12);
        assert_true(ang >= 0.0 && ang <= M_PI);
        tram_axis_angle_to_mat3(axis, ang, &R3);
        assert_rot_near(&R, &R3, 1e-12);
    }
    tram_mat3 I;
    tram_so3_identity(&I);
    double axis[3], ang;
    tram_axis_angle_from_mat3(&I, axis, &ang);
    assert_close(ang, 0.0, 0.0);
    assert_close(axis[0], 1.0, 0.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_quat_round_trip), cmocka_unit_test(test_quat_sign_and_product),
        cmocka_unit_test(test_known_values), cmocka_unit_test(test_rotvec_axis_angle)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
