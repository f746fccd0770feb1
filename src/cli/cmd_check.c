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
    "  --json               print the result as JSON (docs/check.md)\n"
    "  --pairing-test N     random pairings of the pairing test (default 30)\n"
    "  --seed N             the pairing test's seed (default 1)\n"
    "  --no-plausibility    give the verdict without the convention search, the\n"
    "                       pairing test and the plausibility gate\n"
    "  --length-unit U, --angle-unit U, --reorthonormalize   as for tram solve\n\n"
    "exit status: 0 ok; 1 sensor-moved, target-moved or inconsistent; 2 usage or input\n"
    "error; 3 inconclusive.\n";

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

int cli_check(int argc, char **argv)
{
    const char *calib = NULL, *file = NULL, *history = NULL, *tol = NULL, *v = NULL,
               *chain = NULL;
    int json = 0, bad = 0, no_plaus = 0;
    size_t perms = 0;
    unsigned long long seed = 0;
    tram_read_options ro;
    memset(&ro, 0, sizeof ro);
    for (int i = 1; i < argc; i++) {
        char *end;
        if (cli_take(argc, argv, &i, "--calibration", &calib, &bad)) {
        } else if (cli_take(argc, argv, &i, "--tolerance", &tol, &bad)) {
        } else if (cli_take(argc, argv, &i, "--history", &history, &bad)) {
        } else if (cli_take(argc, argv, &i, "--chain", &chain, &bad)) {
        } else if (cli_take(argc, argv, &i, "--length-unit", &v, &bad)) {
            if (bad) break;
            ro.length_unit = tram_unit_length_parse(v);
            if (ro.length_unit == TRAM_LENGTH_UNSET)
                return cli_usage_error("check", "--length-unit '%s': expected mm, cm, m or in", v);
        } else if (cli_take(argc, argv, &i, "--angle-unit", &v, &bad)) {
            if (bad) break;
            ro.angle_unit = tram_unit_angle_parse(v);
            if (ro.angle_unit == TRAM_ANGLE_UNSET)
                return cli_usage_error("check", "--angle-unit '%s': expected deg or rad", v);
        } else if (cli_take(argc, argv, &i, "--pairing-test", &v, &bad)) {
            if (bad) break;
            long n = strtol(v, &end, 10);
            if (*end || end == v || n < 1 || n > 10000)
                return cli_usage_error("check", "--pairing-test '%s': expected a count", v);
            perms = (size_t)n;
        } else if (cli_take(argc, argv, &i, "--seed", &v, &bad)) {
            if (bad) break;
            seed = strtoull(v, &end, 10);
            if (*end || end == v) return cli_usage_error("check", "--seed '%s': expected a number", v);
        } else if (cli_flag(argv, i, "--no-plausibility")) {
            no_plaus = 1;
        } else if (cli_flag(argv, i, "--json")) {
            json = 1;
        } else if (cli_flag(argv, i, "--reorthonormalize")) {
            ro.reorthonormalize = 1;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("check", "unknown option '%s'", argv[i]);
        } else if (file) {
            return cli_usage_error("check", "one record file expected, got '%s' and '%s'", file,
                                   argv[i]);
        } else {
            file = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!calib) return cli_usage_error("check", "--calibration FILE is required");
    if (!file) return cli_usage_error("check", "no record file (use '-' for stdin)");
    const char *inputs[] = {file, calib, chain};
    if (cli_check_outputs("check", inputs, 3, history, "--history", NULL) != CLI_EXIT_OK)
        return CLI_EXIT_USAGE;
    tram_error err;
    tram_error_clear(&err);
    tram_calibration *cal = NULL;
    tram_status st = tram_calibration_read_file(calib, &cal, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    tram_check_options co;
    memset(&co, 0, sizeof co);
    co.no_plausibility = no_plaus;
    co.pairing_permutations = perms;
    co.seed = seed;
    if (tol) {
        tram_length_unit tu;
        if (parse_tol(tol, &co.tol_length, &tu, &co.tol_angle_rad) != 0) {
            tram_calibration_destroy(cal);
            return cli_usage_error("check", "--tolerance '%s': expected LENGTH,ANGLE with units, "
                                            "e.g. 0.5mm,0.1deg", tol);
        }
        co.tol_length *= tram_unit_length_factor(tu, cal->length_unit);
        co.use_tolerance = 1;
    }
    tram_records *r = NULL;
    st = tram_records_read_file(file, &ro, &r, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        tram_calibration_destroy(cal);
        return CLI_EXIT_USAGE;
    }
    if (cli_apply_chain(chain, r) != CLI_EXIT_OK) {
        tram_records_destroy(r);
        tram_calibration_destroy(cal);
        return CLI_EXIT_USAGE;
    }
    tram_check_result *res = NULL;
    st = tram_check(cal, r, &co, &res, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        tram_records_destroy(r);
        tram_calibration_destroy(cal);
        return CLI_EXIT_USAGE;
    }
    int rc = CLI_EXIT_OK;
    if (history) {
        char stamp[40], *line = NULL;
        time_t now = time(NULL);
        struct tm tmv;
        gmtime_r(&now, &tmv);
        strftime(stamp, sizeof stamp, "%Y-%m-%dT%H:%M:%SZ", &tmv);
        if (tram_check_result_to_json(res, r, 1, stamp, &line, &err) != TRAM_OK ||
            tram_file_append_line(history, line, &err) != TRAM_OK) {
            cli_report(&err);
            rc = CLI_EXIT_USAGE;
        }
        free(line);
    }
    if (rc == CLI_EXIT_OK && json) {
        char *text = NULL;
        if (tram_check_result_to_json(res, r, 0, NULL, &text, &err) != TRAM_OK) {
            cli_report(&err);
            rc = CLI_EXIT_USAGE;
        } else {
            fputs(text, stdout);
        }
        free(text);
    } else if (rc == CLI_EXIT_OK) {
        const char *u = tram_unit_length_name(res->length_unit);
        printf("tram check: %s, %zu station(s) from %s against %s\n\n", tram_setup_name(res->setup),
               res->n, r->source, calib);
        printf("VERDICT: %s\n  %s\n\n", tram_verdict_name(res->verdict), advice(res->verdict));
        printf("station deviations from the stored calibration\n  %-16s %12s %12s\n", "station",
               "rotation deg", u);
        for (size_t i = 0; i < res->n; i++)
            printf("  %-16s %12.4f %12.4f%s\n", r->stations[i].id, res->stations[i].rot_deg,
                   res->stations[i].trans, res->stations[i].disagrees ? "   disagrees" : "");
        printf("\n");
        const tram_change *best = res->best ? &res->target : &res->sensor;
        const tram_change *other = res->best ? &res->sensor : &res->target;
        print_change(best, u, res->verdict == TRAM_VERDICT_OK ? "estimated change (not significant)"
                                                              : "estimated change");
        print_change(other, u, "alternative");
        if (co.use_tolerance)
            printf("\ntest: every station within %.4g %s and %.4g deg\n", co.tol_length, u,
                   co.tol_angle_rad * 180.0 / 3.14159265358979323846);
        else
            printf("\ntest: chi2 %.1f against %.1f (%zu dof) with the calibration's noise; false "
                   "alarms 1%% (docs/check.md)\n",
                   res->chi2_none, res->threshold_none, res->dof_none);
        printf("stations' orientations differ by up to %.1f deg\n", res->orientation_spread_deg);
        for (size_t i = 0; i < res->ndiag; i++)
            printf("[%s] %s: %s\n", res->diag[i].severity ? "WARNING" : "note", res->diag[i].code,
                   res->diag[i].message);
        printf("\n%s", cli_safety_text);
    }
    if (rc == CLI_EXIT_OK) {
        switch (res->verdict) {
        case TRAM_VERDICT_OK: rc = CLI_EXIT_OK; break;
        case TRAM_VERDICT_INCONCLUSIVE: rc = CLI_EXIT_UNDETERMINED; break;
        default: rc = CLI_EXIT_VERDICT; break;
        }
    }
    tram_check_result_destroy(res);
    tram_records_destroy(r);
    tram_calibration_destroy(cal);
    return rc;
}
