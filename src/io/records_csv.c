/*
 * records_csv.c - the CSV form of record files (format v1).
 *
 * Grammar (docs/records.md): lines are separated by LF or CRLF.  A line
 * whose first non-blank character is '#' is a comment; a comment of the
 * form "# key: value" with key made of [a-z0-9-] is a directive, and
 * directives come before the header.  The first other non-blank line is
 * the header; every later non-blank line is one station with exactly as
 * many comma-separated fields as the header.  Fields are trimmed of
 * blanks; quoting is not supported.  Columns are reported as the 1-based
 * character position where the field starts.  Numbers are decimal
 * (text.c: strtod's rounding, no hexadecimal, no inf or nan).
 *
 * Speed (docs/performance.md): the rows are read in place from the file
 * buffer (no copy of each line), the stations are allocated once from the
 * number of lines, and any message text is built only when a field fails.
 * A row is first read in one pass (fast_row: each number converted from
 * where it starts, then the comma looked for where the number ends, no
 * splitting beforehand); a row that pass does not take in full is split
 * into fields and read again by read_row, which names what is wrong.
 */
#include "io/records_csv_internal.h"
#include "io/number_shim_internal.h"
#include "io/records_schema_internal.h"
#include "io/records_store_internal.h"
#include "io/text_internal.h"

#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* A field: [s, e) in the file buffer, and its 1-based column. */
typedef struct csv_span {
    const char *s, *e;
    long col;
} csv_span;

/* The reading state of one file. */
typedef struct csv_reader {
    const char *name;
    tram_records *r;
    size_t cap;           /* stations allocated                        */
    size_t id_used;       /* bytes of the id pool used                 */
    rec_schema schema;
    rec_directives d;
    long header_line;     /* 0 until the header is read                */
    long last_row_line;   /* line of the last data row (0: none yet)   */
    int nfields;
    csv_span *fields;     /* nfields spans                              */
    tram_error *err;
    long look_line;       /* first comment that looks like a directive  */
    char look_key[40];
    const char *look_near;
} csv_reader;

static int is_blank(char c) { return c == ' ' || c == '\t'; }

/* Split the line [p, e) at commas into at most `cap` trimmed spans; the
 * number of fields (which may exceed cap).  line: the line's start, for
 * columns. */
static int split_spans(const char *line, const char *p, const char *e, csv_span *f, int cap)
{
    int n = 0;
    for (;;) {
        const char *start = p;
        const char *comma = memchr(p, ',', (size_t)(e - p));
        const char *end = comma ? comma : e;
        const char *s = start, *t = end;
        while (s < t && is_blank(*s)) s++;
        while (t > s && is_blank(t[-1])) t--;
        if (n < cap) {
            f[n].s = s;
            f[n].e = t;
            f[n].col = (long)(s - line) + 1;
        }
        n++;
        if (!comma) break;
        p = comma + 1;
    }
    return n;
}

/* A NUL-terminated copy of [s, e), or NULL when out of memory. */
static char *copy_span(const char *s, const char *e)
{
    size_t n = (size_t)(e - s);
    char *c = tram__malloc(n + 1);
    if (!c) return NULL;
    memcpy(c, s, n);
    c[n] = '\0';
    return c;
}

/* Directive "key: value" after the '#'; 1 if it is one (key/value set). */
static int directive_split(char *text, char **key, char **value, long *col_off)
{
    char *p = text;
    while (is_blank(*p)) p++;
    char *k = p;
    while ((*p >= 'a' && *p <= 'z') || (*p >= '0' && *p <= '9') || *p == '-') p++;
    if (p == k || *p != ':') return 0;
    *p++ = '\0';
    while (is_blank(*p)) p++;
    char *e = p + strlen(p);
    while (e > p && is_blank(e[-1])) *--e = '\0';
    *key = k;
    *value = p;
    *col_off = (long)(k - text);
    return 1;
}

/* A comment "# Word_like-this: ..." that is no directive but looks like a
 * misspelt one (capitals, '_', a typo): it stays a comment, with a warning
 * that names the directive meant.  col: the column of text[0]. */
static void warn_lookalike(csv_reader *rd, const char *text, long col, long lineno)
{
    const char *p = text;
    while (is_blank(*p)) p++;
    const char *k = p;
    while ((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || (*p >= '0' && *p <= '9') ||
           *p == '-' || *p == '_')
        p++;
    size_t n = (size_t)(p - k);
    while (is_blank(*p)) p++;
    if (n == 0 || n >= 40 || *p != ':') return;
    char key[40];
    memcpy(key, k, n);
    key[n] = '\0';
    const char *near = tram__directive_nearest(key);
    if (!near) return;
    if (!rd->look_line) {
        rd->look_line = lineno;
        memcpy(rd->look_key, key, n + 1);
        rd->look_near = near;
    }
    tram__records_warn(rd->r, lineno, col + (long)(k - text),
                       "comment '# %s:' looks like the directive '%s' but is not one (directives "
                       "are lower-case words with '-', followed by ':'); it is ignored: write "
                       "'# %s: ...' to apply it",
                       key, near, near);
}

/* A comment line; a directive in it is applied.  hash points at the '#'. */
static tram_status read_comment(csv_reader *rd, const char *line, const char *hash,
                                const char *e, long lineno)
{
    char *text = copy_span(hash + 1, e);
    if (!text) return tram__fail(rd->err, TRAM_ENOMEM, rd->name, lineno, 0, "out of memory");
    char *key, *value;
    long off;
    tram_status st = TRAM_OK;
    if (!directive_split(text, &key, &value, &off)) {
        warn_lookalike(rd, text, (long)(hash + 1 - line) + 1, lineno);
    } else {
        long col = (long)(hash + 1 - line) + off + 1;
        if (rd->header_line)
            /* a directive below the header would silently apply to rows
             * read before it */
            st = tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, col,
                            "directive '%s' after the header (line %ld): directives must come "
                            "before the header row",
                            key, rd->header_line);
        else
            st = tram__directive_apply(&rd->d, rd->name, lineno, col, key, value, rd->err);
    }
    tram__free(text);
    return st;
}

/* Room for every data row the file can hold (at most one a line), and
 * for their ids: within the rest of the text, or generated row numbers. */
static tram_status reserve_stations(csv_reader *rd, const char *from, const char *end,
                                    long lineno)
{
    size_t lines = 1;
    for (const char *p = from; (p = memchr(p, '\n', (size_t)(end - p))) != NULL; p++) lines++;
    rec_layout l = {{rd->schema.nslots[0] * rd->schema.has_block[0],
                     rd->schema.nslots[1] * rd->schema.has_block[1]},
                    rd->schema.n_joints, 1};
    size_t ids = rd->schema.station_col >= 0 ? (size_t)(end - from) + lines : 21 * lines;
    rd->cap = lines;
    return tram__records_reserve(rd->r, lines, &l, ids, rd->name, lineno, rd->err);
}

/* The header row [p, e): column names, then the schema. */
static tram_status read_header(csv_reader *rd, const char *line, const char *e, long lineno)
{
    tram_status st = TRAM_OK;
    int n = split_spans(line, line, e, NULL, 0);
    char *copy = copy_span(line, e);
    char **names = tram__calloc((size_t)n, sizeof *names);
    long *cols = tram__calloc((size_t)n, sizeof *cols), *lines = tram__calloc((size_t)n, sizeof *lines);
    rd->fields = tram__calloc((size_t)n, sizeof *rd->fields);
    if (!copy || !names || !cols || !lines || !rd->fields) {
        st = tram__fail(rd->err, TRAM_ENOMEM, rd->name, lineno, 0, "out of memory");
        goto out;
    }
    rd->nfields = n;
    rd->header_line = lineno;
    split_spans(line, line, e, rd->fields, n);
    for (int i = 0; i < n; i++) {
        if (rd->fields[i].s == rd->fields[i].e) {
            st = tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, rd->fields[i].col,
                            "empty column name in the header");
            goto out;
        }
        /* the names, NUL-terminated inside the copy of the line */
        char *nm = copy + (rd->fields[i].s - line);
        nm[rd->fields[i].e - rd->fields[i].s] = '\0';
        names[i] = nm;
        cols[i] = rd->fields[i].col;
        lines[i] = lineno;
    }
    st = tram__schema_build(rd->name, (const char *const *)names, lines, cols, n, &rd->schema,
                            rd->err);
out:
    tram__free(copy);
    tram__free(names);
    tram__free(cols);
    tram__free(lines);
    return st;
}

/* The message for a field that is not a number (the cold path). */
static tram_status number_error(const csv_reader *rd, const rec_column *c, const csv_span *f,
                                long lineno)
{
    char colname[24];
    if (c->kind == REC_COL_JOINT)
        snprintf(colname, sizeof colname, "joint_%d", c->slot + 1);
    else
        snprintf(colname, sizeof colname, "%s%s", c->block ? "sensor_" : "robot_",
                 tram__rep_slot_name(rd->schema.rep[c->block], c->slot));
    size_t len = (size_t)(f->e - f->s);
    char shown[40];
    snprintf(shown, sizeof shown, "%.*s", (int)(len < 39 ? len : 39), f->s);
    const char *why = "expected a number";
    char low[8] = {0};
    for (size_t k = 0; k < 7 && k < len; k++) low[k] = (char)tolower((unsigned char)f->s[k]);
    const char *digits = low[0] == '+' || low[0] == '-' ? low + 1 : low;
    if (strstr(low, "nan") || strstr(low, "inf"))
        why = "NaN and Inf are not allowed: expected a finite number";
    else if (!len)
        why = "empty field: expected a number";
    else if (digits[0] == '0' && digits[1] == 'x')
        why = "hexadecimal numbers are not allowed: expected a decimal number";
    return tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, f->col,
                      "column '%s': %s, found '%s'", colname, why, shown);
}

/* The station id field into the id pool, for s. */
static tram_status read_id(csv_reader *rd, const csv_span *f, long lineno, tram_station *s)
{
    size_t len = (size_t)(f->e - f->s);
    if (!len)
        return tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, f->col,
                          "empty station id: expected a name or number");
    if (len >= TRAM_STATION_ID_MAX)
        return tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, f->col,
                          "station id longer than %d characters", TRAM_STATION_ID_MAX - 1);
    s->id = tram__records_put_id(rd->r, &rd->id_used, f->s, len);
    return TRAM_OK;
}

/* The station number i + 1 as the id of a file without a station column. */
static void number_id(csv_reader *rd, size_t i, tram_station *s)
{
    char num[24], *p = num + sizeof num;
    size_t v = i + 1;
    do *--p = (char)('0' + v % 10);
    while ((v /= 10) != 0);
    s->id = tram__records_put_id(rd->r, &rd->id_used, p, (size_t)(num + sizeof num - p));
}

/* One data row [line, e) read in a single pass, the common case: each
 * number converted from where it starts to where the number ends, then
 * blanks and the comma (or the line's end after the last field).  0 when
 * the row is read into station r->count; -1, with nothing kept, when
 * anything is out of the ordinary (a field that is no plain number, an
 * empty or long id, a field too many or too few): read_row then splits
 * the row and names the fault exactly as always.  The numbers are those
 * of tram__parse_number: the same conversion of the same characters. */
static int fast_row(csv_reader *rd, const char *line, const char *e, long lineno)
{
    tram_records *r = rd->r;
    size_t i = r->count, used = rd->id_used;
    tram_station *s = &r->stations[i];
    double *raw = r->raw ? r->raw + i * r->raw_stride : NULL; /* none for joint-only rows */
    int *rot_col = r->rot_col ? r->rot_col + i * TRAM_BLOCK_COUNT : NULL;
    const char *p = line;
    const int last = rd->nfields - 1;
    for (int k = 0; k <= last; k++) {
        const rec_column *c = &rd->schema.cols[k];
        while (p < e && is_blank(*p)) p++;
        const char *f = p, *q;
        if (c->kind == REC_COL_STATION) {
            q = p < e ? memchr(p, ',', (size_t)(e - p)) : NULL;
            if (!q) q = e;
            const char *t = q;
            while (t > f && is_blank(t[-1])) t--;
            if (t == f || t - f >= TRAM_STATION_ID_MAX) return -1;
            s->id = tram__records_put_id(r, &used, f, (size_t)(t - f));
        } else {
            if (p < e && *p == '+') {
                p++;
                if (p < e && (*p == '+' || *p == '-')) return -1;
            }
            if (p == e || !((*p >= '0' && *p <= '9') || *p == '-' || *p == '.')) return -1;
            double v;
            q = tram__number_convert_prefix(p, e, &v);
            if (!q || !isfinite(v)) return -1;
            while (q < e && is_blank(*q)) q++;
            if (c->kind == REC_COL_JOINT) {
                r->joints[i * r->n_joints + (size_t)c->slot] = v;
                r->joint_col[i * r->n_joints + (size_t)c->slot] = (int)(f - line) + 1;
            } else {
                raw[r->raw_off[c->block] + (size_t)c->slot] = v;
                if (c->slot == 3 && rot_col) rot_col[c->block] = (int)(f - line) + 1;
            }
        }
        if (k == last) {
            if (q != e) return -1;
        } else {
            if (q == e || *q != ',') return -1;
            p = q + 1;
        }
    }
    /* the poses of the blocks present are computed for every station
     * (tram__records_finish); the others stay zero as in read_row */
    if (!rd->schema.has_block[TRAM_BLOCK_ROBOT]) memset(&s->T_base_flange, 0, sizeof s->T_base_flange);
    if (!rd->schema.has_block[TRAM_BLOCK_SENSOR])
        memset(&s->T_sensor_target, 0, sizeof s->T_sensor_target);
    rd->id_used = used;
    if (rd->schema.station_col < 0) number_id(rd, i, s);
    s->line = lineno;
    r->count++;
    rd->last_row_line = lineno;
    return 0;
}

/* One data row [p, e): a new station. */
static tram_status read_row(csv_reader *rd, const char *line, const char *e, long lineno)
{
    int n = split_spans(line, line, e, rd->fields, rd->nfields);
    if (n != rd->nfields)
        return tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, 0,
                          "%s row: %d fields, expected %d as in the header (line %ld)",
                          n < rd->nfields ? "short" : "long", n, rd->nfields, rd->header_line);
    tram_records *r = rd->r;
    size_t i = r->count;
    tram_station *s = &r->stations[i];
    memset(s, 0, sizeof *s);
    s->line = lineno;
    if (rd->schema.station_col < 0) number_id(rd, i, s);
    double *raw = r->raw ? r->raw + i * r->raw_stride : NULL; /* none for joint-only rows */
    int *rot_col = r->rot_col ? r->rot_col + i * TRAM_BLOCK_COUNT : NULL;
    for (int k = 0; k < n; k++) {
        const rec_column *c = &rd->schema.cols[k];
        const csv_span *f = &rd->fields[k];
        if (c->kind == REC_COL_STATION) {
            tram_status st = read_id(rd, f, lineno, s);
            if (st != TRAM_OK) return st;
            continue;
        }
        double v;
        if (f->s == f->e || tram__parse_number(f->s, f->e, &v) != 0)
            return number_error(rd, c, f, lineno);
        if (c->kind == REC_COL_JOINT) {
            r->joints[i * r->n_joints + (size_t)c->slot] = v;
            r->joint_col[i * r->n_joints + (size_t)c->slot] = (int)f->col;
        } else {
            raw[r->raw_off[c->block] + (size_t)c->slot] = v;
            if (c->slot == 3 && rot_col) rot_col[c->block] = (int)f->col;
        }
    }
    r->count++;
    rd->last_row_line = lineno;
    return TRAM_OK;
}

/* One line [p, e) (without its LF or CRLF). */
static tram_status read_line(csv_reader *rd, const char *p, const char *e, const char *data_end,
                             long lineno)
{
    /* per line, while the line is in the cache (a pass of its own over a
     * large file runs at the memory's speed) */
    size_t n = e > p ? (size_t)(e - p) : 0;
    if (n && memchr(p, '\0', n))
        return tram__fail(rd->err, TRAM_EINPUT, rd->name, lineno, 0,
                          "NUL byte in line: expected a text file");
    const char *q = p;
    while (q < e && is_blank(*q)) q++;
    if (q == e) return TRAM_OK;
    if (*q == '#') return read_comment(rd, p, q, e, lineno);
    if (!rd->header_line) {
        tram_status st = read_header(rd, p, e, lineno);
        if (st == TRAM_OK) st = reserve_stations(rd, e, data_end, lineno);
        return st;
    }
    if (fast_row(rd, p, e, lineno) == 0) return TRAM_OK;
    return read_row(rd, p, e, lineno);
}

/* Every line of the buffer; *lines: the number of lines read. */
static tram_status read_lines(csv_reader *rd, const char *data, size_t len, long *lines)
{
    const char *p = data, *end = data + len;
    long lineno = 0;
    while (p < end) {
        const char *nl = memchr(p, '\n', (size_t)(end - p));
        const char *e = nl ? nl : end;
        lineno++;
        const char *le = e > p && e[-1] == '\r' ? e - 1 : e;
        tram_status st = read_line(rd, p, le, end, lineno);
        if (st != TRAM_OK) return st;
        p = nl ? nl + 1 : end;
    }
    *lines = lineno;
    return TRAM_OK;
}

tram_status tram__records_read_csv(const char *name, const char *data, size_t len,
                                   const tram_read_options *opt, tram_records **out,
                                   tram_error *err)
{
    csv_reader rd;
    memset(&rd, 0, sizeof rd);
    rd.name = name;
    rd.err = err;
    rd.d.euler[0] = rd.d.euler[1] = TRAM_EULER_UNSET;
    rd.r = tram__calloc(1, sizeof *rd.r);
    if (!rd.r) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    tram_records *r = rd.r;
    snprintf(r->source, sizeof r->source, "%s", name);
    tram__checksum_job sum;
    tram__checksum_start(&sum, data, len);

    long lineno = 0;
    tram_status st = read_lines(&rd, data, len, &lineno);
    r->checksum = tram__checksum_finish(&sum);
    if (st == TRAM_OK && !rd.header_line)
        st = tram__fail(err, TRAM_EINPUT, name, lineno, 0,
                        "no header row: expected a line of column names such as "
                        "station,robot_x,...,sensor_qz");
    if (st == TRAM_OK && r->count == 0)
        st = tram__fail(err, TRAM_EINPUT, name, rd.header_line, 0,
                        "no stations: the file has a header but no data rows");
    /* The rows reserved for comment lines are not given back: a shrinking
     * realloc that fails would be a success that the allocation test
     * (tests/test_alloc.c) cannot tell from a lost error. */
    if (st == TRAM_OK) st = tram__records_fit_ids(r, rd.id_used, name, err);
    if (st == TRAM_OK) st = tram__check_unique_ids(r, err);
    if (st == TRAM_OK) st = tram__records_finish(r, &rd.schema, &rd.d, opt, rd.header_line, err);

    tram__free(rd.fields);
    tram__schema_free(&rd.schema);
    if (st == TRAM_EINPUT && rd.look_line) {
        /* the misspelt directive is the likely cause; its warning would
         * be lost with the record set */
        size_t ml = strlen(err->message);
        snprintf(err->message + ml, sizeof err->message - ml,
                 " (note: line %ld has '# %s:', which is not a directive; did you mean '# %s:'?)",
                 rd.look_line, rd.look_key, rd.look_near);
    }
    if (st != TRAM_OK) {
        tram_records_destroy(r);
        return st;
    }
    *out = r;
    return TRAM_OK;
}
