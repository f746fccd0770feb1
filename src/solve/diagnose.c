/*
 * diagnose.c - checks that refuse to guess: observability of the hand-eye
 * problem, the convention doctor, and the plausibility of the length unit.
 *
 * Observability.  With A the relative robot motions of station pairs, the
 * rotation of X is determined only when at least two rotation axes of A are
 * not parallel, and the translation of X along a common axis is not
 * determined at all when they are (Tsai & Lenz, IEEE T-RA 5(3), 1989;
 * Shiu & Ahmad, IEEE T-RA 5(1), 1989).  The spread of the axes is measured
 * by the scatter M = sum a a^T of the unit axes of motions above 1 degree:
 * with eigenvalues l1 >= l2 >= l3, the equivalent angle 2 atan(sqrt(l2/l1))
 * is the angle between two equally weighted axes that give the same ratio.
 *
 * Convention doctor.  The data are re-read under each usual mistake - robot
 * or sensor poses inverted, the sensor's lengths off by 10, 25.4 or 1000,
 * quaternion columns in x,y,z,w order, degrees read as radians (or the
 * reverse), every other Euler convention - and under the common mistakes
 * in combination (inversions and quaternion orders of both blocks, a
 * length factor with the quaternion orders), each scored by the capped
 * quick fit (quickfit.c).  A reading whose residual score (median rotation
 * and translation residuals, each relative to the best reading's) is five
 * times lower than the declared reading's - or, when the declared reading
 * fails the plausibility gate (plausibility.c), one that passes it and is
 * twice lower - is reported with its fix; the declared reading is kept.
 *
 * Weak motion.  Below 20 deg of rotation between any two stations (common
 * practice) the translation is weakly determined: the rotation noise
 * reaches it amplified by 1 / (2 sin(theta / 2)).
 */
#include "tram/rotation.h"
#include "solve/handeye_internal.h"
#include "math/linalg_internal.h"
#include "solve/diagnose_internal.h"
#include "solve/pipeline_internal.h"
#include "solve/quickfit_internal.h"
#include "solve/plausibility_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define RAD2DEG (180.0 / TRAM_PI)
/* Below this largest rotation between stations the translation is weakly
 * determined (common practice; docs/solve.md, "Weak motion"). */
#define WEAK_MOTION_DEG 20.0

int tram__observability(const tram_se3 *P, size_t n, tram_setup setup, tram_solution *s)
{
    const char *frame = setup == TRAM_SETUP_EYE_TO_HAND ? "base" : "flange";
    if (n < 3) {
        tram__diag_add(s, "too-few-stations", TRAM_SEVERITY_ERROR,
                       "%zu station(s): at least 3 are needed (two motions with different "
                       "rotation axes); add stations that rotate the flange about different "
                       "axes",
                       n);
        return 1;
    }
    tram_pair *pairs;
    size_t np;
    if (tram_handeye_pairs(n, TRAM_PAIRS_AUTO, &pairs, &np) != TRAM_OK) return 1;
    double M[9], mn, mx;
    size_t used;
    tram__motion_axes(P, pairs, np, 1.0 / RAD2DEG, M, &used, &mn, &mx);
    tram__free(pairs);
    s->motion_min_deg = mn * RAD2DEG;
    s->motion_max_deg = mx * RAD2DEG;
    double ev[3], V[9];
    double spread = 0.0, axis[3] = {0, 0, 1};
    if (used >= 1 && tram__symeig(3, M, ev, V) == TRAM_OK && ev[2] > 0) {
        spread = 2.0 * atan(sqrt(fmax(ev[1], 0.0) / ev[2])) * RAD2DEG;
        for (int i = 0; i < 3; i++) axis[i] = V[i * 3 + 2];
    }
    s->axis_spread_deg = spread;
    if (mx * RAD2DEG < 1.0) {
        tram__diag_add(s, "rotations-too-small", TRAM_SEVERITY_ERROR,
                       "the largest rotation between any two stations is %.3g deg: the sensor's "
                       "rotation and position cannot be determined; add stations that rotate the "
                       "flange by 20 deg or more about at least two different axes (common "
                       "practice)",
                       mx * RAD2DEG);
        return 1;
    }
    if (spread < 2.0) {
        tram__diag_add(s, "parallel-rotation-axes", TRAM_SEVERITY_ERROR,
                       "all rotations between stations are about (nearly) one axis, "
                       "(%.3f, %.3f, %.3f) in the %s frame (axis spread %.2f deg): the sensor's "
                       "translation along this axis cannot be determined (planar or SCARA-like "
                       "motion); add stations that tilt the flange about a different axis by 20 "
                       "deg or more (common practice)",
                       axis[0], axis[1], axis[2], frame, spread);
        return 1;
    }
    if (spread < 5.0 || mx * RAD2DEG < 5.0)
        tram__diag_add(s, "weak-motion", TRAM_SEVERITY_WARNING,
                       "the motion only weakly determines the answer (largest rotation %.2f deg, "
                       "axis spread %.2f deg); Tsai & Lenz (1989) advise large rotations about "
                       "well-spread axes: add stations that tilt the flange further",
                       mx * RAD2DEG, spread);
    else if (mx * RAD2DEG < WEAK_MOTION_DEG)
        /* The translation of X comes from (R_A - I) t_X = R_X t_B - t_A:
         * |R_A - I| = 2 sin(theta / 2), so the rotation noise times the
         * working distance reaches t_X amplified by 1 / (2 sin(theta / 2)). */
        tram__diag_add(s, "weak-motion", TRAM_SEVERITY_WARNING,
                       "the largest rotation between any two stations is %.2f deg: too small for "
                       "the noise to determine the sensor's position well (the rotation noise "
                       "reaches it amplified about %.1f times, and the stated uncertainty is "
                       "then too optimistic); add stations that tilt the flange by %.0f deg or "
                       "more from the others about at least two different axes, e.g. +-%.0f deg "
                       "about the %s frame's x and y axes (common practice)",
                       mx * RAD2DEG, 1.0 / (2.0 * sin(0.5 * mx)), WEAK_MOTION_DEG,
                       WEAK_MOTION_DEG, frame);
    return 0;
}

tram_status tram__check_units(const tram_records *r, tram_solution *s)
{
    double mx = 0;
    for (size_t i = 0; i < r->count; i++) {
        const tram_se3 *T = &r->stations[i].T_base_flange;
        double d = sqrt(tram__sq(T->m[0][3]) + tram__sq(T->m[1][3]) + tram__sq(T->m[2][3]));
        if (d > mx) mx = d;
    }
    double m = mx * tram_unit_length_in_m(r->length_unit);
    const char *u = tram_unit_length_name(r->length_unit);
    if (m > 10.0)
        return tram__diag_add(s, "length-unit-implausible", TRAM_SEVERITY_WARNING,
                              "the flange is up to %.4g %s (%.3g m) from the robot base: few "
                              "robots reach beyond 4 m (common practice); check '# length-unit: "
                              "%s' - are the numbers in mm?",
                              mx, u, m, u);
    if (m > 0 && m < 0.005)
        return tram__diag_add(s, "length-unit-implausible", TRAM_SEVERITY_WARNING,
                              "the flange stays within %.4g %s (%.3g m) of the robot base: check "
                              "'# length-unit: %s' - are the numbers in m?",
                              mx, u, m, u);
    return TRAM_OK;
}

/* One reading of the data: a change of conventions and how to write it. */
typedef struct hypothesis {
    tram_block_convention conv[TRAM_BLOCK_COUNT];
    char code[40];
    char fix[360];
    double med_rot, med_tr;
    double mount_len;  /* length of the mount transform this reading implies */
    int ok;
} hypothesis;

static const char *const bw[2] = {"robot", "sensor"};

static void add_hyp(hypothesis *h, size_t *nh, size_t cap, const tram_block_convention *base,
                    const char *code, const char *fix)
{
    if (*nh >= cap) return;
    hypothesis *x = &h[(*nh)++];
    memset(x, 0, sizeof *x);
    memcpy(x->conv, base, sizeof x->conv);
    snprintf(x->code, sizeof x->code, "%s", code);
    snprintf(x->fix, sizeof x->fix, "%s", fix);
}

/* The unit u with factor(u -> file unit) = s * current sensor scale. */
static const char *unit_for_scale(double want, tram_length_unit file_unit)
{
    static const tram_length_unit all[] = {TRAM_LENGTH_MM, TRAM_LENGTH_CM, TRAM_LENGTH_M,
                                           TRAM_LENGTH_IN};
    for (size_t i = 0; i < 4; i++)
        if (fabs(tram_unit_length_factor(all[i], file_unit) / want - 1.0) < 1e-9)
            return tram_unit_length_name(all[i]);
    return NULL;
}

/* The sensor scale factors tried, and how to write each (fix text). */
static const double scales[] = {1000.0, 0.001, 25.4, 1.0 / 25.4, 10.0, 0.1};

static void scale_fix(const tram_records *r, double k, char *buf, size_t cap)
{
    const char *u = unit_for_scale(r->conv[1].length_scale * k, r->length_unit);
    if (u)
        snprintf(buf, cap, "add '# sensor-length-unit: %s' (lengths %g times off)", u, k);
    else
        snprintf(buf, cap, "multiply the sensor_x, _y, _z columns by %g", k);
}

static void order_fix(int b, char *buf, size_t cap)
{
    snprintf(buf, cap, "the %s quaternion columns hold x, y, z, w: rename %s_qw,%s_qx,%s_qy,%s_qz "
             "to %s_qx,%s_qy,%s_qz,%s_qw", bw[b], bw[b], bw[b], bw[b], bw[b], bw[b], bw[b], bw[b],
             bw[b]);
}

/* Mistakes in combination, both blocks at once (docs/solve.md): every mix
 * of robot / sensor poses inverted and robot / sensor quaternions
 * scalar-last with at least two mistakes, and each sensor length scale
 * with each mix of quaternion orders. */
static void add_combinations(const tram_records *r, hypothesis *h, size_t *nh, size_t cap,
                             int robot, int sensor)
{
    const tram_block_convention *c = r->conv;
    int ordok[2] = {robot && c[0].rep == TRAM_REP_QUAT, sensor && c[1].rep == TRAM_REP_QUAT};
    for (int mask = 1; mask < 16; mask++) {
        int ri = mask & 1, si = (mask >> 1) & 1, ro = (mask >> 2) & 1, so = (mask >> 3) & 1;
        if ((ri && !robot) || (si && !sensor) || (ro && !ordok[0]) || (so && !ordok[1])) continue;
        for (size_t k = 0; k <= sizeof scales / sizeof scales[0]; k++) {
            int sc = k < sizeof scales / sizeof scales[0];
            if (sc && (!sensor || ri || si)) continue; /* units go with the orders only */
            int count = ri + si + ro + so + sc;
            if (count < 2 || (ri && si && count == 2)) continue; /* singles are made above */
            tram_block_convention t[2];
            memcpy(t, c, sizeof t);
            char fix[360] = "several convention mistakes at once:", part[200];
            size_t len = strlen(fix);
            if (ri) {
                t[0].inverted = !t[0].inverted;
                len += (size_t)snprintf(fix + len, sizeof fix - len, " add '# robot-pose: %s';",
                                        c[0].inverted ? "flange-in-base" : "base-in-flange");
            }
            if (si && len < sizeof fix) {
                t[1].inverted = !t[1].inverted;
                len += (size_t)snprintf(fix + len, sizeof fix - len, " add '# sensor-pose: %s';",
                                        c[1].inverted ? "target-in-sensor" : "sensor-in-target");
            }
            for (int b = 0; b < 2; b++)
                if ((b ? so : ro) && len < sizeof fix) {
                    t[b].quat_xyzw = !t[b].quat_xyzw;
                    order_fix(b, part, sizeof part);
                    len += (size_t)snprintf(fix + len, sizeof fix - len, " %s;", part);
                }
            if (sc && len < sizeof fix) {
                t[1].length_scale = c[1].length_scale * scales[k];
                scale_fix(r, scales[k], part, sizeof part);
                len += (size_t)snprintf(fix + len, sizeof fix - len, " %s;", part);
            }
            if (len > 0 && len < sizeof fix) fix[len - 1] = '\0'; /* the last ';' */
            add_hyp(h, nh, cap, t, "conventions-combined", fix);
        }
    }
}

static size_t make_hypotheses(const tram_records *r, tram_setup setup, hypothesis *h, size_t cap)
{
    size_t nh = 0;
    const tram_block_convention *c = r->conv;
    tram_block_convention t[2];
    char fix[360];
    const char *other_setup = setup == TRAM_SETUP_EYE_IN_HAND ? "eye-to-hand" : "eye-in-hand";
    /* inverted poses */
    memcpy(t, c, sizeof t);
    t[0].inverted = !t[0].inverted;
    snprintf(fix, sizeof fix,
             "robot poses look inverted: if they are %s, add '# robot-pose: %s'; the same data "
             "also fit if the setup is %s rather than %s",
             c[0].inverted ? "T_base_flange" : "T_flange_base",
             c[0].inverted ? "flange-in-base" : "base-in-flange", other_setup,
             tram_setup_name(setup));
    add_hyp(h, &nh, cap, t, "robot-pose-inverted", fix);
    int sensor = r->has_block[TRAM_BLOCK_SENSOR] && !r->sensor_from_points;
    int robot = r->has_block[TRAM_BLOCK_ROBOT] && !r->robot_from_chain;
    if (!robot) nh = 0; /* the robot-pose hypothesis above does not apply */
    memcpy(t, c, sizeof t);
    t[1].inverted = !t[1].inverted;
    snprintf(fix, sizeof fix, "sensor poses look inverted: add '# sensor-pose: %s'",
             c[1].inverted ? "target-in-sensor" : "sensor-in-target");
    if (sensor) add_hyp(h, &nh, cap, t, "sensor-pose-inverted", fix);
    memcpy(t, c, sizeof t);
    t[0].inverted = !t[0].inverted;
    t[1].inverted = !t[1].inverted;
    snprintf(fix, sizeof fix,
             "robot and sensor poses both look inverted: add '# robot-pose: %s' and '# "
             "sensor-pose: %s'",
             c[0].inverted ? "flange-in-base" : "base-in-flange",
             c[1].inverted ? "target-in-sensor" : "sensor-in-target");
    if (sensor && robot) add_hyp(h, &nh, cap, t, "both-poses-inverted", fix);
    /* sensor lengths in another unit than the robot's */
    for (size_t k = 0; sensor && k < sizeof scales / sizeof scales[0]; k++) {
        memcpy(t, c, sizeof t);
        t[1].length_scale = c[1].length_scale * scales[k];
        const char *u = unit_for_scale(t[1].length_scale, r->length_unit);
        if (u)
            snprintf(fix, sizeof fix,
                     "the sensor's lengths look %g times off from the robot's: if the sensor "
                     "reports in %s, add '# sensor-length-unit: %s'",
                     scales[k], u, u);
        else
            snprintf(fix, sizeof fix,
                     "the sensor's lengths look %g times off from the robot's: multiply the "
                     "sensor_x, _y, _z columns by %g",
                     scales[k], scales[k]);
        add_hyp(h, &nh, cap, t, "sensor-length-scale", fix);
    }
    for (int b = 0; b < 2; b++) {
        if (!(b == 0 ? robot : sensor)) continue;
        if (c[b].rep == TRAM_REP_QUAT) {
            memcpy(t, c, sizeof t);
            t[b].quat_xyzw = !t[b].quat_xyzw;
            snprintf(fix, sizeof fix,
                     "the %s quaternion columns look scalar-last (x, y, z, w): rename the "
                     "header's %s_qw,%s_qx,%s_qy,%s_qz to %s_qx,%s_qy,%s_qz,%s_qw",
                     bw[b], bw[b], bw[b], bw[b], bw[b], bw[b], bw[b], bw[b], bw[b]);
            add_hyp(h, &nh, cap, t, "quaternion-order", fix);
        }
        if (c[b].rep == TRAM_REP_ROTVEC || c[b].rep == TRAM_REP_EULER) {
            memcpy(t, c, sizeof t);
            int deg = c[b].angle_unit == TRAM_ANGLE_DEG;
            t[b].angle_unit = deg ? TRAM_ANGLE_RAD : TRAM_ANGLE_DEG;
            snprintf(fix, sizeof fix,
                     "the %s angles look like %s, not %s: add '# %s-angle-unit: %s'", bw[b],
                     deg ? "radians" : "degrees", deg ? "degrees" : "radians", bw[b],
                     deg ? "rad" : "deg");
            add_hyp(h, &nh, cap, t, "angle-unit", fix);
            /* A camera in m and rad beside a robot in mm and deg: both sensor
             * units at once, so that one run names both directives. */
            for (size_t k = 0; b == 1 && k < sizeof scales / sizeof scales[0]; k++) {
                char part[200];
                memcpy(t, c, sizeof t);
                t[1].angle_unit = deg ? TRAM_ANGLE_RAD : TRAM_ANGLE_DEG;
                scale_fix(r, scales[k], part, sizeof part);
                t[1].length_scale = c[1].length_scale * scales[k];
                snprintf(fix, sizeof fix,
                         "the sensor's units both differ from the file's: %s, and add '# "
                         "sensor-angle-unit: %s' (its angles look like %s)",
                         part, deg ? "rad" : "deg", deg ? "radians" : "degrees");
                add_hyp(h, &nh, cap, t, "sensor-units", fix);
            }
        }
        if (c[b].rep == TRAM_REP_EULER) {
            for (int e = 0; e < TRAM_EULER_COUNT; e++) {
                if (e == (int)c[b].euler) continue;
                memcpy(t, c, sizeof t);
                t[b].euler = (tram_euler_seq)e;
                snprintf(fix, sizeof fix,
                         "the %s Euler angles fit as %s, not %s: set '# %s-euler: %s'", bw[b],
                         tram_euler_name((tram_euler_seq)e), tram_euler_name(c[b].euler), bw[b],
                         tram_euler_name((tram_euler_seq)e));
                add_hyp(h, &nh, cap, t, "euler-convention", fix);
            }
        }
    }
    add_combinations(r, h, &nh, cap, robot, sensor);
    return nh;
}

size_t tram__convention_readings(const tram_records *r, tram_setup setup, tram__reading *out,
                                 size_t cap)
{
    hypothesis *h = tram__malloc((cap ? cap : 1) * sizeof *h);
    if (!h) return 0;
    size_t nh = make_hypotheses(r, setup, h, cap);
    for (size_t k = 0; k < nh; k++) {
        memcpy(out[k].conv, h[k].conv, sizeof out[k].conv);
        memcpy(out[k].code, h[k].code, sizeof out[k].code);
        memcpy(out[k].fix, h[k].fix, sizeof out[k].fix);
    }
    tram__free(h);
    return nh;
}

/* The quick pose fit of one reading (the default fit of the doctor). */
static tram_status pose_fit(const tram_records *r, tram_setup setup, const void *ctx,
                            double *med_rot, double *med_tr, double *mount_len)
{
    (void)ctx;
    tram_se3 *P, *S;
    tram_status st = tram__station_poses(r, setup, &P, &S);
    if (st != TRAM_OK) return st;
    tram_se3 X, Z;
    st = tram__capped_fit(P, S, r->count, TRAM_QUICKFIT_STEPS, med_rot, med_tr, &X, &Z);
    if (st == TRAM_OK) {
        const tram_se3 *M = setup == TRAM_SETUP_EYE_TO_HAND ? &Z : &X;
        *mount_len = sqrt(tram__sq(M->m[0][3]) + tram__sq(M->m[1][3]) + tram__sq(M->m[2][3]));
    }
    tram__free(P);
    tram__free(S);
    return st;
}

/* Fit of a record set under conv: rebuilt (and subsampled to max_n
 * stations when max_n > 0), then fitted; *ok says whether the reading
 * could be fitted at all. */
static tram_status fit_reading(const tram_records *src, const tram_block_convention *conv,
                               tram_setup setup, size_t max_n, tram__fit_fn fit, const void *ctx,
                               double *med_rot, double *med_tr, double *mount_len, int *ok)
{
    *ok = 0;
    tram_records *r = tram_records_clone(src);
    if (!r) return TRAM_ENOMEM;
    if (max_n && r->count > max_n) {
        size_t step = r->count / max_n;
        for (size_t i = 0; i < max_n; i++) r->stations[i] = src->stations[i * step];
        r->count = max_n;
    }
    tram_error e;
    tram_status st = TRAM_OK;
    if (tram_records_rebuild(r, conv, &e) == TRAM_OK) {
        tram_status q = fit(r, setup, ctx, med_rot, med_tr, mount_len);
        if (q == TRAM_OK) *ok = 1;
        else if (q == TRAM_ENOMEM) st = q;
    }
    tram_records_destroy(r);
    return st;
}

/* Does a reading's fit pass the plausibility gate (its medians against the
 * RMS limits; the working distance scaled with the reading's lengths)? */
static int reading_plausible(const tram_trust_options *t, tram_length_unit unit, double wd,
                             double med_rot, double med_tr)
{
    return med_rot * RAD2DEG <= t->max_rms_deg && med_tr <= tram__gate_length(t, unit, wd);
}

tram_status tram__check_conventions_with(const tram_records *r, tram_setup setup, tram_solution *s,
                                         tram__fit_fn fit, const void *ctx, size_t max_n,
                                         const tram_trust_options *t, double wd)
{
    enum { CAP = 120 };
    hypothesis *h = tram__malloc(CAP * sizeof *h);
    if (!h) return TRAM_ENOMEM;
    double base_rot, base_tr, base_len;
    int base_ok;
    tram_status st = fit_reading(r, r->conv, setup, max_n, fit, ctx, &base_rot, &base_tr,
                                 &base_len, &base_ok);
    if (st != TRAM_OK || !base_ok) {
        tram__free(h);
        return st;
    }
    size_t nh = make_hypotheses(r, setup, h, CAP);
    double best_rot = base_rot, best_tr = base_tr;
    for (size_t k = 0; k < nh && st == TRAM_OK; k++) {
        st = fit_reading(r, h[k].conv, setup, max_n, fit, ctx, &h[k].med_rot, &h[k].med_tr,
                         &h[k].mount_len, &h[k].ok);
        if (h[k].ok) {
            if (h[k].med_rot < best_rot) best_rot = h[k].med_rot;
            if (h[k].med_tr < best_tr) best_tr = h[k].med_tr;
        }
    }
    if (st != TRAM_OK) {
        tram__free(h);
        return st;
    }
    /* Floors so that noise-free data do not compare rounding errors. */
    double lfloor = 1e-6 / tram_unit_length_in_m(r->length_unit);
    double ref_rot = fmax(best_rot, 1e-4 / RAD2DEG), ref_tr = fmax(best_tr, lfloor);
    double base_score = base_rot / ref_rot + base_tr / ref_tr;
    size_t best = nh;
    double best_score = INFINITY;
    for (size_t k = 0; k < nh; k++) {
        if (!h[k].ok) continue;
        double sc = h[k].med_rot / ref_rot + h[k].med_tr / ref_tr;
        if (sc < best_score) {
            best_score = sc;
            best = k;
        }
    }
    /* Decision rule (docs/solve.md): a reading that fits five times better
     * than the declared one; or, when the declared reading fails the
     * plausibility gate, a reading that passes it and fits twice better. */
    int far_better = best < nh && best_score * 5.0 < base_score;
    int rescues = 0;
    if (best < nh && t && t->gate && !reading_plausible(t, r->length_unit, wd, base_rot, base_tr)) {
        double f = h[best].conv[1].length_scale / r->conv[1].length_scale;
        rescues = best_score * 2.0 < base_score &&
                  reading_plausible(t, r->length_unit, wd * f, h[best].med_rot, h[best].med_tr);
    }
    if ((far_better || rescues) && (base_rot > 1e-3 / RAD2DEG || base_tr > 10 * lfloor)) {
        /* Readings that fit about as well cannot be told apart by the data
         * (e.g. robot inverted vs sensor inverted with X and Z swapped).
         * Name them all, the one with the shorter mount first: a sensor or
         * target usually sits near the flange. */
        size_t tie[4], nt = 0;
        for (size_t k = 0; k < nh && nt < 4; k++) {
            if (!h[k].ok) continue;
            double sc = h[k].med_rot / ref_rot + h[k].med_tr / ref_tr;
            if (sc <= 1.5 * best_score + 1e-12) tie[nt++] = k;
        }
        for (size_t a = 0; a < nt; a++)
            for (size_t b = a + 1; b < nt; b++)
                if (h[tie[b]].mount_len < h[tie[a]].mount_len) {
                    size_t tmp = tie[a];
                    tie[a] = tie[b];
                    tie[b] = tmp;
                }
        const char *u = tram_unit_length_name(r->length_unit);
        const char *mount = setup == TRAM_SETUP_EYE_TO_HAND ? "the target" : "the sensor";
        char msg[700];
        const hypothesis *f = &h[tie[0]];
        int len;
        if (base_rot == 0.0 && f->med_rot == 0.0) /* point fits: no rotation residual */
            len = snprintf(msg, sizeof msg,
                           "%s (%s would then sit %.4g %s from the flange). As declared, the "
                           "median point residual is %.3g %s; read that way it would be %.3g %s",
                           f->fix, mount, f->mount_len, u, base_tr, u, f->med_tr, u);
        else
            len = snprintf(msg, sizeof msg,
                           "%s (%s would then sit %.4g %s from the flange). As declared, the "
                           "median station residual is %.3g deg and %.3g %s; read that way it "
                           "would be %.3g deg and %.3g %s",
                           f->fix, mount, f->mount_len, u, base_rot * RAD2DEG, base_tr, u,
                           f->med_rot * RAD2DEG, f->med_tr, u);
        for (size_t a = 1; a < nt && len > 0 && (size_t)len < sizeof msg; a++)
            len += snprintf(msg + len, sizeof msg - (size_t)len,
                            ". The data fit as well if %s (%s %.4g %s from the flange)",
                            h[tie[a]].fix, mount, h[tie[a]].mount_len, u);
        if (len > 0 && (size_t)len < sizeof msg)
            snprintf(msg + len, sizeof msg - (size_t)len,
                     ". The result uses the file as declared and must not be used until this is "
                     "resolved");
        st = tram__diag_add(s, f->code, TRAM_SEVERITY_WARNING, "%s", msg);
    }
    tram__free(h);
    return st;
}

tram_status tram__check_conventions(const tram_records *r, tram_setup setup, tram_solution *s,
                                    const tram_trust_options *t)
{
    double wd = 0;
    tram_se3 *P, *S;
    if (tram__station_poses(r, setup, &P, &S) != TRAM_OK) return TRAM_ENOMEM;
    wd = tram__working_distance(S, r->count);
    tram__free(P);
    tram__free(S);
    return tram__check_conventions_with(r, setup, s, pose_fit, NULL, 60, t, wd);
}
