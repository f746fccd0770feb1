/*
 * quickfit_internal.h - the capped quick fit (quickfit.c) that scores one
 * reading of the data: the convention doctor, the pairing test and the
 * plausibility checks compare many readings with it, so it stops after a
 * few Gauss-Newton steps.
 */
#ifndef TRAM_QUICKFIT_INTERNAL_H
#define TRAM_QUICKFIT_INTERNAL_H

#include "tram/se3.h"
#include "core/tram_internal.h"

/* Steps of the capped fit: a wrong reading is obvious after the closed
 * form and a couple of steps; a right one has converged to well within
 * the noise by then (docs/performance.md). */
#define TRAM_QUICKFIT_STEPS 3

/* Park-Martin closed form on 2n station pairs (each with the next and
 * with the one half the list away), then at most max_steps Cauchy-weighted Gauss-Newton steps on
 * both unknowns (stopping early when the cost falls by less than 1e-3 of
 * itself).  Fills the median rotation residual (rad) and the median
 * translation residual of the stations; X and Z may be NULL.  Returns
 * TRAM_OK, TRAM_ENOMEM, or the closed form's failure status. */
tram_status tram__capped_fit(const tram_se3 *P, const tram_se3 *S, size_t n, int max_steps,
                             double *med_rot, double *med_trans, tram_se3 *X, tram_se3 *Z);

#endif
