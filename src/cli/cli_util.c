/*
 * cli_util.c - option scanning and error reporting shared by the
 * subcommands.
 */
#include "cli.h"

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
    snprintf(out, cap, "%.*s/%s", (int)n, dir, name);
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
