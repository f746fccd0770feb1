/*
 * records_store_internal.h - the storage of a record set (records_store.c):
 * the compact stations and, beside them, the arrays of the numbers as
 * read, the joint readings, the source columns and the id pool, each only
 * when the file has them (docs/performance.md: reading record files).
 */
#ifndef TRAM_RECORDS_STORE_INTERNAL_H
#define TRAM_RECORDS_STORE_INTERNAL_H

#include "tram/records.h"
#include "core/tram_internal.h"

/* What the arrays of a record set hold per station. */
typedef struct rec_layout {
    int nslots[TRAM_BLOCK_COUNT]; /* raw numbers per block (0: block absent) */
    int n_joints;                 /* joint readings (0: none)                  */
    int with_cols;                /* keep the source columns                   */
} rec_layout;

/* Room for cap stations of layout l and id_bytes of ids (every id with its
 * NUL) in r, whose arrays must be empty.  Only what is written is touched,
 * so a generous cap costs address space, not memory.  TRAM_ENOMEM naming
 * name:line on failure (r keeps what was allocated; destroy frees it). */
tram_status tram__records_reserve(tram_records *r, size_t cap, const rec_layout *l,
                                  size_t id_bytes, const char *name, long line, tram_error *err);

/* The raw numbers of station i's block b (in the reserved room). */
static inline double *tram__records_raw(const tram_records *r, size_t i, int b)
{
    return r->raw + i * r->raw_stride + r->raw_off[b];
}

/* Copy the id [s, s + len) into the pool at *used (advanced); its address. */
const char *tram__records_put_id(tram_records *r, size_t *used, const char *s, size_t len);

/* Move the ids (used bytes of the pool) into a pool of their size, so
 * that the room reserved for them is given back.  TRAM_ENOMEM naming name
 * on failure. */
tram_status tram__records_fit_ids(tram_records *r, size_t used, const char *name, tram_error *err);

/* Free every array of r (not r itself). */
void tram__records_free_arrays(tram_records *r);

/* Deep copies of src's arrays into dst (a shallow copy of src whose array
 * pointers are to be replaced); ids are copied into a new pool whoever
 * owned them.  TRAM_ENOMEM, with dst's arrays NULL, on failure. */
tram_status tram__records_copy_arrays(tram_records *dst, const tram_records *src);

#endif
