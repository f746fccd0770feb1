/*
 * cmd_convert.c - "tram convert": rewrite a record file, the transforms of
 * a calibration file, or one pose given on the command line, in another
 * rotation representation and units (docs/convert.md).
 */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

const char cli_convert_help[] =
    "usage: tram convert --to REP [OPTIONS] FILE\n"
    "       tram convert --to REP --pose REP:NUMBERS [OPTIONS]\n\n"
    "Rewrites every pose block of a record file (CSV or JSON, '-' for stdin) in the\n"
    "representation REP and prints a valid v1 record file on stdout.  Poses come out in\n"
    "their default directions (robot-pose flange-in-base, sensor-pose target-in-sensor)\n"
    "with every directive written out; numbers use 17 significant digits (they read\n"
    "back bit for bit) unless --digits N is given.\n"
    "A calibration file (from 'tram solve -o') gives its two transforms instead, one\n"
    "a line (T_flange_sensor and T_base_target, or T_base_sensor and T_flange_target),\n"
    "e.g. for a robot controller's tool-frame or user-frame entry (docs/convert.md);\n"
    "with --to euler:SEQ, comment lines give the Euler angles' 1-sigma and 95%\n"
    "half-widths (not defined near gimbal lock; docs/report.md).\n\n"
    "REP: quat (qw,qx,qy,qz, scalar first) | quat-xyzw (qx,qy,qz,qw, scalar last)\n"
    "     | rotvec | matrix (row-major r11..r33)\n"
    "     | euler:SEQ with SEQ one of the 24 conventions, e.g. euler:zyx-intrinsic,\n"
    "       euler:xyz-extrinsic (intrinsic: about the moving axes; extrinsic: fixed axes)\n\n"
    "options:\n"
    "  --to REP                 output representation (required)\n"
    "  --length-unit U          output length unit: mm, cm, m, in (default: the input's)\n"
    "  --angle-unit U           output angle unit: deg, rad (default: the input's)\n"
    "  --digits N               N significant digits (1..17) for people; default 17,\n"
    "                           exact for machines (CSV and the one-line forms)\n"
    "  --from-length-unit U     input length unit when the file does not declare one\n"
    "  --from-angle-unit U      input angle unit when the file does not declare one\n"
    "  --format csv|json        output file format (default csv)\n"
    "  --reorthonormalize       accept rotation matrices that are only rounded and\n"
    "                           project them onto the nearest rotation\n"
    "  --tool 'X,Y,ZUNIT ROT'   the robot poses are tool (TCP) poses (robot-pose:\n"
    "                           tool-in-base): written as flange poses with this tool,\n"
    "                           e.g. '0,0,150mm quat:1,0,0,0' (docs/records.md)\n"
    "  --rounded-quat           accept quaternions rounded to a few decimals (norm\n"
    "                           within 0.01 of 1; default 1e-6) and normalise them\n\n"
    "one pose on the command line:\n"
    "  --pose REP:x,y,z,ROT...  e.g. --pose quat:10,0,5,1,0,0,0\n"
    "                           or   --pose euler:zyx-intrinsic:0,0,0,90,0,0\n"
    "                                --from-angle-unit deg\n"
    "  The numbers are x, y, z and the rotation numbers of REP.  Angles in the input need\n"
    "  --from-angle-unit; lengths are converted only when both --from-length-unit and\n"
    "  --length-unit are given (otherwise they are printed in the unit they were given\n"
    "  in, and the output says so).  Prints a line of names and a line of numbers.\n\n"
    "examples (from the top of the source tree):\n"
    "  tram convert --to euler:zyx-intrinsic --angle-unit deg datasets/demo/wrist_camera.csv\n"
    "  tram convert --pose quat:10,0,5,1,0,0,0 --to rotvec --angle-unit deg\n"
    "  tram convert --pose euler:zyx-intrinsic:0,0,0,90,0,0 --from-angle-unit deg --to quat\n"
    "  tram solve --force -o wrist.cal.json datasets/demo/wrist_camera.csv\n"
    "  tram convert --to quat-xyzw --length-unit m --digits 6 wrist.cal.json\n\n"
    "exit status: 0 success; 2 usage or input error (message names file:line:column);\n"
    "3 a calibration file whose solve was not trustworthy (its transforms are printed\n"
    "under a NOT trustworthy line).\n";

/* The command line of one convert run. */
typedef struct convert_args {
    const char *to, *file, *pose, *tool;
    tram_output_rep rep;
    tram_length_unit from_lu;
    tram_angle_unit from_au;
    int json, reortho;
    double quat_tol;
} convert_args;

static int parse_length(const char *cmd, const char *v, tram_length_unit *out)
{
    *out = tram_unit_length_parse(v);
    if (*out == TRAM_LENGTH_UNSET) {
        cli_usage_error(cmd, "length unit '%s': expected mm, cm, m or in", v);
        return -1;
    }
    return 0;
}

static int parse_angle(const char *cmd, const char *v, tram_angle_unit *out)
{
    *out = tram_unit_angle_parse(v);
    if (*out == TRAM_ANGLE_UNSET) {
        cli_usage_error(cmd, "angle unit '%s': expected deg or rad", v);
        return -1;
    }
    return 0;
}

static const char *rep_columns(tram_rep_kind k)
{
    switch (k) {
    case TRAM_REP_QUAT: return "qw,qx,qy,qz";
    case TRAM_REP_ROTVEC: return "rx,ry,rz";
    case TRAM_REP_MATRIX: return "r11,r12,r13,r21,r22,r23,r31,r32,r33";
    default: return "e1,e2,e3";
    }
}

/* Write r in representation o to memory; the text (caller frees) or NULL
 * after printing the error. */
static char *write_to_memory(const tram_records *r, const tram_output_rep *o, int json)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&buf, &len);
    if (!mem) {
        fprintf(stderr, "tram convert: error: out of memory\n");
        return NULL;
    }
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_records_write(r, o, json, mem, &err);
    fclose(mem);
    if (st != TRAM_OK) {
        free(buf);
        if (err.file[0]) cli_report(&err);
        else fprintf(stderr, "tram convert: error: %s\n", err.message);
        return NULL;
    }
    return buf;
}

/* The "# ..." line that names the units and convention of the numbers. */
static void print_units(const tram_output_rep *o, const char *length)
{
    printf("# length-unit: %s", length);
    if (o->kind == TRAM_REP_ROTVEC || o->kind == TRAM_REP_EULER)
        printf(", angle-unit: %s", tram_unit_angle_name(o->angle_unit));
    if (o->kind == TRAM_REP_EULER) printf(", euler: %s", tram_euler_name(o->euler));
    if (o->kind == TRAM_REP_QUAT)
        printf(", quaternion %s", o->quat_xyzw ? "qx,qy,qz,qw (scalar last)" : "qw,qx,qy,qz (scalar first)");
    printf("\n");
}

/* Print the table rows of a written record text as "FIRST,numbers" lines
 * under a header "HEAD,names" (robot_ prefixes dropped).  ids: the first
 * column of each row (NULL: drop the first column). */
static void print_rows(char *text, const char *head, const char *const *ids)
{
    int row = -1;
    for (char *p = strtok(text, "\n"); p; p = strtok(NULL, "\n")) {
        if (p[0] == '#') continue;
        const char *rest = strchr(p, ',');
        if (!rest) continue;
        if (row < 0) {
            if (head) printf("%s,", head);
            for (const char *q = rest + 1; *q; q++)
                if (strncmp(q, "robot_", 6) == 0) q += 5;
                else putchar(*q);
            putchar('\n');
        } else {
            if (ids) printf("%s,", ids[row]);
            printf("%s\n", rest + 1);
        }
        row++;
    }
}

/* One pose: build a one-station record file in memory and read it with the
 * library, so the same checks apply as to files. */
static int convert_one(const convert_args *a)
{
    tram_output_rep in_rep;
    const char *colon = strrchr(a->pose, ':');
    if (!colon) return cli_usage_error("convert", "--pose '%s': expected REP:x,y,z,...", a->pose);
    char repname[64];
    size_t rl = (size_t)(colon - a->pose);
    if (rl >= sizeof repname) return cli_usage_error("convert", "--pose: representation too long");
    memcpy(repname, a->pose, rl);
    repname[rl] = '\0';
    if (tram_output_rep_parse(repname, &in_rep) != 0)
        return cli_usage_error("convert", "--pose '%s': unknown representation '%s'", a->pose,
                               repname);
    if ((in_rep.kind == TRAM_REP_ROTVEC || in_rep.kind == TRAM_REP_EULER) &&
        a->from_au == TRAM_ANGLE_UNSET)
        return cli_usage_error("convert", "--pose holds angles: give --from-angle-unit deg or rad "
                                          "(the unit of the angles in --pose)");
    if (a->rep.length_unit != TRAM_LENGTH_UNSET && a->from_lu == TRAM_LENGTH_UNSET)
        return cli_usage_error("convert",
                               "--length-unit converts lengths: give --from-length-unit too");
    char text[2048];
    /* Without a unit the lengths pass through unchanged; mm is only the
     * reader's placeholder and is not printed as the unit. */
    int n = snprintf(text, sizeof text, "# length-unit: %s\n",
                     tram_unit_length_name(a->from_lu != TRAM_LENGTH_UNSET ? a->from_lu
                                                                           : TRAM_LENGTH_MM));
    if (a->from_au != TRAM_ANGLE_UNSET)
        n += snprintf(text + n, sizeof text - (size_t)n, "# angle-unit: %s\n",
                      tram_unit_angle_name(a->from_au));
    if (in_rep.kind == TRAM_REP_EULER)
        n += snprintf(text + n, sizeof text - (size_t)n, "# robot-euler: %s\n",
                      tram_euler_name(in_rep.euler));
    const char *names = in_rep.quat_xyzw ? "qx,qy,qz,qw" : rep_columns(in_rep.kind);
    n += snprintf(text + n, sizeof text - (size_t)n, "robot_x,robot_y,robot_z");
    while (*names) {
        const char *e = strchr(names, ',');
        size_t l = e ? (size_t)(e - names) : strlen(names);
        n += snprintf(text + n, sizeof text - (size_t)n, ",robot_%.*s", (int)l, names);
        names += l + (e ? 1 : 0);
    }
    n += snprintf(text + n, sizeof text - (size_t)n, "\n%s\n", colon + 1);
    if (n >= (int)sizeof text) return cli_usage_error("convert", "--pose: too long");
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.reorthonormalize = a->reortho;
    opt.quat_norm_tol = a->quat_tol;
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_records_read_buffer("--pose", text, strlen(text), &opt, &r, &err) != TRAM_OK) {
        /* Line/column refer to the generated text; keep only the message. */
        fprintf(stderr, "tram convert: error: --pose: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    tram_output_rep o = a->rep;
    if (o.angle_unit == TRAM_ANGLE_UNSET) o.angle_unit = a->from_au;
    char *buf = write_to_memory(r, &o, 0);
    tram_records_destroy(r);
    if (!buf) return CLI_EXIT_USAGE;
    print_units(&o, o.length_unit != TRAM_LENGTH_UNSET ? tram_unit_length_name(o.length_unit)
                    : a->from_lu != TRAM_LENGTH_UNSET
                        ? tram_unit_length_name(a->from_lu)
                        : "as given (no --from-length-unit)");
    print_rows(buf, NULL, NULL);
    free(buf);
    return CLI_EXIT_OK;
}

/* 1 when the file is a calibration file (tram solve -o): its first bytes
 * name the format tram-calibration. */
static int is_calibration(const char *path)
{
    if (strcmp(path, "-") == 0) return 0;
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    char head[512];
    size_t n = fread(head, 1, sizeof head - 1, f);
    fclose(f);
    head[n] = '\0';
    return strstr(head, "\"tram-calibration\"") != NULL;
}

/* The Euler angles' 1-sigma and 95% half-widths of a calibration's two
 * transforms (tram_calibration_euler_intervals), as comment lines. */
static void print_euler_intervals(const tram_calibration *cal, const tram_output_rep *o,
                                  const char *const ids[2])
{
    int deg = o->angle_unit != TRAM_ANGLE_RAD;
    double k = deg ? 180.0 / 3.14159265358979323846 : 1.0;
    for (int b = 0; b < 2; b++) {
        tram_mat3 R;
        double t[3];
        tram_se3_to_rt(b ? &cal->Z : &cal->X, &R, t);
        tram_calibration_euler eu;
        if (!tram_calibration_euler_intervals(cal, b, &R, o->euler, &eu)) {
            if (cal->has_cov && isnan(eu.lock_distance_rad))
                printf("# %s e1,e2,e3: intervals not determined (no covariance in the file)\n",
                       ids[b]);
            else if (cal->has_cov)
                printf("# %s e1,e2,e3: intervals not defined, %.3f deg from the gimbal lock of "
                       "%s\n",
                       ids[b], eu.lock_distance_rad * 180.0 / 3.14159265358979323846,
                       tram_euler_name(o->euler));
            continue;
        }
        printf("# %s e1,e2,e3 1-sigma (%s): %.6g,%.6g,%.6g; 95%% half-width (%.3f sigma): "
               "%.6g,%.6g,%.6g\n",
               ids[b], deg ? "deg" : "rad", eu.sigma_rad[0] * k, eu.sigma_rad[1] * k,
               eu.sigma_rad[2] * k, eu.factor95, eu.half95_rad[0] * k, eu.half95_rad[1] * k,
               eu.half95_rad[2] * k);
    }
}

/* A calibration file: its two transforms, one a line, in the chosen form. */
static int convert_calibration(const convert_args *a)
{
    if (a->json)
        return cli_usage_error("convert", "--format json: a calibration file is already JSON; "
                                          "convert prints its transforms as CSV lines");
    tram_calibration *cal = NULL;
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_calibration_read_file(a->file, &cal, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    int eih = cal->setup == TRAM_SETUP_EYE_IN_HAND;
    const char *ids[2] = {eih ? "T_flange_sensor" : "T_base_sensor",
                          eih ? "T_base_target" : "T_flange_target"};
    double T[32];
    for (int k = 0; k < 2; k++)
        for (int i = 0; i < 16; i++) T[16 * k + i] = (k ? cal->Z : cal->X).m[i / 4][i % 4];
    tram_records *r = NULL;
    st = tram_records_from_poses(2, ids, T, NULL, cal->length_unit, TRAM_SETUP_UNSET, NULL, &r,
                                 &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        tram_calibration_destroy(cal);
        return CLI_EXIT_USAGE;
    }
    tram_output_rep o = a->rep;
    if (o.angle_unit == TRAM_ANGLE_UNSET) o.angle_unit = TRAM_ANGLE_DEG;
    char *buf = write_to_memory(r, &o, 0);
    tram_records_destroy(r);
    if (!buf) {
        tram_calibration_destroy(cal);
        return CLI_EXIT_USAGE;
    }
    printf("# calibration %s: setup %s, %zu stations; %s\n", a->file, tram_setup_name(cal->setup),
           cal->stations,
           cal->trustworthy ? "consistent with the data; NOT verified on the cell"
                            : "NOT trustworthy (see the solve's diagnostics); do not use");
    print_units(&o, tram_unit_length_name(o.length_unit != TRAM_LENGTH_UNSET ? o.length_unit
                                                                            : cal->length_unit));
    print_rows(buf, "transform", ids);
    if (o.kind == TRAM_REP_EULER) print_euler_intervals(cal, &o, ids);
    printf("# SAFETY: verify at reduced speed, keep clear of the working envelope, follow the\n"
           "# applicable robot-safety standards and local codes.\n");
    free(buf);
    int trustworthy = cal->trustworthy;
    tram_calibration_destroy(cal);
    return trustworthy ? CLI_EXIT_OK : CLI_EXIT_UNDETERMINED;
}

/* A record file, rewritten whole. */
static int convert_file(const convert_args *a)
{
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.length_unit = a->from_lu;
    opt.angle_unit = a->from_au;
    opt.reorthonormalize = a->reortho;
    opt.quat_norm_tol = a->quat_tol;
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_records_read_file(a->file, &opt, &r, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(st);
    }
    cli_records_warnings(r);
    if (cli_apply_tool(a->tool, r) != CLI_EXIT_OK) {
        tram_records_destroy(r);
        return CLI_EXIT_USAGE;
    }
    /* Written to memory first: on any error stdout stays empty. */
    char *buf = write_to_memory(r, &a->rep, a->json);
    tram_records_destroy(r);
    if (!buf) return CLI_EXIT_USAGE;
    fputs(buf, stdout);
    free(buf);
    return fflush(stdout) == 0 ? CLI_EXIT_OK : CLI_EXIT_USAGE;
}

/* One option at argv[*i]; 0 handled, else the exit status (-1: not an option). */
static int take_option(int argc, char **argv, int *i, convert_args *a)
{
    const char *v = NULL;
    int bad = 0;
    if (cli_take(argc, argv, i, "--to", &a->to, &bad)) {
    } else if (cli_take(argc, argv, i, "--pose", &a->pose, &bad)) {
    } else if (cli_take(argc, argv, i, "--tool", &a->tool, &bad)) {
    } else if (cli_take(argc, argv, i, "--length-unit", &v, &bad)) {
        if (!bad && parse_length("convert", v, &a->rep.length_unit)) return CLI_EXIT_USAGE;
    } else if (cli_take(argc, argv, i, "--angle-unit", &v, &bad)) {
        if (!bad && parse_angle("convert", v, &a->rep.angle_unit)) return CLI_EXIT_USAGE;
    } else if (cli_take(argc, argv, i, "--from-length-unit", &v, &bad)) {
        if (!bad && parse_length("convert", v, &a->from_lu)) return CLI_EXIT_USAGE;
    } else if (cli_take(argc, argv, i, "--from-angle-unit", &v, &bad)) {
        if (!bad && parse_angle("convert", v, &a->from_au)) return CLI_EXIT_USAGE;
    } else if (cli_take(argc, argv, i, "--digits", &v, &bad)) {
        if (bad) return CLI_EXIT_USAGE;
        char *end;
        long d = strtol(v, &end, 10);
        if (*end || end == v || d < 1 || d > 17)
            return cli_usage_error("convert", "--digits '%s': expected a whole number 1..17", v);
        a->rep.digits = (int)d;
    } else if (cli_take(argc, argv, i, "--format", &v, &bad)) {
        if (bad) return CLI_EXIT_USAGE;
        if (strcmp(v, "csv") == 0) a->json = 0;
        else if (strcmp(v, "json") == 0) a->json = 1;
        else return cli_usage_error("convert", "--format '%s': expected csv or json", v);
    } else if (cli_flag(argv, *i, "--reorthonormalize")) {
        a->reortho = 1;
    } else if (cli_flag(argv, *i, "--rounded-quat")) {
        a->quat_tol = TRAM_QUAT_NORM_MAX_FIX;
    } else {
        return -1;
    }
    return bad ? CLI_EXIT_USAGE : 0;
}

int cli_convert(int argc, char **argv)
{
    convert_args a;
    memset(&a, 0, sizeof a);
    a.from_lu = TRAM_LENGTH_UNSET;
    a.from_au = TRAM_ANGLE_UNSET;
    a.rep.length_unit = TRAM_LENGTH_UNSET;
    a.rep.angle_unit = TRAM_ANGLE_UNSET;
    for (int i = 1; i < argc; i++) {
        int rc = take_option(argc, argv, &i, &a);
        if (rc > 0) return rc;
        if (rc == 0) continue;
        if (argv[i][0] == '-' && argv[i][1] != '\0')
            return cli_usage_error("convert", "unknown option '%s'", argv[i]);
        if (a.file)
            return cli_usage_error("convert", "one input file expected, got '%s' and '%s'", a.file,
                                   argv[i]);
        a.file = argv[i];
    }
    if (!a.to) return cli_usage_error("convert", "--to REP is required");
    tram_output_rep parsed;
    if (tram_output_rep_parse(a.to, &parsed) != 0)
        return cli_usage_error("convert",
                               "--to '%s': expected quat, quat-xyzw, rotvec, matrix or euler:SEQ "
                               "(e.g. euler:zyx-intrinsic)",
                               a.to);
    parsed.length_unit = a.rep.length_unit;
    parsed.angle_unit = a.rep.angle_unit;
    parsed.digits = a.rep.digits;
    a.rep = parsed;
    if (a.json && a.rep.digits)
        return cli_usage_error("convert", "--digits applies to CSV output; JSON numbers always "
                                          "carry 17 digits");
    if (a.pose) {
        if (a.file) return cli_usage_error("convert", "give either --pose or a file, not both");
        return convert_one(&a);
    }
    if (!a.file) return cli_usage_error("convert", "no input file (use '-' for stdin)");
    return is_calibration(a.file) ? convert_calibration(&a) : convert_file(&a);
}
