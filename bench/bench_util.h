/*
 * bench_util.h - pieces shared by the benchmark programs: a monotonic
 * clock and a seeded random source (splitmix64, Steele, Lea & Flood,
 * OOPSLA 2014; normals by Box & Muller, 1958).  Each program sets
 * bench_state to its own fixed seed.
 */
#ifndef TRAM_BENCH_UTIL_H
#define TRAM_BENCH_UTIL_H

#include <math.h>
#include <stdint.h>
#include <time.h>

static uint64_t bench_state = 12345;

static inline double uniform(void)
{
    uint64_t z = (bench_state += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return (double)((z ^ (z >> 31)) >> 11) * (1.0 / 9007199254740992.0);
}

static inline double normal(void)
{
    double u1 = uniform(), u2 = uniform();
    return sqrt(-2.0 * log(u1 > 1e-300 ? u1 : 1e-300)) * cos(6.283185307179586 * u2);
}

static inline double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

#endif
