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

#endif
