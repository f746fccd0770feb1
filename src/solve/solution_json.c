/*
 * solution_json.c - the JSON document of a solution, and of a calibration
 * file (the solution plus the station data a later mount check needs).
 * Schema: docs/solve.md.  Numbers are printed with %.17g (exact round
 * trip); values that are not defined are null.  Built through
 * json_internal.h, so a failed allocation never yields a partial file.
 */
#include "tram/point_solve.h"
#include "tram/rotation.h"
#include "io/json_internal.h"
#include "solve/pipeline_internal.h"
#include "solve/pixels_solve_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#define RAD2DEG (180.0 / TRAM_PI)

static void add_transform(tram__jb *b, cJSON *parent, const char *key, const tram_se3 *T)
{
    cJSON *o = tram__jb_obj(b, parent, key);
    tram_mat3 R;
    double t[3], w[3];
    tram_quat_wxyz q;
    tram_se3_to_rt(T, &R, t);
    tram_quat_wxyz_from_mat3(&R, &q);
    tram_so3_log(&R, w);
    double qv[4] = {q.w, q.x, q.y, q.z};
    tram__jb_matrix4(b, o, "matrix", T);
    tram__jb_vec(b, o, "translation", t, 3, 1.0);
    tram__jb_vec(b, o, "quaternion_wxyz", qv, 4, 1.0);
    tram__jb_vec(b, o, "rotation_vector_deg", w, 3, RAD2DEG);
}

static void add_stats(tram__jb *b, cJSON *parent, const char *key, const tram_stats *s)
{
    cJSON *o = tram__jb_obj(b, parent, key);
    tram__jb_num(b, o, "rms", s->rms);
    tram__jb_num(b, o, "median", s->median);
    tram__jb_num(b, o, "max", s->max);
}

/* Sigmas of one transform (v from off: translation 3, rotation 3) and,
 * when h95 != NULL, the 95% half-widths and their degrees of freedom. */
static void add_unc(tram__jb *b, cJSON *parent, const char *key, const double *v,
                    const double *h95, const double *dof, int off)
{
    cJSON *o = tram__jb_obj(b, parent, key);
    tram__jb_vec(b, o, "translation_sigma", v + off, 3, 1.0);
    tram__jb_vec(b, o, "rotation_sigma_deg", v + off + 3, 3, 1.0);
    if (h95) {
        tram__jb_vec(b, o, "translation_95", h95 + off, 3, 1.0);
        tram__jb_vec(b, o, "rotation_95_deg", h95 + off + 3, 3, 1.0);
        tram__jb_vec(b, o, "translation_dof", dof + off, 3, 1.0);
        tram__jb_vec(b, o, "rotation_dof", dof + off + 3, 3, 1.0);
    }
}

static const char *severity_name(tram_severity s)
{
    return s == TRAM_SEVERITY_ERROR ? "error" : s == TRAM_SEVERITY_WARNING ? "warning" : "info";
}

/* The observed points' residuals and the target model of a solve from points. */
static void add_points(tram__jb *b, cJSON *root, cJSON *res, const tram_point_result *pr)
{
    add_stats(b, res, "point", &pr->point);
    cJSON *pa = tram__jb_arr(b, res, "points");
    for (size_t k = 0; pa && k < pr->npoints; k++) {
        cJSON *o = tram__jb_obj(b, pa, NULL);
        tram__jb_str(b, o, "point", pr->point_id[k]);
        tram__jb_num(b, o, "rms", pr->point_rms[k]);
    }
    size_t nex = 0;
    for (size_t k = 0; k < pr->nobs; k++) nex += (size_t)pr->excluded[k];
    tram__jb_num(b, res, "excluded_observations", (double)nex);
    cJSON *md = tram__jb_obj(b, root, "model");
    tram__jb_str(b, md, "source", pr->with_model ? "given" : "solved");
    tram__jb_str(b, md, "frame", "target");
    cJSON *mp = tram__jb_arr(b, md, "points");
    for (size_t k = 0; mp && k < pr->npoints; k++) {
        cJSON *o = tram__jb_obj(b, mp, NULL);
        tram__jb_str(b, o, "point", pr->point_id[k]);
        tram__jb_vec(b, o, "xyz", pr->model_xyz + 3 * k, 3, 1.0);
    }
    tram__jb_num(b, md, "noise_length", pr->noise_length);
}

/* The transforms and the residuals (stations, and the points of a solve
 * from points). */
static void add_results(tram__jb *b, cJSON *root, const tram_solution *s, const tram_records *r)
{
    cJSON *tr = tram__jb_obj(b, root, "transforms");
    add_transform(b, tr, s->X_name, &s->X);
    add_transform(b, tr, s->Z_name, &s->Z);
    if (r->robot_tool && r->has_tool) {
        /* tool (TCP) poses: the fixed transform in the tool frame too */
        int eih = s->setup == TRAM_SETUP_EYE_IN_HAND;
        tram_se3 T_tool_flange, T;
        tram_se3_invert(&r->T_flange_tool, &T_tool_flange);
        tram_se3_compose(&T_tool_flange, eih ? &s->X : &s->Z, &T);
        add_transform(b, tr, eih ? "T_tool_sensor" : "T_tool_target", &T);
    }
    cJSON *res = tram__jb_obj(b, root, "residuals");
    tram__jb_str(b, res, "definition",
                 "per station: rotation angle and translation distance between "
                 "the station's prediction of the fixed transform and the "
                 "solution; statistics over stations not flagged as outliers");
    add_stats(b, res, "rotation_deg", &s->rot_deg);
    add_stats(b, res, "translation", &s->trans);
    cJSON *arr = tram__jb_arr(b, res, "stations");
    for (size_t i = 0; arr && i < s->n; i++) {
        cJSON *o = tram__jb_obj(b, arr, NULL);
        tram__jb_str(b, o, "station", r->stations[i].id);
        tram__jb_num(b, o, "rotation_deg", s->stations[i].rot_deg);
        tram__jb_num(b, o, "translation", s->stations[i].trans);
        tram__jb_bool(b, o, "outlier", s->stations[i].outlier);
        if (s->stations[i].no_data) tram__jb_bool(b, o, "no_data", 1);
        if (s->points) tram__jb_num(b, o, "point_rms", s->points->station_rms[i]);
    }
    if (s->points) add_points(b, root, res, s->points);
}

/* The robot's tool frame, when the records hold tool (TCP) poses. */
static void add_tool_frame(tram__jb *b, cJSON *root, const tram_records *r)
{
    if (!(r->robot_tool && r->has_tool)) return;
    cJSON *tl = tram__jb_obj(b, root, "tool_frame");
    tram__jb_str(b, tl, "robot_pose", "tool-in-base");
    tram__jb_str(b, tl, "source", r->tool_in_file ? "tool-in-flange" : "--tool");
    add_transform(b, tl, "T_flange_tool", &r->T_flange_tool);
}

/* The sensor's length scale, fitted or tested (docs/solve.md). */
static void add_sensor_scale(tram__jb *b, cJSON *root, const tram_scale_result *k)
{
    if (!k->estimated) return;
    cJSON *sc = tram__jb_obj(b, root, "sensor_scale");
    tram__jb_str(b, sc, "definition",
                 "sensor lengths times scale are the robot's lengths; sigma is its "
                 "1-sigma; z = (scale - 1) / sigma, p two-sided (normal approximation)");
    tram__jb_bool(b, sc, "fitted", k->fitted);
    tram__jb_num(b, sc, "scale", k->scale);
    tram__jb_num(b, sc, "sigma", k->sigma);
    tram__jb_num(b, sc, "z", k->z);
    tram__jb_num(b, sc, "p_value", k->p_value);
}

/* The uncertainty (and the bootstrap's) and the noise model used. */
static void add_uncertainty(tram__jb *b, cJSON *root, const tram_solution *s)
{
    cJSON *u = tram__jb_obj(b, root, "uncertainty");
    tram__jb_str(b, u, "definition",
                 "1-sigma per axis from the refinement's Jacobian and the noise model; "
                 "95%: Student-t quantile with the degrees of freedom given, times sigma; "
                 "translation along the parent frame's axes, rotation about the solved "
                 "frame's own axes");
    tram__jb_bool(b, u, "valid", s->unc.valid);
    if (s->unc.valid) {
        add_unc(b, u, s->X_name, s->unc.sigma, s->unc.half95, s->unc.dof, 0);
        add_unc(b, u, s->Z_name, s->unc.sigma, s->unc.half95, s->unc.dof, 6);
    }
    if (s->unc.bootstrap_valid) {
        cJSON *bs = tram__jb_obj(b, u, "bootstrap");
        tram__jb_num(b, bs, "resamples", (double)s->unc.bootstrap_used);
        add_unc(b, bs, s->X_name, s->unc.bootstrap_sigma, NULL, NULL, 0);
        add_unc(b, bs, s->Z_name, s->unc.bootstrap_sigma, NULL, NULL, 6);
    }
    cJSON *nz = tram__jb_obj(b, root, "noise");
    tram__jb_num(b, nz, "length", s->noise_length);
    tram__jb_num(b, nz, "angle_deg", s->noise_angle_deg);
    tram__jb_str(b, nz, "source", s->noise_given ? "given" : "estimated");
    if (s->refined && !s->points && !s->pixels) {
        tram__jb_str(b, nz, "frame", "sensor");
        tram__jb_str(b, nz, "model", s->noise_per_axis == 1   ? "per-axis"
                                     : s->noise_per_axis == 2 ? "lateral-depth"
                                                              : "pooled");
        tram__jb_vec(b, nz, "length_per_axis", s->noise_length_axis, 3, 1.0);
        tram__jb_vec(b, nz, "angle_per_axis_deg", s->noise_angle_axis_deg, 3, 1.0);
        tram__jb_vec(b, nz, "dof", s->noise_dof, 6, 1.0);
        tram__jb_num(b, nz, "robot_length", s->robot_noise_length);
        tram__jb_num(b, nz, "robot_angle_deg", s->robot_noise_angle_deg);
    }
}

/* The observability figures and each closed form's residuals. */
static void add_observability(tram__jb *b, cJSON *root, const tram_solution *s)
{
    cJSON *ob = tram__jb_obj(b, root, "observability");
    tram__jb_num(b, ob, "stations", (double)s->n);
    tram__jb_num(b, ob, "outliers", (double)s->n_outliers);
    tram__jb_num(b, ob, "motion_min_deg", s->motion_min_deg);
    tram__jb_num(b, ob, "motion_max_deg", s->motion_max_deg);
    tram__jb_num(b, ob, "axis_spread_deg", s->axis_spread_deg);
    tram__jb_num(b, ob, "condition", s->refined ? s->condition : NAN);
    if (s->solved) {
        cJSON *cf = tram__jb_arr(b, root, "closed_forms");
        for (int m = 1; cf && m < TRAM_METHOD_COUNT; m++) {
            cJSON *o = tram__jb_obj(b, cf, NULL);
            tram__jb_str(b, o, "method", tram_method_name((tram_method)m));
            tram__jb_num(b, o, "rotation_rms_deg", s->closed_rot_rms_deg[m]);
            tram__jb_num(b, o, "translation_rms", s->closed_trans_rms[m]);
        }
    }
}

/* The plausibility checks (plausibility.c, pairing.c) and the diagnostics. */
static void add_checks(tram__jb *b, cJSON *root, const tram_solution *s)
{
    if (s->solved) {
        /* The plausibility checks (plausibility.c, pairing.c). */
        cJSON *pl = tram__jb_obj(b, root, "plausibility");
        tram__jb_num(b, pl, "working_distance", s->trust.working_distance);
        tram__jb_num(b, pl, "limit_rms_rotation_deg", s->trust.limit_rot_deg);
        tram__jb_num(b, pl, "limit_rms_translation", s->trust.limit_length);
        tram__jb_bool(b, pl, "gate_passed", !s->trust.gate_failed);
        if (s->trust.pairing_done) {
            cJSON *pt = tram__jb_obj(b, pl, "pairing_test");
            tram__jb_num(b, pt, "permutations", (double)s->trust.pairing_permutations);
            tram__jb_num(b, pt, "seed", (double)s->trust.pairing_seed);
            tram__jb_num(b, pt, "ratio_rotation", s->trust.pairing_ratio_rot);
            tram__jb_num(b, pt, "ratio_translation", s->trust.pairing_ratio_trans);
            tram__jb_bool(b, pt, "passed", !s->trust.pairing_failed);
        }
    }
    cJSON *dg = tram__jb_arr(b, root, "diagnostics");
    for (size_t i = 0; dg && i < s->ndiag; i++) {
        cJSON *o = tram__jb_obj(b, dg, NULL);
        tram__jb_str(b, o, "code", s->diag[i].code);
        tram__jb_str(b, o, "severity", severity_name(s->diag[i].severity));
        tram__jb_str(b, o, "message", s->diag[i].message);
    }
}

/* What a later mount check needs: the input poses, the checksum, the
 * covariance. */
static void add_calibration_input(tram__jb *b, cJSON *root, const tram_solution *s,
                                  const tram_records *r)
{
    cJSON *in = tram__jb_obj(b, root, "input");
    char hex[24];
    snprintf(hex, sizeof hex, "%016llx", r->checksum);
    tram__jb_str(b, in, "source", r->source);
    tram__jb_str(b, in, "checksum_fnv1a64", hex);
    cJSON *arr = tram__jb_arr(b, in, "stations");
    for (size_t i = 0; arr && i < r->count; i++) {
        cJSON *o = tram__jb_obj(b, arr, NULL);
        tram__jb_str(b, o, "station", r->stations[i].id);
        tram__jb_matrix4(b, o, "T_base_flange", &r->stations[i].T_base_flange);
        if (r->has_block[TRAM_BLOCK_SENSOR])
            tram__jb_matrix4(b, o, "T_sensor_target", &r->stations[i].T_sensor_target);
    }
    if (s->unc.valid) tram__jb_vec(b, root, "covariance", s->unc.cov, 144, 1.0);
}

tram_status tram_solution_to_json(const tram_solution *s, const tram_records *r,
                                  const char *method_name, int calibration, char **text,
                                  tram_error *err)
{
    *text = NULL;
    tram__jb jb = {0}, *b = &jb;
    cJSON *root = cJSON_CreateObject();
    if (!root) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    tram__jb_str(b, root, "format", calibration ? "tram-calibration" : "tram-solution");
    tram__jb_num(b, root, "version", 1);
    tram__jb_str(b, root, "tool", "tram " TRAM_VERSION_STRING);
    tram__jb_str(b, root, "setup", tram_setup_name(s->setup));
    tram__jb_str(b, root, "method", method_name ? method_name : "auto");
    tram__jb_str(b, root, "start_method", tram_method_name(s->start_method));
    tram__jb_bool(b, root, "refined", s->refined);
    tram__jb_str(b, root, "length_unit", tram_unit_length_name(s->length_unit));
    tram__jb_bool(b, root, "solved", s->solved);
    tram__jb_bool(b, root, "trustworthy", s->trustworthy);
    /* tram never knows whether a result was verified on the cell. */
    tram__jb_bool(b, root, "verified_on_cell", 0);
    add_tool_frame(b, root, r);
    if (s->solved) {
        add_results(b, root, s, r);
        tram__pixel_result_json(b, root, s, r);
        add_sensor_scale(b, root, &s->sensor_scale);
        add_uncertainty(b, root, s);
    }
    add_observability(b, root, s);
    add_checks(b, root, s);
    tram__jb_str(b, root, "safety",
                 "Computed from the data only; not verified on the cell. Verify at "
                 "reduced speed, keep clear of the working envelope, and follow the "
                 "applicable robot-safety standards and local codes.");
    if (calibration) add_calibration_input(b, root, s, r);
    return tram__jb_finish(b, root, 1, 1, text, err);
}
