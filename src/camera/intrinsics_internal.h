/*
 * intrinsics_internal.h - the bundle of a planar calibration shared by the
 * closed form and diagnostics (intrinsics.c) and the Levenberg-Marquardt
 * refinement with its covariance (intrinsics_lm.c).  Zhang (2000), "A
 * flexible new technique for camera calibration", IEEE PAMI 22(11).
 */
#ifndef TRAM_INTRINSICS_INTERNAL_H
#define TRAM_INTRINSICS_INTERNAL_H

#include "tram/camera.h"
#include "core/tram_internal.h"

/* The fixed data: per observation its view, target point and pixel. */
typedef struct tram__bundle {
    size_t nviews, nobs;
    const size_t *view;       /* nobs                                   */
    const double *xy;         /* 2 nobs, target plane (z = 0)            */
    const double *uv;         /* 2 nobs, observed pixels                 */
    int free_param[TRAM_CAM_NPARAM];
    int nint;                 /* number of free intrinsic parameters     */
} tram__bundle;

/* The unknowns: the camera and every view's pose (p_sensor = R p + t). */
typedef struct tram__bundle_state {
    tram_camera cam;
    tram_mat3 *R;             /* nviews */
    double (*t)[3];           /* nviews */
} tram__bundle_state;

/* Number of parameters: nint + 6 nviews. */
static inline size_t tram__bundle_nparam(const tram__bundle *b)
{
    return (size_t)b->nint + 6 * b->nviews;
}

/* Observed minus projected pixel of every observation into res (2 nobs);
 * returns 0 when a point falls behind the camera. */
int tram__bundle_residuals(const tram__bundle *b, const tram__bundle_state *s, double *res);

/* Levenberg-Marquardt (Marquardt 1963) on the sum over observations of
 * w_i rho(|r_i|), with w the fixed weights (0 drops an observation; NULL:
 * all 1) and rho the Huber loss (Huber 1964) of threshold huber_px
 * (0: squared loss), by iteratively reweighted normal equations solved
 * with Cholesky (LAPACKE dposv).  s is updated in place; *iterations is
 * the number of accepted steps.  When JtJ is not NULL it receives the
 * final J^T W J (nparam^2, W the loss weights at the optimum). */
tram_status tram__bundle_refine(const tram__bundle *b, tram__bundle_state *s, const double *w,
                                double huber_px, int max_iterations, int *iterations,
                                double *JtJ);

/* Pixel of target point xy of view k and its Jacobians: Jint (2 x
 * TRAM_CAM_NPARAM, row-major, every parameter) and Jpose (2 x 6: the
 * left rotation perturbation, then the translation).  Returns 0 behind the
 * camera. */
int tram__bundle_project(const tram_camera *c, const tram_mat3 *R, const double t[3],
                         const double xy[2], double uv[2], double *Jint, double *Jpose);

#endif
