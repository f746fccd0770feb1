/*
 * check_json.c - JSON of a mount-check result (docs/check.md), the
 * one-line record appended to a check history file, and the reader of
 * such history files (one JSON object per line, read strictly: every
 * problem names file:line[:column] and the field).
 */
#include "tram/check.h"
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/text_internal.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static void add_change(tram__jb *b, cJSON *parent, const char *key, const tram_change *m, int full)
{
    cJSON *o = tram__jb_obj(b, parent, key);
    tram__jb_str(b, o, "model", m->model);
    tram__jb_str(b, o, "frame", m->frame);
    tram__jb_str(b, o, "transform", m->transform);
    tram__jb_vec(b, o, "translation", m->translation, 3, 1.0);
    tram__jb_vec(b, o, "rotation_deg", m->rotation_deg, 3, 1.0);
    tram__jb_num(b, o, "translation_norm", m->translation_norm);
    tram__jb_num(b, o, "rotation_angle_deg", m->rotation_angle_deg);
    if (full) {
        tram__jb_vec(b, o, "translation_sigma", m->translation_sigma, 3, 1.0);
        tram__jb_vec(b, o, "rotation_sigma_deg", m->rotation_sigma_deg, 3, 1.0);
        tram__jb_num(b, o, "significance_chi2", m->significance);
        tram__jb_num(b, o, "fit_chi2", m->fit_chi2);
        tram__jb_num(b, o, "fit_threshold", m->fit_threshold);
        tram__jb_bool(b, o, "fits", m->fits);
    }
}

tram_status tram_check_result_to_json(const tram_check_result *res, const tram_records *r,
                                      int history, const char *timestamp_utc, char **text,
                                      tram_error *err)
{
    *text = NULL;
    tram__jb jb = {0}, *b = &jb;
    cJSON *root = cJSON_CreateObject();
    if (!root) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    const tram_change *best = res->best ? &res->target : &res->sensor;
    if (history) {
        tram__jb_str(b, root, "timestamp_utc", timestamp_utc ? timestamp_utc : "");
        tram__jb_str(b, root, "verdict", tram_verdict_name(res->verdict));
        tram__jb_num(b, root, "stations", (double)res->n);
        tram__jb_str(b, root, "length_unit", tram_unit_length_name(res->length_unit));
        add_change(b, root, "change", best, 0);
        tram__jb_str(b, root, "records", r->source);
        return tram__jb_finish(b, root, 0, 0, text, err);
    }
    tram__jb_str(b, root, "format", "tram-check");
    tram__jb_num(b, root, "version", 1);
    tram__jb_str(b, root, "tool", "tram " TRAM_VERSION_STRING);
    tram__jb_str(b, root, "verdict", tram_verdict_name(res->verdict));
    tram__jb_str(b, root, "setup", tram_setup_name(res->setup));
    tram__jb_str(b, root, "length_unit", tram_unit_length_name(res->length_unit));
    add_change(b, root, "change", best, 1);
    cJSON *cands = tram__jb_arr(b, root, "candidates");
    add_change(b, cands, NULL, &res->sensor, 1);
    add_change(b, cands, NULL, &res->target, 1);
    cJSON *t = tram__jb_obj(b, root, "test");
    tram__jb_num(b, t, "chi2_unchanged", res->chi2_none);
    tram__jb_num(b, t, "dof_unchanged", (double)res->dof_none);
    tram__jb_num(b, t, "threshold_unchanged", res->threshold_none);
    tram__jb_num(b, t, "false_alarm_rate", res->false_alarm);
    tram__jb_num(b, t, "orientation_spread_deg", res->orientation_spread_deg);
    cJSON *arr = tram__jb_arr(b, root, "stations");
    for (size_t i = 0; arr && i < res->n; i++) {
        cJSON *o = tram__jb_obj(b, arr, NULL);
        tram__jb_str(b, o, "station", r->stations[i].id);
        tram__jb_num(b, o, "rotation_deg", res->stations[i].rot_deg);
        tram__jb_num(b, o, "translation", res->stations[i].trans);
        tram__jb_bool(b, o, "disagrees", res->stations[i].disagrees);
    }
    cJSON *dg = tram__jb_arr(b, root, "diagnostics");
    for (size_t i = 0; dg && i < res->ndiag; i++) {
        cJSON *o = tram__jb_obj(b, dg, NULL);
        tram__jb_str(b, o, "code", res->diag[i].code);
        tram__jb_str(b, o, "severity",
                     res->diag[i].severity == TRAM_SEVERITY_WARNING ? "warning" : "info");
        tram__jb_str(b, o, "message", res->diag[i].message);
    }
    tram__jb_str(b, root, "safety",
                 "A check compares data with a stored calibration; it does not make "
                 "a motion safe. After any change verify at reduced speed, keep clear "
                 "of the working envelope, and follow the applicable robot-safety "
                 "standards and local codes.");
    return tram__jb_finish(b, root, 1, 1, text, err);
}

/* Seconds since 1970 of "YYYY-MM-DDTHH:MM:SSZ" (UTC, exactly that form);
 * -1 when malformed or out of range. */
static double parse_utc(const char *s)
{
    int f[6];
    static const int width[6] = {4, 2, 2, 2, 2, 2};
    static const char sep[6] = {'-', '-', 'T', ':', ':', 'Z'};
    for (int k = 0; k < 6; k++) {
        f[k] = 0;
        for (int i = 0; i < width[k]; i++, s++) {
            if (*s < '0' || *s > '9') return -1;
            f[k] = 10 * f[k] + (*s - '0');
        }
        if (*s++ != sep[k]) return -1;
    }
    if (*s) return -1;
    long Y = f[0], M = f[1], D = f[2];
    static const int mdays[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    int leap = (Y % 4 == 0 && Y % 100 != 0) || Y % 400 == 0;
    if (M < 1 || M > 12 || D < 1 || D > mdays[M - 1] + (M == 2 && leap) || f[3] > 23 ||
        f[4] > 59 || f[5] > 60)
        return -1;
    /* days from civil (Hinnant, "chrono-compatible low-level date algorithms") */
    Y -= M <= 2;
    long era = Y / 400; /* Y >= -1 here */
    long yoe = Y - era * 400;
    long doy = (153 * (M + (M > 2 ? -3 : 9)) + 2) / 5 + D - 1;
    long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    long days = era * 146097 + doe - 719468;
    return (double)days * 86400.0 + f[3] * 3600.0 + f[4] * 60.0 + f[5];
}

void tram_check_history_destroy(tram_check_history *h)
{
    if (!h) return;
    tram__free(h->time_s);
    tram__free(h->verdict);
    tram__free(h->translation_norm);
    tram__free(h->rotation_angle_deg);
    tram__free(h->line);
    tram__free(h);
}

static int history_grow(tram_check_history *h, size_t cap)
{
    double *t = tram__realloc(h->time_s, cap * sizeof *t);
    if (t) h->time_s = t;
    tram_verdict *v = tram__realloc(h->verdict, cap * sizeof *v);
    if (v) h->verdict = v;
    double *tn = tram__realloc(h->translation_norm, cap * sizeof *tn);
    if (tn) h->translation_norm = tn;
    double *ra = tram__realloc(h->rotation_angle_deg, cap * sizeof *ra);
    if (ra) h->rotation_angle_deg = ra;
    long *l = tram__realloc(h->line, cap * sizeof *l);
    if (l) h->line = l;
    return t && v && tn && ra && l ? 0 : -1;
}

/* A history line [p, p + len) at `line` that does not hold `what`: the
 * column of the member at path (its parent when absent; the line's start
 * when even the scan fails). */
static tram_status history_fail(const tram_check_history *h, const char *p, size_t len, long line,
                                const char *path, const char *what, tram_error *err)
{
    tram__json_pos *pos = NULL;
    tram_error ignored;
    long l = 1, col = 1;
    if (tram__json_pos_scan(h->source, p, len, &pos, &ignored) == TRAM_OK)
        tram__json_pos_where(pos, path, 0, &l, &col);
    tram__json_pos_free(pos);
    return tram__fail(err, TRAM_EINPUT, h->source, line, col, "check-history line: expected %s",
                      what);
}

/* One history line (not NUL-terminated) into entry h->n. */
static tram_status history_line(tram_check_history *h, const char *p, size_t len, long line,
                                tram_error *err)
{
    cJSON *j;
    tram_status st = tram__json_parse(h->source, p, len,
                                      "expected one JSON object per line (a check-history line "
                                      "written by tram check --history)",
                                      &j, err);
    if (st != TRAM_OK) {
        if (err) err->line = line; /* the slice holds one line: its column stands */
        return st;
    }
    const char *what = NULL, *path = "";
    const cJSON *ts = cJSON_GetObjectItemCaseSensitive(j, "timestamp_utc");
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(j, "verdict");
    const cJSON *u = cJSON_GetObjectItemCaseSensitive(j, "length_unit");
    const cJSON *c = cJSON_GetObjectItemCaseSensitive(j, "change");
    const cJSON *tn = cJSON_GetObjectItemCaseSensitive(c, "translation_norm");
    const cJSON *ra = cJSON_GetObjectItemCaseSensitive(c, "rotation_angle_deg");
    double when = cJSON_IsString(ts) ? parse_utc(ts->valuestring) : -1;
    int verdict = cJSON_IsString(v) ? tram_verdict_parse(v->valuestring) : -1;
    tram_length_unit lu = cJSON_IsString(u) ? tram_unit_length_parse(u->valuestring)
                                            : TRAM_LENGTH_UNSET;
    if (!cJSON_IsObject(j))
        what = "a JSON object";
    else if (when < 0)
        what = "\"timestamp_utc\" as \"YYYY-MM-DDTHH:MM:SSZ\"", path = "timestamp_utc";
    else if (verdict < 0)
        what = "\"verdict\": ok, sensor-moved, target-moved, inconsistent or inconclusive",
        path = "verdict";
    else if (lu == TRAM_LENGTH_UNSET)
        what = "\"length_unit\": mm, cm, m or in", path = "length_unit";
    else if (!cJSON_IsNumber(tn) || !isfinite(tn->valuedouble) || tn->valuedouble < 0)
        what = "\"change.translation_norm\": a number >= 0", path = "change.translation_norm";
    else if (!cJSON_IsNumber(ra) || !isfinite(ra->valuedouble) || ra->valuedouble < 0)
        what = "\"change.rotation_angle_deg\": a number >= 0", path = "change.rotation_angle_deg";
    if (what) {
        cJSON_Delete(j);
        return history_fail(h, p, len, line, path, what, err);
    }
    if (h->n == 0) h->length_unit = lu;
    size_t i = h->n++;
    h->time_s[i] = when;
    h->verdict[i] = (tram_verdict)verdict;
    h->translation_norm[i] = tn->valuedouble * tram_unit_length_factor(lu, h->length_unit);
    h->rotation_angle_deg[i] = ra->valuedouble;
    h->line[i] = line;
    cJSON_Delete(j);
    return TRAM_OK;
}

tram_status tram_check_history_read_buffer(const char *name, const char *data, size_t len,
                                           tram_check_history **out, tram_error *err)
{
    *out = NULL;
    tram_check_history *h = tram__calloc(1, sizeof *h);
    size_t cap = 16;
    if (!h || history_grow(h, cap) != 0) {
        tram_check_history_destroy(h);
        return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
    }
    snprintf(h->source, sizeof h->source, "%s", name);
    long line = 0;
    for (size_t pos = 0; pos < len;) {
        const char *nl = memchr(data + pos, '\n', len - pos);
        size_t end = nl ? (size_t)(nl - data) : len;
        line++;
        size_t b = pos;
        while (b < end && (data[b] == ' ' || data[b] == '\t' || data[b] == '\r')) b++;
        if (b < end) {
            if (h->n == cap && history_grow(h, cap *= 2) != 0) {
                tram_check_history_destroy(h);
                return tram__fail(err, TRAM_ENOMEM, name, line, 0, "out of memory");
            }
            tram_status st = history_line(h, data + pos, end - pos, line, err);
            if (st != TRAM_OK) {
                tram_check_history_destroy(h);
                return st;
            }
        }
        pos = end + 1;
    }
    if (h->n == 0) {
        tram_check_history_destroy(h);
        /* at the end of the file: line 1 of an empty one */
        return tram__fail(err, TRAM_EINPUT, name, line > 0 ? line : 1, 0,
                          "the history file holds no check (write one with tram check --history)");
    }
    *out = h;
    return TRAM_OK;
}

tram_status tram_check_history_read_file(const char *path, tram_check_history **out,
                                         tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_check_history_read_buffer(strcmp(path, "-") ? path : "<stdin>", data, len, out, err);
    tram__free(data);
    return st;
}
