/*
 * json_pos.c - positions of the members of a JSON document (RFC 8259
 * grammar), by a scan of text that tram__json_parse has already accepted
 * (json_check.c refused duplicate keys, out-of-range numbers and syntax
 * errors with their positions; see json_pos_internal.h).  The scan only has to find
 * where values start and end, so it skips over strings (with their
 * escapes), numbers and literals without converting them.
 */
#include "io/json_pos_internal.h"

#include <cjson/cJSON.h>

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#define POS_MAX_DEPTH 64

typedef struct scan {
    const char *name, *s;
    size_t len, i;
    tram__json_pos *p;
    tram_error *err;
} scan;

void tram__json_pos_free(tram__json_pos *p)
{
    if (!p) return;
    tram__free(p->item);
    tram__free(p);
}

static void blanks(scan *c)
{
    while (c->i < c->len && (c->s[c->i] == ' ' || c->s[c->i] == '\t' || c->s[c->i] == '\n' ||
                             c->s[c->i] == '\r'))
        c->i++;
}

/* Skip a string starting at its quote; its raw text is [*b, *e). */
static void string(scan *c, size_t *b, size_t *e)
{
    c->i++;
    *b = c->i;
    while (c->i < c->len && c->s[c->i] != '"') c->i += c->s[c->i] == '\\' ? 2 : 1;
    *e = c->i < c->len ? c->i : c->len;
    c->i = *e + 1;
}

static tram_status add(scan *c, const char *path, size_t key_off, size_t val_off)
{
    tram__json_pos *p = c->p;
    if (p->n == p->cap) {
        size_t nc = p->cap ? 2 * p->cap : 32;
        tram__json_item *it = tram__realloc(p->item, nc * sizeof *it);
        if (!it) return tram__fail(c->err, TRAM_ENOMEM, c->name, 0, 0, "out of memory");
        p->item = it;
        p->cap = nc;
    }
    tram__json_item *it = &p->item[p->n++];
    snprintf(it->path, sizeof it->path, "%s", path);
    if (strlen(path) >= sizeof it->path) it->path[0] = '\0';
    it->key_off = key_off;
    it->val_off = val_off;
    return TRAM_OK;
}

static tram_status value(scan *c, const char *path, int depth);

static tram_status object(scan *c, const char *path, int depth)
{
    c->i++;
    blanks(c);
    if (c->i < c->len && c->s[c->i] == '}') {
        c->i++;
        return TRAM_OK;
    }
    while (c->i < c->len) {
        size_t kb, ke, key_off = c->i;
        string(c, &kb, &ke);
        char child[160];
        int klen = (int)(ke - kb);
        snprintf(child, sizeof child, "%s%s%.*s", path, *path ? "." : "", klen, c->s + kb);
        blanks(c);
        c->i++; /* ':' */
        blanks(c);
        tram_status st = add(c, child, key_off, c->i);
        if (st == TRAM_OK) st = value(c, child, depth + 1);
        if (st != TRAM_OK) return st;
        blanks(c);
        if (c->i < c->len && c->s[c->i] == ',') {
            c->i++;
            blanks(c);
            continue;
        }
        c->i++; /* '}' */
        break;
    }
    return TRAM_OK;
}

static tram_status array(scan *c, const char *path, int depth)
{
    c->i++;
    blanks(c);
    if (c->i < c->len && c->s[c->i] == ']') {
        c->i++;
        return TRAM_OK;
    }
    for (size_t k = 0; c->i < c->len; k++) {
        char child[160];
        snprintf(child, sizeof child, "%s[%zu]", path, k);
        tram_status st = add(c, child, c->i, c->i);
        if (st == TRAM_OK) st = value(c, child, depth + 1);
        if (st != TRAM_OK) return st;
        blanks(c);
        if (c->i < c->len && c->s[c->i] == ',') {
            c->i++;
            blanks(c);
            continue;
        }
        c->i++; /* ']' */
        break;
    }
    return TRAM_OK;
}

static tram_status value(scan *c, const char *path, int depth)
{
    if (depth > POS_MAX_DEPTH) {
        long l, col;
        tram__offset_pos(c->s, c->i, &l, &col);
        return tram__fail(c->err, TRAM_EINPUT, c->name, l, col,
                          "JSON nested deeper than %d levels", POS_MAX_DEPTH);
    }
    if (c->i >= c->len) return TRAM_OK;
    char ch = c->s[c->i];
    if (ch == '{') return object(c, path, depth);
    if (ch == '[') return array(c, path, depth);
    if (ch == '"') {
        size_t b, e;
        string(c, &b, &e);
        return TRAM_OK;
    }
    /* number or literal: up to the next delimiter */
    while (c->i < c->len && !strchr(",]} \t\r\n", c->s[c->i])) c->i++;
    return TRAM_OK;
}

tram_status tram__json_pos_scan(const char *name, const char *data, size_t len,
                                tram__json_pos **out, tram_error *err)
{
    *out = NULL;
    tram__json_pos *p = tram__calloc(1, sizeof *p);
    if (!p) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    p->data = data;
    p->len = len;
    scan c = {name, data, len, 0, p, err};
    blanks(&c);
    tram_status st = add(&c, "", c.i, c.i);
    if (st == TRAM_OK) st = value(&c, "", 0);
    if (st != TRAM_OK) {
        tram__json_pos_free(p);
        return st;
    }
    *out = p;
    return TRAM_OK;
}

void tram__json_pos_where(const tram__json_pos *p, const char *path, int key, long *line,
                          long *col)
{
    char want[160];
    snprintf(want, sizeof want, "%s", path);
    for (;;) {
        for (size_t k = 0; k < p->n; k++)
            if (strcmp(p->item[k].path, want) == 0) {
                tram__offset_pos(p->data, key ? p->item[k].key_off : p->item[k].val_off, line, col);
                return;
            }
        if (!want[0]) break;
        /* drop the last ".member" or "[k]" and try the parent */
        char *dot = strrchr(want, '.'), *br = strrchr(want, '[');
        char *cut = dot > br ? dot : br;
        if (cut)
            *cut = '\0';
        else
            want[0] = '\0';
        key = 0;
    }
    *line = 1;
    *col = 1;
}

tram_status tram__json_pos_fail(const tram__json_pos *p, const char *name, tram_error *err,
                                const char *path, int key, const char *fmt, ...)
{
    char msg[700];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    long line, col;
    tram__json_pos_where(p, path, key, &line, &col);
    return tram__fail(err, TRAM_EINPUT, name, line, col, "%s", msg);
}

tram_status tram__json_pos_fail_text(const char *name, const char *data, size_t len,
                                     tram_error *err, const char *path, int key,
                                     const char *fmt, ...)
{
    char msg[700];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    tram__json_pos *p = NULL;
    tram_status st = tram__json_pos_scan(name, data, len, &p, err);
    if (st != TRAM_OK) return st; /* out of memory: that is the error now */
    st = tram__json_pos_fail(p, name, err, path, key, "%s", msg);
    tram__json_pos_free(p);
    return st;
}

void tram__json_path_join(char *out, size_t size, const char *path, const char *key)
{
    snprintf(out, size, "%s%s%s", path, *path ? "." : "", key);
}

tram_status tram__json_known_keys(const tram__json_pos *p, const char *name, tram_error *err,
                                  const cJSON *obj, const char *path, const char *const *known,
                                  const char *hint)
{
    const cJSON *it;
    cJSON_ArrayForEach(it, obj)
    {
        int ok = 0;
        for (int k = 0; known[k]; k++) ok |= strcmp(it->string, known[k]) == 0;
        if (!ok) {
            char at[160];
            tram__json_path_join(at, sizeof at, path, it->string);
            return tram__json_pos_fail(p, name, err, at, 1, "unknown key \"%.60s\"%s%s: expected %s",
                                       it->string, *path ? " in " : "", path, hint);
        }
    }
    return TRAM_OK;
}
