/* test_camera_file.c - tests of camera_file.c: the exact round trip of
 * camera files (tram-camera, version 1) with and without a calibration
 * block (and its correlations), and the reader's refusals with
 * file:line:column. */
#include "test_util.h"

static const char good[] =
    "{\n"
    "  \"format\": \"tram-camera\",\n"
    "  \"version\": 1,\n"
    "  \"pixel_origin\": \"top-left-pixel-centre\",\n"
    "  \"image_size\": {\"width\": 640, \"height\": 480},\n"
    "  \"intrinsics\": {\"fx\": 832.5, \"fy\": 832.53, \"cx\": 303.96, \"cy\": 206.59, \"skew\": 0.2045},\n"
    "  \"distortion\": {\"model\": \"radial2\", \"k1\": -0.228, \"k2\": 0.190}\n"
    "}\n";

static void test_read_good(void **state)
{
    (void)state;
    tram_camera c;
    tram_camera_calib cal;
    tram_error err;
    assert_int_equal(tram_camera_read_buffer("c.json", good, strlen(good), &c, &cal, &err), TRAM_OK);
    assert_close(c.fx, 832.5, 0);
    assert_close(c.skew, 0.2045, 0);
    assert_close(c.k2, 0.190, 0);
    assert_close(c.k3, 0, 0);
    assert_int_equal(c.distortion, TRAM_DISTORTION_RADIAL2);
    assert_int_equal(c.width, 640);
    assert_int_equal(cal.present, 0);
    /* NULL calib is allowed */
    assert_int_equal(tram_camera_read_buffer("c.json", good, strlen(good), &c, NULL, &err), TRAM_OK);
}

static void test_round_trip(void **state)
{
    (void)state;
    tram_camera c = {1234.5678901234567, 1233.1, 639.25, 481.0625, 0.0, -0.3, 0.11, -0.02,
                     1e-4, -2e-4, TRAM_DISTORTION_FULL, 1280, 960};
    tram_camera_calib cal;
    memset(&cal, 0, sizeof cal);
    cal.present = 1;
    snprintf(cal.method, sizeof cal.method, "Zhang 2000 + Levenberg-Marquardt");
    cal.nviews = 15;
    cal.npoints = 1050;
    cal.noutliers = 2;
    cal.rms_px = 0.1234;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        cal.free_param[k] = k != TRAM_CAM_SKEW;
        cal.sigma[k] = k != TRAM_CAM_SKEW ? 0.01 * (k + 1) : 0;
    }
    /* correlations 0.5^|i - j| over the free parameters (positive definite) */
    cal.has_correlation = 1;
    for (int a = 0; a < TRAM_CAM_NPARAM; a++)
        for (int b = 0; b < TRAM_CAM_NPARAM; b++)
            cal.correlation[a * TRAM_CAM_NPARAM + b] =
                cal.free_param[a] && cal.free_param[b] ? pow(0.5, abs(a - b)) * (a != b && (a == 9 || b == 9) ? -1 : 1) : 0;
    char *text;
    tram_error err;
    assert_int_equal(tram_camera_to_json(&c, &cal, &text, &err), TRAM_OK);
    printf("%s", text);
    tram_camera b;
    tram_camera_calib bc;
    assert_int_equal(tram_camera_read_buffer("rt.json", text, strlen(text), &b, &bc, &err), TRAM_OK);
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        assert_true(tram_camera_param(&b, k) == tram_camera_param(&c, k));
        assert_int_equal(bc.free_param[k], cal.free_param[k]);
        assert_true(bc.sigma[k] == cal.sigma[k]);
    }
    assert_int_equal(b.distortion, c.distortion);
    assert_int_equal(bc.nviews, 15);
    assert_int_equal(bc.noutliers, 2);
    assert_true(bc.rms_px == 0.1234);
    assert_string_equal(bc.method, cal.method);
    assert_int_equal(bc.has_correlation, 1);
    for (int k = 0; k < TRAM_CAM_NPARAM * TRAM_CAM_NPARAM; k++) assert_true(bc.correlation[k] == cal.correlation[k]);
    double cov[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM];
    assert_int_equal(tram_camera_calib_covariance(&bc, cov), 1);
    assert_true(cov[TRAM_CAM_FX * TRAM_CAM_NPARAM + TRAM_CAM_FY] == 0.01 * 0.02 * 0.5);
    assert_true(cov[TRAM_CAM_SKEW * TRAM_CAM_NPARAM + TRAM_CAM_SKEW] == 0);
    bc.has_correlation = 0;
    assert_int_equal(tram_camera_calib_covariance(&bc, cov), 2);
    assert_true(cov[TRAM_CAM_FX * TRAM_CAM_NPARAM + TRAM_CAM_FY] == 0);
    assert_true(cov[TRAM_CAM_P2 * TRAM_CAM_NPARAM + TRAM_CAM_P2] == 0.1 * 0.1);
    assert_int_equal(tram_camera_calib_covariance(NULL, cov), 0);
    free(text);
    /* the model none has no coefficients at all */
    c.distortion = TRAM_DISTORTION_NONE;
    assert_int_equal(tram_camera_to_json(&c, NULL, &text, &err), TRAM_OK);
    assert_null(strstr(text, "k1"));
    assert_int_equal(tram_camera_read_buffer("rt.json", text, strlen(text), &b, &bc, &err), TRAM_OK);
    assert_int_equal(bc.present, 0);
    free(text);
    c.fx = -1;
    assert_int_equal(tram_camera_to_json(&c, NULL, &text, &err), TRAM_EINPUT);
}

/* good with one piece of text replaced */
static char *variant(const char *from, const char *to)
{
    static char buf[8192];
    const char *p = strstr(good, from);
    assert_non_null(p);
    snprintf(buf, sizeof buf, "%.*s%s%s", (int)(p - good), good, to, p + strlen(from));
    return buf;
}

typedef struct refusal {
    const char *from, *to, *needle;
    long line, col;
} refusal;

static void test_refusals(void **state)
{
    (void)state;
    static const refusal cases[] = {
        {"\"radial2\"", "\"radial9\"", "distortion model \"radial9\"", 7, 27},
        {", \"k2\": 0.190", "", "missing key \"k2\" in distortion", 7, 17},
        {"\"k2\": 0.190", "\"k3\": 0.190", "\"k3\" is not a coefficient of the radial2", 7, 52},
        {"\"fx\": 832.5", "\"fx\": 0", "fx 0: expected a focal length > 0", 6, 24},
        {"\"fy\": 832.53", "\"fy\": -832.53", "fy -832.53", 6, 37},
        {"\"cx\": 303.96", "\"cx\": 1e999", "\"cx\": number 1e999 is beyond double range: expected a finite number", 6, 51},
        {"\"cy\": 206.59", "\"cy\": \"206\"", "intrinsics.cy", 6, 65},
        {"\"fx\": 832.5,", "\"fx\": 832.5, \"fx\": 830,", "key \"fx\" given twice in one object (first at line 6, column 18)", 6, 31},
        {"\"version\": 1", "\"version\": 2", "version: expected 1", 3, 14},
        {"\"tram-camera\"", "\"tram-board\"", "\"format\": expected \"tram-camera\"", 2, 13},
        {"top-left-pixel-centre", "top-left-pixel-corner", "\"pixel_origin\": expected", 4, 19},
        {"\"height\": 480", "\"height\": 0", "\"image_size.height\" 0: expected a whole number >= 1", 5, 42},
        {"\"height\": 480", "\"height\": 480.5", "whole number", 5, 42},
        {"\"version\": 1,", "\"version\": 1, \"colour\": 3,", "unknown key \"colour\"", 3, 17},
        {"\"skew\": 0.2045", "\"skw\": 0.2045", "unknown key \"skw\" in intrinsics", 6, 73},
        {"  \"distortion\"", "  \"distortio\"", "unknown key \"distortio\"", 7, 3},
        {"}\n}", "}\n", "malformed JSON", 0, 0},
        {"}\n}", "}\n}\n[]", "text after the JSON document", 9, 1},
    };
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const char *text = variant(cases[k].from, cases[k].to);
        tram_camera c;
        tram_error err;
        tram_status st = tram_camera_read_buffer("bad.json", text, strlen(text), &c, NULL, &err);
        char buf[1200];
        printf("  refusal %zu: %s\n", k, tram_error_format(&err, buf, sizeof buf));
        assert_int_equal(st, TRAM_EINPUT);
        assert_non_null(strstr(err.message, cases[k].needle));
        assert_string_equal(err.file, "bad.json");
        if (cases[k].line) {
            assert_int_equal(err.line, cases[k].line);
            assert_int_equal(err.column, cases[k].col);
        }
    }
}

static void test_calibration_refusals(void **state)
{
    (void)state;
    static const char *const blocks[] = {
        "\"calibration\": {\"method\": \"m\", \"views\": 5, \"points\": 10, \"outliers\": 0, "
        "\"rms_px\": -1, \"sigma\": {}, \"fixed\": []}",
        "\"calibration\": {\"method\": \"m\", \"views\": 5, \"points\": 10, \"outliers\": 0, "
        "\"rms_px\": 0.3, \"sigma\": {\"fx\": 1}, \"fixed\": []}",
        "\"calibration\": {\"method\": \"m\", \"views\": 5, \"points\": 10, \"outliers\": 0, "
        "\"rms_px\": 0.3, \"sigma\": {\"fx\": 1, \"fy\": 1, \"cx\": 1, \"cy\": 1, \"k1\": 1, "
        "\"k2\": 1}, \"fixed\": [\"skew\", \"skew\"]}",
        "\"calibration\": {\"method\": \"m\", \"views\": 5, \"points\": 10, \"outliers\": 0, "
        "\"rms_px\": 0.3, \"sigma\": {\"fx\": 1, \"fy\": 1, \"cx\": 1, \"cy\": 1, \"k1\": 1, "
        "\"k2\": 1, \"k3\": 1}, \"fixed\": [\"skew\"]}",
#define SIG "\"calibration\": {\"method\": \"m\", \"views\": 5, \"points\": 10, \"outliers\": 0, " \
            "\"rms_px\": 0.3, \"sigma\": {\"fx\": 1, \"fy\": 1, \"cx\": 1, \"cy\": 1, \"skew\": 1, " \
            "\"k1\": 1, \"k2\": 1}, \"fixed\": [], \"correlation\": "
#define ROWS_K "\"cy\": {\"skew\": 0, \"k1\": 0, \"k2\": 0}, \"skew\": {\"k1\": 0, \"k2\": 0}, " \
               "\"k1\": {\"k2\": -0.9}"
        SIG "{\"fx\": {\"fy\": 1.5, \"cx\": 0, \"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}}}",
        SIG "{\"k2\": {}}}",
        SIG "{\"fx\": {\"fy\": 0.99, \"cx\": 0.99, \"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}, "
            "\"fy\": {\"cx\": -0.99, \"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}, "
            "\"cx\": {\"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}, " ROWS_K "}}",
        SIG "{\"fx\": {\"fy\": 0.9, \"cx\": 0, \"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}, "
            "\"fy\": {\"fx\": 0.9, \"cx\": 0, \"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}}}",
        SIG "{\"fx\": {\"fy\": 0.9, \"cy\": 0, \"skew\": 0, \"k1\": 0, \"k2\": 0}}}",
    };
    static const char *const needles[] = {"rms_px: expected a number >= 0",
                                          "missing key \"fy\" in calibration.sigma",
                                          "calibration.fixed: expected distinct",
                                          "\"k3\" is not a free parameter",
                                          "correlation of fx and fy 1.5: expected a number in [-1, 1]",
                                          "\"k2\": expected a free parameter that has a later",
                                          "not a correlation matrix (not positive semi-definite)",
                                          "\"fx\" is not a later free parameter",
                                          "missing key \"cx\" in calibration.correlation.fx"};
    for (size_t k = 0; k < sizeof needles / sizeof *needles; k++) {
        char to[2048];
        snprintf(to, sizeof to, "},\n  %s\n}", blocks[k]);
        const char *text = variant("}\n}", to);
        tram_camera c;
        tram_error err;
        tram_status st = tram_camera_read_buffer("cal.json", text, strlen(text), &c, NULL, &err);
        char buf[1200];
        printf("  refusal %zu: %s\n", k, tram_error_format(&err, buf, sizeof buf));
        assert_int_equal(st, TRAM_EINPUT);
        assert_non_null(strstr(err.message, needles[k]));
        assert_int_equal(err.line, 8);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_read_good), cmocka_unit_test(test_round_trip),
                                       cmocka_unit_test(test_refusals),
                                       cmocka_unit_test(test_calibration_refusals)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
