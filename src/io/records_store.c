/*
 * records_store.c - the storage of a record set: compact stations (id,
 * line, the two poses) and, beside them, arrays of what only some files
 * have - the numbers as read (for tram_records_rebuild, the convention
 * checks), the joint readings, the source columns of the rotations, the
 * ids.  A station of a quaternion eye-in-hand CSV file takes 272 bytes
 * plus 112 of numbers as read, 8 of columns and its id, against 808 in
 * one struct with room for every representation (docs/performance.md):
 * fewer fresh pages to fault in, which is what made reading superlinear.
 * No published method; plain bookkeeping.
 */
#include "io/records_store_internal.h"

#include <string.h>

tram_status tram__records_reserve(tram_records *r, size_t cap, const rec_layout *l,
                                  size_t id_bytes, const char *name, long line, tram_error *err)
{
    if (!cap) cap = 1;
    r->raw_off[0] = 0;
    r->raw_off[1] = (size_t)l->nslots[0];
    r->raw_stride = (size_t)(l->nslots[0] + l->nslots[1]);
    r->n_joints = (size_t)l->n_joints;
    int ok = (r->stations = tram__malloc(cap * sizeof *r->stations)) != NULL;
    ok = ok && (r->id_pool = tram__malloc(id_bytes ? id_bytes : 1)) != NULL;
    if (ok && r->raw_stride)
        ok = (r->raw = tram__malloc(cap * r->raw_stride * sizeof *r->raw)) != NULL;
    if (ok && r->raw_stride && l->with_cols)
        ok = (r->rot_col = tram__calloc(cap * TRAM_BLOCK_COUNT, sizeof *r->rot_col)) != NULL;
    if (ok && l->n_joints) {
        size_t nj = (size_t)l->n_joints;
        ok = (r->joints = tram__malloc(cap * nj * sizeof *r->joints)) != NULL;
        if (ok && l->with_cols)
            ok = (r->joint_col = tram__calloc(cap * nj, sizeof *r->joint_col)) != NULL;
    }
    if (!ok) return tram__fail(err, TRAM_ENOMEM, name, line, 0, "out of memory");
    tram__hint_fill(r->stations, cap * sizeof *r->stations);
    tram__hint_fill(r->raw, cap * r->raw_stride * sizeof *r->raw);
    tram__hint_fill(r->id_pool, id_bytes);
    return TRAM_OK;
}

const char *tram__records_put_id(tram_records *r, size_t *used, const char *s, size_t len)
{
    char *d = r->id_pool + *used;
    memcpy(d, s, len);
    d[len] = '\0';
    *used += len + 1;
    return d;
}

tram_status tram__records_fit_ids(tram_records *r, size_t used, const char *name, tram_error *err)
{
    char *pool = tram__malloc(used ? used : 1);
    if (!pool) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    if (used) memcpy(pool, r->id_pool, used);
    for (size_t i = 0; i < r->count; i++)
        r->stations[i].id = pool + (r->stations[i].id - r->id_pool);
    tram__free(r->id_pool);
    r->id_pool = pool;
    return TRAM_OK;
}

void tram__records_free_arrays(tram_records *r)
{
    tram__free(r->stations);
    tram__free(r->raw);
    tram__free(r->rot_col);
    tram__free(r->joints);
    tram__free(r->joint_col);
    tram__free(r->id_pool);
    r->stations = NULL;
    r->raw = r->joints = NULL;
    r->rot_col = r->joint_col = NULL;
    r->id_pool = NULL;
}

/* A copy of n bytes of p, or NULL (also when p is NULL); *ok cleared on an
 * allocation failure. */
static void *dup_bytes(const void *p, size_t n, int *ok)
{
    if (!p || !*ok) return NULL;
    void *c = tram__malloc(n ? n : 1);
    if (!c) {
        *ok = 0;
        return NULL;
    }
    if (n) memcpy(c, p, n);
    return c;
}

/* A station's id ("" for none, in a set built by hand). */
static const char *id_of(const tram_station *s) { return s->id ? s->id : ""; }

tram_status tram__records_copy_arrays(tram_records *dst, const tram_records *src)
{
    size_t n = src->count, ids = 0;
    for (size_t i = 0; i < n; i++) ids += strlen(id_of(&src->stations[i])) + 1;
    int ok = 1;
    dst->stations = dup_bytes(src->stations, (n ? n : 1) * sizeof *src->stations, &ok);
    if (!src->stations) ok = (dst->stations = tram__malloc(sizeof *dst->stations)) != NULL;
    dst->raw = dup_bytes(src->raw, n * src->raw_stride * sizeof *src->raw, &ok);
    dst->rot_col = dup_bytes(src->rot_col, n * TRAM_BLOCK_COUNT * sizeof *src->rot_col, &ok);
    dst->joints = dup_bytes(src->joints, n * src->n_joints * sizeof *src->joints, &ok);
    dst->joint_col = dup_bytes(src->joint_col, n * src->n_joints * sizeof *src->joint_col, &ok);
    dst->id_pool = ok ? tram__malloc(ids ? ids : 1) : NULL;
    if (!ok || !dst->id_pool) {
        tram__records_free_arrays(dst);
        return TRAM_ENOMEM;
    }
    size_t used = 0;
    for (size_t i = 0; i < n; i++) {
        const char *id = id_of(&src->stations[i]);
        dst->stations[i].id = tram__records_put_id(dst, &used, id, strlen(id));
    }
    return TRAM_OK;
}
