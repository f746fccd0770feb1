/*
 * check_json.c - JSON of a mount-check result (docs/check.md), and the
 * one-line record appended to a check history file.
 */
#include "tram/check.h"
#include "tram_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static cJSON *num(double v)
{
    if (!isfinite(v)) return cJSON_CreateNull();
    char buf[40];
    snprintf(buf, sizeof buf, "%.17g", v == 0.0 ? 0.0 : v);
    return cJSON_CreateRaw(buf);
}

static cJSON *vec3(const double *v)
{
    cJSON *a = cJSON_CreateArray();
    for (int i = 0; a && i < 3; i++) cJSON_AddItemToArray(a, num(v[i]));
    return a;
}

static cJSON *change(const tram_change *m, int full)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "model", m->model);
    cJSON_AddStringToObject(o, "frame", m->frame);
    cJSON_AddStringToObject(o, "transform", m->transform);
    cJSON_AddItemToObject(o, "translation", vec3(m->translation));
    cJSON_AddItemToObject(o, "rotation_deg", vec3(m->rotation_deg));
    cJSON_AddItemToObject(o, "translation_norm", num(m->translation_norm));
    cJSON_AddItemToObject(o, "rotation_angle_deg", num(m->rotation_angle_deg));
    if (full) {
        cJSON_AddItemToObject(o, "translation_sigma", vec3(m->translation_sigma));
        cJSON_AddItemToObject(o, "rotation_sigma_deg", vec3(m->rotation_sigma_deg));
        cJSON_AddItemToObject(o, "significance_chi2", num(m->significance));
        cJSON_AddItemToObject(o, "fit_chi2", num(m->fit_chi2));
        cJSON_AddItemToObject(o, "fit_threshold", num(m->fit_threshold));
        cJSON_AddBoolToObject(o, "fits", m->fits);
    }
    return o;
}

tram_status tram_check_result_to_json(const tram_check_result *res, const tram_records *r,
                                      int history, const char *timestamp_utc, char **text,
                                      tram_error *err)
{
    *text = NULL;
    cJSON *root = cJSON_CreateObject();
    if (!root) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    const tram_change *best = res->best ? &res->target : &res->sensor;
    if (history) {
        cJSON_AddStringToObject(root, "timestamp_utc", timestamp_utc ? timestamp_utc : "");
        cJSON_AddStringToObject(root, "verdict", tram_verdict_name(res->verdict));
        cJSON_AddNumberToObject(root, "stations", (double)res->n);
        cJSON_AddStringToObject(root, "length_unit", tram_unit_length_name(res->length_unit));
        cJSON_AddItemToObject(root, "change", change(best, 0));
        cJSON_AddStringToObject(root, "records", r->source);
        char *line = cJSON_PrintUnformatted(root);
        cJSON_Delete(root);
        if (!line) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        *text = malloc(strlen(line) + 1);
        if (*text) strcpy(*text, line);
        cJSON_free(line);
        return *text ? TRAM_OK : tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    }
    cJSON_AddStringToObject(root, "format", "tram-check");
    cJSON_AddNumberToObject(root, "version", 1);
    cJSON_AddStringToObject(root, "tool", "tram " TRAM_VERSION_STRING);
    cJSON_AddStringToObject(root, "verdict", tram_verdict_name(res->verdict));
    cJSON_AddStringToObject(root, "setup", tram_setup_name(res->setup));
    cJSON_AddStringToObject(root, "length_unit", tram_unit_length_name(res->length_unit));
    cJSON_AddItemToObject(root, "change", change(best, 1));
    cJSON *cands = cJSON_AddArrayToObject(root, "candidates");
    cJSON_AddItemToArray(cands, change(&res->sensor, 1));
    cJSON_AddItemToArray(cands, change(&res->target, 1));
    cJSON *t = cJSON_AddObjectToObject(root, "test");
    cJSON_AddItemToObject(t, "chi2_unchanged", num(res->chi2_none));
    cJSON_AddNumberToObject(t, "dof_unchanged", (double)res->dof_none);
    cJSON_AddItemToObject(t, "threshold_unchanged", num(res->threshold_none));
    cJSON_AddItemToObject(t, "false_alarm_rate", num(res->false_alarm));
    cJSON_AddItemToObject(t, "orientation_spread_deg", num(res->orientation_spread_deg));
    cJSON *arr = cJSON_AddArrayToObject(root, "stations");
    for (size_t i = 0; arr && i < res->n; i++) {
        cJSON *o = cJSON_CreateObject();
        cJSON_AddItemToArray(arr, o);
        cJSON_AddStringToObject(o, "station", r->stations[i].id);
        cJSON_AddItemToObject(o, "rotation_deg", num(res->stations[i].rot_deg));
        cJSON_AddItemToObject(o, "translation", num(res->stations[i].trans));
        cJSON_AddBoolToObject(o, "disagrees", res->stations[i].disagrees);
    }
    cJSON *dg = cJSON_AddArrayToObject(root, "diagnostics");
    for (size_t i = 0; dg && i < res->ndiag; i++) {
        cJSON *o = cJSON_CreateObject();
        cJSON_AddItemToArray(dg, o);
        cJSON_AddStringToObject(o, "code", res->diag[i].code);
        cJSON_AddStringToObject(o, "severity",
                                res->diag[i].severity == TRAM_SEVERITY_WARNING ? "warning" : "info");
        cJSON_AddStringToObject(o, "message", res->diag[i].message);
    }
    cJSON_AddStringToObject(root, "safety",
                            "A check compares data with a stored calibration; it does not make "
                            "a motion safe. After any change verify at reduced speed, keep clear "
                            "of the working envelope, and follow the applicable robot-safety "
                            "standards and local codes.");
    char *out = cJSON_Print(root);
    cJSON_Delete(root);
    if (!out) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    *text = malloc(strlen(out) + 2);
    if (*text) {
        strcpy(*text, out);
        strcat(*text, "\n");
    }
    cJSON_free(out);
    return *text ? TRAM_OK : tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
}
