/*
 * test_tool.c - tool (TCP) poses (io/tool.c): the text form of the tool's
 * pose checked against rotations built independently here (axis rotations
 * from their definition, so the Euler and rotation-vector forms agree with
 * a quaternion of the same turn, half-angle form), the units, the refusals
 * with the column of the bad part, and a record file of tool poses turned
 * into flange poses T_base_tool T_flange_tool^-1 (seed printed).
 */
#include "test_util.h"

static void test_parse_forms(void **state)
{
    (void)state;
    tram_error e;
    tram_se3 A, B, C, D;
    tram_length_unit u;
    /* 30 deg about z: quaternion (cos 15, 0, 0, sin 15) (half-angle form) */
    char q[128];
    snprintf(q, sizeof q, "0,0,150mm quat:%.17g,0,0,%.17g", cos(M_PI / 12), sin(M_PI / 12));
    assert_int_equal(tram_tool_parse(q, &A, &u, &e), TRAM_OK);
    assert_int_equal(u, TRAM_LENGTH_MM);
    assert_int_equal(tram_tool_parse("0,0,15cm euler:zyx-intrinsic:30,0,0deg", &B, &u, &e), TRAM_OK);
    assert_int_equal(u, TRAM_LENGTH_CM);
    assert_int_equal(tram_tool_parse("  0,0,0.15m rotvec:0,0,0.52359877559829882rad ", &C, &u, &e), TRAM_OK);
    assert_int_equal(u, TRAM_LENGTH_M);
    char m[256];
    double c = cos(M_PI / 6), s = sin(M_PI / 6);
    snprintf(m, sizeof m, "0,0,150mm matrix:%.17g,%.17g,0,%.17g,%.17g,0,0,0,1", c, -s, s, c);
    assert_int_equal(tram_tool_parse(m, &D, &u, &e), TRAM_OK);
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) {
            assert_true(fabs(A.m[i][j] - D.m[i][j]) < 1e-12);
            assert_true(fabs(B.m[i][j] - D.m[i][j]) < 1e-12);
            assert_true(fabs(C.m[i][j] - D.m[i][j]) < 1e-12);
        }
    assert_true(fabs(A.m[2][3] - 150) < 1e-12 && fabs(B.m[2][3] - 15) < 1e-12 && fabs(C.m[2][3] - 0.15) < 1e-12);
}

static void refused(const char *text, const char *want)
{
    tram_error e;
    tram_error_clear(&e);
    tram_se3 T;
    tram_length_unit u;
    assert_int_equal(tram_tool_parse(text, &T, &u, &e), TRAM_EINPUT);
    if (!strstr(e.message, want)) fail_msg("'%s': '%s' lacks '%s'", text, e.message, want);
}

static void test_parse_refusals(void **state)
{
    (void)state;
    refused("0,0,150 quat:1,0,0,0", "(at character 1): the tool's translation needs its unit");
    refused("0,0,150mm", "the tool's rotation is missing");
    refused("0,0,150mm quat:1,0,0", "(at character 11): expected the tool's rotation as quat:");
    refused("0,0,150mm quat:2,0,0,0", "quaternion has norm 2");
    refused("0,0,150mm rotvec:0,0,30", "the tool's angles need their unit");
    refused("0,0,150mm euler:zyx:30,0,0deg", "Euler convention 'zyx'");
    refused("0,0,150mm matrix:1,0,0,0,1,0,0,0,2", "not a rotation");
    refused("0,0,150mm quat:1,0,0,0 extra", "(at character 24): text after the tool's rotation");
    refused("0,,150mm quat:1,0,0,0", "X,Y,ZUNIT ROTATION");
}

static void test_records_tool(void **state)
{
    (void)state;
    test_rng rng = {20261219};
    printf("seed 20261219\n");
    tram_se3 T_flange_tool, P[4];
    tram_error e;
    tram_length_unit u;
    assert_int_equal(tram_tool_parse("1,2,15cm rotvec:10,-20,30deg", &T_flange_tool, &u, &e), TRAM_OK);
    for (int k = 0; k < 3; k++) T_flange_tool.m[k][3] *= 10.0; /* cm -> mm, the file's unit */
    char text[4096];
    int len = snprintf(text, sizeof text,
                       "# length-unit: mm\n# robot-pose: tool-in-base\n# tool-in-flange: 1,2,15cm "
                       "rotvec:10,-20,30deg\nstation,robot_x,robot_y,robot_z,robot_r11,robot_r12,"
                       "robot_r13,robot_r21,robot_r22,robot_r23,robot_r31,robot_r32,robot_r33\n");
    for (int i = 0; i < 4; i++) {
        test_random_pose(&rng, 500.0, &P[i]); /* T_base_flange */
        tram_se3 Tt;
        tram_se3_compose(&P[i], &T_flange_tool, &Tt); /* what the controller logs */
        len += snprintf(text + len, sizeof text - (size_t)len, "%d,%.17g,%.17g,%.17g", i + 1,
                        Tt.m[0][3], Tt.m[1][3], Tt.m[2][3]);
        for (int a = 0; a < 9; a++)
            len += snprintf(text + len, sizeof text - (size_t)len, ",%.17g", Tt.m[a / 3][a % 3]);
        len += snprintf(text + len, sizeof text - (size_t)len, "\n");
    }
    tram_records *r = NULL;
    assert_int_equal(tram_records_read_buffer("tcp.csv", text, (size_t)len, NULL, &r, &e), TRAM_OK);
    assert_true(r->robot_tool && r->has_tool && r->tool_in_file);
    assert_int_equal(tram_records_require_flange(r, &e), TRAM_OK);
    for (int i = 0; i < 4; i++)
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 4; b++)
                assert_true(fabs(r->stations[i].T_base_flange.m[a][b] - P[i].m[a][b]) < 1e-9);
    /* a second tool is refused */
    assert_int_equal(tram_records_set_tool(r, &T_flange_tool, TRAM_LENGTH_MM, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "the file declares the tool"));
    tram_records_destroy(r);
    /* without the directive: refused until the tool is set */
    char *cut = strstr(text, "# tool-in-flange");
    char *eol = strchr(cut, '\n');
    memmove(cut, eol + 1, strlen(eol + 1) + 1);
    assert_int_equal(tram_records_read_buffer("tcp.csv", text, strlen(text), NULL, &r, &e), TRAM_OK);
    assert_int_equal(tram_records_require_flange(r, &e), TRAM_EINPUT);
    assert_int_equal(e.line, 2);
    assert_non_null(strstr(e.message, "tool's pose in the flange frame is not given"));
    assert_int_equal(tram_records_set_tool(r, &T_flange_tool, TRAM_LENGTH_MM, &e), TRAM_OK);
    assert_int_equal(tram_records_require_flange(r, &e), TRAM_OK);
    assert_true(fabs(r->stations[2].T_base_flange.m[1][3] - P[2].m[1][3]) < 1e-9);
    /* the convention doctor's rebuild keeps the tool */
    assert_int_equal(tram_records_rebuild(r, r->conv, &e), TRAM_OK);
    assert_true(fabs(r->stations[3].T_base_flange.m[0][3] - P[3].m[0][3]) < 1e-9);
    tram_records_destroy(r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_parse_forms),
                                       cmocka_unit_test(test_parse_refusals),
                                       cmocka_unit_test(test_records_tool)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
