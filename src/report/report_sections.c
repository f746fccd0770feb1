/*
 * report_sections.c - the contents of the calibration report, section by
 * section: summary and safety, setup, each transform (matrix, translation,
 * quaternion, rotation vector, Euler angles in the named convention,
 * 1-sigma and 95% intervals), stations and residuals with the pictures,
 * observability and diagnostics, input files with SHA-256 hashes, and
 * the sign-off lines.  The 95% interval is the solve's (Student t) when the
 * calibration file holds it, else value +- 1.96 sigma per axis
 * (normal approximation, for files without intervals).  Rotation
 * uncertainty is about the transform's own axes (small rotation vector),
 * and per Euler angle by first-order propagation (tram_euler_covariance),
 * not defined near gimbal lock.  Nothing here says or implies that the result is
 * verified: tram cannot know.
 */
#include "report/report_sections_internal.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#define RAD2DEG (180.0 / TRAM_PI)
#define BODY 9.0
#define MONO 8.2

const char *tram__report_status(const tram_calibration *cal)
{
    return cal->trustworthy
               ? "consistent with the data; NOT verified on the cell"
               : "NOT trustworthy: the data did not determine a trustworthy answer (see the "
                 "diagnostics); NOT verified on the cell. Do not use it to move the robot.";
}

static const char safety_text[] =
    "This calibration is computed from the recorded data only. At best it is consistent with "
    "the data; it is NOT verified on the cell, and nothing in this record makes it safe to "
    "use. A wrong calibration can drive the robot into people or equipment. Before any motion "
    "that uses it: verify it on the cell at reduced speed, keep clear of the working envelope, "
    "and follow the applicable robot-safety standards and local codes.";

static void para(tram__doc *d, const char *fmt, ...) TRAM_PRINTF(2, 3);
static void para(tram__doc *d, const char *fmt, ...)
{
    char buf[2048];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    tram__doc_para(d, BODY, 0, 0, buf);
}

static void mono(tram__doc *d, const char *fmt, ...) TRAM_PRINTF(2, 3);
static void mono(tram__doc *d, const char *fmt, ...)
{
    char buf[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    tram__doc_mono(d, MONO, buf);
}

static const char *unit(const tram__report_ctx *c) { return tram_unit_length_name(c->cal->length_unit); }

/* ---- summary --------------------------------------------------------- */

static void summary(tram__doc *d, const tram__report_ctx *c)
{
    const tram_calibration *cal = c->cal;
    tram__doc_heading(d, 0, "Hand-eye calibration record", 40);
    para(d, "Calibration file: %s", cal->source);
    para(d, "Setup: %s. Solved from %zu stations (%zu flagged as outliers and excluded). "
            "Lengths in %s, angles in degrees.",
         tram_setup_name(cal->setup), cal->stations, cal->outliers, unit(c));
    para(d, "Report made by tram %s on %s (UTC); the calibration file was written by %s.",
         TRAM_VERSION_STRING, c->opt->date_utc, cal->written_by[0] ? cal->written_by : "(not recorded)");
    tram__doc_space(d, 4);
    char st[400];
    snprintf(st, sizeof st, "Result: %s", tram__report_status(cal));
    tram__doc_para(d, 10.5, 0, 1, st);
    tram__doc_box(d, BODY, "Safety", safety_text);
}

/* ---- setup ------------------------------------------------------------ */

static void setup(tram__doc *d, const tram__report_ctx *c)
{
    const tram_calibration *cal = c->cal;
    tram__doc_heading(d, 1, "1  Setup and what the transforms mean", 60);
    if (cal->setup == TRAM_SETUP_EYE_IN_HAND)
        para(d, "Eye-in-hand: the sensor is mounted on the robot's flange and moves with it; the "
                "calibration target stays fixed in the cell. The calibration gives T_flange_sensor, "
                "the sensor's pose in the flange frame (what a vision-guided motion needs), and "
                "T_base_target, the target's pose in the robot base frame.");
    else
        para(d, "Eye-to-hand: the sensor is fixed in the cell; the calibration target is mounted "
                "on the robot's flange and moves with it. The calibration gives T_base_sensor, the "
                "sensor's pose in the robot base frame (what a vision-guided motion needs), and "
                "T_flange_target, the target's pose in the flange frame.");
    para(d, "Notation: T_a_b is the pose of frame b in frame a. It maps coordinates in frame b to "
            "coordinates in frame a: p_a = T_a_b p_b. Its translation is the position of b's "
            "origin in a; the columns of its rotation are b's x, y and z axes written in a's "
            "coordinates.");
    const char *how = cal->refined ? "then refined by robust least squares over both transforms"
                                   : "not refined";
    char noise[200];
    if (isnan(cal->noise_angle_rad)) /* solved from 3D points: a point noise only */
        snprintf(noise, sizeof noise, "Solved from 3D points: point noise per coordinate (%s) "
                                      "%.4g %s.",
                 cal->noise_source[0] ? cal->noise_source : "not recorded", cal->noise_length, unit(c));
    else
        snprintf(noise, sizeof noise, "Station noise per axis (%s): %.4g %s, %.4g deg.",
                 cal->noise_source[0] ? cal->noise_source : "not recorded", cal->noise_length,
                 unit(c), cal->noise_angle_rad * RAD2DEG);
    para(d, "Method: %s; the refinement started from the %s closed form, %s. %s",
         cal->method[0] ? cal->method : "(not recorded)",
         cal->start_method[0] ? cal->start_method : "(not recorded)", how, noise);
}

/* ---- transforms ------------------------------------------------------- */

static void meaning(const tram__report_ctx *c, int which, char *buf, size_t cap)
{
    int eih = c->cal->setup == TRAM_SETUP_EYE_IN_HAND;
    if (which == 0 && eih)
        snprintf(buf, cap, "The pose of the sensor in the flange frame: p_flange = T_flange_sensor "
                           "p_sensor. The translation is where the sensor's origin sits, in "
                           "flange coordinates.");
    else if (which == 0)
        snprintf(buf, cap, "The pose of the sensor in the robot base frame: p_base = T_base_sensor "
                           "p_sensor. The translation is where the sensor's origin sits, in base "
                           "coordinates.");
    else if (which == 2) {
        snprintf(buf, cap, "The robot poses were logged as tool (TCP) poses (robot-pose: "
                           "tool-in-base) and turned into flange poses with the tool T_flange_tool "
                           "(translation %.6f, %.6f, %.6f %s). This is the same fixed transform "
                           "in the tool frame: %s = T_flange_tool^-1 %s.",
                 c->cal->T_flange_tool.m[0][3], c->cal->T_flange_tool.m[1][3],
                 c->cal->T_flange_tool.m[2][3], tram_unit_length_name(c->cal->length_unit),
                 eih ? "T_tool_sensor" : "T_tool_target", eih ? c->X_name : c->Z_name);
    } else if (eih)
        snprintf(buf, cap, "The pose of the calibration target in the robot base frame: p_base = "
                           "T_base_target p_target (a by-product, useful to check the setup).");
    else
        snprintf(buf, cap, "The pose of the calibration target in the flange frame: p_flange = "
                           "T_flange_target p_target (a by-product, useful to check the setup).");
}

static void euler_words(tram_euler_seq seq, char *buf, size_t cap)
{
    int ax[3];
    tram_euler_axes(seq, ax);
    const char n[3] = {'x', 'y', 'z'};
    const char *name = tram_euler_name(seq);
    int intr = strstr(name, "intrinsic") != NULL;
    if (intr)
        snprintf(buf, cap, "%s: R = R%c(e1) R%c(e2) R%c(e3), turns about %c by e1, then about the "
                           "turned %c by e2, then about the twice-turned %c by e3 (moving axes)",
                 name, n[ax[0]], n[ax[1]], n[ax[2]], n[ax[0]], n[ax[1]], n[ax[2]]);
    else
        snprintf(buf, cap, "%s: R = R%c(e3) R%c(e2) R%c(e1), turns about the fixed %c by e1, then "
                           "the fixed %c by e2, then the fixed %c by e3",
                 name, n[ax[2]], n[ax[1]], n[ax[0]], n[ax[0]], n[ax[1]], n[ax[2]]);
}

/* The fixed transform in the tool frame, for tool (TCP) poses. */
static void tool_transform(const tram_calibration *cal, tram_se3 *out)
{
    tram_se3 T_tool_flange;
    tram_se3_invert(&cal->T_flange_tool, &T_tool_flange);
    tram_se3_compose(&T_tool_flange, cal->setup == TRAM_SETUP_EYE_IN_HAND ? &cal->X : &cal->Z, out);
}

/* The Euler angles' 1-sigma and 95% interval (tram_calibration_euler_intervals:
 * the rotation covariance of block 0 (X) or 1 (Z) propagated to the named
 * convention), or why they are not defined. */
static void euler_intervals(tram__doc *d, const tram__report_ctx *c, const tram_mat3 *R, int block)
{
    tram_calibration_euler eu;
    tram_calibration_euler_intervals(c->cal, block, R, c->opt->euler, &eu);
    const char *name = tram_euler_name(c->opt->euler);
    if (!eu.defined) {
        para(d, "Euler angles %s: intervals not defined. The rotation is %.3f deg from this "
                "convention's gimbal lock (at least %.0f deg and %.0f times the rotation's total "
                "sigma are needed), where e1 and e3 are ill-determined and a linearised interval "
                "would mislead; use the rotation's own-axes intervals above, or a convention "
                "further from lock.",
             name, eu.lock_distance_rad * RAD2DEG, TRAM_EULER_COV_LOCK_MIN_DEG,
             TRAM_EULER_COV_LOCK_SIGMAS);
        return;
    }
    for (int i = 0; i < 3; i++) {
        double v = eu.angles_rad[i] * RAD2DEG, hw = eu.half95_rad[i] * RAD2DEG;
        char label[32];
        snprintf(label, sizeof label, "Euler e%d (deg)", i + 1);
        mono(d, "  %-27s %12.6f %11.6f    %.6f .. %.6f  (+-%.6f)", label, v,
             eu.sigma_rad[i] * RAD2DEG, v - hw, v + hw, hw);
    }
    char buf[400];
    snprintf(buf, sizeof buf, "Euler angles %s: the rotation covariance propagated through the "
                              "Jacobian of the Euler angles (first order; %.1f deg from gimbal "
                              "lock); 95%% interval %.3f sigma (the largest of the rotation axes').",
             name, eu.lock_distance_rad * RAD2DEG, eu.factor95);
    tram__doc_para(d, 8, 12, 0, buf);
}

static void transform(tram__doc *d, const tram__report_ctx *c, int which)
{
    const tram_calibration *cal = c->cal;
    tram_se3 Ttool;
    if (which == 2) tool_transform(cal, &Ttool);
    const tram_se3 *T = which == 0 ? &cal->X : which == 1 ? &cal->Z : &Ttool;
    const char *name = which == 0   ? c->X_name
                       : which == 1 ? c->Z_name
                       : cal->setup == TRAM_SETUP_EYE_IN_HAND ? "T_tool_sensor" : "T_tool_target";
    char h[96], buf[600];
    snprintf(h, sizeof h, "2.%d  %s", which + 1, name);
    tram__doc_heading(d, 2, h, 200);
    meaning(c, which, buf, sizeof buf);
    para(d, "%s", buf);
    mono(d, "matrix (rotation unitless, translation in %s):", unit(c));
    for (int i = 0; i < 4; i++)
        mono(d, "  [ %13.9f %13.9f %13.9f  %14.6f ]", T->m[i][0], T->m[i][1], T->m[i][2], T->m[i][3]);
    tram_mat3 R;
    double t[3], w[3], e[3];
    tram_se3_to_rt(T, &R, t);
    tram_quat_wxyz q;
    tram_quat_wxyz_from_mat3(&R, &q);
    tram_rotvec_from_mat3(&R, w);
    tram_euler_from_mat3(c->opt->euler, &R, e);
    double ang = sqrt(w[0] * w[0] + w[1] * w[1] + w[2] * w[2]) * RAD2DEG;
    mono(d, "translation (%s)          x %.6f   y %.6f   z %.6f", unit(c), t[0], t[1], t[2]);
    mono(d, "unit quaternion (w,x,y,z)  %.9f  %.9f  %.9f  %.9f", q.w, q.x, q.y, q.z);
    mono(d, "rotation vector (deg)      %.6f  %.6f  %.6f   (angle %.6f deg)", w[0] * RAD2DEG,
         w[1] * RAD2DEG, w[2] * RAD2DEG, ang);
    mono(d, "Euler angles %s (deg)  e1 %.6f   e2 %.6f   e3 %.6f", tram_euler_name(c->opt->euler),
         e[0] * RAD2DEG, e[1] * RAD2DEG, e[2] * RAD2DEG);
    euler_words(c->opt->euler, buf, sizeof buf);
    tram__doc_para(d, 8, 12, 0, buf);
    if (which == 2) {
        tram__doc_para(d, 8, 12, 0, "Uncertainty: the translation's as the transform's above, "
                                    "expressed in the tool frame (not repeated here); the rotation "
                                    "about the transform's own axes is the same as above.");
        int b = cal->setup == TRAM_SETUP_EYE_IN_HAND ? 0 : 1;
        if (cal->has_cov && isfinite(cal->cov[(6 * b + 3) * 13]))
            euler_intervals(d, c, &R, b);
        return;
    }
    if (!cal->has_cov) {
        para(d, "Uncertainty: not in the calibration file (no covariance was computed).");
        return;
    }
    int off = which == 0 ? 0 : 6, t95 = c->cal->has_half95, known = 1;
    for (int i = 0; i < 6; i++) known &= isfinite(cal->cov[(off + i) * 12 + off + i]) != 0;
    if (!known) {
        para(d, "Uncertainty: not determined for %s (null in the calibration file: the solve did "
                "not estimate it, e.g. the target of a solve from points without a model).",
             name);
        return;
    }
    mono(d, "%-29s %12s %11s    95%% interval (%s)", "uncertainty", "value", "1-sigma",
         t95 ? "Student t" : "value +- 1.96 sigma");
    const char ax[3] = {'x', 'y', 'z'};
    for (int i = 0; i < 3; i++) {
        double s = sqrt(c->cal->cov[(off + i) * 12 + off + i]);
        double hw = t95 ? c->cal->half95[off + i] : 1.96 * s;
        char label[32];
        snprintf(label, sizeof label, "translation %c (%s)", ax[i], unit(c));
        mono(d, "  %-27s %12.6f %11.6f    %.6f .. %.6f  (+-%.6f)", label, t[i],
             s, t[i] - hw, t[i] + hw, hw);
    }
    for (int i = 0; i < 3; i++) {
        double s = sqrt(c->cal->cov[(off + 3 + i) * 12 + off + 3 + i]) * RAD2DEG;
        double hw = t95 ? c->cal->half95[off + 3 + i] : 1.96 * s;
        char label[32];
        snprintf(label, sizeof label, "rotation about own %c (deg)", ax[i]);
        mono(d, "  %-27s %12s %11.6f    +-%.6f", label, "", s, hw);
    }
    euler_intervals(d, c, &R, which);
    tram__doc_para(d, 8, 12, 0,
                   t95 ? "Translation uncertainty along the parent frame's axes; rotation uncertainty "
                         "as a small rotation about the transform's own axes, then per Euler angle. "
                         "From the refinement's Jacobian and the noise model; the 95% interval is the "
                         "solve's, a Student-t quantile with the degrees of freedom of each sigma "
                         "(docs/solve.md)."
                       : "Translation uncertainty along the parent frame's axes; rotation uncertainty "
                         "as a small rotation about the transform's own axes, then per Euler angle. "
                         "From the refinement's Jacobian scaled by the residual variance; the 95% "
                         "interval is the normal approximation, 1.96 sigma per axis (the calibration "
                         "file holds no interval of its own).");
}

/* ---- stations --------------------------------------------------------- */

/* A residual with 5 decimals, or "-" when not defined (NaN: null in the file). */
static const char *num5(double v, char buf[32])
{
    if (isnan(v)) snprintf(buf, 32, "-");
    else snprintf(buf, 32, "%.5f", v);
    return buf;
}

static void stations(tram__doc *d, const tram__report_ctx *c)
{
    const tram_calibration *cal = c->cal;
    tram__doc_heading(d, 1, "3  Stations and residuals", 80);
    int points = isnan(cal->noise_angle_rad);
    if (points)
        para(d, "Solved from 3D points: per station, the RMS distance (%s) between the points the "
                "sensor observed and the solution's prediction of them; a rotation residual does "
                "not apply (shown as -). The statistics leave out the stations flagged as "
                "outliers, which were excluded from the final refinement.",
             unit(c));
    else
        para(d, "Per station: the rotation angle and the translation distance between that "
                "station's own prediction of %s and the solution. The statistics leave out the "
                "stations flagged as outliers, which were excluded from the final refinement.",
             c->Z_name);
    if (cal->nresiduals == 0) {
        para(d, "The calibration file holds no per-station residuals.");
        return;
    }
    mono(d, "  station                  rotation (deg)   translation (%s)", unit(c));
    char a[32], b[32];
    for (size_t i = 0; i < cal->nresiduals; i++) {
        const tram_calibration_residual *r = &cal->residuals[i];
        mono(d, "  %-24.24s %14s   %17s   %s", r->station, num5(r->rotation_deg, a),
             num5(r->translation, b), r->outlier ? "OUTLIER (excluded)" : "");
    }
    const tram_stats *sr = &cal->rot_deg_stats, *st = &cal->trans_stats;
    mono(d, "  %-24s %14s   %17s", "rms", num5(sr->rms, a), num5(st->rms, b));
    mono(d, "  %-24s %14s   %17s", "median", num5(sr->median, a), num5(st->median, b));
    mono(d, "  %-24s %14s   %17s", "max", num5(sr->max, a), num5(st->max, b));
}

static void pictures(tram__doc *d, const tram__report_ctx *c)
{
    double w = d->right - d->left;
    if (c->frames) {
        tram__doc_heading(d, 2, "Frames: base, flange at every station, sensor and target", 300);
        para(d, "x red, y green, z blue; three orthographic views and one oblique view; outlier "
                "stations vermillion.");
        tram__doc_image(d, c->frames, w);
    }
    if (c->residuals) {
        tram__doc_heading(d, 2, "Residuals per station", 300);
        tram__doc_image(d, c->residuals, w);
    }
    if (c->history_img) {
        tram__doc_heading(d, 2, "Mount-check history", 300);
        para(d, "From %s: %zu checks; the estimated change of the mount over time.",
             c->opt->history_path, c->history->n);
        tram__doc_image(d, c->history_img, w);
    }
}

/* ---- diagnostics, inputs, sign-off ------------------------------------ */

static void diagnostics(tram__doc *d, const tram__report_ctx *c)
{
    const tram_calibration *cal = c->cal;
    tram__doc_heading(d, 1, "4  Observability and diagnostics", 60);
    para(d, "Rotation between stations %.2f .. %.2f deg; spread of the rotation axes %.2f deg; "
            "condition number of the refinement %.3g.",
         cal->motion_min_deg, cal->motion_max_deg, cal->axis_spread_deg, cal->condition);
    if (cal->ndiag == 0) para(d, "Diagnostics: none.");
    for (size_t i = 0; i < cal->ndiag; i++) {
        const tram_diagnostic *g = &cal->diag[i];
        const char *sev = g->severity == TRAM_SEVERITY_ERROR     ? "error"
                          : g->severity == TRAM_SEVERITY_WARNING ? "warning"
                                                                 : "note";
        para(d, "[%s] %s: %s", sev, g->code, g->message);
    }
}

static void inputs(tram__doc *d, const tram__report_ctx *c)
{
    tram__doc_heading(d, 1, "5  Input files", 60);
    for (size_t i = 0; i < c->nfiles; i++) {
        const tram__report_file *f = &c->files[i];
        char buf[700];
        if (f->found)
            snprintf(buf, sizeof buf, "%s: %s (%zu bytes)%s%s", f->role, f->path, f->bytes,
                     f->note[0] ? "; " : "", f->note);
        else
            snprintf(buf, sizeof buf, "%s: %s; %s", f->role, f->path, f->note);
        tram__doc_para(d, BODY, 0, 0, buf);
        if (f->found) mono(d, "    SHA-256 %s", f->sha256);
    }
    para(d, "Made with tram %s on %s (UTC).", TRAM_VERSION_STRING, c->opt->date_utc);
}

static void signoff(tram__doc *d, const tram__report_ctx *c)
{
    tram__doc_heading(d, 1, "6  Sign-off", 170);
    para(d, "tram cannot verify a calibration. These lines are for the people who compute it and "
            "for those who verify it on the cell, at reduced speed, before it is used. Until the "
            "verification is filled in and signed, the calibration is NOT verified.");
    char buf[400];
    if (c->opt->computed_by && c->opt->computed_by[0]) {
        snprintf(buf, sizeof buf, "Computed by: %s, %.10s", c->opt->computed_by, c->opt->date_utc);
        tram__doc_space(d, 8);
        tram__doc_para(d, 10, 0, 0, buf);
    } else {
        tram__doc_fill_line(d, 10, "Computed by (name, date):");
    }
    tram__doc_fill_line(d, 10, "Verified on the cell by (name, date):");
    tram__doc_fill_line(d, 10, "How it was verified:");
    tram__doc_fill_line(d, 10, "Signature:");
}

void tram__report_lay_out(tram__doc *d, const tram__report_ctx *c)
{
    summary(d, c);
    setup(d, c);
    tram__doc_heading(d, 1, "2  Transforms", 200);
    transform(d, c, 0);
    transform(d, c, 1);
    if (c->cal->has_tool) transform(d, c, 2);
    stations(d, c);
    pictures(d, c);
    diagnostics(d, c);
    inputs(d, c);
    tram__doc_box(d, BODY, "Safety", safety_text);
    signoff(d, c);
}
