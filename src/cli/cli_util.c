/*
 * cli_util.c - option scanning and error reporting shared by the
 * subcommands.
 */
#include "cli.h"
#include <math.h>
#include <sys/stat.h>
#include <unistd.h>

#include <stdarg.h>
#include <string.h>

const char cli_safety_text[] =
    "SAFETY: this result is computed from the data only; it is not a verified safe motion.\n"
    "Before any vision-guided motion: verify it at reduced speed, keep clear of the working\n"
    "envelope, and follow the applicable robot-safety standards and local codes.\n";

int cli_take(int argc, char **argv, int *i, const char *name, const char **value, int *bad)
{
    const char *a = argv[*i];
    size_t n = strlen(name);
    if (strncmp(a, name, n) != 0) return 0;
    if (a[n] == '=') {
        *value = a + n + 1;
        return 1;
    }
    if (a[n] != '\0') return 0;
    if (*i + 1 >= argc) {
        fprintf(stderr, "tram: error: option %s needs a value\n", name);
        *bad = 1;
        return 1;
    }
    *i += 1;
    *value = argv[*i];
    return 1;
}

int cli_flag(char **argv, int i, const char *name) { return strcmp(argv[i], name) == 0; }

void cli_path_join(char *out, size_t cap, const char *dir, const char *name)
{
    size_t n = strlen(dir);
    while (n > 1 && dir[n - 1] == '/') n--;
    /* "/" stays "/name", not "//name" */
    snprintf(out, cap, "%.*s%s%s", (int)n, dir, n && dir[n - 1] == '/' ? "" : "/", name);
}

void cli_records_warnings(const tram_records *r)
{
    size_t n = r ? r->n_warnings : 0;
    for (size_t i = 0; i < n; i++) {
        const char *w = tram_records_warning(r, i);
        if (w) fprintf(stderr, "%s\n", w);
    }
    if (n > TRAM_RECORDS_WARNINGS_MAX)
        fprintf(stderr, "%s: warning: %zu more warnings not shown\n", r->source,
                n - TRAM_RECORDS_WARNINGS_MAX);
}

void cli_report(const tram_error *err)
{
    char buf[1200];
    tram_error_format(err, buf, sizeof buf);
    /* "file:line:col: message" -> "file:line:col: error: message" */
    const char *msg = err->message;
    size_t prefix = strlen(buf) - strlen(msg);
    fprintf(stderr, "%.*serror: %s\n", (int)prefix, buf, msg);
}

int cli_usage_error(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    fprintf(stderr, "tram %s: error: ", cmd);
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fprintf(stderr, "\n(see 'tram help %s')\n", cmd);
    return CLI_EXIT_USAGE;
}

int cli_exit_for(tram_status s)
{
    switch (s) {
    case TRAM_OK: return CLI_EXIT_OK;
    case TRAM_EUNDETERMINED: return CLI_EXIT_UNDETERMINED;
    default: return CLI_EXIT_USAGE;
    }
}

int cli_apply_chain(const char *chain_path, tram_records *r)
{
    if (!chain_path) return CLI_EXIT_OK;
    tram_error err;
    tram_error_clear(&err);
    tram_chain *c = NULL;
    tram_status st = tram_chain_read_file(chain_path, &c, &err);
    if (st == TRAM_OK) st = tram_records_apply_chain(r, c, &err);
    tram_chain_destroy(c);
    if (st != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

/* 1 when a and b name the same existing file. */
static int same_file(const char *a, const char *b)
{
    struct stat sa, sb;
    if (strcmp(a, "-") == 0 || strcmp(b, "-") == 0) return 0;
    return stat(a, &sa) == 0 && stat(b, &sb) == 0 && sa.st_dev == sb.st_dev &&
           sa.st_ino == sb.st_ino;
}

int cli_check_outputs(const char *cmd, const char *const *inputs, size_t n, const char *out,
                      const char *option, const char *plot_dir)
{
    for (size_t i = 0; out && i < n; i++)
        if (inputs[i] && same_file(out, inputs[i]))
            return cli_usage_error(cmd, "%s '%s' is the input file '%s': refusing to write "
                                        "over an input",
                                   option, out, inputs[i]);
    if (plot_dir) {
        /* a missing directory is made by the plotting (cli_plot_solution) */
        struct stat sd;
        if (stat(plot_dir, &sd) != 0) return CLI_EXIT_OK;
        if (!S_ISDIR(sd.st_mode))
            return cli_usage_error(cmd, "--plot '%s': exists and is not a directory", plot_dir);
        if (access(plot_dir, W_OK | X_OK) != 0)
            return cli_usage_error(cmd, "--plot '%s': the directory is not writable", plot_dir);
    }
    return CLI_EXIT_OK;
}

int cli_apply_tool(const char *tool, tram_records *r)
{
    if (!tool) return CLI_EXIT_OK;
    tram_error err;
    tram_error_clear(&err);
    tram_se3 T;
    tram_length_unit u;
    tram_status st = tram_tool_parse(tool, &T, &u, &err);
    if (st == TRAM_OK) st = tram_records_set_tool(r, &T, u, &err);
    if (st != TRAM_OK) {
        if (!err.file[0]) {
            fprintf(stderr, "tram: error: --tool: %s\n", err.message);
            return CLI_EXIT_USAGE;
        }
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

double cli_print_zero(double v, int decimals)
{
    return fabs(v) < 0.5 * pow(10.0, -decimals) ? 0.0 : v;
}
