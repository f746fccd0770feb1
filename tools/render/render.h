/*
 * render.h - a test renderer of chessboard images with known truth: the
 * board of tram/image.h seen by the Brown-Conrady camera of tram/camera.h
 * (Brown 1966) at a known pose, for the accuracy and false-detection tests
 * of the corner detector, its benchmark and the demo's image scene.  Not
 * part of libtram: it is linked into tests, benchmarks and tools only.
 *
 * Image formation (docs/testing.md, "The test renderer"):
 *   1. Inverse mapping.  Each sample point (u, v) of the image is turned
 *      into a ray by tram_camera_unproject, intersected with the board
 *      plane z = 0 of the target frame, and coloured by what it hits:
 *      a black or white square, the white border, the back of the board
 *      (a plain plate) or nothing (the background layer).
 *   2. Adaptive supersampling.  The labels (which square / border cell /
 *      outside region) at the four corners of a pixel are compared; a
 *      pixel whose corners all hit one convex cell is that cell's colour,
 *      any other pixel is the mean of n^2 samples of a rank-1 lattice (one
 *      in every row and column of an n^2 x n^2 grid: low discrepancy).
 *   3. The background layer: a constant grey, with optional clutter
 *      (rectangles, lines, blobs, small checker patches) drawn behind the
 *      board; optional occluder (a blob in front of the board).
 *   4. Lighting: a gain ramp across the image (gain_min .. gain_max) and
 *      an optional radial fall-off (vignetting).
 *   5. Optical blur: a Gaussian of blur_sigma_px.
 *   6. Sensor noise: additive Gaussian of noise_sigma grey levels
 *      (splitmix64 and Box-Muller), then clipping to 0 .. 255.
 *
 * Conventions are those of the library: pixel (0, 0) is the centre of the
 * top-left pixel and a pixel covers [u - 0.5, u + 0.5] x [v - 0.5, v + 0.5];
 * board corner (c, r) is at (c s, r s, 0) in the target frame, id r*cols+c;
 * the square touching corner 0 on its -x,-y side is black; the front of
 * the board faces -z.  The true corners are the projections of the board
 * corners through tram_camera_project, the same model the image is made
 * with.
 *
 * Ownership: images from render_* are freed with render_image_destroy,
 * truths with render_truth_free.  All random choices come from the
 * scene's seed; the same scene renders the same image.
 */
#ifndef TRAM_RENDER_H
#define TRAM_RENDER_H

#include "tram/camera.h"
#include "tram/image.h"
#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct render_scene {
    tram_board board;          /* the printed board; its length unit is that of the pose */
    tram_camera camera;        /* camera.width x camera.height is the image size */
    tram_se3 T_sensor_target;  /* pose of the board (target frame) in the camera frame */
    int board_present;         /* 0: background (and clutter) only              */
    int border_squares;        /* white margin around the pattern, squares (>= 1) */
    double black, white;       /* grey levels of the squares (30, 220)          */
    double background;         /* grey level behind the board (110)            */
    double plate;              /* grey of the board's back side (140)          */
    int supersample;           /* n: n^2 samples at mixed pixels, 1 .. 64 (8)    */
    double blur_sigma_px;      /* Gaussian blur (0: none)                        */
    double gain_min, gain_max; /* lighting gain ramp across the image (1, 1)    */
    double gain_angle_deg;     /* ramp direction: 0 gain grows with u, 90 with v */
    double vignetting;         /* smooth fall-off: gain x (1 - vignetting (r/rc)^2), r from
                                  the principal point, rc its distance to the farthest
                                  image corner (0: none; 0.3: corners at 70 %) */
    double noise_sigma;        /* additive Gaussian noise, grey levels (0)      */
    int clip;                  /* 1: clip to 0 .. 255 after the noise (1)      */
    int clutter;               /* number of clutter shapes behind the board (0)  */
    int occluder;              /* 1: a blob in front of the board (0)           */
    double occluder_uv[2];     /* its centre, pixels; NaN: a random board point  */
    double occluder_radius_px; /* its mean radius; 0: 1.5 squares               */
    double occluder_level;     /* its grey level (70)                            */
    unsigned long long seed;   /* clutter, occluder and noise                   */
} render_scene;

/* The true corners of a scene. */
typedef struct render_truth {
    size_t ncorners;          /* cols * rows                                     */
    double *uv;               /* 2 * ncorners: pixel of corner id i at uv[2i], uv[2i+1] */
    unsigned char *inside;    /* 1: in front of the camera, 0 <= u <= W-1, 0 <= v <= H-1 */
    unsigned char *occluded;  /* 1: under the occluder or within 3 px of its edge */
    size_t ninside;           /* corners inside the image                       */
    size_t nvisible;          /* inside, not occluded, printed side to the camera */
    int front;                /* 1: the camera sees the board's printed side   */
    double square_px;         /* mean distance between neighbouring corners, px */
} render_truth;

/* Defaults (values in parentheses above) for board b, camera c (with its
 * width and height set) and pose T_sensor_target. */
void render_scene_init(render_scene *s, const tram_board *b, const tram_camera *c,
                       const tram_se3 *T_sensor_target);

/* A pose that shows the board's centre at distance dist (board length unit)
 * on the ray of normalised image point (x, y) = (ox, oy), tilted by
 * tilt_deg about an in-plane axis at tilt_dir_deg from the camera's x axis,
 * and rolled by roll_deg about the optical axis.  tilt 0, roll 0 is the
 * board fronto-parallel, target x along u and y along v, printed side to
 * the camera. */
void render_pose_facing(const tram_board *b, double dist, double ox, double oy,
                        double tilt_deg, double tilt_dir_deg, double roll_deg,
                        tram_se3 *T_sensor_target);

/* A grey image of width x height zeros (malloc; tram_grey_image layout). */
tram_grey_image *render_image_create(size_t width, size_t height);
void render_image_destroy(tram_grey_image *im);

/* The true corners only (no image).  0 ok, -1 out of memory or bad scene. */
int render_truth_compute(const render_scene *s, render_truth *truth);
void render_truth_free(render_truth *truth);

/* Render the scene.  *out is the new image; truth (may be NULL) receives
 * the true corners.  TRAM_EINPUT for a bad scene, TRAM_ENOMEM. */
tram_status render_chessboard(const render_scene *s, tram_grey_image **out, render_truth *truth,
                              tram_error *err);

/* An 8-bit grey PNG of im (values rounded, clipped to 0 .. 255), written
 * atomically (tram_file_write_atomic), replacing an existing file. */
tram_status render_png_write(const tram_grey_image *im, const char *path, tram_error *err);

/* The false-detection set: image i (0 .. RENDER_NEGATIVE_COUNT-1) of
 * board b seen by camera c, none of which shows the whole board:
 *   0 .. 6    no board, clutter only (with small checker patches);
 *   7 .. 13   the board partly outside the image;
 *   14 .. 19  the board in view but partly covered by an occluder.
 * Deterministic in i; the scene is chosen so that at least one corner
 * is not visible (truth->nvisible < ncorners). */
#define RENDER_NEGATIVE_COUNT 20
tram_status render_negative(int i, const tram_board *b, const tram_camera *c,
                            tram_grey_image **out, render_truth *truth, tram_error *err);

/* The detection benchmark's scene: a 2592 x 1944 (5 MP) camera (fx = fy =
 * 2200 px, k1 = -0.08), board b at a seeded oblique pose filling about
 * half the image, blur 0.8 px, noise 2 levels, gain 0.7 .. 1.2, vignetting
 * 0.2, clutter. */
void render_scene_5mp(const tram_board *b, unsigned long long seed, render_scene *s);

#ifdef __cplusplus
}
#endif
#endif
