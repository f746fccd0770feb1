/*
 * cmd_solve_pixels.c - the --pixels part of "tram solve": reading the
 * pixel observations, the camera and the target (board or model), the
 * solve refined on pixels (tram/pixel_solve.h) and its summary lines.
 */
#include "cli.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

tram_status cli_solve_pixels(const tram_records *r, tram_setup setup, const cli_pixel_args *a,
                             const tram_solve_options *so, tram_solution **s, tram_error *err)
{
    tram_pixel_obs *obs = NULL;
    tram_point_model *mdl = NULL;
    tram_camera cam;
    tram_camera_calib cal;
    tram_board board;
    double *xyz = NULL, cov[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM];
    tram_status st = tram_pixel_obs_read_file(a->pixels, &obs, err);
    if (st == TRAM_OK) st = tram_camera_read_file(a->camera, &cam, &cal, err);
    if (st == TRAM_OK && a->board) {
        st = tram_board_read_file(a->board, &board, err);
        if (st == TRAM_OK) st = tram_pixel_target_from_board(obs, &board, r->length_unit, &xyz, err);
    } else if (st == TRAM_OK) {
        st = tram_point_model_read_file(a->model, r, &mdl, err);
        if (st == TRAM_OK) st = tram_pixel_target_from_model(obs, mdl, &xyz, err);
    }
    /* the camera file's own uncertainty goes into the intervals of X */
    int kind = st == TRAM_OK ? tram_camera_calib_covariance(&cal, cov) : 0;
    tram_pixel_solve_options po;
    tram_pixel_solve_options_init(&po);
    po.refine_intrinsics = a->refine_intrinsics;
    po.camera_cov = kind ? cov : NULL;
    po.camera_path = a->camera;
    po.target_path = a->board ? a->board : a->model;
    po.target_is_model = !a->board;
    /* the skew is refined only for a camera calibrated with it free */
    po.free_skew = kind && cal.free_param[TRAM_CAM_SKEW];
    if (kind == 2 && !a->refine_intrinsics)
        fprintf(stderr, "tram solve: note: %s gives the camera's 1-sigma without their correlations; "
                        "its share of the intervals of X treats them as independent\n", a->camera);
    if (st == TRAM_OK) st = tram_solve_pixels(r, setup, &cam, obs, xyz, so, &po, s, err);
    tram_pixel_target_free(xyz);
    tram_point_model_destroy(mdl);
    tram_pixel_obs_destroy(obs);
    return st;
}

void cli_print_pixels(const tram_solution *s, const tram_records *r)
{
    const tram_pixel_result *p = s->pixels;
    if (!p) return;
    printf("\nreprojection residuals (pixels; corners of the target projected through X, Z and "
           "the camera)\n");
    printf("  %-16s %8s %10s %12s %14s\n", "station", "corners", "rms px", "pose rms px", "");
    for (size_t i = 0; i < p->nstations && i < r->count; i++)
        printf("  %-16s %3zu/%-4zu %10.4f %12.4f %14s\n", r->stations[i].id, p->nused_station[i],
               p->nobs_station[i], p->station_rms_px[i], p->pose_rms_px[i],
               p->nobs_station[i] == 0 ? "no pixels" : p->station_excluded[i] ? "OUTLIER (excluded)" : "");
    printf("  overall: rms %.4f px, median %.4f px, max %.4f px over the corners used; pixel "
           "noise per coordinate %.4g px\n",
           p->px.rms, p->px.median, p->px.max, p->sigma_px);
    printf("  %zu corner(s) and %zu station(s) flagged as outliers and left out\n",
           p->n_corner_outliers, p->n_station_outliers);
    if (p->intrinsics_refined) {
        const tram_camera *c = &p->camera;
        printf("  camera refined with the mount (1-sigma): fx %.4f (%.3g) fy %.4f (%.3g) cx %.4f "
               "(%.3g) cy %.4f (%.3g) px; skew %.4g px %s; k1 %.6g k2 %.6g k3 %.6g p1 %.6g p2 %.6g\n",
               c->fx, p->camera_sigma[0], c->fy, p->camera_sigma[1], c->cx, p->camera_sigma[2],
               c->cy, p->camera_sigma[3], c->skew,
               p->camera_sigma[TRAM_CAM_SKEW] > 0 ? "(refined: free in the camera file)" : "(held)",
               c->k1, c->k2, c->k3, c->p1, c->p2);
    }
}
