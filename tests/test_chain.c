/* test_chain.c - unit tests of chain.c: planar arms against their closed
 * form, DH / modified DH / generic agreement, the Jacobian against finite
 * differences, limits, bad chains, and joint columns in record files. */
#include "test_util.h"

static tram_chain *chain_of(const char *json)
{
    tram_chain *c = NULL;
    tram_error e;
    if (tram_chain_read_buffer("chain.json", json, strlen(json), &c, &e) != TRAM_OK)
        fail_msg("%s", e.message);
    return c;
}

static tram_error chain_bad(const char *json)
{
    tram_chain *c = NULL;
    tram_error e;
    assert_int_equal(tram_chain_read_buffer("chain.json", json, strlen(json), &c, &e), TRAM_EINPUT);
    assert_null(c);
    return e;
}

static const char *planar3_dh =
    "{\"convention\": \"dh\", \"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"joints\": ["
    "{\"a\": 300, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"},"
    "{\"a\": 250, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"},"
    "{\"a\": 100, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"}]}";
static const char *planar3_mdh =
    "{\"convention\": \"modified-dh\", \"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"joints\": ["
    "{\"a_prev\": 0, \"alpha_prev\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"},"
    "{\"a_prev\": 300, \"alpha_prev\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"},"
    "{\"a_prev\": 250, \"alpha_prev\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"}],"
    "\"tool\": {\"translation\": [100, 0, 0]}}";
static const char *planar3_generic =
    "{\"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"elements\": ["
    "{\"joint\": \"revolute\", \"axis\": [0, 0, 1]}, {\"fixed\": {\"translation\": [300, 0, 0]}},"
    "{\"joint\": \"revolute\", \"axis\": [0, 0, 1]}, {\"fixed\": {\"translation\": [250, 0, 0]}},"
    "{\"joint\": \"revolute\", \"axis\": [0, 0, 1]}, {\"fixed\": {\"translation\": [100, 0, 0]}}]}";

static void test_planar_closed_form(void **state)
{
    (void)state;
    /* Textbook fact (common practice): a planar arm with links l_i reaches
     * x = sum l_i cos(q_1 + ... + q_i), y = sum l_i sin(...), heading sum q_i. */
    test_rng r = test_rng_seeded("chain planar", 10001);
    tram_chain *c3 = chain_of(planar3_dh);
    tram_chain *c2 = chain_of("{\"convention\": \"dh\", \"length_unit\": \"m\", \"angle_unit\": "
                              "\"rad\", \"joints\": [{\"a\": 0.4, \"alpha\": 0, \"d\": 0, "
                              "\"theta\": 0, \"type\": \"revolute\"}, {\"a\": 0.3, \"alpha\": 0, "
                              "\"d\": 0, \"theta\": 0, \"type\": \"revolute\"}]}");
    const double l3[3] = {300, 250, 100}, l2[2] = {0.4, 0.3};
    for (int k = 0; k < 1000; k++) {
        double q[3], x = 0, y = 0, h = 0;
        for (int i = 0; i < 3; i++) {
            q[i] = 360 * test_rng_uniform(&r) - 180;
            h += q[i] * M_PI / 180;
            x += l3[i] * cos(h);
            y += l3[i] * sin(h);
        }
        tram_se3 T;
        tram_chain_forward(c3, q, &T, NULL);
        assert_close(T.m[0][3], x, 1e-9);
        assert_close(T.m[1][3], y, 1e-9);
        assert_close(atan2(T.m[1][0], T.m[0][0]), atan2(sin(h), cos(h)), 1e-12);
        double q2[2] = {q[0] * M_PI / 180, q[1] * M_PI / 180};
        tram_chain_forward(c2, q2, &T, NULL);
        assert_close(T.m[0][3], l2[0] * cos(q2[0]) + l2[1] * cos(q2[0] + q2[1]), 1e-12);
        assert_close(T.m[1][3], l2[0] * sin(q2[0]) + l2[1] * sin(q2[0] + q2[1]), 1e-12);
    }
    tram_chain_destroy(c3);
    tram_chain_destroy(c2);
}

static void test_three_forms_agree(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("chain forms", 10002);
    tram_chain *a = chain_of(planar3_dh), *b = chain_of(planar3_mdh), *c = chain_of(planar3_generic);
    for (int k = 0; k < 1000; k++) {
        double q[3];
        for (int i = 0; i < 3; i++) q[i] = 340 * test_rng_uniform(&r) - 170;
        tram_se3 Ta, Tb, Tc;
        tram_chain_forward(a, q, &Ta, NULL);
        tram_chain_forward(b, q, &Tb, NULL);
        tram_chain_forward(c, q, &Tc, NULL);
        assert_true(test_max_abs_diff(&Ta.m[0][0], &Tb.m[0][0], 16) < 1e-9);
        assert_true(test_max_abs_diff(&Ta.m[0][0], &Tc.m[0][0], 16) < 1e-9);
    }
    tram_chain_destroy(a);
    tram_chain_destroy(b);
    tram_chain_destroy(c);
}

static void test_spatial_dh_vs_generic(void **state)
{
    (void)state;
    /* A spatial arm: every DH row written out as generic elements. */
    test_rng r = test_rng_seeded("chain spatial", 10003);
    tram_chain *dh = chain_of(
        "{\"convention\": \"dh\", \"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"joints\": ["
        "{\"a\": 150, \"alpha\": -90, \"d\": 450, \"theta\": 10, \"type\": \"revolute\"},"
        "{\"a\": 600, \"alpha\": 0, \"d\": 0, \"theta\": -90, \"type\": \"revolute\"},"
        "{\"a\": 0, \"alpha\": 90, \"d\": 200, \"theta\": 30, \"type\": \"prismatic\"}]}");
    tram_chain *gen = chain_of(
        "{\"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"elements\": ["
        "{\"joint\": \"revolute\", \"axis\": [0,0,1], \"offset\": 10},"
        "{\"fixed\": {\"translation\": [0,0,450]}}, {\"fixed\": {\"translation\": [150,0,0]}},"
        "{\"fixed\": {\"rotation\": {\"euler\": \"xyz-intrinsic\", \"angles\": [-90,0,0]}}},"
        "{\"joint\": \"revolute\", \"axis\": [0,0,1], \"offset\": -90},"
        "{\"fixed\": {\"translation\": [600,0,0]}},"
        "{\"fixed\": {\"rotation\": {\"rotvec\": [0,0,30]}}},"
        "{\"joint\": \"prismatic\", \"axis\": [0,0,1], \"offset\": 200},"
        "{\"fixed\": {\"rotation\": {\"quat_wxyz\": [0.7071067811865476,0.7071067811865476,0,0]}}}]}");
    assert_int_equal(dh->n_joints, 3);
    assert_int_equal(gen->n_joints, 3);
    for (int k = 0; k < 500; k++) {
        double q[3] = {300 * test_rng_uniform(&r) - 150, 300 * test_rng_uniform(&r) - 150,
                       200 * test_rng_uniform(&r) - 100};
        tram_se3 A, B;
        tram_chain_forward(dh, q, &A, NULL);
        tram_chain_forward(gen, q, &B, NULL);
        assert_true(test_max_abs_diff(&A.m[0][0], &B.m[0][0], 16) < 1e-9);
    }
    tram_chain_destroy(dh);
    tram_chain_destroy(gen);
}

static void test_jacobian_finite_differences(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("chain jacobian", 10004);
    tram_chain *c = chain_of(
        "{\"length_unit\": \"mm\", \"angle_unit\": \"rad\", \"base\": {\"translation\": [5,6,7]},"
        "\"elements\": [{\"joint\": \"revolute\", \"axis\": [0,0,1]},"
        "{\"fixed\": {\"translation\": [100,20,300], \"rotation\": {\"rotvec\": [0.3,-0.2,0.1]}}},"
        "{\"joint\": \"revolute\", \"axis\": [0.6,0,0.8], \"scale\": -1},"
        "{\"fixed\": {\"translation\": [400,0,0]}},"
        "{\"joint\": \"prismatic\", \"axis\": [0,1,0]},"
        "{\"joint\": \"revolute\", \"axis\": [1,0,0], \"offset\": 0.5}],"
        "\"tool\": {\"translation\": [0,0,120]}}");
    for (int k = 0; k < 200; k++) {
        double q[4], J[24];
        for (int i = 0; i < 4; i++) q[i] = 2 * test_rng_uniform(&r) - 1;
        tram_chain_jacobian(c, q, J);
        tram_se3 T0;
        tram_chain_forward(c, q, &T0, NULL);
        for (int j = 0; j < 4; j++) {
            const double h = 1e-6;
            double qp[4], qm[4];
            memcpy(qp, q, sizeof q);
            memcpy(qm, q, sizeof q);
            qp[j] += h;
            qm[j] -= h;
            tram_se3 Tp, Tm;
            tram_chain_forward(c, qp, &Tp, NULL);
            tram_chain_forward(c, qm, &Tm, NULL);
            /* per unit joint value: divide out the encoder scale */
            double s = j == 1 ? -1.0 : 1.0;
            for (int a = 0; a < 3; a++)
                assert_close(J[a * 4 + j], (Tp.m[a][3] - Tm.m[a][3]) / (2 * h) / s, 1e-5);
            /* angular velocity: vee(dR R^T) */
            tram_mat3 Rp, Rm, Rmt, D;
            tram_se3_to_rt(&Tp, &Rp, NULL);
            tram_se3_to_rt(&Tm, &Rm, NULL);
            tram_so3_transpose(&Rm, &Rmt);
            tram_so3_mul(&Rp, &Rmt, &D);
            double w[3];
            tram_so3_log(&D, w);
            for (int a = 0; a < 3; a++) assert_close(J[(3 + a) * 4 + j], w[a] / (2 * h) / s, 1e-6);
        }
    }
    tram_chain_destroy(c);
}

static void test_bad_chains(void **state)
{
    (void)state;
    tram_error e;
    e = chain_bad("{\"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"elements\": [{\"fixed\": "
                  "{\"rotation\": {\"matrix\": [[1,0,0],[0,1,0],[0,0,2]]}}}, {\"joint\": "
                  "\"revolute\", \"axis\": [0,0,1]}]}");
    assert_non_null(strstr(e.message, "elements[0].rotation: matrix is not a rotation"));
    e = chain_bad("{\"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"elements\": [{\"joint\": "
                  "\"revolute\", \"axis\": [0,0,2]}]}");
    assert_non_null(strstr(e.message, "unit vector"));
    e = chain_bad("{\"length_unit\": \"mm\", \"elements\": []}");
    assert_non_null(strstr(e.message, "angle_unit"));
    e = chain_bad("{\"convention\": \"dh\", \"length_unit\": \"mm\", \"angle_unit\": \"deg\", "
                  "\"joints\": [{\"a\": 1, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": "
                  "\"spherical\"}]}");
    assert_non_null(strstr(e.message, "joints[0]: type"));
    e = chain_bad("{\"convention\": \"dh\", \"length_unit\": \"mm\", \"angle_unit\": \"deg\", "
                  "\"joints\": [{\"a_prev\": 1, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": "
                  "\"revolute\"}]}");
    assert_non_null(strstr(e.message, "unknown key \"a_prev\""));
    e = chain_bad("{\"length_unit\": \"mm\",\n \"angle_unit\": \"deg\",, }");
    assert_int_equal(e.line, 2);
}

static void test_records_with_joints(void **state)
{
    (void)state;
    tram_chain *c = chain_of(
        "{\"convention\": \"dh\", \"length_unit\": \"m\", \"angle_unit\": \"rad\", \"joints\": ["
        "{\"a\": 0.3, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\", \"limits\": [-2, 2]},"
        "{\"a\": 0.25, \"alpha\": 0, \"d\": 0, \"theta\": 0, \"type\": \"revolute\"}]}");
    const char *text = "# length-unit: mm\n# angle-unit: deg\nstation,joint_1,joint_2\na,90,0\nb,0,90\n";
    tram_records *r;
    tram_error e;
    assert_int_equal(tram_records_read_buffer("j.csv", text, strlen(text), NULL, &r, &e), TRAM_OK);
    assert_int_equal(r->n_joints, 2);
    assert_false(r->has_block[TRAM_BLOCK_ROBOT]);
    assert_int_equal(tram_records_apply_chain(r, c, &e), TRAM_OK);
    /* the chain is in m and rad, the records in mm and deg */
    assert_close(r->stations[0].T_base_flange.m[0][3], 0.0, 1e-9);
    assert_close(r->stations[0].T_base_flange.m[1][3], 550.0, 1e-9);
    assert_close(r->stations[1].T_base_flange.m[0][3], 300.0, 1e-9);
    assert_close(r->stations[1].T_base_flange.m[1][3], 250.0, 1e-9);
    tram_records_destroy(r);
    const char *over = "# length-unit: mm\n# angle-unit: deg\nstation,joint_1,joint_2\na,150,0\n";
    assert_int_equal(tram_records_read_buffer("j.csv", over, strlen(over), NULL, &r, &e), TRAM_OK);
    assert_int_equal(tram_records_apply_chain(r, c, &e), TRAM_EINPUT);
    assert_int_equal(e.line, 4);
    assert_int_equal(e.column, 3);
    assert_non_null(strstr(e.message, "station 'a': joint_1"));
    tram_records_destroy(r);
    const char *gap = "# length-unit: mm\n# angle-unit: deg\njoint_1,joint_3\n1,2\n";
    assert_int_equal(tram_records_read_buffer("j.csv", gap, strlen(gap), NULL, &r, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "joint_2"));
    /* robot_ and joint_ columns together (tram plan writes them): the
     * chain's pose must be the robot_ pose, within 0.01 mm and 0.001 deg */
    const char *both = "# length-unit: mm\n# angle-unit: deg\nstation,joint_1,joint_2,robot_x,robot_y,robot_z,"
                       "robot_qw,robot_qx,robot_qy,robot_qz\na,90,0,0,550,0,0.70710678118654752,0,0,0.70710678118654752\n";
    assert_int_equal(tram_records_read_buffer("j.csv", both, strlen(both), NULL, &r, &e), TRAM_OK);
    assert_int_equal(tram_records_apply_chain(r, c, &e), TRAM_OK);
    tram_records_destroy(r);
    const char *off = "# length-unit: mm\n# angle-unit: deg\nstation,joint_1,joint_2,robot_x,robot_y,robot_z,"
                      "robot_qw,robot_qx,robot_qy,robot_qz\na,90,0,0,550.02,0,0.70710678118654752,0,0,0.70710678118654752\n";
    assert_int_equal(tram_records_read_buffer("j.csv", off, strlen(off), NULL, &r, &e), TRAM_OK);
    assert_int_equal(tram_records_apply_chain(r, c, &e), TRAM_EINPUT);
    assert_int_equal(e.line, 4);
    assert_non_null(strstr(e.message, "station 'a': the robot_ pose and the chain's pose"));
    tram_records_destroy(r);
    const char *three = "# length-unit: mm\n# angle-unit: deg\njoint_1,joint_2,joint_3\n1,2,3\n";
    assert_int_equal(tram_records_read_buffer("j.csv", three, strlen(three), NULL, &r, &e), TRAM_OK);
    assert_int_equal(tram_records_apply_chain(r, c, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "3 joint columns but the chain"));
    tram_records_destroy(r);
    tram_chain_destroy(c);
    tram_chain_destroy(NULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_planar_closed_form), cmocka_unit_test(test_three_forms_agree),
        cmocka_unit_test(test_spatial_dh_vs_generic),
        cmocka_unit_test(test_jacobian_finite_differences), cmocka_unit_test(test_bad_chains),
        cmocka_unit_test(test_records_with_joints)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
