/*
 * tram/image.h - grey images, printed calibration boards and chessboard
 * corner detection.
 *
 * Pixel convention (docs/images.md): the centre of the top-left pixel is
 * (u, v) = (0, 0); u grows to the right, v grows down; a pixel covers
 * [u - 0.5, u + 0.5] x [v - 0.5, v + 0.5].
 *
 * Board convention (chessboard, docs/images.md): inner corner (c, r), with
 * c = 0 .. cols-1 and r = 0 .. rows-1, is at (c * s, r * s, 0) in the
 * target frame, s the square size in the board's length unit; its point id
 * is r * cols + c.  The square that touches corner (0, 0) on its -x,-y
 * side is black.  z = x cross y points into the board (away from a camera
 * that faces it).  One of cols and rows is odd and the other even, so the
 * board has no 180-degree ambiguity; a symmetric board is refused.
 *
 * Ownership: every _read_* / _create result is freed by its _destroy;
 * destroy(NULL) is a no-op.
 */
#ifndef TRAM_IMAGE_H
#define TRAM_IMAGE_H

#include "tram/common.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Images larger than this many pixels are refused before any allocation. */
#define TRAM_IMAGE_MAX_PIXELS 100000000ULL

/* A grey image: width * height values, row-major, top row first, in grey
 * levels 0 .. 255 (16-bit inputs keep their fraction: v16 / 257). */
typedef struct tram_grey_image {
    size_t width, height;
    float *pixels;
} tram_grey_image;

/* A zero-filled image; TRAM_EINPUT for a zero or too large size. */
TRAM_API tram_status tram_grey_image_create(size_t width, size_t height, tram_grey_image **out,
                                       tram_error *err);
/* Read a PNG (8/16 bit; grey, grey+alpha, RGB, RGBA, palette; interlaced)
 * or a JPEG, chosen by the file's signature, and convert it to grey
 * (ITU-R BT.601 luma weights).  Truncated, corrupt, zero-size, over-limit
 * and non-image files are TRAM_EINPUT with the file named. */
TRAM_API tram_status tram_grey_image_read_file(const char *path, tram_grey_image **out, tram_error *err);
TRAM_API tram_status tram_grey_image_read_buffer(const char *name, const unsigned char *data,
                                            size_t len, tram_grey_image **out, tram_error *err);
TRAM_API void tram_grey_image_destroy(tram_grey_image *im);

typedef enum tram_board_kind {
    TRAM_BOARD_CHESSBOARD = 1
} tram_board_kind;

/* A printed board.  square is in `unit`. */
typedef struct tram_board {
    tram_board_kind kind;
    int cols, rows;          /* inner corners */
    double square;
    tram_length_unit unit;
} tram_board;

/* Fill b after checking the numbers (positive square, at least 2 x 2
 * inner corners, one of cols and rows odd and the other even). */
TRAM_API tram_status tram_board_init(tram_board *b, int cols, int rows, double square,
                                     tram_length_unit unit, tram_error *err);
/* Board description files (JSON, format "tram-board", version 1). */
TRAM_API tram_status tram_board_read_file(const char *path, tram_board *out, tram_error *err);
TRAM_API tram_status tram_board_read_buffer(const char *name, const char *data, size_t len,
                                            tram_board *out, tram_error *err);
/* The board file's text (NUL-terminated, allocated; free it with free()). */
TRAM_API tram_status tram_board_to_json(const tram_board *b, char **text, tram_error *err);
/* Number of corners, and the position of corner `id` in the target frame
 * (board length unit). */
TRAM_API size_t tram_board_corner_count(const tram_board *b);
TRAM_API void tram_board_corner(const tram_board *b, size_t id, double xyz[3]);

/* Chessboard detection: a saddle-point (ChESS-style) corner response on a
 * lightly smoothed image (Bennett and Lasenby 2014), recovery of the
 * cols x rows lattice ordered by the board convention (the black square at
 * corner 0), and sub-pixel refinement.  docs/images.md. */
typedef struct tram_detect_options {
    double min_square_px;   /* smallest square side looked for, pixels */
    int threads;            /* worker threads (0: as many as cores, at most 2) */
} tram_detect_options;

TRAM_API void tram_detect_options_init(tram_detect_options *opt);

/* One image's result.  A board is found whole or not at all. */
typedef struct tram_detection {
    int found;              /* 1: all cols*rows corners found and ordered  */
    size_t ncorners;        /* cols*rows when found, else 0                */
    double *uv;             /* 2*ncorners pixels: corner id i at uv[2i], uv[2i+1] */
    size_t nseen;           /* corners of a lattice seen (also when not found) */
    double sharpness;       /* edge blur, pixels, lower is sharper: the standard deviation
                               of the grey-level derivative across each board edge at its
                               midpoint between two corners (its main peak), averaged over
                               the board; about sqrt(sigma^2 + 1/12) for a step blurred by
                               a Gaussian of sigma pixels.  -1 when not found (docs/images.md) */
    char reason[256];       /* why not found; "" when found                */
} tram_detection;

/* Detect b in im.  A board not found is TRAM_OK with found = 0 and the
 * reason; errors are bad arguments (TRAM_EINPUT) and TRAM_ENOMEM. */
TRAM_API tram_status tram_detect_chessboard(const tram_grey_image *im, const tram_board *b,
                                            const tram_detect_options *opt,
                                            tram_detection **out, tram_error *err);
TRAM_API void tram_detection_destroy(tram_detection *d);

/* A detection run over n images of one size, as tram detect reports it. */
typedef struct tram_detect_report {
    const tram_board *board;
    const char *board_path;                  /* as given                     */
    size_t width, height;                    /* pixels                       */
    size_t n;
    const char *const *image_paths;          /* n                            */
    const char *const *stations;             /* n station ids                */
    const tram_detection *const *detections; /* n                            */
    const char *observations_path;           /* the observation file, or NULL */
} tram_detect_report;

/* Its JSON document (format "tram-detect-report", docs/images.md; indented,
 * final newline) into *text, freed by the caller with tram_free.
 * TRAM_ENOMEM, and *text NULL, if any allocation failed. */
TRAM_API tram_status tram_detect_report_to_json(const tram_detect_report *r, char **text,
                                                tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
