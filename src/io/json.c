/*
 * json.c - the JSON helpers of json_internal.h: a strict parse of a
 * whole document (json_check.c's check, then cJSON), and the builder (cJSON under a sticky failure flag, so
 * that a document with a dropped field is never written).
 */
#include "io/json_internal.h"
#include "io/json_check_internal.h"
#include "io/number_shim_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

/* cJSON returned NULL on a checked text: it ran out of memory. */
static tram_status parse_nomem(const char *name, const char *what, tram_error *err)
{
    return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "%s: out of memory while parsing the JSON",
                      what);
}

tram_status tram__json_parse(const char *name, const char *data, size_t len, const char *what,
                             cJSON **out, tram_error *err)
{
    *out = NULL;
    /* every refusal, with its position, comes from the strict check */
    tram_status st = tram__json_check(name, data, len, what, err);
    if (st != TRAM_OK) return st;
    *out = cJSON_ParseWithLength(data, len);
    /* the text is valid JSON within cJSON's nesting limit: a failure is
     * an allocation inside cJSON */
    return *out ? TRAM_OK : parse_nomem(name, what, err);
}

tram_status tram__json_parse_outline(const char *name, const char *data, size_t len,
                                     const char *what, tram__json_spans *sp, cJSON **out,
                                     tram_error *err)
{
    *out = NULL;
    tram_status st = tram__json_check_spans(name, data, len, what, sp, err);
    if (st != TRAM_OK) return st;
    if (!sp->found) {
        *out = cJSON_ParseWithLength(data, len);
        return *out ? TRAM_OK : parse_nomem(name, what, err);
    }
    /* the text around the array, with "[]" in its place */
    size_t head = sp->array_off, tail = len - sp->array_end;
    char *outline = tram__malloc(head + 2 + tail);
    if (!outline) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    memcpy(outline, data, head);
    memcpy(outline + head, "[]", 2);
    memcpy(outline + head + 2, data + sp->array_end, tail);
    *out = cJSON_ParseWithLength(outline, head + 2 + tail);
    tram__free(outline);
    return *out ? TRAM_OK : parse_nomem(name, what, err);
}

/* A character of a JSON number. */
static int is_number_char(char ch)
{
    return (ch >= '0' && ch <= '9') || ch == '-' || ch == '+' || ch == '.' || ch == 'e' ||
           ch == 'E';
}

/* The numbers of a tree in document order (cJSON keeps its children in
 * that order) set to vals[*j...]. */
static void set_numbers(cJSON *item, const double *vals, size_t n, size_t *j)
{
    for (; item; item = item->next) {
        if (cJSON_IsNumber(item) && *j < n) cJSON_SetNumberHelper(item, vals[(*j)++]);
        set_numbers(item->child, vals, n, j);
    }
}

tram_status tram__json_parse_elem(const char *name, const char *data, const tram__json_spans *sp,
                                  size_t k, const char *what, cJSON **out, tram_error *err)
{
    const size_t *el = sp->elem + 5 * k;
    size_t b = el[0], len = el[1] - el[0], n = el[3];
    *out = NULL;
    if (n == (size_t)-1) {
        *out = cJSON_ParseWithLength(data + b, len);
        return *out ? TRAM_OK : parse_nomem(name, what, err);
    }
    /* The numbers, checked and found by the check, convert here (fast_float,
     * correctly rounded as cJSON's strtod, without the locale); cJSON gets
     * a copy of the text with each number written as 0 and blanks, and
     * the values are set into its tree after. */
    double *vals = tram__malloc(n * sizeof *vals + len + 1);
    if (!vals) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    char *text = (char *)(vals + n);
    memcpy(text, data + b, len);
    for (size_t j = 0; j < n; j++) {
        size_t o = sp->num[el[2] + j], q = o;
        while (q < len && is_number_char(text[q])) q++;
        if (tram__number_convert(text + o, text + q, &vals[j]) != 0) vals[j] = 0; /* checked */
        text[o] = '0';
        memset(text + o + 1, ' ', q - o - 1);
    }
    *out = cJSON_ParseWithLength(text, len);
    if (*out) {
        size_t j = 0;
        set_numbers(*out, vals, n, &j);
    }
    tram__free(vals);
    return *out ? TRAM_OK : parse_nomem(name, what, err);
}

/* Add item to parent (under key, or appended when key is NULL); on any
 * failure delete item, mark the builder and return NULL. */
static cJSON *attach(tram__jb *b, cJSON *parent, const char *key, cJSON *item)
{
    cJSON_bool ok = item && parent &&
                    (key ? cJSON_AddItemToObject(parent, key, item) : cJSON_AddItemToArray(parent, item));
    if (!ok) {
        cJSON_Delete(item);
        b->failed = 1;
        return NULL;
    }
    return item;
}

static cJSON *number(double v)
{
    if (!isfinite(v)) return cJSON_CreateNull();
    char buf[40];
    snprintf(buf, sizeof buf, "%.17g", v == 0.0 ? 0.0 : v);
    return cJSON_CreateRaw(buf);
}

cJSON *tram__jb_obj(tram__jb *b, cJSON *parent, const char *key)
{
    return attach(b, parent, key, cJSON_CreateObject());
}

cJSON *tram__jb_arr(tram__jb *b, cJSON *parent, const char *key)
{
    return attach(b, parent, key, cJSON_CreateArray());
}

void tram__jb_str(tram__jb *b, cJSON *parent, const char *key, const char *v)
{
    attach(b, parent, key, cJSON_CreateString(v ? v : ""));
}

void tram__jb_num(tram__jb *b, cJSON *parent, const char *key, double v)
{
    attach(b, parent, key, number(v));
}

void tram__jb_bool(tram__jb *b, cJSON *parent, const char *key, int v)
{
    attach(b, parent, key, cJSON_CreateBool(v != 0));
}

void tram__jb_null(tram__jb *b, cJSON *parent, const char *key)
{
    attach(b, parent, key, cJSON_CreateNull());
}

void tram__jb_vec(tram__jb *b, cJSON *parent, const char *key, const double *v, int n, double f)
{
    cJSON *a = tram__jb_arr(b, parent, key);
    for (int i = 0; a && i < n; i++) tram__jb_num(b, a, NULL, v[i] * f);
}

void tram__jb_matrix4(tram__jb *b, cJSON *parent, const char *key, const tram_se3 *T)
{
    cJSON *m = tram__jb_arr(b, parent, key);
    for (int i = 0; m && i < 4; i++) tram__jb_vec(b, m, NULL, T->m[i], 4, 1.0);
}

tram_status tram__jb_finish(tram__jb *b, cJSON *root, int formatted, int newline, char **text,
                            tram_error *err)
{
    *text = NULL;
    char *out = NULL;
    if (!b->failed && root) out = formatted ? cJSON_Print(root) : cJSON_PrintUnformatted(root);
    cJSON_Delete(root);
    if (out) {
        size_t len = strlen(out);
        *text = tram__malloc(len + 2);
        if (*text) {
            memcpy(*text, out, len);
            if (newline) (*text)[len++] = '\n';
            (*text)[len] = '\0';
        }
        cJSON_free(out);
    }
    if (!*text) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    return TRAM_OK;
}
