/*
 * tram/pose.h - the pose of a calibration target from its pixels in one
 * image (camera layer; docs/pixels.md).
 *
 * Given the target's points in the target frame and their observed pixels
 * (tram/camera.h's pixel convention: the centre of the top-left pixel is
 * (0, 0), u right, v down), find T_sensor_target - the pose of the target
 * frame in the camera (sensor) frame, p_sensor = T_sensor_target p_target.
 *
 *   - Planar targets (all points within 2% of the extent from one plane;
 *     boards): the pixels are undistorted with tram_camera_unproject, the
 *     plane-to-image homography is fitted by the normalised DLT (SVD), and
 *     decomposed into R, t as in Zhang (2000), "A flexible new technique for
 *     camera calibration", IEEE PAMI 22(11), with R the nearest rotation.
 *   - Other targets: EPnP (Lepetit, Moreno-Noguer & Fua 2009, "EPnP: an
 *     accurate O(n) solution to the PnP problem", IJCV 81(2)).
 *   - Then Levenberg-Marquardt on the reprojection error in pixels (6 pose
 *     parameters, analytic Jacobian).
 *
 * Lengths are in the unit of the target points; the pose's translation
 * comes out in that unit.  Nothing is allocated for the caller.
 */
#ifndef TRAM_POSE_H
#define TRAM_POSE_H

#include "tram/camera.h"
#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct tram_pose_result {
    tram_se3 T_sensor_target; /* target frame in the sensor frame             */
    size_t n;                 /* points used                                   */
    int planar;               /* 1: homography start; 0: EPnP start            */
    int iterations;           /* Levenberg-Marquardt iterations                 */
    double rms_px;            /* reprojection RMS over the points (the 2D
                                 distance per point), pixels                   */
    double max_px;            /* largest reprojection distance, pixels         */
    double sigma_px;          /* per-coordinate pixel noise estimate,
                                 sqrt(sum r^2 / (2n - 6)); NaN when n < 4      */
    /* Covariance of the pose, sigma_px^2 (J^T J)^-1, 6 x 6 row-major, order:
     * translation x, y, z of T_sensor_target (length unit, sensor frame),
     * then rotation about the target frame's own x, y, z axes (rad) -
     * T = (R exp(w), t + dt).  cov_valid = 0 when it could not be formed. */
    int cov_valid;
    double cov[36];
} tram_pose_result;

/* The pose of the target from n point/pixel pairs: xyz_target (3n, the
 * points in the target frame), uv_px (2n, the observed pixels, pixel
 * convention above).  TRAM_EUNDETERMINED (err says why) for fewer than 4
 * points, collinear points, coincident points, a degenerate homography
 * (three of four points on a line), a solution with points behind the
 * camera, or pixels the camera model cannot undistort; TRAM_EINPUT for
 * NaN/Inf numbers or a camera with non-positive focal lengths. */
TRAM_API tram_status tram_pose_from_pixels(const tram_camera *cam, const double *xyz_target,
                                           const double *uv_px, size_t n, tram_pose_result *out,
                                           tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
