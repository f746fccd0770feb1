/*
 * register_json.c - what tram register reports: the plausibility warnings
 * of a registration (register_trust.c) as text, and the registration's
 * JSON document (schema: docs/points.md).  Built through json_internal.h,
 * so a failed allocation never yields a partial document; numbers print
 * with %.17g and undefined values as null.
 */
#include "tram/register_json.h"
#include "io/json_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#define RAD2DEG (180.0 / 3.14159265358979323846)

size_t tram_register_trust_warnings(const tram_register_trust *t,
                                    const tram_register_trust_options *o, tram_length_unit unit,
                                    tram_register_warning out[TRAM_REGISTER_WARNINGS_MAX])
{
    const char *u = tram_unit_length_name(unit);
    size_t k = 0;
    if (t->gate_failed) {
        snprintf(out[k].code, sizeof out[k].code, "implausible-residuals");
        snprintf(out[k].message, sizeof out[k].message,
                 "the residual RMS %.4g %s is beyond what a working sensor and robot produce (at "
                 "most %.4g %s: %.4g %s plus %.3g%% of the %.4g %s working distance; common "
                 "practice, set with --max-residual). Likely mistakes: the point rows not paired "
                 "(shifted or sorted differently), a unit, or the wrong file",
                 t->rms, u, t->limit, u, o->max_rms, u, 100 * o->max_rms_fraction,
                 t->working_distance, u);
        k++;
    }
    if (t->pairing_failed) {
        snprintf(out[k].code, sizeof out[k].code, "pairing-not-determined");
        snprintf(out[k].message, sizeof out[k].message,
                 "with the 'to' points paired at random (%zu pairings, seed %llu) the best random "
                 "pairing fits only %.3g times worse than the file's (at least %.3g times is "
                 "needed): the points cannot tell the transform; check that each row pairs a "
                 "point with its own partner",
                 t->permutations, o->seed, t->pairing_ratio, o->factor);
        k++;
    }
    return k;
}

static void add_transform(tram__jb *b, cJSON *root, const tram_register_report *r)
{
    const tram_se3 *T = &r->result->T_to_from;
    cJSON *tr = tram__jb_obj(b, tram__jb_obj(b, root, "transforms"), "T_to_from");
    double t[3] = {T->m[0][3], T->m[1][3], T->m[2][3]};
    if (r->pairs->dim == 3) {
        tram__jb_matrix4(b, tr, "matrix", T);
        tram_mat3 R;
        tram_quat_wxyz q;
        tram_se3_to_rt(T, &R, NULL);
        tram_quat_wxyz_from_mat3(&R, &q);
        double qv[4] = {q.w, q.x, q.y, q.z};
        tram__jb_vec(b, tr, "translation", t, 3, 1);
        tram__jb_vec(b, tr, "quaternion_wxyz", qv, 4, 1);
    } else {
        double rows[3][3] = {{T->m[0][0], T->m[0][1], T->m[0][3]},
                             {T->m[1][0], T->m[1][1], T->m[1][3]},
                             {0, 0, 1}};
        cJSON *m = tram__jb_arr(b, tr, "matrix");
        for (int i = 0; i < 3; i++) tram__jb_vec(b, m, NULL, rows[i], 3, 1);
        tram__jb_vec(b, tr, "translation", t, 2, 1);
        tram__jb_num(b, tr, "angle_deg", atan2(T->m[1][0], T->m[0][0]) * RAD2DEG);
    }
}

/* The residuals' statistics over the pairs used, and each pair's; returns
 * how many pairs were used. */
static size_t add_residuals(tram__jb *b, cJSON *root, const tram_register_report *r)
{
    const tram_point_pairs *p = r->pairs;
    cJSON *rs = tram__jb_obj(b, root, "residuals");
    double mx = 0, ss = 0;
    size_t k = 0;
    for (size_t i = 0; i < p->n; i++)
        if (!r->inlier || r->inlier[i]) {
            ss += r->residuals[i] * r->residuals[i];
            k++;
            if (r->residuals[i] > mx) mx = r->residuals[i];
        }
    tram__jb_num(b, rs, "rms", k ? sqrt(ss / (double)k) : 0.0);
    tram__jb_num(b, rs, "max", mx);
    cJSON *pts = tram__jb_arr(b, rs, "points");
    for (size_t i = 0; i < p->n; i++) {
        cJSON *o = tram__jb_obj(b, pts, NULL);
        tram__jb_str(b, o, "point", p->id[i]);
        tram__jb_num(b, o, "residual", r->residuals[i]);
        tram__jb_bool(b, o, "outlier", r->inlier && !r->inlier[i]);
    }
    return k;
}

static void add_trust(tram__jb *b, cJSON *root, const tram_register_report *r)
{
    const tram_register_trust *t = r->trust;
    cJSON *pl = tram__jb_obj(b, root, "plausibility");
    tram__jb_num(b, pl, "working_distance", t->working_distance);
    tram__jb_num(b, pl, "limit_rms", t->limit);
    tram__jb_bool(b, pl, "gate_passed", !t->gate_failed);
    if (t->permutations) {
        cJSON *pt = tram__jb_obj(b, pl, "pairing_test");
        tram__jb_num(b, pt, "permutations", (double)t->permutations);
        tram__jb_num(b, pt, "seed", (double)r->trust_options->seed);
        tram__jb_num(b, pt, "ratio", t->pairing_ratio);
        tram__jb_bool(b, pt, "passed", !t->pairing_failed);
    }
    cJSON *dg = tram__jb_arr(b, root, "diagnostics");
    tram_register_warning w[TRAM_REGISTER_WARNINGS_MAX];
    size_t nw = tram_register_trust_warnings(t, r->trust_options, r->pairs->length_unit, w);
    for (size_t j = 0; j < nw; j++) {
        cJSON *o = tram__jb_obj(b, dg, NULL);
        tram__jb_str(b, o, "code", w[j].code);
        tram__jb_str(b, o, "severity", "warning");
        tram__jb_str(b, o, "message", w[j].message);
    }
}

tram_status tram_register_to_json(const tram_register_report *r, char **text, tram_error *err)
{
    tram__jb b = {0};
    const tram_register_result *res = r->result;
    int d = r->pairs->dim;
    cJSON *root = cJSON_CreateObject();
    if (!root) b.failed = 1;
    tram__jb_str(&b, root, "format", "tram-registration");
    tram__jb_num(&b, root, "version", 1);
    tram__jb_str(&b, root, "tool", "tram " TRAM_VERSION_STRING);
    tram__jb_str(&b, root, "method", r->method);
    tram__jb_num(&b, root, "dimension", d);
    tram__jb_str(&b, root, "length_unit", tram_unit_length_name(r->pairs->length_unit));
    add_transform(&b, root, r);
    tram__jb_num(&b, root, "scale", res->scale);
    tram__jb_bool(&b, root, "scale_solved", r->scale_solved);
    size_t used = add_residuals(&b, root, r);
    cJSON *u = tram__jb_obj(&b, root, "uncertainty");
    tram__jb_vec(&b, u, "translation_sigma", res->translation_sigma, d, 1);
    if (d == 3) tram__jb_vec(&b, u, "rotation_sigma_deg", res->rotation_sigma_deg, 3, 1);
    else tram__jb_num(&b, u, "angle_sigma_deg", res->rotation_sigma_deg[2]);
    if (r->scale_solved) tram__jb_num(&b, u, "scale_sigma", res->scale_sigma);
    if (r->inlier) {
        cJSON *ro = tram__jb_obj(&b, root, "robust");
        tram__jb_num(&b, ro, "threshold", r->threshold);
        tram__jb_num(&b, ro, "inliers", (double)used);
    }
    add_trust(&b, root, r);
    return tram__jb_finish(&b, root, 1, 1, text, err);
}
