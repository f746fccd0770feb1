/*
 * records_csv.c - the CSV form of record files (format v1).
 *
 * Grammar (docs/records.md): lines are separated by LF or CRLF.  A line
 * whose first non-blank character is '#' is a comment; a comment of the
 * form "# key: value" with key made of [a-z0-9-] is a directive.  The first
 * other non-blank line is the header; every later non-blank line is one
 * station with exactly as many comma-separated fields as the header.
 * Fields are trimmed of blanks; quoting is not supported.  Columns are
 * reported as the 1-based character position where the field starts.
 */
#include "io/records_csv_internal.h"
#include "io/records_schema_internal.h"
#include "io/text_internal.h"

#include <ctype.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct csv_field {
    char *text;
    long col;
} csv_field;

/* Split `line` (modified in place) at commas into at most `cap` fields. */
static int split_fields(char *line, csv_field *f, int cap)
{
    int n = 0;
    char *p = line;
    for (;;) {
        char *start = p;
        while (*p && *p != ',') p++;
        char end = *p;
        *p = '\0';
        char *s = start;
        while (*s == ' ' || *s == '\t') s++;
        char *e = s + strlen(s);
        while (e > s && (e[-1] == ' ' || e[-1] == '\t')) *--e = '\0';
        if (n < cap) {
            f[n].text = s;
            f[n].col = (long)(s - line) + 1;
        }
        n++;
        if (!end) break;
        p++;
    }
    return n;
}

static int count_commas(const char *s)
{
    int n = 0;
    for (; *s; s++)
        if (*s == ',') n++;
    return n;
}

/* Directive "key: value" after the '#'; 1 if it is one (key/value set). */
static int directive_split(char *text, char **key, char **value, long *col_off)
{
    char *p = text;
    while (*p == ' ' || *p == '\t') p++;
    char *k = p;
    while ((*p >= 'a' && *p <= 'z') || (*p >= '0' && *p <= '9') || *p == '-') p++;
    if (p == k || *p != ':') return 0;
    *p++ = '\0';
    while (*p == ' ' || *p == '\t') p++;
    char *e = p + strlen(p);
    while (e > p && (e[-1] == ' ' || e[-1] == '\t')) *--e = '\0';
    *key = k;
    *value = p;
    *col_off = (long)(k - text);
    return 1;
}

tram_status tram__records_read_csv(const char *name, const char *data, size_t len,
                                   const tram_read_options *opt, tram_records **out,
                                   tram_error *err)
{
    tram_status st = TRAM_OK;
    tram_records *r = tram__calloc(1, sizeof *r);
    char *line = NULL;
    csv_field *fields = NULL;
    char **names = NULL;
    long *name_cols = NULL, *name_lines = NULL;
    rec_schema schema;
    memset(&schema, 0, sizeof schema);
    rec_directives d;
    memset(&d, 0, sizeof d);
    d.euler[0] = d.euler[1] = TRAM_EULER_UNSET;
    size_t cap = 0;
    long header_line = 0;
    int nfields = 0;

    if (!r) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    snprintf(r->source, sizeof r->source, "%s", name);
    r->checksum = tram__fnv1a64(data, len);

    size_t pos = 0;
    long lineno = 0;
    while (pos < len) {
        size_t start = pos;
        while (pos < len && data[pos] != '\n') pos++;
        size_t end = pos;
        if (pos < len) pos++;
        lineno++;
        if (end > start && data[end - 1] == '\r') end--;
        size_t ll = end - start;
        if (memchr(data + start, '\0', ll)) {
            st = tram__fail(err, TRAM_EINPUT, name, lineno, 0,
                            "NUL byte in line: expected a text file");
            goto done;
        }
        char *nl = tram__realloc(line, ll + 1);
        if (!nl) {
            st = tram__fail(err, TRAM_ENOMEM, name, lineno, 0, "out of memory");
            goto done;
        }
        line = nl;
        memcpy(line, data + start, ll);
        line[ll] = '\0';
        char *p = line;
        while (*p == ' ' || *p == '\t') p++;
        if (*p == '\0') continue;
        if (*p == '#') {
            char *key, *value;
            long off;
            if (directive_split(p + 1, &key, &value, &off)) {
                long col = (long)(p + 1 - line) + off + 1;
                st = tram__directive_apply(&d, name, lineno, col, key, value, err);
                if (st != TRAM_OK) goto done;
            }
            continue;
        }
        if (!header_line) {
            header_line = lineno;
            nfields = count_commas(line) + 1;
            fields = tram__calloc((size_t)nfields, sizeof *fields);
            names = tram__calloc((size_t)nfields, sizeof *names);
            name_cols = tram__calloc((size_t)nfields, sizeof *name_cols);
            name_lines = tram__calloc((size_t)nfields, sizeof *name_lines);
            if (!fields || !names || !name_cols || !name_lines) {
                st = tram__fail(err, TRAM_ENOMEM, name, lineno, 0, "out of memory");
                goto done;
            }
            split_fields(line, fields, nfields);
            for (int i = 0; i < nfields; i++) {
                if (!fields[i].text[0]) {
                    st = tram__fail(err, TRAM_EINPUT, name, lineno, fields[i].col,
                                    "empty column name in the header");
                    goto done;
                }
                names[i] = fields[i].text;
                name_cols[i] = fields[i].col;
                name_lines[i] = lineno;
            }
            st = tram__schema_build(name, (const char *const *)names, name_lines, name_cols,
                                    nfields, &schema, err);
            if (st != TRAM_OK) goto done;
            /* names point into `line`, which the next line overwrites */
            for (int i = 0; i < nfields; i++) names[i] = NULL;
            continue;
        }
        int n = split_fields(line, fields, nfields);
        if (n != nfields) {
            st = tram__fail(err, TRAM_EINPUT, name, lineno, 0,
                            "%s row: %d fields, expected %d as in the header (line %ld)",
                            n < nfields ? "short" : "long", n, nfields, header_line);
            goto done;
        }
        if (r->count == cap) {
            size_t nc = cap ? cap * 2 : 64;
            tram_station *ns = tram__realloc(r->stations, nc * sizeof *ns);
            if (!ns) {
                st = tram__fail(err, TRAM_ENOMEM, name, lineno, 0, "out of memory");
                goto done;
            }
            r->stations = ns;
            cap = nc;
        }
        tram_station *s = &r->stations[r->count];
        memset(s, 0, sizeof *s);
        s->line = lineno;
        snprintf(s->id, sizeof s->id, "%zu", r->count + 1);
        for (int i = 0; i < nfields; i++) {
            const rec_column *c = &schema.cols[i];
            const char *txt = fields[i].text;
            if (c->kind == REC_COL_STATION) {
                if (!txt[0]) {
                    st = tram__fail(err, TRAM_EINPUT, name, lineno, fields[i].col,
                                    "empty station id: expected a name or number");
                    goto done;
                }
                if (strlen(txt) >= TRAM_STATION_ID_MAX) {
                    st = tram__fail(err, TRAM_EINPUT, name, lineno, fields[i].col,
                                    "station id longer than %d characters",
                                    TRAM_STATION_ID_MAX - 1);
                    goto done;
                }
                snprintf(s->id, sizeof s->id, "%s", txt);
                continue;
            }
            double v;
            char colname[24];
            if (c->kind == REC_COL_JOINT)
                snprintf(colname, sizeof colname, "joint_%d", c->slot + 1);
            else
                snprintf(colname, sizeof colname, "%s%s", c->block ? "sensor_" : "robot_",
                         tram__rep_slot_name(schema.rep[c->block], c->slot));
            if (tram__parse_double(txt, &v) != 0) {
                char shown[40];
                snprintf(shown, sizeof shown, "%s", txt);
                const char *why = "expected a number";
                char low[8] = {0};
                for (int k = 0; k < 7 && txt[k]; k++) low[k] = (char)tolower((unsigned char)txt[k]);
                if (strstr(low, "nan") || strstr(low, "inf"))
                    why = "NaN and Inf are not allowed: expected a finite number";
                else if (!txt[0])
                    why = "empty field: expected a number";
                st = tram__fail(err, TRAM_EINPUT, name, lineno, fields[i].col,
                                "column '%s': %s, found '%s'", colname, why, shown);
                goto done;
            }
            if (c->kind == REC_COL_JOINT) {
                s->joints[c->slot] = v;
                s->joint_col[c->slot] = (int)fields[i].col;
                continue;
            }
            s->raw[c->block][c->slot] = v;
            s->col[c->block][c->slot] = (int)fields[i].col;
        }
        r->count++;
    }
    if (!header_line) {
        st = tram__fail(err, TRAM_EINPUT, name, lineno, 0,
                        "no header row: expected a line of column names such as "
                        "station,robot_x,...,sensor_qz");
        goto done;
    }
    if (r->count == 0) {
        st = tram__fail(err, TRAM_EINPUT, name, header_line, 0,
                        "no stations: the file has a header but no data rows");
        goto done;
    }
    st = tram__check_unique_ids(r, err);
    if (st != TRAM_OK) goto done;
    st = tram__records_finish(r, &schema, &d, opt, header_line, err);

done:
    tram__free(line);
    tram__free(fields);
    tram__free(names);
    tram__free(name_cols);
    tram__free(name_lines);
    tram__schema_free(&schema);
    if (st != TRAM_OK) {
        tram_records_destroy(r);
        return st;
    }
    *out = r;
    return TRAM_OK;
}
