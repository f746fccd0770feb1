/*
 * pixels_json.c - the "pixels" member of a solution document from a solve
 * on pixels (pixels_solve.c): the reprojection residuals in pixels, per
 * station and overall, the pixel noise estimate and the camera used (its
 * values and 1-sigma, and whether its own calibration uncertainty is in the
 * covariance of X and Z).  Built through io/json.c.
 */
#include "solve/pixels_solve_internal.h"
#include "camera/camera_jac_internal.h"

void tram__pixel_result_json(tram__jb *b, cJSON *root, const tram_solution *s,
                             const tram_records *r)
{
    const tram_pixel_result *p = s->pixels;
    if (!p) return;
    cJSON *o = tram__jb_obj(b, root, "pixels");
    tram__jb_str(b, o, "unit", "px");
    tram__jb_str(b, o, "definition",
                 "reprojection distance of each corner: |project(camera, X^-1 P^-1 Z m) - uv|, "
                 "pixel origin top-left-pixel-centre");
    cJSON *st = tram__jb_obj(b, o, "residual");
    tram__jb_num(b, st, "rms", p->px.rms);
    tram__jb_num(b, st, "median", p->px.median);
    tram__jb_num(b, st, "max", p->px.max);
    tram__jb_num(b, o, "sigma_px", p->sigma_px);
    tram__jb_num(b, o, "corners", (double)p->nobs);
    tram__jb_num(b, o, "corner_outliers", (double)p->n_corner_outliers);
    tram__jb_num(b, o, "station_outliers", (double)p->n_station_outliers);
    tram__jb_num(b, o, "iterations", p->iterations);
    cJSON *arr = tram__jb_arr(b, o, "stations");
    for (size_t i = 0; arr && i < p->nstations; i++) {
        cJSON *e = tram__jb_obj(b, arr, NULL);
        if (r && i < r->count) tram__jb_str(b, e, "station", r->stations[i].id);
        tram__jb_num(b, e, "corners", (double)p->nobs_station[i]);
        tram__jb_num(b, e, "corners_used", (double)p->nused_station[i]);
        tram__jb_num(b, e, "rms_px", p->station_rms_px[i]);
        tram__jb_num(b, e, "pose_rms_px", p->pose_rms_px[i]);
        tram__jb_bool(b, e, "excluded", p->station_excluded[i]);
    }
    cJSON *cam = tram__jb_obj(b, o, "camera");
    tram__jb_bool(b, cam, "refined", p->intrinsics_refined);
    tram__jb_bool(b, cam, "uncertainty_included", p->camera_cov_used);
    if (p->camera_cov_used) {
        /* the camera's fraction of each variance: X then Z, translation x y z, rotation x y z */
        cJSON *sh = tram__jb_obj(b, cam, "variance_share");
        tram__jb_vec(b, sh, "X_translation", p->camera_share, 3, 1.0);
        tram__jb_vec(b, sh, "X_rotation", p->camera_share + 3, 3, 1.0);
        tram__jb_vec(b, sh, "Z_translation", p->camera_share + 6, 3, 1.0);
        tram__jb_vec(b, sh, "Z_rotation", p->camera_share + 9, 3, 1.0);
    }
    for (int k = 0; k < TRAM__CAM_NPARAM; k++) {
        static const char *const names[TRAM__CAM_NPARAM] = {"fx", "fy", "cx", "cy", "skew",
                                                            "k1", "k2", "k3", "p1", "p2"};
        double v[TRAM__CAM_NPARAM];
        tram__camera_params(&p->camera, v);
        cJSON *e = tram__jb_obj(b, cam, names[k]);
        tram__jb_num(b, e, "value", v[k]);
        tram__jb_num(b, e, "sigma", p->camera_sigma[k]);
    }
}
