/*
 * cmd_check.c - "tram check": has the sensor (or the target) moved since
 * it was calibrated?  Compares new stations with a calibration file.
 */
#include "cli.h"

#include <stdlib.h>
#include <string.h>
#include <time.h>

const char cli_check_help[] =
    "usage: tram check --calibration CALIB.json [OPTIONS] RECORDS\n\n"
    "Compares new stations (a record file of the same setup) with a calibration file\n"
    "written by 'tram solve -o', and gives a verdict:\n"
    "  ok             every deviation is consistent with the calibration's own noise\n"
    "                 (or within --tolerance)\n"
    "  sensor-moved   one rigid change of the sensor mount explains the deviations\n"
    "  target-moved   one rigid change of the target explains them\n"
    "  inconsistent   neither does (a robot, detection or data problem)\n"
    "  inconclusive   the stations cannot tell the causes apart (e.g. one station), or\n"
    "                 the record file is at fault (a convention or unit that fits the\n"
    "                 calibration, rows not paired, implausible deviations)\n\n"
    "options:\n"
    "  --calibration FILE   the calibration file (required)\n"
    "  --tolerance L,A      ok means every station within L and A, e.g. 0.5mm,0.1deg\n"
    "                       (default: a statistical test at a 1% false-alarm rate)\n"
    "  --history FILE       append one JSON line per check (atomic append)\n"
    "  --tool 'X,Y,ZUNIT ROT'  the robot poses are tool (TCP) poses: the tool's pose\n"
    "                       in the flange, e.g. '0,0,150mm quat:1,0,0,0' (docs/records.md)\n"
    "  --timestamp T        the time the history records, UTC YYYY-MM-DDTHH:MM:SSZ\n"
    "                       (default: now), e.g. when the stations were taken earlier\n"
    "  --json               print the result as JSON (docs/check.md)\n"
    "  --pairing-test N     random pairings of the pairing test (default 30)\n"
    "  --seed N             the pairing test's seed (default 1)\n"
    "  --no-plausibility    give the verdict without the convention search, the\n"
    "                       pairing test and the plausibility gate\n"
    "  --length-unit U, --angle-unit U, --reorthonormalize, --rounded-quat   as for\n"
    "                       tram solve\n\n"
    "examples (from the top of the source tree):\n"
    "  tram solve --force -o wrist.cal.json datasets/demo/wrist_camera.csv\n"
    "  tram check --calibration wrist.cal.json --history checks.jsonl datasets/demo/wrist_recheck.csv\n"
    "\n"
    "The calibration must hold its noise and its covariance (a covariance that is\n"
    "missing, asymmetric, not positive semi-definite or of the wrong size is refused).\n"
    "exit status: 0 ok; 1 sensor-moved, target-moved or inconsistent; 2 usage or input\n"
    "error (the message names file:line:column); 3 inconclusive.\n";

static int parse_tol(const char *v, double *len, tram_length_unit *lu, double *ang_rad)
{
    const char *comma = strchr(v, ',');
    if (!comma) return -1;
    char *end;
    *len = strtod(v, &end);
    if (end == v || !(*len >= 0)) return -1;
    char u[8] = {0};
    size_t ul = (size_t)(comma - end);
    if (ul == 0 || ul >= sizeof u) return -1;
    memcpy(u, end, ul);
    *lu = tram_unit_length_parse(u);
    if (*lu == TRAM_LENGTH_UNSET) return -1;
    *ang_rad = strtod(comma + 1, &end);
    if (end == comma + 1 || !(*ang_rad >= 0)) return -1;
    tram_angle_unit au = tram_unit_angle_parse(end);
    if (au == TRAM_ANGLE_UNSET) return -1;
    *ang_rad *= tram_unit_angle_in_rad(au);
    return 0;
}

static void print_change(const tram_change *m, const char *u, const char *label)
{
    printf("%s: %s (change of %s, in the %s frame)\n", label, m->model, m->transform, m->frame);
    printf("  translation (%s)   %10.4f %10.4f %10.4f   |%.4f|   1-sigma %.3g %.3g %.3g\n", u,
           m->translation[0], m->translation[1], m->translation[2], m->translation_norm,
           m->translation_sigma[0], m->translation_sigma[1], m->translation_sigma[2]);
    printf("  rotation (deg)     %10.4f %10.4f %10.4f   |%.4f|   1-sigma %.3g %.3g %.3g\n",
           m->rotation_deg[0], m->rotation_deg[1], m->rotation_deg[2], m->rotation_angle_deg,
           m->rotation_sigma_deg[0], m->rotation_sigma_deg[1], m->rotation_sigma_deg[2]);
    printf("  fit: chi2 %.1f against %.1f -> %s\n", m->fit_chi2, m->fit_threshold,
           m->fits ? "explains the stations" : "does not explain them");
}

static const char *advice(tram_verdict v)
{
    switch (v) {
    case TRAM_VERDICT_OK:
        return "the mount is consistent with the stored calibration. This check does not make a "
               "motion safe.";
    case TRAM_VERDICT_SENSOR_MOVED:
        return "STOP vision-guided motion: the sensor mount has moved. Inspect and fasten the "
               "bracket, then recalibrate.";
    case TRAM_VERDICT_TARGET_MOVED:
        return "STOP vision-guided motion: the target (or fixture) has moved. Restore it or "
               "recalibrate.";
    case TRAM_VERDICT_INCONSISTENT:
        return "STOP vision-guided motion: no single moved part explains the data. Check the "
               "robot (mastering, payload, collision), the target detection and the data.";
    default:
        return "NOT DECIDED: the stations cannot tell what moved, or the record file is at fault "
               "(see the warnings). Do not use the calibration until a check passes.";
    }
}

/* The command line of one check. */
typedef struct check_args {
    const char *calib, *file, *history, *tol, *chain, *stamp, *tool;
    int json, no_plaus;
    size_t perms;
    unsigned long long seed;
    tram_read_options ro;
} check_args;

/* One option at argv[*i]: 0 taken, -1 not an option, else the exit status. */
static int take_option(int argc, char **argv, int *i, check_args *a)
{
    const char *v = NULL;
    char *end;
    int bad = 0;
    if (cli_take(argc, argv, i, "--calibration", &a->calib, &bad) ||
        cli_take(argc, argv, i, "--tolerance", &a->tol, &bad) ||
        cli_take(argc, argv, i, "--history", &a->history, &bad) ||
        cli_take(argc, argv, i, "--chain", &a->chain, &bad) ||
        cli_take(argc, argv, i, "--tool", &a->tool, &bad) ||
        cli_take(argc, argv, i, "--timestamp", &a->stamp, &bad)) {
    } else if (cli_take(argc, argv, i, "--length-unit", &v, &bad)) {
        if (bad) return CLI_EXIT_USAGE;
        a->ro.length_unit = tram_unit_length_parse(v);
        if (a->ro.length_unit == TRAM_LENGTH_UNSET)
            return cli_usage_error("check", "--length-unit '%s': expected mm, cm, m or in", v);
    } else if (cli_take(argc, argv, i, "--angle-unit", &v, &bad)) {
        if (bad) return CLI_EXIT_USAGE;
        a->ro.angle_unit = tram_unit_angle_parse(v);
        if (a->ro.angle_unit == TRAM_ANGLE_UNSET)
            return cli_usage_error("check", "--angle-unit '%s': expected deg or rad", v);
    } else if (cli_take(argc, argv, i, "--pairing-test", &v, &bad)) {
        if (bad) return CLI_EXIT_USAGE;
        long n = strtol(v, &end, 10);
        if (*end || end == v || n < 1 || n > 10000)
            return cli_usage_error("check", "--pairing-test '%s': expected a count", v);
        a->perms = (size_t)n;
    } else if (cli_take(argc, argv, i, "--seed", &v, &bad)) {
        if (bad) return CLI_EXIT_USAGE;
        a->seed = strtoull(v, &end, 10);
        if (*end || end == v) return cli_usage_error("check", "--seed '%s': expected a number", v);
    } else if (cli_flag(argv, *i, "--no-plausibility")) {
        a->no_plaus = 1;
    } else if (cli_flag(argv, *i, "--json")) {
        a->json = 1;
    } else if (cli_flag(argv, *i, "--reorthonormalize")) {
        a->ro.reorthonormalize = 1;
    } else if (cli_flag(argv, *i, "--rounded-quat")) {
        a->ro.quat_norm_tol = TRAM_QUAT_NORM_MAX_FIX;
    } else {
        return -1;
    }
    return bad ? CLI_EXIT_USAGE : 0;
}

/* 1 when s is "YYYY-MM-DDTHH:MM:SSZ" with fields in range. */
static int valid_stamp(const char *s)
{
    static const char pat[] = "dddd-dd-ddTdd:dd:ddZ";
    if (strlen(s) != sizeof pat - 1) return 0;
    for (size_t i = 0; pat[i]; i++)
        if (pat[i] == 'd' ? !(s[i] >= '0' && s[i] <= '9') : s[i] != pat[i]) return 0;
    int mo = (s[5] - '0') * 10 + (s[6] - '0'), d = (s[8] - '0') * 10 + (s[9] - '0');
    int h = (s[11] - '0') * 10 + (s[12] - '0'), mi = (s[14] - '0') * 10 + (s[15] - '0');
    int se = (s[17] - '0') * 10 + (s[18] - '0');
    return mo >= 1 && mo <= 12 && d >= 1 && d <= 31 && h <= 23 && mi <= 59 && se <= 60;
}

static int parse_args(int argc, char **argv, check_args *a)
{
    memset(a, 0, sizeof *a);
    for (int i = 1; i < argc; i++) {
        int rc = take_option(argc, argv, &i, a);
        if (rc > 0) return rc;
        if (rc == 0) continue;
        if (argv[i][0] == '-' && argv[i][1] != '\0')
            return cli_usage_error("check", "unknown option '%s'", argv[i]);
        if (a->file)
            return cli_usage_error("check", "one record file expected, got '%s' and '%s'", a->file,
                                   argv[i]);
        a->file = argv[i];
    }
    if (!a->calib) return cli_usage_error("check", "--calibration FILE is required");
    if (!a->file) return cli_usage_error("check", "no record file (use '-' for stdin)");
    if (a->stamp && !valid_stamp(a->stamp))
        return cli_usage_error("check", "--timestamp '%s': expected UTC date and time as "
                                        "YYYY-MM-DDTHH:MM:SSZ, e.g. 2026-11-02T07:30:00Z",
                               a->stamp);
    if (a->stamp && !a->history)
        return cli_usage_error("check", "--timestamp goes with --history");
    return CLI_EXIT_OK;
}

/* The check's options, --tolerance in the calibration's length unit. */
static int check_options(const check_args *a, const tram_calibration *cal, tram_check_options *co)
{
    memset(co, 0, sizeof *co);
    co->no_plausibility = a->no_plaus;
    co->pairing_permutations = a->perms;
    co->seed = a->seed;
    if (!a->tol) return CLI_EXIT_OK;
    tram_length_unit tu;
    if (parse_tol(a->tol, &co->tol_length, &tu, &co->tol_angle_rad) != 0)
        return cli_usage_error("check", "--tolerance '%s': expected LENGTH,ANGLE with units, "
                                        "e.g. 0.5mm,0.1deg", a->tol);
    co->tol_length *= tram_unit_length_factor(tu, cal->length_unit);
    co->use_tolerance = 1;
    return CLI_EXIT_OK;
}

static int has_diag(const tram_check_result *res, const char *code)
{
    for (size_t i = 0; i < res->ndiag; i++)
        if (strcmp(res->diag[i].code, code) == 0) return 1;
    return 0;
}

/* The estimated change: attributed only when there is a change to attribute. */
static void print_changes(const tram_check_result *res, int tol_noise, const char *u)
{
    const tram_change *best = res->best ? &res->target : &res->sensor;
    const tram_change *other = res->best ? &res->sensor : &res->target;
    if (res->verdict == TRAM_VERDICT_OK || tol_noise) {
        /* nothing significant moved: no cause to name (a supervisor must not
         * read "target-moved ... explains the stations" after ok) */
        printf("no significant change: the deviations are within the stations' noise (the best\n"
               "  fitting change, %.4f %s and %.4f deg, is not significant and is not a cause)\n",
               best->translation_norm, u, best->rotation_angle_deg);
        return;
    }
    print_change(best, u, "estimated change");
    print_change(other, u, "alternative");
}

/* The test line: what ok means, and how many stations meet it. */
static void print_test(const tram_check_result *res, const tram_check_options *co, const char *u)
{
    if (!co->use_tolerance) {
        printf("\ntest: chi2 %.1f against %.1f (%zu dof) with the calibration's noise; false "
               "alarms 1%% (docs/check.md)\n",
               res->chi2_none, res->threshold_none, res->dof_none);
        return;
    }
    double tol_deg = co->tol_angle_rad * 180.0 / 3.14159265358979323846;
    size_t within = 0;
    for (size_t i = 0; i < res->n; i++)
        if (res->stations[i].trans <= co->tol_length && res->stations[i].rot_deg <= tol_deg)
            within++;
    printf("\ntest (--tolerance): ok needs every station within %.4g %s and %.4g deg; %zu of %zu "
           "are\n",
           co->tol_length, u, tol_deg, within, res->n);
}

static void print_report(const tram_check_result *res, const tram_records *r,
                         const tram_check_options *co, const char *calib)
{
    const char *u = tram_unit_length_name(res->length_unit);
    int tol_noise = has_diag(res, "tolerance-below-noise");
    printf("tram check: %s, %zu station(s) from %s against %s\n\n", tram_setup_name(res->setup),
           res->n, r->source, calib);
    printf("VERDICT: %s\n  %s\n\n", tram_verdict_name(res->verdict),
           tol_noise ? "NOT DECIDED: nothing changed beyond the stations' noise, but the "
                       "tolerance is tighter than that noise, so this check cannot confirm it "
                       "(see the warning). Do not rely on the tolerance until a check passes."
                     : advice(res->verdict));
    printf("station deviations from the stored calibration\n  %-16s %12s %12s\n", "station",
           "rotation deg", u);
    for (size_t i = 0; i < res->n; i++)
        printf("  %-16s %12.4f %12.4f%s\n", r->stations[i].id, res->stations[i].rot_deg,
               res->stations[i].trans, res->stations[i].disagrees ? "   disagrees" : "");
    printf("\n");
    print_changes(res, tol_noise, u);
    print_test(res, co, u);
    printf("stations' orientations differ by up to %.1f deg\n", res->orientation_spread_deg);
    for (size_t i = 0; i < res->ndiag; i++)
        printf("[%s] %s: %s\n", res->diag[i].severity ? "WARNING" : "note", res->diag[i].code,
               res->diag[i].message);
    printf("\n%s", cli_safety_text);
}

/* Append the check to the history file; CLI_EXIT_OK or the exit status. */
static int append_history(const char *history, const char *given, const tram_check_result *res,
                          const tram_records *r)
{
    char stamp[40], *line = NULL;
    time_t now = time(NULL);
    struct tm tmv;
    gmtime_r(&now, &tmv);
    strftime(stamp, sizeof stamp, "%Y-%m-%dT%H:%M:%SZ", &tmv);
    if (given) snprintf(stamp, sizeof stamp, "%s", given);
    tram_error err;
    tram_error_clear(&err);
    int rc = CLI_EXIT_OK;
    if (tram_check_result_to_json(res, r, 1, stamp, &line, &err) != TRAM_OK ||
        tram_file_append_line(history, line, &err) != TRAM_OK) {
        cli_report(&err);
        rc = CLI_EXIT_USAGE;
    }
    free(line);
    return rc;
}

/* Print the result (JSON or text) and map the verdict to the exit status. */
static int report(const check_args *a, const tram_check_result *res, const tram_records *r,
                  const tram_check_options *co)
{
    if (a->history && append_history(a->history, a->stamp, res, r) != CLI_EXIT_OK) return CLI_EXIT_USAGE;
    if (a->json) {
        char *text = NULL;
        tram_error err;
        tram_error_clear(&err);
        if (tram_check_result_to_json(res, r, 0, NULL, &text, &err) != TRAM_OK) {
            cli_report(&err);
            free(text);
            return CLI_EXIT_USAGE;
        }
        fputs(text, stdout);
        free(text);
    } else {
        print_report(res, r, co, a->calib);
    }
    switch (res->verdict) {
    case TRAM_VERDICT_OK: return CLI_EXIT_OK;
    case TRAM_VERDICT_INCONCLUSIVE: return CLI_EXIT_UNDETERMINED;
    default: return CLI_EXIT_VERDICT;
    }
}

int cli_check(int argc, char **argv)
{
    check_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != CLI_EXIT_OK) return rc;
    const char *inputs[] = {a.file, a.calib, a.chain, a.tool};
    if (cli_check_outputs("check", inputs, 4, a.history, "--history", NULL) != CLI_EXIT_OK)
        return CLI_EXIT_USAGE;
    tram_error err;
    tram_error_clear(&err);
    tram_calibration *cal = NULL;
    tram_records *r = NULL;
    tram_check_result *res = NULL;
    tram_check_options co;
    if (tram_calibration_read_file(a.calib, &cal, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    rc = check_options(&a, cal, &co);
    if (rc == CLI_EXIT_OK && tram_records_read_file(a.file, &a.ro, &r, &err) != TRAM_OK) {
        cli_report(&err);
        rc = CLI_EXIT_USAGE;
    }
    if (rc == CLI_EXIT_OK) {
        cli_records_warnings(r);
        rc = cli_apply_chain(a.chain, r) != CLI_EXIT_OK || cli_apply_tool(a.tool, r) != CLI_EXIT_OK
                 ? CLI_EXIT_USAGE
                 : CLI_EXIT_OK;
    }
    if (rc == CLI_EXIT_OK && tram_check(cal, r, &co, &res, &err) != TRAM_OK) {
        cli_report(&err);
        rc = CLI_EXIT_USAGE;
    }
    if (rc == CLI_EXIT_OK) rc = report(&a, res, r, &co);
    tram_check_result_destroy(res);
    tram_records_destroy(r);
    tram_calibration_destroy(cal);
    return rc;
}
