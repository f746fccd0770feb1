/*
 * cell.c - cell files (JSON, format "tram-cell", version 1; docs/plan.md):
 * what station planning needs to know of a cell - a rough guess of the two
 * unknowns, the board's extent, the view (camera, working distance, board
 * tilt, margin) and the reach (flange box or sphere and tilt from a
 * nominal orientation, or a kinematic chain), the noise per station and
 * the robot convention of the output.  Read through the strict parser of
 * io/json.c; every refusal names file:line:column (io/json_pos.c) and what
 * was expected.  The camera from a field of view is the pinhole of
 * camera.c with f = (size / 2) / tan(fov / 2) and the principal point at
 * the image centre.
 */
#include "tram/plan.h"
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/text_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define CELL_FORMAT "tram-cell"
#define QUAT_TOL 1e-3 /* a hand-typed guess: 0.7071 is a unit quaternion's entry */

typedef struct reader {
    const char *name, *dir;
    tram__json_pos *pos;
    tram_error *err;
} reader;

#define fail_at(r, path, key, ...) \
    tram__json_pos_fail((r)->pos, (r)->name, (r)->err, path, key, __VA_ARGS__)

/* Every member of obj must be one of known (NULL-terminated): json_pos.c. */
#define known_keys(r, obj, path, known, hint) \
    tram__json_known_keys((r)->pos, (r)->name, (r)->err, obj, path, known, hint)

static tram_status object(reader *r, const cJSON *parent, const char *path, const char *key,
                          int required, const cJSON **out)
{
    char p[160];
    tram__json_path_join(p, sizeof p, path, key);
    *out = cJSON_GetObjectItemCaseSensitive(parent, key);
    if (!*out) {
        if (!required) return TRAM_OK;
        return fail_at(r, path, 0, "missing key \"%s\"%s%s: expected an object", key,
                       *path ? " in " : "", path);
    }
    if (!cJSON_IsObject(*out)) return fail_at(r, p, 0, "\"%s\": expected an object", p);
    return TRAM_OK;
}

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

/* A number under key with lo < v (strict) or lo <= v, and v <= hi. */
static tram_status number_in(reader *r, const cJSON *parent, const char *path, const char *key,
                             double lo, int strict, double hi, const char *what, double *v)
{
    tram_status st = number(r, parent, path, key, v);
    if (st != TRAM_OK) return st;
    if ((strict ? !(*v > lo) : !(*v >= lo)) || !(*v <= hi)) {
        char p[160];
        tram__json_path_join(p, sizeof p, path, key);
        return fail_at(r, p, 0, "\"%s\" %.10g: expected %s", p, *v, what);
    }
    return TRAM_OK;
}

/* An array of n finite numbers under key. */
static tram_status numbers(reader *r, const cJSON *parent, const char *path, const char *key,
                           int n, double *v)
{
    char p[160];
    tram__json_path_join(p, sizeof p, path, key);
    const cJSON *a = cJSON_GetObjectItemCaseSensitive(parent, key);
    if (!a) return fail_at(r, path, 0, "missing key \"%s\"%s%s: expected an array of %d numbers",
                           key, *path ? " in " : "", path, n);
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) != n)
        return fail_at(r, p, 0, "\"%s\": expected an array of %d numbers", p, n);
    for (int i = 0; i < n; i++) {
        const cJSON *x = cJSON_GetArrayItem(a, i);
        if (!cJSON_IsNumber(x) || !isfinite(x->valuedouble)) {
            char q[180];
            snprintf(q, sizeof q, "%s[%d]", p, i);
            return fail_at(r, q, 0, "\"%s\": expected a finite number", q);
        }
        v[i] = x->valuedouble;
    }
    return TRAM_OK;
}

/* [lo, hi] with lo < hi (lo > 0 when positive). */
static tram_status range(reader *r, const cJSON *parent, const char *path, const char *key,
                         int positive, double v[2])
{
    tram_status st = numbers(r, parent, path, key, 2, v);
    if (st != TRAM_OK) return st;
    if (!(v[0] < v[1]) || (positive && !(v[0] > 0))) {
        char p[160];
        tram__json_path_join(p, sizeof p, path, key);
        return fail_at(r, p, 0, "\"%s\" [%g, %g]: expected [low, high] with low < high%s", p, v[0],
                       v[1], positive ? " and low > 0" : "");
    }
    return TRAM_OK;
}

static tram_status text(reader *r, const cJSON *parent, const char *path, const char *key,
                        const char **out)
{
    char p[160];
    tram__json_path_join(p, sizeof p, path, key);
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(parent, key);
    if (!it) return fail_at(r, path, 0, "missing key \"%s\"%s%s: expected text", key,
                            *path ? " in " : "", path);
    if (!cJSON_IsString(it)) return fail_at(r, p, 0, "\"%s\": expected text", p);
    *out = it->valuestring;
    return TRAM_OK;
}

/* A unit quaternion (qw, qx, qy, qz) of obj at path, normalised. */
static tram_status quaternion(reader *r, const cJSON *obj, const char *path, tram_mat3 *R)
{
    double q[4];
    static const char *const k[4] = {"qw", "qx", "qy", "qz"};
    tram_status st;
    for (int i = 0; i < 4; i++)
        if ((st = number(r, obj, path, k[i], &q[i])) != TRAM_OK) return st;
    double n = sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2] + q[3] * q[3]);
    if (fabs(n - 1) > QUAT_TOL) {
        char p[160];
        tram__json_path_join(p, sizeof p, path, "qw");
        return fail_at(r, p, 0, "%s: quaternion norm %.6g: expected 1 within %g (qw, qx, qy, qz; "
                       "scalar first)", path, n, QUAT_TOL);
    }
    tram_quat_wxyz qq = {q[0] / n, q[1] / n, q[2] / n, q[3] / n};
    tram_quat_wxyz_to_mat3(&qq, R);
    return TRAM_OK;
}

/* A pose {x, y, z, qw, qx, qy, qz} under key of guess. */
static tram_status pose(reader *r, const cJSON *guess, const char *key, tram_se3 *T)
{
    const cJSON *o;
    char p[160];
    tram__json_path_join(p, sizeof p, "guess", key);
    static const char *const known[] = {"x", "y", "z", "qw", "qx", "qy", "qz", NULL};
    tram_status st = object(r, guess, "guess", key, 1, &o);
    if (st == TRAM_OK) st = known_keys(r, o, p, known, "x, y, z, qw, qx, qy, qz");
    double t[3];
    tram_mat3 R;
    if (st == TRAM_OK) st = number(r, o, p, "x", &t[0]);
    if (st == TRAM_OK) st = number(r, o, p, "y", &t[1]);
    if (st == TRAM_OK) st = number(r, o, p, "z", &t[2]);
    if (st == TRAM_OK) st = quaternion(r, o, p, &R);
    if (st == TRAM_OK) tram_se3_from_rt(&R, t, T);
    return st;
}

static tram_status read_guess(reader *r, const cJSON *root, tram_cell *c)
{
    const cJSON *g;
    int eih = c->setup == TRAM_SETUP_EYE_IN_HAND;
    const char *xn = eih ? "T_flange_sensor" : "T_base_sensor";
    const char *zn = eih ? "T_base_target" : "T_flange_target";
    const char *const known[] = {xn, zn, NULL};
    char hint[80];
    snprintf(hint, sizeof hint, "%s and %s (%s)", xn, zn, tram_setup_name(c->setup));
    tram_status st = object(r, root, "", "guess", 1, &g);
    if (st == TRAM_OK) st = known_keys(r, g, "guess", known, hint);
    if (st == TRAM_OK) st = pose(r, g, xn, &c->X);
    if (st == TRAM_OK) st = pose(r, g, zn, &c->Z);
    return st;
}

/* Path of a file named in the cell, relative to the cell's folder. */
static void relative(const reader *r, const char *file, char *out, size_t size)
{
    if (file[0] == '/' || !r->dir || !*r->dir) snprintf(out, size, "%s", file);
    else snprintf(out, size, "%s/%s", r->dir, file);
}

static tram_status read_fov(reader *r, const cJSON *v, tram_camera *cam)
{
    const cJSON *fov, *sz;
    static const char *const fk[] = {"horizontal", "vertical", NULL};
    static const char *const sk[] = {"width", "height", NULL};
    double h, vv, w, ht;
    tram_status st = object(r, v, "view", "field_of_view_deg", 1, &fov);
    if (st == TRAM_OK) st = known_keys(r, fov, "view.field_of_view_deg", fk, "horizontal, vertical");
    if (st == TRAM_OK) st = number_in(r, fov, "view.field_of_view_deg", "horizontal", 0, 1, 179, "an angle in (0, 179] degrees", &h);
    if (st == TRAM_OK) st = number_in(r, fov, "view.field_of_view_deg", "vertical", 0, 1, 179, "an angle in (0, 179] degrees", &vv);
    if (st == TRAM_OK) st = object(r, v, "view", "image_size", 1, &sz);
    if (st == TRAM_OK) st = known_keys(r, sz, "view.image_size", sk, "width, height");
    if (st == TRAM_OK) st = number_in(r, sz, "view.image_size", "width", 1, 0, 1e6, "a whole number of pixels >= 1", &w);
    if (st == TRAM_OK) st = number_in(r, sz, "view.image_size", "height", 1, 0, 1e6, "a whole number of pixels >= 1", &ht);
    if (st != TRAM_OK) return st;
    if (w != floor(w) || ht != floor(ht))
        return fail_at(r, "view.image_size", 0, "view.image_size: expected whole numbers of pixels");
    memset(cam, 0, sizeof *cam);
    cam->width = (size_t)w;
    cam->height = (size_t)ht;
    cam->fx = w / 2 / tan(h * TRAM_PI / 360);
    cam->fy = ht / 2 / tan(vv * TRAM_PI / 360);
    cam->cx = (w - 1) / 2;
    cam->cy = (ht - 1) / 2;
    cam->distortion = TRAM_DISTORTION_NONE;
    return TRAM_OK;
}

static tram_status read_view(reader *r, const cJSON *root, tram_cell *c)
{
    const cJSON *v;
    static const char *const known[] = {"camera", "field_of_view_deg", "image_size", "distance",
                                        "max_tilt_deg", "margin_px", NULL};
    tram_status st = object(r, root, "", "view", 1, &v);
    if (st == TRAM_OK)
        st = known_keys(r, v, "view", known,
                        "camera (or field_of_view_deg and image_size), distance, max_tilt_deg, margin_px");
    if (st != TRAM_OK) return st;
    const cJSON *cf = cJSON_GetObjectItemCaseSensitive(v, "camera");
    int has_fov = cJSON_GetObjectItemCaseSensitive(v, "field_of_view_deg") != NULL ||
                  cJSON_GetObjectItemCaseSensitive(v, "image_size") != NULL;
    if (cf && has_fov)
        return fail_at(r, "view.camera", 1, "view: expected either \"camera\" or \"field_of_view_deg\" "
                       "with \"image_size\", not both");
    if (cf) {
        const char *file;
        char path[512];
        if ((st = text(r, v, "view", "camera", &file)) != TRAM_OK) return st;
        relative(r, file, path, sizeof path);
        if ((st = tram_camera_read_file(path, &c->camera, NULL, r->err)) != TRAM_OK) return st;
    } else if (has_fov) {
        if ((st = read_fov(r, v, &c->camera)) != TRAM_OK) return st;
    } else {
        return fail_at(r, "view", 0, "view: expected \"camera\" (a camera file from tram intrinsics) "
                       "or \"field_of_view_deg\" and \"image_size\"");
    }
    double tilt;
    if ((st = range(r, v, "view", "distance", 1, c->distance)) != TRAM_OK ||
        (st = number_in(r, v, "view", "max_tilt_deg", 0, 1, 89, "an angle in (0, 89] degrees", &tilt)) != TRAM_OK ||
        (st = number_in(r, v, "view", "margin_px", 0, 0, 1e6, "a number of pixels >= 0", &c->margin_px)) != TRAM_OK)
        return st;
    c->max_board_tilt_rad = tilt * TRAM_PI / 180;
    if (2 * c->margin_px >= (double)c->camera.width || 2 * c->margin_px >= (double)c->camera.height)
        return fail_at(r, "view.margin_px", 0, "margin_px %g: expected less than half the image (%zu x %zu)",
                       c->margin_px, c->camera.width, c->camera.height);
    return TRAM_OK;
}

static tram_status read_region(reader *r, const cJSON *re, tram_cell *c)
{
    const cJSON *box, *sph;
    tram_status st;
    if ((st = object(r, re, "reach", "box", 0, &box)) != TRAM_OK ||
        (st = object(r, re, "reach", "sphere", 0, &sph)) != TRAM_OK)
        return st;
    if (box && sph) return fail_at(r, "reach.sphere", 1, "reach: expected \"box\" or \"sphere\", not both");
    if (box) {
        static const char *const bk[] = {"min", "max", NULL};
        if ((st = known_keys(r, box, "reach.box", bk, "min, max")) != TRAM_OK ||
            (st = numbers(r, box, "reach.box", "min", 3, c->box_lo)) != TRAM_OK ||
            (st = numbers(r, box, "reach.box", "max", 3, c->box_hi)) != TRAM_OK)
            return st;
        for (int k = 0; k < 3; k++)
            if (!(c->box_lo[k] < c->box_hi[k]))
                return fail_at(r, "reach.box.max", 0, "reach.box: expected min < max on every axis (axis %c)",
                               "xyz"[k]);
        c->reach = TRAM_REACH_BOX;
    } else if (sph) {
        static const char *const sk[] = {"centre", "radius", NULL};
        if ((st = known_keys(r, sph, "reach.sphere", sk, "centre, radius")) != TRAM_OK ||
            (st = numbers(r, sph, "reach.sphere", "centre", 3, c->centre)) != TRAM_OK ||
            (st = number_in(r, sph, "reach.sphere", "radius", 0, 1, INFINITY, "a radius > 0", &c->radius)) != TRAM_OK)
            return st;
        c->reach = TRAM_REACH_SPHERE;
    }
    return TRAM_OK;
}

static tram_status read_reach(reader *r, const cJSON *root, tram_cell *c)
{
    const cJSON *re, *nom;
    static const char *const known[] = {"box", "sphere", "nominal", "max_tilt_deg", "chain", NULL};
    tram_status st = object(r, root, "", "reach", 1, &re);
    if (st == TRAM_OK)
        st = known_keys(r, re, "reach", known, "box or sphere, nominal, max_tilt_deg, chain");
    if (st == TRAM_OK) st = read_region(r, re, c);
    if (st == TRAM_OK) st = object(r, re, "reach", "nominal", 0, &nom);
    if (st != TRAM_OK) return st;
    int has_tilt = cJSON_GetObjectItemCaseSensitive(re, "max_tilt_deg") != NULL;
    if (!nom != !has_tilt)
        return fail_at(r, "reach", 0, "reach: \"nominal\" (the flange's nominal orientation) and "
                       "\"max_tilt_deg\" (its largest tilt from it) go together");
    if (nom) {
        static const char *const qk[] = {"qw", "qx", "qy", "qz", NULL};
        double t;
        if ((st = known_keys(r, nom, "reach.nominal", qk, "qw, qx, qy, qz")) != TRAM_OK ||
            (st = quaternion(r, nom, "reach.nominal", &c->R_nominal)) != TRAM_OK ||
            (st = number_in(r, re, "reach", "max_tilt_deg", 0, 1, 180, "an angle in (0, 180] degrees", &t)) != TRAM_OK)
            return st;
        c->has_nominal = 1;
        c->max_flange_tilt_rad = t * TRAM_PI / 180;
    }
    const cJSON *ch = cJSON_GetObjectItemCaseSensitive(re, "chain");
    if (ch) {
        const char *file;
        char path[512];
        if ((st = text(r, re, "reach", "chain", &file)) != TRAM_OK) return st;
        relative(r, file, path, sizeof path);
        if ((st = tram_chain_read_file(path, &c->chain, r->err)) != TRAM_OK) return st;
        if (c->chain->n_joints == 0 || c->chain->n_joints > TRAM_JOINTS_MAX)
            return fail_at(r, "reach.chain", 0, "reach.chain: expected a chain with 1 to %d joints",
                           TRAM_JOINTS_MAX);
    }
    if (c->reach == TRAM_REACH_NONE && !ch)
        return fail_at(r, "reach", 0, "reach: expected \"box\" or \"sphere\" (flange positions in the "
                       "base frame) or \"chain\" (a chain file with joint limits)");
    return TRAM_OK;
}

static tram_status read_noise_output(reader *r, const cJSON *root, tram_cell *c)
{
    const cJSON *no, *out;
    tram_status st = object(r, root, "", "noise", 0, &no);
    if (st == TRAM_OK && no) {
        static const char *const nk[] = {"length", "angle_deg", NULL};
        double a;
        if ((st = known_keys(r, no, "noise", nk, "length, angle_deg")) != TRAM_OK ||
            (st = number_in(r, no, "noise", "length", 0, 1, INFINITY, "a per-axis 1-sigma > 0 in the length unit", &c->noise_length)) != TRAM_OK ||
            (st = number_in(r, no, "noise", "angle_deg", 0, 1, 90, "a per-axis 1-sigma in (0, 90] degrees", &a)) != TRAM_OK)
            return st;
        c->noise_given = 1;
        c->noise_angle_rad = a * TRAM_PI / 180;
    }
    if (st == TRAM_OK) st = object(r, root, "", "output", 0, &out);
    if (st != TRAM_OK || !out) return st;
    static const char *const ok[] = {"robot_rotation", "angle_unit", NULL};
    const char *rep, *au = NULL;
    if ((st = known_keys(r, out, "output", ok, "robot_rotation, angle_unit")) != TRAM_OK ||
        (st = text(r, out, "output", "robot_rotation", &rep)) != TRAM_OK)
        return st;
    if (tram_output_rep_parse(rep, &c->out_rep) != 0)
        return fail_at(r, "output.robot_rotation", 0, "output.robot_rotation \"%.40s\": expected quat, "
                       "rotvec, matrix or euler:SEQ (e.g. euler:zyx-intrinsic)", rep);
    int needs = c->out_rep.kind == TRAM_REP_ROTVEC || c->out_rep.kind == TRAM_REP_EULER;
    if (cJSON_GetObjectItemCaseSensitive(out, "angle_unit")) {
        if ((st = text(r, out, "output", "angle_unit", &au)) != TRAM_OK) return st;
        if ((c->out_rep.angle_unit = tram_unit_angle_parse(au)) == TRAM_ANGLE_UNSET)
            return fail_at(r, "output.angle_unit", 0, "output.angle_unit \"%.20s\": expected deg or rad", au);
    } else if (needs) {
        return fail_at(r, "output", 0, "output: robot_rotation %s holds angles: expected \"angle_unit\" "
                       "(deg or rad)", rep);
    }
    c->out_rep.length_unit = c->length_unit;
    c->out_rep_given = 1;
    return TRAM_OK;
}

static tram_status read_root(reader *r, const cJSON *root, tram_cell *c)
{
    static const char *const known[] = {"format", "version", "comment", "length_unit", "guess", "target",
                                        "view", "reach", "noise", "output", NULL};
    if (!cJSON_IsObject(root)) return fail_at(r, "", 0, "not a cell file: expected a JSON object");
    const cJSON *f = cJSON_GetObjectItemCaseSensitive(root, "format");
    if (!f) return fail_at(r, "", 0, "missing key \"format\": expected \"%s\" (a tram cell file)", CELL_FORMAT);
    if (!cJSON_IsString(f) || strcmp(f->valuestring, CELL_FORMAT) != 0)
        return fail_at(r, "format", 0, "format: expected \"%s\" (a tram cell file)", CELL_FORMAT);
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (!v) return fail_at(r, "", 0, "missing key \"version\": expected 1");
    if (!cJSON_IsNumber(v) || v->valuedouble != 1.0)
        return fail_at(r, "version", 0, "version: expected 1 (this tram reads cell files of version 1)");
    tram_status st = known_keys(r, root, "", known,
                                "format, version, comment, length_unit, guess, target, view, reach, "
                                "noise, output");
    const char *lu;
    if (st == TRAM_OK) st = text(r, root, "", "length_unit", &lu);
    if (st != TRAM_OK) return st;
    if ((c->length_unit = tram_unit_length_parse(lu)) == TRAM_LENGTH_UNSET)
        return fail_at(r, "length_unit", 0, "length_unit \"%.20s\": expected mm, cm, m or in", lu);
    const cJSON *tg;
    static const char *const tk[] = {"x", "y", NULL};
    if ((st = read_guess(r, root, c)) != TRAM_OK || (st = object(r, root, "", "target", 1, &tg)) != TRAM_OK ||
        (st = known_keys(r, tg, "target", tk, "x, y (the board's extent in the target frame)")) != TRAM_OK ||
        (st = range(r, tg, "target", "x", 0, c->target_x)) != TRAM_OK ||
        (st = range(r, tg, "target", "y", 0, c->target_y)) != TRAM_OK ||
        (st = read_view(r, root, c)) != TRAM_OK || (st = read_reach(r, root, c)) != TRAM_OK)
        return st;
    return read_noise_output(r, root, c);
}

tram_status tram_cell_read_buffer(const char *name, const char *data, size_t len, const char *dir,
                                  tram_setup setup, tram_cell **out, tram_error *err)
{
    *out = NULL;
    if (setup != TRAM_SETUP_EYE_IN_HAND && setup != TRAM_SETUP_EYE_TO_HAND)
        return tram__fail(err, TRAM_EINPUT, name, 0, 0,
                          "no setup: the cell's guess depends on it (eye-in-hand or eye-to-hand)");
    cJSON *root;
    tram_status st = tram__json_parse(name, data, len, "cell file", &root, err);
    if (st != TRAM_OK) return st;
    reader r = {name, dir, NULL, err};
    tram_cell *c = tram__calloc(1, sizeof *c);
    st = c ? tram__json_pos_scan(name, data, len, &r.pos, err)
           : tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    if (st == TRAM_OK) {
        snprintf(c->source, sizeof c->source, "%s", name);
        c->setup = setup;
        st = read_root(&r, root, c);
    }
    tram__json_pos_free(r.pos);
    cJSON_Delete(root);
    if (st != TRAM_OK) {
        tram_cell_destroy(c);
        return st;
    }
    *out = c;
    return TRAM_OK;
}

tram_status tram_cell_read_file(const char *path, tram_setup setup, tram_cell **out,
                                tram_error *err)
{
    char *data, dir[512];
    size_t len;
    *out = NULL;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    snprintf(dir, sizeof dir, "%s", path);
    char *slash = strrchr(dir, '/');
    if (slash) *slash = '\0';
    else dir[0] = '\0';
    st = tram_cell_read_buffer(strcmp(path, "-") ? path : "<stdin>", data, len, dir, setup, out, err);
    tram__free(data);
    return st;
}

void tram_cell_destroy(tram_cell *c)
{
    if (!c) return;
    tram_chain_destroy(c->chain);
    tram__free(c);
}
