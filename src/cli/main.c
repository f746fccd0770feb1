/*
 * main.c - the tram command: dispatches to the subcommands listed in one
 * table.  Exit codes: 0 success; 1 a check found the mount moved or the
 * data inconsistent; 2 usage or input error; 3 the data cannot determine a
 * trustworthy answer.
 */
#include "cli.h"

#include <string.h>

static int cli_help(int argc, char **argv);

/* Help topics that are no subcommand (tram help TOPIC). */
static const char records_help[] =
    "tram help records: the record file (docs/records.md, tram(1) RECORD FILES)\n\n"
    "CSV: directive comments '# key: value' first, then a header and one row per station:\n"
    "  station, robot_x,robot_y,robot_z + one rotation set, sensor_x,... the same\n"
    "  rotation sets: _qw,_qx,_qy,_qz (scalar first) | _rx,_ry,_rz (rotation vector)\n"
    "                 | _r11.._r33 (row-major matrix) | _e1,_e2,_e3 (Euler angles)\n"
    "  or joint_1..joint_n instead of robot_ (with --chain).\n"
    "JSON: {\"format\": \"tram-records\", \"version\": 1, the directives with _ for -, \"stations\": [...]}\n\n"
    "directives:\n"
    "  format: tram-records-1                    file format and version\n"
    "  length-unit: mm|cm|m|in                   every x, y, z (required, or --length-unit)\n"
    "  angle-unit: deg|rad                       every angle (required for rotation vectors,\n"
    "                                            Euler angles and joints)\n"
    "  robot-length-unit, sensor-length-unit: mm|cm|m|in   that block's own length unit\n"
    "  robot-angle-unit, sensor-angle-unit: deg|rad        that block's own angle unit\n"
    "  robot-euler, sensor-euler: SEQ-intrinsic|SEQ-extrinsic   e.g. zyx-intrinsic (required\n"
    "                                            for an Euler block; never assumed)\n"
    "  robot-pose: flange-in-base|base-in-flange     default flange-in-base (T_base_flange)\n"
    "  robot-pose: tool-in-base                  TCP poses (T_base_tool), with the tool:\n"
    "  tool-in-flange: X,Y,ZUNIT ROTATION        e.g. 0,0,150mm quat:1,0,0,0 (or --tool)\n"
    "  sensor-pose: target-in-sensor|sensor-in-target  default target-in-sensor (T_sensor_target)\n"
    "  setup: eye-in-hand|eye-to-hand\n\n"
    "An unknown directive is an error; a comment that looks like a misspelt one\n"
    "('# robot_euler:') is a warning.  A UTF-8 byte-order mark at the start is skipped.\n"
    "Quaternions: norm 1 within 1e-6 (--rounded-quat: within 0.01, normalised).\n"
    "Every missing declaration is listed in one message (solve without --setup: the\n"
    "setup too); every error names file:line[:column] (JSON: of the value at fault).\n\n"
    "examples:\n"
    "  tram convert --to quat datasets/demo/wrist_camera.csv\n"
    "  tram convert --to rotvec --angle-unit rad --length-unit m datasets/demo/overhead_camera.csv\n";

static const struct { const char *name, *summary, *help; } topics[] = {
    {"records", "record files: columns and every directive", records_help},
};
#define NTOPICS (sizeof topics / sizeof topics[0])

static const cli_command commands[] = {
    {"convert", cli_convert, "rewrite record files or one pose in another representation or unit",
     cli_convert_help},
    {"solve", cli_solve, "find the sensor's mount (hand-eye calibration) from a record file",
     cli_solve_help},
    {"check", cli_check, "check a mount against its stored calibration: has it moved?",
     cli_check_help},
    {"register", cli_register, "rigid or similarity transform between two point lists",
     cli_register_help},
    {"pose", cli_pose, "the target's pose in each image from its pixels (a record file's sensor block)",
     cli_pose_help},
    {"plot", cli_plot, "pictures of frames, residuals, check histories and point residuals",
     cli_plot_help},
    {"board", cli_board, "a chessboard's description file and the board to print (PDF, PNG)",
     cli_board_help},
    {"detect", cli_detect, "find a chessboard's corners in images; write pixel observations",
     cli_detect_help},
    {"report", cli_report_cmd, "the calibration record as a PDF to file or hand over (A4 or Letter)",
     cli_report_help},
    {"plan", cli_plan, "propose the robot stations that best cut the uncertainty (view and reach)",
     cli_plan_help},
    {"fk", cli_fk, "flange poses from joint readings and a kinematic chain", cli_fk_help},
    {"intrinsics", cli_intrinsics, "camera intrinsics and lens distortion from views of a planar target",
     cli_intrinsics_help},
    {"help", cli_help, "show help for a subcommand or topic",
     "usage: tram help SUBCOMMAND | TOPIC\n\nexamples:\n  tram help records\n"},
};
#define NCOMMANDS (sizeof commands / sizeof commands[0])

static void usage(FILE *f)
{
    fprintf(f,
            "usage: tram SUBCOMMAND [OPTIONS] [FILES]\n"
            "       tram --help | --version\n\n"
            "tram finds where a sensor sits on or around a robot and checks whether it moved.\n\n"
            "subcommands:\n");
    for (size_t i = 0; i < NCOMMANDS; i++)
        fprintf(f, "  %-10s %s\n", commands[i].name, commands[i].summary);
    fprintf(f, "\nhelp topics (tram help TOPIC):\n");
    for (size_t i = 0; i < NTOPICS; i++)
        fprintf(f, "  %-10s %s\n", topics[i].name, topics[i].summary);
    fprintf(f,
            "\nexit status: 0 success, 1 check verdict other than ok, 2 usage or input error,\n"
            "3 the data cannot determine a trustworthy answer.\n"
            "Frames: T_a_b is the pose of frame b in frame a (p_a = T_a_b p_b).\n\n"
            "examples (from the source tree; the demo scenario is invented):\n"
            "  tram solve datasets/demo/wrist_camera.csv\n"
            "  tram help records\n");
}

static int cli_help(int argc, char **argv)
{
    if (argc < 2) {
        usage(stdout);
        return CLI_EXIT_OK;
    }
    for (size_t i = 0; i < NCOMMANDS; i++)
        if (strcmp(argv[1], commands[i].name) == 0) {
            fputs(commands[i].help, stdout);
            return CLI_EXIT_OK;
        }
    for (size_t i = 0; i < NTOPICS; i++)
        if (strcmp(argv[1], topics[i].name) == 0) {
            fputs(topics[i].help, stdout);
            return CLI_EXIT_OK;
        }
    fprintf(stderr, "tram: error: unknown subcommand '%s' (see 'tram --help')\n",
            argv[1]);
    return CLI_EXIT_USAGE;
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        usage(stderr);
        return CLI_EXIT_USAGE;
    }
    if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0) {
        usage(stdout);
        return CLI_EXIT_OK;
    }
    if (strcmp(argv[1], "--version") == 0) {
        printf("tram %s\n", tram_version());
        return CLI_EXIT_OK;
    }
    for (size_t i = 0; i < NCOMMANDS; i++)
        if (strcmp(argv[1], commands[i].name) == 0) {
            for (int k = 2; k < argc; k++)
                if (strcmp(argv[k], "--help") == 0 || strcmp(argv[k], "-h") == 0) {
                    fputs(commands[i].help, stdout);
                    return CLI_EXIT_OK;
                }
            int rc = commands[i].run(argc - 1, argv + 1);
            tram_plot_shutdown(); /* fontconfig caches of any picture drawn */
            return rc;
        }
    fprintf(stderr, "tram: error: unknown subcommand '%s' (see 'tram --help')\n", argv[1]);
    return CLI_EXIT_USAGE;
}
