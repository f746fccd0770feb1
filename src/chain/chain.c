/*
 * chain.c - kinematic chains: reading chain files (generic elements, or the
 * Denavit-Hartenberg and modified Denavit-Hartenberg tables), forward
 * kinematics as a product of one 4x4 transform per element, the geometric
 * Jacobian, and turning joint columns of record files into flange poses.
 *
 * Math:
 *   T_base_flange(q) = B * E_1 * ... * E_m * T_tool, with a fixed element a
 *   constant transform, a revolute joint (exp(theta a), 0) and a prismatic
 *   joint (I, theta a), theta = scale * reading + offset.
 *   Denavit & Hartenberg (J. Appl. Mech. 22, 1955):
 *     link i = Rz(theta_i) Tz(d_i) Tx(a_i) Rx(alpha_i)
 *   Craig ("Introduction to Robotics", 1986), modified:
 *     link i = Rx(alpha_{i-1}) Tx(a_{i-1}) Rz(theta_i) Tz(d_i)
 *   The joint variable is added to theta (revolute) or d (prismatic); each
 *   table row becomes fixed elements around one joint about z.
 *   Geometric Jacobian (e.g. Siciliano et al., "Robotics", 2009, 3.1): for
 *   joint j with axis z_j through p_j (base frame) and flange origin p_e,
 *   revolute: [z_j x (p_e - p_j); z_j], prismatic: [z_j; 0].
 */
#include "math/so3_internal.h"
#include "tram/chain.h"
#include "tram/rotation.h"
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/text_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

/* Agreement of robot_ columns with the chain's pose (the reach figures of
 * docs/plan.md). */
#define POSE_TOL_MM 0.01
#define POSE_TOL_RAD (0.001 * 3.14159265358979323846 / 180)

void tram_chain_destroy(tram_chain *c)
{
    if (!c) return;
    tram__free(c->elements);
    tram__free(c);
}

typedef struct reader {
    const char *file;
    double ang;       /* radians per angle unit */
    tram_error *err;
    const char *data; /* the text, for positions on the error path */
    size_t len;
} reader;

/* A refusal at the JSON path (as named in the message: "joints[2]",
 * "top level") of the chain file: file:line:column of its value. */
static tram_status bad(const reader *rd, const char *path, const char *what)
{
    char at[160];
    snprintf(at, sizeof at, "%s", path);
    if (strcmp(at, "top level") == 0) at[0] = '\0';
    char *slash = strchr(at, '/'); /* "length_unit/angle_unit": the first */
    if (slash) *slash = '\0';
    return tram__json_pos_fail_text(rd->file, rd->data, rd->len, rd->err, at, 0, "%s: %s", path,
                                    what);
}

static int numbers(const cJSON *a, double *out, int n)
{
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) != n) return -1;
    for (int i = 0; i < n; i++) {
        const cJSON *v = cJSON_GetArrayItem(a, i);
        if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) return -1;
        out[i] = v->valuedouble;
    }
    return 0;
}

static int only_keys(const cJSON *o, const char *const *keys, const char **unknown)
{
    const cJSON *it;
    cJSON_ArrayForEach(it, o)
    {
        int ok = 0;
        for (int k = 0; keys[k]; k++)
            if (strcmp(it->string, keys[k]) == 0) ok = 1;
        if (!ok) {
            *unknown = it->string;
            return -1;
        }
    }
    return 0;
}

/* {"translation": [3], "rotation": {...}}; both optional. */
static tram_status fixed_transform(const reader *rd, const cJSON *o, const char *path, tram_se3 *T)
{
    char p[160], msg[200];
    tram_se3_identity(T);
    if (!cJSON_IsObject(o)) return bad(rd, path, "expected an object with translation and rotation");
    static const char *const keys[] = {"translation", "rotation", NULL};
    const char *unk;
    if (only_keys(o, keys, &unk)) {
        snprintf(msg, sizeof msg, "unknown key \"%s\" (expected translation, rotation)", unk);
        return bad(rd, path, msg);
    }
    double t[3] = {0, 0, 0};
    const cJSON *tr = cJSON_GetObjectItemCaseSensitive(o, "translation");
    snprintf(p, sizeof p, "%s.translation", path);
    if (tr && numbers(tr, t, 3)) return bad(rd, p, "expected 3 numbers (length unit)");
    tram_mat3 R;
    tram_so3_identity(&R);
    const cJSON *ro = cJSON_GetObjectItemCaseSensitive(o, "rotation");
    snprintf(p, sizeof p, "%s.rotation", path);
    if (ro) {
        if (!cJSON_IsObject(ro)) return bad(rd, p, "expected an object");
        const cJSON *q = cJSON_GetObjectItemCaseSensitive(ro, "quat_wxyz");
        const cJSON *rv = cJSON_GetObjectItemCaseSensitive(ro, "rotvec");
        const cJSON *m = cJSON_GetObjectItemCaseSensitive(ro, "matrix");
        const cJSON *eu = cJSON_GetObjectItemCaseSensitive(ro, "euler");
        int count = !!q + !!rv + !!m + !!eu;
        if (count != 1 || cJSON_GetArraySize(ro) != count + (eu ? 1 : 0))
            return bad(rd, p,
                       "expected exactly one of quat_wxyz [w,x,y,z], rotvec [3], matrix "
                       "[[3x3]], or euler \"SEQ\" with angles [3]");
        if (q) {
            double v[4];
            if (numbers(q, v, 4)) return bad(rd, p, "quat_wxyz: expected 4 numbers");
            tram_quat_wxyz qq = {v[0], v[1], v[2], v[3]};
            double nrm = tram_quat_wxyz_norm(&qq);
            if (!(fabs(nrm - 1.0) <= TRAM_QUAT_NORM_TOL)) {
                snprintf(msg, sizeof msg, "quat_wxyz has norm %.9g: not a rotation (expected 1)", nrm);
                return bad(rd, p, msg);
            }
            tram_quat_wxyz_to_mat3(&qq, &R);
        } else if (rv) {
            double v[3];
            if (numbers(rv, v, 3)) return bad(rd, p, "rotvec: expected 3 numbers (angle unit)");
            for (int i = 0; i < 3; i++) v[i] *= rd->ang;
            tram_so3_exp(v, &R);
        } else if (m) {
            if (!cJSON_IsArray(m) || cJSON_GetArraySize(m) != 3) return bad(rd, p, "matrix: expected 3 rows");
            for (int i = 0; i < 3; i++)
                if (numbers(cJSON_GetArrayItem(m, i), R.m[i], 3))
                    return bad(rd, p, "matrix: expected 3 rows of 3 numbers");
            double def = tram_so3_defect(&R);
            if (!(def <= TRAM_RECORDS_MATRIX_TOL)) {
                snprintf(msg, sizeof msg,
                         "matrix is not a rotation (defect %.3g; expected orthonormal rows and "
                         "det +1)",
                         def);
                return bad(rd, p, msg);
            }
        } else {
            tram_euler_seq seq = cJSON_IsString(eu) ? tram_euler_parse(eu->valuestring) : TRAM_EULER_UNSET;
            double v[3];
            if (seq == TRAM_EULER_UNSET)
                return bad(rd, p, "euler: expected a convention such as \"zyx-intrinsic\"");
            if (numbers(cJSON_GetObjectItemCaseSensitive(ro, "angles"), v, 3))
                return bad(rd, p, "euler needs \"angles\": 3 numbers (angle unit)");
            for (int i = 0; i < 3; i++) v[i] *= rd->ang;
            tram_euler_to_mat3(seq, v, &R);
        }
    }
    tram_se3_from_rt(&R, t, T);
    return TRAM_OK;
}

typedef struct builder {
    tram_chain *c;
    size_t cap;
} builder;

static tram_chain_element *push(builder *b)
{
    if (b->c->n_elements == b->cap) {
        size_t nc = b->cap ? 2 * b->cap : 16;
        tram_chain_element *e = tram__realloc(b->c->elements, nc * sizeof *e);
        if (!e) return NULL;
        b->c->elements = e;
        b->cap = nc;
    }
    tram_chain_element *e = &b->c->elements[b->c->n_elements++];
    memset(e, 0, sizeof *e);
    tram_se3_identity(&e->T);
    e->scale = 1.0;
    return e;
}

static tram_status push_fixed(builder *b, const tram_se3 *T, tram_error *err)
{
    tram_chain_element *e = push(b);
    if (!e) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    e->kind = TRAM_CHAIN_FIXED;
    e->T = *T;
    return TRAM_OK;
}

/* The joint fields shared by generic and table rows: scale, limits, name. */
static tram_status joint_extras(const reader *rd, const cJSON *o, const char *path,
                                tram_chain_element *e, size_t index)
{
    char p[160];
    snprintf(e->name, sizeof e->name, "joint_%zu", index + 1);
    const cJSON *nm = cJSON_GetObjectItemCaseSensitive(o, "name");
    if (nm) {
        if (!cJSON_IsString(nm)) return bad(rd, path, "name: expected a string");
        snprintf(e->name, sizeof e->name, "%s", nm->valuestring);
    }
    const cJSON *sc = cJSON_GetObjectItemCaseSensitive(o, "scale");
    if (sc) {
        if (!cJSON_IsNumber(sc) || sc->valuedouble == 0 || !isfinite(sc->valuedouble))
            return bad(rd, path, "scale: expected a non-zero number (-1 reverses the encoder)");
        e->scale = sc->valuedouble;
    }
    const cJSON *lim = cJSON_GetObjectItemCaseSensitive(o, "limits");
    if (lim) {
        double v[2];
        snprintf(p, sizeof p, "%s.limits", path);
        if (numbers(lim, v, 2) || !(v[0] <= v[1]))
            return bad(rd, p, "expected [low, high] readings with low <= high");
        e->has_limits = 1;
        e->lo = v[0];
        e->hi = v[1];
    }
    return TRAM_OK;
}

static tram_status generic_elements(const reader *rd, builder *b, const cJSON *els)
{
    char path[64], msg[200];
    if (!cJSON_IsArray(els)) return bad(rd, "elements", "expected an array");
    int k = 0;
    const cJSON *o;
    cJSON_ArrayForEach(o, els)
    {
        snprintf(path, sizeof path, "elements[%d]", k++);
        if (!cJSON_IsObject(o)) return bad(rd, path, "expected an object");
        const cJSON *fx = cJSON_GetObjectItemCaseSensitive(o, "fixed");
        const cJSON *jt = cJSON_GetObjectItemCaseSensitive(o, "joint");
        if (!!fx == !!jt) return bad(rd, path, "expected either \"fixed\" or \"joint\"");
        if (fx) {
            if (cJSON_GetArraySize(o) != 1) return bad(rd, path, "a fixed element has only \"fixed\"");
            tram_se3 T;
            tram_status st = fixed_transform(rd, fx, path, &T);
            if (st == TRAM_OK) st = push_fixed(b, &T, rd->err);
            if (st != TRAM_OK) return st;
            continue;
        }
        static const char *const keys[] = {"joint", "axis", "offset", "scale", "limits", "name", NULL};
        const char *unk;
        if (only_keys(o, keys, &unk)) {
            snprintf(msg, sizeof msg,
                     "unknown key \"%s\" (expected joint, axis, offset, scale, limits, name)", unk);
            return bad(rd, path, msg);
        }
        tram_chain_kind kind;
        if (cJSON_IsString(jt) && strcmp(jt->valuestring, "revolute") == 0) kind = TRAM_CHAIN_REVOLUTE;
        else if (cJSON_IsString(jt) && strcmp(jt->valuestring, "prismatic") == 0) kind = TRAM_CHAIN_PRISMATIC;
        else return bad(rd, path, "joint: expected \"revolute\" or \"prismatic\"");
        tram_chain_element *e = push(b);
        if (!e) return tram__fail(rd->err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        e->kind = kind;
        if (numbers(cJSON_GetObjectItemCaseSensitive(o, "axis"), e->axis, 3))
            return bad(rd, path, "axis: expected 3 numbers (a direction in the current frame)");
        double n = tram__norm3(e->axis);
        if (!(fabs(n - 1.0) <= 1e-6))
            return bad(rd, path, "axis: expected a unit vector (length 1 within 1e-6)");
        for (int i = 0; i < 3; i++) e->axis[i] /= n;
        const cJSON *off = cJSON_GetObjectItemCaseSensitive(o, "offset");
        if (off && (!cJSON_IsNumber(off) || !isfinite(off->valuedouble)))
            return bad(rd, path, "offset: expected a number");
        e->offset = off ? off->valuedouble * (kind == TRAM_CHAIN_REVOLUTE ? rd->ang : 1.0) : 0.0;
        tram_status st = joint_extras(rd, o, path, e, b->c->n_joints);
        if (st != TRAM_OK) return st;
        b->c->n_joints++;
    }
    return TRAM_OK;
}

static tram_status table_rows(const reader *rd, builder *b, const cJSON *rows, int modified)
{
    char path[64], msg[200];
    if (!cJSON_IsArray(rows) || cJSON_GetArraySize(rows) == 0)
        return bad(rd, "joints", "expected a non-empty array of table rows, base to flange");
    static const char *const dh_keys[] = {"a", "alpha", "d", "theta", "type", "scale", "limits", "name", NULL};
    static const char *const mdh_keys[] = {"a_prev", "alpha_prev", "d", "theta", "type", "scale", "limits", "name", NULL};
    const char *ka = modified ? "a_prev" : "a", *kal = modified ? "alpha_prev" : "alpha";
    int k = 0;
    const cJSON *o;
    cJSON_ArrayForEach(o, rows)
    {
        snprintf(path, sizeof path, "joints[%d]", k++);
        const char *unk;
        if (!cJSON_IsObject(o)) return bad(rd, path, "expected an object");
        if (only_keys(o, modified ? mdh_keys : dh_keys, &unk)) {
            snprintf(msg, sizeof msg, "unknown key \"%s\" for the %s table (expected %s, %s, d, theta, "
                                      "type, scale, limits, name)",
                     unk, modified ? "modified-dh" : "dh", ka, kal);
            return bad(rd, path, msg);
        }
        double v[4];
        const char *names[4] = {ka, kal, "d", "theta"};
        for (int i = 0; i < 4; i++) {
            const cJSON *x = cJSON_GetObjectItemCaseSensitive(o, names[i]);
            if (!cJSON_IsNumber(x) || !isfinite(x->valuedouble)) {
                snprintf(msg, sizeof msg, "%s: expected a number", names[i]);
                return bad(rd, path, msg);
            }
            v[i] = x->valuedouble;
        }
        double a = v[0], alpha = v[1] * rd->ang, d = v[2], theta = v[3] * rd->ang;
        const cJSON *ty = cJSON_GetObjectItemCaseSensitive(o, "type");
        int prismatic;
        if (cJSON_IsString(ty) && strcmp(ty->valuestring, "revolute") == 0) prismatic = 0;
        else if (cJSON_IsString(ty) && strcmp(ty->valuestring, "prismatic") == 0) prismatic = 1;
        else return bad(rd, path, "type: expected \"revolute\" or \"prismatic\"");
        tram_mat3 R;
        tram_se3 Rx, Tx, Rz, Tz, A;
        double zero[3] = {0, 0, 0}, tx[3] = {a, 0, 0}, tz[3] = {0, 0, d};
        tram_so3_axis_rotation(0, alpha, &R);
        tram_se3_from_rt(&R, zero, &Rx);
        tram_so3_identity(&R);
        tram_se3_from_rt(&R, tx, &Tx);
        tram_se3_from_rt(&R, tz, &Tz);
        tram_so3_axis_rotation(2, theta, &R);
        tram_se3_from_rt(&R, zero, &Rz);
        tram_status st = TRAM_OK;
        if (modified) { /* Rx(alpha) Tx(a) [Rz(theta) | Tz(d)] */
            tram_se3_compose(&Rx, &Tx, &A);
            if (prismatic) tram_se3_compose(&A, &Rz, &A);
            st = push_fixed(b, &A, rd->err);
        } else if (prismatic) { /* Rz(theta) [Tz(d)] Tx(a) Rx(alpha) */
            st = push_fixed(b, &Rz, rd->err);
        }
        if (st != TRAM_OK) return st;
        tram_chain_element *e = push(b);
        if (!e) return tram__fail(rd->err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        e->kind = prismatic ? TRAM_CHAIN_PRISMATIC : TRAM_CHAIN_REVOLUTE;
        e->axis[2] = 1.0;
        e->offset = prismatic ? d : theta;
        st = joint_extras(rd, o, path, e, b->c->n_joints);
        if (st != TRAM_OK) return st;
        b->c->n_joints++;
        if (modified) {
            if (!prismatic) st = push_fixed(b, &Tz, rd->err);
        } else {
            tram_se3_compose(&Tx, &Rx, &A);
            if (!prismatic) tram_se3_compose(&Tz, &A, &A);
            st = push_fixed(b, &A, rd->err);
        }
        if (st != TRAM_OK) return st;
    }
    return TRAM_OK;
}

tram_status tram_chain_read_buffer(const char *name, const char *data, size_t len,
                                   tram_chain **out, tram_error *err)
{
    *out = NULL;
    cJSON *root;
    tram_status pst = tram__json_parse(name, data, len, "chain file", &root, err);
    if (pst != TRAM_OK) return pst;
    tram_chain *c = tram__calloc(1, sizeof *c);
    builder b = {c, 0};
    reader rd = {name, 1.0, err, data, len};
    tram_status st = TRAM_OK;
    if (!c) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    snprintf(c->source, sizeof c->source, "%s", name);
    if (!cJSON_IsObject(root)) {
        st = bad(&rd, "top level", "expected an object");
        goto done;
    }
    static const char *const keys[] = {"format", "version", "name", "comment", "length_unit",
                                       "angle_unit", "base", "tool", "elements", "convention",
                                       "joints", NULL};
    const char *unk;
    if (only_keys(root, keys, &unk)) {
        char msg[200];
        snprintf(msg, sizeof msg,
                 "unknown key \"%s\" (expected length_unit, angle_unit, base, elements or "
                 "convention + joints, tool)",
                 unk);
        st = bad(&rd, "top level", msg);
        goto done;
    }
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    const cJSON *ver = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (fmt && (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, "tram-chain") != 0)) {
        st = bad(&rd, "format", "expected \"tram-chain\"");
        goto done;
    }
    if (ver && (!cJSON_IsNumber(ver) || ver->valueint != 1 || ver->valuedouble != 1.0)) {
        st = bad(&rd, "version", cJSON_IsNumber(ver) && ver->valuedouble > 1
                                     ? "this chain file is newer than this tram reads (1)"
                                     : "expected 1");
        goto done;
    }
    const cJSON *lu = cJSON_GetObjectItemCaseSensitive(root, "length_unit");
    const cJSON *au = cJSON_GetObjectItemCaseSensitive(root, "angle_unit");
    c->length_unit = cJSON_IsString(lu) ? tram_unit_length_parse(lu->valuestring) : TRAM_LENGTH_UNSET;
    c->angle_unit = cJSON_IsString(au) ? tram_unit_angle_parse(au->valuestring) : TRAM_ANGLE_UNSET;
    if (c->length_unit == TRAM_LENGTH_UNSET || c->angle_unit == TRAM_ANGLE_UNSET) {
        st = bad(&rd, "length_unit/angle_unit",
                 "both are required: \"length_unit\": mm|cm|m|in, \"angle_unit\": deg|rad");
        goto done;
    }
    rd.ang = tram_unit_angle_in_rad(c->angle_unit);
    tram_se3 T;
    const cJSON *base = cJSON_GetObjectItemCaseSensitive(root, "base");
    if (base) {
        if ((st = fixed_transform(&rd, base, "base", &T)) != TRAM_OK) goto done;
        if ((st = push_fixed(&b, &T, err)) != TRAM_OK) goto done;
    }
    const cJSON *conv = cJSON_GetObjectItemCaseSensitive(root, "convention");
    const cJSON *els = cJSON_GetObjectItemCaseSensitive(root, "elements");
    if (!!conv == !!els) {
        st = bad(&rd, "top level",
                 "expected either \"elements\" or \"convention\": \"dh\" | \"modified-dh\" with "
                 "\"joints\"");
        goto done;
    }
    if (els) {
        st = generic_elements(&rd, &b, els);
    } else {
        int modified;
        if (cJSON_IsString(conv) && strcmp(conv->valuestring, "dh") == 0) modified = 0;
        else if (cJSON_IsString(conv) && strcmp(conv->valuestring, "modified-dh") == 0) modified = 1;
        else {
            st = bad(&rd, "convention", "expected \"dh\" or \"modified-dh\"");
            goto done;
        }
        st = table_rows(&rd, &b, cJSON_GetObjectItemCaseSensitive(root, "joints"), modified);
    }
    if (st != TRAM_OK) goto done;
    const cJSON *tool = cJSON_GetObjectItemCaseSensitive(root, "tool");
    if (tool) {
        if ((st = fixed_transform(&rd, tool, "tool", &T)) != TRAM_OK) goto done;
        if ((st = push_fixed(&b, &T, err)) != TRAM_OK) goto done;
    }
    if (c->n_joints == 0) st = bad(&rd, "top level", "the chain has no joints");
    if (c->n_joints > TRAM_JOINTS_MAX) st = bad(&rd, "top level", "more than 16 joints");
done:
    cJSON_Delete(root);
    if (st != TRAM_OK) {
        tram_chain_destroy(c);
        return st;
    }
    *out = c;
    return TRAM_OK;
}

tram_status tram_chain_read_file(const char *path, tram_chain **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_chain_read_buffer(path, data, len, out, err);
    tram__free(data);
    return st;
}

int tram_chain_limit_violation(const tram_chain *c, const double *q)
{
    size_t j = 0;
    for (size_t i = 0; i < c->n_elements; i++) {
        const tram_chain_element *e = &c->elements[i];
        if (e->kind == TRAM_CHAIN_FIXED) continue;
        if (e->has_limits && (q[j] < e->lo || q[j] > e->hi)) return (int)j;
        j++;
    }
    return -1;
}

/* The transform of one element at reading r. */
static void element_transform(const tram_chain *c, const tram_chain_element *e, double r,
                              tram_se3 *out)
{
    if (e->kind == TRAM_CHAIN_FIXED) {
        *out = e->T;
        return;
    }
    double v = e->scale * r * (e->kind == TRAM_CHAIN_REVOLUTE ? tram_unit_angle_in_rad(c->angle_unit) : 1.0) +
               e->offset;
    tram_mat3 R;
    double t[3] = {0, 0, 0};
    if (e->kind == TRAM_CHAIN_REVOLUTE) {
        double w[3] = {e->axis[0] * v, e->axis[1] * v, e->axis[2] * v};
        tram_so3_exp(w, &R);
    } else {
        tram_so3_identity(&R);
        for (int i = 0; i < 3; i++) t[i] = e->axis[i] * v;
    }
    tram_se3_from_rt(&R, t, out);
}

void tram_chain_forward(const tram_chain *c, const double *q, tram_se3 *T_base_flange,
                        tram_se3 *frames)
{
    tram_se3 T;
    tram_se3_identity(&T);
    size_t j = 0;
    int first_joint_seen = 0;
    for (size_t i = 0; i < c->n_elements; i++) {
        const tram_chain_element *e = &c->elements[i];
        if (e->kind != TRAM_CHAIN_FIXED && !first_joint_seen) {
            if (frames) frames[0] = T; /* the frame the first joint moves in */
            first_joint_seen = 1;
        }
        tram_se3 E;
        element_transform(c, e, e->kind == TRAM_CHAIN_FIXED ? 0.0 : q[j], &E);
        tram_se3_compose(&T, &E, &T);
        if (e->kind != TRAM_CHAIN_FIXED) {
            if (frames) frames[1 + j] = T;
            j++;
        }
    }
    if (frames) frames[c->n_joints + 1] = T;
    *T_base_flange = T;
}

void tram_chain_jacobian(const tram_chain *c, const double *q, double *J)
{
    size_t n = c->n_joints;
    tram_se3 T, Tf;
    tram_chain_forward(c, q, &Tf, NULL);
    double pe[3] = {Tf.m[0][3], Tf.m[1][3], Tf.m[2][3]};
    tram_se3_identity(&T);
    size_t j = 0;
    for (size_t i = 0; i < c->n_elements; i++) {
        const tram_chain_element *e = &c->elements[i];
        if (e->kind != TRAM_CHAIN_FIXED) {
            double z[3], p[3] = {T.m[0][3], T.m[1][3], T.m[2][3]}, d[3], v[3];
            tram_se3_apply_direction(&T, e->axis, z);
            if (e->kind == TRAM_CHAIN_REVOLUTE) {
                for (int k = 0; k < 3; k++) d[k] = pe[k] - p[k];
                tram__cross3(z, d, v);
                for (int k = 0; k < 3; k++) {
                    J[(size_t)k * n + j] = v[k];
                    J[(size_t)(3 + k) * n + j] = z[k];
                }
            } else {
                for (int k = 0; k < 3; k++) {
                    J[(size_t)k * n + j] = z[k];
                    J[(size_t)(3 + k) * n + j] = 0.0;
                }
            }
        }
        tram_se3 E;
        element_transform(c, e, e->kind == TRAM_CHAIN_FIXED ? 0.0 : q[j], &E);
        tram_se3_compose(&T, &E, &T);
        if (e->kind != TRAM_CHAIN_FIXED) j++;
    }
}

tram_status tram_records_apply_chain(tram_records *r, const tram_chain *c, tram_error *err)
{
    if (r->n_joints == 0)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "--chain needs joint columns (joint_1 ... joint_%zu) in the record file",
                          c->n_joints);
    if (r->n_joints != c->n_joints)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "the record file has %zu joint columns but the chain %s has %zu joints",
                          r->n_joints, c->source, c->n_joints);
    double ang = tram_unit_angle_in_rad(r->angle_unit) / tram_unit_angle_in_rad(c->angle_unit);
    double len = tram_unit_length_factor(r->length_unit, c->length_unit);
    double back = tram_unit_length_factor(c->length_unit, r->length_unit);
    int both = r->has_block[TRAM_BLOCK_ROBOT] && !r->robot_from_chain;
    const tram_chain_element *joint[TRAM_JOINTS_MAX];
    size_t j = 0;
    for (size_t i = 0; i < c->n_elements; i++)
        if (c->elements[i].kind != TRAM_CHAIN_FIXED) joint[j++] = &c->elements[i];
    for (size_t s = 0; s < r->count; s++) {
        tram_station *st = &r->stations[s];
        const double *jr = tram_records_joints(r, s);
        double q[TRAM_JOINTS_MAX];
        for (size_t k = 0; k < c->n_joints; k++)
            q[k] = jr[k] * (joint[k]->kind == TRAM_CHAIN_REVOLUTE ? ang : len);
        int bad_joint = tram_chain_limit_violation(c, q);
        if (bad_joint >= 0) {
            const tram_chain_element *e = joint[bad_joint];
            const char *u = e->kind == TRAM_CHAIN_REVOLUTE ? tram_unit_angle_name(c->angle_unit)
                                                           : tram_unit_length_name(c->length_unit);
            return tram__fail(err, TRAM_EINPUT, r->source, st->line,
                              r->joint_col ? r->joint_col[s * r->n_joints + (size_t)bad_joint] : 0,
                              "station '%s': joint_%d (%s) reads %.6g %s, outside its limits [%g, "
                              "%g] %s",
                              st->id, bad_joint + 1, e->name, q[bad_joint], u, e->lo, e->hi, u);
        }
        tram_se3 T;
        tram_chain_forward(c, q, &T, NULL);
        tram_se3_scale_translation(&T, back, &T);
        if (both) { /* robot_ columns too: they must be the chain's pose */
            double a, l;
            tram_se3_distance(&st->T_base_flange, &T, &a, &l);
            if (a > POSE_TOL_RAD || l > POSE_TOL_MM * tram_unit_length_factor(TRAM_LENGTH_MM, r->length_unit))
                return tram__fail(err, TRAM_EINPUT, r->source, st->line, 0,
                                  "station '%s': the robot_ pose and the chain's pose from the "
                                  "joint readings differ by %.3g %s and %.3g deg (at most 0.01 mm and "
                                  "0.001 deg): wrong chain, units or convention",
                                  st->id, l, tram_unit_length_name(r->length_unit), a * 180 / TRAM_PI);
        }
        st->T_base_flange = T;
    }
    r->has_block[TRAM_BLOCK_ROBOT] = 1;
    r->robot_from_chain = 1;
    r->conv[TRAM_BLOCK_ROBOT].rep = TRAM_REP_NONE;
    return TRAM_OK;
}
