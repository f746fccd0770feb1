/*
 * pixels_result.c - the pixel results of a solve from pixels
 * (pixels_solve.c): their allocation, and their mapping from the observed
 * stations back to every station of the record file (stations without
 * pixels get NaN residuals and are flagged as left out).
 */
#include "solve/pixels_solve_internal.h"
#include "solve/pipeline_internal.h"

#include <math.h>
#include <string.h>

tram_status tram__pixel_result_alloc(size_t nst, size_t nobs, tram_pixel_result **out)
{
    tram_pixel_result *p = tram__calloc(1, sizeof *p);
    if (!p) return TRAM_ENOMEM;
    size_t s = nst ? nst : 1, o = nobs ? nobs : 1;
    p->nstations = nst;
    p->nobs = nobs;
    p->nobs_station = tram__calloc(s, sizeof *p->nobs_station);
    p->nused_station = tram__calloc(s, sizeof *p->nused_station);
    p->station_rms_px = tram__calloc(s, sizeof *p->station_rms_px);
    p->pose_rms_px = tram__calloc(s, sizeof *p->pose_rms_px);
    p->station_excluded = tram__calloc(s, sizeof *p->station_excluded);
    p->residual_px = tram__calloc(o, sizeof *p->residual_px);
    p->excluded = tram__calloc(o, sizeof *p->excluded);
    *out = p;
    if (!p->nobs_station || !p->nused_station || !p->station_rms_px || !p->pose_rms_px ||
        !p->station_excluded || !p->residual_px || !p->excluded) {
        tram__pixel_result_free(p);
        *out = NULL;
        return TRAM_ENOMEM;
    }
    return TRAM_OK;
}

/* From the observed stations back to all stations of r (those without
 * pixels: NaN residuals, marked no_data; they are not outliers). */
tram_status tram__pixel_result_expand(tram_solution *sol, const tram_records *r, const size_t *keep_of_r)
{
    size_t n = r->count;
    tram_station_result *st = tram__calloc(n ? n : 1, sizeof *st);
    tram_pixel_result *pr = sol->pixels, *np = NULL;
    if (!st || (pr && tram__pixel_result_alloc(n, pr->nobs, &np) != TRAM_OK)) {
        tram__free(st);
        return TRAM_ENOMEM;
    }
    for (size_t i = 0; i < n; i++) {
        size_t j = keep_of_r[i];
        if (j == (size_t)-1) {
            st[i].rot_deg = st[i].trans = NAN;
            st[i].no_data = 1; /* left out, but not flagged: nothing was seen */
            if (np) {
                np->station_rms_px[i] = np->pose_rms_px[i] = NAN;
                np->station_excluded[i] = 1;
            }
            continue;
        }
        st[i] = sol->stations[j];
        if (np) {
            np->nobs_station[i] = pr->nobs_station[j];
            np->nused_station[i] = pr->nused_station[j];
            np->station_rms_px[i] = pr->station_rms_px[j];
            np->pose_rms_px[i] = pr->pose_rms_px[j];
            np->station_excluded[i] = pr->station_excluded[j];
        }
    }
    if (np) {
        double *a = np->residual_px, *b = pr->residual_px;
        int *ea = np->excluded, *eb = pr->excluded;
        size_t *s1 = np->nobs_station, *s2 = np->nused_station, *s3 = NULL;
        double *d1 = np->station_rms_px, *d2 = np->pose_rms_px;
        int *e1 = np->station_excluded;
        (void)s3;
        /* keep the new per-station arrays, the rest of the old result */
        memcpy(a, b, pr->nobs * sizeof *a);
        memcpy(ea, eb, pr->nobs * sizeof *ea);
        tram__free(pr->nobs_station);
        tram__free(pr->nused_station);
        tram__free(pr->station_rms_px);
        tram__free(pr->pose_rms_px);
        tram__free(pr->station_excluded);
        pr->nobs_station = s1;
        pr->nused_station = s2;
        pr->station_rms_px = d1;
        pr->pose_rms_px = d2;
        pr->station_excluded = e1;
        pr->nstations = n;
        np->nobs_station = NULL;
        np->nused_station = NULL;
        np->station_rms_px = NULL;
        np->pose_rms_px = NULL;
        np->station_excluded = NULL;
        tram__pixel_result_free(np);
    }
    tram__free(sol->stations);
    sol->stations = st;
    sol->n = n;
    return TRAM_OK;
}
