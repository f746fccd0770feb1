/*
 * tram/register.h - point-set registration: the rigid (or similarity)
 * transform T_to_from with p_to = c R p_from + t that best maps one point
 * list onto the other, in the least-squares sense (weighted or not).
 *
 * Methods (docs/methods.md):
 *   SVD: Kabsch (Acta Cryst. A32, 1976); Arun, Huang & Blostein (IEEE PAMI
 *        9(5), 1987), with the reflection correction of Umeyama;
 *   unit quaternion: Horn (J. Opt. Soc. Am. A 4(4), 1987);
 *   similarity (scale c): Umeyama (IEEE PAMI 13(4), 1991).
 * Reflections are never returned as rotations (det R = +1 always).
 *
 * The in-memory entry point makes one streaming pass over the arrays,
 * accumulating weighted moments about the first pair of points (so that
 * large coordinates do not cancel), and can split the pass over threads.
 * Lengths are in the caller's unit.
 */
#ifndef TRAM_REGISTER_H
#define TRAM_REGISTER_H

#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum tram_register_method {
    TRAM_REGISTER_SVD = 0,   /* Kabsch / Arun et al.              */
    TRAM_REGISTER_QUATERNION /* Horn's closed form               */
} tram_register_method;

typedef struct tram_register_options {
    tram_register_method method;
    int scale;     /* 1: similarity (Umeyama), 0: rigid (c = 1)           */
    int dim;       /* 3 (default) or 2; 2D points have no z               */
    int threads;   /* worker threads for the moment pass (0 or 1: one)   */
} tram_register_options;

typedef struct tram_register_result {
    tram_se3 T_to_from;     /* rotation and translation (the scale is not in it) */
    double scale;           /* c (1 for rigid)                                    */
    double rms;             /* weighted RMS residual |p_to - (c R p_from + t)|     */
    double weight_sum;
    size_t n;
    /* 1-sigma per axis: translation (length) and rotation about the to-frame's
     * axes (deg); for 2D only index 0, 1 (translation) and 2 (rotation, deg). */
    double translation_sigma[3], rotation_sigma_deg[3];
    double scale_sigma;
    /* degeneracy: the singular values of the from-points' spread (length) */
    double spread[3];
} tram_register_result;

/* Register n point pairs.  from and to hold dim coordinates per point
 * (x, y[, z]) back to back; weights may be NULL (all 1) and must be >= 0.
 * Returns TRAM_EUNDETERMINED when the points cannot determine the
 * transform (fewer than 3 points in 3D or 2 in 2D, all points coincident,
 * or - in 3D - collinear points, which leave the rotation about their line
 * free); err names what cannot be determined. */
TRAM_API tram_status tram_register_points(const double *from, const double *to,
                                          const double *weights, size_t n,
                                          const tram_register_options *opt,
                                          tram_register_result *out, tram_error *err);

/* Residual |p_to - (c R p_from + t)| of each pair into res (n values). */
TRAM_API void tram_register_residuals(const double *from, const double *to, size_t n, int dim,
                                      const tram_register_result *r, double *res);

/* RANSAC (Fischler & Bolles, Commun. ACM 24(6), 1981) on minimal samples
 * (3 points in 3D, 2 in 2D), then refinement on the inliers.  threshold:
 * the inlier distance (length); 0 chooses it from the data as 2.5 times the
 * robust scale of the best least-median sample (Rousseeuw, J. Am. Statist.
 * Assoc. 79(388), 1984).  inlier (n flags) is filled; *used_threshold
 * reports the threshold.  seed makes the run reproducible. */
typedef void (*tram_register_progress_fn)(void *ctx, size_t done, size_t total);
TRAM_API tram_status tram_register_robust(const double *from, const double *to,
                                          const double *weights, size_t n,
                                          const tram_register_options *opt, double threshold,
                                          unsigned long long seed,
                                          tram_register_progress_fn progress, void *progress_ctx,
                                          tram_register_result *out, int *inlier,
                                          double *used_threshold, tram_error *err);

/* Plausibility of a registration (docs/points.md, "Plausibility"): the
 * absolute gate on the residual RMS and the pairing test (the pairs
 * registered again with the 'to' points paired at random). */
typedef struct tram_register_trust_options {
    double max_rms;          /* gate: RMS above max_rms + max_rms_fraction * the
                                working distance is implausible (length; the
                                command's default is 5 mm, common practice)      */
    double max_rms_fraction; /* 0.01 (common practice)                          */
    size_t permutations;     /* random pairings (30); 0: no pairing test         */
    unsigned long long seed;
    double factor;           /* the file's pairing must fit this many times better
                                than every random one (3)                       */
} tram_register_trust_options;

typedef struct tram_register_trust {
    double rms;              /* of the given registration (length)               */
    double working_distance; /* larger median distance of the points from their
                                frame's origin (length)                          */
    double limit;            /* the gate's RMS limit (length)                    */
    int gate_failed;
    size_t permutations;     /* random pairings fitted (0: test not run: fewer
                                than 5 pairs, or switched off)                  */
    double pairing_ratio;    /* smallest random pairing's RMS over the file's    */
    int pairing_failed;
} tram_register_trust;

/* The checks on n pairs registered as `res` (from tram_register_points or
 * _robust; inlier may be NULL or give the pairs used).  Fills *out;
 * TRAM_OK or TRAM_ENOMEM. */
TRAM_API tram_status tram_register_trust_check(const double *from, const double *to,
                                               const double *weights, size_t n,
                                               const tram_register_options *opt,
                                               const tram_register_result *res,
                                               const int *inlier,
                                               const tram_register_trust_options *topt,
                                               tram_register_trust *out, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
