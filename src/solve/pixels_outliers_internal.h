/*
 * pixels_outliers_internal.h - the outlier rules of the solve from pixels
 * (pixels_outliers.c), used by pixels_solve.c.  Arrays per observation:
 * res (reprojection distance, px; NaN or INFINITY when not projected), ost
 * (its station, SIZE_MAX for none), excl (0 used, 1 no station, 2 flagged
 * corner, 3 flagged station); per station: st_excl, pose_rms (RMS distance
 * of the station's own pose fit, px).
 */
#ifndef TRAM_PIXELS_OUTLIERS_INTERNAL_H
#define TRAM_PIXELS_OUTLIERS_INTERNAL_H

#include <stddef.h>

/* Median of the distances not excluded over sqrt(2 ln 2), at least 1e-9;
 * scratch holds n doubles. */
double tram__pixel_robust_sigma(const double *res, const int *excl, size_t n, double *scratch);
/* Flag (excl = 2) the corners beyond sqrt(-2 ln(0.01 / m)) sigmas (m corners
 * tested), each in the larger of its station's and the pooled sigma. */
void tram__pixel_flag_corners(const double *res, const size_t *ost, size_t n, size_t nst, int *excl,
                              double *scratch);
/* The pixel side of the station test for the stations with st_excl set:
 * those that pass get st_excl 0, those that fail have their corners' excl
 * set to 3.  Returns the number that fail. */
size_t tram__pixel_station_test(const double *res, const size_t *ost, size_t n, size_t nst,
                                const double *pose_rms, int *st_excl, int *excl);

#endif
