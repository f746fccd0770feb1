/*
 * pairing_internal.h - the pairing test (pairing.c): does the data's own
 * pairing of robot and sensor rows fit far better than random pairings?
 */
#ifndef TRAM_PAIRING_INTERNAL_H
#define TRAM_PAIRING_INTERNAL_H

#include "tram/se3.h"
#include "core/tram_internal.h"

/* Fit of the stations with sensor row perm[i] paired to robot row i
 * (perm == NULL: the file's pairing): the median rotation residual (rad;
 * 0 when the fit has none) and the median translation residual.  A
 * non-OK status other than TRAM_ENOMEM means the pairing cannot be fitted
 * at all (it counts as fitting badly). */
typedef tram_status (*tram__pairing_fit_fn)(const void *ctx, const size_t *perm, size_t n,
                                            double *med_rot, double *med_trans);

typedef struct tram__pairing_result {
    size_t permutations;      /* random pairings fitted                        */
    double ratio_rot;         /* smallest random median over the true one      */
    double ratio_trans;
    int failed;               /* the true pairing is not `factor` times better */
} tram__pairing_result;

/* The test on n stations with `perms` random derangements (no station
 * keeps its own row) drawn from `seed`.  rot_floor and len_floor keep
 * noise-free data from comparing rounding errors.  TRAM_OK or
 * TRAM_ENOMEM; a true pairing that cannot be fitted fails the test. */
tram_status tram__pairing_test(size_t n, size_t perms, unsigned long long seed, double factor,
                               double rot_floor, double len_floor, tram__pairing_fit_fn fit,
                               const void *ctx, tram__pairing_result *out);

/* The same on the poses of P_i X S_i = Z (tram/handeye.h), with the
 * capped quick fit, on at most 40 stations spread over the file. */
tram_status tram__pairing_test_poses(const tram_se3 *P, const tram_se3 *S, size_t n, size_t perms,
                                     unsigned long long seed, double factor,
                                     tram__pairing_result *out);

#endif
