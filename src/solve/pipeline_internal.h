/*
 * pipeline_internal.h - what the solve pipeline's stages share
 * (pipeline.c): diagnostics, the solution's parts, station poses, the
 * length scale and the quick fit.
 */
#ifndef TRAM_PIPELINE_INTERNAL_H
#define TRAM_PIPELINE_INTERNAL_H

#include "tram/solve.h"
#include "core/tram_internal.h"

struct tram_point_result;
struct tram_pixel_result;

/* Append a diagnostic; returns TRAM_ENOMEM when it cannot. */
tram_status tram__diag_add(tram_solution *s, const char *code, tram_severity sev,
                           const char *fmt, ...) TRAM_PRINTF(4, 5);

/* P and S arrays of the generic problem P_i X S_i = Z for the setup
 * (tram/handeye.h).  Caller frees both with tram__free. */
tram_status tram__station_poses(const tram_records *r, tram_setup setup, tram_se3 **P,
                                tram_se3 **S);

/* A quick robust solve (Park-Martin start, Cauchy refinement) used to
 * compare readings of the same data: median rotation residual (rad) and
 * median translation residual.  Returns TRAM_OK or a failure status. */
tram_status tram__quick_fit(const tram_se3 *P, const tram_se3 *S, size_t n, double *med_rot,
                            double *med_trans, tram_se3 *X, tram_se3 *Z);

/* Free a point-solve result (NULL is a no-op). */
void tram__point_result_free(struct tram_point_result *p);
/* Free a pixel-solve result (NULL is a no-op). */
void tram__pixel_result_free(struct tram_pixel_result *p);

/* Median distance of the flange and target origins from their frames'
 * origins: the problem's length scale (1 when it is 0). */
double tram__length_scale(const tram_se3 *P, const tram_se3 *S, size_t n);

/* 95% half-widths of u's sigmas with Student's t at dof degrees of
 * freedom, the same for all 12 (NaN when dof <= 0). */
void tram__unc_intervals(tram_uncertainty *u, double dof);

/* Floor the noise of noise-free data so that weights stay finite. */
void tram__floor_noise(double *sa, double *sl, double lscale);

/* The refinement's parameter index (rotation, translation per block:
 * refine_internal.h) of public uncertainty index a (translation, rotation
 * per block: tram/solve.h). */
int tram__pub_param(int a);

/* A station bootstrap's result (refinement order: lengths and rad) into
 * sol->unc (public order: lengths and degrees): bootstrap_valid set when
 * used > 1, cleared otherwise. */
void tram__unc_store_bootstrap(tram_uncertainty *u, const double sigma[12], const double lo[12],
                               const double hi[12], size_t used);

#endif
