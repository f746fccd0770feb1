/*
 * pipeline.c - what the solve pipeline's stages share (solve.c,
 * points_solve.c, diagnose.c, and check.c above them): the solution's
 * diagnostics list and lifetime, the reduction of records to the generic
 * problem P_i X S_i = Z (tram/handeye.h), the problem's length scale, and
 * the quick robust fit (Park-Martin start, Cauchy refinement) that the
 * convention doctor scores readings with; the mapping of the refinement's
 * parameter order to the public uncertainty order, and the copy of a
 * bootstrap's result into the solution.
 */
#include "solve/pipeline_internal.h"
#include "solve/refine_internal.h"
#include "math/stats_internal.h"
#include "tram/point_solve.h"
#include "tram/pixel_solve.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

tram_status tram__diag_add(tram_solution *s, const char *code, tram_severity sev,
                           const char *fmt, ...)
{
    tram_diagnostic *d = tram__realloc(s->diag, (s->ndiag + 1) * sizeof *d);
    if (!d) return TRAM_ENOMEM;
    s->diag = d;
    tram_diagnostic *x = &d[s->ndiag++];
    snprintf(x->code, sizeof x->code, "%s", code);
    x->severity = sev;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(x->message, sizeof x->message, fmt, ap);
    va_end(ap);
    if (sev >= TRAM_SEVERITY_WARNING) s->trustworthy = 0;
    return TRAM_OK;
}

void tram__point_result_free(struct tram_point_result *p)
{
    if (!p) return;
    tram__free(p->station_rms);
    tram__free(p->point_id);
    tram__free(p->point_rms);
    tram__free(p->residual);
    tram__free(p->excluded);
    tram__free(p->model_xyz);
    tram__free(p);
}

/* The pixel part of a solution (tram solve --pixels). */
void tram__pixel_result_free(struct tram_pixel_result *p)
{
    if (!p) return;
    tram__free(p->nobs_station);
    tram__free(p->nused_station);
    tram__free(p->station_rms_px);
    tram__free(p->pose_rms_px);
    tram__free(p->station_excluded);
    tram__free(p->residual_px);
    tram__free(p->excluded);
    tram__free(p);
}

void tram_solution_destroy(tram_solution *s)
{
    if (!s) return;
    tram__point_result_free(s->points);
    tram__pixel_result_free(s->pixels);
    tram__free(s->stations);
    tram__free(s->diag);
    tram__free(s);
}

tram_status tram__station_poses(const tram_records *r, tram_setup setup, tram_se3 **P,
                                tram_se3 **S)
{
    *P = tram__malloc(r->count * sizeof **P);
    *S = tram__malloc(r->count * sizeof **S);
    if (!*P || !*S) {
        tram__free(*P);
        tram__free(*S);
        *P = *S = NULL;
        return TRAM_ENOMEM;
    }
    for (size_t i = 0; i < r->count; i++) {
        if (setup == TRAM_SETUP_EYE_TO_HAND)
            tram_se3_invert(&r->stations[i].T_base_flange, &(*P)[i]); /* T_flange_base */
        else
            (*P)[i] = r->stations[i].T_base_flange;
        (*S)[i] = r->stations[i].T_sensor_target;
    }
    return TRAM_OK;
}

/* Distances from their frames' origins of the flange (even i) and of the
 * target (odd i): the lengths whose median sets the problem's scale. */
typedef struct scale_ctx {
    const tram_se3 *P, *S;
} scale_ctx;

static double origin_distance(const void *ctx, size_t i)
{
    const scale_ctx *c = ctx;
    const tram_se3 *T = i % 2 ? &c->S[i / 2] : &c->P[i / 2];
    return sqrt(tram__sq(T->m[0][3]) + tram__sq(T->m[1][3]) + tram__sq(T->m[2][3]));
}

double tram__length_scale(const tram_se3 *P, const tram_se3 *S, size_t n)
{
    scale_ctx c = {P, S};
    double m = tram__median_of(2 * n, origin_distance, &c);
    return m > 0 ? m : 1.0;
}

void tram__unc_intervals(tram_uncertainty *u, double dof)
{
    double t = dof > 0 ? tram__t_quantile(0.975, dof) : NAN;
    for (int a = 0; a < 12; a++) {
        u->dof[a] = dof > 0 ? dof : NAN;
        u->half95[a] = t * u->sigma[a];
    }
}

void tram__floor_noise(double *sa, double *sl, double lscale)
{
    /* Noise-free data: keep the weights finite. */
    if (!(*sa > 1e-12)) *sa = 1e-12;
    if (!(*sl > 1e-12 * lscale)) *sl = 1e-12 * lscale;
}

tram_status tram__quick_fit(const tram_se3 *P, const tram_se3 *S, size_t n, double *med_rot,
                            double *med_trans, tram_se3 *Xo, tram_se3 *Zo)
{
    tram_pair *pairs;
    size_t np;
    if (tram_handeye_pairs(n, TRAM_PAIRS_AUTO, &pairs, &np) != TRAM_OK) return TRAM_ENOMEM;
    tram_se3 X, Z;
    tram_error e;
    tram_status st =
        tram_handeye_closed_form(TRAM_METHOD_PARK_MARTIN, P, S, n, pairs, np, &X, &Z, &e);
    tram__free(pairs);
    if (st != TRAM_OK) return st;
    double *rot = tram__malloc(2 * n * sizeof *rot);
    if (!rot) return TRAM_ENOMEM;
    double *tr = rot + n;
    tram_handeye_residuals(P, S, n, &X, &Z, rot, tr);
    tram_refine_problem pb = {.P = P, .S = S, .n = n,
                              .sigma_angle = tram__robust_sigma3(rot, n),
                              .sigma_length = tram__robust_sigma3(tr, n),
                              .length_scale = tram__length_scale(P, S, n)};
    tram__floor_noise(&pb.sigma_angle, &pb.sigma_length, pb.length_scale);
    st = tram__refine_run(&pb, NULL, 1, &X, &Z);
    if (st == TRAM_OK) {
        tram_handeye_residuals(P, S, n, &X, &Z, rot, tr);
        *med_rot = tram__median(rot, n);
        *med_trans = tram__median(tr, n);
        if (Xo) *Xo = X;
        if (Zo) *Zo = Z;
    }
    tram__free(rot);
    return st;
}

int tram__pub_param(int a)
{
    int block = a / 6, k = a % 6;
    return block * 6 + (k < 3 ? 3 + k : k - 3);
}

void tram__unc_store_bootstrap(tram_uncertainty *u, const double sigma[12], const double lo[12],
                               const double hi[12], size_t used)
{
    u->bootstrap_valid = 0;
    if (used < 2) return;
    u->bootstrap_valid = 1;
    u->bootstrap_used = used;
    for (int a = 0; a < 12; a++) {
        int q = tram__pub_param(a);
        double f = (a % 6) >= 3 ? 180.0 / TRAM_PI : 1.0;
        u->bootstrap_sigma[a] = sigma[q] * f;
        u->bootstrap_lo[a] = lo[q] * f;
        u->bootstrap_hi[a] = hi[q] * f;
    }
}
