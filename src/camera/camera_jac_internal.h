/*
 * camera_jac_internal.h - the Brown-Conrady projection of tram/camera.h with
 * its analytic Jacobians, shared by the pose from pixels (pose.c) and the
 * hand-eye refinement on pixels (solve/pixels_solve.c).
 */
#ifndef TRAM_CAMERA_JAC_INTERNAL_H
#define TRAM_CAMERA_JAC_INTERNAL_H

#include "core/tram_internal.h"
#include "tram/camera.h"

/* Intrinsic parameters in a fixed order: fx, fy, cx, cy, skew, k1, k2, k3,
 * p1, p2 (pixels for the first five, unitless for the rest). */
enum { TRAM__CAM_NPARAM = 10 };
void tram__camera_params(const tram_camera *c, double v[TRAM__CAM_NPARAM]);
void tram__camera_set_params(tram_camera *c, const double v[TRAM__CAM_NPARAM]);
/* Indices of the parameters that --refine-intrinsics frees for c's
 * distortion model (fx, fy, cx, cy and the model's coefficients; skew is
 * held).  Returns their number. */
int tram__camera_free_params(const tram_camera *c, int idx[TRAM__CAM_NPARAM]);

/* Pixel uv of p (sensor frame) as tram_camera_project, with Jp (2x3,
 * row-major) = d uv / d p and, when Ji is not NULL, Ji (2 x 10) = d uv / d
 * (intrinsics in the order above).  Returns 0, uv untouched, when Z <= 0
 * or the ray lies beyond the fold of the distortion (as the projection). */
int tram__camera_project_jac(const tram_camera *c, const double p[3], double uv[2], double Jp[6],
                             double *Ji);

#endif
