/* test_records.c - unit tests of the record readers and writer
 * (records.c, records_csv.c, records_json.c, records_write.c). */
#include "test_util.h"

static const char *csv_quat =
    "# length-unit: mm\n"
    "# a free comment: Capitalised words are not directives\n"
    "station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,"
    "sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\r\n"
    "s1, 100,200,300, 0.7071067811865476,0,0,0.7071067811865476, 1,2,3, 1,0,0,0\r\n"
    "\n"
    "s2,0,0,0,1,0,0,0,5,5,5,1,0,0,0\n";

static tram_records *read_ok(const char *text)
{
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_records_read_buffer("t.csv", text, strlen(text), NULL, &r, &err);
    if (st != TRAM_OK) {
        char buf[1200];
        fail_msg("unexpected error: %s", tram_error_format(&err, buf, sizeof buf));
    }
    return r;
}

static tram_error read_bad(const char *text, const tram_read_options *opt)
{
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_records_read_buffer("t.csv", text, strlen(text), opt, &r, &err);
    assert_int_equal(st, TRAM_EINPUT);
    assert_null(r);
    return err;
}

static void test_csv_basic(void **state)
{
    (void)state;
    tram_records *r = read_ok(csv_quat);
    assert_int_equal(r->count, 2);
    assert_string_equal(r->stations[0].id, "s1");
    assert_int_equal(r->stations[0].line, 4);
    assert_int_equal(r->length_unit, TRAM_LENGTH_MM);
    /* 90 degrees about z: flange x axis points along base y */
    assert_close(r->stations[0].T_base_flange.m[1][0], 1.0, 1e-15);
    assert_close(r->stations[0].T_base_flange.m[0][3], 100.0, 0.0);
    assert_close(r->stations[1].T_sensor_target.m[2][3], 5.0, 0.0);
    tram_records_destroy(r);
    tram_records_destroy(NULL); /* no-op */
}

static void test_directions(void **state)
{
    (void)state;
    const char *text = "# length-unit: m\n# robot-pose: base-in-flange\n"
                       "# sensor-pose: sensor-in-target\n"
                       "robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,"
                       "sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\n"
                       "1,0,0,0.7071067811865476,0,0,0.7071067811865476,0,0,2,1,0,0,0\n";
    tram_records *r = read_ok(text);
    /* T_flange_base = (Rz90, (1,0,0)) -> T_base_flange = (Rz-90, -Rz-90 (1,0,0)) */
    const tram_se3 *T = &r->stations[0].T_base_flange;
    assert_close(T->m[0][1], 1.0, 1e-15);
    assert_close(T->m[0][3], 0.0, 1e-15);
    assert_close(T->m[1][3], 1.0, 1e-15);
    assert_close(r->stations[0].T_sensor_target.m[2][3], -2.0, 0.0);
    assert_string_equal(r->stations[0].id, "1"); /* default id: row number */
    tram_records_destroy(r);
}

static void test_bad_inputs(void **state)
{
    (void)state;
    const char *hdr = "station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n";
    char buf[1024];
    tram_error e;
    snprintf(buf, sizeof buf, "%s1,0,0,0,1,0,0,0\n", hdr);
    e = read_bad(buf, NULL); /* no length unit */
    assert_non_null(strstr(e.message, "length unit"));
    snprintf(buf, sizeof buf, "# length-unit: mm\n%s1,0,0,0,1,0,0,0.1\n", hdr);
    e = read_bad(buf, NULL);
    assert_int_equal(e.line, 3);
    assert_int_equal(e.column, 9); /* the first quaternion column */
    assert_non_null(strstr(e.message, "norm"));
    snprintf(buf, sizeof buf, "# length-unit: mm\n%s1,0,0,0,1,0,0\n", hdr);
    e = read_bad(buf, NULL);
    assert_non_null(strstr(e.message, "short row"));
    snprintf(buf, sizeof buf, "# length-unit: mm\n%s1,0,0,0,1,0,0,0\n1,0,0,0,1,0,0,0\n", hdr);
    e = read_bad(buf, NULL);
    assert_int_equal(e.line, 4);
    assert_non_null(strstr(e.message, "duplicate"));
    snprintf(buf, sizeof buf, "# length-unit: mm\n%s1,0,nan,0,1,0,0,0\n", hdr);
    e = read_bad(buf, NULL);
    assert_int_equal(e.column, 5);
    assert_non_null(strstr(e.message, "NaN"));
    e = read_bad("# length-unit: mm\nrobot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3\n"
                 "0,0,0,0,0,0\n",
                 NULL);
    assert_non_null(strstr(e.message, "angle unit"));
    e = read_bad("# length-unit: mm\n# angle-unit: deg\n"
                 "robot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3\n0,0,0,0,0,0\n",
                 NULL);
    assert_non_null(strstr(e.message, "convention"));
    e = read_bad("# length-unit: mm\nrobot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,"
                 "robot_rx,robot_ry,robot_rz\n",
                 NULL);
    assert_non_null(strstr(e.message, "two rotation sets"));
    e = read_bad("# length-unit: mm\nrobot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy\n", NULL);
    assert_non_null(strstr(e.message, "robot_qz"));
    e = read_bad("# length-unit: mm\nrobot_x,robot_y,robot_z,robot_quat\n", NULL);
    assert_int_equal(e.column, 25);
    e = read_bad("# length-units: mm\n", NULL);
    assert_non_null(strstr(e.message, "unknown directive"));
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.length_unit = TRAM_LENGTH_M;
    snprintf(buf, sizeof buf, "# length-unit: mm\n%s1,0,0,0,1,0,0,0\n", hdr);
    e = read_bad(buf, &opt);
    assert_non_null(strstr(e.message, "--length-unit"));
}

static void test_matrix_reortho(void **state)
{
    (void)state;
    const char *text = "# length-unit: mm\nrobot_x,robot_y,robot_z,robot_r11,robot_r12,robot_r13,"
                       "robot_r21,robot_r22,robot_r23,robot_r31,robot_r32,robot_r33\n"
                       "0,0,0,1.0001,0,0,0,1,0,0,0,1\n";
    tram_error e = read_bad(text, NULL);
    assert_non_null(strstr(e.message, "--reorthonormalize"));
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.reorthonormalize = 1;
    tram_records *r = NULL;
    assert_int_equal(tram_records_read_buffer("m.csv", text, strlen(text), &opt, &r, &e), TRAM_OK);
    tram_mat3 R;
    tram_se3_to_rt(&r->stations[0].T_base_flange, &R, NULL);
    assert_true(tram_so3_is_valid(&R, 1e-12));
    tram_records_destroy(r);
}

static void test_json_matches_csv(void **state)
{
    (void)state;
    const char *json =
        "{\"format\": \"tram-records\", \"version\": 1, \"length_unit\": \"mm\",\n"
        " \"stations\": [\n"
        "  {\"station\": \"s1\", \"robot\": {\"x\": 100, \"y\": 200, \"z\": 300,\n"
        "    \"qw\": 0.7071067811865476, \"qx\": 0, \"qy\": 0, \"qz\": 0.7071067811865476},\n"
        "   \"sensor\": {\"x\": 1, \"y\": 2, \"z\": 3, \"qw\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0}},\n"
        "  {\"station\": \"s2\", \"robot\": {\"x\": 0, \"y\": 0, \"z\": 0, \"qw\": 1, \"qx\": 0,\n"
        "    \"qy\": 0, \"qz\": 0}, \"sensor\": {\"x\": 5, \"y\": 5, \"z\": 5, \"qw\": 1, \"qx\": 0,\n"
        "    \"qy\": 0, \"qz\": 0}}]}\n";
    tram_records *a = read_ok(csv_quat), *b = read_ok(json);
    assert_int_equal(a->count, b->count);
    for (size_t i = 0; i < a->count; i++) {
        assert_true(test_max_abs_diff(&a->stations[i].T_base_flange.m[0][0],
                                      &b->stations[i].T_base_flange.m[0][0], 16) == 0.0);
        assert_true(test_max_abs_diff(&a->stations[i].T_sensor_target.m[0][0],
                                      &b->stations[i].T_sensor_target.m[0][0], 16) == 0.0);
    }
    assert_int_equal(b->stations[1].line, 6);
    tram_records_destroy(a);
    tram_records_destroy(b);
    tram_error e = read_bad("{\"format\": \"tram-records\",\n \"version\": 1,, }", NULL);
    assert_int_equal(e.line, 2);
    e = read_bad("{\"format\": \"tram-records\", \"version\": 2, \"stations\": []}", NULL);
    assert_non_null(strstr(e.message, "newer"));
}

/* Numbers of a JSON record file as glibc's strtod reads them (the outside
 * reference), bit for bit: the check converts them once and cJSON sees 0
 * in their place (docs/performance.md); forms: a negative zero, an
 * exponent, a subnormal, 30 and 70 digits (longer than cJSON's own
 * 63-character number buffer). */
static void test_json_numbers(void **state)
{
    (void)state;
    static const char *const nums[6] = {
        "-0", "1E2", "4.9406564584124654e-324", "123456789012345678901234567890.5",
        "0.1234567890123456789012345678901234567890123456789012345678901234567891",
        "-612.84147098480787"};
    char json[2048];
    snprintf(json, sizeof json,
             "{\"format\": \"tram-records\", \"version\": 1, \"length_unit\": \"mm\",\n"
             " \"stations\": [\n"
             "  {\"station\": 7, \"robot\": {\"x\": %s, \"y\": %s, \"z\": %s,\n"
             "    \"qw\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0},\n"
             "   \"sensor\": {\"x\": %s, \"y\": %s, \"z\": %s, \"qw\": 1, \"qx\": 0, \"qy\": 0,"
             " \"qz\": 0}},\n"
             "  {\"station\": \"b\", \"robot\": {\"x\": 0, \"y\": 0, \"z\": 0, \"qw\": 1, \"qx\": 0,"
             " \"qy\": 0, \"qz\": 0}, \"sensor\": {\"x\": 0, \"y\": 0, \"z\": 0, \"qw\": 1, \"qx\": 0,"
             " \"qy\": 0, \"qz\": 0}}]}\n",
             nums[0], nums[1], nums[2], nums[3], nums[4], nums[5]);
    tram_records *r = read_ok(json);
    assert_int_equal(r->count, 2);
    assert_string_equal(r->stations[0].id, "7");
    for (int k = 0; k < 6; k++) {
        const tram_se3 *T = k < 3 ? &r->stations[0].T_base_flange : &r->stations[0].T_sensor_target;
        double want = strtod(nums[k], NULL), got = T->m[k % 3][3];
        assert_memory_equal(&got, &want, sizeof got);
    }
    tram_records_destroy(r);
    /* a station that is no object is named on its own line */
    tram_error e = read_bad("{\"format\": \"tram-records\", \"version\": 1, \"length_unit\": \"mm\",\n"
                            " \"stations\": [{\"robot\": {\"x\": 0, \"y\": 0, \"z\": 0, \"qw\": 1,"
                            " \"qx\": 0, \"qy\": 0, \"qz\": 0}},\n 5,\n {\"robot\": {}}]}\n",
                            NULL);
    assert_int_equal(e.line, 3);
    assert_non_null(strstr(e.message, "stations[1]: expected an object"));
}

/* JSON record files that must be refused, each with the station's line and
 * the JSON path named in the message (docs/records.md). */
static void test_json_refused(void **state)
{
    (void)state;
#define HEAD "{\"format\": \"tram-records\", \"version\": 1, \"length_unit\": \"mm\",\n"
#define ROBOT "\"robot\": {\"x\": 1, \"y\": 2, \"z\": 3, \"qw\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0}"
#define ST(body) "{\"station\": \"a\", " body "}"
    static const struct {
        const char *text, *expect;
        long line;
    } bad[] = {
        {"{\"format\": \"other\"}", "\"format\": expected \"tram-records\"", 1},
        {"{\"format\": \"tram-records\", \"version\": 1.5}", "\"version\": expected the integer 1", 1},
        {"{\"format\": \"tram-records\", \"version\": 2}", "newer than this tram", 1},
        {HEAD "\"setup\": 3}", "\"setup\": expected a string", 0},
        {HEAD "\"colour\": \"red\"}", "unknown key \"colour\"", 0},
        {HEAD "\"stations\": []}", "expected a non-empty array", 0},
        {HEAD "\"stations\": [\n" ST("\"robot\": 5") "]}", "stations[0].robot: expected an object", 3},
        {HEAD "\"stations\": [\n" ST("\"joints\": []") "]}", "stations[0].joints: expected an array", 3},
        {HEAD "\"stations\": [\n" ST("\"pose\": {}") "]}", "stations[0]: expected \"robot\"", 3},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n 7]}", "stations[1]: expected an object", 0},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"\", " ROBOT "}]}",
         "stations[1].station: expected a non-empty string", 4},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"b\", \"extra\": 1, " ROBOT "}]}",
         "stations[1]: unknown key \"extra\"", 4},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"b\", " ROBOT ", \"sensor\": {}}]}",
         "stations[1].sensor: not in the first station", 4},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"b\"}]}",
         "stations[1].robot: missing", 4},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"b\", \"robot\": {\"x\": 1}}]}",
         "stations[1].robot: 1 keys, expected 7", 4},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"b\", \"robot\": {\"x\": 1, \"y\": 2, "
              "\"z\": 3, \"rx\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0}}]}",
         "stations[1].robot.qw: missing", 4},
        {HEAD "\"stations\": [\n" ST(ROBOT) ",\n{\"station\": \"b\", \"robot\": {\"x\": \"1\", \"y\": 2, "
              "\"z\": 3, \"qw\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0}}]}",
         "stations[1].robot.x: expected a finite number", 4},
        {HEAD "\"angle_unit\": \"deg\", \"stations\": [\n" ST("\"joints\": [1, 2]") ",\n"
              "{\"station\": \"b\", \"joints\": [1]}]}",
         "stations[1].joints: expected 2 joint readings", 4},
        {HEAD "\"angle_unit\": \"deg\", \"stations\": [\n" ST("\"joints\": [1, 2]") ",\n"
              "{\"station\": \"b\", \"joints\": [1, null]}]}",
         "stations[1].joints[1]: expected a finite number", 4},
    };
#undef HEAD
#undef ROBOT
#undef ST
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        tram_records *r = (tram_records *)1;
        tram_error e;
        tram_status st = tram_records_read_buffer("r.json", bad[i].text, strlen(bad[i].text), NULL,
                                                  &r, &e);
        if (st != TRAM_EINPUT || r != NULL || !strstr(e.message, bad[i].expect))
            fail_msg("case %zu: status %d, message '%s'", i, (int)st, e.message);
        if (bad[i].line && e.line != bad[i].line)
            fail_msg("case %zu: line %ld, expected %ld (%s)", i, e.line, bad[i].line, e.message);
        assert_string_equal(e.file, "r.json");
    }
}

static void test_write_round_trip(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("records write", 5001);
    const char *reps[] = {"quat", "rotvec", "matrix", "euler:zyx-intrinsic", "euler:zxz-extrinsic"};
    tram_records *r = read_ok(csv_quat);
    for (size_t i = 0; i < r->count; i++) {
        test_random_pose(&rng, 1000.0, &r->stations[i].T_base_flange);
        test_random_pose(&rng, 1000.0, &r->stations[i].T_sensor_target);
    }
    for (size_t k = 0; k < sizeof reps / sizeof reps[0]; k++)
        for (int json = 0; json < 2; json++) {
            tram_output_rep rep;
            assert_int_equal(tram_output_rep_parse(reps[k], &rep), 0);
            rep.angle_unit = TRAM_ANGLE_DEG;
            char *buf = NULL;
            size_t len = 0;
            FILE *f = open_memstream(&buf, &len);
            tram_error e;
            assert_int_equal(tram_records_write(r, &rep, json, f, &e), TRAM_OK);
            fclose(f);
            tram_records *b = read_ok(buf);
            for (size_t i = 0; i < r->count; i++) {
                double ang, d;
                tram_se3_distance(&r->stations[i].T_base_flange, &b->stations[i].T_base_flange,
                                  &ang, &d);
                assert_true(ang < 1e-11 && d < 1e-12);
                tram_se3_distance(&r->stations[i].T_sensor_target,
                                  &b->stations[i].T_sensor_target, &ang, &d);
                assert_true(ang < 1e-11 && d < 1e-12);
            }
            tram_records_destroy(b);
            free(buf);
        }
    tram_records_destroy(r);
}

static void test_rebuild_quat_order(void **state)
{
    (void)state;
    tram_records *r = read_ok(csv_quat);
    tram_block_convention c[2] = {r->conv[0], r->conv[1]};
    c[0].quat_xyzw = 1; /* (0.707,0,0,0.707) read as x,y,z,w: 90 deg about x */
    tram_error e;
    assert_int_equal(tram_records_rebuild(r, c, &e), TRAM_OK);
    assert_close(r->stations[0].T_base_flange.m[2][1], 1.0, 1e-15);
    tram_records_destroy(r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_csv_basic),        cmocka_unit_test(test_directions),
        cmocka_unit_test(test_bad_inputs),       cmocka_unit_test(test_matrix_reortho),
        cmocka_unit_test(test_json_matches_csv), cmocka_unit_test(test_json_refused),
        cmocka_unit_test(test_json_numbers),
        cmocka_unit_test(test_write_round_trip),
        cmocka_unit_test(test_rebuild_quat_order)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
