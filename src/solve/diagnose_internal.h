/*
 * diagnose_internal.h - checks that refuse to guess (diagnose.c):
 * observability, the convention doctor and the length-unit check.
 */
#ifndef TRAM_DIAGNOSE_INTERNAL_H
#define TRAM_DIAGNOSE_INTERNAL_H

#include "tram/solve.h"
#include "core/tram_internal.h"

/* Observability figures into s; adds error diagnostics and returns 1 when
 * the data cannot determine the answer. */
int tram__observability(const tram_se3 *P, size_t n, tram_setup setup, tram_solution *s);

/* Convention checks: re-read the data under the usual mistakes and report
 * a reading that fits far better. */
tram_status tram__check_conventions(const tram_records *r, tram_setup setup, tram_solution *s,
                                    const tram_trust_options *t);

/* The fit the convention doctor runs on each reading of the data. */
typedef tram_status (*tram__fit_fn)(const tram_records *r, tram_setup setup, const void *ctx,
                                    double *med_rot, double *med_tr, double *mount_len);
/* The doctor with another fit (e.g. of observed points); max_n > 0
 * subsamples the stations.  t (may be NULL) and wd (the working distance,
 * length) give the plausibility gate that the declared reading is held
 * to: a declared reading that fails it is replaced by one that passes. */
tram_status tram__check_conventions_with(const tram_records *r, tram_setup setup, tram_solution *s,
                                         tram__fit_fn fit, const void *ctx, size_t max_n,
                                         const tram_trust_options *t, double wd);

/* One reading of a record file under a usual mistake (the doctor's list):
 * the conventions to rebuild it with, a code and the fix in words. */
typedef struct tram__reading {
    tram_block_convention conv[TRAM_BLOCK_COUNT];
    char code[40];
    char fix[360];
} tram__reading;

/* The doctor's readings of r (singles and combinations) into out (at most
 * cap); returns their number. */
size_t tram__convention_readings(const tram_records *r, tram_setup setup, tram__reading *out,
                                 size_t cap);

/* Plausibility of the declared length unit from the robot's translations. */
tram_status tram__check_units(const tram_records *r, tram_solution *s);

#endif
