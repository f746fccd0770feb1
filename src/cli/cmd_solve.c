/*
 * cmd_solve.c - "tram solve": hand-eye calibration from a record file,
 * printed as a readable summary or as JSON, optionally saved as a
 * calibration file.
 */
#include "cli.h"
#include "tram/point_solve.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define RAD2DEG (180.0 / 3.14159265358979323846)

const char cli_solve_help[] =
    "usage: tram solve [OPTIONS] FILE\n\n"
    "Finds where the sensor sits from a record file (CSV or JSON, '-' for stdin):\n"
    "  eye-in-hand  (sensor on the flange):  T_flange_sensor and T_base_target\n"
    "  eye-to-hand  (sensor in the cell):    T_base_sensor and T_flange_target\n"
    "Default: every closed form is tried, the best one starts a robust refinement\n"
    "over both unknowns; per-station residuals, outliers, uncertainty, observability\n"
    "and convention checks are reported.\n\n"
    "options:\n"
    "  --setup eye-in-hand|eye-to-hand   (or the file's '# setup:' directive)\n"
    "  --method M        auto (default), tsai-lenz, park-martin, horaud-dornaika,\n"
    "                    daniilidis, andreff (AX=XB); shah, zhuang (AX=YB)\n"
    "  --pairs P         station pairs for AX=XB: auto (default: all pairs up to 60\n"
    "                    stations, else consecutive plus half-way pairs), all, consecutive,\n"
    "                    or a selection of station ids, e.g. p01:p02,p01:p07,p03:p09\n"
    "  --closed-form     report the closed form only, without refinement\n"
    "  --no-robust       plain least squares, no outlier exclusion\n"
    "  --noise LEN,ANG   the sensor's noise (1-sigma) used as weights, one value or\n"
    "                    three for the sensor frame's x/y/z axes, e.g. 0.2mm,0.05deg or\n"
    "                    0.1/0.1/0.3mm,0.05deg (default: estimated from the residuals)\n"
    "  --robot-noise LEN,ANG   the robot's isotropic noise of the flange pose, e.g.\n"
    "                    0.02mm,0.005deg (default: none apart from the sensor's)\n"
    "  --bootstrap N     N station resamples as a second opinion on the uncertainty\n"
    "  --seed N          bootstrap seed (default 1)\n"
    "  --no-convention-check   skip re-solving under the usual convention mistakes\n"
    "  --fit-scale       solve one length scale of the sensor (its translations, or its\n"
    "                    points with --points) with the mount; without it the scale is\n"
    "                    only tested, and a note suggests it when it differs from 1 by\n"
    "                    more than 3 sigma\n"
    "  --max-residual LEN[+PCT%],ANG   plausibility gate on the station (or point) RMS\n"
    "                    residual, default 5mm+1%,1deg (PCT of the working distance)\n"
    "  --max-offset LEN,LEN   farthest plausible mount from the flange and from the\n"
    "                    base, default 0.5m,5m\n"
    "  --pairing-test N  random pairings of the pairing test (default 30; 0: off);\n"
    "                    its seed is --seed\n"
    "  --no-plausibility  skip the gate and the mount geometry check\n"
    "  --length-unit U, --angle-unit U   units when the file does not declare them\n"
    "  --reorthonormalize        accept rounded rotation matrices\n"
    "  --rounded-quat    accept quaternions rounded to a few decimals (norm within\n"
    "                    0.01 of 1; default 1e-6) and normalise them\n"
    "  --chain FILE      the record file gives joint readings: compute the flange\n"
    "                    poses with this kinematic chain (docs/chain.md)\n"
    "  --tool 'X,Y,ZUNIT ROT'  the robot poses are tool (TCP) poses (robot-pose:\n"
    "                    tool-in-base): the tool's pose in the flange, e.g.\n"
    "                    '0,0,150mm quat:1,0,0,0' (docs/records.md); gives T_tool_sensor too\n"
    "  --points FILE     the sensor's observed 3D points per station (station,point,x,y,z\n"
    "                    in the sensor frame) instead of sensor_ pose columns (those\n"
    "                    of the record file are then ignored: sensor-columns-ignored)\n"
    "  --model FILE      the target's points in its own frame (point,x,y,z); without it\n"
    "                    the points' positions are solved too (docs/points.md)\n"
    "  --pixels FILE     the corners seen in each station's image (tram-pixels-1) instead\n"
    "                    of sensor_ columns; with --camera FILE and --board FILE (or\n"
    "                    --model FILE); refined on the reprojection error (docs/pixels.md)\n"
    "  --refine-intrinsics   with --pixels: refine the camera's parameters too (the\n"
    "                    skew when the camera file has it free)\n"
    "  --json            print the result as JSON (schema: docs/solve.md)\n"
    "  -o FILE           write the calibration file (JSON) atomically\n"
    "  --force           allow -o and --plot to replace existing files\n"
    "  --plot DIR        write frames.png and residuals.png of the solve into DIR\n\n"
    "examples (from the top of the source tree):\n"
    "  tram solve datasets/demo/wrist_camera.csv\n"
    "  tram solve --json -o wrist.cal.json --force datasets/demo/wrist_camera.csv\n"
    "\n"
    "exit status: 0 solved with no warning; 2 usage or input error; 3 the data cannot\n"
    "determine a trustworthy answer (unobservable motion, or a warning such as a\n"
    "convention that fits far better than the declared one, implausible residuals,\n"
    "a pairing that fits no better than random ones, or an implausible mount).\n";

static void progress(void *ctx, const char *what, size_t done, size_t total)
{
    (void)ctx;
    if (total < 50 || (done % 10 != 0 && done != total)) return;
    fprintf(stderr, "\r%s %zu/%zu", what, done, total);
    if (done == total) fputc('\n', stderr);
}

/* One or three '/'-separated positive numbers, then text up to `stop`
 * (the unit) into u; the numbers into v[3] (one number: all three).
 * Returns the end of the unit, or NULL. */
static const char *noise_values(const char *p, char stop, double v[3], char *u, size_t usz)
{
    int k = 0;
    char *end;
    for (;;) {
        v[k] = strtod(p, &end);
        if (end == p || !(v[k] > 0) || !isfinite(v[k])) return NULL;
        k++;
        p = end;
        if (*p != '/') break;
        if (k == 3) return NULL;
        p++;
    }
    if (k == 2) return NULL;
    if (k == 1) v[1] = v[2] = v[0];
    const char *e = strchr(p, stop);
    if (!e) e = p + strlen(p);
    size_t ul = (size_t)(e - p);
    if (ul == 0 || ul >= usz) return NULL;
    memcpy(u, p, ul);
    u[ul] = 0;
    return e;
}

/* "0.2mm,0.05deg" or per axis of the sensor's frame "0.1/0.1/0.3mm,
 * 0.05/0.05/0.08deg": lengths in the records' unit, angles in rad. */
static int parse_noise(const char *v, double len[3], double ang[3], tram_length_unit file_unit)
{
    char u[8];
    const char *e = noise_values(v, ',', len, u, sizeof u);
    if (!e || *e != ',') return -1;
    tram_length_unit lu = tram_unit_length_parse(u);
    if (lu == TRAM_LENGTH_UNSET) return -1;
    e = noise_values(e + 1, '\0', ang, u, sizeof u);
    tram_angle_unit au = e ? tram_unit_angle_parse(u) : TRAM_ANGLE_UNSET;
    if (au == TRAM_ANGLE_UNSET) return -1;
    for (int k = 0; k < 3; k++) {
        len[k] *= tram_unit_length_factor(lu, file_unit);
        ang[k] *= tram_unit_angle_in_rad(au);
    }
    return 0;
}

/* "ID:ID,ID:ID" -> station index pairs. */
static int parse_pairs(const char *v, const tram_records *r, tram_pair **out, size_t *count)
{
    size_t cap = 1;
    for (const char *p = v; *p; p++) cap += *p == ',';
    tram_pair *pairs = malloc(cap * sizeof *pairs);
    char *copy = strdup(v);
    if (!pairs || !copy) {
        free(pairs);
        free(copy);
        return cli_usage_error("solve", "out of memory");
    }
    size_t n = 0;
    for (char *tok = strtok(copy, ","); tok; tok = strtok(NULL, ",")) {
        char *colon = strchr(tok, ':');
        if (!colon) {
            free(pairs);
            free(copy);
            return cli_usage_error("solve", "--pairs: '%s' is not ID:ID", tok);
        }
        *colon = '\0';
        const char *ids[2] = {tok, colon + 1};
        size_t idx[2];
        for (int k = 0; k < 2; k++) {
            idx[k] = r->count;
            for (size_t i = 0; i < r->count; i++)
                if (strcmp(r->stations[i].id, ids[k]) == 0) idx[k] = i;
            if (idx[k] == r->count) {
                int rc = cli_usage_error("solve", "--pairs: no station '%s' in %s", ids[k],
                                         r->source);
                free(pairs);
                free(copy);
                return rc;
            }
        }
        pairs[n].i = idx[0];
        pairs[n].j = idx[1];
        n++;
    }
    free(copy);
    *out = pairs;
    *count = n;
    return CLI_EXIT_OK;
}

static void print_matrix(const tram_se3 *T)
{
    for (int i = 0; i < 4; i++)
        printf("    [ %12.8f %12.8f %12.8f %14.6f ]\n", T->m[i][0], T->m[i][1], T->m[i][2],
               T->m[i][3]);
}

static void print_transform(const char *name, const char *meaning, const tram_se3 *T,
                            const tram_solution *s, int off, const char *u)
{
    tram_mat3 R;
    double t[3], w[3];
    tram_quat_wxyz q;
    tram_se3_to_rt(T, &R, t);
    tram_quat_wxyz_from_mat3(&R, &q);
    tram_so3_log(&R, w);
    printf("%s  (%s)\n", name, meaning);
    print_matrix(T);
    printf("  translation (%s)        %12.6f %12.6f %12.6f\n", u, t[0], t[1], t[2]);
    int sig_ok = s->unc.valid && !isnan(s->unc.sigma[off]) && !isnan(s->unc.sigma[off + 3]);
    if (s->unc.valid && !sig_ok)
        printf("    1-sigma: not estimated for %s in this mode%s\n", name,
               s->points && !s->points->with_model
                   ? " (the target frame is defined by the solved point model itself)"
                   : "");
    if (sig_ok)
        printf("    1-sigma / 95%%          %12.6f %12.6f %12.6f  /  +-%.4g +-%.4g +-%.4g\n",
               s->unc.sigma[off], s->unc.sigma[off + 1], s->unc.sigma[off + 2],
               s->unc.half95[off], s->unc.half95[off + 1], s->unc.half95[off + 2]);
    printf("  quaternion (w, x, y, z)  %12.9f %12.9f %12.9f %12.9f\n", cli_print_zero(q.w, 9), cli_print_zero(q.x, 9), cli_print_zero(q.y, 9),
           cli_print_zero(q.z, 9));
    printf("  rotation vector (deg)    %12.6f %12.6f %12.6f   angle %.6f\n", w[0] * RAD2DEG,
           w[1] * RAD2DEG, w[2] * RAD2DEG,
           sqrt(w[0] * w[0] + w[1] * w[1] + w[2] * w[2]) * RAD2DEG);
    if (sig_ok)
        printf("    rotation 1-sigma (deg, about own x y z) %.4g %.4g %.4g  (95%%: +-%.4g +-%.4g "
               "+-%.4g)\n",
               s->unc.sigma[off + 3], s->unc.sigma[off + 4], s->unc.sigma[off + 5],
               s->unc.half95[off + 3], s->unc.half95[off + 4], s->unc.half95[off + 5]);
    if (s->unc.bootstrap_valid)
        printf("    bootstrap 1-sigma: translation %.4g %.4g %.4g %s, rotation %.4g %.4g %.4g "
               "deg (%zu resamples)\n",
               s->unc.bootstrap_sigma[off], s->unc.bootstrap_sigma[off + 1],
               s->unc.bootstrap_sigma[off + 2], u, s->unc.bootstrap_sigma[off + 3],
               s->unc.bootstrap_sigma[off + 4], s->unc.bootstrap_sigma[off + 5],
               s->unc.bootstrap_used);
    printf("\n");
}

/* The noise model used as weights (docs/solve.md, "Noise model"). */
static void print_noise(const tram_solution *s, const char *u)
{
    if (isnan(s->noise_angle_deg)) {
        printf("\nnoise per axis (%s): %.4g %s (points carry no angle)\n",
               s->noise_given ? "given" : "estimated from the residuals", s->noise_length, u);
        return;
    }
    if (!s->refined || s->pixels || s->points) {
        printf("\nnoise per axis (%s): %.4g deg, %.4g %s\n",
               s->noise_given ? "given" : "estimated from the residuals", s->noise_angle_deg,
               s->noise_length, u);
        return;
    }
    const double *a = s->noise_angle_axis_deg, *l = s->noise_length_axis;
    printf("\nsensor noise, 1-sigma per axis of the sensor frame (%s): rotation %.4g %.4g %.4g deg, "
           "translation %.4g %.4g %.4g %s\n",
           s->noise_given               ? "given"
           : s->noise_per_axis == 1     ? "estimated from the residuals"
           : s->noise_per_axis == 2     ? "estimated from the residuals, one value for the rotation "
                                          "axes, one for x and y, one for z"
                                        : "estimated from the residuals, one value for the 3 axes",
           a[0], a[1], a[2], l[0], l[1], l[2], u);
    if (!s->noise_given)
        printf("  degrees of freedom of the estimates: rotation %.3g %.3g %.3g, translation %.3g "
               "%.3g %.3g\n",
               s->noise_dof[0], s->noise_dof[1], s->noise_dof[2], s->noise_dof[3], s->noise_dof[4],
               s->noise_dof[5]);
    if (s->robot_noise_length > 0 || s->robot_noise_angle_deg > 0)
        printf("  robot noise (given, isotropic): %.4g deg, %.4g %s\n", s->robot_noise_angle_deg,
               s->robot_noise_length, u);
}

static const char *sev(tram_severity s)
{
    return s == TRAM_SEVERITY_ERROR ? "error" : s == TRAM_SEVERITY_WARNING ? "WARNING" : "note";
}

/* The plausibility checks' figures (docs/solve.md). */
static void print_trust(const tram_solution *s)
{
    const char *u = tram_unit_length_name(s->length_unit);
    if (!s->solved) return;
    if (s->trust.limit_length > 0)
        printf("plausibility gate: RMS at most %.3g deg and %.4g %s (working distance %.4g %s): "
               "%s\n",
               s->trust.limit_rot_deg, s->trust.limit_length, u, s->trust.working_distance, u,
               s->trust.gate_failed ? "EXCEEDED" : "passed");
    if (s->trust.pairing_done)
        printf("pairing test: the best of %zu random pairings (seed %llu) fits %.3g times (rotation) "
               "and %.3g times (translation) worse than the file's: %s\n",
               s->trust.pairing_permutations, s->trust.pairing_seed, s->trust.pairing_ratio_rot,
               s->trust.pairing_ratio_trans, s->trust.pairing_failed ? "NOT DETERMINED" : "passed");
}

/* Records of tool (TCP) poses: the tool used, and the fixed transform in
 * the tool frame as well (T_tool_sensor or T_tool_target). */
static void print_tool(const tram_solution *s, const tram_records *r, const char *u)
{
    if (!r->robot_tool || !r->has_tool) return;
    int eih = s->setup == TRAM_SETUP_EYE_IN_HAND;
    tram_se3 T_tool_flange, T;
    tram_se3_invert(&r->T_flange_tool, &T_tool_flange);
    tram_se3_compose(&T_tool_flange, eih ? &s->X : &s->Z, &T);
    tram_mat3 R;
    double t[3];
    tram_quat_wxyz q;
    tram_se3_to_rt(&r->T_flange_tool, &R, t);
    tram_quat_wxyz_from_mat3(&R, &q);
    char where[48];
    if (r->tool_in_file && r->tool_line)
        snprintf(where, sizeof where, "tool-in-flange, line %ld", r->tool_line);
    else
        snprintf(where, sizeof where, r->tool_in_file ? "tool-in-flange" : "--tool");
    printf("robot poses: tool (TCP) poses, robot-pose tool-in-base; flange poses from the tool\n"
           "  T_flange_tool (%s): translation (%s) %.6f %.6f %.6f, quaternion (w, x, y, z) "
           "%.9f %.9f %.9f %.9f\n\n",
           where, u, t[0], t[1], t[2], cli_print_zero(q.w, 9), cli_print_zero(q.x, 9), cli_print_zero(q.y, 9),
           cli_print_zero(q.z, 9));
    tram_se3_to_rt(&T, &R, t);
    tram_quat_wxyz_from_mat3(&R, &q);
    printf("%s  (%s)\n", eih ? "T_tool_sensor" : "T_tool_target",
           eih ? "pose of the sensor in the tool frame" : "pose of the target in the tool frame");
    print_matrix(&T);
    printf("  translation (%s)        %12.6f %12.6f %12.6f\n", u, t[0], t[1], t[2]);
    printf("  quaternion (w, x, y, z)  %12.9f %12.9f %12.9f %12.9f\n\n", cli_print_zero(q.w, 9), cli_print_zero(q.x, 9), cli_print_zero(q.y, 9),
           cli_print_zero(q.z, 9));
}

/* The sensor's length scale: fitted, or tested against 1 (docs/solve.md). */
static void print_scale(const tram_solution *s)
{
    const tram_scale_result *k = &s->sensor_scale;
    if (!k->estimated) return;
    printf("\nsensor length scale (sensor lengths x scale = robot lengths): %.6f, 1 sigma %.6f "
           "(%+.3f%%), %.2f sigma from 1 (p = %.2g); %s\n",
           k->scale, k->sigma, 100.0 * (k->scale - 1.0), k->z, k->p_value,
           k->fitted ? "fitted: the result uses it" : "tested only: the result uses 1");
}

/* Each closed form's fit on the same stations, outliers included (which is
 * why they fit worse than the refined result); nothing in modes that solve
 * without them (observed points). */
static void print_closed_forms(const tram_solution *s, const char *u)
{
    int any = 0;
    for (int m = 1; m < TRAM_METHOD_COUNT; m++)
        if (!isnan(s->closed_rot_rms_deg[m])) any = 1;
    if (!s->solved || !any) return;
    if (s->n_outliers)
        printf("closed forms on every station, the %zu outlier(s) included - hence worse than the "
               "refined result, which leaves them out (rms rotation deg / %s):",
               s->n_outliers, u);
    else
        printf("closed forms (rms rotation deg / %s):", u);
    for (int m = 1; m < TRAM_METHOD_COUNT; m++) {
        if (isnan(s->closed_rot_rms_deg[m])) printf(" %s failed;", tram_method_name((tram_method)m));
        else
            printf(" %s %.4g/%.4g;", tram_method_name((tram_method)m), s->closed_rot_rms_deg[m],
                   s->closed_trans_rms[m]);
    }
    printf("\n");
}

/* Each station's residual against the solution, when the mode gives
 * one per station (solves from observed points without a model report
 * per-point residuals instead, below). */
static void print_station_table(const tram_solution *s, const tram_records *r, const char *u)
{
    for (size_t i = 0; i < s->n; i++)
        if (isnan(s->stations[i].rot_deg) || isnan(s->stations[i].trans)) return;
    printf("station residuals (each station's prediction of %s against the solution)\n", s->Z_name);
    printf("  %-16s %12s %14s\n", "station", "rotation deg", u);
    for (size_t i = 0; i < s->n; i++)
        printf("  %-16s %12.5f %14.5f%s\n", r->stations[i].id, s->stations[i].rot_deg,
               s->stations[i].trans, s->stations[i].outlier ? "   OUTLIER (excluded)" : "");
    printf("  %-16s %12.5f %14.5f\n", "rms", s->rot_deg.rms, s->trans.rms);
    printf("  %-16s %12.5f %14.5f\n", "median", s->rot_deg.median, s->trans.median);
    printf("  %-16s %12.5f %14.5f\n", "max", s->rot_deg.max, s->trans.max);
    if (s->n_outliers) printf("  (statistics without the %zu outlier(s))\n", s->n_outliers);
}

static void print_summary(const tram_solution *s, const tram_records *r)
{
    const char *u = tram_unit_length_name(s->length_unit);
    printf("tram solve: %s, %zu stations from %s, lengths in %s\n", tram_setup_name(s->setup),
           s->n, r->source, u);
    if (s->solved && s->points && !s->points->with_model)
        printf("method: linear start from the observed points, then refinement of the mount by "
               "variable projection with the point model solved too (docs/points.md)\n\n");
    else if (s->solved)
        printf("method: %s closed form%s\n\n", tram_method_name(s->start_method),
               s->refined ? ", then robust refinement over both unknowns" : " (not refined)");
    if (s->solved) {
        int eih = s->setup == TRAM_SETUP_EYE_IN_HAND;
        print_transform(s->X_name, eih ? "pose of the sensor in the flange frame"
                                       : "pose of the sensor in the robot base frame",
                        &s->X, s, 0, u);
        print_transform(s->Z_name, eih ? "pose of the target in the robot base frame"
                                       : "pose of the target in the flange frame",
                        &s->Z, s, 6, u);
        print_tool(s, r, u);
        print_station_table(s, r, u);
        if (s->points) {
            const tram_point_result *pr = s->points;
            printf("\n3D point residuals (%s model): rms %.4f %s, median %.4f, largest single "
                   "point %.4f\n",
                   pr->with_model ? "given" : "solved", pr->point.rms, u, pr->point.median,
                   pr->point.max);
            printf("  per station rms:");
            for (size_t i = 0; i < s->n; i++) printf(" %s %.3f;", r->stations[i].id, pr->station_rms[i]);
            printf("\n  per point rms:");
            for (size_t k = 0; k < pr->npoints; k++) printf(" %s %.3f;", pr->point_id[k], pr->point_rms[k]);
            printf("\n");
            if (!pr->with_model) {
                printf("  solved model (target frame: origin at the points' centroid, axes along "
                       "their principal directions), %s:\n", u);
                for (size_t k = 0; k < pr->npoints; k++)
                    printf("    %-10s %12.4f %12.4f %12.4f\n", pr->point_id[k], pr->model_xyz[3 * k],
                           pr->model_xyz[3 * k + 1], pr->model_xyz[3 * k + 2]);
            }
        }
        cli_print_pixels(s, r);
        print_scale(s);
        print_noise(s, u);
    }
    printf("observability: rotation between stations %.2f .. %.2f deg, axis spread %.2f deg",
           s->motion_min_deg, s->motion_max_deg, s->axis_spread_deg);
    if (s->refined) printf(", condition %.3g", s->condition);
    printf("\n");
    print_trust(s);
    print_closed_forms(s, u);
    if (s->ndiag) {
        printf("\ndiagnostics:\n");
        for (size_t i = 0; i < s->ndiag; i++)
            printf("  [%s] %s: %s\n", sev(s->diag[i].severity), s->diag[i].code,
                   s->diag[i].message);
    }
    printf("\nresult: %s\n",
           !s->solved ? "NOT DETERMINED by these data"
           : s->trustworthy
               ? "consistent with the data; NOT verified on the cell"
               : "NOT TRUSTWORTHY - resolve the warnings above before using it");
    printf("%s", cli_safety_text);
}

/* Everything the command line asked for. */
typedef struct solve_args {
    const char *file, *out_path, *noise, *robot_noise, *method, *pair_sel, *chain, *tool, *points, *model,
        *plot_dir;
    tram_solve_options so;
    tram_read_options ro;
    tram_setup setup;
    int json, force;
    cli_pixel_args pix;
} solve_args;

/* "LEN[UNIT]" -> metres; the unit is required.  -1 on error. */
static double length_in_m(const char *v, const char **rest)
{
    char *end;
    double x = strtod(v, &end);
    if (end == v || !(x > 0)) return -1;
    static const char *const names[] = {"mm", "cm", "m", "in"};
    for (size_t k = 0; k < 4; k++) {
        size_t l = strlen(names[k]);
        if (strncmp(end, names[k], l) == 0 && !(end[l] >= 'a' && end[l] <= 'z')) {
            *rest = end + l;
            return x * tram_unit_length_in_m(tram_unit_length_parse(names[k]));
        }
    }
    return -1;
}

/* --max-residual LEN[+PCT%],ANG, --max-offset LEN,LEN, --pairing-test N
 * and --no-plausibility into the trust options.  As take_solver_option. */
static int take_trust_option(int argc, char **argv, int *i, solve_args *a, int *bad, int *rc)
{
    const char *v = NULL, *rest = NULL;
    char *end;
    tram_trust_options *t = &a->so.trust;
    if (cli_flag(argv, *i, "--no-plausibility")) {
        t->gate = 0;
    } else if (cli_take(argc, argv, i, "--max-residual", &v, bad)) {
        if (*bad) return 1;
        double len = length_in_m(v, &rest), pct = t->max_rms_fraction * 100, ang = -1;
        if (len > 0 && *rest == '+') {
            pct = strtod(rest + 1, &end);
            rest = (end != rest + 1 && *end == '%' && pct >= 0) ? end + 1 : NULL;
        }
        if (len > 0 && rest && *rest == ',') {
            ang = strtod(rest + 1, &end);
            tram_angle_unit au = end != rest + 1 ? tram_unit_angle_parse(end) : TRAM_ANGLE_UNSET;
            ang = (au != TRAM_ANGLE_UNSET && ang > 0) ? ang * tram_unit_angle_in_rad(au) * RAD2DEG : -1;
        }
        if (!(ang > 0))
            *rc = cli_usage_error("solve", "--max-residual '%s': expected LENGTH[+PERCENT%%],ANGLE, "
                                           "e.g. 5mm+1%%,1deg", v);
        t->max_rms_m = len;
        t->max_rms_fraction = pct / 100;
        t->max_rms_deg = ang;
    } else if (cli_take(argc, argv, i, "--max-offset", &v, bad)) {
        if (*bad) return 1;
        double f = length_in_m(v, &rest), b = -1;
        if (f > 0 && *rest == ',') b = length_in_m(rest + 1, &rest);
        if (!(b > 0) || *rest)
            *rc = cli_usage_error("solve", "--max-offset '%s': expected FLANGE,BASE lengths, e.g. "
                                           "0.5m,5m", v);
        t->max_flange_offset_m = f;
        t->max_base_offset_m = b;
    } else if (cli_take(argc, argv, i, "--pairing-test", &v, bad)) {
        if (*bad) return 1;
        long n = strtol(v, &end, 10);
        if (*end || end == v || n < 0 || n > 10000)
            *rc = cli_usage_error("solve", "--pairing-test '%s': expected a count (0: off)", v);
        else t->pairing_permutations = (size_t)n;
    } else {
        return 0;
    }
    return 1;
}

/* One option that takes a value of the solver's (method, pairs, counts,
 * units).  Returns 1 when argv[*i] was such an option (then *rc is set on a
 * bad value), 0 otherwise. */
static int take_solver_option(int argc, char **argv, int *i, solve_args *a, int *bad, int *rc)
{
    const char *v = NULL;
    char *end;
    if (cli_take(argc, argv, i, "--setup", &v, bad)) {
        if (*bad) return 1;
        a->setup = tram_setup_parse(v);
        if (a->setup == TRAM_SETUP_UNSET)
            *rc = cli_usage_error("solve", "--setup '%s': expected eye-in-hand or eye-to-hand", v);
    } else if (cli_take(argc, argv, i, "--method", &v, bad)) {
        if (*bad) return 1;
        a->so.method = tram_method_parse(v);
        a->method = v;
        if (a->so.method == TRAM_METHOD_COUNT)
            *rc = cli_usage_error("solve",
                                  "--method '%s': expected auto, tsai-lenz, park-martin, "
                                  "horaud-dornaika, daniilidis, andreff, shah or zhuang",
                                  v);
    } else if (cli_take(argc, argv, i, "--pairs", &v, bad)) {
        if (*bad) return 1;
        if (strcmp(v, "auto") == 0) a->so.pairs = TRAM_PAIRS_AUTO;
        else if (strcmp(v, "all") == 0) a->so.pairs = TRAM_PAIRS_ALL;
        else if (strcmp(v, "consecutive") == 0) a->so.pairs = TRAM_PAIRS_CONSECUTIVE;
        else if (strchr(v, ':')) a->pair_sel = v;
        else *rc = cli_usage_error("solve", "--pairs '%s': expected auto, all, consecutive or ID:ID,...", v);
    } else if (cli_take(argc, argv, i, "--bootstrap", &v, bad)) {
        if (*bad) return 1;
        long n = strtol(v, &end, 10);
        if (*end || n < 0 || n > 1000000)
            *rc = cli_usage_error("solve", "--bootstrap '%s': expected a count", v);
        else a->so.bootstrap = (size_t)n;
    } else if (cli_take(argc, argv, i, "--seed", &v, bad)) {
        if (*bad) return 1;
        a->so.seed = strtoull(v, &end, 10);
        if (*end) *rc = cli_usage_error("solve", "--seed '%s': expected a number", v);
    } else if (cli_take(argc, argv, i, "--length-unit", &v, bad)) {
        if (*bad) return 1;
        a->ro.length_unit = tram_unit_length_parse(v);
        if (a->ro.length_unit == TRAM_LENGTH_UNSET)
            *rc = cli_usage_error("solve", "--length-unit '%s': expected mm, cm, m or in", v);
    } else if (cli_take(argc, argv, i, "--angle-unit", &v, bad)) {
        if (*bad) return 1;
        a->ro.angle_unit = tram_unit_angle_parse(v);
        if (a->ro.angle_unit == TRAM_ANGLE_UNSET)
            *rc = cli_usage_error("solve", "--angle-unit '%s': expected deg or rad", v);
    } else {
        return 0;
    }
    return 1;
}

/* One on/off flag; 1 when argv[i] was one. */
static int take_flag(char **argv, int i, solve_args *a)
{
    if (cli_flag(argv, i, "--closed-form")) a->so.refine = 0;
    else if (cli_flag(argv, i, "--no-robust")) a->so.robust = 0;
    else if (cli_flag(argv, i, "--no-convention-check")) a->so.check_conventions = 0;
    else if (cli_flag(argv, i, "--fit-scale")) a->so.fit_scale = 1;
    else if (cli_flag(argv, i, "--reorthonormalize")) a->ro.reorthonormalize = 1;
    else if (cli_flag(argv, i, "--rounded-quat")) a->ro.quat_norm_tol = TRAM_QUAT_NORM_MAX_FIX;
    else if (cli_flag(argv, i, "--json")) a->json = 1;
    else if (cli_flag(argv, i, "--force")) a->force = 1;
    else return 0;
    return 1;
}

/* Parse the command line into a; CLI_EXIT_OK or the exit status. */
static int parse_args(int argc, char **argv, solve_args *a)
{
    memset(a, 0, sizeof *a);
    tram_solve_options_init(&a->so);
    a->setup = TRAM_SETUP_UNSET;
    a->method = "auto";
    int bad = 0;
    for (int i = 1; i < argc; i++) {
        int rc = CLI_EXIT_OK;
        if (take_solver_option(argc, argv, &i, a, &bad, &rc) ||
            take_trust_option(argc, argv, &i, a, &bad, &rc)) {
            if (rc != CLI_EXIT_OK) return rc;
        } else if (cli_take(argc, argv, &i, "--robot-noise", &a->robot_noise, &bad)) {
        } else if (cli_take(argc, argv, &i, "--noise", &a->noise, &bad)) {
        } else if (cli_take(argc, argv, &i, "--chain", &a->chain, &bad)) {
        } else if (cli_take(argc, argv, &i, "--tool", &a->tool, &bad)) {
        } else if (cli_take(argc, argv, &i, "--plot", &a->plot_dir, &bad)) {
        } else if (cli_take(argc, argv, &i, "--points", &a->points, &bad)) {
        } else if (cli_take(argc, argv, &i, "--model", &a->model, &bad)) {
        } else if (cli_take(argc, argv, &i, "--pixels", &a->pix.pixels, &bad)) {
        } else if (cli_take(argc, argv, &i, "--camera", &a->pix.camera, &bad)) {
        } else if (cli_take(argc, argv, &i, "--board", &a->pix.board, &bad)) {
        } else if (cli_flag(argv, i, "--refine-intrinsics")) {
            a->pix.refine_intrinsics = 1;
        } else if (cli_take(argc, argv, &i, "-o", &a->out_path, &bad)) {
        } else if (take_flag(argv, i, a)) {
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("solve", "unknown option '%s'", argv[i]);
        } else if (a->file) {
            return cli_usage_error("solve", "one record file expected, got '%s' and '%s'", a->file,
                                   argv[i]);
        } else {
            a->file = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (a->pix.pixels && (a->points || !a->pix.camera || !a->pix.board == !a->model))
        return cli_usage_error("solve", "--pixels needs --camera FILE and one of --board FILE and "
                                        "--model FILE (and no --points)");
    if (!a->pix.pixels && (a->pix.camera || a->pix.board || a->pix.refine_intrinsics))
        return cli_usage_error("solve", "--camera, --board and --refine-intrinsics go with --pixels");
    a->pix.model = a->model;
    if (!a->file) return cli_usage_error("solve", "no record file (use '-' for stdin)");
    if (a->model && !a->points && !a->pix.pixels)
        return cli_usage_error("solve", "--model goes with --points");
    if (a->so.fit_scale && a->pix.pixels)
        return cli_usage_error("solve", "--fit-scale goes with sensor poses or --points, not --pixels");
    if (a->so.fit_scale && !a->so.refine)
        return cli_usage_error("solve", "--fit-scale needs the refinement (not --closed-form)");
    /* Existing outputs are refused before the work, as tram plot -o does. */
    if (a->plot_dir && !a->force) {
        static const char *const pics[] = {"frames.png", "residuals.png"};
        char path[1200];
        for (size_t k = 0; k < 2; k++) {
            cli_path_join(path, sizeof path, a->plot_dir, pics[k]);
            if (access(path, F_OK) == 0)
                return cli_usage_error("solve", "--plot: %s already exists; not overwritten (pass "
                                                "--force to replace it)",
                                       path);
        }
    }
    return CLI_EXIT_OK;
}

/* The setup from the file and --setup, which must agree; one of them must
 * give it.  CLI_EXIT_OK or CLI_EXIT_USAGE (with the message). */
static int resolve_setup(const tram_records *r, solve_args *a)
{
    if (a->setup != TRAM_SETUP_UNSET && r->setup != TRAM_SETUP_UNSET && a->setup != r->setup) {
        fprintf(stderr,
                "%s:%ld: error: the file declares setup %s but --setup %s was given\n", r->source,
                r->setup_line ? r->setup_line : 1L, tram_setup_name(r->setup), tram_setup_name(a->setup));
        return CLI_EXIT_USAGE;
    }
    if (a->setup == TRAM_SETUP_UNSET) a->setup = r->setup;
    if (a->setup == TRAM_SETUP_UNSET) {
        fprintf(stderr,
                "%s:%ld: error: no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass "
                "--setup\n",
                r->source, r->count ? r->stations[0].line : 1L);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

/* --noise and --pairs ID:ID, which need the records' unit and ids, into
 * a->so (*pair_list owned by the caller). */
static int apply_record_options(const tram_records *r, solve_args *a, tram_pair **pair_list)
{
    if (a->noise) {
        double len[3], ang[3];
        if (parse_noise(a->noise, len, ang, r->length_unit) != 0)
            return cli_usage_error("solve", "--noise '%s': expected LENGTH,ANGLE with units, each "
                                            "one value or three per sensor axis, e.g. 0.2mm,0.05deg "
                                            "or 0.1/0.1/0.3mm,0.05deg", a->noise);
        for (int k = 0; k < 3; k++) {
            a->so.noise_length_axis[k] = len[k];
            a->so.noise_angle_axis_rad[k] = ang[k];
        }
        a->so.noise_length = sqrt((len[0] * len[0] + len[1] * len[1] + len[2] * len[2]) / 3);
        a->so.noise_angle_rad = sqrt((ang[0] * ang[0] + ang[1] * ang[1] + ang[2] * ang[2]) / 3);
    }
    if (a->robot_noise) {
        double len[3], ang[3];
        if (parse_noise(a->robot_noise, len, ang, r->length_unit) != 0 || len[1] != len[0] ||
            len[2] != len[0] || ang[1] != ang[0] || ang[2] != ang[0])
            return cli_usage_error("solve", "--robot-noise '%s': expected LENGTH,ANGLE with units "
                                            "(one value each), e.g. 0.02mm,0.005deg",
                                   a->robot_noise);
        a->so.robot_noise_length = len[0];
        a->so.robot_noise_angle_rad = ang[0];
    }
    if (a->pair_sel) {
        int prc = parse_pairs(a->pair_sel, r, pair_list, &a->so.npair_list);
        if (prc != CLI_EXIT_OK) return prc;
        a->so.pair_list = *pair_list;
    }
    if (isatty(STDERR_FILENO)) a->so.progress = progress;
    return CLI_EXIT_OK;
}

/* The solve itself: from target poses, or from observed points. */
static tram_status run_solve(const tram_records *r, const solve_args *a, tram_solution **s,
                             tram_error *err)
{
    if (a->pix.pixels) return cli_solve_pixels(r, a->setup, &a->pix, &a->so, s, err);
    if (!a->points) return tram_solve(r, a->setup, &a->so, s, err);
    tram_point_obs *obs = NULL;
    tram_point_model *mdl = NULL;
    tram_status st = tram_point_obs_read_file(a->points, r, &obs, err);
    if (st == TRAM_OK && a->model) st = tram_point_model_read_file(a->model, r, &mdl, err);
    if (st == TRAM_OK) st = tram_solve_points(r, a->setup, obs, mdl, &a->so, s, err);
    tram_point_obs_destroy(obs);
    tram_point_model_destroy(mdl);
    return st;
}

/* Calibration file, report (text or JSON), warnings and pictures; the
 * exit status.  The calibration file is written first: if it cannot be,
 * stdout stays empty. */
static int emit_results(const tram_records *r, const tram_solution *s, const solve_args *a)
{
    char *text = NULL;
    int rc = CLI_EXIT_OK;
    tram_error err;
    tram_error_clear(&err);
    if (a->out_path && s->solved) {
        if (tram_solution_to_json(s, r, a->method, 1, &text, &err) != TRAM_OK ||
            tram_file_write_atomic(a->out_path, text, strlen(text), a->force, &err) != TRAM_OK) {
            cli_report(&err);
            rc = CLI_EXIT_USAGE;
        }
        free(text);
        text = NULL;
    }
    if (rc == CLI_EXIT_OK && a->json) {
        if (tram_solution_to_json(s, r, a->method, 0, &text, &err) != TRAM_OK) {
            cli_report(&err);
            rc = CLI_EXIT_USAGE;
        } else {
            fputs(text, stdout);
        }
        free(text);
    } else if (rc == CLI_EXIT_OK) {
        print_summary(s, r);
        if (a->out_path && s->solved) printf("calibration written to %s\n", a->out_path);
    }
    if (a->out_path && !s->solved)
        fprintf(stderr, "tram solve: no calibration file written: nothing was determined\n");
    for (size_t i = 0; rc == CLI_EXIT_OK && i < s->ndiag; i++)
        if (s->diag[i].severity >= TRAM_SEVERITY_WARNING)
            fprintf(stderr, "tram solve: %s: %s\n",
                    s->diag[i].severity == TRAM_SEVERITY_ERROR ? "error" : "warning",
                    s->diag[i].message);
    fflush(stdout); /* the report before the picture: lines (stderr) when piped */
    if (rc == CLI_EXIT_OK && a->plot_dir && s->solved) rc = cli_plot_solution(r, s, a->plot_dir, a->force);
    if (rc == CLI_EXIT_OK && (!s->solved || !s->trustworthy)) rc = CLI_EXIT_UNDETERMINED;
    return rc;
}

int cli_solve(int argc, char **argv)
{
    solve_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != CLI_EXIT_OK) return rc;
    /* every output checked before the solve, so that nothing is written
     * when one of them would fail */
    const char *inputs[] = {a.file, a.chain, a.points, a.model};
    rc = cli_check_outputs("solve", inputs, 4, a.out_path, "-o", a.plot_dir);
    if (rc != CLI_EXIT_OK) return rc;
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    /* without --setup the file must declare it: listed by the reader with
     * every other missing declaration, in one run */
    a.ro.need_setup = a.setup == TRAM_SETUP_UNSET;
    tram_status st = tram_records_read_file(a.file, &a.ro, &r, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(st);
    }
    cli_records_warnings(r);
    tram_pair *pair_list = NULL;
    rc = cli_apply_chain(a.chain, r) != CLI_EXIT_OK || cli_apply_tool(a.tool, r) != CLI_EXIT_OK
             ? CLI_EXIT_USAGE
             : resolve_setup(r, &a);
    if (rc == CLI_EXIT_OK) rc = apply_record_options(r, &a, &pair_list);
    if (rc != CLI_EXIT_OK) {
        tram_records_destroy(r);
        free(pair_list);
        return rc;
    }
    tram_solution *s = NULL;
    st = run_solve(r, &a, &s, &err);
    if ((st != TRAM_OK && st != TRAM_EUNDETERMINED) || !s) {
        cli_report(&err);
        rc = st == TRAM_OK ? CLI_EXIT_USAGE : cli_exit_for(st);
    } else {
        rc = emit_results(r, s, &a);
    }
    tram_solution_destroy(s);
    tram_records_destroy(r);
    free(pair_list);
    return rc;
}
