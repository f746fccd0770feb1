/*
 * tram/points.h - point files and hand-eye calibration from observed 3D
 * points (docs/points.md).
 *
 * Point-pair files (tram register): per pair, a point in the "from" frame
 * and the same point in the "to" frame; the result is T_to_from.
 * Observation files: per station and point id, the point as the sensor saw
 * it, in the sensor frame.  Model files: the target's points in the
 * target's own frame.  All are CSV with the directive rules of record files
 * and a required length-unit.
 */
#ifndef TRAM_POINTS_H
#define TRAM_POINTS_H

#include "tram/records.h"

#ifdef __cplusplus
extern "C" {
#endif

#define TRAM_POINT_ID_MAX 32

typedef struct tram_point_pairs {
    size_t n;
    int dim;                         /* 3, or 2 when the z columns are absent */
    double *from, *to;               /* n * dim coordinates                   */
    double *weight;                  /* n weights, or NULL                    */
    char (*id)[TRAM_POINT_ID_MAX];   /* n ids (default: the row number)       */
    long *line;                      /* n source lines                        */
    tram_length_unit length_unit;
    char source[256];
} tram_point_pairs;

/* Columns: from_x,from_y[,from_z],to_x,to_y[,to_z], optional point and
 * weight (>= 0).  unit: given on the command line, or UNSET (a conflict
 * with the file's length-unit directive is an error).  Caller frees with
 * tram_point_pairs_destroy. */
TRAM_API tram_status tram_point_pairs_read_file(const char *path, tram_length_unit unit,
                                                tram_point_pairs **out, tram_error *err);
TRAM_API tram_status tram_point_pairs_read_buffer(const char *name, const char *data,
                                                  size_t len, tram_length_unit unit,
                                                  tram_point_pairs **out, tram_error *err);
TRAM_API void tram_point_pairs_destroy(tram_point_pairs *p);

/* Observed points: columns station,point,x,y,z (sensor frame).  Station ids
 * must be stations of r; lengths are converted to r's length unit. */
typedef struct tram_point_obs {
    size_t n;
    size_t *station;                      /* index into the records' stations */
    size_t *point;                        /* index into point_id              */
    double *xyz;                          /* n * 3, records' length unit       */
    long *line;
    size_t npoints;
    char (*point_id)[TRAM_POINT_ID_MAX];
    char source[256];
} tram_point_obs;

TRAM_API tram_status tram_point_obs_read_file(const char *path, const tram_records *r,
                                              tram_point_obs **out, tram_error *err);
TRAM_API tram_status tram_point_obs_read_buffer(const char *name, const char *data, size_t len,
                                                const tram_records *r, tram_point_obs **out,
                                                tram_error *err);
TRAM_API void tram_point_obs_destroy(tram_point_obs *o);

/* Model points: columns point,x,y,z in the target frame; lengths converted
 * to r's length unit. */
typedef struct tram_point_model {
    size_t n;
    char (*id)[TRAM_POINT_ID_MAX];
    double *xyz;
    long *line;
    char source[256];
} tram_point_model;

TRAM_API tram_status tram_point_model_read_file(const char *path, const tram_records *r,
                                                tram_point_model **out, tram_error *err);
TRAM_API tram_status tram_point_model_read_buffer(const char *name, const char *data,
                                                  size_t len, const tram_records *r,
                                                  tram_point_model **out, tram_error *err);
TRAM_API void tram_point_model_destroy(tram_point_model *m);

#ifdef __cplusplus
}
#endif
#endif
