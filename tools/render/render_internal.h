/*
 * render_internal.h - pieces shared by render.c and render_sets.c: the
 * seeded random streams (splitmix64, Steele, Lea & Flood 2014; normals by
 * Box and Muller 1958).  Not installed, not part of libtram.
 */
#ifndef TRAM_RENDER_INTERNAL_H
#define TRAM_RENDER_INTERNAL_H

#include <math.h>

#include "core/tram_internal.h"

/* ---------------------------------------------------------------------------
 * Random numbers: one splitmix64 stream per purpose, so that e.g. adding
 * clutter does not change the noise. */
typedef struct rng {
    unsigned long long s;
} rng;

static inline rng rng_stream(unsigned long long seed, unsigned long long stream)
{
    rng r = {seed * 0xD1342543DE82EF95ULL + stream * 0x9E3779B97F4A7C15ULL};
    (void)tram__splitmix64(&r.s);
    return r;
}

static inline double rng_uniform(rng *r)
{
    return (double)(tram__splitmix64(&r->s) >> 11) * (1.0 / 9007199254740992.0);
}

static inline double rng_range(rng *r, double lo, double hi) { return lo + (hi - lo) * rng_uniform(r); }

/* Box-Muller: two independent standard normals per pair of uniforms. */
static inline void rng_normal2(rng *r, double out[2])
{
    double u1 = rng_uniform(r), u2 = rng_uniform(r);
    if (u1 < 1e-300) u1 = 1e-300;
    double m = sqrt(-2.0 * log(u1));
    out[0] = m * cos(2.0 * TRAM_PI * u2);
    out[1] = m * sin(2.0 * TRAM_PI * u2);
}

#endif
