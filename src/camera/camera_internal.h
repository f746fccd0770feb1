/*
 * camera_internal.h - pieces of the camera model (camera.c) shared with
 * the calibration (intrinsics_lm.c).
 */
#ifndef TRAM_CAMERA_INTERNAL_H
#define TRAM_CAMERA_INTERNAL_H

#include "tram/camera.h"

/* Jacobian J = d(xd, yd) / d(x, y) of the Brown-Conrady distortion at the
 * normalised point (x, y), row-major 2x2. */
void tram__camera_distort_jacobian(const tram_camera *c, double x, double y, double J[4]);

/* r^2 (normalised, undistorted) at the fold of the radial distortion,
 * where d/dr [r (1 + k1 r^2 + k2 r^4 + k3 r^6)] = 0 (INFINITY: none). */
double tram__camera_fold_r2(const tram_camera *c);
/* 1 when the normalised, undistorted r^2 lies inside the fold (r2 below
 * tram__camera_fold_r2), 0 beyond it; cheap for rays far inside. */
int tram__camera_inside_fold(const tram_camera *c, double r2);
/* tram_camera_unproject from the normalised start (inside the fold), the
 * fold's r^2 given: 1 solved (xy inside the fold), 0 no convergence in 50
 * steps, -1 the pixel lies beyond the fold (no ray inside maps to it). */
int tram__camera_unproject_from(const tram_camera *c, double fold_r2, const double uv[2],
                                const double start[2], double xy[2]);
/* tram_camera_unproject with the same three outcomes (and with the fold's
 * r^2 given, from the pixel itself). */
int tram__camera_unproject_why(const tram_camera *c, const double uv[2], double xy[2]);
int tram__camera_unproject_fold(const tram_camera *c, double fold_r2, const double uv[2], double xy[2]);

#endif
