/*
 * error.c - the caller-owned error struct, the unit tables and the version.
 *
 * Nothing here is global mutable state: every failing call writes its
 * description into a tram_error that the caller passes in.
 */
#include "core/tram_internal.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void tram_error_clear(tram_error *err)
{
    if (!err) return;
    memset(err, 0, sizeof *err);
}

tram_status tram__fail(tram_error *err, tram_status status, const char *file, long line,
                       long column, const char *fmt, ...)
{
    if (!err) return status;
    err->status = status;
    err->file[0] = '\0';
    if (file) snprintf(err->file, sizeof err->file, "%s", file);
    err->line = line;
    err->column = column;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(err->message, sizeof err->message, fmt, ap);
    va_end(ap);
    return status;
}

char *tram_error_format(const tram_error *err, char *buf, size_t size)
{
    if (!buf || size == 0) return buf;
    buf[0] = '\0';
    if (!err) return buf;
    size_t used = 0;
    if (err->file[0]) {
        int n;
        if (err->line > 0 && err->column > 0)
            n = snprintf(buf, size, "%s:%ld:%ld: ", err->file, err->line, err->column);
        else if (err->line > 0)
            n = snprintf(buf, size, "%s:%ld: ", err->file, err->line);
        else
            n = snprintf(buf, size, "%s: ", err->file);
        if (n > 0) used = (size_t)n < size ? (size_t)n : size - 1;
    }
    snprintf(buf + used, size - used, "%s", err->message);
    return buf;
}

/* Unit tables: name, size in the SI unit. */
static const struct { const char *name; double metres; } length_units[] = {
    [TRAM_LENGTH_UNSET] = {"unset", 0.0},
    [TRAM_LENGTH_MM] = {"mm", 0.001},
    [TRAM_LENGTH_CM] = {"cm", 0.01},
    [TRAM_LENGTH_M] = {"m", 1.0},
    [TRAM_LENGTH_IN] = {"in", 0.0254}, /* exact by definition (1959) */
};

tram_length_unit tram_unit_length_parse(const char *s)
{
    if (!s) return TRAM_LENGTH_UNSET;
    for (int u = TRAM_LENGTH_MM; u <= TRAM_LENGTH_IN; u++)
        if (strcmp(s, length_units[u].name) == 0) return (tram_length_unit)u;
    return TRAM_LENGTH_UNSET;
}

const char *tram_unit_length_name(tram_length_unit u)
{
    if ((int)u < 0 || u > TRAM_LENGTH_IN) return "unset";
    return length_units[u].name;
}

double tram_unit_length_in_m(tram_length_unit u)
{
    if ((int)u < 0 || u > TRAM_LENGTH_IN) return 0.0;
    return length_units[u].metres;
}

double tram_unit_length_factor(tram_length_unit from, tram_length_unit to)
{
    double a = tram_unit_length_in_m(from), b = tram_unit_length_in_m(to);
    if (a == 0.0 || b == 0.0) return 0.0;
    if (from == to) return 1.0;
    return a / b;
}

tram_angle_unit tram_unit_angle_parse(const char *s)
{
    if (!s) return TRAM_ANGLE_UNSET;
    if (strcmp(s, "deg") == 0) return TRAM_ANGLE_DEG;
    if (strcmp(s, "rad") == 0) return TRAM_ANGLE_RAD;
    return TRAM_ANGLE_UNSET;
}

const char *tram_unit_angle_name(tram_angle_unit u)
{
    switch (u) {
    case TRAM_ANGLE_DEG: return "deg";
    case TRAM_ANGLE_RAD: return "rad";
    default: return "unset";
    }
}

double tram_unit_angle_in_rad(tram_angle_unit u)
{
    switch (u) {
    case TRAM_ANGLE_DEG: return TRAM_PI / 180.0;
    case TRAM_ANGLE_RAD: return 1.0;
    default: return 0.0;
    }
}

const char *tram_version(void) { return TRAM_VERSION_STRING; }

void tram__offset_pos(const char *data, size_t off, long *line, long *col)
{
    long l = 1, c = 1;
    for (size_t i = 0; i < off; i++) {
        if (data[i] == '\n') {
            l++;
            c = 1;
        } else
            c++;
    }
    *line = l;
    *col = c;
}

/* For callers that cannot reach the C library's free() (bindings): the
 * texts and arrays the library hands out are released with free(). */
void tram_free(void *p) { free(p); }
