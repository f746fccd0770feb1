/*
 * tram/point_solve.h - hand-eye calibration from observed points
 * (tram solve --points; docs/points.md): the sensor reports the target's
 * points in its own frame instead of the target's pose.  The point files
 * themselves are read through tram/points.h.
 */
#ifndef TRAM_POINT_SOLVE_H
#define TRAM_POINT_SOLVE_H

#include "tram/points.h"
#include "tram/solve.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Point results of a solve from observed points (owned by the solution:
 * tram_solution.points, freed by tram_solution_destroy). */
typedef struct tram_point_result {
    int with_model;          /* 1: a model was given; 0: the model was solved too */
    tram_stats point;        /* 3D point residuals (length), inlier stations      */
    size_t nstations;
    double *station_rms;     /* per station of the records (NaN: no point used)   */
    size_t npoints;
    char (*point_id)[TRAM_POINT_ID_MAX];
    double *point_rms;       /* per point id                                      */
    size_t nobs;
    double *residual;        /* per observation, in the order of the file          */
    int *excluded;           /* per observation: flagged as an outlier             */
    double *model_xyz;       /* npoints * 3: the model in the target frame          */
    double noise_length;     /* per-axis point noise estimate                       */
} tram_point_result;

/* Hand-eye from observed points.  r gives the robot poses (its sensor
 * block, if any, is ignored).  With a model, every station's target pose
 * comes from registering the model to its points (at least 3 non-collinear
 * points per station), the pose solve runs, and the final refinement
 * minimises the 3D point residuals.  Without one, the points' fixed
 * positions are solved with the sensor's mount by variable projection, and
 * - with 3 or more non-collinear points - define the target frame (origin
 * at their centroid, axes along their principal directions).  Results as
 * for tram_solve, with s->points filled. */
TRAM_API tram_status tram_solve_points(const tram_records *r, tram_setup setup,
                                       const tram_point_obs *obs, const tram_point_model *model,
                                       const tram_solve_options *opt, tram_solution **out,
                                       tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
