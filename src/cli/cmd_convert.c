/*
 * cmd_convert.c - "tram convert": rewrite a record file, or one pose given
 * on the command line, in another rotation representation and units.
 */
#include "cli.h"

#include <stdlib.h>
#include <string.h>

const char cli_convert_help[] =
    "usage: tram convert --to REP [OPTIONS] FILE\n"
    "       tram convert --to REP --pose REP:NUMBERS [OPTIONS]\n\n"
    "Rewrites every pose block of a record file (CSV or JSON, '-' for stdin) in the\n"
    "representation REP and prints a valid v1 record file on stdout.  Poses come out in\n"
    "their default directions (robot-pose flange-in-base, sensor-pose target-in-sensor)\n"
    "with every directive written out; numbers use 17 significant digits.\n\n"
    "REP: quat (qw,qx,qy,qz, scalar first) | rotvec | matrix (row-major r11..r33)\n"
    "     | euler:SEQ with SEQ one of the 24 conventions, e.g. euler:zyx-intrinsic,\n"
    "       euler:xyz-extrinsic (intrinsic: about the moving axes; extrinsic: fixed axes)\n\n"
    "options:\n"
    "  --to REP                 output representation (required)\n"
    "  --length-unit U          output length unit: mm, cm, m, in (default: the input's)\n"
    "  --angle-unit U           output angle unit: deg, rad (default: the input's)\n"
    "  --from-length-unit U     input length unit when the file does not declare one\n"
    "  --from-angle-unit U      input angle unit when the file does not declare one\n"
    "  --format csv|json        output file format (default csv)\n"
    "  --reorthonormalize       accept rotation matrices that are only rounded and\n"
    "                           project them onto the nearest rotation\n"
    "  --tool 'X,Y,ZUNIT ROT'   the robot poses are tool (TCP) poses (robot-pose:\n"
    "                           tool-in-base): written as flange poses with this tool,\n"
    "                           e.g. '0,0,150mm quat:1,0,0,0' (docs/records.md)\n\n"
    "one pose on the command line:\n"
    "  --pose REP:x,y,z,ROT...  e.g. --pose quat:10,0,5,1,0,0,0\n"
    "                           or   --pose euler:zyx-intrinsic:0,0,0,90,0,0\n"
    "  The numbers are x, y, z and the rotation numbers of REP.  Angles in the input need\n"
    "  --from-angle-unit; lengths are converted only when both --from-length-unit and\n"
    "  --length-unit are given.  Prints a line of names and a line of numbers.\n\n"
    "exit status: 0 success, 2 usage or input error (message names file:line:column).\n";

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

/* One pose: build a one-station record file in memory and read it with the
 * library, so the same checks apply as to files. */
static int convert_one(const char *pose, const tram_output_rep *out_rep, tram_length_unit from_lu,
                       tram_angle_unit from_au, int reortho)
{
    tram_output_rep in_rep;
    const char *colon = strrchr(pose, ':');
    if (!colon) return cli_usage_error("convert", "--pose '%s': expected REP:x,y,z,...", pose);
    char repname[64];
    size_t rl = (size_t)(colon - pose);
    if (rl >= sizeof repname) return cli_usage_error("convert", "--pose: representation too long");
    memcpy(repname, pose, rl);
    repname[rl] = '\0';
    if (tram_output_rep_parse(repname, &in_rep) != 0)
        return cli_usage_error("convert",
                               "--pose: unknown representation '%s' (expected quat, rotvec, "
                               "matrix or euler:SEQ)",
                               repname);
    if ((in_rep.kind == TRAM_REP_ROTVEC || in_rep.kind == TRAM_REP_EULER) &&
        from_au == TRAM_ANGLE_UNSET)
        return cli_usage_error("convert", "--pose holds angles: give --from-angle-unit deg or rad");
    if (out_rep->length_unit != TRAM_LENGTH_UNSET && from_lu == TRAM_LENGTH_UNSET)
        return cli_usage_error("convert",
                               "--length-unit converts lengths: give --from-length-unit too");
    char text[2048];
    int n = snprintf(text, sizeof text, "# length-unit: %s\n",
                     tram_unit_length_name(from_lu != TRAM_LENGTH_UNSET ? from_lu : TRAM_LENGTH_MM));
    if (from_au != TRAM_ANGLE_UNSET)
        n += snprintf(text + n, sizeof text - (size_t)n, "# angle-unit: %s\n",
                      tram_unit_angle_name(from_au));
    if (in_rep.kind == TRAM_REP_EULER)
        n += snprintf(text + n, sizeof text - (size_t)n, "# robot-euler: %s\n",
                      tram_euler_name(in_rep.euler));
    n += snprintf(text + n, sizeof text - (size_t)n, "robot_x,robot_y,robot_z");
    const char *cols = rep_columns(in_rep.kind);
    while (*cols) {
        const char *e = strchr(cols, ',');
        size_t l = e ? (size_t)(e - cols) : strlen(cols);
        n += snprintf(text + n, sizeof text - (size_t)n, ",robot_%.*s", (int)l, cols);
        cols += l + (e ? 1 : 0);
    }
    n += snprintf(text + n, sizeof text - (size_t)n, "\n%s\n", colon + 1);
    if (n >= (int)sizeof text) return cli_usage_error("convert", "--pose: too long");
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.reorthonormalize = reortho;
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_records_read_buffer("--pose", text, strlen(text), &opt, &r, &err);
    if (st != TRAM_OK) {
        /* Line/column refer to the generated text; keep only the message. */
        fprintf(stderr, "tram convert: error: --pose: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    char *buf = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&buf, &len);
    if (!mem) {
        tram_records_destroy(r);
        return CLI_EXIT_USAGE;
    }
    tram_output_rep o = *out_rep;
    if (o.angle_unit == TRAM_ANGLE_UNSET) o.angle_unit = from_au;
    st = tram_records_write(r, &o, 0, mem, &err);
    fclose(mem);
    tram_records_destroy(r);
    if (st != TRAM_OK) {
        free(buf);
        if (err.file[0]) cli_report(&err);
        else fprintf(stderr, "tram convert: error: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    /* Keep the last two lines (header and numbers), without prefixes. */
    char *hdr = NULL;
    for (char *p = strtok(buf, "\n"); p; p = strtok(NULL, "\n"))
        if (p[0] != '#') {
            if (!hdr) {
                hdr = p;
                continue;
            }
            const char *h = strchr(hdr, ',');
            const char *v = strchr(p, ',');
            printf("# length-unit: %s", tram_unit_length_name(o.length_unit != TRAM_LENGTH_UNSET
                                                                  ? o.length_unit
                                                                  : r ? TRAM_LENGTH_MM : from_lu));
            if (o.kind == TRAM_REP_ROTVEC || o.kind == TRAM_REP_EULER)
                printf(", angle-unit: %s", tram_unit_angle_name(o.angle_unit));
            if (o.kind == TRAM_REP_EULER) printf(", euler: %s", tram_euler_name(o.euler));
            printf("\n");
            for (const char *q = h + 1; *q; q++)
                if (strncmp(q, "robot_", 6) == 0) q += 5;
                else putchar(*q);
            printf("\n%s\n", v + 1);
            break;
        }
    free(buf);
    return CLI_EXIT_OK;
}

int cli_convert(int argc, char **argv)
{
    const char *to = NULL, *file = NULL, *pose = NULL, *v = NULL, *tool = NULL;
    tram_output_rep rep;
    tram_length_unit from_lu = TRAM_LENGTH_UNSET, out_lu = TRAM_LENGTH_UNSET;
    tram_angle_unit from_au = TRAM_ANGLE_UNSET, out_au = TRAM_ANGLE_UNSET;
    int json = 0, reortho = 0, bad = 0;
    for (int i = 1; i < argc; i++) {
        if (cli_take(argc, argv, &i, "--to", &to, &bad)) {
        } else if (cli_take(argc, argv, &i, "--pose", &pose, &bad)) {
        } else if (cli_take(argc, argv, &i, "--tool", &tool, &bad)) {
        } else if (cli_take(argc, argv, &i, "--length-unit", &v, &bad)) {
            if (!bad && parse_length("convert", v, &out_lu)) return CLI_EXIT_USAGE;
        } else if (cli_take(argc, argv, &i, "--angle-unit", &v, &bad)) {
            if (!bad && parse_angle("convert", v, &out_au)) return CLI_EXIT_USAGE;
        } else if (cli_take(argc, argv, &i, "--from-length-unit", &v, &bad)) {
            if (!bad && parse_length("convert", v, &from_lu)) return CLI_EXIT_USAGE;
        } else if (cli_take(argc, argv, &i, "--from-angle-unit", &v, &bad)) {
            if (!bad && parse_angle("convert", v, &from_au)) return CLI_EXIT_USAGE;
        } else if (cli_take(argc, argv, &i, "--format", &v, &bad)) {
            if (bad) break;
            if (strcmp(v, "csv") == 0) json = 0;
            else if (strcmp(v, "json") == 0) json = 1;
            else return cli_usage_error("convert", "--format '%s': expected csv or json", v);
        } else if (cli_flag(argv, i, "--reorthonormalize")) {
            reortho = 1;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("convert", "unknown option '%s'", argv[i]);
        } else if (file) {
            return cli_usage_error("convert", "one input file expected, got '%s' and '%s'", file,
                                   argv[i]);
        } else {
            file = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!to) return cli_usage_error("convert", "--to REP is required");
    if (tram_output_rep_parse(to, &rep) != 0)
        return cli_usage_error("convert",
                               "--to '%s': expected quat, rotvec, matrix or euler:SEQ (e.g. "
                               "euler:zyx-intrinsic)",
                               to);
    rep.length_unit = out_lu;
    rep.angle_unit = out_au;
    if (pose) {
        if (file) return cli_usage_error("convert", "give either --pose or a file, not both");
        return convert_one(pose, &rep, from_lu, from_au, reortho);
    }
    if (!file) return cli_usage_error("convert", "no input file (use '-' for stdin)");

    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.length_unit = from_lu;
    opt.angle_unit = from_au;
    opt.reorthonormalize = reortho;
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    tram_status st = tram_records_read_file(file, &opt, &r, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(st);
    }
    if (cli_apply_tool(tool, r) != CLI_EXIT_OK) {
        tram_records_destroy(r);
        return CLI_EXIT_USAGE;
    }
    /* Write to memory first: on any error stdout stays empty. */
    char *buf = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&buf, &len);
    if (!mem) {
        tram_records_destroy(r);
        fprintf(stderr, "tram convert: error: out of memory\n");
        return CLI_EXIT_USAGE;
    }
    st = tram_records_write(r, &rep, json, mem, &err);
    fclose(mem);
    tram_records_destroy(r);
    if (st != TRAM_OK) {
        free(buf);
        if (err.file[0]) cli_report(&err);
        else fprintf(stderr, "tram convert: error: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    fwrite(buf, 1, len, stdout);
    free(buf);
    return fflush(stdout) == 0 ? CLI_EXIT_OK : CLI_EXIT_USAGE;
}
