/*
 * plan.c - station planning (tram/plan.h, docs/plan.md): the estimate and
 * noise to plan at, the information of the stations already recorded,
 * candidates inside the cell (sample.c), the D-optimal choice (design.c),
 * the comparison with random feasible stations, and the visiting order -
 * a nearest-neighbour tour from every start, improved by 2-opt (Croes,
 * "A method for solving traveling-salesman problems", Oper. Res. 6(6),
 * 1958) on the open path.  The cost of a move is the largest joint change
 * (rad; prismatic joints per length scale) with a chain, else the flange's
 * travel plus its rotation times the mid working distance.
 */
#include "plan/design_internal.h"
#include "solve/pipeline_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void tram_plan_options_init(tram_plan_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->stations = 6;
    opt->candidates = 1500;
    opt->max_samples = 400000;
    opt->random_draws = 20;
    opt->seed = 1;
    opt->exchange = 1;
}

void tram_plan_result_destroy(tram_plan_result *p)
{
    if (!p) return;
    tram__free(p->stations);
    tram__free(p);
}

/* The reason no candidate was found, from the count of each refusal. */
static tram_status refuse(const tram_cell *c, const tram__sample_stats *s, tram_error *err)
{
    const char *lu = tram_unit_length_name(c->length_unit);
    size_t worst = s->flange_tilt;
    const char *why = "the flange cannot turn the board toward the camera within its tilt limit";
    char buf[300];
    if (s->board_tilt > worst) {
        worst = s->board_tilt;
        why = "the flange orientations allowed tilt the board beyond view.max_tilt_deg";
    }
    if (s->region > worst) {
        worst = s->region;
        snprintf(buf, sizeof buf, "the working distance %g-%g %s cannot be reached inside the flange %s",
                 c->distance[0], c->distance[1], lu,
                 c->reach == TRAM_REACH_SPHERE ? "sphere" : c->reach == TRAM_REACH_BOX ? "box" : "region");
        why = buf;
    }
    if (s->image > worst) {
        worst = s->image;
        why = "the board does not fit inside the image with the margin at the working distance";
    }
    if (s->ik > worst) why = "the chain cannot reach the poses that keep the board in view (joint limits)";
    return tram__fail(err, TRAM_EUNDETERMINED, c->source, 0, 0,
                      "no pose satisfies the cell's constraints in %zu samples: %s (refused: flange "
                      "tilt %zu, board tilt %zu, flange region %zu, image %zu, reach %zu)",
                      s->tries, why, s->flange_tilt, s->board_tilt, s->region, s->image, s->ik);
}

/* Estimate, noise and the information of the recorded stations. */
static tram_status setup_problem(const tram_cell *c, const tram_records *ex, const tram_solution *sol,
                                 tram_plan_result *p, double H0[144], tram_error *err)
{
    p->setup = c->setup;
    p->length_unit = c->length_unit;
    p->X = c->X;
    p->Z = c->Z;
    p->estimate_source = "guess";
    memset(H0, 0, 144 * sizeof *H0);
    if (c->noise_given) {
        p->noise_length = c->noise_length;
        p->noise_angle_rad = c->noise_angle_rad;
        p->noise_source = "given";
    }
    if (!ex) {
        if (!c->noise_given)
            return tram__fail(err, TRAM_EUNDETERMINED, c->source, 0, 0,
                              "no noise per station: give \"noise\" in the cell file, or the record "
                              "file of the stations so far");
        return TRAM_OK;
    }
    if (ex->length_unit != c->length_unit)
        return tram__fail(err, TRAM_EINPUT, c->source, 0, 0,
                          "the cell's length_unit is %s but the records' is %s: use one unit",
                          tram_unit_length_name(c->length_unit), tram_unit_length_name(ex->length_unit));
    p->estimate_source = "guess";
    if (sol && sol->solved) {
        p->X = sol->X;
        p->Z = sol->Z;
        p->estimate_source = "records";
    }
    if (!c->noise_given && !(sol && sol->solved))
        return tram__fail(err, TRAM_EUNDETERMINED, ex->source, 0, 0,
                          "the records cannot be solved yet and the cell gives no noise: give "
                          "\"noise\" in the cell file");
    if (!c->noise_given) {
        p->noise_length = sol->noise_length;
        p->noise_angle_rad = sol->noise_angle_deg * TRAM_PI / 180;
        p->noise_source = "records";
    }
    tram_se3 *P, *S;
    if (tram__station_poses(ex, c->setup, &P, &S) != TRAM_OK)
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    double ls = tram__length_scale(P, S, ex->count);
    for (size_t i = 0; i < ex->count; i++) {
        const tram_station_result *sr = sol && sol->solved && sol->stations && i < sol->n
                                            ? &sol->stations[i] : NULL;
        if (sr && (sr->outlier || sr->no_data)) continue; /* adds no information */
        double J[72];
        tram__plan_jacobian(&P[i], &S[i], &p->X, &p->Z, p->noise_length, p->noise_angle_rad, ls, J);
        tram__plan_add_info(H0, J);
        p->n_existing++;
    }
    tram__free(P);
    tram__free(S);
    return TRAM_OK;
}

/* Cost of moving between candidates a and b. */
static double move_cost(const tram_cell *c, const tram__plan_cand *a, const tram__plan_cand *b)
{
    if (c->chain) {
        double m = 0, per = tram_unit_angle_in_rad(c->chain->angle_unit);
        size_t j = 0;
        for (size_t i = 0; i < c->chain->n_elements; i++) {
            const tram_chain_element *e = &c->chain->elements[i];
            if (e->kind == TRAM_CHAIN_FIXED) continue;
            double d = fabs(a->joints[j] - b->joints[j]) * (e->kind == TRAM_CHAIN_REVOLUTE ? per : 1.0 / c->distance[1]);
            if (d > m) m = d;
            j++;
        }
        return m;
    }
    double ang, len;
    tram_se3_distance(&a->T_base_flange, &b->T_base_flange, &ang, &len);
    return len + ang * (c->distance[0] + c->distance[1]) / 2;
}

static double path_cost(const double *D, size_t k, const size_t *ord)
{
    double s = 0;
    for (size_t i = 0; i + 1 < k; i++) s += D[ord[i] * k + ord[i + 1]];
    return s;
}

/* Nearest-neighbour open paths from every start, the shortest improved by
 * 2-opt; ord gets positions 0..k-1 of the chosen list. */
static void visiting_order(const double *D, size_t k, size_t *ord, size_t *tmp)
{
    double best = INFINITY;
    for (size_t s = 0; s < k; s++) {
        unsigned char seen[64] = {0};
        tmp[0] = s;
        seen[s] = 1;
        for (size_t i = 1; i < k; i++) {
            size_t nx = k;
            for (size_t j = 0; j < k; j++)
                if (!seen[j] && (nx == k || D[tmp[i - 1] * k + j] < D[tmp[i - 1] * k + nx])) nx = j;
            tmp[i] = nx;
            seen[nx] = 1;
        }
        double cost = path_cost(D, k, tmp);
        if (cost < best) {
            best = cost;
            memcpy(ord, tmp, k * sizeof *ord);
        }
    }
    for (int improved = 1; improved;) {
        improved = 0;
        for (size_t i = 0; i + 1 < k; i++)
            for (size_t j = i + 1; j < k; j++) {
                memcpy(tmp, ord, k * sizeof *tmp);
                for (size_t a = i, b = j; a < b; a++, b--) {
                    size_t t = tmp[a];
                    tmp[a] = tmp[b];
                    tmp[b] = t;
                }
                if (path_cost(D, k, tmp) < path_cost(D, k, ord) - 1e-12) {
                    memcpy(ord, tmp, k * sizeof *ord);
                    improved = 1;
                }
            }
    }
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Median predicted sigma (and log det) of `draws` sets of k random
 * feasible candidates. */
static tram_status random_sets(const double H0[144], const tram__plan_cand *cand, size_t n, size_t k,
                               size_t draws, unsigned long long seed, tram_plan_result *p)
{
    double *v = tram__malloc((draws ? draws : 1) * 4 * sizeof *v);
    size_t *pick = tram__malloc((n ? n : 1) * sizeof *pick);
    if (!v || !pick) {
        tram__free(v);
        tram__free(pick);
        return TRAM_ENOMEM;
    }
    unsigned long long st = seed ^ 0x72616e646f6dULL; /* apart from the sampling stream */
    tram_status s = TRAM_OK;
    for (size_t d = 0; d < draws && s == TRAM_OK; d++) {
        for (size_t i = 0; i < n; i++) pick[i] = i;
        double H[144];
        memcpy(H, H0, sizeof H);
        for (size_t i = 0; i < k; i++) { /* partial Fisher-Yates shuffle */
            size_t j = i + (size_t)(tram__plan_uniform(&st) * (double)(n - i));
            size_t t = pick[i];
            pick[i] = pick[j];
            pick[j] = t;
            tram__plan_add_info(H, cand[pick[i]].J);
        }
        tram_plan_sigma sg;
        tram__plan_sigma(H, &sg);
        v[d] = sg.valid ? sg.trans : INFINITY;
        v[draws + d] = sg.valid ? sg.rot_deg : INFINITY;
        s = tram__plan_logdet(H, &v[2 * draws + d]);
    }
    if (s == TRAM_OK && draws) {
        for (int q = 0; q < 3; q++) qsort(v + (size_t)q * draws, draws, sizeof *v, cmp_double);
        size_t m = draws / 2;
        p->random.trans = v[m];
        p->random.rot_deg = v[draws + m];
        p->random.valid = isfinite(v[m]) && isfinite(v[draws + m]);
        p->logdet_random_median = v[2 * draws + m];
    }
    tram__free(v);
    tram__free(pick);
    return s;
}

/* Fill the result's stations from the chosen candidates, in visiting
 * order. */
static tram_status fill_stations(const tram_cell *c, const tram__plan_cand *cand, const size_t *chosen,
                                 const double *gain, size_t k, tram_plan_result *p)
{
    double *D = tram__malloc(k * k * sizeof *D);
    size_t *ord = tram__malloc(2 * k * sizeof *ord);
    p->stations = tram__calloc(k, sizeof *p->stations);
    if (!D || !ord || !p->stations) {
        tram__free(D);
        tram__free(ord);
        return TRAM_ENOMEM;
    }
    for (size_t a = 0; a < k; a++)
        for (size_t b = 0; b < k; b++) D[a * k + b] = move_cost(c, &cand[chosen[a]], &cand[chosen[b]]);
    visiting_order(D, k, ord, ord + k);
    p->n = k;
    p->n_joints = c->chain ? c->chain->n_joints : 0;
    for (size_t i = 0; i < k; i++) {
        const tram__plan_cand *q = &cand[chosen[ord[i]]];
        tram_plan_station *s = &p->stations[i];
        snprintf(s->id, sizeof s->id, "plan%zu", i + 1);
        s->T_base_flange = q->T_base_flange;
        s->T_sensor_target = q->S;
        memcpy(s->joints, q->joints, sizeof s->joints);
        s->ik_err_length = q->ik_len;
        s->ik_err_rad = q->ik_rad;
        s->distance = q->distance;
        s->board_tilt_deg = q->board_tilt * 180 / TRAM_PI;
        s->flange_tilt_deg = q->flange_tilt * 180 / TRAM_PI;
        s->gain = gain[ord[i]];
        if (i > 0) {
            double ang, len;
            tram_se3_distance(&p->stations[i - 1].T_base_flange, &s->T_base_flange, &ang, &len);
            p->path_length += len;
        }
    }
    tram__free(D);
    tram__free(ord);
    return TRAM_OK;
}

/* Weak prior of the rough guess (left out of every reported sigma): 0.5
 * rad per rotation axis, the far working distance per translation axis. */
static void guess_prior(const tram_cell *c, double prior[12])
{
    for (int a = 0; a < 12; a++)
        prior[a] = (a % 6) < 3 ? 1.0 / 0.25 : 1.0 / tram__sq(c->distance[1]);
}

static tram_status plan_run(const tram_cell *c, const tram_records *ex, const tram_solution *sol,
                            const tram_plan_options *o, tram_plan_result *p, tram_error *err)
{
    double H0[144];
    tram_status st = setup_problem(c, ex, sol, p, H0, err);
    if (st != TRAM_OK) return st;
    if (!(p->noise_length > 0) || !(p->noise_angle_rad > 0))
        return tram__fail(err, TRAM_EUNDETERMINED, c->source, 0, 0,
                          "the noise per station is zero: give \"noise\" in the cell file");
    tram__plan_sigma(H0, &p->current);
    tram__plan_cand *cand = NULL;
    size_t n = 0;
    tram__sample_stats ss;
    p->seed = o->seed;
    st = tram__plan_sample(c, &p->X, &p->Z, o->candidates, o->max_samples, o->seed, &cand, &n, &ss);
    if (st != TRAM_OK) return tram__fail(err, st, NULL, 0, 0, "out of memory");
    p->candidates = n;
    p->samples = ss.tries;
    if (n == 0) return refuse(c, &ss, err);
    size_t k = o->stations;
    if (n < k)
        st = tram__fail(err, TRAM_EUNDETERMINED, c->source, 0, 0,
                        "only %zu feasible poses found in %zu samples, fewer than the %zu stations asked "
                        "for: widen the reach or the view, or ask for fewer stations", n, ss.tries, k);
    double ls = (c->distance[0] + c->distance[1]) / 2;
    for (size_t i = 0; i < n && st == TRAM_OK; i++)
        tram__plan_jacobian(&cand[i].P, &cand[i].S, &p->X, &p->Z, p->noise_length, p->noise_angle_rad, ls,
                            cand[i].J);
    size_t *chosen = tram__malloc((k ? k : 1) * sizeof *chosen);
    double *gain = tram__malloc((k ? k : 1) * sizeof *gain), prior[12];
    if (st == TRAM_OK && (!chosen || !gain)) st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    guess_prior(c, prior);
    if (st == TRAM_OK) {
        st = tram__plan_choose(H0, prior, cand, n, k, o->exchange, chosen, gain);
        if (st != TRAM_OK) st = tram__fail(err, st, NULL, 0, 0, "the station choice failed (status %d)", (int)st);
    }
    if (st == TRAM_OK) {
        memcpy(p->info, H0, sizeof p->info);
        for (size_t i = 0; i < k; i++) tram__plan_add_info(p->info, cand[chosen[i]].J);
        tram__plan_sigma(p->info, &p->planned);
        st = tram__plan_logdet(p->info, &p->logdet_planned);
        p->random_draws = o->random_draws;
        if (st == TRAM_OK) st = random_sets(H0, cand, n, k, o->random_draws, o->seed, p);
        if (st == TRAM_OK) st = fill_stations(c, cand, chosen, gain, k, p);
        if (st != TRAM_OK) st = tram__fail(err, st, NULL, 0, 0, "out of memory");
    }
    tram__free(chosen);
    tram__free(gain);
    tram__free(cand);
    return st;
}

tram_status tram_plan(const tram_cell *cell, const tram_records *existing, const tram_solution *sol,
                      const tram_plan_options *opt, tram_plan_result **out, tram_error *err)
{
    *out = NULL;
    tram_plan_options o;
    if (opt) o = *opt;
    else tram_plan_options_init(&o);
    if (o.stations < 1 || o.stations > 60)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "stations %zu: expected 1 to 60", o.stations);
    if (o.candidates < o.stations) o.candidates = o.stations;
    tram_plan_result *p = tram__calloc(1, sizeof *p);
    if (!p) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    tram_status st = plan_run(cell, existing, sol, &o, p, err);
    if (st != TRAM_OK) {
        tram_plan_result_destroy(p);
        return st;
    }
    *out = p;
    return TRAM_OK;
}
