/* test_register.c - unit tests of register.c and register_robust.c. */
#include "test_util.h"

#include <float.h>

#include <cjson/cJSON.h>

static void test_umeyama_worked_example(void **state)
{
    (void)state;
    /* Umeyama, IEEE PAMI 13(4), 1991, worked example: x = (0,0), (1,0), (0,2),
     * y = (0,0), (-1,0), (0,2) give R = [[0.832, 0.555], [-0.555, 0.832]],
     * c = 0.721, t = (-0.800, 0.400) to the printed digits. */
    double x[6] = {0, 0, 1, 0, 0, 2}, y[6] = {0, 0, -1, 0, 0, 2};
    tram_register_options o = {TRAM_REGISTER_SVD, 1, 2, 1};
    tram_register_result r;
    tram_error e;
    assert_int_equal(tram_register_points(x, y, NULL, 3, &o, &r, &e), TRAM_OK);
    assert_close(r.T_to_from.m[0][0], 0.832, 5e-4);
    assert_close(r.T_to_from.m[0][1], 0.555, 5e-4);
    assert_close(r.T_to_from.m[1][0], -0.555, 5e-4);
    assert_close(r.T_to_from.m[1][1], 0.832, 5e-4);
    assert_close(r.scale, 0.721, 5e-4);
    assert_close(r.T_to_from.m[0][3], -0.800, 5e-4);
    assert_close(r.T_to_from.m[1][3], 0.400, 5e-4);
    /* The same points with the scale fixed to 1: same rotation (for 2D the
     * rotation does not depend on the scale), t = mu_y - R mu_x. */
    o.scale = 0;
    assert_int_equal(tram_register_points(x, y, NULL, 3, &o, &r, &e), TRAM_OK);
    assert_close(r.scale, 1.0, 0.0);
    assert_close(r.T_to_from.m[0][0], 0.832, 5e-4);
    double mx[2] = {1.0 / 3, 2.0 / 3}, my[2] = {-1.0 / 3, 2.0 / 3};
    assert_close(r.T_to_from.m[0][3], my[0] - (0.83205 * mx[0] + 0.55470 * mx[1]), 1e-4);
    /* Embedded in 3D (z = 0): the exact answer is 180 degrees about y with
     * zero residual (x -> -x, z -> -z), by SVD and by Horn's quaternion. */
    double x3[9] = {0, 0, 0, 1, 0, 0, 0, 2, 0}, y3[9] = {0, 0, 0, -1, 0, 0, 0, 2, 0};
    for (int m = 0; m < 2; m++) {
        tram_register_options o3 = {(tram_register_method)m, 0, 3, 1};
        assert_int_equal(tram_register_points(x3, y3, NULL, 3, &o3, &r, &e), TRAM_OK);
        tram_mat3 R, want;
        tram_se3_to_rt(&r.T_to_from, &R, NULL);
        tram_so3_axis_rotation(1, M_PI, &want);
        assert_rot_near(&R, &want, 1e-12);
        assert_true(r.rms < 1e-12);
    }
}

static void test_random_rigid_and_similarity(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("register random", 11001);
    for (int t = 0; t < 200; t++) {
        size_t n = 5 + (size_t)(test_rng_uniform(&rng) * 50);
        double *x = malloc(3 * n * sizeof *x), *y = malloc(3 * n * sizeof *y), *w = malloc(n * sizeof *w);
        tram_se3 T;
        test_random_pose(&rng, 1000, &T);
        double c = t % 2 ? 0.5 + test_rng_uniform(&rng) : 1.0;
        for (size_t i = 0; i < n; i++) {
            double p[3] = {1000 + 300 * test_rng_normal(&rng), 300 * test_rng_normal(&rng),
                           300 * test_rng_normal(&rng)},
                   q[3];
            tram_se3_apply_direction(&T, p, q);
            for (int a = 0; a < 3; a++) {
                x[3 * i + (size_t)a] = p[a];
                y[3 * i + (size_t)a] = c * q[a] + T.m[a][3];
            }
            w[i] = 0.5 + test_rng_uniform(&rng);
        }
        for (int m = 0; m < 2; m++) {
            tram_register_options o = {(tram_register_method)m, t % 2, 3, 1};
            tram_register_result r;
            tram_error e;
            assert_int_equal(tram_register_points(x, y, t % 3 ? w : NULL, n, &o, &r, &e), TRAM_OK);
            double ang, len;
            tram_se3_distance(&r.T_to_from, &T, &ang, &len);
            assert_true(ang < 1e-9 && len < 1e-7);
            assert_close(r.scale, c, 1e-11);
            assert_true(r.rms < 1e-4); /* from moments: sqrt(eps) of the spread */
        }
        free(x);
        free(y);
        free(w);
    }
}

static void test_threads_and_large_offsets(void **state)
{
    (void)state;
    /* 500,000 points 10 km from the origin: moments about the first point
     * keep full accuracy; two threads give the same answer. */
    test_rng rng = test_rng_seeded("register big", 11002);
    size_t n = 500000;
    double *x = malloc(3 * n * sizeof *x), *y = malloc(3 * n * sizeof *y);
    tram_se3 T;
    test_random_pose(&rng, 100, &T);
    for (size_t i = 0; i < n; i++) {
        double p[3] = {1e7 + test_rng_normal(&rng) * 100, test_rng_normal(&rng) * 100,
                       test_rng_normal(&rng) * 100};
        tram_se3_apply_point(&T, p, y + 3 * i);
        for (int a = 0; a < 3; a++) {
            x[3 * i + (size_t)a] = p[a];
            y[3 * i + (size_t)a] += 0.01 * test_rng_normal(&rng);
        }
    }
    tram_register_result r1, r2;
    tram_error e;
    tram_register_options o1 = {TRAM_REGISTER_SVD, 0, 3, 1}, o2 = {TRAM_REGISTER_SVD, 0, 3, 2};
    assert_int_equal(tram_register_points(x, y, NULL, n, &o1, &r1, &e), TRAM_OK);
    assert_int_equal(tram_register_points(x, y, NULL, n, &o2, &r2, &e), TRAM_OK);
    double ang, len;
    tram_se3_distance(&r1.T_to_from, &T, &ang, &len);
    assert_true(ang < 1e-4);
    tram_se3_distance(&r1.T_to_from, &r2.T_to_from, &ang, &len);
    assert_true(ang < 1e-9 && len < 1e-6);
    assert_close(r1.rms, 0.01 * sqrt(3.0), 1e-3);
    /* Unit weights take the portable loop, no weights the vector pass
     * (where the processor has AVX2): the same answer, RMS and spread. */
    double *w = malloc(n * sizeof *w);
    for (size_t i = 0; i < n; i++) w[i] = 1.0;
    tram_register_result r3;
    assert_int_equal(tram_register_points(x, y, w, n, &o1, &r3, &e), TRAM_OK);
    tram_se3_distance(&r1.T_to_from, &r3.T_to_from, &ang, &len);
    assert_true(ang < 1e-9 && len < 1e-6);
    /* The RMS comes from the moments by cancellation: rms^2 (3e-4 m^2) is
     * what is left of sums of squared offsets of 3 x 100^2 m^2 per point, so
     * two summation orders agree only to about eps sqrt(n) 3e4 / (2 rms)
     * (rounding growing as sqrt(n) in a long sum, Higham 2002, from
     * memory): 1.4e-7 m here.  Seen apart: 0 on one machine, 2e-9 m on an
     * AMD EPYC with FMA. */
    const double rms_tol = DBL_EPSILON * sqrt((double)n) * 3e4 / (2 * r1.rms);
    assert_close(r1.rms, r3.rms, rms_tol);
    for (int a = 0; a < 3; a++) assert_close(r1.spread[a], r3.spread[a], 1e-9);
    /* an odd count, so the last point is read without the wide load */
    assert_int_equal(tram_register_points(x, y, NULL, 1001, &o1, &r1, &e), TRAM_OK);
    assert_int_equal(tram_register_points(x, y, w, 1001, &o1, &r3, &e), TRAM_OK);
    tram_se3_distance(&r1.T_to_from, &r3.T_to_from, &ang, &len);
    assert_true(ang < 1e-9 && len < 1e-6);
    free(w);
    free(x);
    free(y);
}

static void test_degenerate(void **state)
{
    (void)state;
    tram_register_result r;
    tram_error e;
    double x[9] = {0, 0, 0, 1, 1, 1, 2, 2, 2}, y[9] = {1, 0, 0, 2, 1, 1, 3, 2, 2};
    assert_int_equal(tram_register_points(x, y, NULL, 2, NULL, &r, &e), TRAM_EUNDETERMINED);
    assert_non_null(strstr(e.message, "at least 3"));
    assert_int_equal(tram_register_points(x, y, NULL, 3, NULL, &r, &e), TRAM_EUNDETERMINED);
    assert_non_null(strstr(e.message, "collinear"));
    assert_non_null(strstr(e.message, "rotation about that line"));
    double z[9] = {1, 1, 1, 1, 1, 1, 1, 1, 1};
    assert_int_equal(tram_register_points(z, y, NULL, 3, NULL, &r, &e), TRAM_EUNDETERMINED);
    tram_register_options o2 = {TRAM_REGISTER_SVD, 0, 2, 1};
    assert_int_equal(tram_register_points(x, y, NULL, 1, &o2, &r, &e), TRAM_EUNDETERMINED);
    double w[3] = {1, -1, 1};
    assert_int_equal(tram_register_points(x, y, w, 3, NULL, &r, &e), TRAM_EINPUT);
    /* Finite coordinates whose squares overflow: refused with a message,
     * never handed to LAPACK as Inf (dgesvd does not return on Inf; found
     * by fuzz/fuzz_point_pairs.c). */
    double big[9] = {1e200, 0, 0, 0, 1e200, 0, 0, 0, 1e200};
    for (int m = 0; m < 2; m++) {
        tram_register_options o = {(tram_register_method)m, 0, 3, 1};
        assert_int_equal(tram_register_points(big, y, NULL, 3, &o, &r, &e), TRAM_EINPUT);
        assert_non_null(strstr(e.message, "too large"));
    }
}

static void test_robust_outliers(void **state)
{
    (void)state;
    /* 30% outliers: RANSAC recovers the transform and flags them. */
    test_rng rng = test_rng_seeded("register robust", 11003);
    size_t n = 100;
    double x[300], y[300];
    int bad[100], inl[100];
    tram_se3 T;
    test_random_pose(&rng, 500, &T);
    for (size_t i = 0; i < n; i++) {
        double p[3] = {200 * test_rng_normal(&rng), 200 * test_rng_normal(&rng), 200 * test_rng_normal(&rng)};
        tram_se3_apply_point(&T, p, y + 3 * i);
        memcpy(x + 3 * i, p, sizeof p);
        bad[i] = i % 10 < 3;
        for (int a = 0; a < 3; a++) y[3 * i + (size_t)a] += bad[i] ? 50 * test_rng_normal(&rng) : 0.05 * test_rng_normal(&rng);
    }
    for (int given = 0; given < 2; given++) {
        tram_register_result r;
        tram_error e;
        double thr;
        assert_int_equal(tram_register_robust(x, y, NULL, n, NULL, given ? 1.0 : 0.0, 7, NULL, NULL,
                                              &r, inl, &thr, &e),
                         TRAM_OK);
        double ang, len;
        tram_se3_distance(&r.T_to_from, &T, &ang, &len);
        assert_true(ang < 0.05 && len < 0.5);
        for (size_t i = 0; i < n; i++) assert_int_equal(inl[i], !bad[i]);
        if (given) assert_close(thr, 1.0, 0.0);
        else assert_true(thr > 0.05 && thr < 2.0);
    }
}

static void test_uncertainty(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    /* The stated 1-sigma matches the scatter of repeated noisy solutions. */
    test_rng rng = test_rng_seeded("register sigma", 11004);
    tram_se3 T;
    test_random_pose(&rng, 100, &T);
    double x[60], y[60], sum2[3] = {0, 0, 0}, sig[3] = {0, 0, 0};
    for (int i = 0; i < 60; i++) x[i] = 100 * test_rng_normal(&rng);
    const int trials = 400;
    for (int t = 0; t < trials; t++) {
        for (int i = 0; i < 20; i++) {
            tram_se3_apply_point(&T, x + 3 * i, y + 3 * i);
            for (int a = 0; a < 3; a++) y[3 * i + a] += 0.1 * test_rng_normal(&rng);
        }
        tram_register_result r;
        tram_error e;
        assert_int_equal(tram_register_points(x, y, NULL, 20, NULL, &r, &e), TRAM_OK);
        for (int a = 0; a < 3; a++) {
            sum2[a] += tram__sq_t(r.T_to_from.m[a][3] - T.m[a][3]);
            sig[a] += r.translation_sigma[a] / trials;
        }
    }
    for (int a = 0; a < 3; a++) {
        double ratio = sqrt(sum2[a] / trials) / sig[a];
        if (!(ratio > 0.85 && ratio < 1.15)) fail_msg("axis %d: scatter / sigma = %.3f", a, ratio);
    }
}

/* The JSON document of a registration: Umeyama's worked example (IEEE PAMI
 * 13(4), 1991) with the scale, one warning planted in the trust result. */
static void test_report_json(void **state)
{
    (void)state;
    double x[6] = {0, 0, 1, 0, 0, 2}, y[6] = {0, 0, -1, 0, 0, 2}, res[3];
    char ids[3][TRAM_POINT_ID_MAX] = {"a", "b", "c"};
    tram_point_pairs p = {0};
    p.n = 3;
    p.dim = 2;
    p.from = x;
    p.to = y;
    p.id = ids;
    p.length_unit = TRAM_LENGTH_MM;
    tram_register_options o = {TRAM_REGISTER_SVD, 1, 2, 1};
    tram_register_result r;
    tram_error e;
    assert_int_equal(tram_register_points(x, y, NULL, 3, &o, &r, &e), TRAM_OK);
    tram_register_residuals(x, y, 3, 2, &r, res);
    tram_register_trust t = {0};
    t.gate_failed = 1;
    t.rms = 0.5;
    t.limit = 0.1;
    tram_register_trust_options to = {5, 0.01, 0, 1, 3};
    tram_register_warning w[TRAM_REGISTER_WARNINGS_MAX];
    assert_int_equal(tram_register_trust_warnings(&t, &to, TRAM_LENGTH_MM, w), 1);
    assert_string_equal(w[0].code, "implausible-residuals");
    assert_non_null(strstr(w[0].message, "RMS 0.5 mm"));
    tram_register_report rep = {&p, &r, res, NULL, 0, "svd", 1, &t, &to};
    char *text = NULL;
    assert_int_equal(tram_register_to_json(&rep, &text, &e), TRAM_OK);
    cJSON *root = cJSON_Parse(text);
    assert_non_null(root);
    assert_string_equal(cJSON_GetObjectItem(root, "format")->valuestring, "tram-registration");
    assert_close(cJSON_GetObjectItem(root, "scale")->valuedouble, 0.721, 5e-4);
    cJSON *T = cJSON_GetObjectItem(cJSON_GetObjectItem(root, "transforms"), "T_to_from");
    assert_close(cJSON_GetArrayItem(cJSON_GetObjectItem(T, "translation"), 0)->valuedouble, -0.8, 5e-4);
    assert_close(cJSON_GetObjectItem(T, "angle_deg")->valuedouble, -33.69, 5e-3);
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItem(
                         cJSON_GetObjectItem(root, "residuals"), "points")), 3);
    assert_null(cJSON_GetObjectItem(root, "robust"));
    cJSON *dg = cJSON_GetObjectItem(root, "diagnostics");
    assert_int_equal(cJSON_GetArraySize(dg), 1);
    assert_string_equal(cJSON_GetObjectItem(cJSON_GetArrayItem(dg, 0), "code")->valuestring,
                        "implausible-residuals");
    cJSON_Delete(root);
    tram_free(text);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_umeyama_worked_example), cmocka_unit_test(test_random_rigid_and_similarity),
        cmocka_unit_test(test_threads_and_large_offsets), cmocka_unit_test(test_degenerate),
        cmocka_unit_test(test_robust_outliers), cmocka_unit_test(test_uncertainty),
        cmocka_unit_test(test_report_json)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
