/*
 * plausibility.c - checks that a solve's answer is physically plausible:
 * the absolute gate on the residuals and the mount geometry (docs/solve.md,
 * "Plausibility").
 *
 * Gate.  A working camera, 3D sensor or probe on a working robot leaves
 * station residuals of hundredths to tenths of a degree and tenths of a
 * millimetre to a few millimetres; a station RMS over 1 degree, or over
 * 5 mm plus 1% of the working distance (the median sensor-target
 * distance), is beyond what such a pair produces (common practice) and
 * points at the data: rows not paired station by station, a unit, a
 * convention, or the wrong file.  The limits are options
 * (tram_trust_options; tram solve --max-residual).
 *
 * Geometry.  A wrist sensor (or a target held by the robot) sits within
 * about 0.5 m of the flange, and a fixed sensor (or a fixed target)
 * within about 5 m of the base (common practice).  A mount beyond that is
 * usually the sign of poses logged the other way round: with both poses
 * inverted the data fit exactly as well with X and Z swapped, which puts
 * the "wrist camera" where the target is.  The inverted readings are
 * refitted with the capped quick fit (quickfit.c) and the one that fits as
 * well and puts the parts where expected is named.
 */
#include "solve/plausibility_internal.h"
#include "solve/pairing_internal.h"
#include "solve/pipeline_internal.h"
#include "solve/quickfit_internal.h"
#include "math/stats_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

void tram_trust_options_init(tram_trust_options *t)
{
    memset(t, 0, sizeof *t);
    t->gate = 1;
    t->max_rms_deg = 1.0;
    t->max_rms_m = 0.005;
    t->max_rms_fraction = 0.01;
    t->max_flange_offset_m = 0.5;
    t->max_base_offset_m = 5.0;
    t->pairing_permutations = 30;
    t->pairing_factor = 3.0;
}

static double tnorm(const tram_se3 *T)
{
    return sqrt(tram__sq(T->m[0][3]) + tram__sq(T->m[1][3]) + tram__sq(T->m[2][3]));
}

static double s_dist(const void *ctx, size_t i) { return tnorm(&((const tram_se3 *)ctx)[i]); }

double tram__working_distance(const tram_se3 *S, size_t n)
{
    return n ? tram__median_of(n, s_dist, S) : 0.0;
}

double tram__gate_length(const tram_trust_options *t, tram_length_unit unit, double wd)
{
    double m = tram_unit_length_in_m(unit);
    return t->max_rms_m / (m > 0 ? m : 1.0) + t->max_rms_fraction * wd;
}

/* Working distances outside this range (sensor to target) point to a length
 * unit misread (common practice: close-range probes work from about 1 cm,
 * cell cameras up to a few metres). */
#define WD_PLAUSIBLE_MIN_M 0.01
#define WD_PLAUSIBLE_MAX_M 20.0

tram_status tram__gate(tram_solution *s, const tram_trust_options *t, double wd,
                       double rms_rot_deg, double rms_len, const char *what)
{
    const char *u = tram_unit_length_name(s->length_unit);
    double lim = tram__gate_length(t, s->length_unit, wd);
    s->trust.working_distance = wd;
    s->trust.limit_rot_deg = t->max_rms_deg;
    s->trust.limit_length = lim;
    if (!t->gate) return TRAM_OK;
    int bad_rot = rms_rot_deg > t->max_rms_deg; /* NaN: no rotation residual */
    int bad_len = rms_len > lim;
    if (!bad_rot && !bad_len) return TRAM_OK;
    s->trust.gate_failed = 1;
    char rot[80] = "", rot_lim[40] = "", hint[200] = "";
    if (!isnan(rms_rot_deg)) {
        snprintf(rot, sizeof rot, "%.3g deg and ", rms_rot_deg);
        snprintf(rot_lim, sizeof rot_lim, "%.3g deg and ", t->max_rms_deg);
    }
    double wd_m = wd * tram_unit_length_in_m(s->length_unit);
    if (wd_m > 0 && (wd_m < WD_PLAUSIBLE_MIN_M || wd_m > WD_PLAUSIBLE_MAX_M))
        snprintf(hint, sizeof hint,
                 ". A working distance of %.4g %s is itself implausible for a sensor looking at "
                 "a target: the sensor's lengths are most likely in another unit than declared",
                 wd, u);
    return tram__diag_add(
        s, "implausible-residuals", TRAM_SEVERITY_WARNING,
        "the %s residuals (RMS %s%.4g %s) are beyond what a working sensor and robot produce "
        "(at most %s%.4g %s: %.3g m plus %.3g%% of the %.4g %s working distance; "
        "common practice, set with --max-residual). Likely mistakes: robot and sensor rows not "
        "paired station by station (shifted, sorted differently, a row missing), the sensor's "
        "length unit, a pose or angle convention, or the wrong file%s",
        what, rot, rms_len, u, rot_lim, lim, u, t->max_rms_m, 100 * t->max_rms_fraction,
        wd, u, hint);
}

tram_status tram__pairing_report(tram_solution *s, size_t perms, unsigned long long seed,
                                 double ratio_rot, double ratio_trans, int failed, double factor)
{
    s->trust.pairing_done = perms > 0;
    s->trust.pairing_permutations = perms;
    s->trust.pairing_seed = seed;
    s->trust.pairing_ratio_rot = ratio_rot;
    s->trust.pairing_ratio_trans = ratio_trans;
    s->trust.pairing_failed = failed;
    if (!failed) return TRAM_OK;
    char rr[60] = "";
    if (isfinite(ratio_rot)) snprintf(rr, sizeof rr, "%.2f times in rotation and ", ratio_rot);
    return tram__diag_add(
        s, "pairing-not-determined", TRAM_SEVERITY_WARNING,
        "the data cannot tell the mount: with the robot and sensor rows paired at random (%zu "
        "pairings, seed %llu) the best random pairing fits only %s%.2f times in translation "
        "worse than the file's pairing (at least %.3g times is needed). The sensor readings do "
        "not follow the robot poses: check that each row pairs the robot pose with the sensor "
        "reading taken at it (no shifted or re-sorted rows), and that both come from the same "
        "session",
        perms, seed, rr, ratio_trans, factor);
}

/* One inverted-pose reading: its fit and where it puts the two parts. */
typedef struct reading {
    int inv_robot, inv_sensor;
    double med_rot, med_tr, flange_d, base_d;
    int ok;
} reading;

static tram_status fit_inverted(const tram_records *src, tram_setup setup, reading *g)
{
    g->ok = 0;
    tram_records *r = tram_records_clone(src);
    if (!r) return TRAM_ENOMEM;
    tram_block_convention c[TRAM_BLOCK_COUNT];
    memcpy(c, src->conv, sizeof c);
    if (g->inv_robot) c[TRAM_BLOCK_ROBOT].inverted = !c[TRAM_BLOCK_ROBOT].inverted;
    if (g->inv_sensor) c[TRAM_BLOCK_SENSOR].inverted = !c[TRAM_BLOCK_SENSOR].inverted;
    tram_error e;
    tram_status st = TRAM_OK;
    if (tram_records_rebuild(r, c, &e) == TRAM_OK) {
        tram_se3 *P, *S, X, Z;
        st = tram__station_poses(r, setup, &P, &S);
        if (st == TRAM_OK) {
            tram_status q = tram__capped_fit(P, S, r->count, TRAM_QUICKFIT_STEPS, &g->med_rot,
                                             &g->med_tr, &X, &Z);
            if (q == TRAM_ENOMEM) st = q;
            if (q == TRAM_OK) {
                int eih = setup == TRAM_SETUP_EYE_IN_HAND;
                g->flange_d = tnorm(eih ? &X : &Z);
                g->base_d = tnorm(eih ? &Z : &X);
                g->ok = 1;
            }
            tram__free(P);
            tram__free(S);
        }
    }
    tram_records_destroy(r);
    return st;
}

static const char *fix_of(const tram_records *r, const reading *g, char *buf, size_t cap)
{
    const tram_block_convention *c = r->conv;
    const char *rp = c[0].inverted ? "flange-in-base" : "base-in-flange";
    const char *sp = c[1].inverted ? "target-in-sensor" : "sensor-in-target";
    if (g->inv_robot && g->inv_sensor)
        snprintf(buf, cap, "both poses logged the other way round: add '# robot-pose: %s' and "
                 "'# sensor-pose: %s'", rp, sp);
    else if (g->inv_robot)
        snprintf(buf, cap, "the robot poses logged the other way round: add '# robot-pose: %s'",
                 rp);
    else
        snprintf(buf, cap, "the sensor poses logged the other way round: add '# sensor-pose: %s'",
                 sp);
    return buf;
}

tram_status tram__check_geometry(const tram_records *r, tram_setup setup, tram_solution *s,
                                 const tram_trust_options *t)
{
    if (!s->solved || !t->gate) return TRAM_OK;
    int eih = setup == TRAM_SETUP_EYE_IN_HAND;
    double m = tram_unit_length_in_m(r->length_unit);
    if (!(m > 0)) m = 1.0;
    double lim_f = t->max_flange_offset_m / m, lim_b = t->max_base_offset_m / m;
    double fd = tnorm(eih ? &s->X : &s->Z), bd = tnorm(eih ? &s->Z : &s->X);
    int bad_f = fd > lim_f, bad_b = bd > lim_b;
    if (!bad_f && !bad_b) return TRAM_OK;
    const char *u = tram_unit_length_name(r->length_unit);
    const char *on_flange = eih ? "the wrist sensor" : "the target held by the robot";
    const char *in_cell = eih ? "the fixed target" : "the fixed sensor";
    char what[300];
    if (bad_f)
        snprintf(what, sizeof what, "%s sits %.4g %s from the flange (more than %.3g m is "
                 "unusual; common practice, set with --max-offset)",
                 on_flange, fd, u, t->max_flange_offset_m);
    else
        snprintf(what, sizeof what, "%s sits %.4g %s from the robot base (more than %.3g m is "
                 "unusual; common practice, set with --max-offset)",
                 in_cell, bd, u, t->max_base_offset_m);
    /* The inverted readings that fit as well and put both parts in range. */
    int robot = r->has_block[TRAM_BLOCK_ROBOT] && !r->robot_from_chain;
    int sensor = r->has_block[TRAM_BLOCK_SENSOR] && !r->sensor_from_points;
    reading g[3] = {{1, 0, 0, 0, 0, 0, 0}, {0, 1, 0, 0, 0, 0, 0}, {1, 1, 0, 0, 0, 0, 0}};
    reading base = {0, 0, 0, 0, 0, 0, 0};
    tram_status st = fit_inverted(r, setup, &base);
    char hint[420] = "";
    for (int k = 0; k < 3 && st == TRAM_OK && base.ok; k++) {
        if ((g[k].inv_robot && !robot) || (g[k].inv_sensor && !sensor)) continue;
        st = fit_inverted(r, setup, &g[k]);
        if (st != TRAM_OK || !g[k].ok) continue;
        int as_well = g[k].med_rot <= 2.0 * base.med_rot + 1e-9 &&
                      g[k].med_tr <= 2.0 * base.med_tr + 1e-9 * (1 + base.med_tr);
        if (as_well && g[k].flange_d <= lim_f && g[k].base_d <= lim_b && !hint[0]) {
            char fix[200];
            snprintf(hint, sizeof hint,
                     ". The data fit as well if %s: then %s would sit %.4g %s from the flange "
                     "and %s %.4g %s from the base",
                     fix_of(r, &g[k], fix, sizeof fix), eih ? "the sensor" : "the target",
                     g[k].flange_d, u, eih ? "the target" : "the sensor", g[k].base_d, u);
        }
    }
    if (st != TRAM_OK) return st;
    return tram__diag_add(s, "implausible-mount", TRAM_SEVERITY_WARNING,
                          "%s%s. Check the pose directions ('# robot-pose:', '# sensor-pose:') "
                          "and the setup",
                          what, hint);
}

tram_status tram__trust_checks(const tram_records *r, tram_setup setup, const tram_se3 *P,
                               const tram_se3 *S, size_t n, const tram_trust_options *t,
                               unsigned long long seed, tram_solution *s)
{
    if (!s->solved) return TRAM_OK;
    double wd = tram__working_distance(S, n);
    tram_status st = tram__gate(s, t, wd, s->rot_deg.rms, s->trans.rms, "station");
    if (st == TRAM_OK && t->pairing_permutations > 0) {
        tram__pairing_result pr;
        st = tram__pairing_test_poses(P, S, n, t->pairing_permutations, seed, t->pairing_factor,
                                      &pr);
        if (st == TRAM_OK && pr.permutations > 0)
            st = tram__pairing_report(s, pr.permutations, seed, pr.ratio_rot, pr.ratio_trans,
                                      pr.failed, t->pairing_factor);
    }
    if (st == TRAM_OK) st = tram__check_geometry(r, setup, s, t);
    return st;
}
