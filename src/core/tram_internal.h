/*
 * tram_internal.h - internals shared between the library's source files.
 * Not installed; nothing here is part of the public API.
 */
#ifndef TRAM_INTERNAL_H
#define TRAM_INTERNAL_H

#include "tram/common.h"

#define TRAM_PI 3.14159265358979323846

#if defined(__GNUC__)
#define TRAM_PRINTF(a, b) __attribute__((format(printf, a, b)))
#else
#define TRAM_PRINTF(a, b)
#endif

/* Fill err (if not NULL) and return status. */
tram_status tram__fail(tram_error *err, tram_status status, const char *file, long line,
                       long column, const char *fmt, ...) TRAM_PRINTF(6, 7);

static inline double tram__sq(double x) { return x * x; }
static inline double tram__dot3(const double a[3], const double b[3])
{
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}
static inline void tram__cross3(const double a[3], const double b[3], double out[3])
{
    double c0 = a[1] * b[2] - a[2] * b[1];
    double c1 = a[2] * b[0] - a[0] * b[2];
    double c2 = a[0] * b[1] - a[1] * b[0];
    out[0] = c0; out[1] = c1; out[2] = c2;
}

/* splitmix64 (Steele, Lea & Flood, OOPSLA 2014): a small seedable generator
 * for resampling; the state advances on every call. */
static inline unsigned long long tram__splitmix64(unsigned long long *s)
{
    unsigned long long z = (*s += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
}

/* Line and column (1-based) of byte offset off in data. */
void tram__offset_pos(const char *data, size_t off, long *line, long *col);


/* Allocation through one hook, so tests can make allocations fail. */
void *tram__malloc(size_t n);
void *tram__calloc(size_t count, size_t size);
void *tram__realloc(void *p, size_t n);
void tram__free(void *p);
/* A hint that the n bytes at p are about to be filled (memhint.c: huge
 * pages for large arrays); never fails, changes no contents. */
void tram__hint_fill(void *p, size_t n);

#endif
