/*
 * tram/pixels.h - pixel-observation files (format tram-pixels-1): per
 * station (one image) and point id, where the point was seen in the image.
 * Written by `tram detect`, read by `tram intrinsics`, `tram pose` and
 * `tram solve --pixels` (docs/camera.md).
 *
 * The file is CSV with the line, comment and directive rules of tram's
 * point files (docs/points.md):
 *
 *   # format: tram-pixels-1               optional
 *   # pixel-origin: top-left-pixel-centre required, the only value accepted
 *   # image-size: 1280x960                required, W x H in pixels
 *   # board: board.json                   optional, informational
 *   station,point,u,v
 *   img_001,0,412.2503,305.1177
 *
 * Pixel convention (tram/image.h): the centre of the top-left pixel is
 * (u, v) = (0, 0), u to the right, v down.  u and v are finite numbers in
 * pixels; a (station, point) pair is given at most once.
 *
 * Ownership: _read_* and _create results are freed by
 * tram_pixel_obs_destroy (NULL is a no-op); the writer's text is freed by
 * the caller with free().
 */
#ifndef TRAM_PIXELS_H
#define TRAM_PIXELS_H

#include "tram/common.h"

#ifdef __cplusplus
extern "C" {
#endif

#define TRAM_PIXEL_STATION_ID_MAX 64   /* as TRAM_STATION_ID_MAX (records.h) */
#define TRAM_PIXEL_POINT_ID_MAX 32     /* as TRAM_POINT_ID_MAX (points.h)    */
#define TRAM_PIXEL_BOARD_MAX 256

typedef struct tram_pixel_obs {
    size_t n;                                    /* observations                       */
    size_t *station;                             /* n indices into station_id          */
    size_t *point;                               /* n indices into point_id            */
    double *uv;                                  /* 2n pixels: (u, v) of observation i */
    long *line;                                  /* n source lines (0: not from a file) */
    size_t nstations;                            /* in order of first appearance       */
    char (*station_id)[TRAM_PIXEL_STATION_ID_MAX];
    size_t npoints;                              /* in order of first appearance       */
    char (*point_id)[TRAM_PIXEL_POINT_ID_MAX];
    size_t width, height;                        /* image size, pixels                 */
    long image_size_line;                        /* where image-size was given (0: not from a file) */
    char board[TRAM_PIXEL_BOARD_MAX];            /* the board directive, "" when absent */
    char source[256];                            /* file name, for messages            */
} tram_pixel_obs;

/* Read a file ("-" is standard input) or a buffer of len bytes (no NUL
 * needed).  Errors (TRAM_EINPUT, with file:line[:column]): a missing or
 * other pixel-origin, a missing or malformed image-size, an unknown
 * directive or column, a missing column, an empty or too long id, a number
 * that is not finite, a (station, point) pair given twice, no rows.
 * TRAM_EIO when the file cannot be read. */
TRAM_API tram_status tram_pixel_obs_read_file(const char *path, tram_pixel_obs **out,
                                              tram_error *err);
TRAM_API tram_status tram_pixel_obs_read_buffer(const char *name, const char *data, size_t len,
                                                tram_pixel_obs **out, tram_error *err);
TRAM_API void tram_pixel_obs_destroy(tram_pixel_obs *o);

/* An empty set for an image size (both > 0) and an optional board name
 * (NULL or ""), to be filled with tram_pixel_obs_add (for writers such as
 * tram detect). */
TRAM_API tram_status tram_pixel_obs_create(size_t width, size_t height, const char *board,
                                           tram_pixel_obs **out, tram_error *err);
/* Append one observation.  TRAM_EINPUT for an id that is empty, too long
 * or holds a comma, a control character or a leading '#' or blank, for a
 * non-finite u or v, and for a (station, point) pair already present. */
TRAM_API tram_status tram_pixel_obs_add(tram_pixel_obs *o, const char *station,
                                        const char *point, double u, double v, tram_error *err);
/* Index of a station or point id, or -1. */
TRAM_API long tram_pixel_obs_station_index(const tram_pixel_obs *o, const char *station);
TRAM_API long tram_pixel_obs_point_index(const tram_pixel_obs *o, const char *point);

/* The file's text in format tram-pixels-1 (directives, header, one row per
 * observation in order; numbers in the shortest form that reads back to
 * the same double).  *text is NUL-terminated, allocated; free it with
 * free().  TRAM_EINPUT when an id could not be read back. */
TRAM_API tram_status tram_pixel_obs_write(const tram_pixel_obs *o, char **text, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
