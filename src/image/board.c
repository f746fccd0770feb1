/*
 * board.c - printed chessboards: checking their numbers, the board file
 * (JSON, format "tram-board", version 1; docs/images.md) and the corner
 * positions of the board convention of tram/image.h.
 *
 * The board file:
 *   {"format": "tram-board", "version": 1, "kind": "chessboard",
 *    "cols": 9, "rows": 6, "square": 25, "length_unit": "mm",
 *    "convention": {...}, "comment": "..."}
 * "convention" (written by tram_board_to_json) states the convention in
 * words; a reader that finds it checks that it is the convention this
 * version knows, so a file edited to mean another one is refused rather
 * than read under the wrong rule.  The reader is strict: unknown,
 * missing and duplicate keys, wrong types and non-finite numbers are
 * errors naming file:line:column, located by the io layer's scan of the
 * text (src/io/json_pos.c), which also refuses duplicate keys.
 *
 * Symmetry: the board has (cols + 1) x (rows + 1) squares and square (i, j)
 * is black when i + j is even.  A 180-degree turn maps square (i, j) onto
 * (cols - i, rows - j), whose colour parity differs by cols + rows: when
 * cols + rows is even the turned board looks the same, and the corner
 * order cannot be told from the image.  Such boards are refused.
 */
#include "tram/image.h"
#include "core/tram_internal.h"
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/text_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#define BOARD_MAX_SIDE 1000 /* inner corners per side */

/* The convention, as written into every board file. */
static const char *const convention[][2] = {
    {"corner_position", "inner corner (c, r), c = 0 .. cols-1 and r = 0 .. rows-1, is at "
                        "(c * square, r * square, 0) in the target frame, in length_unit"},
    {"point_id", "r * cols + c"},
    {"black_square", "the square that touches corner 0 on its -x,-y side is black"},
    {"z_axis", "z = x cross y, into the board (away from a camera that faces the printed side)"},
};
#define NCONV (sizeof convention / sizeof convention[0])

/* Why the numbers make no board, or NULL when they do. */
static const char *board_problem(int cols, int rows, double square, tram_length_unit unit, char *buf,
                                 size_t size)
{
    if (cols < 2 || rows < 2 || cols > BOARD_MAX_SIDE || rows > BOARD_MAX_SIDE) {
        snprintf(buf, size, "%dx%d inner corners: expected 2 to %d corners per side", cols, rows,
                 BOARD_MAX_SIDE);
        return buf;
    }
    if ((cols + rows) % 2 == 0) {
        snprintf(buf, size,
                 "a %dx%d board is symmetric: cols and rows are both %s, so a 180-degree turn "
                 "maps the board onto itself and the corner order is ambiguous; make one odd "
                 "and the other even (e.g. %dx%d)",
                 cols, rows, cols % 2 ? "odd" : "even", cols, rows + 1);
        return buf;
    }
    if (!(square > 0) || !isfinite(square)) {
        snprintf(buf, size, "square size %g: expected a positive finite length", square);
        return buf;
    }
    if (unit == TRAM_LENGTH_UNSET || tram_unit_length_in_m(unit) == 0) {
        snprintf(buf, size, "no length unit for the square size: expected mm, cm, m or in");
        return buf;
    }
    return NULL;
}

tram_status tram_board_init(tram_board *b, int cols, int rows, double square,
                            tram_length_unit unit, tram_error *err)
{
    char why[400];
    if (board_problem(cols, rows, square, unit, why, sizeof why))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "%s", why);
    b->kind = TRAM_BOARD_CHESSBOARD;
    b->cols = cols;
    b->rows = rows;
    b->square = square;
    b->unit = unit;
    return TRAM_OK;
}

size_t tram_board_corner_count(const tram_board *b)
{
    if (!b || b->cols <= 0 || b->rows <= 0) return 0;
    return (size_t)b->cols * (size_t)b->rows;
}

void tram_board_corner(const tram_board *b, size_t id, double xyz[3])
{
    size_t cols = b->cols > 0 ? (size_t)b->cols : 1;
    xyz[0] = (double)(id % cols) * b->square;
    xyz[1] = (double)(id / cols) * b->square;
    xyz[2] = 0.0;
}

tram_status tram_board_to_json(const tram_board *b, char **text, tram_error *err)
{
    *text = NULL;
    char why[400];
    if (board_problem(b->cols, b->rows, b->square, b->unit, why, sizeof why))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "%s", why);
    tram__jb jb = {0};
    cJSON *root = cJSON_CreateObject();
    if (!root) jb.failed = 1;
    tram__jb_str(&jb, root, "format", "tram-board");
    tram__jb_num(&jb, root, "version", 1);
    tram__jb_str(&jb, root, "kind", "chessboard");
    tram__jb_num(&jb, root, "cols", b->cols);
    tram__jb_num(&jb, root, "rows", b->rows);
    tram__jb_num(&jb, root, "square", b->square);
    tram__jb_str(&jb, root, "length_unit", tram_unit_length_name(b->unit));
    cJSON *conv = tram__jb_obj(&jb, root, "convention");
    for (size_t i = 0; i < NCONV; i++) tram__jb_str(&jb, conv, convention[i][0], convention[i][1]);
    return tram__jb_finish(&jb, root, 1, 1, text, err);
}

/* ---- reading --------------------------------------------------------- */

typedef struct reader {
    const char *name;
    tram__json_pos *pos; /* where each member is (src/io/json_pos.c) */
    tram_error *err;
} reader;

/* Fail at the value (or the key, key != 0) of path ("cols",
 * "convention.point_id"). */
#define fail_at(r, path, key, ...) \
    tram__json_pos_fail((r)->pos, (r)->name, (r)->err, path, key, __VA_ARGS__)

static const char *const top_keys[] = {"format", "version", "kind", "cols", "rows", "square",
                                       "length_unit", "convention", "comment"};
#define NTOP (sizeof top_keys / sizeof top_keys[0])

static tram_status check_convention(reader *r, const cJSON *conv)
{
    if (!cJSON_IsObject(conv)) return fail_at(r, "convention", 0, "\"convention\": expected an object of texts");
    const cJSON *c;
    int seen[NCONV] = {0};
    cJSON_ArrayForEach(c, conv)
    {
        char path[160];
        snprintf(path, sizeof path, "convention.%s", c->string);
        size_t k = 0;
        while (k < NCONV && strcmp(c->string, convention[k][0]) != 0) k++;
        if (k == NCONV)
            return fail_at(r, path, 1,
                           "convention: unknown key \"%s\" (known: corner_position, point_id, "
                           "black_square, z_axis)",
                           c->string);
        seen[k] = 1;
        if (!cJSON_IsString(c) || strcmp(c->valuestring, convention[k][1]) != 0)
            return fail_at(r, path, 0,
                           "convention.%s: expected \"%s\" (version 1 boards have this one "
                           "convention; remove the object or restore its text)",
                           c->string, convention[k][1]);
    }
    for (size_t k = 0; k < NCONV; k++)
        if (!seen[k]) return fail_at(r, "convention", 0, "convention: missing key \"%s\"", convention[k][0]);
    return TRAM_OK;
}

static tram_status integer_of(reader *r, const cJSON *v, int *out)
{
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble) || v->valuedouble != floor(v->valuedouble) ||
        fabs(v->valuedouble) > 1e6)
        return fail_at(r, v->string, 0, "\"%s\": expected a whole number of inner corners", v->string);
    *out = (int)v->valuedouble;
    return TRAM_OK;
}

static tram_status read_members(reader *r, const cJSON *root, tram_board *out)
{
    const cJSON *it[NTOP] = {0};
    const cJSON *c;
    cJSON_ArrayForEach(c, root) /* duplicates were refused by the scan */
    {
        size_t k = 0;
        while (k < NTOP && strcmp(c->string, top_keys[k]) != 0) k++;
        if (k == NTOP)
            return fail_at(r, c->string, 1,
                           "unknown key \"%s\" (a board file has format, version, kind, cols, "
                           "rows, square, length_unit, convention, comment)",
                           c->string);
        it[k] = c;
    }
    /* what the file is comes first, then what it lacks */
    if (it[0] && (!cJSON_IsString(it[0]) || strcmp(it[0]->valuestring, "tram-board") != 0))
        return fail_at(r, "format", 0, "\"format\": expected \"tram-board\"");
    if (it[1] && (!cJSON_IsNumber(it[1]) || it[1]->valuedouble != 1.0))
        return fail_at(r, "version", 0, "\"version\": expected 1 (this tram, %s, reads version 1)",
                       TRAM_VERSION_STRING);
    static const char *const required[] = {"format", "version", "kind", "cols", "rows", "square",
                                           "length_unit"};
    for (size_t k = 0; k < sizeof required / sizeof required[0]; k++)
        if (!it[k])
            return tram__fail(r->err, TRAM_EINPUT, r->name, 1, 1, "missing key \"%s\"", required[k]);
    if (!cJSON_IsString(it[2]) || strcmp(it[2]->valuestring, "chessboard") != 0)
        return fail_at(r, "kind", 0, "\"kind\": expected \"chessboard\"");
    int cols, rows;
    tram_status st = integer_of(r, it[3], &cols);
    if (st == TRAM_OK) st = integer_of(r, it[4], &rows);
    if (st != TRAM_OK) return st;
    if (!cJSON_IsNumber(it[5]) || !isfinite(it[5]->valuedouble) || !(it[5]->valuedouble > 0))
        return fail_at(r, "square", 0, "\"square\": expected a positive finite number");
    tram_length_unit u = cJSON_IsString(it[6]) ? tram_unit_length_parse(it[6]->valuestring)
                                               : TRAM_LENGTH_UNSET;
    if (u == TRAM_LENGTH_UNSET)
        return fail_at(r, "length_unit", 0, "\"length_unit\": expected one of \"mm\", \"cm\", \"m\", \"in\"");
    if (it[7] && (st = check_convention(r, it[7])) != TRAM_OK) return st;
    if (it[8] && !cJSON_IsString(it[8])) return fail_at(r, "comment", 0, "\"comment\": expected a string");
    char why[400];
    if (board_problem(cols, rows, it[5]->valuedouble, u, why, sizeof why))
        return fail_at(r, "cols", 0, "%s", why);
    return tram_board_init(out, cols, rows, it[5]->valuedouble, u, r->err);
}

tram_status tram_board_read_buffer(const char *name, const char *data, size_t len, tram_board *out,
                                   tram_error *err)
{
    if (!name) name = "<board>";
    memset(out, 0, sizeof *out);
    cJSON *root;
    tram_status st = tram__json_parse(name, data, len, "board file", &root, err);
    if (st != TRAM_OK) return st;
    if (!cJSON_IsObject(root)) {
        cJSON_Delete(root);
        long line, col;
        size_t at = 0;
        while (at < len && (data[at] == ' ' || data[at] == '\t' || data[at] == '\r' || data[at] == '\n')) at++;
        tram__offset_pos(data, at, &line, &col);
        return tram__fail(err, TRAM_EINPUT, name, line, col, "expected a JSON object (a tram-board file)");
    }
    reader r = {name, NULL, err};
    st = tram__json_pos_scan(name, data, len, &r.pos, err);
    if (st == TRAM_OK) st = read_members(&r, root, out);
    tram__json_pos_free(r.pos);
    cJSON_Delete(root);
    if (st != TRAM_OK) memset(out, 0, sizeof *out);
    return st;
}

tram_status tram_board_read_file(const char *path, tram_board *out, tram_error *err)
{
    char *data = NULL;
    size_t len = 0;
    memset(out, 0, sizeof *out);
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_board_read_buffer(path, data, len, out, err);
    tram__free(data);
    return st;
}
