/*
 * cli.h - shared pieces of the tram command: the subcommand signature,
 * option scanning, and reporting errors in the file:line:column form.
 * The command uses only the public headers of libtram.
 */
#ifndef TRAM_CLI_H
#define TRAM_CLI_H

#include <stdio.h>

#include "tram/tram.h"

/* Exit codes (docs/tram.1). */
enum {
    CLI_EXIT_OK = 0,
    CLI_EXIT_VERDICT = 1,    /* tram check: the mount moved or data is inconsistent */
    CLI_EXIT_USAGE = 2,      /* usage or input error */
    CLI_EXIT_UNDETERMINED = 3 /* the data cannot determine a trustworthy answer */
};

typedef int (*cli_command_fn)(int argc, char **argv);

typedef struct cli_command {
    const char *name;
    cli_command_fn run;
    const char *summary;
    const char *help; /* full text for "tram help NAME" */
} cli_command;

/* Subcommands (one file each). */
int cli_convert(int argc, char **argv);
int cli_solve(int argc, char **argv);
int cli_check(int argc, char **argv);
int cli_fk(int argc, char **argv);
int cli_register(int argc, char **argv);
int cli_plot(int argc, char **argv);
int cli_intrinsics(int argc, char **argv);
int cli_pose(int argc, char **argv);
int cli_board(int argc, char **argv);
int cli_detect(int argc, char **argv);
int cli_report_cmd(int argc, char **argv); /* cli_report prints errors */
int cli_plan(int argc, char **argv);
/* The standard pictures of a solve into DIR (frames.png, residuals.png). */
int cli_plot_solution(const tram_records *r, const tram_solution *s, const char *dir, int force);
extern const char cli_convert_help[];
extern const char cli_solve_help[];
extern const char cli_check_help[];
extern const char cli_fk_help[];
extern const char cli_register_help[];
extern const char cli_plot_help[];
extern const char cli_intrinsics_help[];
extern const char cli_pose_help[];
extern const char cli_board_help[];
extern const char cli_detect_help[];
extern const char cli_report_help[];
extern const char cli_plan_help[];

/* Read --chain FILE (if given) and turn the records' joint columns into
 * robot poses; returns CLI_EXIT_OK or prints the error and returns 2. */
int cli_apply_chain(const char *chain_path, tram_records *r);
/* --tool TEXT (if given): the tool's pose in the flange frame for records
 * whose robot poses are tool poses (robot-pose: tool-in-base); returns
 * CLI_EXIT_OK or prints the error and returns 2. */
int cli_apply_tool(const char *tool, tram_records *r);

/* Option scanning.  If argv[*i] is "--name VALUE" or "--name=VALUE",
 * advance *i past it, set *value and return 1.  A missing value prints an
 * error, sets *bad and returns 1. */
int cli_take(int argc, char **argv, int *i, const char *name, const char **value, int *bad);
/* 1 if argv[*i] is the flag --name (no value). */
int cli_flag(char **argv, int i, const char *name);

/* out = DIR/NAME with one '/' however many DIR ends in ("pics/" and "pics"
 * give "pics/frames.png"). */
void cli_path_join(char *out, size_t cap, const char *dir, const char *name);
/* Print the record reader's warnings ("file:line:col: warning: ...") on
 * stderr, e.g. a comment that looks like a misspelt directive. */
void cli_records_warnings(const tram_records *r);
/* Print "file:line:col: error: message" for a library error. */
void cli_report(const tram_error *err);
/* Print "tram CMD: error: ..." for a usage problem; returns CLI_EXIT_USAGE. */
int cli_usage_error(const char *cmd, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;
/* Before any work: an output path (-o, --history; may be NULL) that is
 * one of the n input files (NULL entries skipped), or a --plot directory
 * (may be NULL) that exists but is not a writable directory, is refused with a
 * usage error (CLI_EXIT_USAGE); else CLI_EXIT_OK. */
int cli_check_outputs(const char *cmd, const char *const *inputs, size_t n, const char *out,
                      const char *option, const char *plot_dir);
/* Map a library status to an exit code. */
int cli_exit_for(tram_status s);

/* tram solve --pixels (cmd_solve_pixels.c). */
typedef struct cli_pixel_args {
    const char *pixels, *camera, *board, *model;
    int refine_intrinsics;
} cli_pixel_args;
tram_status cli_solve_pixels(const tram_records *r, tram_setup setup, const cli_pixel_args *a,
                             const tram_solve_options *so, tram_solution **s, tram_error *err);
void cli_print_pixels(const tram_solution *s, const tram_records *r);

/* The safety caution printed with every solved or checked result. */
extern const char cli_safety_text[];

/* v, or +0 when it prints as zero with `decimals` decimals: no
 * "-0.000000000" for a component that is zero up to rounding. */
double cli_print_zero(double v, int decimals);

#endif
