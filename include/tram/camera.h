/*
 * tram/camera.h - the pinhole camera with Brown-Conrady lens distortion.
 *
 * Frames and conventions (docs/camera.md):
 *   - The sensor (camera) frame has its origin at the optical centre, z
 *     along the optical axis into the scene, x toward growing u, y toward
 *     growing v.  A point p = (X, Y, Z) in the sensor frame, Z > 0, is seen.
 *   - Pixels follow tram/image.h: the centre of the top-left pixel is
 *     (0, 0), u to the right, v down.
 *   - Projection (Brown 1966; Conrady 1919 for the decentring terms):
 *       x = X / Z,  y = Y / Z,  r2 = x^2 + y^2
 *       radial = 1 + k1 r2 + k2 r2^2 + k3 r2^3
 *       xd = x radial + 2 p1 x y + p2 (r2 + 2 x^2)
 *       yd = y radial + p1 (r2 + 2 y^2) + 2 p2 x y
 *       u = fx xd + skew yd + cx,   v = fy yd + cy
 *     fx, fy, cx, cy and skew are in pixels; the k and p are unitless.
 *   - Lengths (of poses, boards) carry their own unit; the projection does
 *     not depend on it.
 */
#ifndef TRAM_CAMERA_H
#define TRAM_CAMERA_H

#include "tram/common.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Which distortion coefficients are free; the others are 0. */
typedef enum tram_distortion {
    TRAM_DISTORTION_NONE = 0,    /* no distortion                 */
    TRAM_DISTORTION_RADIAL2,     /* k1, k2                        */
    TRAM_DISTORTION_RADIAL3,     /* k1, k2, k3                    */
    TRAM_DISTORTION_FULL         /* k1, k2, k3, p1, p2            */
} tram_distortion;

typedef struct tram_camera {
    double fx, fy, cx, cy, skew;    /* pixels */
    double k1, k2, k3, p1, p2;      /* Brown-Conrady coefficients */
    tram_distortion distortion;
    size_t width, height;           /* image size in pixels (0: unknown) */
} tram_camera;

/* The model's name ("none", "radial2", "radial3", "full") and its parse
 * (-1 for an unknown name). */
TRAM_API const char *tram_distortion_name(tram_distortion d);
TRAM_API int tram_distortion_parse(const char *name);

/* Normalised image coordinates (x, y) = (X/Z, Y/Z) to distorted ones. */
TRAM_API void tram_camera_distort(const tram_camera *c, const double xy[2], double xyd[2]);
/* Pixel of a point p_sensor (sensor frame, Z > 0).  Returns 0, and
 * leaves uv untouched, when Z <= 0. */
TRAM_API int tram_camera_project(const tram_camera *c, const double p_sensor[3], double uv[2]);
/* Inverse of the distortion and the intrinsic matrix: the normalised
 * undistorted (x, y) of pixel uv, by Gauss-Newton from the pixel itself
 * (converges for the distortion of real lenses inside the image; returns
 * 0 when it did not reach 1e-12 in 50 steps). */
TRAM_API int tram_camera_unproject(const tram_camera *c, const double uv[2], double xy[2]);

#ifdef __cplusplus
}
#endif
#endif
