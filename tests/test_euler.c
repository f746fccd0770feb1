/* test_euler.c - unit tests of euler.c: all 24 conventions, ranges, and
 * gimbal lock; the covariance of the angles against a central-difference
 * Jacobian of the library's own extraction (SciPy's is in
 * tests/ref/check_euler_cov_scipy.py). */
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

/* Wrapped difference of two angles, in (-pi, pi]. */
static double angle_diff(double a, double b) { return remainder(a - b, 2.0 * M_PI); }

static void test_covariance_jacobian(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("euler covariance", 4002);
    const double h = 1e-6;
    for (int s = 0; s < TRAM_EULER_COUNT; s++) {
        int done = 0;
        while (done < 200) {
            tram_mat3 R;
            test_random_rotation(&r, &R);
            /* a random covariance A A^T (small: 1e-3 rad scale) */
            double A[9], S[9];
            for (int i = 0; i < 9; i++) A[i] = 1e-3 * test_rng_normal(&r);
            for (int i = 0; i < 3; i++)
                for (int j = 0; j < 3; j++)
                    S[3 * i + j] = A[3 * i] * A[3 * j] + A[3 * i + 1] * A[3 * j + 1] +
                                   A[3 * i + 2] * A[3 * j + 2];
            double C[9], lock;
            int ok = tram_euler_covariance((tram_euler_seq)s, &R, S, C, &lock);
            if (lock < 0.2) continue; /* the difference quotient needs room */
            assert_int_equal(ok, 1);
            /* J by central differences of tram_euler_from_mat3 at R exp(h u_k) */
            double J[3][3];
            for (int k = 0; k < 3; k++) {
                double w[3] = {0, 0, 0}, ep[3], em[3];
                tram_mat3 E, Rp, Rm;
                w[k] = h;
                tram_so3_exp(w, &E);
                tram_so3_mul(&R, &E, &Rp);
                w[k] = -h;
                tram_so3_exp(w, &E);
                tram_so3_mul(&R, &E, &Rm);
                tram_euler_from_mat3((tram_euler_seq)s, &Rp, ep);
                tram_euler_from_mat3((tram_euler_seq)s, &Rm, em);
                for (int i = 0; i < 3; i++) J[i][k] = angle_diff(ep[i], em[i]) / (2 * h);
            }
            for (int i = 0; i < 3; i++)
                for (int j = 0; j < 3; j++) {
                    double ref = 0;
                    for (int a = 0; a < 3; a++)
                        for (int b = 0; b < 3; b++) ref += J[i][a] * S[3 * a + b] * J[j][b];
                    double scale = sqrt(C[4 * i] * C[4 * j]) + 1e-15;
                    assert_true(fabs(C[3 * i + j] - ref) <= 1e-6 * scale);
                }
            done++;
        }
    }
}

static void test_covariance_lock(void **state)
{
    (void)state;
    /* Near gimbal lock (0.5 deg, under TRAM_EULER_COV_LOCK_MIN_DEG) the
     * covariance is not defined; at 2 deg it is, unless the rotation's
     * sigma is more than a fifth of the distance. */
    double S[9] = {1e-8, 0, 0, 0, 1e-8, 0, 0, 0, 1e-8}, wide[9] = {1e-4, 0, 0, 0, 1e-4, 0, 0, 0, 1e-4};
    for (int s = 0; s < TRAM_EULER_COUNT; s++) {
        int ax[3];
        tram_euler_axes((tram_euler_seq)s, ax);
        double lock_mid = ax[0] == ax[2] ? 0.0 : M_PI / 2, C[9], d;
        double sign = ax[0] == ax[2] ? 1.0 : -1.0;
        double e[3] = {0.3, lock_mid + sign * 0.5 * M_PI / 180, -0.2};
        tram_mat3 R;
        tram_euler_to_mat3((tram_euler_seq)s, e, &R);
        assert_int_equal(tram_euler_covariance((tram_euler_seq)s, &R, S, C, &d), 0);
        assert_close(d, 0.5 * M_PI / 180, 1e-9);
        assert_true(isnan(C[0]) && isnan(C[8]));
        e[1] = lock_mid + sign * 2.0 * M_PI / 180;
        tram_euler_to_mat3((tram_euler_seq)s, e, &R);
        assert_int_equal(tram_euler_covariance((tram_euler_seq)s, &R, S, C, &d), 1);
        assert_int_equal(tram_euler_covariance((tram_euler_seq)s, &R, wide, C, &d), 0);
    }
    tram_mat3 I;
    tram_so3_identity(&I);
    double C[9];
    assert_int_equal(tram_euler_covariance(TRAM_EULER_UNSET, &I, S, C, NULL), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_names),
                                       cmocka_unit_test(test_round_trip_all),
                                       cmocka_unit_test(test_definition),
                                       cmocka_unit_test(test_gimbal_lock),
                                       cmocka_unit_test(test_covariance_jacobian),
                                       cmocka_unit_test(test_covariance_lock)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
