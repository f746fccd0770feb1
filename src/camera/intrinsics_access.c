/*
 * intrinsics_access.c - plain-value access to an intrinsics result for
 * bindings (python/tram), which then need not mirror its layout: the
 * camera file's text of the optimum, the RMS, and each view's id, pose and
 * RMS.
 */
#include "tram/camera.h"
#include "core/tram_internal.h"

#include <math.h>

tram_status tram_intrinsics_camera_json(const tram_intrinsics_result *r, char **text,
                                        tram_error *err)
{
    return tram_camera_to_json(&r->camera, &r->calib, text, err);
}

double tram_intrinsics_rms_px(const tram_intrinsics_result *r) { return r ? r->rms_px : NAN; }

size_t tram_intrinsics_view_count(const tram_intrinsics_result *r) { return r ? r->nviews : 0; }

const char *tram_intrinsics_view_id(const tram_intrinsics_result *r, size_t i)
{
    return r && i < r->nviews ? r->views[i].id : NULL;
}

int tram_intrinsics_view_pose(const tram_intrinsics_result *r, size_t i, double T[16],
                              double *rms_px)
{
    if (!r || i >= r->nviews) return 0;
    for (int a = 0; a < 16; a++) T[a] = r->views[i].T_sensor_target.m[a / 4][a % 4];
    if (rms_px) *rms_px = r->views[i].rms_px;
    return 1;
}

void tram_intrinsics_camera(const tram_intrinsics_result *r, tram_camera *out) { *out = r->camera; }
