/*
 * pose_internal.h - pieces of the pose from pixels (pose.c, epnp.c) shared
 * with the hand-eye refinement on pixels (solve/pixels_solve.c).
 */
#ifndef TRAM_POSE_INTERNAL_H
#define TRAM_POSE_INTERNAL_H

#include "core/tram_internal.h"
#include "tram/pose.h"

/* Shape of a point set: 2 planar, 3 spread in 3D; 1 collinear and 0
 * coincident (both refused).  Planar means the smallest principal extent
 * is at most TRAM__PLANAR_RATIO of the largest. */
#define TRAM__PLANAR_RATIO 0.02
int tram__points_shape(const double *xyz, size_t n, tram_se3 *T_target_plane);

/* Linear starts on undistorted normalised coordinates xy (2n). */
tram_status tram__pose_homography(const double *xyz, const double *xy, size_t n,
                                  const tram_se3 *T_target_plane, tram_se3 *T_sensor_target,
                                  tram_error *err);
/* EPnP (Lepetit, Moreno-Noguer & Fua 2009), n >= 4 non-coplanar points. */
tram_status tram__pose_epnp(const double *xyz, const double *xy, size_t n,
                            tram_se3 *T_sensor_target, tram_error *err);

/* Levenberg-Marquardt on the pixel residuals from T (in place); w: per
 * point weights (NULL: 1; 0 leaves a point out).  res_px (n, may be NULL):
 * each point's reprojection distance at the end. */
tram_status tram__pose_refine(const tram_camera *cam, const double *xyz, const double *uv,
                              const double *w, size_t n, tram_se3 *T, int *iterations,
                              double *res_px);

#endif
