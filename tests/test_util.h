/*
 * test_util.h - helpers shared by the unit tests: a seeded random source
 * (splitmix64, seed printed by each test binary), random rotations and
 * poses, and comparisons of rotations by angle (q and -q are the same).
 */
#ifndef TRAM_TEST_UTIL_H
#define TRAM_TEST_UTIL_H

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "tram/tram.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

/* Monte Carlo figure tests (hundreds of seeded solves that prove a rate or a
 * coverage) run in the plain build.  The sanitizer build (make asan sets
 * TRAM_TEST_SANITIZER=1) skips them: the same code paths run under the
 * sanitizers in the other tests, at a fraction of the time. */
#define TEST_FIGURES_IN_PLAIN_BUILD_ONLY()                                                         \
    do {                                                                                           \
        const char *san_ = getenv("TRAM_TEST_SANITIZER");                                          \
        if (san_ && strcmp(san_, "1") == 0) {                                                      \
            printf("[ info     ] sanitizer build: this Monte Carlo figure is checked in the "     \
                   "plain build\n");                                                               \
            skip();                                                                                \
        }                                                                                          \
    } while (0)

typedef struct test_rng {
    uint64_t s;
} test_rng;

static inline uint64_t test_rng_next(test_rng *r)
{
    uint64_t z = (r->s += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
}

/* Uniform in [0, 1). */
static inline double test_rng_uniform(test_rng *r)
{
    return (double)(test_rng_next(r) >> 11) * (1.0 / 9007199254740992.0);
}

static inline double test_rng_normal(test_rng *r)
{
    double u1 = test_rng_uniform(r), u2 = test_rng_uniform(r);
    if (u1 < 1e-300) u1 = 1e-300;
    return sqrt(-2.0 * log(u1)) * cos(2.0 * M_PI * u2);
}

static inline test_rng test_rng_seeded(const char *who, uint64_t seed)
{
    printf("[ seed     ] %s: %llu\n", who, (unsigned long long)seed);
    test_rng r = {seed};
    return r;
}

/* Uniformly distributed rotation (Shoemake, "Uniform random rotations",
 * Graphics Gems III, 1992). */
static inline void test_random_rotation(test_rng *r, tram_mat3 *R)
{
    double u1 = test_rng_uniform(r), u2 = test_rng_uniform(r), u3 = test_rng_uniform(r);
    tram_quat_wxyz q = {sqrt(1 - u1) * sin(2 * M_PI * u2), sqrt(1 - u1) * cos(2 * M_PI * u2),
                        sqrt(u1) * sin(2 * M_PI * u3), sqrt(u1) * cos(2 * M_PI * u3)};
    tram_quat_wxyz_to_mat3(&q, R);
}

static inline void test_random_pose(test_rng *r, double tscale, tram_se3 *T)
{
    tram_mat3 R;
    double t[3];
    test_random_rotation(r, &R);
    for (int i = 0; i < 3; i++) t[i] = tscale * (2.0 * test_rng_uniform(r) - 1.0);
    tram_se3_from_rt(&R, t, T);
}

/* Perturb T on the right: rotation noise sig_rad and translation noise
 * sig_len per axis (Gaussian). */
static inline void test_perturb_pose(test_rng *r, tram_se3 *T, double sig_rad, double sig_len)
{
    double w[3] = {sig_rad * test_rng_normal(r), sig_rad * test_rng_normal(r),
                   sig_rad * test_rng_normal(r)};
    tram_mat3 R, E;
    double t[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_exp(w, &E);
    tram_so3_mul(&R, &E, &R);
    for (int i = 0; i < 3; i++) t[i] += sig_len * test_rng_normal(r);
    tram_se3_from_rt(&R, t, T);
}

/* Assert two rotations agree to `tol_rad` (by angle of a^T b). */
#define assert_rot_near(a, b, tol_rad)                                                  \
    do {                                                                                \
        double ang_ = tram_so3_distance((a), (b));                                      \
        if (!(ang_ <= (tol_rad))) fail_msg("rotation differs by %.3g rad (tol %.3g)", ang_, \
                                           (double)(tol_rad));                          \
    } while (0)

static inline double test_max_abs_diff(const double *a, const double *b, int n)
{
    double m = 0.0;
    for (int i = 0; i < n; i++) {
        double d = fabs(a[i] - b[i]);
        if (!(d <= m)) m = d;
    }
    return m;
}

static inline double tram__sq_t(double v) { return v * v; }

#define assert_close(a, b, tol)                                                          \
    do {                                                                                 \
        double a_ = (a), b_ = (b);                                                       \
        if (!(fabs(a_ - b_) <= (tol))) fail_msg("%s = %.17g, expected %.17g (tol %g)", #a, a_, \
                                                 b_, (double)(tol));                     \
    } while (0)

#endif
