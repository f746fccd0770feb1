/*
 * calib.c - reading calibration files (format tram-calibration, version 1,
 * written by tram solve -o; schema in docs/solve.md).  Strict: the format
 * and version are checked first, then every field the mount check needs,
 * and the transforms must be rigid.
 */
#include "tram/check.h"
#include "io/json_internal.h"
#include "io/text_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>



static int read_matrix(const cJSON *m, tram_se3 *T)
{
    if (!cJSON_IsArray(m) || cJSON_GetArraySize(m) != 4) return -1;
    for (int i = 0; i < 4; i++) {
        const cJSON *row = cJSON_GetArrayItem(m, i);
        if (!cJSON_IsArray(row) || cJSON_GetArraySize(row) != 4) return -1;
        for (int j = 0; j < 4; j++) {
            const cJSON *v = cJSON_GetArrayItem(row, j);
            if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) return -1;
            T->m[i][j] = v->valuedouble;
        }
    }
    return tram_se3_is_valid(T, TRAM_SO3_VALID_TOL) ? 0 : -1;
}

static double number(const cJSON *o, const char *k, int *ok)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, k);
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) {
        *ok = 0;
        return 0.0;
    }
    return v->valuedouble;
}

/* residuals.stations: optional; when present every entry must hold a
 * station id, numbers (or null) and an outlier flag. */
static tram_status read_residuals(const char *name, const cJSON *root, tram_calibration *c,
                                  tram_error *err)
{
    const cJSON *st = cJSON_GetObjectItemCaseSensitive(
        cJSON_GetObjectItemCaseSensitive(root, "residuals"), "stations");
    if (!st) return TRAM_OK;
    if (!cJSON_IsArray(st))
        return tram__fail(err, TRAM_EINPUT, name, 0, 0,
                          "damaged calibration file: residuals.stations must be an array");
    size_t n = (size_t)cJSON_GetArraySize(st);
    c->residuals = tram__calloc(n ? n : 1, sizeof *c->residuals);
    if (!c->residuals) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    const cJSON *it;
    size_t k = 0;
    cJSON_ArrayForEach(it, st)
    {
        tram_calibration_residual *r = &c->residuals[k];
        const cJSON *id = cJSON_GetObjectItemCaseSensitive(it, "station");
        const cJSON *v[2] = {cJSON_GetObjectItemCaseSensitive(it, "rotation_deg"),
                             cJSON_GetObjectItemCaseSensitive(it, "translation")};
        const cJSON *out = cJSON_GetObjectItemCaseSensitive(it, "outlier");
        double x[2];
        int ok = cJSON_IsString(id) && strlen(id->valuestring) < sizeof r->station &&
                 cJSON_IsBool(out);
        for (int a = 0; a < 2; a++) {
            if (cJSON_IsNull(v[a]))
                x[a] = NAN;
            else if (cJSON_IsNumber(v[a]) && isfinite(v[a]->valuedouble) && v[a]->valuedouble >= 0)
                x[a] = v[a]->valuedouble;
            else
                ok = 0;
        }
        if (!ok)
            return tram__fail(err, TRAM_EINPUT, name, 0, 0,
                              "damaged calibration file: residuals.stations[%zu]: expected "
                              "\"station\" (text of at most %d characters), \"rotation_deg\" and "
                              "\"translation\" (numbers >= 0 or null) and \"outlier\" (true or "
                              "false)",
                              k, TRAM_STATION_ID_MAX - 1);
        snprintf(r->station, sizeof r->station, "%s", id->valuestring);
        r->rotation_deg = x[0];
        r->translation = x[1];
        r->outlier = cJSON_IsTrue(out);
        k++;
    }
    c->nresiduals = k;
    return TRAM_OK;
}

tram_status tram_calibration_read_buffer(const char *name, const char *data, size_t len,
                                         tram_calibration **out, tram_error *err)
{
    *out = NULL;
    cJSON *root;
    tram_status st = tram__json_parse(name, data, len, "damaged calibration file", &root, err);
    if (st != TRAM_OK) return st;
    tram_calibration *c = tram__calloc(1, sizeof *c);
    if (!c) {
        cJSON_Delete(root);
        return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    }
    snprintf(c->source, sizeof c->source, "%s", name);
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    const cJSON *ver = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, "tram-calibration") != 0) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                        "not a calibration file: \"format\" is not \"tram-calibration\" (write "
                        "one with tram solve -o)");
        goto done;
    }
    if (!cJSON_IsNumber(ver) || ver->valuedouble != (double)ver->valueint || ver->valueint < 1) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0, "\"version\": expected a positive integer");
        goto done;
    }
    if (ver->valueint > 1) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                        "calibration format version %d is newer than this tram (%s) reads (1)",
                        ver->valueint, TRAM_VERSION_STRING);
        goto done;
    }
    const cJSON *setup = cJSON_GetObjectItemCaseSensitive(root, "setup");
    c->setup = cJSON_IsString(setup) ? tram_setup_parse(setup->valuestring) : TRAM_SETUP_UNSET;
    const cJSON *lu = cJSON_GetObjectItemCaseSensitive(root, "length_unit");
    c->length_unit = cJSON_IsString(lu) ? tram_unit_length_parse(lu->valuestring) : TRAM_LENGTH_UNSET;
    if (c->setup == TRAM_SETUP_UNSET || c->length_unit == TRAM_LENGTH_UNSET) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                        "damaged calibration file: \"setup\" or \"length_unit\" missing or invalid");
        goto done;
    }
    const cJSON *solved = cJSON_GetObjectItemCaseSensitive(root, "solved");
    if (!cJSON_IsTrue(solved)) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0, "the calibration file holds no solution");
        goto done;
    }
    c->trustworthy = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(root, "trustworthy"));
    const char *xn = c->setup == TRAM_SETUP_EYE_IN_HAND ? "T_flange_sensor" : "T_base_sensor";
    const char *zn = c->setup == TRAM_SETUP_EYE_IN_HAND ? "T_base_target" : "T_flange_target";
    const cJSON *tr = cJSON_GetObjectItemCaseSensitive(root, "transforms");
    const cJSON *xo = cJSON_GetObjectItemCaseSensitive(tr, xn);
    const cJSON *zo = cJSON_GetObjectItemCaseSensitive(tr, zn);
    if (read_matrix(cJSON_GetObjectItemCaseSensitive(xo, "matrix"), &c->X) ||
        read_matrix(cJSON_GetObjectItemCaseSensitive(zo, "matrix"), &c->Z)) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                        "damaged calibration file: transforms.%s.matrix and transforms.%s.matrix "
                        "must be rigid 4x4 transforms for a %s calibration",
                        xn, zn, tram_setup_name(c->setup));
        goto done;
    }
    int ok = 1;
    const cJSON *noise = cJSON_GetObjectItemCaseSensitive(root, "noise");
    c->noise_length = number(noise, "length", &ok);
    c->noise_angle_rad = number(noise, "angle_deg", &ok) * TRAM_PI / 180.0;
    if (!ok || !(c->noise_length > 0) || !(c->noise_angle_rad > 0)) {
        st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                        "the calibration has no noise estimate (\"noise\"): it was not refined; "
                        "solve again without --closed-form");
        goto done;
    }
    const cJSON *ob = cJSON_GetObjectItemCaseSensitive(root, "observability");
    double ns = number(ob, "stations", &ok);
    c->stations = ok && ns > 0 && ns < 1e15 ? (size_t)ns : 0; /* no UB on absurd counts */
    const cJSON *cov = cJSON_GetObjectItemCaseSensitive(root, "covariance");
    if (cov) {
        if (!cJSON_IsArray(cov) || cJSON_GetArraySize(cov) != 144) {
            st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                            "damaged calibration file: \"covariance\" must hold 144 numbers");
            goto done;
        }
        for (int i = 0; i < 144; i++) {
            const cJSON *v = cJSON_GetArrayItem(cov, i);
            if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) {
                st = tram__fail(err, TRAM_EINPUT, name, 0, 0,
                                "damaged calibration file: covariance[%d] is not a number", i);
                goto done;
            }
            c->cov[i] = v->valuedouble;
        }
        c->has_cov = 1;
    }
    const cJSON *in = cJSON_GetObjectItemCaseSensitive(root, "input");
    const cJSON *ck = cJSON_GetObjectItemCaseSensitive(in, "checksum_fnv1a64");
    if (cJSON_IsString(ck)) snprintf(c->checksum, sizeof c->checksum, "%s", ck->valuestring);
    st = read_residuals(name, root, c, err);
done:
    cJSON_Delete(root);
    if (st != TRAM_OK) {
        tram_calibration_destroy(c);
        return st;
    }
    *out = c;
    return TRAM_OK;
}

tram_status tram_calibration_read_file(const char *path, tram_calibration **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_calibration_read_buffer(path, data, len, out, err);
    tram__free(data);
    return st;
}

void tram_calibration_destroy(tram_calibration *c)
{
    if (!c) return;
    tram__free(c->residuals);
    tram__free(c);
}
