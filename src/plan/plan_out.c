/*
 * plan_out.c - a plan's outputs: the proposed stations as a record set
 * (written by io/records_write.c in the cell's robot convention) and the
 * plan's JSON document (docs/plan.md, built through io/json.c).
 */
#include "tram/plan.h"
#include "io/json_internal.h"
#include "io/records_store_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

tram_status tram_plan_records(const tram_plan_result *p, const tram_cell *cell, tram_records **out,
                              tram_error *err)
{
    *out = NULL;
    const tram_chain *ch = cell ? cell->chain : NULL;
    rec_layout lay = {{0, 0}, ch ? (int)ch->n_joints : 0, 0};
    size_t id_bytes = 0;
    for (size_t i = 0; i < p->n; i++) id_bytes += strlen(p->stations[i].id) + 1;
    tram_records *r = tram__calloc(1, sizeof *r);
    if (!r) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    tram_status st = tram__records_reserve(r, p->n, &lay, id_bytes, "<plan>", 0, err);
    if (st != TRAM_OK) {
        tram_records_destroy(r);
        return st;
    }
    snprintf(r->source, sizeof r->source, "<plan>");
    r->length_unit = p->length_unit;
    r->setup = p->setup;
    r->has_block[TRAM_BLOCK_ROBOT] = 1;
    /* Joint readings in the records' units: the output's angle unit when
     * the cell names one, else the chain's; prismatic ones in the cell's
     * length unit. */
    r->angle_unit = !ch ? TRAM_ANGLE_UNSET
                        : cell->out_rep_given && cell->out_rep.angle_unit != TRAM_ANGLE_UNSET
                              ? cell->out_rep.angle_unit
                              : ch->angle_unit;
    double to_rec = ch ? tram_unit_length_factor(ch->length_unit, p->length_unit) : 1.0;
    double ang = ch ? tram_unit_angle_in_rad(ch->angle_unit) / tram_unit_angle_in_rad(r->angle_unit) : 1.0;
    size_t used = 0;
    for (size_t i = 0; i < p->n; i++) {
        tram_station *s = &r->stations[i];
        memset(s, 0, sizeof *s);
        s->id = tram__records_put_id(r, &used, p->stations[i].id, strlen(p->stations[i].id));
        s->T_base_flange = p->stations[i].T_base_flange;
        tram_se3_identity(&s->T_sensor_target);
        double *jr = r->joints ? r->joints + i * r->n_joints : NULL;
        size_t j = 0;
        for (size_t e = 0; ch && e < ch->n_elements; e++) {
            if (ch->elements[e].kind == TRAM_CHAIN_FIXED) continue;
            jr[j] = p->stations[i].joints[j] *
                    (ch->elements[e].kind == TRAM_CHAIN_PRISMATIC ? to_rec : ang);
            j++;
        }
        r->count = i + 1;
    }
    *out = r;
    return TRAM_OK;
}

static void sigma_json(tram__jb *b, cJSON *parent, const char *key, const tram_plan_sigma *s,
                       int per_axis)
{
    cJSON *o = tram__jb_obj(b, parent, key);
    tram__jb_bool(b, o, "valid", s->valid);
    if (!s->valid) return;
    tram__jb_num(b, o, "translation", s->trans);
    tram__jb_num(b, o, "rotation_deg", s->rot_deg);
    if (per_axis) {
        tram__jb_vec(b, o, "translation_axis", s->trans_axis, 3, 1.0);
        tram__jb_vec(b, o, "rotation_axis_deg", s->rot_axis_deg, 3, 1.0);
    }
}

tram_status tram_plan_to_json(const tram_plan_result *p, char **text, tram_error *err)
{
    tram__jb jb = {0}, *b = &jb;
    cJSON *root = cJSON_CreateObject();
    if (!root) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    int eih = p->setup == TRAM_SETUP_EYE_IN_HAND;
    tram__jb_str(b, root, "format", "tram-plan");
    tram__jb_num(b, root, "version", 1);
    tram__jb_str(b, root, "setup", tram_setup_name(p->setup));
    tram__jb_str(b, root, "length_unit", tram_unit_length_name(p->length_unit));
    tram__jb_str(b, root, "status", "proposal: NOT verified on the cell (no collision check)");
    cJSON *est = tram__jb_obj(b, root, "estimate");
    tram__jb_matrix4(b, est, eih ? "T_flange_sensor" : "T_base_sensor", &p->X);
    tram__jb_matrix4(b, est, eih ? "T_base_target" : "T_flange_target", &p->Z);
    cJSON *no = tram__jb_obj(b, root, "noise");
    tram__jb_num(b, no, "length", p->noise_length);
    tram__jb_num(b, no, "angle_deg", p->noise_angle_rad * 180 / TRAM_PI);
    tram__jb_str(b, no, "source", p->noise_source ? p->noise_source : "given");
    cJSON *sm = tram__jb_obj(b, root, "sampling");
    tram__jb_num(b, sm, "seed", (double)p->seed);
    tram__jb_num(b, sm, "samples", (double)p->samples);
    tram__jb_num(b, sm, "candidates", (double)p->candidates);
    tram__jb_num(b, sm, "random_draws", (double)p->random_draws);
    tram__jb_num(b, root, "existing_stations", (double)p->n_existing);
    cJSON *sg = tram__jb_obj(b, root, "sigma_X");
    sigma_json(b, sg, "current", &p->current, 1);
    sigma_json(b, sg, "planned", &p->planned, 1);
    sigma_json(b, sg, "random_median", &p->random, 0);
    tram__jb_num(b, root, "logdet_planned", p->logdet_planned);
    tram__jb_num(b, root, "logdet_random_median", p->logdet_random_median);
    tram__jb_vec(b, root, "information", p->info, 144, 1.0);
    tram__jb_num(b, root, "path_length", p->path_length);
    cJSON *arr = tram__jb_arr(b, root, "stations");
    for (size_t i = 0; arr && i < p->n; i++) {
        const tram_plan_station *s = &p->stations[i];
        cJSON *so = tram__jb_obj(b, arr, NULL);
        tram__jb_str(b, so, "station", s->id);
        tram__jb_matrix4(b, so, "T_base_flange", &s->T_base_flange);
        tram__jb_matrix4(b, so, "T_sensor_target_predicted", &s->T_sensor_target);
        if (p->n_joints) {
            tram__jb_vec(b, so, "joints", s->joints, (int)p->n_joints, 1.0);
            tram__jb_num(b, so, "ik_error_length", s->ik_err_length);
            tram__jb_num(b, so, "ik_error_deg", s->ik_err_rad * 180 / TRAM_PI);
        }
        tram__jb_num(b, so, "distance", s->distance);
        tram__jb_num(b, so, "board_tilt_deg", s->board_tilt_deg);
        if (isfinite(s->flange_tilt_deg)) tram__jb_num(b, so, "flange_tilt_deg", s->flange_tilt_deg);
        tram__jb_num(b, so, "logdet_gain", s->gain);
    }
    tram__jb_str(b, root, "safety",
                 "The poses are unverified proposals: tram checks no collisions with fixtures, cables "
                 "or people. Jog to each pose at reduced speed with the safety functions active, keep "
                 "clear of the working envelope, and follow the applicable robot-safety standards and "
                 "local codes.");
    return tram__jb_finish(b, root, 1, 1, text, err);
}
