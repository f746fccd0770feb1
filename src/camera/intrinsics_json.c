/*
 * intrinsics_json.c - the JSON report of a camera calibration (tram
 * intrinsics --json; schema: docs/camera.md): the camera file's document
 * embedded, the fit's figures, every view and every corner's residual.
 * Built through json_internal.h, so a failed allocation never yields a
 * partial document; numbers print with %.17g.
 */
#include "camera/camera_file_internal.h"

static void add_views(tram__jb *b, cJSON *root, const tram_intrinsics_result *r)
{
    cJSON *a = tram__jb_arr(b, root, "views");
    for (size_t k = 0; a && k < r->nviews; k++) {
        const tram_intrinsics_view *v = &r->views[k];
        cJSON *e = tram__jb_obj(b, a, NULL);
        cJSON *T = tram__jb_arr(b, e, "T_sensor_target");
        for (int i = 0; i < 4; i++) tram__jb_vec(b, T, NULL, v->T_sensor_target.m[i], 4, 1);
        tram__jb_str(b, e, "station", v->id);
        tram__jb_num(b, e, "points", (double)v->nobs);
        tram__jb_num(b, e, "outliers", (double)v->noutliers);
        tram__jb_num(b, e, "rms_px", v->rms_px);
        tram__jb_num(b, e, "tilt_x_deg", v->tilt_x_deg);
        tram__jb_num(b, e, "tilt_y_deg", v->tilt_y_deg);
        tram__jb_vec(b, e, "sigma_rotation_deg", v->sigma_rot_deg, 3, 1);
        tram__jb_vec(b, e, "sigma_translation", v->sigma_t, 3, 1);
    }
}

static void add_residuals(tram__jb *b, cJSON *root, const tram_pixel_obs *obs,
                          const tram_intrinsics_result *r)
{
    cJSON *a = tram__jb_arr(b, root, "residuals");
    for (size_t i = 0; a && i < r->nobs; i++) {
        cJSON *e = tram__jb_obj(b, a, NULL);
        tram__jb_str(b, e, "station", obs->station_id[obs->station[i]]);
        tram__jb_str(b, e, "point", obs->point_id[obs->point[i]]);
        tram__jb_num(b, e, "du_px", r->residual_px[2 * i]);
        tram__jb_num(b, e, "dv_px", r->residual_px[2 * i + 1]);
        tram__jb_bool(b, e, "outlier", r->outlier[i]);
    }
}

tram_status tram_intrinsics_report_to_json(const tram_intrinsics_report *rep, char **text,
                                           tram_error *err)
{
    *text = NULL;
    const tram_intrinsics_result *r = rep->result;
    tram__jb b = {0};
    cJSON *root = cJSON_CreateObject();
    if (!root) b.failed = 1;
    tram__jb_str(&b, root, "format", "tram-intrinsics-report");
    tram__jb_num(&b, root, "version", 1);
    tram__jb_str(&b, root, "observations", rep->obs->source);
    tram__jb_str(&b, root, "target", rep->target);
    tram__jb_str(&b, root, "length_unit", rep->length_unit);
    tram__jb_str(&b, root, "loss", rep->robust ? "huber" : "squared");
    tram_status st = tram__camera_add_json(&b, root, "camera", &r->camera, &r->calib, err);
    if (st != TRAM_OK) {
        cJSON_Delete(root);
        return st;
    }
    tram__jb_num(&b, root, "rms_px", r->rms_px);
    tram__jb_num(&b, root, "noise_px", r->noise_px);
    tram__jb_num(&b, root, "outlier_threshold_px", r->outlier_px);
    tram__jb_num(&b, root, "coverage", r->coverage);
    tram__jb_num(&b, root, "max_tilt_x_deg", r->max_tilt_x_deg);
    tram__jb_num(&b, root, "max_tilt_y_deg", r->max_tilt_y_deg);
    cJSON *o = tram__jb_obj(&b, root, "initial");
    tram__jb_num(&b, o, "fx", r->initial.fx);
    tram__jb_num(&b, o, "fy", r->initial.fy);
    tram__jb_num(&b, o, "cx", r->initial.cx);
    tram__jb_num(&b, o, "cy", r->initial.cy);
    tram__jb_num(&b, o, "skew", r->initial.skew);
    add_views(&b, root, r);
    add_residuals(&b, root, rep->obs, r);
    cJSON *w = tram__jb_arr(&b, root, "warnings");
    for (size_t k = 0; k < rep->nwarnings; k++) tram__jb_str(&b, w, NULL, rep->warnings[k]);
    tram__jb_str(&b, root, "result", "consistent with the data; NOT verified on the cell");
    tram__jb_str(&b, root, "caution", rep->caution);
    return tram__jb_finish(&b, root, 1, 1, text, err);
}
