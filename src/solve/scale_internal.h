/*
 * scale_internal.h - the sensor's length scale (scale.c): its test and
 * report, and its fit for pose records, shared by the pose pipeline
 * (solve.c) and the solve from observed points (points_solve.c).
 */
#ifndef TRAM_SCALE_INTERNAL_H
#define TRAM_SCALE_INTERNAL_H

#include "tram/solve.h"
#include "core/tram_internal.h"

/* Thresholds (docs/solve.md, "Sensor length scale"; common practice). */
#define TRAM__SCALE_NOTE_Z 3.0     /* |s - 1| / sigma above this: significant */
#define TRAM__SCALE_WARN_REL 0.02  /* |s - 1| above this (and significant)   */

/* Store s and its variance var in sol->sensor_scale (fitted: whether the
 * result uses s) and add the note (significant, not fitted) or the
 * warning (significant and more than 2% from 1).  A var that is not
 * positive and finite leaves the scale not estimated.  TRAM_ENOMEM only. */
tram_status tram__scale_report(tram_solution *sol, double s, double var, int fitted);

/* Pose records: the scale of the sensor translations S_i estimated with X
 * and Z from sol's refined result (sol's noise as weights, its outliers
 * excluded).  With opt->fit_scale, sol's X, Z and uncertainty become those
 * of the fit and S's translations are multiplied by the scale (so later
 * residuals use it).  TRAM_ENOMEM only; a fit that fails leaves sol. */
tram_status tram__scale_poses(const tram_se3 *P, tram_se3 *S, size_t n,
                              const tram_solve_options *opt, tram_solution *sol);

#endif
