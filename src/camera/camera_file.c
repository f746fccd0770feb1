/*
 * camera_file.c - camera files (JSON, format "tram-camera", version 1;
 * schema in tram/camera.h and docs/camera.md): the strict reader and the
 * writer.  The pinhole + Brown-Conrady model is that of camera.c (Brown
 * 1966); coefficients are stored by name so that no order is implied, and
 * the pixel convention is stated in the file so that it is never guessed.
 * Every refusal names file:line:column, located by json_pos.c.
 */
#include "camera/camera_file_internal.h"
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/text_internal.h"
#include "math/linalg_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define CAMERA_FORMAT "tram-camera"
#define CAMERA_VERSION 1
#define PIXEL_ORIGIN "top-left-pixel-centre"

static const char *const param_names[TRAM_CAM_NPARAM] = {"fx", "fy", "cx", "cy", "skew",
                                                         "k1", "k2", "k3", "p1", "p2"};

const char *tram_camera_param_name(int param)
{
    return param >= 0 && param < TRAM_CAM_NPARAM ? param_names[param] : "?";
}

double tram_camera_param(const tram_camera *c, int param)
{
    const double v[TRAM_CAM_NPARAM] = {c->fx, c->fy, c->cx, c->cy, c->skew,
                                       c->k1, c->k2, c->k3, c->p1, c->p2};
    return param >= 0 && param < TRAM_CAM_NPARAM ? v[param] : NAN;
}

static double *param_slot(tram_camera *c, int param)
{
    double *v[TRAM_CAM_NPARAM] = {&c->fx, &c->fy, &c->cx, &c->cy, &c->skew,
                                  &c->k1, &c->k2, &c->k3, &c->p1, &c->p2};
    return v[param];
}

int tram_distortion_has(tram_distortion d, int param)
{
    switch (param) {
    case TRAM_CAM_FX: case TRAM_CAM_FY: case TRAM_CAM_CX: case TRAM_CAM_CY: case TRAM_CAM_SKEW:
        return 1;
    case TRAM_CAM_K1: case TRAM_CAM_K2:
        return d != TRAM_DISTORTION_NONE;
    case TRAM_CAM_K3:
        return d == TRAM_DISTORTION_RADIAL3 || d == TRAM_DISTORTION_FULL;
    case TRAM_CAM_P1: case TRAM_CAM_P2:
        return d == TRAM_DISTORTION_FULL;
    default:
        return 0;
    }
}

/* ---- reading ------------------------------------------------------------ */

typedef struct reader {
    const char *name;
    tram__json_pos *pos;
    tram_error *err;
} reader;

/* Fail at the value (or key) of path, with a message. */
#define fail_at(r, path, key, ...) \
    tram__json_pos_fail((r)->pos, (r)->name, (r)->err, path, key, __VA_ARGS__)

/* Every member of obj must be one of known (NULL-terminated): json_pos.c. */
#define known_keys(r, obj, path, known, hint) \
    tram__json_known_keys((r)->pos, (r)->name, (r)->err, obj, path, known, hint)

static tram_status object(reader *r, const cJSON *parent, const char *path, const char *key,
                          const cJSON **out)
{
    char p[160];
    tram__json_path_join(p, sizeof p, path, key);
    *out = cJSON_GetObjectItemCaseSensitive(parent, key);
    if (!*out) return fail_at(r, path, 0, "missing key \"%s\"%s%s: expected an object", key,
                              *path ? " in " : "", path);
    if (!cJSON_IsObject(*out)) return fail_at(r, p, 0, "\"%s\": expected an object", p);
    return TRAM_OK;
}

/* A finite number under key; required unless opt (then *present says). */
static tram_status number(reader *r, const cJSON *parent, const char *path, const char *key,
                          double *v)
{
    char p[160];
    tram__json_path_join(p, sizeof p, path, key);
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(parent, key);
    if (!it) return fail_at(r, path, 0, "missing key \"%s\"%s%s: expected a number", key,
                            *path ? " in " : "", path);
    if (!cJSON_IsNumber(it) || !isfinite(it->valuedouble))
        return fail_at(r, p, 0, "\"%s\": expected a finite number", p);
    *v = it->valuedouble;
    return TRAM_OK;
}

static tram_status count(reader *r, const cJSON *parent, const char *path, const char *key,
                         double lo, size_t *v)
{
    double x;
    tram_status st = number(r, parent, path, key, &x);
    if (st != TRAM_OK) return st;
    char p[160];
    tram__json_path_join(p, sizeof p, path, key);
    if (x != floor(x) || x < lo || x > 1e9)
        return fail_at(r, p, 0, "\"%s\" %.10g: expected a whole number >= %g", p, x, lo);
    *v = (size_t)x;
    return TRAM_OK;
}

static tram_status string_is(reader *r, const cJSON *parent, const char *key, const char *want,
                             const char *what)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(parent, key);
    if (!it) return fail_at(r, "", 0, "missing key \"%s\": expected \"%s\" (%s)", key, want, what);
    if (!cJSON_IsString(it) || strcmp(it->valuestring, want) != 0)
        return fail_at(r, key, 0, "\"%s\": expected \"%s\" (%s)", key, want, what);
    return TRAM_OK;
}

static tram_status read_intrinsics(reader *r, const cJSON *root, tram_camera *c)
{
    const cJSON *o;
    static const char *const known[] = {"fx", "fy", "cx", "cy", "skew", NULL};
    tram_status st;
    if ((st = object(r, root, "", "intrinsics", &o)) != TRAM_OK ||
        (st = known_keys(r, o, "intrinsics", known, "fx, fy, cx, cy, skew")) != TRAM_OK)
        return st;
    for (int k = 0; k <= TRAM_CAM_SKEW; k++)
        if ((st = number(r, o, "intrinsics", param_names[k], param_slot(c, k))) != TRAM_OK) return st;
    if (!(c->fx > 0)) return fail_at(r, "intrinsics.fx", 0, "fx %.10g: expected a focal length > 0 pixels", c->fx);
    if (!(c->fy > 0)) return fail_at(r, "intrinsics.fy", 0, "fy %.10g: expected a focal length > 0 pixels", c->fy);
    return TRAM_OK;
}

static tram_status read_distortion(reader *r, const cJSON *root, tram_camera *c)
{
    const cJSON *o;
    tram_status st = object(r, root, "", "distortion", &o);
    if (st != TRAM_OK) return st;
    const cJSON *m = cJSON_GetObjectItemCaseSensitive(o, "model");
    int d = cJSON_IsString(m) ? tram_distortion_parse(m->valuestring) : -1;
    if (!m) return fail_at(r, "distortion", 0, "missing key \"model\" in distortion: expected none, radial2, radial3 or full");
    if (d < 0)
        return fail_at(r, "distortion.model", 0,
                       "distortion model %s%.40s%s: expected \"none\", \"radial2\", \"radial3\" or \"full\"",
                       cJSON_IsString(m) ? "\"" : "", cJSON_IsString(m) ? m->valuestring : "(not text)",
                       cJSON_IsString(m) ? "\"" : "");
    c->distortion = (tram_distortion)d;
    const cJSON *it;
    cJSON_ArrayForEach(it, o)
    {
        if (strcmp(it->string, "model") == 0) continue;
        int k;
        for (k = TRAM_CAM_K1; k < TRAM_CAM_NPARAM; k++)
            if (strcmp(it->string, param_names[k]) == 0) break;
        char p[160];
        tram__json_path_join(p, sizeof p, "distortion", it->string);
        if (k == TRAM_CAM_NPARAM || !tram_distortion_has(c->distortion, k))
            return fail_at(r, p, 1, "\"%.40s\" is not a coefficient of the %s model (%s)", it->string,
                           tram_distortion_name(c->distortion),
                           d == 0 ? "no coefficients" : d == 1 ? "k1, k2" : d == 2 ? "k1, k2, k3" : "k1, k2, k3, p1, p2");
    }
    for (int k = TRAM_CAM_K1; k < TRAM_CAM_NPARAM; k++) {
        *param_slot(c, k) = 0.0;
        if (tram_distortion_has(c->distortion, k) &&
            (st = number(r, o, "distortion", param_names[k], param_slot(c, k))) != TRAM_OK)
            return st;
    }
    return TRAM_OK;
}

/* The next free parameter after k (TRAM_CAM_NPARAM: none). */
static int next_free(const tram_camera_calib *cal, int k)
{
    for (k++; k < TRAM_CAM_NPARAM && !cal->free_param[k]; k++) {}
    return k;
}

/* calibration.correlation (optional): for each free parameter but the
 * last, an object with its correlation to every later free parameter;
 * each in [-1, 1], and together a positive semi-definite matrix. */
static tram_status read_correlation(reader *r, const cJSON *o, tram_camera_calib *cal)
{
    const cJSON *cr = cJSON_GetObjectItemCaseSensitive(o, "correlation"), *row, *it;
    if (!cr) return TRAM_OK;
    tram_status st = object(r, o, "calibration", "correlation", &cr);
    if (st != TRAM_OK) return st;
    double *rho = cal->correlation;
    memset(rho, 0, sizeof cal->correlation);
    int nfree = 0;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++)
        if (cal->free_param[k]) rho[k * TRAM_CAM_NPARAM + k] = 1.0, nfree++;
    cJSON_ArrayForEach(row, cr)
    {
        char p[160];
        tram__json_path_join(p, sizeof p, "calibration.correlation", row->string);
        int k;
        for (k = 0; k < TRAM_CAM_NPARAM; k++)
            if (strcmp(row->string, param_names[k]) == 0) break;
        if (k == TRAM_CAM_NPARAM || !cal->free_param[k] || next_free(cal, k) == TRAM_CAM_NPARAM)
            return fail_at(r, p, 1, "calibration.correlation: \"%.40s\": expected a free parameter "
                           "that has a later free parameter", row->string);
    }
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        if (!cal->free_param[k] || next_free(cal, k) == TRAM_CAM_NPARAM) continue;
        if ((st = object(r, cr, "calibration.correlation", param_names[k], &row)) != TRAM_OK) return st;
        char path[160];
        tram__json_path_join(path, sizeof path, "calibration.correlation", param_names[k]);
        cJSON_ArrayForEach(it, row)
        {
            int q;
            for (q = k + 1; q < TRAM_CAM_NPARAM; q++)
                if (strcmp(it->string, param_names[q]) == 0) break;
            if (q == TRAM_CAM_NPARAM || !cal->free_param[q]) {
                char p[200];
                tram__json_path_join(p, sizeof p, path, it->string);
                return fail_at(r, p, 1, "%s: \"%.40s\" is not a later free parameter", path, it->string);
            }
        }
        for (int q = next_free(cal, k); q < TRAM_CAM_NPARAM; q = next_free(cal, q)) {
            double v;
            if ((st = number(r, row, path, param_names[q], &v)) != TRAM_OK) return st;
            if (v < -1 || v > 1) {
                char p[200];
                tram__json_path_join(p, sizeof p, path, param_names[q]);
                return fail_at(r, p, 0, "correlation of %s and %s %.10g: expected a number in [-1, 1]",
                               param_names[k], param_names[q], v);
            }
            rho[k * TRAM_CAM_NPARAM + q] = rho[q * TRAM_CAM_NPARAM + k] = v;
        }
    }
    /* positive semi-definite, up to the 17 digits written */
    double A[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM], w[TRAM_CAM_NPARAM], V[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM];
    int idx[TRAM_CAM_NPARAM], n = 0;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++)
        if (cal->free_param[k]) idx[n++] = k;
    for (int a = 0; a < n; a++)
        for (int b = 0; b < n; b++) A[a * n + b] = rho[idx[a] * TRAM_CAM_NPARAM + idx[b]];
    st = tram__symeig(n, A, w, V);
    if (st == TRAM_ENOMEM) return tram__fail(r->err, st, r->name, 0, 0, "out of memory");
    if (st != TRAM_OK || w[0] < -1e-9 * (double)nfree)
        return fail_at(r, "calibration.correlation", 0,
                       "calibration.correlation: not a correlation matrix (not positive semi-definite)");
    cal->has_correlation = 1;
    return TRAM_OK;
}

int tram_camera_calib_covariance(const tram_camera_calib *cal, double cov[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM])
{
    memset(cov, 0, TRAM_CAM_NPARAM * TRAM_CAM_NPARAM * sizeof *cov);
    if (!cal || !cal->present) return 0;
    for (int a = 0; a < TRAM_CAM_NPARAM; a++)
        for (int b = 0; b < TRAM_CAM_NPARAM; b++) {
            if (!cal->free_param[a] || !cal->free_param[b]) continue;
            double rho = cal->has_correlation ? cal->correlation[a * TRAM_CAM_NPARAM + b] : a == b;
            cov[a * TRAM_CAM_NPARAM + b] = cal->sigma[a] * cal->sigma[b] * rho;
        }
    return cal->has_correlation ? 1 : 2;
}

static tram_status read_calibration(reader *r, const cJSON *root, tram_camera_calib *cal,
                                    const tram_camera *c)
{
    memset(cal, 0, sizeof *cal);
    const cJSON *o = cJSON_GetObjectItemCaseSensitive(root, "calibration");
    if (!o) return TRAM_OK;
    static const char *const known[] = {"method", "views", "points", "outliers", "rms_px",
                                        "sigma", "fixed", "correlation", NULL};
    tram_status st;
    const cJSON *sg, *meth = cJSON_GetObjectItemCaseSensitive(o, "method");
    if ((st = object(r, root, "", "calibration", &o)) != TRAM_OK ||
        (st = known_keys(r, o, "calibration", known,
                         "method, views, points, outliers, rms_px, sigma, fixed, correlation")) != TRAM_OK)
        return st;
    if (!cJSON_IsString(meth) || strlen(meth->valuestring) >= sizeof cal->method)
        return fail_at(r, "calibration.method", 0, "calibration.method: expected text of at most %zu characters",
                       sizeof cal->method - 1);
    snprintf(cal->method, sizeof cal->method, "%s", meth->valuestring);
    if ((st = count(r, o, "calibration", "views", 1, &cal->nviews)) != TRAM_OK ||
        (st = count(r, o, "calibration", "points", 1, &cal->npoints)) != TRAM_OK ||
        (st = count(r, o, "calibration", "outliers", 0, &cal->noutliers)) != TRAM_OK ||
        (st = number(r, o, "calibration", "rms_px", &cal->rms_px)) != TRAM_OK)
        return st;
    if (cal->rms_px < 0) return fail_at(r, "calibration.rms_px", 0, "rms_px: expected a number >= 0");
    if ((st = object(r, o, "calibration", "sigma", &sg)) != TRAM_OK) return st;
    /* sigma holds the free parameters of the model; fixed lists the others */
    const cJSON *fx = cJSON_GetObjectItemCaseSensitive(o, "fixed"), *it;
    if (!cJSON_IsArray(fx)) return fail_at(r, "calibration.fixed", 0, "calibration.fixed: expected an array of parameter names");
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) cal->free_param[k] = tram_distortion_has(c->distortion, k);
    size_t i = 0;
    cJSON_ArrayForEach(it, fx)
    {
        char p[160];
        snprintf(p, sizeof p, "calibration.fixed[%zu]", i++);
        int k;
        for (k = 0; k < TRAM_CAM_NPARAM; k++)
            if (cJSON_IsString(it) && strcmp(it->valuestring, param_names[k]) == 0) break;
        if (k == TRAM_CAM_NPARAM || !tram_distortion_has(c->distortion, k) || !cal->free_param[k])
            return fail_at(r, p, 0, "calibration.fixed: expected distinct parameter names of the %s model",
                           tram_distortion_name(c->distortion));
        cal->free_param[k] = 0;
    }
    cJSON_ArrayForEach(it, sg)
    {
        char p[160];
        tram__json_path_join(p, sizeof p, "calibration.sigma", it->string);
        int k;
        for (k = 0; k < TRAM_CAM_NPARAM; k++)
            if (strcmp(it->string, param_names[k]) == 0) break;
        if (k == TRAM_CAM_NPARAM || !cal->free_param[k])
            return fail_at(r, p, 1, "calibration.sigma: \"%.40s\" is not a free parameter of this camera", it->string);
    }
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        if (!cal->free_param[k]) continue;
        if ((st = number(r, sg, "calibration.sigma", param_names[k], &cal->sigma[k])) != TRAM_OK) return st;
        if (cal->sigma[k] < 0) {
            char p[160];
            tram__json_path_join(p, sizeof p, "calibration.sigma", param_names[k]);
            return fail_at(r, p, 0, "sigma of %s: expected a number >= 0", param_names[k]);
        }
    }
    if ((st = read_correlation(r, o, cal)) != TRAM_OK) return st;
    cal->present = 1;
    return TRAM_OK;
}

static tram_status read_root(reader *r, const cJSON *root, tram_camera *c, tram_camera_calib *cal)
{
    static const char *const known[] = {"format", "version", "pixel_origin", "image_size",
                                        "intrinsics", "distortion", "calibration", NULL};
    tram_status st;
    if (!cJSON_IsObject(root)) return fail_at(r, "", 0, "not a camera file: expected a JSON object");
    if ((st = string_is(r, root, "format", CAMERA_FORMAT, "a tram camera file")) != TRAM_OK) return st;
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (!v) return fail_at(r, "", 0, "missing key \"version\": expected 1");
    if (!cJSON_IsNumber(v) || v->valuedouble != 1.0)
        return fail_at(r, "version", 0, "version: expected 1 (this tram reads camera files of version 1)");
    if ((st = known_keys(r, root, "", known,
                         "format, version, pixel_origin, image_size, intrinsics, distortion, calibration")) != TRAM_OK ||
        (st = string_is(r, root, "pixel_origin", PIXEL_ORIGIN,
                        "the centre of the top-left pixel is (0,0), u right, v down")) != TRAM_OK)
        return st;
    const cJSON *sz;
    static const char *const size_keys[] = {"width", "height", NULL};
    if ((st = object(r, root, "", "image_size", &sz)) != TRAM_OK ||
        (st = known_keys(r, sz, "image_size", size_keys, "width, height")) != TRAM_OK ||
        (st = count(r, sz, "image_size", "width", 1, &c->width)) != TRAM_OK ||
        (st = count(r, sz, "image_size", "height", 1, &c->height)) != TRAM_OK ||
        (st = read_intrinsics(r, root, c)) != TRAM_OK || (st = read_distortion(r, root, c)) != TRAM_OK)
        return st;
    tram_camera_calib tmp;
    return read_calibration(r, root, cal ? cal : &tmp, c);
}

tram_status tram_camera_read_buffer(const char *name, const char *data, size_t len,
                                    tram_camera *cam, tram_camera_calib *calib, tram_error *err)
{
    cJSON *root;
    tram_status st = tram__json_parse(name, data, len, "camera file", &root, err);
    if (st != TRAM_OK) return st;
    reader r = {name, NULL, err};
    st = tram__json_pos_scan(name, data, len, &r.pos, err);
    tram_camera c;
    memset(&c, 0, sizeof c);
    if (st == TRAM_OK) st = read_root(&r, root, &c, calib);
    if (st == TRAM_OK) *cam = c;
    tram__json_pos_free(r.pos);
    cJSON_Delete(root);
    return st;
}

tram_status tram_camera_read_file(const char *path, tram_camera *cam, tram_camera_calib *calib,
                                  tram_error *err)
{
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_camera_read_buffer(strcmp(path, "-") ? path : "<stdin>", data, len, cam, calib, err);
    tram__free(data);
    return st;
}

/* ---- writing ------------------------------------------------------------ */

static tram_status check_camera(const tram_camera *c, tram_error *err)
{
    if ((int)c->distortion < 0 || (int)c->distortion > (int)TRAM_DISTORTION_FULL)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "camera: unknown distortion model");
    if (!(c->fx > 0) || !(c->fy > 0) || !isfinite(c->fx) || !isfinite(c->fy))
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "camera: focal lengths must be finite and > 0");
    if (c->width == 0 || c->height == 0)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "camera: image size unknown");
    for (int k = 0; k < TRAM_CAM_NPARAM; k++)
        if (!isfinite(tram_camera_param(c, k)))
            return tram__fail(err, TRAM_EINPUT, "", 0, 0, "camera: %s is not finite", param_names[k]);
    return TRAM_OK;
}

static void write_calibration(tram__jb *b, cJSON *root, const tram_camera *c,
                              const tram_camera_calib *cal)
{
    cJSON *o = tram__jb_obj(b, root, "calibration");
    tram__jb_str(b, o, "method", cal->method);
    tram__jb_num(b, o, "views", (double)cal->nviews);
    tram__jb_num(b, o, "points", (double)cal->npoints);
    tram__jb_num(b, o, "outliers", (double)cal->noutliers);
    tram__jb_num(b, o, "rms_px", cal->rms_px);
    cJSON *sg = tram__jb_obj(b, o, "sigma");
    cJSON *fx = tram__jb_arr(b, o, "fixed");
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        if (!tram_distortion_has(c->distortion, k)) continue;
        if (cal->free_param[k])
            tram__jb_num(b, sg, param_names[k], cal->sigma[k]);
        else
            tram__jb_str(b, fx, NULL, param_names[k]);
    }
    if (!cal->has_correlation) return;
    tram_camera_calib free_only = *cal;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++)
        free_only.free_param[k] = cal->free_param[k] && tram_distortion_has(c->distortion, k);
    cJSON *cr = tram__jb_obj(b, o, "correlation");
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        if (!free_only.free_param[k] || next_free(&free_only, k) == TRAM_CAM_NPARAM) continue;
        cJSON *row = tram__jb_obj(b, cr, param_names[k]);
        for (int q = next_free(&free_only, k); q < TRAM_CAM_NPARAM; q = next_free(&free_only, q))
            tram__jb_num(b, row, param_names[q], cal->correlation[k * TRAM_CAM_NPARAM + q]);
    }
}

/* The camera file's fields and values (a camera a file may hold, a
 * calibration block with finite sigmas and correlations in [-1, 1]). */
static tram_status check_camera_doc(const tram_camera *c, const tram_camera_calib *cal,
                                    tram_error *err)
{
    tram_status st = check_camera(c, err);
    if (st != TRAM_OK) return st;
    if (cal && cal->present) {
        int bad = !isfinite(cal->rms_px) || cal->rms_px < 0 || cal->nviews == 0 || cal->npoints == 0;
        for (int k = 0; k < TRAM_CAM_NPARAM; k++)
            bad |= cal->free_param[k] && tram_distortion_has(c->distortion, k) &&
                   (!isfinite(cal->sigma[k]) || cal->sigma[k] < 0);
        for (int k = 0; cal->has_correlation && k < TRAM_CAM_NPARAM * TRAM_CAM_NPARAM; k++)
            bad |= !(fabs(cal->correlation[k]) <= 1.0);
        if (bad)
            return tram__fail(err, TRAM_EINPUT, "", 0, 0,
                              "camera calibration: RMS and sigmas must be finite and >= 0, correlations in [-1, 1]");
    }
    return TRAM_OK;
}

/* The camera document's members added to root (an object). */
static void add_camera_members(tram__jb *b, cJSON *root, const tram_camera *c,
                               const tram_camera_calib *cal)
{
    tram__jb_str(b, root, "format", CAMERA_FORMAT);
    tram__jb_num(b, root, "version", CAMERA_VERSION);
    tram__jb_str(b, root, "pixel_origin", PIXEL_ORIGIN);
    cJSON *sz = tram__jb_obj(b, root, "image_size");
    tram__jb_num(b, sz, "width", (double)c->width);
    tram__jb_num(b, sz, "height", (double)c->height);
    cJSON *in = tram__jb_obj(b, root, "intrinsics");
    for (int k = 0; k <= TRAM_CAM_SKEW; k++) tram__jb_num(b, in, param_names[k], tram_camera_param(c, k));
    cJSON *d = tram__jb_obj(b, root, "distortion");
    tram__jb_str(b, d, "model", tram_distortion_name(c->distortion));
    for (int k = TRAM_CAM_K1; k < TRAM_CAM_NPARAM; k++)
        if (tram_distortion_has(c->distortion, k)) tram__jb_num(b, d, param_names[k], tram_camera_param(c, k));
    if (cal && cal->present) write_calibration(b, root, c, cal);
}

tram_status tram__camera_add_json(tram__jb *b, cJSON *parent, const char *key, const tram_camera *c,
                                  const tram_camera_calib *cal, tram_error *err)
{
    tram_status st = check_camera_doc(c, cal, err);
    if (st != TRAM_OK) return st;
    cJSON *o = tram__jb_obj(b, parent, key);
    if (o) add_camera_members(b, o, c, cal);
    return TRAM_OK;
}

tram_status tram_camera_to_json(const tram_camera *c, const tram_camera_calib *cal, char **text,
                                tram_error *err)
{
    *text = NULL;
    tram_status st = check_camera_doc(c, cal, err);
    if (st != TRAM_OK) return st;
    tram__jb b = {0};
    cJSON *root = cJSON_CreateObject();
    if (!root) return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    add_camera_members(&b, root, c, cal);
    return tram__jb_finish(&b, root, 1, 1, text, err);
}
