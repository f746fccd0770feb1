/*
 * homography_internal.h - the plane-to-image homography of one view by the
 * normalised direct linear transform (Hartley 1997, "In defense of the
 * eight-point algorithm", IEEE PAMI 19(6)), used by the closed form of
 * Zhang (2000) in intrinsics.c.
 */
#ifndef TRAM_HOMOGRAPHY_INTERNAL_H
#define TRAM_HOMOGRAPHY_INTERNAL_H

#include "core/tram_internal.h"

/* H (3x3, row-major) with (u, v, 1) ~ H (x, y, 1) for the n point pairs
 * xy[2i], xy[2i+1] (target plane) and uv[2i], uv[2i+1] (pixels), scaled
 * to unit Frobenius norm with H[8] >= 0.  TRAM_EUNDETERMINED when n < 4
 * or the points do not fix H (collinear, or fewer than 4 distinct);
 * TRAM_ENOMEM, TRAM_ENUMERIC. */
tram_status tram__homography_dlt(size_t n, const double *xy, const double *uv, double H[9]);

/* The similarity N (3x3, row-major) that moves the centroid of the n
 * points p to the origin and scales their mean distance from it to
 * sqrt(2) (Hartley 1997); identity scale when the points coincide. */
void tram__normalising_transform(size_t n, const double *p, double N[9]);

/* 3x3 products and inverse, row-major; the inverse returns 0 for a
 * singular matrix. */
void tram__mat3_mul(const double A[9], const double B[9], double out[9]);
int tram__mat3_inv(const double A[9], double out[9]);

#endif
