/*
 * main.c - the tram command: dispatches to the subcommands listed in one
 * table.  Exit codes: 0 success; 1 a check found the mount moved or the
 * data inconsistent; 2 usage or input error; 3 the data cannot determine a
 * trustworthy answer.
 */
#include "cli.h"

#include <string.h>

static int cli_help(int argc, char **argv);

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
    {"fk", cli_fk, "flange poses from joint readings and a kinematic chain", cli_fk_help},
    {"intrinsics", cli_intrinsics, "camera intrinsics and lens distortion from views of a planar target",
     cli_intrinsics_help},
    {"help", cli_help, "show help for a subcommand", "usage: tram help SUBCOMMAND\n"},
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
    fprintf(f,
            "\nexit status: 0 success, 1 check verdict other than ok, 2 usage or input error,\n"
            "3 the data cannot determine a trustworthy answer.\n"
            "Frames: T_a_b is the pose of frame b in frame a (p_a = T_a_b p_b).\n");
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
    fprintf(stderr, "tram: error: unknown subcommand '%s' (see 'tram --help')\n", argv[1]);
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
