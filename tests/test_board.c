/*
 * test_board.c - printed boards (src/image/board.c): the symmetry rule, the
 * corner positions and ids of the board convention (tram/image.h), and the
 * board file: a round trip, and the refusals with their file:line:column.
 */
#include "test_util.h"

static void test_init_and_symmetry(void **state)
{
    (void)state;
    tram_board b;
    tram_error err;
    tram_error_clear(&err);
    assert_int_equal(tram_board_init(&b, 9, 6, 25, TRAM_LENGTH_MM, &err), TRAM_OK);
    assert_int_equal(tram_board_corner_count(&b), 54);
    assert_int_equal(tram_board_init(&b, 9, 7, 25, TRAM_LENGTH_MM, &err), TRAM_EINPUT);
    assert_non_null(strstr(err.message, "both odd"));
    assert_non_null(strstr(err.message, "180-degree turn maps the board onto itself"));
    assert_int_equal(tram_board_init(&b, 8, 6, 25, TRAM_LENGTH_MM, &err), TRAM_EINPUT);
    assert_non_null(strstr(err.message, "both even"));
    assert_int_equal(tram_board_init(&b, 1, 6, 25, TRAM_LENGTH_MM, &err), TRAM_EINPUT);
    assert_int_equal(tram_board_init(&b, 9, 6, 0, TRAM_LENGTH_MM, &err), TRAM_EINPUT);
    assert_int_equal(tram_board_init(&b, 9, 6, NAN, TRAM_LENGTH_MM, &err), TRAM_EINPUT);
    assert_int_equal(tram_board_init(&b, 9, 6, 25, TRAM_LENGTH_UNSET, &err), TRAM_EINPUT);
}

static void test_corners(void **state)
{
    (void)state;
    tram_board b;
    tram_error err;
    assert_int_equal(tram_board_init(&b, 5, 4, 0.03, TRAM_LENGTH_M, &err), TRAM_OK);
    /* id = r * cols + c at (c s, r s, 0) */
    for (size_t id = 0; id < tram_board_corner_count(&b); id++) {
        double p[3];
        tram_board_corner(&b, id, p);
        assert_true(p[0] == (double)(id % 5) * 0.03);
        assert_true(p[1] == (double)(id / 5) * 0.03);
        assert_true(p[2] == 0.0);
    }
    double p[3];
    tram_board_corner(&b, 19, p); /* the last: c = 4, r = 3 */
    assert_true(fabs(p[0] - 0.12) < 1e-15 && fabs(p[1] - 0.09) < 1e-15);
}

static void test_round_trip(void **state)
{
    (void)state;
    tram_board b, back;
    tram_error err;
    tram_error_clear(&err);
    assert_int_equal(tram_board_init(&b, 7, 10, 0.1 + 0.2, TRAM_LENGTH_IN, &err), TRAM_OK);
    char *text = NULL;
    assert_int_equal(tram_board_to_json(&b, &text, &err), TRAM_OK);
    assert_non_null(strstr(text, "\"convention\""));
    assert_non_null(strstr(text, "black"));
    assert_int_equal(tram_board_read_buffer("b.json", text, strlen(text), &back, &err), TRAM_OK);
    assert_int_equal(back.cols, 7);
    assert_int_equal(back.rows, 10);
    assert_true(back.square == 0.1 + 0.2); /* %.17g round trip */
    assert_int_equal(back.unit, TRAM_LENGTH_IN);
    assert_int_equal(back.kind, TRAM_BOARD_CHESSBOARD);
    free(text);
    /* the minimal hand-written form (no convention object) */
    const char *min = "{\"format\": \"tram-board\", \"version\": 1, \"kind\": \"chessboard\",\n"
                      " \"cols\": 9, \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\"}\n";
    assert_int_equal(tram_board_read_buffer("m.json", min, strlen(min), &back, &err), TRAM_OK);
    assert_int_equal(back.cols * back.rows, 54);
}

static void refused(const char *text, long line, long col, const char *words)
{
    tram_board b;
    tram_error err;
    tram_error_clear(&err);
    assert_int_equal(tram_board_read_buffer("bad.json", text, strlen(text), &b, &err), TRAM_EINPUT);
    assert_string_equal(err.file, "bad.json");
    if (err.line != line || err.column != col || !strstr(err.message, words))
        fail_msg("%ld:%ld '%s': expected %ld:%ld and '%s'", err.line, err.column, err.message, line,
                 col, words);
}

#define HEAD "{\"format\": \"tram-board\", \"version\": 1, \"kind\": \"chessboard\",\n"

static void test_refusals(void **state)
{
    (void)state;
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\",\n \"colour\": 1}",
            3, 2, "unknown key \"colour\"");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": 25}", 1, 1, "missing key \"length_unit\"");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"cols\": 7, \"square\": 25, \"length_unit\": \"mm\"}",
            2, 24, "key \"cols\" given twice");
    refused(HEAD " \"cols\": \"9\", \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\"}", 2, 10,
            "\"cols\": expected a whole number");
    refused(HEAD " \"cols\": 9.5, \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\"}", 2, 10,
            "whole number");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": 1e999, \"length_unit\": \"mm\"}", 2, 34,
            "\"square\": number 1e999 is beyond double range");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": -1, \"length_unit\": \"mm\"}", 2, 34,
            "positive");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": 25, \"length_unit\": \"furlong\"}", 2, 53,
            "\"length_unit\": expected one of");
    refused(HEAD " \"cols\": 9, \"rows\": 7, \"square\": 25, \"length_unit\": \"mm\"}", 2, 10,
            "symmetric");
    refused("{\"format\": \"tram-bord\", \"version\": 1}", 1, 12, "\"format\": expected \"tram-board\"");
    refused("{\"format\": \"tram-board\", \"version\": 2, \"kind\": \"chessboard\", \"cols\": 9,"
            " \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\"}", 1, 37, "\"version\": expected 1");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\",\n"
                 " \"convention\": {\"point_id\": \"c * rows + r\"}}",
            3, 29, "convention.point_id: expected \"r * cols + c\"");
    refused(HEAD " \"cols\": 9, \"rows\": 6, \"square\": 25, \"length_unit\": \"mm\",\n"
                 " \"convention\": {\"point_id\": \"r * cols + c\"}}",
            3, 16, "convention: missing key \"corner_position\"");
    refused("[1, 2]", 1, 1, "expected a JSON object");
    refused(HEAD " \"cols\": 9,", 2, 12, "malformed JSON");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_init_and_symmetry),
        cmocka_unit_test(test_corners),
        cmocka_unit_test(test_round_trip),
        cmocka_unit_test(test_refusals),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
