/* cmd_solve.c - placeholder until the solver lands. */
#include "cli.h"
const char cli_solve_help[] = "usage: tram solve [OPTIONS] FILE\n";
int cli_solve(int argc, char **argv)
{
    (void)argc;
    (void)argv;
    fprintf(stderr, "tram solve: not built yet\n");
    return CLI_EXIT_USAGE;
}
