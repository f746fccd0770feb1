/*
 * calib.c - reading calibration files (format tram-calibration, version 1,
 * written by tram solve -o; schema in docs/solve.md).  Strict: the format
 * and version are checked first, then every field the mount check needs,
 * and the transforms must be rigid; then what a calibration report shows
 * (method, residual statistics, observability, diagnostics, the input
 * stations), each optional but refused when present and damaged.  Every
 * refusal names file:line:column (json_pos.c).
 */
#include "tram/check.h"
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/text_internal.h"
#include "math/linalg_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

/* A refusal at the value of `path` (file:line:column of the document). */
#define BAD(path, ...) tram__json_pos_fail(pos, name, err, path, 0, __VA_ARGS__)
/* The position of `path` only, into the error e. */
#define BAD_AT(path, e) tram__json_pos_fail(pos, name, e, path, 0, "%s", path)

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
static tram_status read_residuals(const char *name, const tram__json_pos *pos, const cJSON *root,
                                  tram_calibration *c, tram_error *err)
{
    const cJSON *st = cJSON_GetObjectItemCaseSensitive(
        cJSON_GetObjectItemCaseSensitive(root, "residuals"), "stations");
    if (!st) return TRAM_OK;
    if (!cJSON_IsArray(st))
        return BAD("residuals.stations",
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
        char where[48];
        snprintf(where, sizeof where, "residuals.stations[%zu]", k);
        if (!ok)
            return BAD(where, "damaged calibration file: residuals.stations[%zu]: expected "
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

/* Relative tolerances of the covariance checks: the solve writes the
 * matrix with 17 significant digits, so its asymmetry and its smallest
 * eigenvalue after scaling to unit diagonal stay near 1e-15; a tampered or
 * mis-edited matrix is far beyond these. */
#define COV_SYM_TOL 1e-8
#define COV_EIG_TOL 1e-9

/* The stored covariance C (12x12, public order) must be a covariance over
 * the parameters it determines (a points solve without a model leaves Z's
 * rows null, NaN here): positive variances, symmetric within COV_SYM_TOL
 * of sqrt(C_ii C_jj), and positive semi-definite: the eigenvalues
 * (LAPACKE, linalg.c) of the correlation matrix D^-1/2 C D^-1/2 (unit-free,
 * since C mixes lengths and radians) at least -COV_EIG_TOL times the
 * largest.  An entry between two determined parameters must be a number. */
static tram_status check_covariance(const char *name, const tram__json_pos *pos, const double C[144],
                                    tram_error *err)
{
    char where[32];
    double d[12];
    int k[12], n = 0;
    for (int i = 0; i < 12; i++) {
        double v = C[i * 12 + i];
        if (isnan(v)) continue; /* not determined */
        if (!(v > 0)) {
            snprintf(where, sizeof where, "covariance[%d]", i * 13);
            return BAD(where, "damaged calibration file: covariance[%d] (the variance of parameter "
                              "%d) is %g: expected a variance > 0",
                       i * 13, i + 1, v);
        }
        d[n] = sqrt(v);
        k[n++] = i;
    }
    if (n == 0)
        return BAD("covariance", "damaged calibration file: the covariance determines no parameter");
    double R[144], w[12], V[144];
    for (int a = 0; a < n; a++)
        for (int b = 0; b < n; b++) {
            int i = k[a], j = k[b];
            double x = C[i * 12 + j], y = C[j * 12 + i];
            if (isnan(x)) {
                snprintf(where, sizeof where, "covariance[%d]", i * 12 + j);
                return BAD(where, "damaged calibration file: covariance[%d] is null, but both of "
                                  "its parameters (%d and %d) have a variance",
                           i * 12 + j, i + 1, j + 1);
            }
            if (b > a && !(fabs(x - y) <= COV_SYM_TOL * d[a] * d[b])) {
                snprintf(where, sizeof where, "covariance[%d]", j * 12 + i);
                return BAD(where, "damaged calibration file: the covariance is not symmetric: "
                                  "covariance[%d] is %.17g but covariance[%d] is %.17g",
                           j * 12 + i, y, i * 12 + j, x);
            }
            R[a * n + b] = 0.5 * (x + y) / (d[a] * d[b]);
        }
    if (tram__symeig(n, R, w, V) != TRAM_OK)
        return BAD("covariance", "damaged calibration file: the covariance's eigenvalues cannot be "
                                 "computed");
    if (!(w[0] >= -COV_EIG_TOL * w[n - 1]))
        return BAD("covariance", "damaged calibration file: the covariance is not positive "
                                 "semi-definite (its correlation matrix has the eigenvalue %.3g)",
                   w[0]);
    return TRAM_OK;
}

/* format, version, setup, unit, the transforms, noise, covariance: what a
 * mount check needs. */
static tram_status read_core(const char *name, const tram__json_pos *pos, const cJSON *root,
                             tram_calibration *c, tram_error *err)
{
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    const cJSON *ver = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, "tram-calibration") != 0)
        return BAD("format", "not a calibration file: \"format\" is not \"tram-calibration\" "
                             "(write one with tram solve -o)");
    if (!cJSON_IsNumber(ver) || ver->valuedouble != (double)ver->valueint || ver->valueint < 1)
        return BAD("version", "\"version\": expected a positive integer");
    if (ver->valueint > 1)
        return BAD("version", "calibration format version %d is newer than this tram (%s) reads (1)",
                   ver->valueint, TRAM_VERSION_STRING);
    const cJSON *setup = cJSON_GetObjectItemCaseSensitive(root, "setup");
    c->setup = cJSON_IsString(setup) ? tram_setup_parse(setup->valuestring) : TRAM_SETUP_UNSET;
    const cJSON *lu = cJSON_GetObjectItemCaseSensitive(root, "length_unit");
    c->length_unit = cJSON_IsString(lu) ? tram_unit_length_parse(lu->valuestring) : TRAM_LENGTH_UNSET;
    if (c->setup == TRAM_SETUP_UNSET || c->length_unit == TRAM_LENGTH_UNSET)
        return BAD(c->setup == TRAM_SETUP_UNSET ? "setup" : "length_unit",
                   "damaged calibration file: \"setup\" or \"length_unit\" missing or invalid");
    const cJSON *solved = cJSON_GetObjectItemCaseSensitive(root, "solved");
    if (!cJSON_IsTrue(solved)) return BAD("solved", "the calibration file holds no solution");
    c->trustworthy = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(root, "trustworthy"));
    const char *xn = c->setup == TRAM_SETUP_EYE_IN_HAND ? "T_flange_sensor" : "T_base_sensor";
    const char *zn = c->setup == TRAM_SETUP_EYE_IN_HAND ? "T_base_target" : "T_flange_target";
    const cJSON *tr = cJSON_GetObjectItemCaseSensitive(root, "transforms");
    const cJSON *xo = cJSON_GetObjectItemCaseSensitive(tr, xn);
    const cJSON *zo = cJSON_GetObjectItemCaseSensitive(tr, zn);
    int bx = read_matrix(cJSON_GetObjectItemCaseSensitive(xo, "matrix"), &c->X) != 0;
    if (bx || read_matrix(cJSON_GetObjectItemCaseSensitive(zo, "matrix"), &c->Z)) {
        char where[64];
        snprintf(where, sizeof where, "transforms.%s.matrix", bx ? xn : zn);
        return BAD(where,
                   "damaged calibration file: transforms.%s.matrix and transforms.%s.matrix "
                   "must be rigid 4x4 transforms for a %s calibration",
                   xn, zn, tram_setup_name(c->setup));
    }
    int okl = 1, oka = 1;
    const cJSON *noise = cJSON_GetObjectItemCaseSensitive(root, "noise");
    c->noise_length = number(noise, "length", &okl);
    c->noise_angle_rad = number(noise, "angle_deg", &oka) * TRAM_PI / 180.0;
    {   /* where "noise" is, for tram_check's refusal of a points calibration */
        tram_error at;
        tram_error_clear(&at);
        BAD_AT("noise", &at);
        c->noise_line = at.line;
        c->noise_column = at.column;
    }
    int points = okl && c->noise_length > 0 &&
                 cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(noise, "angle_deg")) &&
                 cJSON_GetObjectItemCaseSensitive(root, "model");
    if (points) /* solved from points: a point noise, no pose noise */
        c->noise_angle_rad = NAN;
    else if (!okl || !oka || !(c->noise_length > 0) || !(c->noise_angle_rad > 0))
        return BAD("noise", "the calibration has no noise estimate (\"noise\"): it was not "
                            "refined; solve again without --closed-form");
    int ok = 1;
    const cJSON *ob = cJSON_GetObjectItemCaseSensitive(root, "observability");
    double ns = number(ob, "stations", &ok);
    c->stations = ok && ns > 0 && ns < 1e15 ? (size_t)ns : 0; /* no UB on absurd counts */
    const cJSON *cov = cJSON_GetObjectItemCaseSensitive(root, "covariance");
    if (cov) {
        if (!cJSON_IsArray(cov) || cJSON_GetArraySize(cov) != 144)
            return BAD("covariance", "damaged calibration file: \"covariance\" must hold 144 numbers");
        for (int i = 0; i < 144; i++) {
            const cJSON *v = cJSON_GetArrayItem(cov, i);
            if (cJSON_IsNull(v)) { /* not determined (e.g. Z of a points solve without a model) */
                c->cov[i] = NAN;
                continue;
            }
            if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) {
                char where[32];
                snprintf(where, sizeof where, "covariance[%d]", i);
                return BAD(where, "damaged calibration file: covariance[%d] is not a number or null",
                           i);
            }
            c->cov[i] = v->valuedouble;
            c->has_cov = 1;
        }
        if (c->has_cov) {
            tram_status cs = check_covariance(name, pos, c->cov, err);
            if (cs != TRAM_OK) return cs;
        }
    }
    const cJSON *in = cJSON_GetObjectItemCaseSensitive(root, "input");
    const cJSON *ck = cJSON_GetObjectItemCaseSensitive(in, "checksum_fnv1a64");
    if (cJSON_IsString(ck)) snprintf(c->checksum, sizeof c->checksum, "%s", ck->valuestring);
    return TRAM_OK;
}

/* An optional text member `key` of o (at `path`, "" for the root):
 * absent leaves dst empty, anything but a text that fits is refused. */
static tram_status opt_text(const char *name, const tram__json_pos *pos, const cJSON *o,
                            const char *path, const char *key, char *dst, size_t cap,
                            tram_error *err)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    if (!v) return TRAM_OK;
    if (!cJSON_IsString(v) || strlen(v->valuestring) >= cap) {
        char at[96];
        snprintf(at, sizeof at, "%s%s%s", path, path[0] ? "." : "", key);
        return BAD(at, "damaged calibration file: \"%s\": expected text of at most %zu characters",
                   at, cap - 1);
    }
    snprintf(dst, cap, "%s", v->valuestring);
    return TRAM_OK;
}

/* An optional number (or null): NaN when absent or null. */
static tram_status opt_num(const char *name, const tram__json_pos *pos, const cJSON *o,
                           const char *path, const char *key, double *dst, tram_error *err)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    *dst = NAN;
    if (!v || cJSON_IsNull(v)) return TRAM_OK;
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble))
        return BAD(path, "damaged calibration file: \"%s\": expected a number or null", path);
    *dst = v->valuedouble;
    return TRAM_OK;
}

static tram_status read_stats(const char *name, const tram__json_pos *pos, const cJSON *res,
                              const char *key, tram_stats *s, tram_error *err)
{
    const cJSON *o = cJSON_GetObjectItemCaseSensitive(res, key);
    static const char *const k[3] = {"rms", "median", "max"};
    double *d[3] = {&s->rms, &s->median, &s->max};
    for (int i = 0; i < 3; i++) {
        char path[64];
        snprintf(path, sizeof path, "residuals.%s.%s", key, k[i]);
        tram_status st = opt_num(name, pos, o, path, k[i], d[i], err);
        if (st != TRAM_OK) return st;
    }
    return TRAM_OK;
}

static tram_status read_diagnostics(const char *name, const tram__json_pos *pos,
                                    const cJSON *root, tram_calibration *c, tram_error *err)
{
    const cJSON *dg = cJSON_GetObjectItemCaseSensitive(root, "diagnostics");
    if (!dg) return TRAM_OK;
    if (!cJSON_IsArray(dg)) return BAD("diagnostics", "damaged calibration file: \"diagnostics\" must be an array");
    size_t n = (size_t)cJSON_GetArraySize(dg);
    c->diag = tram__calloc(n ? n : 1, sizeof *c->diag);
    if (!c->diag) return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    const cJSON *it;
    cJSON_ArrayForEach(it, dg)
    {
        tram_diagnostic *d = &c->diag[c->ndiag];
        char path[40], sev[16] = "";
        snprintf(path, sizeof path, "diagnostics[%zu]", c->ndiag);
        tram_status st = opt_text(name, pos, it, path, "code", d->code, sizeof d->code, err);
        if (st == TRAM_OK) st = opt_text(name, pos, it, path, "severity", sev, sizeof sev, err);
        if (st == TRAM_OK) st = opt_text(name, pos, it, path, "message", d->message, sizeof d->message, err);
        if (st != TRAM_OK) return st;
        if (strcmp(sev, "info") == 0) d->severity = TRAM_SEVERITY_INFO;
        else if (strcmp(sev, "warning") == 0) d->severity = TRAM_SEVERITY_WARNING;
        else if (strcmp(sev, "error") == 0) d->severity = TRAM_SEVERITY_ERROR;
        else {
            char at[56];
            snprintf(at, sizeof at, "%s.severity", path);
            return BAD(at, "damaged calibration file: %s: expected info, warning or error", at);
        }
        c->ndiag++;
    }
    return TRAM_OK;
}

/* input.source and input.stations (id and T_base_flange of each). */
static tram_status read_input(const char *name, const tram__json_pos *pos, const cJSON *root,
                              tram_calibration *c, tram_error *err)
{
    const cJSON *in = cJSON_GetObjectItemCaseSensitive(root, "input");
    tram_status st = opt_text(name, pos, in, "input", "source", c->input_source,
                              sizeof c->input_source, err);
    const cJSON *arr = cJSON_GetObjectItemCaseSensitive(in, "stations");
    if (st != TRAM_OK || !arr) return st;
    if (!cJSON_IsArray(arr))
        return BAD("input.stations", "damaged calibration file: input.stations must be an array");
    size_t n = (size_t)cJSON_GetArraySize(arr);
    c->input_ids = tram__calloc(n ? n : 1, sizeof *c->input_ids);
    c->input_T_base_flange = tram__calloc(n ? n : 1, sizeof *c->input_T_base_flange);
    if (!c->input_ids || !c->input_T_base_flange)
        return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    const cJSON *it;
    cJSON_ArrayForEach(it, arr)
    {
        char path[48];
        snprintf(path, sizeof path, "input.stations[%zu]", c->ninput);
        const cJSON *id = cJSON_GetObjectItemCaseSensitive(it, "station");
        if (!cJSON_IsString(id) || strlen(id->valuestring) >= TRAM_STATION_ID_MAX ||
            read_matrix(cJSON_GetObjectItemCaseSensitive(it, "T_base_flange"),
                        &c->input_T_base_flange[c->ninput]) != 0)
            return BAD(path, "damaged calibration file: %s: expected \"station\" (text of at most "
                             "%d characters) and \"T_base_flange\" (a rigid 4x4 transform)",
                       path, TRAM_STATION_ID_MAX - 1);
        snprintf(c->input_ids[c->ninput], TRAM_STATION_ID_MAX, "%s", id->valuestring);
        c->ninput++;
    }
    return TRAM_OK;
}

/* The solve's 95% half-widths of both transforms (optional: kept only
 * when all twelve are positive numbers, or null - NaN - where the solve
 * did not determine them). */
static void read_half95(const cJSON *root, tram_calibration *c)
{
    const char *xn = c->setup == TRAM_SETUP_EYE_IN_HAND ? "T_flange_sensor" : "T_base_sensor";
    const char *zn = c->setup == TRAM_SETUP_EYE_IN_HAND ? "T_base_target" : "T_flange_target";
    const cJSON *u = cJSON_GetObjectItemCaseSensitive(root, "uncertainty");
    static const char *const keys[2] = {"translation_95", "rotation_95_deg"};
    int ok = 1;
    for (int t = 0; t < 2; t++) {
        const cJSON *o = cJSON_GetObjectItemCaseSensitive(u, t ? zn : xn);
        for (int k = 0; k < 2; k++) {
            const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, keys[k]);
            if (!cJSON_IsArray(v) || cJSON_GetArraySize(v) != 3) ok = 0;
            for (int i = 0; ok && i < 3; i++) {
                const cJSON *x = cJSON_GetArrayItem(v, i);
                double h = cJSON_IsNumber(x) ? x->valuedouble : NAN;
                if (!cJSON_IsNull(x) && (!(h > 0) || !isfinite(h))) ok = 0;
                c->half95[6 * t + 3 * k + i] = h;
            }
        }
    }
    c->has_half95 = ok;
}

/* What a report shows beyond the mount check's needs (all optional). */
static tram_status read_report_fields(const char *name, const tram__json_pos *pos,
                                      const cJSON *root, tram_calibration *c, tram_error *err)
{
    tram_status st = opt_text(name, pos, root, "", "tool", c->written_by, sizeof c->written_by, err);
    if (st == TRAM_OK) st = opt_text(name, pos, root, "", "method", c->method, sizeof c->method, err);
    if (st == TRAM_OK)
        st = opt_text(name, pos, root, "", "start_method", c->start_method,
                      sizeof c->start_method, err);
    c->refined = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(root, "refined"));
    const cJSON *res = cJSON_GetObjectItemCaseSensitive(root, "residuals");
    if (st == TRAM_OK) st = read_stats(name, pos, res, "rotation_deg", &c->rot_deg_stats, err);
    if (st == TRAM_OK) st = read_stats(name, pos, res, "translation", &c->trans_stats, err);
    const cJSON *nz = cJSON_GetObjectItemCaseSensitive(root, "noise");
    if (st == TRAM_OK)
        st = opt_text(name, pos, nz, "noise", "source", c->noise_source,
                      sizeof c->noise_source, err);
    const cJSON *ob = cJSON_GetObjectItemCaseSensitive(root, "observability");
    static const char *const ok[5] = {"motion_min_deg", "motion_max_deg", "axis_spread_deg",
                                      "condition", "outliers"};
    double outl = NAN, *dst[5] = {&c->motion_min_deg, &c->motion_max_deg, &c->axis_spread_deg,
                                  &c->condition, &outl};
    for (int i = 0; st == TRAM_OK && i < 5; i++) {
        char path[48];
        snprintf(path, sizeof path, "observability.%s", ok[i]);
        st = opt_num(name, pos, ob, path, ok[i], dst[i], err);
    }
    c->outliers = outl >= 0 && outl < 1e15 ? (size_t)outl : 0;
    const cJSON *tf = cJSON_GetObjectItemCaseSensitive(root, "tool_frame");
    if (st == TRAM_OK && tf) {
        if (read_matrix(cJSON_GetObjectItemCaseSensitive(
                            cJSON_GetObjectItemCaseSensitive(tf, "T_flange_tool"), "matrix"),
                        &c->T_flange_tool) != 0)
            return BAD("tool_frame", "damaged calibration file: tool_frame.T_flange_tool.matrix "
                                     "must be a rigid 4x4 transform");
        c->has_tool = 1;
    }
    if (st == TRAM_OK) read_half95(root, c);
    if (st == TRAM_OK) st = read_diagnostics(name, pos, root, c, err);
    if (st == TRAM_OK) st = read_input(name, pos, root, c, err);
    return st;
}

tram_status tram_calibration_read_buffer(const char *name, const char *data, size_t len,
                                         tram_calibration **out, tram_error *err)
{
    *out = NULL;
    cJSON *root;
    tram_status st = tram__json_parse(name, data, len, "damaged calibration file", &root, err);
    if (st != TRAM_OK) return st;
    tram__json_pos *pos = NULL;
    st = tram__json_pos_scan(name, data, len, &pos, err);
    if (st != TRAM_OK) {
        cJSON_Delete(root);
        return st;
    }
    tram_calibration *c = tram__calloc(1, sizeof *c);
    if (!c) st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    if (c) {
        snprintf(c->source, sizeof c->source, "%s", name);
        st = read_core(name, pos, root, c, err);
    }
    if (st == TRAM_OK) st = read_residuals(name, pos, root, c, err);
    if (st == TRAM_OK) st = read_report_fields(name, pos, root, c, err);
    cJSON_Delete(root);
    tram__json_pos_free(pos);
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
    tram__free(c->input_ids);
    tram__free(c->input_T_base_flange);
    tram__free(c->diag);
    tram__free(c);
}

int tram_calibration_euler_intervals(const tram_calibration *cal, int block, const tram_mat3 *R,
                                     tram_euler_seq seq, tram_calibration_euler *out)
{
    memset(out, 0, sizeof *out);
    tram_euler_from_mat3(seq, R, out->angles_rad);
    for (int i = 0; i < 3; i++) out->sigma_rad[i] = out->half95_rad[i] = NAN;
    out->factor95 = out->lock_distance_rad = NAN;
    if (!cal->has_cov || block < 0 || block > 1) return 0;
    int off = 6 * block + 3;
    double S[9], C[9];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) S[3 * i + j] = cal->cov[(off + i) * 12 + off + j];
    double k = 1.96;
    if (cal->has_half95) { /* half95 of rotations is in degrees */
        k = 0;
        for (int i = 0; i < 3; i++) {
            double s = sqrt(S[4 * i]) * 180.0 / TRAM_PI;
            if (s > 0 && cal->half95[off + i] / s > k) k = cal->half95[off + i] / s;
        }
    }
    out->factor95 = k;
    if (!(S[0] + S[4] + S[8] >= 0)) return 0; /* not determined (null in the file) */
    out->defined = tram_euler_covariance(seq, R, S, C, &out->lock_distance_rad);
    if (!out->defined) return 0;
    for (int i = 0; i < 3; i++) {
        out->sigma_rad[i] = sqrt(C[4 * i]);
        out->half95_rad[i] = k * out->sigma_rad[i];
    }
    return 1;
}
