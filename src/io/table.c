/*
 * table.c - strict CSV tables for point files (see table_internal.h).
 * Lines: LF or CRLF; '#' comments; "# key: value" directives with keys of
 * [a-z0-9-]; a header; rows with exactly as many fields as the header.
 */
#include "io/table_internal.h"

#include <ctype.h>
#include <stdio.h>
#include <string.h>

#include "io/text_internal.h"

void tram__table_free(tram__table *t)
{
    if (!t) return;
    tram__free(t->names);
    tram__free(t->name_col);
    tram__free(t->cells);
    tram__free(t->cell_col);
    tram__free(t->row_line);
    tram__free(t->dir);
    tram__free(t->text);
    tram__free(t);
}

int tram__table_col(const tram__table *t, const char *name)
{
    for (size_t i = 0; i < t->ncols; i++)
        if (strcmp(t->names[i], name) == 0) return (int)i;
    return -1;
}

tram_status tram__table_number(const tram__table *t, size_t r, int c, double *v, tram_error *err)
{
    const char *s = t->cells[r * t->ncols + (size_t)c];
    if (tram__parse_double(s, v) == 0) return TRAM_OK;
    char low[8] = {0};
    for (int k = 0; k < 7 && s[k]; k++) low[k] = (char)tolower((unsigned char)s[k]);
    const char *why = strstr(low, "nan") || strstr(low, "inf")
                          ? "NaN and Inf are not allowed: expected a finite number"
                          : (!s[0] ? "empty field: expected a number" : "expected a number");
    return tram__fail(err, TRAM_EINPUT, t->source, t->row_line[r], t->cell_col[r * t->ncols + (size_t)c],
                      "column '%s': %s, found '%.32s'", t->names[c], why, s);
}

/* Trim blanks in place; returns the start. */
static char *trim(char *s, char **end_out)
{
    while (*s == ' ' || *s == '\t') s++;
    char *e = s + strlen(s);
    while (e > s && (e[-1] == ' ' || e[-1] == '\t' || e[-1] == '\r')) *--e = '\0';
    if (end_out) *end_out = e;
    return s;
}

/* A comment line s (from line, number lineno): a '# key: value' directive is
 * kept in t->dir; other comments are skipped. */
static tram_status table_directive(tram__table *t, const char *line, char *s, long lineno,
                                   size_t *cap_dir, const char *name, tram_error *err)
{
    char *k = s + 1;
    while (*k == ' ' || *k == '\t') k++;
    char *q = k;
    while ((*q >= 'a' && *q <= 'z') || (*q >= '0' && *q <= '9') || *q == '-') q++;
    if (q > k && *q == ':') {
        *q = '\0';
        char *v = trim(q + 1, NULL);
        if (strlen(k) >= sizeof t->dir->key || strlen(v) >= sizeof t->dir->value) {
            /* refused, not cut: a shortened value would be another value */
            return tram__fail(err, TRAM_EINPUT, name, lineno, (long)(k - line) + 1,
                              "directive '%.39s': %s longer than %zu characters", k,
                              strlen(k) >= sizeof t->dir->key ? "key" : "value",
                              (strlen(k) >= sizeof t->dir->key ? sizeof t->dir->key
                                                               : sizeof t->dir->value) - 1);
        }
        if (t->ndir == *cap_dir) {
            size_t nc = *cap_dir ? 2 * *cap_dir : 8;
            tram__directive *d = tram__realloc(t->dir, nc * sizeof *d);
            if (!d) return tram__fail(err, TRAM_ENOMEM, name, lineno, 0, "out of memory");
            t->dir = d;
            *cap_dir = nc;
        }
        tram__directive *d = &t->dir[t->ndir++];
        snprintf(d->key, sizeof d->key, "%s", k);
        snprintf(d->value, sizeof d->value, "%s", v);
        d->line = lineno;
        d->col = (long)(k - line) + 1;
    }
    return TRAM_OK;
}

/* A line of fields, split at commas: the header (the first such line) or a
 * data row with as many fields. */
static tram_status table_row(tram__table *t, char *line, long lineno, size_t *cap_rows,
                             const char *name, tram_error *err)
{
    size_t nf = 1;
    for (char *c = line; *c; c++) nf += *c == ',';
    if (!t->header_line) {
        t->header_line = lineno;
        t->ncols = nf;
        t->names = tram__calloc(nf, sizeof *t->names);
        t->name_col = tram__calloc(nf, sizeof *t->name_col);
        if (!t->names || !t->name_col) goto nomem;
    } else if (nf != t->ncols) {
        return tram__fail(err, TRAM_EINPUT, name, lineno, 0,
                          "%s row: %zu fields, expected %zu as in the header (line %ld)",
                          nf < t->ncols ? "short" : "long", nf, t->ncols, t->header_line);
    } else {
        if (t->nrows == *cap_rows) {
            size_t nc = *cap_rows ? 2 * *cap_rows : 64;
            char **cells = tram__realloc(t->cells, nc * t->ncols * sizeof *cells);
            if (!cells) goto nomem;
            t->cells = cells;
            long *cc = tram__realloc(t->cell_col, nc * t->ncols * sizeof *cc);
            if (!cc) goto nomem;
            t->cell_col = cc;
            long *rl = tram__realloc(t->row_line, nc * sizeof *rl);
            if (!rl) goto nomem;
            t->row_line = rl;
            *cap_rows = nc;
        }
        t->row_line[t->nrows] = lineno;
    }
    char *f = line;
    for (size_t i = 0; i < nf; i++) {
        char *c = strchr(f, ',');
        if (c) *c = '\0';
        char *v = trim(f, NULL);
        long col = (long)(v - line) + 1;
        if (t->header_line == lineno) {
            if (!*v)
                return tram__fail(err, TRAM_EINPUT, name, lineno, col, "empty column name in the header");
            t->names[i] = v;
            t->name_col[i] = col;
        } else {
            t->cells[t->nrows * t->ncols + i] = v;
            t->cell_col[t->nrows * t->ncols + i] = col;
        }
        f = c ? c + 1 : f + strlen(f);
    }
    if (t->header_line != lineno) t->nrows++;
    return TRAM_OK;
nomem:
    return tram__fail(err, TRAM_ENOMEM, name, lineno, 0, "out of memory");
}

/* After the last line (number lineno): a header was found and names no
 * column twice. */
static tram_status table_check_header(const tram__table *t, long lineno, const char *name,
                                      tram_error *err)
{
    if (!t->header_line)
        return tram__fail(err, TRAM_EINPUT, name, lineno, 0, "no header row: expected a line of column names");
    for (size_t i = 0; i < t->ncols; i++)
        for (size_t j = 0; j < i; j++)
            if (strcmp(t->names[i], t->names[j]) == 0)
                return tram__fail(err, TRAM_EINPUT, name, t->header_line, t->name_col[i],
                                  "column '%s' appears twice", t->names[i]);
    return TRAM_OK;
}

tram_status tram__table_parse(const char *name, const char *data, size_t len, tram__table **out,
                              tram_error *err)
{
    *out = NULL;
    /* a UTF-8 byte-order mark (spreadsheet exports) is not part of the text */
    if (len >= 3 && (unsigned char)data[0] == 0xEF && (unsigned char)data[1] == 0xBB &&
        (unsigned char)data[2] == 0xBF) {
        data += 3;
        len -= 3;
    }
    const char *nul = memchr(data, '\0', len);
    if (nul) {
        long line, col;
        tram__offset_pos(data, (size_t)(nul - data), &line, &col);
        return tram__fail(err, TRAM_EINPUT, name, line, col, "NUL byte in the file: expected text");
    }
    tram__table *t = tram__calloc(1, sizeof *t);
    if (!t) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    snprintf(t->source, sizeof t->source, "%s", name);
    t->text = tram__malloc(len + 1);
    if (!t->text) {
        tram__table_free(t);
        return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    }
    memcpy(t->text, data, len);
    t->text[len] = '\0';
    size_t cap_rows = 0, cap_dir = 0;
    long lineno = 0;
    tram_status st = TRAM_OK;
    char *p = t->text;
    while (*p || p == t->text) {
        char *nl = strchr(p, '\n');
        if (nl) *nl = '\0';
        lineno++;
        char *line = p;
        p = nl ? nl + 1 : p + strlen(p);
        char *s = trim(line, NULL);
        if (*s == '#')
            st = table_directive(t, line, s, lineno, &cap_dir, name, err);
        else if (*s)
            st = table_row(t, line, lineno, &cap_rows, name, err);
        if (st != TRAM_OK) goto fail;
        if (!nl) break;
    }
    st = table_check_header(t, lineno, name, err);
    if (st != TRAM_OK) goto fail;
    *out = t;
    return TRAM_OK;
fail:
    tram__table_free(t);
    return st;
}
