/*
 * records_write.c - writing record sets as v1 record files (CSV or JSON),
 * in a chosen rotation representation and units.
 *
 * Poses are written in their default directions (robot: flange-in-base,
 * T_base_flange; sensor: target-in-sensor, T_sensor_target) with every
 * directive spelled out, so the output never depends on a default.  Numbers
 * use %.17g in both forms (json_internal.h for JSON): both read back bit
 * for bit.
 */
#include "io/json_internal.h"
#include "io/records_schema_internal.h"
#include "tram/rotation.h"

#include <stdio.h>
#include <string.h>

static const char *const blocks[2] = {"robot", "sensor"};

/* The raw numbers of pose T in representation rep (slots as in the reader). */
static void pose_numbers(const tram_se3 *T, const tram_output_rep *rep, double lscale,
                         double per_rad, double out[TRAM_RAW_MAX])
{
    tram_mat3 R;
    double t[3];
    tram_se3_to_rt(T, &R, t);
    for (int i = 0; i < 3; i++) out[i] = t[i] * lscale;
    switch (rep->kind) {
    case TRAM_REP_QUAT: {
        tram_quat_wxyz q;
        tram_quat_wxyz_from_mat3(&R, &q);
        out[3] = q.w; out[4] = q.x; out[5] = q.y; out[6] = q.z;
        break;
    }
    case TRAM_REP_ROTVEC: {
        double w[3];
        tram_so3_log(&R, w);
        for (int i = 0; i < 3; i++) out[3 + i] = w[i] * per_rad;
        break;
    }
    case TRAM_REP_MATRIX:
        for (int i = 0; i < 9; i++) out[3 + i] = R.m[i / 3][i % 3];
        break;
    case TRAM_REP_EULER: {
        double e[3];
        tram_euler_from_mat3(rep->euler, &R, e);
        for (int i = 0; i < 3; i++) out[3 + i] = e[i] * per_rad;
        break;
    }
    default:
        break;
    }
}

/* The raw slot written k-th: scalar-last quaternions put qw after qz. */
static int out_slot(const tram_output_rep *rep, int k)
{
    if (rep->kind == TRAM_REP_QUAT && rep->quat_xyzw && k >= 3) return k == 6 ? 3 : k + 1;
    return k;
}

static const tram_se3 *block_pose(const tram_station *s, int b)
{
    return b == TRAM_BLOCK_ROBOT ? &s->T_base_flange : &s->T_sensor_target;
}

tram_status tram_records_write(const tram_records *r, const tram_output_rep *rep, int json,
                               FILE *f, tram_error *err)
{
    tram_status tool_st = tram_records_require_flange(r, err);
    if (tool_st != TRAM_OK) return tool_st;
    tram_length_unit lu = rep->length_unit != TRAM_LENGTH_UNSET ? rep->length_unit : r->length_unit;
    double lscale = tram_unit_length_factor(r->length_unit, lu);
    int needs_angle = rep->kind == TRAM_REP_ROTVEC || rep->kind == TRAM_REP_EULER;
    tram_angle_unit au = rep->angle_unit != TRAM_ANGLE_UNSET ? rep->angle_unit : r->angle_unit;
    if (needs_angle && au == TRAM_ANGLE_UNSET)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "the output representation holds angles but no angle unit is known: "
                          "pass --angle-unit deg or rad");
    if (rep->kind == TRAM_REP_EULER && rep->euler == TRAM_EULER_UNSET)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "no Euler convention for the output");
    double per_rad = needs_angle ? 1.0 / tram_unit_angle_in_rad(au) : 1.0;
    int nslot = tram__rep_slots(rep->kind);
    /* Joint readings are written as held: in the records' own units. */
    size_t nj = rep->with_joints ? r->n_joints : 0;
    if (nj && (lu != r->length_unit || r->angle_unit == TRAM_ANGLE_UNSET ||
               (needs_angle && au != r->angle_unit)))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "joint readings are written in the records' own units (%s, %s): "
                          "convert the poses without changing units",
                          tram_unit_length_name(r->length_unit), tram_unit_angle_name(r->angle_unit));
    if (nj) {
        needs_angle = 1;
        au = r->angle_unit;
    }
    int digits = rep->digits >= 1 && rep->digits <= 17 ? rep->digits : 17;

    if (!json) {
        fprintf(f, "# format: tram-records-1\n# length-unit: %s\n", tram_unit_length_name(lu));
        if (needs_angle) fprintf(f, "# angle-unit: %s\n", tram_unit_angle_name(au));
        for (int b = 0; b < 2; b++) {
            if (!r->has_block[b]) continue;
            if (rep->kind == TRAM_REP_EULER)
                fprintf(f, "# %s-euler: %s\n", blocks[b], tram_euler_name(rep->euler));
            fprintf(f, b == 0 ? "# robot-pose: flange-in-base\n" : "# sensor-pose: target-in-sensor\n");
        }
        if (r->setup != TRAM_SETUP_UNSET) fprintf(f, "# setup: %s\n", tram_setup_name(r->setup));
        fputs("station", f);
        for (int b = 0; b < 2; b++)
            if (r->has_block[b])
                for (int k = 0; k < nslot; k++)
                    fprintf(f, ",%s_%s", blocks[b], tram__rep_slot_name(rep->kind, out_slot(rep, k)));
        for (size_t j = 0; j < nj; j++) fprintf(f, ",joint_%zu", j + 1);
        fputc('\n', f);
        for (size_t i = 0; i < r->count; i++) {
            const tram_station *s = &r->stations[i];
            fputs(s->id, f);
            for (int b = 0; b < 2; b++) {
                if (!r->has_block[b]) continue;
                double v[TRAM_RAW_MAX];
                pose_numbers(block_pose(s, b), rep, lscale, per_rad, v);
                for (int k = 0; k < nslot; k++) {
                    double x = v[out_slot(rep, k)];
                    /* for people, rounding noise such as 1e-17 prints as 0 */
                    if (rep->digits && x > -1e-12 && x < 1e-12) x = 0.0;
                    fprintf(f, ",%.*g", digits, x == 0.0 ? 0.0 : x);
                }
            }
            const double *jr = tram_records_joints(r, i);
            for (size_t j = 0; j < nj; j++)
                fprintf(f, ",%.17g", jr[j] == 0.0 ? 0.0 : jr[j]);
            fputc('\n', f);
        }
    } else {
        tram__jb jb = {0}, *jp = &jb;
        cJSON *root = cJSON_CreateObject();
        if (!root) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        tram__jb_str(jp, root, "format", "tram-records");
        tram__jb_num(jp, root, "version", 1);
        tram__jb_str(jp, root, "length_unit", tram_unit_length_name(lu));
        if (needs_angle) tram__jb_str(jp, root, "angle_unit", tram_unit_angle_name(au));
        for (int b = 0; b < 2; b++) {
            if (!r->has_block[b]) continue;
            char key[32];
            if (rep->kind == TRAM_REP_EULER) {
                snprintf(key, sizeof key, "%s_euler", blocks[b]);
                tram__jb_str(jp, root, key, tram_euler_name(rep->euler));
            }
            snprintf(key, sizeof key, "%s_pose", blocks[b]);
            tram__jb_str(jp, root, key, b == 0 ? "flange-in-base" : "target-in-sensor");
        }
        if (r->setup != TRAM_SETUP_UNSET)
            tram__jb_str(jp, root, "setup", tram_setup_name(r->setup));
        cJSON *arr = tram__jb_arr(jp, root, "stations");
        for (size_t i = 0; arr && i < r->count; i++) {
            const tram_station *s = &r->stations[i];
            cJSON *so = tram__jb_obj(jp, arr, NULL);
            tram__jb_str(jp, so, "station", s->id);
            for (int b = 0; b < 2; b++) {
                if (!r->has_block[b]) continue;
                cJSON *bo = tram__jb_obj(jp, so, blocks[b]);
                double v[TRAM_RAW_MAX];
                pose_numbers(block_pose(s, b), rep, lscale, per_rad, v);
                for (int k = 0; bo && k < nslot; k++)
                    tram__jb_num(jp, bo, tram__rep_slot_name(rep->kind, out_slot(rep, k)),
                                 v[out_slot(rep, k)]);
            }
            if (nj) tram__jb_vec(jp, so, "joints", tram_records_joints(r, i), (int)nj, 1.0);
        }
        char *text;
        tram_status st = tram__jb_finish(jp, root, 1, 1, &text, err);
        if (st != TRAM_OK) return st;
        fputs(text, f);
        tram__free(text);
    }
    if (ferror(f)) return tram__fail(err, TRAM_EIO, NULL, 0, 0, "write error");
    return TRAM_OK;
}
