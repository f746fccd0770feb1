/*
 * json_check.c - the strict check of a JSON document (RFC 8259 grammar)
 * made before cJSON parses it, so that every JSON reader of the library
 * refuses the same things with file:line:column: syntax errors (at the
 * first byte that does not fit), nesting deeper than cJSON parses, a key
 * given twice in one object (cJSON would silently keep the first), and
 * numbers beyond double range such as 1e400 (cJSON would read them as
 * Inf).  A text that passes and that cJSON still cannot parse ran out of
 * memory (json.c).  No published method beyond the RFC's grammar.
 */
#include "io/json_check_internal.h"
#include "io/number_shim_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* A key of an object being read: its raw text [off, off + len). */
typedef struct key_span {
    size_t off, len;
    int esc; /* it has a backslash escape */
} key_span;

typedef struct check {
    const char *name, *what, *s;
    size_t len, i;
    key_span *keys; /* the keys of the open objects, innermost last */
    size_t nkeys, capkeys;
    key_span key;   /* the key of the value being read (len 0: none) */
    tram_error *err;
    tram__json_spans *sp; /* the elements to record (NULL: none)         */
    int record;           /* the next value is the array to record       */
    int seen;             /* the key of sp was met (only its first counts) */
    int esc;              /* the last string read had an escape          */
    int in_elem;          /* inside an element of the recorded array     */
    int elem_long;        /* that element is too long for 32-bit offsets */
    size_t elem_base;     /* where it starts                             */
    long line;            /* the line at c->i (for the recorded elements)  */
} check;

static tram_status fail_at(check *c, size_t off, const char *why)
{
    long line, col;
    tram__offset_pos(c->s, off, &line, &col);
    return tram__fail(c->err, TRAM_EINPUT, c->name, line, col, "%s: %s%s", c->what, why,
                      off >= c->len && !strstr(why, "the end") ? ", found the end of the text" : "");
}

static void blanks(check *c)
{
    /* locals, which the compiler keeps in registers (c->i is stored once) */
    const char *s = c->s;
    size_t i = c->i, n = c->len;
    long nl = 0;
    while (i < n && (s[i] == ' ' || s[i] == '\t' || s[i] == '\n' || s[i] == '\r')) nl += s[i++] == '\n';
    c->i = i;
    c->line += nl; /* strings hold no raw line feed: every one is met here */
}

/* The end of the run of decimal digits of s[0, n) from i. */
static size_t digits(const char *s, size_t i, size_t n)
{
    while (i < n && s[i] >= '0' && s[i] <= '9') i++;
    return i;
}

static int hex(char ch)
{
    return (ch >= '0' && ch <= '9') || (ch >= 'a' && ch <= 'f') || (ch >= 'A' && ch <= 'F');
}

/* A string at its opening quote; its raw text (between the quotes) in *b,
 * *n. */
static tram_status string(check *c, size_t *b, size_t *n)
{
    size_t start = c->i++;
    *b = c->i;
    c->esc = 0;
    for (;;) {
        /* the run of plain characters, then whatever ends it */
        size_t i = c->i;
        while (i < c->len && c->s[i] != '"' && c->s[i] != '\\' && (unsigned char)c->s[i] >= 0x20)
            i++;
        c->i = i;
        if (c->i >= c->len || c->s[c->i] == '"') break;
        unsigned char ch = (unsigned char)c->s[c->i];
        if (ch < 0x20) return fail_at(c, c->i, "malformed JSON: control character in a string");
        if (ch == '\\') {
            c->esc = 1;
            char e = c->i + 1 < c->len ? c->s[c->i + 1] : '\0';
            if (e == 'u') {
                for (size_t k = 2; k < 6; k++)
                    if (c->i + k >= c->len || !hex(c->s[c->i + k]))
                        return fail_at(c, c->i, "malformed JSON: expected \\u and 4 hex digits");
                c->i += 6;
                continue;
            }
            if (!e || !strchr("\"\\/bfnrt", e))
                return fail_at(c, c->i, "malformed JSON: unknown escape in a string");
            c->i += 2;
        }
    }
    if (c->i >= c->len) return fail_at(c, start, "malformed JSON: string not closed");
    *n = c->i - *b;
    c->i++;
    return TRAM_OK;
}

/* A number of an element of the recorded array starts at b. */
static tram_status record_number(check *c, size_t b)
{
    tram__json_spans *sp = c->sp;
    if (b - c->elem_base > UINT32_MAX) {
        c->elem_long = 1;
        return TRAM_OK;
    }
    if (sp->nnum == sp->capnum) {
        size_t nc = sp->capnum ? 2 * sp->capnum : 4096;
        uint32_t *nn = tram__realloc(sp->num, nc * sizeof *nn);
        if (!nn) return tram__fail(c->err, TRAM_ENOMEM, c->name, 0, 0, "out of memory");
        tram__hint_fill(nn, nc * sizeof *nn);
        sp->num = nn;
        sp->capnum = nc;
    }
    sp->num[sp->nnum++] = (uint32_t)(b - c->elem_base);
    return TRAM_OK;
}

/* A number: -?(0|[1-9][0-9]*)(.[0-9]+)?([eE][+-]?[0-9]+)?, finite. */
static tram_status number(check *c)
{
    size_t b = c->i;
    if (c->in_elem && !c->elem_long) {
        tram_status rs = record_number(c, b);
        if (rs != TRAM_OK) return rs;
    }
    const char *s = c->s;
    if (c->i < c->len && s[c->i] == '-') c->i++;
    size_t ib = c->i;
    if (c->i < c->len && s[c->i] == '0') {
        c->i++;
    } else {
        c->i = digits(s, c->i, c->len);
        if (c->i == ib) return fail_at(c, b, "malformed JSON: expected a value");
    }
    size_t int_digits = c->i - ib;
    if (c->i < c->len && s[c->i] == '.') {
        size_t fb = ++c->i;
        c->i = digits(s, c->i, c->len);
        if (c->i == fb) return fail_at(c, b, "malformed JSON: expected digits after '.'");
    }
    int has_exp = 0;
    if (c->i < c->len && (s[c->i] == 'e' || s[c->i] == 'E')) {
        has_exp = 1;
        c->i++;
        if (c->i < c->len && (s[c->i] == '+' || s[c->i] == '-')) c->i++;
        size_t eb = c->i;
        c->i = digits(s, c->i, c->len);
        if (c->i == eb) return fail_at(c, b, "malformed JSON: expected digits in the exponent");
    }
    /* only an exponent or more than 308 digits can leave double range */
    double v = 0;
    if ((has_exp || int_digits > 308) &&
        (tram__number_convert(s + b, s + c->i, &v) != 0 || !isfinite(v))) {
        long line, col;
        tram__offset_pos(s, b, &line, &col);
        int n = (int)(c->i - b), kn = (int)(c->key.len > 60 ? 60 : c->key.len);
        return tram__fail(c->err, TRAM_EINPUT, c->name, line, col,
                          "%s: %s%.*s%s number %.*s%s is beyond double range: expected a finite "
                          "number",
                          c->what, kn ? "\"" : "", kn, s + c->key.off, kn ? "\":" : "",
                          n > 40 ? 40 : n, s + b, n > 40 ? "..." : "");
    }
    return TRAM_OK;
}

/* A key's text with its escapes resolved into buf (cap bytes); its
 * length, or (size_t)-1 when it does not fit (then compared raw). */
static size_t decode_key(const char *s, size_t n, char *buf, size_t cap)
{
    size_t o = 0;
    for (size_t i = 0; i < n; i++) {
        if (o + 5 >= cap) return (size_t)-1;
        if (s[i] != '\\') {
            buf[o++] = s[i];
            continue;
        }
        char e = s[++i];
        if (e != 'u') {
            static const char from[] = "bfnrt", to[] = "\b\f\n\r\t";
            const char *p = strchr(from, e);
            buf[o++] = p ? to[p - from] : e;
            continue;
        }
        /* \uXXXX (a surrogate pair joined) as UTF-8, as cJSON keeps it */
        unsigned long u = strtoul((char[5]){s[i + 1], s[i + 2], s[i + 3], s[i + 4], 0}, NULL, 16);
        i += 4;
        if (u >= 0xD800 && u < 0xDC00 && i + 6 < n && s[i + 1] == '\\' && s[i + 2] == 'u') {
            unsigned long lo =
                strtoul((char[5]){s[i + 3], s[i + 4], s[i + 5], s[i + 6], 0}, NULL, 16);
            if (lo >= 0xDC00 && lo < 0xE000) {
                u = 0x10000 + ((u - 0xD800) << 10) + (lo - 0xDC00);
                i += 6;
            }
        }
        if (u < 0x80) {
            buf[o++] = (char)u;
        } else if (u < 0x800) {
            buf[o++] = (char)(0xC0 | (u >> 6));
            buf[o++] = (char)(0x80 | (u & 0x3F));
        } else if (u < 0x10000) {
            buf[o++] = (char)(0xE0 | (u >> 12));
            buf[o++] = (char)(0x80 | ((u >> 6) & 0x3F));
            buf[o++] = (char)(0x80 | (u & 0x3F));
        } else {
            buf[o++] = (char)(0xF0 | (u >> 18));
            buf[o++] = (char)(0x80 | ((u >> 12) & 0x3F));
            buf[o++] = (char)(0x80 | ((u >> 6) & 0x3F));
            buf[o++] = (char)(0x80 | (u & 0x3F));
        }
    }
    return o;
}

static int same_key(const check *c, const key_span *a, const key_span *b)
{
    const char *sa = c->s + a->off, *sb = c->s + b->off;
    if (!a->esc && !b->esc)
        return a->len == b->len && memcmp(sa, sb, a->len) == 0;
    char da[256], db[256];
    size_t na = decode_key(sa, a->len, da, sizeof da), nb = decode_key(sb, b->len, db, sizeof db);
    if (na == (size_t)-1 || nb == (size_t)-1) return a->len == b->len && memcmp(sa, sb, a->len) == 0;
    return na == nb && memcmp(da, db, na) == 0;
}

/* The new key k against the earlier keys [first, nkeys) of its object:
 * pairwise (objects of record and calibration files have few keys). */
static tram_status new_key(check *c, size_t first, key_span k)
{
    for (size_t j = first; j < c->nkeys; j++)
        if (same_key(c, &c->keys[j], &k)) {
            long l1, c1, l2, c2;
            tram__offset_pos(c->s, c->keys[j].off - 1, &l1, &c1);
            tram__offset_pos(c->s, k.off - 1, &l2, &c2);
            int n = (int)(k.len > 60 ? 60 : k.len);
            return tram__fail(c->err, TRAM_EINPUT, c->name, l2, c2,
                              "%s: key \"%.*s\" given twice in one object (first at line %ld, "
                              "column %ld)",
                              c->what, n, c->s + k.off, l1, c1);
        }
    if (c->nkeys == c->capkeys) {
        size_t nc = c->capkeys ? 2 * c->capkeys : 64;
        key_span *nk = tram__realloc(c->keys, nc * sizeof *nk);
        if (!nk) return tram__fail(c->err, TRAM_ENOMEM, c->name, 0, 0, "out of memory");
        c->keys = nk;
        c->capkeys = nc;
    }
    c->keys[c->nkeys++] = k;
    return TRAM_OK;
}

/* Key k is the text want as cJSON compares it: escapes resolved, and as a
 * C string (up to a NUL from \u0000). */
static int is_key(const check *c, const key_span *k, const char *want)
{
    size_t wl = strlen(want);
    const char *s = c->s + k->off;
    if (!k->esc) return k->len == wl && memcmp(s, want, wl) == 0;
    char d[256];
    size_t n = decode_key(s, k->len, d, sizeof d);
    return n != (size_t)-1 && strnlen(d, n) == wl && memcmp(d, want, wl) == 0;
}

/* Element [b, e) of the array being recorded, whose numbers are those
 * recorded from first on. */
static tram_status record_elem(check *c, size_t b, size_t e, size_t first, long line)
{
    tram__json_spans *sp = c->sp;
    if (sp->n == sp->cap) {
        size_t nc = sp->cap ? 2 * sp->cap : 256;
        size_t *ne = tram__realloc(sp->elem, 5 * nc * sizeof *ne);
        if (!ne) return tram__fail(c->err, TRAM_ENOMEM, c->name, 0, 0, "out of memory");
        sp->elem = ne;
        sp->cap = nc;
    }
    size_t *el = sp->elem + 5 * sp->n++;
    el[0] = b;
    el[1] = e;
    el[2] = first;
    el[3] = c->elem_long ? (size_t)-1 : sp->nnum - first;
    el[4] = (size_t)line;
    if (c->elem_long) sp->nnum = first;
    return TRAM_OK;
}

static tram_status value(check *c, int depth);

static tram_status object(check *c, int depth)
{
    size_t first = c->nkeys;
    c->i++;
    blanks(c);
    if (c->i < c->len && c->s[c->i] == '}') {
        c->i++;
        return TRAM_OK;
    }
    for (;;) {
        if (c->i >= c->len || c->s[c->i] != '"')
            return fail_at(c, c->i, "malformed JSON: expected a key in double quotes");
        key_span k;
        tram_status st = string(c, &k.off, &k.len);
        k.esc = c->esc;
        if (st == TRAM_OK) st = new_key(c, first, k);
        if (st != TRAM_OK) return st;
        blanks(c);
        if (c->i >= c->len || c->s[c->i] != ':')
            return fail_at(c, c->i, "malformed JSON: expected ':' after the key");
        c->i++;
        key_span outer = c->key;
        c->key = k;
        /* the first member of that key, as cJSON finds it */
        c->record = depth == 0 && c->sp && !c->seen && is_key(c, &k, c->sp->key);
        c->seen |= c->record;
        st = value(c, depth + 1);
        c->key = outer;
        if (st != TRAM_OK) return st;
        blanks(c);
        if (c->i < c->len && c->s[c->i] == ',') {
            c->i++;
            blanks(c);
            continue;
        }
        if (c->i < c->len && c->s[c->i] == '}') break;
        return fail_at(c, c->i, "malformed JSON: expected ',' or '}'");
    }
    c->i++;
    c->nkeys = first; /* this object's keys are done with */
    return TRAM_OK;
}

/* An array; with record set, the array member of c->sp (its elements
 * recorded). */
static tram_status array(check *c, int depth, int record)
{
    if (record) {
        c->sp->found = 1;
        c->sp->array_off = c->i;
    }
    c->i++;
    blanks(c);
    if (c->i < c->len && c->s[c->i] == ']') {
        c->i++;
        if (record) c->sp->array_end = c->i;
        return TRAM_OK;
    }
    for (;;) {
        blanks(c);
        size_t b = c->i, first = record ? c->sp->nnum : 0;
        long line = c->line;
        if (record) {
            c->in_elem = 1;
            c->elem_long = 0;
            c->elem_base = b;
        }
        tram_status st = value(c, depth + 1);
        if (record) c->in_elem = 0;
        if (st == TRAM_OK && record) st = record_elem(c, b, c->i, first, line);
        if (st != TRAM_OK) return st;
        blanks(c);
        if (c->i < c->len && c->s[c->i] == ',') {
            c->i++;
            continue;
        }
        if (c->i < c->len && c->s[c->i] == ']') break;
        return fail_at(c, c->i, "malformed JSON: expected ',' or ']'");
    }
    c->i++;
    if (record) c->sp->array_end = c->i;
    return TRAM_OK;
}

static tram_status literal(check *c, const char *word)
{
    size_t n = strlen(word);
    if (c->len - c->i < n || memcmp(c->s + c->i, word, n) != 0)
        return fail_at(c, c->i, "malformed JSON: expected a value");
    c->i += n;
    return TRAM_OK;
}

static tram_status value(check *c, int depth)
{
    int record = c->record;
    c->record = 0;
    blanks(c);
    /* cJSON's own limit: deeper documents it refuses */
    if (depth >= CJSON_NESTING_LIMIT) {
        long line, col;
        tram__offset_pos(c->s, c->i, &line, &col);
        return tram__fail(c->err, TRAM_EINPUT, c->name, line, col,
                          "%s: JSON nested deeper than %d levels", c->what, CJSON_NESTING_LIMIT);
    }
    if (c->i >= c->len) return fail_at(c, c->i, "malformed JSON: expected a value, found the end");
    switch (c->s[c->i]) {
    case '{': return object(c, depth);
    case '[': return array(c, depth, record);
    case '"': {
        size_t b, n;
        return string(c, &b, &n);
    }
    case 't': return literal(c, "true");
    case 'f': return literal(c, "false");
    case 'n': return literal(c, "null");
    default: return number(c);
    }
}

tram_status tram__json_check(const char *name, const char *data, size_t len, const char *what,
                             tram_error *err)
{
    return tram__json_check_spans(name, data, len, what, NULL, err);
}

tram_status tram__json_check_spans(const char *name, const char *data, size_t len,
                                   const char *what, tram__json_spans *sp, tram_error *err)
{
    check c = {name, what, data, len, 0, NULL, 0, 0, {0, 0, 0}, err, sp, 0, 0, 0, 0, 0, 0, 1};
    tram_status st = value(&c, 0);
    if (st == TRAM_OK) {
        blanks(&c);
        if (c.i < len) st = fail_at(&c, c.i, "text after the JSON document");
    }
    tram__free(c.keys);
    return st;
}
