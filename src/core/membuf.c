/*
 * membuf.c - a growing byte buffer in memory (membuf_internal.h): the
 * capacity doubles (plus 64 KiB) so that n appends cost O(total) copies.
 * Allocation through tram__realloc, so tests/test_alloc.c can fail it.
 */
#include "core/membuf_internal.h"
#include "core/tram_internal.h"

#include <string.h>

int tram__membuf_put(tram__membuf *b, const void *data, size_t len)
{
    if (b->failed) return -1;
    if (len > b->cap - b->n) {
        size_t nc = 2 * (b->n + len) + 65536;
        unsigned char *q = tram__realloc(b->p, nc);
        if (!q) {
            b->failed = 1;
            return -1;
        }
        b->p = q;
        b->cap = nc;
    }
    if (len) memcpy(b->p + b->n, data, len);
    b->n += len;
    return 0;
}

void tram__membuf_free(tram__membuf *b)
{
    tram__free(b->p);
    b->p = NULL;
    b->n = b->cap = 0;
    b->failed = 0;
}
