/*
 * alloc.c - the library's allocation hooks: every allocation of libtram
 * goes through tram__malloc, tram__calloc and tram__realloc, and every
 * release through tram__free.
 *
 * This file holds nothing else, on purpose: a test program that defines
 * these four functions itself is linked with its own versions instead of
 * this object (a static archive member is only pulled in for a symbol that
 * is still undefined), which is how tests/test_alloc.c makes allocations
 * fail on demand without any global switch in the library.
 *
 * Contract: memory from these hooks must be releasable by free(), because
 * a few results are handed to the caller to free() (tram_handeye_pairs, the
 * *_to_json texts).  A request for 0 bytes allocates 1, so that NULL always
 * means failure.
 */
#include "core/tram_internal.h"

#include <stdlib.h>

void *tram__malloc(size_t n) { return malloc(n ? n : 1); }
void *tram__calloc(size_t count, size_t size) { return calloc(count ? count : 1, size ? size : 1); }
void *tram__realloc(void *p, size_t n) { return realloc(p, n ? n : 1); }
void tram__free(void *p) { free(p); }
