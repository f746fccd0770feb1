/*
 * records_access.c - a record set seen through plain arrays, for callers
 * that cannot read C structs (the Python package, other bindings): the
 * station count, ids and poses as row-major 4x4 arrays, and a record set
 * made from such arrays.
 *
 * A record set made from arrays goes through the same reader as a file
 * (every number printed with %.17g, so it reads back exactly): the same
 * checks apply (rotations must be rotations), and the convention doctor
 * can re-read its raw numbers as it does a file's.
 */
#include "tram/records.h"
#include "core/tram_internal.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

const char *tram_records_warning(const tram_records *r, size_t i)
{
    if (!r || i >= r->n_warnings || i >= TRAM_RECORDS_WARNINGS_MAX) return NULL;
    return r->warnings[i];
}

size_t tram_records_count(const tram_records *r) { return r ? r->count : 0; }

const char *tram_records_station_id(const tram_records *r, size_t i)
{
    return r && i < r->count ? r->stations[i].id : NULL;
}

const double *tram_records_joints(const tram_records *r, size_t i)
{
    return r && r->joints && r->n_joints && i < r->count ? r->joints + i * r->n_joints : NULL;
}

int tram_records_pose(const tram_records *r, size_t i, int block, double T[16])
{
    if (!r || i >= r->count || block < 0 || block >= TRAM_BLOCK_COUNT || !r->has_block[block])
        return 0;
    const tram_se3 *P = block == TRAM_BLOCK_ROBOT ? &r->stations[i].T_base_flange
                                                  : &r->stations[i].T_sensor_target;
    for (int a = 0; a < 4; a++)
        for (int b = 0; b < 4; b++) T[4 * a + b] = P->m[a][b];
    return 1;
}

/* Append printf output to the growing buffer; 0 when out of memory. */
static int put(char **buf, size_t *len, size_t *cap, const char *fmt, ...) TRAM_PRINTF(4, 5);

static int put(char **buf, size_t *len, size_t *cap, const char *fmt, ...)
{
    for (;;) {
        va_list ap;
        va_start(ap, fmt);
        int k = vsnprintf(*buf + *len, *cap - *len, fmt, ap);
        va_end(ap);
        if (k < 0) return 0;
        if ((size_t)k < *cap - *len) {
            *len += (size_t)k;
            return 1;
        }
        char *nb = tram__realloc(*buf, *cap * 2 + (size_t)k);
        if (!nb) return 0;
        *buf = nb;
        *cap = *cap * 2 + (size_t)k;
    }
}

static int put_pose(char **buf, size_t *len, size_t *cap, const double *T)
{
    int ok = 1;
    for (int a = 0; a < 3 && ok; a++) ok = put(buf, len, cap, ",%.17g", T[4 * a + 3]);
    for (int a = 0; a < 3 && ok; a++)
        for (int b = 0; b < 3 && ok; b++) ok = put(buf, len, cap, ",%.17g", T[4 * a + b]);
    return ok;
}

tram_status tram_records_from_poses(size_t n, const char *const *ids, const double *T_base_flange,
                                    const double *T_sensor_target, tram_length_unit unit,
                                    tram_setup setup, const tram_read_options *opt,
                                    tram_records **out, tram_error *err)
{
    *out = NULL;
    if (unit == TRAM_LENGTH_UNSET)
        return tram__fail(err, TRAM_EINPUT, "<arrays>", 0, 0,
                          "no length unit: the poses' translations need one (mm, cm, m, in)");
    if (!T_base_flange && !T_sensor_target)
        return tram__fail(err, TRAM_EINPUT, "<arrays>", 0, 0, "no poses given");
    size_t len = 0, cap = 4096;
    char *buf = tram__malloc(cap);
    if (!buf) return tram__fail(err, TRAM_ENOMEM, "<arrays>", 0, 0, "out of memory");
    static const char *const m[] = {"x", "y", "z", "r11", "r12", "r13", "r21", "r22", "r23",
                                    "r31", "r32", "r33"};
    int ok = put(&buf, &len, &cap, "# format: tram-records-1\n# length-unit: %s\n",
                 tram_unit_length_name(unit));
    if (ok && setup != TRAM_SETUP_UNSET)
        ok = put(&buf, &len, &cap, "# setup: %s\n", tram_setup_name(setup));
    if (ok) ok = put(&buf, &len, &cap, "station");
    for (int b = 0; b < 2 && ok; b++) {
        if (!(b == 0 ? T_base_flange : T_sensor_target)) continue;
        for (int k = 0; k < 12 && ok; k++)
            ok = put(&buf, &len, &cap, ",%s_%s", b == 0 ? "robot" : "sensor", m[k]);
    }
    if (ok) ok = put(&buf, &len, &cap, "\n");
    for (size_t i = 0; i < n && ok; i++) {
        if (ids && (!ids[i] || strpbrk(ids[i], ",\n\r#") || !ids[i][0])) {
            tram__free(buf);
            return tram__fail(err, TRAM_EINPUT, "<arrays>", 0, 0,
                              "station %zu: an id must be non-empty, without commas, '#' or "
                              "line breaks",
                              i);
        }
        ok = ids ? put(&buf, &len, &cap, "%s", ids[i]) : put(&buf, &len, &cap, "%zu", i + 1);
        if (ok && T_base_flange) ok = put_pose(&buf, &len, &cap, T_base_flange + 16 * i);
        if (ok && T_sensor_target) ok = put_pose(&buf, &len, &cap, T_sensor_target + 16 * i);
        if (ok) ok = put(&buf, &len, &cap, "\n");
    }
    if (!ok) {
        tram__free(buf);
        return tram__fail(err, TRAM_ENOMEM, "<arrays>", 0, 0, "out of memory");
    }
    tram_status st = tram_records_read_buffer("<arrays>", buf, len, opt, out, err);
    tram__free(buf);
    return st;
}
