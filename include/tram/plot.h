/*
 * tram/plot.h - pictures of frames, residuals, check histories and point
 * residuals, drawn with cairo into an image the caller owns (docs/plot.md).
 *
 * Colours: axis triads use the convention of the trade (x red, y green,
 * z blue); everything else uses the Okabe-Ito palette, which stays
 * distinguishable for colour-blind readers: bars blue (#0072B2), flagged
 * items vermillion (#D55E00), reference lines black or orange (#E69F00).
 */
#ifndef TRAM_PLOT_H
#define TRAM_PLOT_H

#include "tram/records.h"
#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

/* An ARGB32 raster (cairo's native format, premultiplied), row-major. */
typedef struct tram_image {
    int width, height, stride; /* stride in bytes */
    unsigned char *data;       /* height * stride bytes, owned */
} tram_image;

TRAM_API void tram_image_destroy(tram_image *img); /* NULL is a no-op */
/* Pixel (x, y) as 0xAARRGGBB (0 outside the image). */
TRAM_API unsigned int tram_image_pixel(const tram_image *img, int x, int y);
/* Encode as PNG and write atomically (tram_file_write_atomic). */
TRAM_API tram_status tram_image_write_png(const tram_image *img, const char *path, int overwrite,
                                          tram_error *err);

/* Frames scene: base, each station's flange, the sensor and the target. */
typedef struct tram_plot_frames_data {
    size_t n;
    const tram_se3 *T_base_flange;      /* n poses                                 */
    const char *const *ids;             /* n station labels (NULL: numbers)         */
    const int *outlier;                 /* n flags, or NULL                         */
    tram_setup setup;
    int has_solution;
    tram_se3 X, Z;                      /* as solved (see tram/solve.h)              */
    const tram_se3 *links;              /* n * links_per_station link frames, or NULL */
    size_t links_per_station;
    tram_length_unit length_unit;
    const char *title;
} tram_plot_frames_data;

/* Views of the frames picture (quadrants). */
enum { TRAM_VIEW_TOP = 0, TRAM_VIEW_FRONT, TRAM_VIEW_SIDE, TRAM_VIEW_OBLIQUE };

TRAM_API tram_status tram_plot_frames(const tram_plot_frames_data *d, int width, int height,
                                      tram_image **out, tram_error *err);
/* Where a point of the base frame lands in a view of that picture. */
TRAM_API void tram_plot_frames_project(const tram_plot_frames_data *d, int width, int height,
                                       int view, const double p_base[3], double *px, double *py);

/* Per-station residual bars (rotation and translation) with the RMS line
 * and the outlier thresholds, and a scatter of the translation residual
 * vectors (x against y, and x against z, in the frame of Z). */
typedef struct tram_plot_residuals_data {
    size_t n;
    const char *const *ids;
    const double *rot_deg, *trans;
    const double *trans_vec;            /* n * 3, or NULL                      */
    const int *outlier;
    double rot_threshold_deg, trans_threshold; /* outlier thresholds (0: none) */
    tram_length_unit length_unit;
    const char *title;
} tram_plot_residuals_data;

TRAM_API tram_status tram_plot_residuals(const tram_plot_residuals_data *d, int width, int height,
                                         tram_image **out, tram_error *err);

/* A check history: translation and rotation of the estimated change over
 * time, with the tolerance band. */
typedef struct tram_plot_history_data {
    size_t n;
    const double *time_s;               /* seconds since 1970 (UTC)            */
    const double *trans, *rot_deg;
    const int *alarm;                   /* verdict other than ok               */
    double tol_length, tol_angle_deg;   /* 0: no band                           */
    tram_length_unit length_unit;
    const char *title;
} tram_plot_history_data;

TRAM_API tram_status tram_plot_history(const tram_plot_history_data *d, int width, int height,
                                       tram_image **out, tram_error *err);

/* Per-point residual bars (registration). */
TRAM_API tram_status tram_plot_points(size_t n, const char *const *ids, const double *residual,
                                      const int *outlier, double threshold,
                                      tram_length_unit unit, const char *title, int width,
                                      int height, tram_image **out, tram_error *err);

/* Release cairo's and fontconfig's static data (for leak checkers at exit). */
TRAM_API void tram_plot_shutdown(void);

#ifdef __cplusplus
}
#endif
#endif
