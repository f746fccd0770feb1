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
#include "tram/pixels.h"
#include "tram/se3.h"

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
 * leaves uv untouched, when Z <= 0 or when the ray lies at or beyond the
 * fold radius of the distortion (tram_camera_fold_radius): there the model
 * turns back and its pixel is not where a lens would image the point. */
TRAM_API int tram_camera_project(const tram_camera *c, const double p_sensor[3], double uv[2]);
/* Inverse of the distortion and the intrinsic matrix: the normalised
 * undistorted (x, y) of pixel uv, by Gauss-Newton from the pixel itself,
 * kept inside the fold radius (below).  Returns 0 when it did not reach
 * 1e-12 in 50 steps or when the pixel lies beyond the fold (no ray inside
 * the fold maps to it; refused within a few steps). */
TRAM_API int tram_camera_unproject(const tram_camera *c, const double uv[2], double xy[2]);
/* The fold radius of the radial distortion, normalised and undistorted
 * (r = sqrt(x^2 + y^2)): where r (1 + k1 r^2 + k2 r^4 + k3 r^6) stops
 * growing, i.e. 1 + 3 k1 r^2 + 5 k2 r^4 + 7 k3 r^6 = 0 first; INFINITY when
 * it never does.  Rays beyond it would be imaged back toward the centre:
 * the model does not describe them. */
TRAM_API double tram_camera_fold_radius(const tram_camera *c);


/* ---- Camera files (docs/camera.md) -------------------------------------
 *
 * JSON, format "tram-camera", version 1:
 *   {"format": "tram-camera", "version": 1,
 *    "pixel_origin": "top-left-pixel-centre",
 *    "image_size": {"width": W, "height": H},
 *    "intrinsics": {"fx": .., "fy": .., "cx": .., "cy": .., "skew": ..},
 *    "distortion": {"model": "radial2", "k1": .., "k2": ..},
 *    "calibration": {...}}                      (optional; see below)
 * The distortion object holds exactly the coefficients of its model
 * (none: none; radial2: k1 k2; radial3: k1 k2 k3; full: k1 k2 k3 p1 p2).
 * "calibration", written when the camera came from tram intrinsics, holds
 * the method, the number of views, points and outliers, the RMS
 * reprojection error in pixels, and "sigma": the 1-sigma of every free
 * parameter by name, with "fixed" listing the parameters held fixed, and
 * optionally "correlation": for each free parameter but the last, its
 * correlation with each later free parameter (TRAM_CAM_* order), by name:
 *   "correlation": {"fx": {"fy": 0.91, "cx": -0.05, ...}, "fy": {...}, ...} */

/* Parameter indices, in the order of tram_camera_param_name. */
enum {
    TRAM_CAM_FX = 0, TRAM_CAM_FY, TRAM_CAM_CX, TRAM_CAM_CY, TRAM_CAM_SKEW,
    TRAM_CAM_K1, TRAM_CAM_K2, TRAM_CAM_K3, TRAM_CAM_P1, TRAM_CAM_P2,
    TRAM_CAM_NPARAM
};
/* "fx", "fy", "cx", "cy", "skew", "k1", "k2", "k3", "p1", "p2"; "?" otherwise. */
TRAM_API const char *tram_camera_param_name(int param);
/* The value of parameter `param` of c (NaN for an unknown index). */
TRAM_API double tram_camera_param(const tram_camera *c, int param);
/* 1 when the distortion model d has coefficient `param` (the five
 * intrinsic parameters are in every model). */
TRAM_API int tram_distortion_has(tram_distortion d, int param);

/* How a camera was calibrated (all zero / NaN when it was not). */
typedef struct tram_camera_calib {
    int present;                     /* 1: the fields below are filled          */
    char method[128];                /* e.g. "Zhang 2000 + Levenberg-Marquardt" */
    size_t nviews, npoints, noutliers;
    double rms_px;                   /* RMS reprojection error of the inliers   */
    int free_param[TRAM_CAM_NPARAM]; /* 1: estimated; 0: held fixed            */
    double sigma[TRAM_CAM_NPARAM];   /* 1-sigma of the free parameters (pixels for
                                        fx..skew, unitless for k, p); 0 for fixed */
    int has_correlation;             /* 1: correlation below is filled           */
    double correlation[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM];
                                     /* row-major, TRAM_CAM_* order: correlation of
                                        two free parameters (1 on the diagonal);
                                        0 for fixed ones */
} tram_camera_calib;

/* The covariance of the calibrated parameters (TRAM_CAM_NPARAM^2,
 * row-major, TRAM_CAM_* order; pixels^2 for fx..skew): sigma_i sigma_j
 * rho_ij, with rho the identity when the file gave no correlations.
 * Returns 0 (cov all zero) when cal is NULL or not present, 1 with the
 * correlations, 2 with the sigmas alone. */
TRAM_API int tram_camera_calib_covariance(const tram_camera_calib *cal,
                                          double cov[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM]);

/* Read a camera file ("-": standard input) or a buffer of len bytes.
 * calib may be NULL; otherwise it is filled (present = 0 when the file has
 * no calibration block).  Strict: an unknown or duplicate key, a missing
 * key, a wrong format, version or pixel_origin, an unknown distortion
 * model, a coefficient missing for the model or not of it, a non-positive
 * focal length or image size, a non-finite number are TRAM_EINPUT naming
 * file:line:column.  TRAM_EIO when the file cannot be read. */
TRAM_API tram_status tram_camera_read_file(const char *path, tram_camera *cam,
                                           tram_camera_calib *calib, tram_error *err);
TRAM_API tram_status tram_camera_read_buffer(const char *name, const char *data, size_t len,
                                             tram_camera *cam, tram_camera_calib *calib,
                                             tram_error *err);
/* The camera file's text (indented JSON, final newline; numbers exact to
 * the last bit).  calib may be NULL.  *text is allocated; free it with
 * free().  TRAM_EINPUT for a camera that the reader would refuse. */
TRAM_API tram_status tram_camera_to_json(const tram_camera *cam, const tram_camera_calib *calib,
                                         char **text, tram_error *err);

/* ---- Intrinsic calibration from a planar target (docs/camera.md) -------
 *
 * Zhang (2000), "A flexible new technique for camera calibration", IEEE
 * PAMI 22(11): a homography per view by the normalised DLT (Hartley 1997),
 * the closed form for the intrinsic matrix from the homographies, each
 * view's pose from its homography, then Levenberg-Marquardt (Marquardt
 * 1963) over the intrinsics, the distortion and every view's pose, with a
 * Huber loss (Huber 1964) and a per-point outlier flag. */

/* The planar target: n points with ids (matching the pixel file's point
 * column) at (x, y, 0) in the target frame.  Lengths in any one unit; the
 * poses of the result are in the same unit. */
typedef struct tram_planar_target {
    size_t n;
    const char *const *id;    /* n ids                                       */
    const double *xy;         /* 2n coordinates, target frame, z = 0          */
} tram_planar_target;

typedef struct tram_intrinsics_options {
    tram_distortion distortion;   /* coefficients to estimate (default radial2) */
    int free_skew;                /* 1: estimate the skew; 0: hold it at 0      */
    int robust;                   /* 1: Huber loss (default); 0: squared loss   */
    double huber_k;               /* Huber threshold in robust sigmas (5)      */
    double outlier_k;             /* outlier flag threshold in robust sigmas (8) */
    int max_iterations;           /* of Levenberg-Marquardt (200)              */
    double max_relative_sigma_f;  /* 1-sigma of fx or fy above this fraction of
                                     it: the views cannot fix the focal length
                                     (TRAM_EUNDETERMINED; default 0.01)        */
} tram_intrinsics_options;

TRAM_API void tram_intrinsics_options_init(tram_intrinsics_options *opt);

/* Warnings of a calibration (bit flags). */
enum {
    TRAM_INTRINSICS_WARN_COVERAGE = 1,  /* the boards cover under half the image    */
    TRAM_INTRINSICS_WARN_RMS = 2,       /* RMS reprojection error over 1 pixel      */
    TRAM_INTRINSICS_WARN_TILT = 4,      /* no view tilted 15 degrees or more about
                                           one of the image axes                    */
    TRAM_INTRINSICS_WARN_OUTLIERS = 8   /* more than 5% of the points flagged       */
};

typedef struct tram_intrinsics_view {
    char id[TRAM_PIXEL_STATION_ID_MAX];
    size_t nobs, noutliers;
    double rms_px;                 /* RMS reprojection error of the inliers        */
    tram_se3 T_sensor_target;      /* the target's pose in the sensor frame        */
    double sigma_rot_deg[3];       /* 1-sigma of the rotation (left perturbation
                                      about the sensor's x, y, z axes), degrees  */
    double sigma_t[3];             /* 1-sigma of the translation, target units   */
    double tilt_x_deg, tilt_y_deg; /* the target normal's tilt about the image x
                                      and y axes (signed), degrees               */
} tram_intrinsics_view;

typedef struct tram_intrinsics_result {
    tram_camera camera;            /* the optimum                                 */
    tram_camera_calib calib;       /* sigmas, RMS, counts                          */
    tram_camera initial;           /* Zhang's closed form (no distortion)          */
    size_t nviews;
    tram_intrinsics_view *views;   /* nviews, in order of first appearance         */
    size_t nobs;                   /* = obs->n, in the order of the pixel file     */
    size_t *obs_view;              /* nobs: the view of each observation           */
    double *residual_px;           /* 2 nobs: observed minus projected (u, v)      */
    int *outlier;                  /* nobs flags                                   */
    double rms_px;                 /* RMS of the inliers' residual lengths         */
    double noise_px;               /* robust sigma per axis: median residual
                                      length / sqrt(2 ln 2)                       */
    double huber_px;               /* the Huber threshold used (0: squared loss)   */
    double outlier_px;             /* the outlier threshold on residual length     */
    double coverage;               /* fraction of the image inside a view's board  */
    double max_tilt_x_deg, max_tilt_y_deg;
    int iterations;
    unsigned warnings;             /* TRAM_INTRINSICS_WARN_* */
    size_t nparam;
    double *covariance;            /* nparam^2, row-major: the free intrinsic
                                      parameters in the order of TRAM_CAM_*, then
                                      per view (rotation 3, translation 3)        */
} tram_intrinsics_result;

/* Calibrate from the pixel observations of a planar target.  Every
 * station of obs is one view; every observation's point id must be a
 * target id (else TRAM_EINPUT naming obs's file:line).  TRAM_EUNDETERMINED
 * (with the reason and what to add) for fewer than 3 views, a view with
 * under 6 points or points on a line, a closed form that is not positive
 * definite, or views that cannot fix the focal length.  The result is
 * freed by tram_intrinsics_result_destroy (NULL is a no-op). */
TRAM_API tram_status tram_intrinsics_calibrate(const tram_pixel_obs *obs,
                                               const tram_planar_target *target,
                                               const tram_intrinsics_options *opt,
                                               tram_intrinsics_result **out, tram_error *err);
TRAM_API void tram_intrinsics_result_destroy(tram_intrinsics_result *r);

/* Plain-value access for bindings (intrinsics_access.c).  The camera
 * file's text of the optimum with its calibration block (as
 * tram_camera_to_json; free() it); the RMS reprojection error of the
 * inliers (pixels); a copy of the camera; the number of views; view i's station id (NULL when
 * out of range); view i's T_sensor_target as a row-major 4x4 in the
 * target's length unit and its RMS in pixels (rms_px may be NULL; returns
 * 0 when i is out of range). */
TRAM_API tram_status tram_intrinsics_camera_json(const tram_intrinsics_result *r, char **text,
                                                 tram_error *err);
TRAM_API double tram_intrinsics_rms_px(const tram_intrinsics_result *r);
/* A copy of the optimum camera. */
TRAM_API void tram_intrinsics_camera(const tram_intrinsics_result *r, tram_camera *out);
TRAM_API size_t tram_intrinsics_view_count(const tram_intrinsics_result *r);
TRAM_API const char *tram_intrinsics_view_id(const tram_intrinsics_result *r, size_t i);
TRAM_API int tram_intrinsics_view_pose(const tram_intrinsics_result *r, size_t i, double T[16],
                                       double *rms_px);

/* A camera calibration as tram intrinsics reports it. */
typedef struct tram_intrinsics_report {
    const tram_pixel_obs *obs;           /* the observations calibrated from      */
    const char *target;                  /* the target, in words (board or model) */
    const char *length_unit;             /* the target's length unit              */
    int robust;                          /* Huber loss (else squared)             */
    const tram_intrinsics_result *result;
    size_t nwarnings;
    const char *const *warnings;         /* the diagnostics, in words              */
    const char *caution;                 /* the safety text                        */
} tram_intrinsics_report;

/* Its JSON document (format "tram-intrinsics-report", docs/camera.md;
 * indented, final newline), the camera file's document embedded as
 * "camera", into *text (free it with tram_free).  TRAM_ENOMEM, and *text
 * NULL, if any allocation failed. */
TRAM_API tram_status tram_intrinsics_report_to_json(const tram_intrinsics_report *r, char **text,
                                                    tram_error *err);

/* The pixel of the target point xyz_target (target frame) when the
 * target is at T_sensor_target.  Returns 0, uv untouched, when the point
 * is behind the camera. */
TRAM_API int tram_camera_reproject(const tram_camera *c, const tram_se3 *T_sensor_target,
                                   const double xyz_target[3], double uv[2]);

#ifdef __cplusplus
}
#endif
#endif
