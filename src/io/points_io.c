/*
 * points_io.c - readers of point-pair, observed-point and model-point files
 * (docs/points.md), on the strict CSV tables of table.c.
 */
#include "tram/points.h"
#include "io/text_internal.h"
#include "io/table_internal.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The only directives point files take: length-unit and format. */
static tram_status units(const tram__table *t, const char *format, tram_length_unit opt,
                         tram_length_unit *out, tram_error *err)
{
    tram_length_unit u = TRAM_LENGTH_UNSET;
    long uline = 0;
    for (size_t i = 0; i < t->ndir; i++) {
        const tram__directive *d = &t->dir[i];
        if (strcmp(d->key, "length-unit") == 0) {
            tram_length_unit v = tram_unit_length_parse(d->value);
            if (v == TRAM_LENGTH_UNSET)
                return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                                  "length-unit '%s': expected one of mm, cm, m, in", d->value);
            if (uline && v != u)
                return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                                  "directive 'length-unit' given again with a different value "
                                  "(first at line %ld)",
                                  uline);
            u = v;
            uline = d->line;
        } else if (strcmp(d->key, "format") == 0) {
            if (strcmp(d->value, format) != 0)
                return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                                  "format '%s': expected %s", d->value, format);
        } else {
            return tram__fail(err, TRAM_EINPUT, t->source, d->line, d->col,
                              "unknown directive '%s' (point files know length-unit and format)",
                              d->key);
        }
    }
    if (opt != TRAM_LENGTH_UNSET) {
        if (u != TRAM_LENGTH_UNSET && u != opt)
            return tram__fail(err, TRAM_EINPUT, t->source, uline, 0,
                              "the file declares length-unit %s but --length-unit %s was given",
                              tram_unit_length_name(u), tram_unit_length_name(opt));
        u = opt;
    }
    if (u == TRAM_LENGTH_UNSET)
        return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, 0,
                          "no length unit: add '# length-unit: mm' (or cm, m, in)");
    *out = u;
    return TRAM_OK;
}

/* Every column must be one of `known` (NULL-terminated). */
static tram_status known_columns(const tram__table *t, const char *const *known, const char *hint,
                                 tram_error *err)
{
    for (size_t c = 0; c < t->ncols; c++) {
        int ok = 0;
        for (int k = 0; known[k]; k++) ok |= strcmp(t->names[c], known[k]) == 0;
        if (!ok)
            return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, t->name_col[c],
                              "unknown column '%s': expected %s", t->names[c], hint);
    }
    return TRAM_OK;
}

static tram_status need(const tram__table *t, const char *name, int *col, tram_error *err)
{
    *col = tram__table_col(t, name);
    if (*col < 0)
        return tram__fail(err, TRAM_EINPUT, t->source, t->header_line, 0, "missing column '%s'", name);
    return TRAM_OK;
}

static tram_status id_of(const tram__table *t, size_t r, int c, char *out, size_t size,
                         tram_error *err)
{
    const char *s = t->cells[r * t->ncols + (size_t)c];
    if (!*s || strlen(s) >= size)
        return tram__fail(err, TRAM_EINPUT, t->source, t->row_line[r], t->cell_col[r * t->ncols + (size_t)c],
                          "column '%s': expected an id of 1 to %zu characters", t->names[c], size - 1);
    snprintf(out, size, "%s", s);
    return TRAM_OK;
}

/* Duplicate ids by sorting references (n log n: pair files can be large). */
typedef struct idref {
    const char *id;
    size_t i;
} idref;

static int idref_cmp(const void *a, const void *b)
{
    const idref *x = a, *y = b;
    int c = strcmp(x->id, y->id);
    return c ? c : (x->i > y->i) - (x->i < y->i);
}

static tram_status unique_ids(const char *name, char (*ids)[TRAM_POINT_ID_MAX], const long *line,
                              size_t n, tram_error *err)
{
    if (n < 2) return TRAM_OK;
    idref *refs = tram__malloc(n * sizeof *refs);
    if (!refs) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    for (size_t i = 0; i < n; i++) refs[i] = (idref){ids[i], i};
    qsort(refs, n, sizeof *refs, idref_cmp);
    tram_status st = TRAM_OK;
    for (size_t k = 1; k < n && st == TRAM_OK; k++)
        if (strcmp(refs[k].id, refs[k - 1].id) == 0)
            st = tram__fail(err, TRAM_EINPUT, name, line[refs[k].i], 0,
                            "duplicate point id '%s' (first at line %ld)", refs[k].id,
                            line[refs[k - 1].i]);
    tram__free(refs);
    return st;
}

void tram_point_pairs_destroy(tram_point_pairs *p)
{
    if (!p) return;
    tram__free(p->from);
    tram__free(p->to);
    tram__free(p->weight);
    tram__free(p->id);
    tram__free(p->line);
    tram__free(p);
}

tram_status tram_point_pairs_read_buffer(const char *name, const char *data, size_t len,
                                         tram_length_unit unit, tram_point_pairs **out,
                                         tram_error *err)
{
    *out = NULL;
    tram__table *t;
    tram_status st = tram__table_parse(name, data, len, &t, err);
    if (st != TRAM_OK) return st;
    tram_point_pairs *p = tram__calloc(1, sizeof *p);
    static const char *const known[] = {"point", "weight", "from_x", "from_y", "from_z",
                                        "to_x",  "to_y",   "to_z",   NULL};
    int cols[6], cid = tram__table_col(t, "point"), cw = tram__table_col(t, "weight");
    static const char *const names[6] = {"from_x", "from_y", "from_z", "to_x", "to_y", "to_z"};
    if (!p) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    snprintf(p->source, sizeof p->source, "%s", name);
    if ((st = units(t, "tram-pairs-1", unit, &p->length_unit, err)) != TRAM_OK) goto done;
    if ((st = known_columns(t, known,
                            "from_x,from_y[,from_z],to_x,to_y[,to_z], and optionally point, weight",
                            err)) != TRAM_OK)
        goto done;
    int hz_from = tram__table_col(t, "from_z") >= 0, hz_to = tram__table_col(t, "to_z") >= 0;
    if (hz_from != hz_to) {
        st = tram__fail(err, TRAM_EINPUT, name, t->header_line, 0,
                        "%s without %s: give z for both point lists (3D) or for neither (2D)",
                        hz_from ? "from_z" : "to_z", hz_from ? "to_z" : "from_z");
        goto done;
    }
    p->dim = hz_from ? 3 : 2;
    for (int k = 0; k < 6; k++) {
        if (p->dim == 2 && (k == 2 || k == 5)) continue;
        if ((st = need(t, names[k], &cols[k], err)) != TRAM_OK) goto done;
    }
    size_t n = t->nrows, d = (size_t)p->dim;
    p->n = n;
    p->from = tram__malloc((n ? n : 1) * d * sizeof *p->from);
    p->to = tram__malloc((n ? n : 1) * d * sizeof *p->to);
    p->id = tram__calloc(n ? n : 1, sizeof *p->id);
    p->line = tram__malloc((n ? n : 1) * sizeof *p->line);
    if (cw >= 0) p->weight = tram__malloc((n ? n : 1) * sizeof *p->weight);
    if (!p->from || !p->to || !p->id || !p->line || (cw >= 0 && !p->weight)) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    for (size_t r = 0; r < n; r++) {
        p->line[r] = t->row_line[r];
        for (size_t a = 0; a < d; a++) {
            if ((st = tram__table_number(t, r, cols[a], &p->from[r * d + a], err)) != TRAM_OK ||
                (st = tram__table_number(t, r, cols[3 + a], &p->to[r * d + a], err)) != TRAM_OK)
                goto done;
        }
        if (cw >= 0) {
            if ((st = tram__table_number(t, r, cw, &p->weight[r], err)) != TRAM_OK) goto done;
            if (p->weight[r] < 0) {
                st = tram__fail(err, TRAM_EINPUT, name, t->row_line[r], t->cell_col[r * t->ncols + (size_t)cw],
                                "weight %g: expected a number >= 0", p->weight[r]);
                goto done;
            }
        }
        if (cid >= 0) {
            if ((st = id_of(t, r, cid, p->id[r], sizeof p->id[r], err)) != TRAM_OK) goto done;
        } else {
            snprintf(p->id[r], sizeof p->id[r], "%zu", r + 1);
        }
    }
    if (cid >= 0) st = unique_ids(name, p->id, p->line, n, err);
done:
    tram__table_free(t);
    if (st != TRAM_OK) {
        tram_point_pairs_destroy(p);
        return st;
    }
    *out = p;
    return TRAM_OK;
}

tram_status tram_point_pairs_read_file(const char *path, tram_length_unit unit,
                                       tram_point_pairs **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_point_pairs_read_buffer(strcmp(path, "-") ? path : "<stdin>", data, len, unit, out, err);
    tram__free(data);
    return st;
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
static tram_status unique_obs(const tram_point_obs *o, const tram_records *rec, tram_error *err)
{
    obsref *refs = tram__malloc((o->n ? o->n : 1) * sizeof *refs);
    if (!refs) return tram__fail(err, TRAM_ENOMEM, o->source, 0, 0, "out of memory");
    for (size_t i = 0; i < o->n; i++) refs[i] = (obsref){o->station[i], o->point[i], i};
    qsort(refs, o->n, sizeof *refs, obs_cmp);
    tram_status st = TRAM_OK;
    for (size_t k = 1; k < o->n && st == TRAM_OK; k++) {
        size_t a = refs[k - 1].i, b = refs[k].i;
        if (o->station[a] == o->station[b] && o->point[a] == o->point[b])
            st = tram__fail(err, TRAM_EINPUT, o->source, o->line[b], 0,
                            "point '%s' of station '%s' given twice (first at line %ld)",
                            o->point_id[o->point[b]], rec->stations[o->station[b]].id, o->line[a]);
    }
    tram__free(refs);
    return st;
}

void tram_point_obs_destroy(tram_point_obs *o)
{
    if (!o) return;
    tram__free(o->station);
    tram__free(o->point);
    tram__free(o->xyz);
    tram__free(o->line);
    tram__free(o->point_id);
    tram__free(o);
}

tram_status tram_point_obs_read_buffer(const char *name, const char *data, size_t len,
                                       const tram_records *rec, tram_point_obs **out,
                                       tram_error *err)
{
    *out = NULL;
    tram__table *t;
    tram_status st = tram__table_parse(name, data, len, &t, err);
    if (st != TRAM_OK) return st;
    tram_point_obs *o = tram__calloc(1, sizeof *o);
    static const char *const known[] = {"station", "point", "x", "y", "z", NULL};
    int cs, cp, cx, cy, cz;
    tram_length_unit u;
    size_t n = t->nrows;
    if (!o) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    snprintf(o->source, sizeof o->source, "%s", name);
    if ((st = units(t, "tram-observations-1", TRAM_LENGTH_UNSET, &u, err)) != TRAM_OK ||
        (st = known_columns(t, known, "station,point,x,y,z", err)) != TRAM_OK ||
        (st = need(t, "station", &cs, err)) != TRAM_OK || (st = need(t, "point", &cp, err)) != TRAM_OK ||
        (st = need(t, "x", &cx, err)) != TRAM_OK || (st = need(t, "y", &cy, err)) != TRAM_OK ||
        (st = need(t, "z", &cz, err)) != TRAM_OK)
        goto done;
    double f = tram_unit_length_factor(u, rec->length_unit);
    o->n = n;
    o->station = tram__malloc((n ? n : 1) * sizeof *o->station);
    o->point = tram__malloc((n ? n : 1) * sizeof *o->point);
    o->xyz = tram__malloc((n ? n : 1) * 3 * sizeof *o->xyz);
    o->line = tram__malloc((n ? n : 1) * sizeof *o->line);
    o->point_id = tram__calloc(n ? n : 1, sizeof *o->point_id);
    if (!o->station || !o->point || !o->xyz || !o->line || !o->point_id) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    for (size_t r = 0; r < n; r++) {
        char sid[TRAM_STATION_ID_MAX], pid[TRAM_POINT_ID_MAX];
        o->line[r] = t->row_line[r];
        if ((st = id_of(t, r, cs, sid, sizeof sid, err)) != TRAM_OK ||
            (st = id_of(t, r, cp, pid, sizeof pid, err)) != TRAM_OK)
            goto done;
        size_t k;
        for (k = 0; k < rec->count; k++)
            if (strcmp(rec->stations[k].id, sid) == 0) break;
        if (k == rec->count) {
            st = tram__fail(err, TRAM_EINPUT, name, t->row_line[r], t->cell_col[r * t->ncols + (size_t)cs],
                            "station '%s' is not in the record file %s", sid, rec->source);
            goto done;
        }
        o->station[r] = k;
        for (k = 0; k < o->npoints; k++)
            if (strcmp(o->point_id[k], pid) == 0) break;
        if (k == o->npoints) snprintf(o->point_id[o->npoints++], TRAM_POINT_ID_MAX, "%s", pid);
        o->point[r] = k;
        int c3[3] = {cx, cy, cz};
        for (int a = 0; a < 3; a++) {
            if ((st = tram__table_number(t, r, c3[a], &o->xyz[3 * r + (size_t)a], err)) != TRAM_OK)
                goto done;
            o->xyz[3 * r + (size_t)a] *= f;
        }
    }
    if (n == 0) st = tram__fail(err, TRAM_EINPUT, name, t->header_line, 0, "no observed points");
    if (st == TRAM_OK) st = unique_obs(o, rec, err);
done:
    tram__table_free(t);
    if (st != TRAM_OK) {
        tram_point_obs_destroy(o);
        return st;
    }
    *out = o;
    return TRAM_OK;
}

tram_status tram_point_obs_read_file(const char *path, const tram_records *r,
                                     tram_point_obs **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_point_obs_read_buffer(path, data, len, r, out, err);
    tram__free(data);
    return st;
}

void tram_point_model_destroy(tram_point_model *m)
{
    if (!m) return;
    tram__free(m->id);
    tram__free(m->xyz);
    tram__free(m->line);
    tram__free(m);
}

tram_status tram_point_model_read_buffer(const char *name, const char *data, size_t len,
                                         const tram_records *rec, tram_point_model **out,
                                         tram_error *err)
{
    *out = NULL;
    tram__table *t;
    tram_status st = tram__table_parse(name, data, len, &t, err);
    if (st != TRAM_OK) return st;
    tram_point_model *m = tram__calloc(1, sizeof *m);
    static const char *const known[] = {"point", "x", "y", "z", NULL};
    int cp, cx, cy, cz;
    tram_length_unit u;
    size_t n = t->nrows;
    if (!m) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    snprintf(m->source, sizeof m->source, "%s", name);
    if ((st = units(t, "tram-model-1", TRAM_LENGTH_UNSET, &u, err)) != TRAM_OK ||
        (st = known_columns(t, known, "point,x,y,z", err)) != TRAM_OK ||
        (st = need(t, "point", &cp, err)) != TRAM_OK || (st = need(t, "x", &cx, err)) != TRAM_OK ||
        (st = need(t, "y", &cy, err)) != TRAM_OK || (st = need(t, "z", &cz, err)) != TRAM_OK)
        goto done;
    double f = tram_unit_length_factor(u, rec->length_unit);
    m->n = n;
    m->id = tram__calloc(n ? n : 1, sizeof *m->id);
    m->xyz = tram__malloc((n ? n : 1) * 3 * sizeof *m->xyz);
    m->line = tram__malloc((n ? n : 1) * sizeof *m->line);
    if (!m->id || !m->xyz || !m->line) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    for (size_t r = 0; r < n; r++) {
        m->line[r] = t->row_line[r];
        if ((st = id_of(t, r, cp, m->id[r], sizeof m->id[r], err)) != TRAM_OK) goto done;
        int c3[3] = {cx, cy, cz};
        for (int a = 0; a < 3; a++) {
            if ((st = tram__table_number(t, r, c3[a], &m->xyz[3 * r + (size_t)a], err)) != TRAM_OK)
                goto done;
            m->xyz[3 * r + (size_t)a] *= f;
        }
    }
    st = unique_ids(name, m->id, m->line, n, err);
done:
    tram__table_free(t);
    if (st != TRAM_OK) {
        tram_point_model_destroy(m);
        return st;
    }
    *out = m;
    return TRAM_OK;
}

tram_status tram_point_model_read_file(const char *path, const tram_records *r,
                                       tram_point_model **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_point_model_read_buffer(path, data, len, r, out, err);
    tram__free(data);
    return st;
}
