/*
 * pixels_io.c - the reader and writer of pixel-observation files
 * (tram/pixels.h, format tram-pixels-1), on the strict CSV tables of
 * table.c and with the directive rules of point files (points_io.c).
 * One module both produces and reads the format, so the two cannot drift.
 */
#include "tram/pixels.h"
#include "io/records_internal.h"
#include "io/table_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define PIXELS_FORMAT "tram-pixels-1"
#define PIXEL_ORIGIN "top-left-pixel-centre"

void tram_pixel_obs_destroy(tram_pixel_obs *o)
{
    if (!o) return;
    tram__free(o->station);
    tram__free(o->point);
    tram__free(o->uv);
    tram__free(o->line);
    tram__free(o->station_id);
    tram__free(o->point_id);
    tram__free(o);
}

long tram_pixel_obs_station_index(const tram_pixel_obs *o, const char *station)
{
    for (size_t k = 0; k < o->nstations; k++)
        if (strcmp(o->station_id[k], station) == 0) return (long)k;
    return -1;
}

long tram_pixel_obs_point_index(const tram_pixel_obs *o, const char *point)
{
    for (size_t k = 0; k < o->npoints; k++)
        if (strcmp(o->point_id[k], point) == 0) return (long)k;
    return -1;
}

/* Room for n observations (and as many station and point ids). */
static int reserve(tram_pixel_obs *o, size_t n)
{
    size_t m = n ? n : 1;
    size_t *st = tram__realloc(o->station, m * sizeof *st);
    if (st) o->station = st;
    size_t *pt = tram__realloc(o->point, m * sizeof *pt);
    if (pt) o->point = pt;
    double *uv = tram__realloc(o->uv, 2 * m * sizeof *uv);
    if (uv) o->uv = uv;
    long *ln = tram__realloc(o->line, m * sizeof *ln);
    if (ln) o->line = ln;
    char(*sid)[TRAM_PIXEL_STATION_ID_MAX] = tram__realloc(o->station_id, m * sizeof *sid);
    if (sid) o->station_id = sid;
    char(*pid)[TRAM_PIXEL_POINT_ID_MAX] = tram__realloc(o->point_id, m * sizeof *pid);
    if (pid) o->point_id = pid;
    return st && pt && uv && ln && sid && pid;
}

/* Parse "WxH" (positive integers, at most 1e6 each). */
static int parse_size(const char *s, size_t *w, size_t *h)
{
    unsigned long a = 0, b = 0;
    int na = 0, nb = 0;
    const char *p = s;
    while (*p >= '0' && *p <= '9' && na < 8) a = a * 10 + (unsigned long)(*p++ - '0'), na++;
    if (*p != 'x' || na == 0) return 0;
    p++;
    while (*p >= '0' && *p <= '9' && nb < 8) b = b * 10 + (unsigned long)(*p++ - '0'), nb++;
    if (*p || nb == 0 || a == 0 || b == 0 || a > 1000000 || b > 1000000) return 0;
    *w = a;
    *h = b;
    return 1;
}

/* The directives of a pixel file: format, pixel-origin, image-size, board;
 * each at most once. */
static tram_status directives(const tram__table *t, tram_pixel_obs *o, tram_error *err)
{
    static const char *const keys[] = {"format", "pixel-origin", "image-size", "board"};
    long seen[4] = {0, 0, 0, 0};
    for (size_t i = 0; i < t->ndir; i++) {
        const tram__directive *d = &t->dir[i];
        int k;
        for (k = 0; k < 4; k++)
            if (strcmp(d->key, keys[k]) == 0) break;
        if (k == 4)
            return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                              "unknown directive '%s' (pixel files know format, pixel-origin, "
                              "image-size and board)",
                              d->key);
        if (seen[k])
            return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                              "directive '%s' given twice (first at line %ld)", d->key, seen[k]);
        seen[k] = d->line;
        if (k == 0 && strcmp(d->value, PIXELS_FORMAT) != 0)
            return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                              "format '%s': expected " PIXELS_FORMAT, d->value);
        if (k == 1 && strcmp(d->value, PIXEL_ORIGIN) != 0)
            return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                              "pixel-origin '%s': expected " PIXEL_ORIGIN
                              " (the centre of the top-left pixel is (0,0), u right, v down)",
                              d->value);
        if (k == 2 && !parse_size(d->value, &o->width, &o->height))
            return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                              "image-size '%s': expected WIDTHxHEIGHT in pixels, e.g. 1280x960",
                              d->value);
        if (k == 3) snprintf(o->board, sizeof o->board, "%s", d->value);
    }
    if (!seen[1])
        return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, 0,
                          "no pixel-origin: add '# pixel-origin: " PIXEL_ORIGIN
                          "' (the only convention tram reads)");
    if (!seen[2])
        return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, 0,
                          "no image size: add '# image-size: WIDTHxHEIGHT' (pixels)");
    o->image_size_line = seen[2];
    return TRAM_OK;
}

static tram_status columns(const tram__table *t, int col[4], tram_error *err)
{
    static const char *const names[4] = {"station", "point", "u", "v"};
    for (size_t c = 0; c < t->ncols; c++) {
        int ok = 0;
        for (int k = 0; k < 4; k++) ok |= strcmp(t->names[c], names[k]) == 0;
        if (!ok)
            return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, t->name_col[c],
                              "unknown column '%s': expected station,point,u,v", t->names[c]);
    }
    for (int k = 0; k < 4; k++)
        if ((col[k] = tram__table_col(t, names[k])) < 0)
            return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, 0,
                              "missing column '%s': expected station,point,u,v", names[k]);
    return TRAM_OK;
}

/* Why an id cannot be written and read back, or NULL when it can. */
static const char *bad_id(const char *s, size_t size)
{
    size_t n = strlen(s);
    if (n == 0) return "empty";
    if (n >= size) return "too long";
    if (s[0] == '#' || s[0] == ' ' || s[0] == '\t' || s[n - 1] == ' ' || s[n - 1] == '\t')
        return "starts with '#' or has blanks at an end";
    for (size_t i = 0; i < n; i++)
        if (s[i] == ',' || (unsigned char)s[i] < 0x20 || s[i] == 0x7f) return "holds a comma or a control character";
    return NULL;
}

/* Find or append an id; returns its index. */
static size_t intern(char (*ids)[TRAM_PIXEL_STATION_ID_MAX], size_t *n, const char *s)
{
    for (size_t k = *n; k-- > 0;)
        if (strcmp(ids[k], s) == 0) return k;
    snprintf(ids[*n], TRAM_PIXEL_STATION_ID_MAX, "%s", s);
    return (*n)++;
}

static size_t intern_point(char (*ids)[TRAM_PIXEL_POINT_ID_MAX], size_t *n, const char *s)
{
    for (size_t k = *n; k-- > 0;)
        if (strcmp(ids[k], s) == 0) return k;
    snprintf(ids[*n], TRAM_PIXEL_POINT_ID_MAX, "%s", s);
    return (*n)++;
}

typedef struct obsref {
    size_t station, point, i;
} obsref;

static int obs_cmp(const void *a, const void *b)
{
    const obsref *x = a, *y = b;
    if (x->station != y->station) return x->station < y->station ? -1 : 1;
    if (x->point != y->point) return x->point < y->point ? -1 : 1;
    return (x->i > y->i) - (x->i < y->i);
}

/* A (station, point) pair given twice is an error (sorted: n log n). */
static tram_status unique_obs(const tram_pixel_obs *o, tram_error *err)
{
    if (o->n < 2) return TRAM_OK;
    obsref *refs = tram__malloc(o->n * sizeof *refs);
    if (!refs) return tram__fail(err, TRAM_ENOMEM, o->source, 0, 0, "out of memory");
    for (size_t i = 0; i < o->n; i++) refs[i] = (obsref){o->station[i], o->point[i], i};
    qsort(refs, o->n, sizeof *refs, obs_cmp);
    tram_status st = TRAM_OK;
    for (size_t k = 1; k < o->n && st == TRAM_OK; k++) {
        size_t a = refs[k - 1].i, b = refs[k].i;
        if (o->station[a] == o->station[b] && o->point[a] == o->point[b])
            st = tram__fail(err, TRAM_EINPUT, o->source, o->line[b], 0,
                            "point '%s' of station '%s' given twice (first at line %ld)",
                            o->point_id[o->point[b]], o->station_id[o->station[b]], o->line[a]);
    }
    tram__free(refs);
    return st;
}

/* The rows of the table into o (ids interned in order of appearance). */
static tram_status rows(const tram__table *t, const int col[4], tram_pixel_obs *o, tram_error *err)
{
    size_t n = t->nrows;
    if (!reserve(o, n)) return tram__fail(err, TRAM_ENOMEM, t->source, 0, 0, "out of memory");
    for (size_t r = 0; r < n; r++) {
        const char *sid = t->cells[r * t->ncols + (size_t)col[0]];
        const char *pid = t->cells[r * t->ncols + (size_t)col[1]];
        size_t smax[2] = {TRAM_PIXEL_STATION_ID_MAX, TRAM_PIXEL_POINT_ID_MAX};
        const char *ids[2] = {sid, pid};
        for (int k = 0; k < 2; k++)
            if (!ids[k][0] || strlen(ids[k]) >= smax[k])
                return tram__fail(err, TRAM_EINPUT, t->source, t->row_line[r],
                                  t->cell_col[r * t->ncols + (size_t)col[k]],
                                  "column '%s': expected an id of 1 to %zu characters",
                                  k ? "point" : "station", smax[k] - 1);
        o->line[r] = t->row_line[r];
        o->station[r] = intern(o->station_id, &o->nstations, sid);
        o->point[r] = intern_point(o->point_id, &o->npoints, pid);
        tram_status st;
        if ((st = tram__table_number(t, r, col[2], &o->uv[2 * r], err)) != TRAM_OK ||
            (st = tram__table_number(t, r, col[3], &o->uv[2 * r + 1], err)) != TRAM_OK)
            return st;
        o->n = r + 1;
    }
    if (n == 0)
        return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, 0,
                          "no observations: expected rows of station,point,u,v");
    return unique_obs(o, err);
}

tram_status tram_pixel_obs_read_buffer(const char *name, const char *data, size_t len,
                                       tram_pixel_obs **out, tram_error *err)
{
    *out = NULL;
    tram__table *t;
    tram_status st = tram__table_parse(name, data, len, &t, err);
    if (st != TRAM_OK) return st;
    tram_pixel_obs *o = tram__calloc(1, sizeof *o);
    int col[4];
    if (!o) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    snprintf(o->source, sizeof o->source, "%s", name);
    if ((st = directives(t, o, err)) != TRAM_OK || (st = columns(t, col, err)) != TRAM_OK) goto done;
    st = rows(t, col, o, err);
done:
    tram__table_free(t);
    if (st != TRAM_OK) {
        tram_pixel_obs_destroy(o);
        return st;
    }
    *out = o;
    return TRAM_OK;
}

tram_status tram_pixel_obs_read_file(const char *path, tram_pixel_obs **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_pixel_obs_read_buffer(strcmp(path, "-") ? path : "<stdin>", data, len, out, err);
    tram__free(data);
    return st;
}

tram_status tram_pixel_obs_create(size_t width, size_t height, const char *board,
                                  tram_pixel_obs **out, tram_error *err)
{
    *out = NULL;
    if (width == 0 || height == 0 || width > 1000000 || height > 1000000)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0,
                          "image size %zux%zu: expected 1 to 1000000 pixels each way", width, height);
    if (board && *board) {
        const char *why = strlen(board) >= 80 ? "longer than 79 characters"
                          : strpbrk(board, "\r\n") ? "holds a line break"
                                                   : NULL;
        if (why) return tram__fail(err, TRAM_EINPUT, "", 0, 0, "board name %s", why);
    }
    tram_pixel_obs *o = tram__calloc(1, sizeof *o);
    if (!o) return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    o->width = width;
    o->height = height;
    snprintf(o->board, sizeof o->board, "%s", board ? board : "");
    snprintf(o->source, sizeof o->source, "(in memory)");
    *out = o;
    return TRAM_OK;
}

tram_status tram_pixel_obs_add(tram_pixel_obs *o, const char *station, const char *point,
                               double u, double v, tram_error *err)
{
    const char *why;
    if ((why = bad_id(station, TRAM_PIXEL_STATION_ID_MAX)) != NULL)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "station id '%.80s': %s", station, why);
    if ((why = bad_id(point, TRAM_PIXEL_POINT_ID_MAX)) != NULL)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "point id '%.80s': %s", point, why);
    if (!isfinite(u) || !isfinite(v))
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "point '%s' of station '%s': u, v not finite",
                          point, station);
    long si = tram_pixel_obs_station_index(o, station), pi = tram_pixel_obs_point_index(o, point);
    if (si >= 0 && pi >= 0)
        for (size_t i = 0; i < o->n; i++)
            if (o->station[i] == (size_t)si && o->point[i] == (size_t)pi)
                return tram__fail(err, TRAM_EINPUT, "", 0, 0,
                                  "point '%s' of station '%s' given twice", point, station);
    /* grow by doubling; capacity is the next power of two of n */
    size_t n = o->n, cap = 1;
    while (cap < n) cap *= 2;
    if (n == cap || n == 0)
        if (!reserve(o, 2 * cap)) return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    o->station[n] = si >= 0 ? (size_t)si : intern(o->station_id, &o->nstations, station);
    o->point[n] = pi >= 0 ? (size_t)pi : intern_point(o->point_id, &o->npoints, point);
    o->uv[2 * n] = u;
    o->uv[2 * n + 1] = v;
    o->line[n] = 0;
    o->n = n + 1;
    return TRAM_OK;
}

/* The shortest %.Ng (N from 15 to 17) that reads back exactly. */
static void format_number(char *buf, size_t size, double x)
{
    for (int prec = 15; prec <= 17; prec++) {
        snprintf(buf, size, "%.*g", prec, x == 0.0 ? 0.0 : x);
        if (strtod(buf, NULL) == x) return;
    }
}

tram_status tram_pixel_obs_write(const tram_pixel_obs *o, char **text, tram_error *err)
{
    *text = NULL;
    if (o->width == 0 || o->height == 0)
        return tram__fail(err, TRAM_EINPUT, o->source, 0, 0, "no image size: cannot write");
    for (size_t k = 0; k < o->nstations; k++)
        if (bad_id(o->station_id[k], TRAM_PIXEL_STATION_ID_MAX))
            return tram__fail(err, TRAM_EINPUT, o->source, 0, 0,
                              "station id '%s' cannot be written to CSV", o->station_id[k]);
    for (size_t k = 0; k < o->npoints; k++)
        if (bad_id(o->point_id[k], TRAM_PIXEL_POINT_ID_MAX))
            return tram__fail(err, TRAM_EINPUT, o->source, 0, 0,
                              "point id '%s' cannot be written to CSV", o->point_id[k]);
    /* a row is at most two ids, two numbers of 24 characters and 4 separators */
    size_t cap = 256 + strlen(o->board) +
                 o->n * (TRAM_PIXEL_STATION_ID_MAX + TRAM_PIXEL_POINT_ID_MAX + 2 * 32 + 4);
    char *s = tram__malloc(cap);
    if (!s) return tram__fail(err, TRAM_ENOMEM, o->source, 0, 0, "out of memory");
    size_t len = (size_t)snprintf(s, cap,
                                  "# format: " PIXELS_FORMAT "\n# pixel-origin: " PIXEL_ORIGIN
                                  "\n# image-size: %zux%zu\n",
                                  o->width, o->height);
    if (o->board[0]) len += (size_t)snprintf(s + len, cap - len, "# board: %s\n", o->board);
    len += (size_t)snprintf(s + len, cap - len, "station,point,u,v\n");
    for (size_t i = 0; i < o->n; i++) {
        char u[32], v[32];
        format_number(u, sizeof u, o->uv[2 * i]);
        format_number(v, sizeof v, o->uv[2 * i + 1]);
        len += (size_t)snprintf(s + len, cap - len, "%s,%s,%s,%s\n", o->station_id[o->station[i]],
                                o->point_id[o->point[i]], u, v);
    }
    *text = s;
    return TRAM_OK;
}
