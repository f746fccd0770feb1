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

#include "tram/camera.h"
#include "tram/image.h"
#include "tram/plan.h"
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
 * and, where a rule has them, per-component outlier thresholds (the solve's
 * station test is joint over the six components and has none: its flags
 * are the bars drawn as outliers), and a scatter of the translation residual
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

/* A station plan (tram/plan.h): the flange positions of the recorded
 * stations (grey) and of the proposed ones (numbered in visiting order,
 * in a distinct colour) in the top and front views, and the 1-sigma of X
 * now, predicted after the plan and after random feasible stations
 * (plan_plot.c, docs/plan.md). */
typedef struct tram_plot_plan_data {
    const tram_plan_result *plan;
    size_t n_existing;
    const tram_se3 *existing;           /* n_existing T_base_flange, or NULL    */
    const char *title;                  /* NULL: a title with the caution       */
} tram_plot_plan_data;

TRAM_API tram_status tram_plot_plan(const tram_plot_plan_data *d, int width, int height,
                                    tram_image **out, tram_error *err);

/* ---- printable boards (src/plot/board_print.c, docs/images.md) ------- */

/* A paper size in millimetres (width across, height down the page). */
typedef struct tram_plot_page {
    double width_mm, height_mm;
    int named;        /* 1: a4 or letter (either orientation may be used) */
    char name[24];    /* "a4", "letter" or "WxH" as given                 */
} tram_plot_page;

/* Parse "a4" (ISO 216: 210 x 297 mm), "letter" (8.5 x 11 in) or "WxH" in
 * millimetres (e.g. "420x297", each side 50 to 2000 mm). */
TRAM_API tram_status tram_plot_page_parse(const char *s, tram_plot_page *out, tram_error *err);

/* The board as a one-page PDF at true scale: 1 PDF unit = 1 pt = 1/72 in,
 * each square exactly b->square in b->unit.  The pattern is centred with
 * a white margin of at least one square; below it the board's numbers,
 * "print at 100% / actual size", and a 100 mm scale bar with millimetre
 * ticks to check the print with a ruler.  A named page is turned to
 * landscape when the pattern fits only that way.  A board that does not
 * fit is TRAM_EINPUT with the needed and available sizes in mm.  The file
 * is rendered in memory and written atomically (an existing path is
 * refused unless overwrite). */
TRAM_API tram_status tram_plot_board_write_pdf(const tram_board *b, const tram_plot_page *page,
                                               const char *path, int overwrite, tram_error *err);
/* Whether the board fits the page as tram_plot_board_write_pdf lays it
 * out (the same refusal, nothing drawn). */
TRAM_API tram_status tram_plot_board_check_page(const tram_board *b, const tram_plot_page *page,
                                                tram_error *err);
/* The same page as an 8-bit grey PNG at dpi pixels per inch (50 to 2400;
 * its pHYs chunk records the resolution), at most TRAM_IMAGE_MAX_PIXELS
 * pixels. */
TRAM_API tram_status tram_plot_board_write_png(const tram_board *b, const tram_plot_page *page,
                                               double dpi, const char *path, int overwrite,
                                               tram_error *err);

/* ---- detected corners (src/plot/detect_plot.c, docs/images.md) ------ */

/* One image with its detection: the image in grey, every corner found
 * (blue) on the board's lattice, corner 0 ringed in orange, and the
 * target frame's x (red) and y (green) directions as arrows from corner 0.
 * Pixel (u, v) of the image (centre of the top-left pixel (0, 0)) is drawn
 * at the centre of its square.  Long sides over 1600 pixels are scaled
 * down, under 640 up.  title: a line above the image (NULL: none). */
TRAM_API tram_status tram_plot_detection(const tram_grey_image *im, const tram_board *b,
                                         const tram_detection *d, const char *title,
                                         tram_image **out, tram_error *err);

/* Coverage of the image frame: every corner of every board found (one
 * colour per image) over the frame width x height, each board's outline,
 * and an 8 x 6 grid with the cells that hold a corner shaded. */
typedef struct tram_plot_coverage_data {
    size_t width, height;                 /* image size, pixels             */
    size_t n;                             /* detections                     */
    const tram_detection *const *det;     /* n detections; found ones drawn */
    const tram_board *board;              /* for the outlines (NULL: none)  */
    const char *title;
} tram_plot_coverage_data;

TRAM_API tram_status tram_plot_coverage(const tram_plot_coverage_data *d, tram_image **out,
                                        tram_error *err);

/* ---- camera calibration (src/plot/camera_plot.c, docs/camera.md) ---- */

/* Reprojection residuals of one view (or of all views together) over the
 * image frame width x height: a dot at every observed corner and an arrow
 * from it along the residual (observed minus projected) magnified by a
 * round factor chosen so that the largest residual spans about a tenth of
 * the frame; the factor is printed with a 1-pixel key arrow.  Outliers are
 * vermillion, inliers blue.  Long sides are drawn at 640 .. 1600 picture
 * pixels. */
typedef struct tram_plot_reprojection_data {
    size_t width, height;         /* image size, pixels                      */
    size_t n;
    const double *uv;             /* 2n observed pixels                       */
    const double *residual_px;    /* 2n residuals, observed minus projected   */
    const int *outlier;           /* n flags, or NULL                         */
    double rms_px;                /* printed in the footer (NaN: not printed) */
    const char *title;
} tram_plot_reprojection_data;

TRAM_API tram_status tram_plot_reprojection(const tram_plot_reprojection_data *d,
                                            tram_image **out, tram_error *err);

/* The camera's distortion field: on a grid over the image, an arrow from
 * where the pinhole alone would put a ray's pixel to where the distortion
 * puts it (magnified by a printed round factor), over a shading of the
 * displacement's length in bands of a round step in pixels (the band
 * edges are its contours). */
TRAM_API tram_status tram_plot_distortion(const tram_camera *c, const char *title,
                                          tram_image **out, tram_error *err);

/* Release cairo's and fontconfig's static data (for leak checkers at exit). */
TRAM_API void tram_plot_shutdown(void);

#ifdef __cplusplus
}
#endif
#endif
