/*
 * tram/pixel_solve.h - hand-eye calibration from pixel observations of a
 * target (solve layer; docs/pixels.md).
 *
 * Per station i the camera sees target point m (target frame) at pixel
 *     uv = project(camera, T_sensor_target(i) m),
 *     T_sensor_target(i) = X^-1 P_i^-1 Z
 * in the generic form of tram/handeye.h (eye-in-hand: P_i = T_base_flange,
 * X = T_flange_sensor, Z = T_base_target; eye-to-hand: P_i = T_flange_base,
 * X = T_base_sensor, Z = T_flange_target).  The station poses come from
 * tram_pose_from_pixels, the pose pipeline (tram_solve) gives the start,
 * and X, Z (and optionally the camera) are refined on the pixel residuals.
 *
 * Ownership: tram_pixel_target_* arrays are allocated with the library's
 * allocator and freed with tram_pixel_target_free; the pixel results of a
 * solve belong to the solution (tram_solution.pixels, freed by
 * tram_solution_destroy).
 */
#ifndef TRAM_PIXEL_SOLVE_H
#define TRAM_PIXEL_SOLVE_H

#include "tram/camera.h"
#include "tram/image.h"
#include "tram/pixels.h"
#include "tram/points.h"
#include "tram/solve.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Each observation's point in the target frame (3 * obs->n values), from
 * a board (point ids are corner ids r * cols + c; lengths converted to
 * `unit`, UNSET: the board's unit) or a model file (point ids as in the
 * model; lengths in the model reader's unit).  A point id that is not a
 * corner of the board / not in the model is TRAM_EINPUT naming the
 * observation's file:line. */
TRAM_API tram_status tram_pixel_target_from_board(const tram_pixel_obs *obs, const tram_board *b,
                                                  tram_length_unit unit, double **xyz,
                                                  tram_error *err);
TRAM_API tram_status tram_pixel_target_from_model(const tram_pixel_obs *obs,
                                                  const tram_point_model *m, double **xyz,
                                                  tram_error *err);
TRAM_API void tram_pixel_target_free(double *xyz);

typedef struct tram_pixel_solve_options {
    int refine_intrinsics;   /* 1: free fx, fy, cx, cy and the distortion
                                model's coefficients too (joint calibration) */
    const double *camera_cov; /* NULL: the camera is taken as exact.  Else the
                                covariance of its parameters from their own
                                calibration (TRAM_CAM_NPARAM^2, row-major,
                                TRAM_CAM_* order, pixels^2 for fx..skew; e.g.
                                from tram_camera_calib_covariance), carried
                                into the covariance of X and Z when the
                                camera is held fixed (ignored with
                                refine_intrinsics) */
    int free_skew;           /* with refine_intrinsics: free the skew too (for
                                a camera calibrated with its skew free) */
    /* The files the camera and the target were read from, recorded with
     * their FNV-1a 64 checksums in the solution's pixel inputs (and so in
     * a calibration file's "input".pixels); NULL: not from a file.  The
     * observations' file is obs->source. */
    const char *camera_path;
    const char *target_path;
    int target_is_model;     /* 1: target_path is a model file, 0: a board   */
} tram_pixel_solve_options;

/* Defaults: the camera held fixed and taken as exact. */
TRAM_API void tram_pixel_solve_options_init(tram_pixel_solve_options *opt);

/* One input file of a pixel solve: its path ("" when not from a file)
 * and the FNV-1a 64 checksum of its bytes at solve time (16 hex digits;
 * "" when it could not be read again). */
typedef struct tram_pixel_input {
    char path[256];
    char checksum[24];
} tram_pixel_input;

/* Pixel results of a solve (owned by the solution). */
typedef struct tram_pixel_result {
    size_t nstations;           /* stations of the solution, in its order   */
    size_t *nobs_station;       /* corners seen per station                  */
    size_t *nused_station;      /* corners used (not flagged) per station    */
    double *station_rms_px;     /* per station, over its unflagged corners  */
    double *pose_rms_px;        /* the station's own pose fit (tram pose)   */
    int *station_excluded;      /* station left out by the outlier rule     */
    size_t nobs;                /* observations, in the order of the file    */
    double *residual_px;        /* reprojection distance per observation     */
    int *excluded;              /* per observation: flagged (or its station) */
    size_t n_corner_outliers, n_station_outliers;
    tram_stats px;              /* over the observations used, pixels        */
    double sigma_px;            /* per-coordinate pixel noise, sqrt(chi2/dof) */
    int iterations;
    int intrinsics_refined;
    tram_camera camera;         /* the camera used (refined when asked)      */
    double camera_sigma[10];    /* 1-sigma of fx fy cx cy skew k1 k2 k3 p1 p2
                                   (0 when held fixed)                        */
    int camera_cov_used;        /* 1: the covariance of X, Z includes the
                                   camera's own calibration uncertainty       */
    double camera_share[12];    /* of each variance of X, Z (translation,
                                   rotation; X then Z): the fraction that
                                   comes from the camera (0 when not used)    */
    tram_pixel_input in_observations; /* the pixel observations (obs->source) */
    tram_pixel_input in_camera;       /* popt->camera_path                    */
    tram_pixel_input in_target;       /* popt->target_path (board or model)    */
    int target_is_model;
} tram_pixel_result;

/* Solve from pixels.  r gives the robot poses of the stations (its sensor
 * block, if any, is ignored); obs the pixels, xyz each observation's target
 * point (3 * obs->n, in r's length unit), cam the camera (its image size,
 * when set, must match the observations').  Every observed station must be
 * a station of r (else TRAM_EINPUT naming the observation's file:line);
 * stations of r without observations are left out (a note says so).  A
 * view whose pose cannot be found (fewer than 4 corners, collinear
 * corners) is TRAM_EUNDETERMINED naming the station.  Results and status
 * as for tram_solve, with s->pixels filled; the uncertainty of X and Z is
 * that of the pixel model (sigma_px^2 (J^T J)^-1 over the corners used),
 * plus, with popt->camera_cov and a fixed camera, the camera's share
 * G C G^T, G = (J^T J)^-1 J^T J_camera (first-order propagation).  With
 * opt->bootstrap > 0, a station bootstrap of the pixel fit (opt->seed) in
 * s->unc.bootstrap_* (it resamples views: a fixed camera's own error is
 * not in it). */
TRAM_API tram_status tram_solve_pixels(const tram_records *r, tram_setup setup,
                                       const tram_camera *cam, const tram_pixel_obs *obs,
                                       const double *xyz, const tram_solve_options *opt,
                                       const tram_pixel_solve_options *popt, tram_solution **out,
                                       tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
