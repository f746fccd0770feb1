/*
 * cmd_report.c - "tram report": the calibration record as a PDF
 * (docs/report.md), through tram_report_write_pdf.
 */
#include "cli.h"

#include <string.h>

const char cli_report_help[] =
    "usage: tram report CALIB.json -o REPORT.pdf --euler SEQ [--page a4|letter]\n"
    "                   [--history HISTORY.jsonl] [--computed-by NAME] [--force]\n\n"
    "Lays out a calibration file (tram solve -o) as a PDF record to file or hand over:\n"
    "the setup and what each transform means; each transform as matrix, translation,\n"
    "unit quaternion, rotation vector and Euler angles in the convention SEQ, with\n"
    "units; the 1-sigma and 95% intervals (also per Euler angle, not defined within 1\n"
    "degree of gimbal lock); the station residuals and outliers; the\n"
    "frames and residuals pictures (and the check history when given); observability\n"
    "and diagnostics; the input files with their SHA-256 hashes; tram's version and\n"
    "the date; the safety block; and lines for 'computed by' and 'verified on the cell\n"
    "by (name, date)'.  The report never calls a result verified or safe.\n\n"
    "options:\n"
    "  -o FILE.pdf        output (written atomically; --force to replace)\n"
    "  --euler SEQ        the Euler convention of the angles shown (required; e.g.\n"
    "                     zyx-intrinsic, xyz-extrinsic: any of the 24 of docs/notation.md)\n"
    "  --page P           a4 (ISO 216, 210x297 mm; default) or letter (8.5x11 in)\n"
    "  --history F        a check history file (tram check --history) to draw and list\n"
    "  --computed-by NAME fills in the 'computed by' line (default: a blank line)\n"
    "  --force            replace an existing output file\n\n"
    "The report's date is now (UTC), or SOURCE_DATE_EPOCH when set (reproducible\n"
    "output).  exit status: 0 success; 2 usage or input error.\n\n"
    "examples:\n"
    "  tram solve -o build/wrist.json datasets/demo/wrist_camera.csv\n"
    "  tram report build/wrist.json -o build/wrist.pdf --euler zyx-intrinsic\n"
    "  tram report build/wrist.json -o build/wrist-letter.pdf --euler xyz-extrinsic --page letter\n";

int cli_report_cmd(int argc, char **argv)
{
    const char *out = NULL, *euler = NULL, *page_s = "a4", *history = NULL, *by = NULL;
    const char *cal = NULL;
    int force = 0, bad = 0;
    for (int i = 1; i < argc && !bad; i++) {
        if (cli_take(argc, argv, &i, "-o", &out, &bad)) {
        } else if (cli_take(argc, argv, &i, "--euler", &euler, &bad)) {
        } else if (cli_take(argc, argv, &i, "--page", &page_s, &bad)) {
        } else if (cli_take(argc, argv, &i, "--history", &history, &bad)) {
        } else if (cli_take(argc, argv, &i, "--computed-by", &by, &bad)) {
        } else if (cli_flag(argv, i, "--force")) {
            force = 1;
        } else if (argv[i][0] == '-' && argv[i][1]) {
            return cli_usage_error("report", "unknown option '%s' (see 'tram help report')", argv[i]);
        } else if (cal) {
            return cli_usage_error("report", "one calibration file only ('%s' and '%s')", cal, argv[i]);
        } else {
            cal = argv[i];
        }
    }
    if (bad) return CLI_EXIT_USAGE;
    if (!cal) return cli_usage_error("report", "a calibration file is required (tram solve -o writes one)");
    if (!out) return cli_usage_error("report", "-o REPORT.pdf is required");
    if (!euler)
        return cli_usage_error("report", "--euler SEQ is required: the convention of the Euler "
                                         "angles shown (e.g. zyx-intrinsic); none is assumed");
    tram_report_options opt;
    memset(&opt, 0, sizeof opt);
    opt.euler = tram_euler_parse(euler);
    if (opt.euler == TRAM_EULER_UNSET)
        return cli_usage_error("report", "--euler '%s': expected an axis sequence and a kind, "
                                         "e.g. zyx-intrinsic or xyz-extrinsic",
                               euler);
    tram_error err;
    tram_error_clear(&err);
    if (tram_plot_page_parse(page_s, &opt.page, &err) != TRAM_OK || !opt.page.named)
        return cli_usage_error("report", "--page '%s': expected a4 or letter", page_s);
    char date[32];
    if (tram_report_date_now(date, sizeof date, &err) != TRAM_OK)
        return cli_usage_error("report", "%s", err.message);
    opt.date_utc = date;
    opt.history_path = history;
    opt.computed_by = by;
    int pages = 0;
    tram_status st = tram_report_write_pdf(cal, &opt, out, force, &pages, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(st);
    }
    printf("report: %d pages (%s, Euler angles %s) written to %s\n", pages, opt.page.name,
           tram_euler_name(opt.euler), out);
    printf("The report records a result that is NOT verified on the cell; it leaves the\n"
           "verification lines blank for the people who verify it at reduced speed.\n");
    return CLI_EXIT_OK;
}
