/*
 * solution_json.c - the JSON document of a solution, and of a calibration
 * file (the solution plus the station data a later mount check needs).
 * Schema: docs/solve.md.  Numbers are printed with %.17g (exact round
 * trip); values that are not defined are null.
 */
#include "tram/points.h"
#include "tram/rotation.h"
#include "solve_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define RAD2DEG (180.0 / TRAM_PI)

static cJSON *num(double v)
{
    if (!isfinite(v)) return cJSON_CreateNull();
    char buf[40];
    snprintf(buf, sizeof buf, "%.17g", v == 0.0 ? 0.0 : v);
    return cJSON_CreateRaw(buf);
}

static void put(cJSON *o, const char *k, double v) { cJSON_AddItemToObject(o, k, num(v)); }

static cJSON *vec(const double *v, int n, double f)
{
    cJSON *a = cJSON_CreateArray();
    for (int i = 0; a && i < n; i++) cJSON_AddItemToArray(a, num(v[i] * f));
    return a;
}

static cJSON *matrix4(const tram_se3 *T)
{
    cJSON *m = cJSON_CreateArray();
    for (int i = 0; m && i < 4; i++) cJSON_AddItemToArray(m, vec(T->m[i], 4, 1.0));
    return m;
}

static cJSON *transform(const tram_se3 *T)
{
    cJSON *o = cJSON_CreateObject();
    tram_mat3 R;
    double t[3], w[3];
    tram_quat_wxyz q;
    tram_se3_to_rt(T, &R, t);
    tram_quat_wxyz_from_mat3(&R, &q);
    tram_so3_log(&R, w);
    double qv[4] = {q.w, q.x, q.y, q.z};
    cJSON_AddItemToObject(o, "matrix", matrix4(T));
    cJSON_AddItemToObject(o, "translation", vec(t, 3, 1.0));
    cJSON_AddItemToObject(o, "quaternion_wxyz", vec(qv, 4, 1.0));
    cJSON_AddItemToObject(o, "rotation_vector_deg", vec(w, 3, RAD2DEG));
    return o;
}

static cJSON *stats(const tram_stats *s)
{
    cJSON *o = cJSON_CreateObject();
    put(o, "rms", s->rms);
    put(o, "median", s->median);
    put(o, "max", s->max);
    return o;
}

static cJSON *unc_block(const double *v, int off, int with95)
{
    cJSON *o = cJSON_CreateObject();
    double t[3], r[3], t95[3], r95[3];
    for (int i = 0; i < 3; i++) {
        t[i] = v[off + i];
        r[i] = v[off + 3 + i];
        t95[i] = 1.96 * t[i];
        r95[i] = 1.96 * r[i];
    }
    cJSON_AddItemToObject(o, "translation_sigma", vec(t, 3, 1.0));
    cJSON_AddItemToObject(o, "rotation_sigma_deg", vec(r, 3, 1.0));
    if (with95) {
        cJSON_AddItemToObject(o, "translation_95", vec(t95, 3, 1.0));
        cJSON_AddItemToObject(o, "rotation_95_deg", vec(r95, 3, 1.0));
    }
    return o;
}

static const char *severity_name(tram_severity s)
{
    return s == TRAM_SEVERITY_ERROR ? "error" : s == TRAM_SEVERITY_WARNING ? "warning" : "info";
}

tram_status tram_solution_to_json(const tram_solution *s, const tram_records *r,
                                  const char *method_name, int calibration, char **text,
                                  tram_error *err)
{
    *text = NULL;
    cJSON *root = cJSON_CreateObject();
    if (!root) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    cJSON_AddStringToObject(root, "format", calibration ? "tram-calibration" : "tram-solution");
    cJSON_AddNumberToObject(root, "version", 1);
    cJSON_AddStringToObject(root, "tool", "tram " TRAM_VERSION_STRING);
    cJSON_AddStringToObject(root, "setup", tram_setup_name(s->setup));
    cJSON_AddStringToObject(root, "method", method_name ? method_name : "auto");
    cJSON_AddStringToObject(root, "start_method", tram_method_name(s->start_method));
    cJSON_AddBoolToObject(root, "refined", s->refined);
    cJSON_AddStringToObject(root, "length_unit", tram_unit_length_name(s->length_unit));
    cJSON_AddBoolToObject(root, "solved", s->solved);
    cJSON_AddBoolToObject(root, "trustworthy", s->trustworthy);
    /* tram never knows whether a result was verified on the cell. */
    cJSON_AddBoolToObject(root, "verified_on_cell", 0);
    if (s->solved) {
        cJSON *tr = cJSON_AddObjectToObject(root, "transforms");
        cJSON_AddItemToObject(tr, s->X_name, transform(&s->X));
        cJSON_AddItemToObject(tr, s->Z_name, transform(&s->Z));
        cJSON *res = cJSON_AddObjectToObject(root, "residuals");
        cJSON_AddStringToObject(res, "definition",
                                "per station: rotation angle and translation distance between "
                                "the station's prediction of the fixed transform and the "
                                "solution; statistics over stations not flagged as outliers");
        cJSON_AddItemToObject(res, "rotation_deg", stats(&s->rot_deg));
        cJSON_AddItemToObject(res, "translation", stats(&s->trans));
        cJSON *arr = cJSON_AddArrayToObject(res, "stations");
        for (size_t i = 0; arr && i < s->n; i++) {
            cJSON *o = cJSON_CreateObject();
            cJSON_AddItemToArray(arr, o);
            cJSON_AddStringToObject(o, "station", r->stations[i].id);
            put(o, "rotation_deg", s->stations[i].rot_deg);
            put(o, "translation", s->stations[i].trans);
            cJSON_AddBoolToObject(o, "outlier", s->stations[i].outlier);
            if (s->points) put(o, "point_rms", s->points->station_rms[i]);
        }
        if (s->points) {
            const tram_point_result *pr = s->points;
            cJSON_AddItemToObject(res, "point", stats(&pr->point));
            cJSON *pa = cJSON_AddArrayToObject(res, "points");
            for (size_t k = 0; pa && k < pr->npoints; k++) {
                cJSON *o = cJSON_CreateObject();
                cJSON_AddItemToArray(pa, o);
                cJSON_AddStringToObject(o, "point", pr->point_id[k]);
                put(o, "rms", pr->point_rms[k]);
            }
            size_t nex = 0;
            for (size_t k = 0; k < pr->nobs; k++) nex += (size_t)pr->excluded[k];
            cJSON_AddNumberToObject(res, "excluded_observations", (double)nex);
            cJSON *md = cJSON_AddObjectToObject(root, "model");
            cJSON_AddStringToObject(md, "source", pr->with_model ? "given" : "solved");
            cJSON_AddStringToObject(md, "frame", "target");
            cJSON *mp = cJSON_AddArrayToObject(md, "points");
            for (size_t k = 0; mp && k < pr->npoints; k++) {
                cJSON *o = cJSON_CreateObject();
                cJSON_AddItemToArray(mp, o);
                cJSON_AddStringToObject(o, "point", pr->point_id[k]);
                cJSON_AddItemToObject(o, "xyz", vec(pr->model_xyz + 3 * k, 3, 1.0));
            }
            put(md, "noise_length", pr->noise_length);
        }
        cJSON *u = cJSON_AddObjectToObject(root, "uncertainty");
        cJSON_AddStringToObject(u, "definition",
                                "1-sigma and 95% (1.96 sigma) per axis from the refinement's "
                                "Jacobian scaled by the residual variance; translation along the "
                                "parent frame's axes, rotation about the solved frame's own axes");
        cJSON_AddBoolToObject(u, "valid", s->unc.valid);
        if (s->unc.valid) {
            cJSON_AddItemToObject(u, s->X_name, unc_block(s->unc.sigma, 0, 1));
            cJSON_AddItemToObject(u, s->Z_name, unc_block(s->unc.sigma, 6, 1));
        }
        if (s->unc.bootstrap_valid) {
            cJSON *b = cJSON_AddObjectToObject(u, "bootstrap");
            cJSON_AddNumberToObject(b, "resamples", (double)s->unc.bootstrap_used);
            cJSON_AddItemToObject(b, s->X_name, unc_block(s->unc.bootstrap_sigma, 0, 0));
            cJSON_AddItemToObject(b, s->Z_name, unc_block(s->unc.bootstrap_sigma, 6, 0));
        }
        cJSON *nz = cJSON_AddObjectToObject(root, "noise");
        put(nz, "length", s->noise_length);
        put(nz, "angle_deg", s->noise_angle_deg);
        cJSON_AddStringToObject(nz, "source", s->noise_given ? "given" : "estimated");
    }
    cJSON *ob = cJSON_AddObjectToObject(root, "observability");
    cJSON_AddNumberToObject(ob, "stations", (double)s->n);
    cJSON_AddNumberToObject(ob, "outliers", (double)s->n_outliers);
    put(ob, "motion_min_deg", s->motion_min_deg);
    put(ob, "motion_max_deg", s->motion_max_deg);
    put(ob, "axis_spread_deg", s->axis_spread_deg);
    put(ob, "condition", s->refined ? s->condition : NAN);
    if (s->solved) {
        cJSON *cf = cJSON_AddArrayToObject(root, "closed_forms");
        for (int m = 1; cf && m < TRAM_METHOD_COUNT; m++) {
            cJSON *o = cJSON_CreateObject();
            cJSON_AddItemToArray(cf, o);
            cJSON_AddStringToObject(o, "method", tram_method_name((tram_method)m));
            put(o, "rotation_rms_deg", s->closed_rot_rms_deg[m]);
            put(o, "translation_rms", s->closed_trans_rms[m]);
        }
    }
    cJSON *dg = cJSON_AddArrayToObject(root, "diagnostics");
    for (size_t i = 0; dg && i < s->ndiag; i++) {
        cJSON *o = cJSON_CreateObject();
        cJSON_AddItemToArray(dg, o);
        cJSON_AddStringToObject(o, "code", s->diag[i].code);
        cJSON_AddStringToObject(o, "severity", severity_name(s->diag[i].severity));
        cJSON_AddStringToObject(o, "message", s->diag[i].message);
    }
    cJSON_AddStringToObject(root, "safety",
                            "Computed from the data only; not verified on the cell. Verify at "
                            "reduced speed, keep clear of the working envelope, and follow the "
                            "applicable robot-safety standards and local codes.");
    if (calibration) {
        cJSON *in = cJSON_AddObjectToObject(root, "input");
        char hex[24];
        snprintf(hex, sizeof hex, "%016llx", r->checksum);
        cJSON_AddStringToObject(in, "source", r->source);
        cJSON_AddStringToObject(in, "checksum_fnv1a64", hex);
        cJSON *arr = cJSON_AddArrayToObject(in, "stations");
        for (size_t i = 0; arr && i < r->count; i++) {
            cJSON *o = cJSON_CreateObject();
            cJSON_AddItemToArray(arr, o);
            cJSON_AddStringToObject(o, "station", r->stations[i].id);
            cJSON_AddItemToObject(o, "T_base_flange", matrix4(&r->stations[i].T_base_flange));
            if (r->has_block[TRAM_BLOCK_SENSOR])
                cJSON_AddItemToObject(o, "T_sensor_target", matrix4(&r->stations[i].T_sensor_target));
        }
        if (s->unc.valid) cJSON_AddItemToObject(root, "covariance", vec(s->unc.cov, 144, 1.0));
    }
    char *out = cJSON_Print(root);
    cJSON_Delete(root);
    if (!out) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    size_t len = strlen(out);
    *text = tram__malloc(len + 2);
    if (!*text) {
        cJSON_free(out);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    memcpy(*text, out, len);
    (*text)[len] = '\n';
    (*text)[len + 1] = '\0';
    cJSON_free(out);
    return TRAM_OK;
}
