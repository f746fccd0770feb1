/* test_diagnose.c - tests of diagnose.c: the convention doctor, the unit
 * plausibility check and observability, driven through record text so the
 * whole reading path is exercised. */
#include "test_util.h"

typedef enum mistake {
    M_NONE, M_ROBOT_INVERTED, M_SENSOR_INVERTED, M_SENSOR_IN_M, M_QUAT_XYZW, M_EULER_EXTRINSIC,
    M_RAD_AS_DEG, M_METRES_DECLARED
} mistake;

/* Eye-in-hand stations written as CSV with one convention mistake.
 * Robot: Euler zyx-intrinsic in degrees (or a rotation vector for
 * M_RAD_AS_DEG); sensor: quaternion. */
static char *make_csv(test_rng *r, size_t n, mistake m)
{
    tram_se3 X, Z;
    test_random_pose(r, 100.0, &X);
    tram_mat3 R;
    test_random_rotation(r, &R);
    double zt[3] = {700, -100, 50};
    tram_se3_from_rt(&R, zt, &Z);
    size_t cap = 200 + n * 400, len = 0;
    char *buf = malloc(cap);
    len += (size_t)snprintf(buf + len, cap - len, "# setup: eye-in-hand\n# length-unit: %s\n",
                            m == M_METRES_DECLARED ? "m" : "mm");
    if (m == M_RAD_AS_DEG)
        len += (size_t)snprintf(buf + len, cap - len,
                                "# angle-unit: deg\nstation,robot_x,robot_y,robot_z,robot_rx,"
                                "robot_ry,robot_rz,");
    else
        len += (size_t)snprintf(buf + len, cap - len,
                                "# angle-unit: deg\n# robot-euler: zyx-intrinsic\nstation,robot_x,"
                                "robot_y,robot_z,robot_e1,robot_e2,robot_e3,");
    len += (size_t)snprintf(buf + len, cap - len,
                            "sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\n");
    for (size_t i = 0; i < n; i++) {
        tram_se3 F, FX, FXi, S;
        tram_mat3 Rf, down;
        double w[3] = {0.5 * test_rng_normal(r), 0.5 * test_rng_normal(r),
                       1.5 * test_rng_normal(r)};
        tram_so3_exp(w, &Rf);
        tram_so3_axis_rotation(0, M_PI, &down);
        tram_so3_mul(&down, &Rf, &Rf);
        double t[3] = {600 + 200 * test_rng_uniform(r), -100 + 200 * test_rng_uniform(r),
                       450 + 200 * test_rng_uniform(r)};
        tram_se3_from_rt(&Rf, t, &F);
        tram_se3_compose(&F, &X, &FX);
        tram_se3_invert(&FX, &FXi);
        tram_se3_compose(&FXi, &Z, &S);
        /* small realistic noise on the sensor translation */
        for (int k = 0; k < 3; k++) S.m[k][3] += 0.1 * test_rng_normal(r);
        if (m == M_ROBOT_INVERTED) tram_se3_invert(&F, &F);
        if (m == M_SENSOR_INVERTED) tram_se3_invert(&S, &S);
        tram_mat3 RF, RS;
        double tf[3], ts[3], e[3];
        tram_se3_to_rt(&F, &RF, tf);
        tram_se3_to_rt(&S, &RS, ts);
        if (m == M_SENSOR_IN_M)
            for (int k = 0; k < 3; k++) ts[k] /= 1000.0;
        if (m == M_RAD_AS_DEG) {
            tram_so3_log(&RF, e); /* radians, but the file says deg */
        } else {
            tram_euler_from_mat3(m == M_EULER_EXTRINSIC ? TRAM_EULER_ZYX_EXTRINSIC
                                                        : TRAM_EULER_ZYX_INTRINSIC,
                                 &RF, e);
            for (int k = 0; k < 3; k++) e[k] *= 180.0 / M_PI;
        }
        tram_quat_wxyz q;
        tram_quat_wxyz_from_mat3(&RS, &q);
        double qv[4] = {q.w, q.x, q.y, q.z};
        if (m == M_QUAT_XYZW) { /* columns qw..qz receive x, y, z, w */
            double s0 = qv[0];
            qv[0] = qv[1]; qv[1] = qv[2]; qv[2] = qv[3]; qv[3] = s0;
        }
        len += (size_t)snprintf(buf + len, cap - len,
                                "s%zu,%.6f,%.6f,%.6f,%.9f,%.9f,%.9f,%.9f,%.9f,%.9f,%.12f,%.12f,%."
                                "12f,%.12f\n",
                                i + 1, tf[0], tf[1], tf[2], e[0], e[1], e[2], ts[0], ts[1], ts[2],
                                qv[0], qv[1], qv[2], qv[3]);
    }
    return buf;
}

static tram_solution *solve_text(const char *text, tram_status want)
{
    tram_records *r = NULL;
    tram_error e;
    tram_status st = tram_records_read_buffer("doc.csv", text, strlen(text), NULL, &r, &e);
    if (st != TRAM_OK) fail_msg("read: %s", e.message);
    tram_solution *s = NULL;
    st = tram_solve(r, r->setup, NULL, &s, &e);
    assert_int_equal(st, want);
    tram_records_destroy(r);
    return s;
}

static const tram_diagnostic *find(const tram_solution *s, const char *code)
{
    for (size_t i = 0; i < s->ndiag; i++)
        if (strcmp(s->diag[i].code, code) == 0) return &s->diag[i];
    return NULL;
}

static void expect_diag(mistake m, const char *code, const char *fix_part)
{
    test_rng r = test_rng_seeded(code, 8000 + (uint64_t)m);
    char *text = make_csv(&r, 15, m);
    tram_solution *s = solve_text(text, TRAM_OK);
    const tram_diagnostic *d = find(s, code);
    if (!d) {
        for (size_t i = 0; i < s->ndiag; i++) printf("  have %s: %s\n", s->diag[i].code, s->diag[i].message);
        fail_msg("no diagnostic %s", code);
    }
    assert_int_equal(d->severity, TRAM_SEVERITY_WARNING);
    if (!strstr(d->message, fix_part)) fail_msg("message lacks '%s': %s", fix_part, d->message);
    assert_false(s->trustworthy);
    tram_solution_destroy(s);
    free(text);
}

static void test_clean_data_no_warning(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("doctor clean", 8100);
    char *text = make_csv(&r, 15, M_NONE);
    tram_solution *s = solve_text(text, TRAM_OK);
    for (size_t i = 0; i < s->ndiag; i++)
        if (s->diag[i].severity >= TRAM_SEVERITY_WARNING) fail_msg("%s", s->diag[i].message);
    assert_true(s->trustworthy);
    tram_solution_destroy(s);
    free(text);
}

static void test_robot_inverted(void **state)
{
    (void)state;
    expect_diag(M_ROBOT_INVERTED, "robot-pose-inverted", "# robot-pose: base-in-flange");
}

static void test_sensor_inverted(void **state)
{
    (void)state;
    expect_diag(M_SENSOR_INVERTED, "sensor-pose-inverted", "# sensor-pose: sensor-in-target");
}

static void test_sensor_in_metres(void **state)
{
    (void)state;
    expect_diag(M_SENSOR_IN_M, "sensor-length-scale", "# sensor-length-unit: m");
}

static void test_quaternion_order(void **state)
{
    (void)state;
    expect_diag(M_QUAT_XYZW, "quaternion-order", "sensor_qx,sensor_qy,sensor_qz,sensor_qw");
}

static void test_euler_convention(void **state)
{
    (void)state;
    expect_diag(M_EULER_EXTRINSIC, "euler-convention", "# robot-euler: zyx-extrinsic");
}

static void test_radians_as_degrees(void **state)
{
    (void)state;
    expect_diag(M_RAD_AS_DEG, "angle-unit", "# robot-angle-unit: rad");
}

static void test_metres_implausible(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("doctor metres", 8200);
    char *text = make_csv(&r, 12, M_METRES_DECLARED);
    tram_solution *s = solve_text(text, TRAM_OK);
    const tram_diagnostic *d = find(s, "length-unit-implausible");
    assert_non_null(d);
    assert_non_null(strstr(d->message, "are the numbers in mm?"));
    tram_solution_destroy(s);
    free(text);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_clean_data_no_warning), cmocka_unit_test(test_robot_inverted),
        cmocka_unit_test(test_sensor_inverted),       cmocka_unit_test(test_sensor_in_metres),
        cmocka_unit_test(test_quaternion_order),      cmocka_unit_test(test_euler_convention),
        cmocka_unit_test(test_radians_as_degrees),    cmocka_unit_test(test_metres_implausible)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
