/*
 * records_json.c - the JSON form of record files (format v1), parsed with
 * cJSON.  Schema (docs/records.md):
 *
 *   {"format": "tram-records", "version": 1,
 *    "length_unit": "mm", "angle_unit": "deg", "setup": "eye-in-hand",
 *    "robot_pose": "flange-in-base", "sensor_pose": "target-in-sensor",
 *    "robot_euler": "zyx-intrinsic", "sensor_euler": ...,
 *    "stations": [{"station": "s1",
 *                  "robot":  {"x":..,"y":..,"z":..,"qw":..,"qx":..,"qy":..,"qz":..},
 *                  "sensor": {...}}, ...]}
 *
 * The keys mirror the CSV directives and column suffixes, and the same
 * schema and checks apply.  cJSON keeps no positions: semantic errors
 * name the JSON path (stations[3].robot.qw) and its file:line:column, found
 * by scanning the text only on the error path (json_pos.c); each station
 * keeps the line where its object starts, for the checks after reading.
 *
 * Speed (docs/performance.md): the strict check (json_check.c) also finds
 * where each element of "stations" starts and ends, and its line; cJSON
 * then parses the document with that array left empty, and each station
 * on its own, read and deleted before the next, so that the tree of the
 * whole file (about 17 nodes of 64 bytes per station, most of the reading
 * time in allocation and fresh pages) is never built.
 */
#include "io/json_internal.h"
#include "io/json_pos_internal.h"
#include "io/records_json_internal.h"
#include "io/records_schema_internal.h"
#include "io/records_store_internal.h"
#include "io/text_internal.h"

#include <cjson/cJSON.h>
#include <stdio.h>
#include <string.h>

/* Line of the start of the k-th element of the "stations" array: a scan of
 * the text that tracks nesting depth and strings (only for a document
 * whose stations the check did not find, see station_source). */
static void station_lines(const char *data, size_t len, long *lines, size_t n)
{
    /* bounded search: data need not be NUL-terminated (found by
     * fuzz/fuzz_records.c) */
    static const char key[] = "\"stations\"";
    const size_t kl = sizeof key - 1;
    size_t i = 0;
    while (i + kl <= len && memcmp(data + i, key, kl) != 0) i++;
    if (i + kl > len) return;
    i += kl;
    long line = 1;
    for (size_t k = 0; k < i; k++)
        if (data[k] == '\n') line++;
    while (i < len && data[i] != '[') {
        if (data[i] == '\n') line++;
        i++;
    }
    int depth = 0, in_str = 0;
    size_t idx = 0;
    for (; i < len && idx < n; i++) {
        char ch = data[i];
        if (ch == '\n') line++;
        if (in_str) {
            if (ch == '\\') i++;
            else if (ch == '"') in_str = 0;
            continue;
        }
        if (ch == '"') in_str = 1;
        else if (ch == '[' || ch == '{') {
            if (depth == 1 && ch == '{') lines[idx++] = line;
            depth++;
        } else if (ch == ']' || ch == '}') {
            if (--depth == 0) break;
        }
    }
}

/* The document being read, for messages at a JSON path. */
typedef struct jsrc {
    const char *name, *data;
    size_t len;
    tram_error *err;
} jsrc;

/* Fail at the value of path (its key when key != 0): file:line:column. */
#define JFAIL(j, path, key, ...) \
    tram__json_pos_fail_text((j)->name, (j)->data, (j)->len, (j)->err, path, key, __VA_ARGS__)

/* A JSON path below the station at `at` ("stations[3]"). */
static const char *sub_path(char *buf, size_t cap, const char *at, const char *a, const char *b)
{
    snprintf(buf, cap, "%s.%s%s%s", at, a, b ? "." : "", b ? b : "");
    return buf;
}

static const char *string_member(const cJSON *o, const char *key)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    return cJSON_IsString(v) ? v->valuestring : NULL;
}

/* The "format" and "version" members of the top level. */
static tram_status json_check_header(const cJSON *root, const jsrc *j)
{
    const char *fmt = string_member(root, "format");
    if (!fmt || strcmp(fmt, "tram-records") != 0)
        return JFAIL(j, "format", 0, "\"format\": expected \"tram-records\"");
    const cJSON *ver = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (!cJSON_IsNumber(ver) || ver->valuedouble != (double)ver->valueint || ver->valueint < 1)
        return JFAIL(j, "version", 0, "\"version\": expected the integer 1");
    if (ver->valueint > 1)
        return JFAIL(j, "version", 0,
                     "record format version %d is newer than this tram (%s) reads (1)",
                     ver->valueint, TRAM_VERSION_STRING);
    return TRAM_OK;
}

/* Top-level keys: the directives, with '_' for '-'. */
static tram_status json_read_directives(const cJSON *root, rec_directives *d, const jsrc *j)
{
    static const char *const keys[][2] = {
        {"length_unit", "length-unit"}, {"angle_unit", "angle-unit"},
        {"robot_euler", "robot-euler"}, {"sensor_euler", "sensor-euler"},
        {"robot_pose", "robot-pose"},   {"sensor_pose", "sensor-pose"},
        {"robot_length_unit", "robot-length-unit"}, {"sensor_length_unit", "sensor-length-unit"},
        {"robot_angle_unit", "robot-angle-unit"},   {"sensor_angle_unit", "sensor-angle-unit"},
        {"tool_in_flange", "tool-in-flange"}, {"setup", "setup"}};
    const cJSON *item;
    cJSON_ArrayForEach(item, root)
    {
        const char *k = item->string;
        if (strcmp(k, "format") == 0 || strcmp(k, "version") == 0 || strcmp(k, "stations") == 0 ||
            strcmp(k, "comment") == 0)
            continue;
        int found = 0;
        for (size_t i = 0; i < sizeof keys / sizeof keys[0]; i++)
            if (strcmp(k, keys[i][0]) == 0) {
                found = 1;
                if (!cJSON_IsString(item)) return JFAIL(j, k, 0, "\"%s\": expected a string", k);
                tram_status st =
                    tram__directive_apply(d, j->name, 0, 0, keys[i][1], item->valuestring, j->err);
                if (st == TRAM_EINPUT && j->err) /* the same message, at the value */
                    return JFAIL(j, k, 0, "%s", j->err->message);
                if (st != TRAM_OK) return st;
            }
        const char *near = found ? NULL : tram__directive_nearest(k);
        if (near) {
            char want[40];
            size_t q = 0;
            for (; near[q] && q < sizeof want - 1; q++) want[q] = near[q] == '-' ? '_' : near[q];
            want[q] = '\0';
            return JFAIL(j, k, 1,
                         "unknown key \"%s\": did you mean \"%s\"? (JSON keys are the "
                         "directives with '_' for '-', docs/records.md)",
                         k, want);
        }
        if (!found)
            return JFAIL(j, k, 1,
                              "unknown key \"%s\" (known: format, version, length_unit, angle_unit, "
                              "robot_euler, sensor_euler, robot_pose, sensor_pose, robot_length_unit, "
                              "sensor_length_unit, robot_angle_unit, sensor_angle_unit, tool_in_flange, setup, "
                              "comment, stations)",
                              k);
    }
    return TRAM_OK;
}

static const char *const blocks[2] = {"robot", "sensor"};

/* Schema from the first station's keys (line0 is where it starts); every
 * station must match it.  names has room for every column; *nj gets the
 * number of joint readings. */
static tram_status json_schema_from_first(const cJSON *first, long line0, const char **names,
                                          int *nj, rec_schema *schema, const jsrc *src)
{
    char colnames[2 * TRAM_RAW_MAX + TRAM_JOINTS_MAX][24];
    int ncol = 0;
    for (int b = 0; b < 2; b++) {
        const cJSON *blk = cJSON_IsObject(first) ? cJSON_GetObjectItemCaseSensitive(first, blocks[b]) : NULL;
        if (!blk) continue;
        if (!cJSON_IsObject(blk))
            return JFAIL(src, b ? "stations[0].sensor" : "stations[0].robot", 0,
                         "stations[0].%s: expected an object of pose numbers", blocks[b]);
        const cJSON *v;
        cJSON_ArrayForEach(v, blk)
        {
            if (ncol >= 2 * TRAM_RAW_MAX)
                return JFAIL(src, b ? "stations[0].sensor" : "stations[0].robot", 0,
                             "stations[0].%s: too many keys", blocks[b]);
            snprintf(colnames[ncol], sizeof colnames[ncol], "%s_%.8s", blocks[b], v->string);
            names[ncol] = colnames[ncol];
            ncol++;
        }
    }
    const cJSON *j0 = cJSON_IsObject(first) ? cJSON_GetObjectItemCaseSensitive(first, "joints") : NULL;
    *nj = 0;
    if (j0) {
        *nj = cJSON_IsArray(j0) ? cJSON_GetArraySize(j0) : -1;
        if (*nj < 1 || *nj > TRAM_JOINTS_MAX)
            return JFAIL(src, "stations[0].joints", 0,
                         "stations[0].joints: expected an array of 1 to %d joint readings",
                         TRAM_JOINTS_MAX);
        for (int j = 0; j < *nj; j++) {
            snprintf(colnames[ncol], sizeof colnames[ncol], "joint_%d", j + 1);
            names[ncol] = colnames[ncol];
            ncol++;
        }
    }
    if (ncol == 0)
        return JFAIL(src, "stations[0]", 0,
                     "stations[0]: expected \"robot\" (or \"joints\") and/or \"sensor\"");
    long hl[2 * TRAM_RAW_MAX + TRAM_JOINTS_MAX];
    for (int i = 0; i < ncol; i++) hl[i] = line0;
    return tram__schema_build(src->name, names, hl, NULL, ncol, schema, src->err);
}

/* The id of station k ("station", a string or an integer, or its number),
 * stored in r; then the check that the station has only known keys. */
static tram_status json_station_id(tram_records *r, const cJSON *so, size_t k, const char *at,
                                   size_t *id_used, const jsrc *src)
{
    tram_station *s = &r->stations[k];
    const cJSON *idv = cJSON_GetObjectItemCaseSensitive(so, "station");
    char num[24];
    const char *id = num;
    size_t idlen;
    if (!idv) {
        idlen = (size_t)snprintf(num, sizeof num, "%zu", k + 1);
    } else if (cJSON_IsString(idv) && idv->valuestring[0] &&
               (idlen = strlen(idv->valuestring)) < TRAM_STATION_ID_MAX) {
        id = idv->valuestring;
    } else if (cJSON_IsNumber(idv) && idv->valuedouble == (double)idv->valueint) {
        idlen = (size_t)snprintf(num, sizeof num, "%d", idv->valueint);
    } else {
        char p[48];
        return JFAIL(src, sub_path(p, sizeof p, at, "station", NULL), 0,
                          "stations[%zu].station: expected a non-empty string (at most %d "
                          "characters) or an integer",
                          k, TRAM_STATION_ID_MAX - 1);
    }
    s->id = tram__records_put_id(r, id_used, id, idlen);
    const cJSON *m;
    char p[160];
    cJSON_ArrayForEach(m, so)
    {
        if (strcmp(m->string, "station") && strcmp(m->string, "robot") &&
            strcmp(m->string, "sensor") && strcmp(m->string, "joints"))
            return JFAIL(src, sub_path(p, sizeof p, at, m->string, NULL), 1,
                              "stations[%zu]: unknown key \"%s\" (expected station, robot, "
                              "joints, sensor)",
                              k, m->string);
    }
    return TRAM_OK;
}

/* The nj joint readings of station k, as many as in stations[0]. */
static tram_status json_station_joints(tram_records *r, const cJSON *so, size_t k, const char *at,
                                       int nj, const jsrc *src)
{
    const cJSON *jv = cJSON_GetObjectItemCaseSensitive(so, "joints");
    char p[64];
    if (nj > 0 || jv) {
        if (!cJSON_IsArray(jv) || cJSON_GetArraySize(jv) != nj)
            return JFAIL(src, sub_path(p, sizeof p, at, "joints", NULL), 0,
                              "stations[%zu].joints: expected %d joint readings as in "
                              "stations[0]",
                              k, nj);
        for (int j = 0; j < nj; j++) {
            const cJSON *x = cJSON_GetArrayItem(jv, j);
            if (!cJSON_IsNumber(x)) {
                snprintf(p, sizeof p, "%s.joints[%d]", at, j);
                return JFAIL(src, p, 0, "stations[%zu].joints[%d]: expected a finite number", k, j);
            }
            r->joints[k * r->n_joints + (size_t)j] = x->valuedouble;
        }
    }
    return TRAM_OK;
}

/* The robot and sensor pose blocks of station k, with the keys of stations[0]. */
static tram_status json_station_blocks(tram_records *r, const cJSON *so, size_t k, const char *at,
                                       const rec_schema *schema, const jsrc *src)
{
    char p[160];
    for (int b = 0; b < 2; b++) {
        const cJSON *blk = cJSON_GetObjectItemCaseSensitive(so, blocks[b]);
        if (!schema->has_block[b]) {
            if (blk)
                return JFAIL(src, sub_path(p, sizeof p, at, blocks[b], NULL), 1,
                                  "stations[%zu].%s: not in the first station; every station "
                                  "must have the same blocks",
                                  k, blocks[b]);
            continue;
        }
        if (!cJSON_IsObject(blk))
            return JFAIL(src, sub_path(p, sizeof p, at, blocks[b], NULL), 0,
                              "stations[%zu].%s: missing; expected an object of pose numbers", k,
                              blocks[b]);
        int count = 0;
        const cJSON *v;
        cJSON_ArrayForEach(v, blk) count++;
        if (count != schema->nslots[b])
            return JFAIL(src, sub_path(p, sizeof p, at, blocks[b], NULL), 0,
                              "stations[%zu].%s: %d keys, expected %d as in stations[0]", k,
                              blocks[b], count, schema->nslots[b]);
        for (int slot = 0; slot < schema->nslots[b]; slot++) {
            const char *key = tram__rep_slot_name(schema->rep[b], slot);
            v = cJSON_GetObjectItemCaseSensitive(blk, key);
            if (!v)
                return JFAIL(src, sub_path(p, sizeof p, at, blocks[b], NULL), 0,
                                  "stations[%zu].%s.%s: missing (every station must use the "
                                  "rotation set of stations[0])",
                                  k, blocks[b], key);
            if (!cJSON_IsNumber(v))
                return JFAIL(src, sub_path(p, sizeof p, at, blocks[b], key), 0,
                                  "stations[%zu].%s.%s: expected a finite number", k, blocks[b],
                                  key);
            tram__records_raw(r, k, b)[slot] = v->valuedouble;
        }
    }
    return TRAM_OK;
}

/* One station object, the k-th of the array, starting on the given line. */
static tram_status json_read_station(tram_records *r, const cJSON *so, size_t k, long line,
                                     int nj, const rec_schema *schema, size_t *id_used,
                                     const jsrc *src)
{
    tram_station *s = &r->stations[k];
    s->line = line;
    char at[32]; /* "stations[k]", for the messages */
    snprintf(at, sizeof at, "stations[%zu]", k);
    if (!cJSON_IsObject(so)) return JFAIL(src, at, 0, "stations[%zu]: expected an object", k);
    memset(&s->T_base_flange, 0, sizeof s->T_base_flange);
    memset(&s->T_sensor_target, 0, sizeof s->T_sensor_target);
    tram_status st = json_station_id(r, so, k, at, id_used, src);
    if (st == TRAM_OK) st = json_station_joints(r, so, k, at, nj, src);
    if (st == TRAM_OK) st = json_station_blocks(r, so, k, at, schema, src);
    return st;
}

/* The lines where the n recorded elements of sp start (found by the check). */
static void elem_lines(const tram__json_spans *sp, long *lines)
{
    for (size_t k = 0; k < sp->n; k++) lines[k] = (long)sp->elem[5 * k + 4];
}

/* The stations array: its elements parsed one at a time from their spans
 * (sp found), else the children of the tree's array. */
typedef struct station_source {
    const char *name, *data;
    const tram__json_spans *sp;
    const cJSON *walk; /* next child of the tree's array (sp not found) */
} station_source;

/* Station k's tree in *so; *owned set when the caller must delete it. */
static tram_status station_tree(station_source *src, size_t k, cJSON **so, int *owned,
                                tram_error *err)
{
    *owned = 0;
    if (!src->sp->found) {
        *so = (cJSON *)src->walk;
        src->walk = src->walk->next;
        return TRAM_OK;
    }
    *owned = 1;
    return tram__json_parse_elem(src->name, src->data, src->sp, k, "record file", so, err);
}

/* The stations, read into r (reserved for n) one tree at a time; first is
 * station 0's tree (deleted here when owned). */
static tram_status json_read_stations(tram_records *r, station_source *ss, cJSON *first,
                                      int first_owned, size_t n, const long *lines, int nj,
                                      const rec_schema *schema, const jsrc *src)
{
    size_t id_used = 0;
    tram_status st = TRAM_OK;
    cJSON *so = first;
    int owned = first_owned;
    for (size_t k = 0; k < n; k++) {
        if (k > 0) st = station_tree(ss, k, &so, &owned, src->err);
        if (st != TRAM_OK) break;
        st = json_read_station(r, so, k, lines[k], nj, schema, &id_used, src);
        if (owned) cJSON_Delete(so);
        owned = 0;
        if (st != TRAM_OK) break;
        r->count++;
    }
    if (owned) cJSON_Delete(so);
    if (st == TRAM_OK) st = tram__records_fit_ids(r, id_used, src->name, src->err);
    return st;
}

tram_status tram__records_read_json(const char *name, const char *data, size_t len,
                                    const tram_read_options *opt, tram_records **out,
                                    tram_error *err)
{
    /* The check finds each station's text, and cJSON parses one station
     * at a time: the tree of a whole large file (17 nodes per station)
     * cost most of the reading in allocations and fresh pages
     * (docs/performance.md). */
    tram__json_spans sp;
    memset(&sp, 0, sizeof sp);
    sp.key = "stations";
    tram__checksum_job sum;
    tram__checksum_start(&sum, data, len);
    cJSON *root;
    tram_status st = tram__json_parse_outline(name, data, len, "record file", &sp, &root, err);
    tram_records *r = NULL;
    const char **names = NULL;
    long *lines = NULL;
    cJSON *first = NULL;
    int first_owned = 0;
    rec_schema schema;
    memset(&schema, 0, sizeof schema);
    rec_directives d;
    memset(&d, 0, sizeof d);
    d.euler[0] = d.euler[1] = TRAM_EULER_UNSET;
    if (st != TRAM_OK) goto done;

    if (!cJSON_IsObject(root)) {
        st = tram__fail(err, TRAM_EINPUT, name, 1, 1, "expected a JSON object at the top level");
        goto done;
    }
    r = tram__calloc(1, sizeof *r);
    if (!r) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    snprintf(r->source, sizeof r->source, "%s", name);

    jsrc src = {name, data, len, err};
    st = json_check_header(root, &src);
    if (st == TRAM_OK) st = json_read_directives(root, &d, &src);
    if (st != TRAM_OK) goto done;
    const cJSON *sts = cJSON_GetObjectItemCaseSensitive(root, "stations");
    size_t n = !cJSON_IsArray(sts) ? 0 : sp.found ? sp.n : (size_t)cJSON_GetArraySize(sts);
    if (n == 0) {
        /* at the value given, or at the top level when there is none */
        st = JFAIL(&src, "stations", 0,
                   "\"stations\": expected a non-empty array of station objects");
        goto done;
    }
    lines = tram__calloc(n, sizeof *lines);
    names = tram__calloc(2 * TRAM_RAW_MAX + TRAM_JOINTS_MAX + 1, sizeof *names);
    if (!lines || !names) {
        st = tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory");
        goto done;
    }
    if (sp.found)
        elem_lines(&sp, lines);
    else
        station_lines(data, len, lines, n);
    station_source ss = {name, data, &sp, sts->child};
    st = station_tree(&ss, 0, &first, &first_owned, err);
    int nj;
    if (st == TRAM_OK)
        st = json_schema_from_first(first, lines[0], names, &nj, &schema, &src);
    if (st != TRAM_OK) goto done;
    {
        /* the ids are strings of the text or generated numbers */
        rec_layout l = {{schema.nslots[0] * schema.has_block[0],
                         schema.nslots[1] * schema.has_block[1]},
                        schema.n_joints, 0};
        st = tram__records_reserve(r, n, &l, len + 21 * n, name, lines[0], err);
        if (st != TRAM_OK) goto done;
    }
    st = json_read_stations(r, &ss, first, first_owned, n, lines, nj, &schema, &src);
    first = NULL;
    if (st == TRAM_OK) st = tram__check_unique_ids(r, err);
    if (st != TRAM_OK) goto done;
    st = tram__records_finish(r, &schema, &d, opt, lines[0], err);

done:
    if (first_owned) cJSON_Delete(first);
    cJSON_Delete(root);
    tram__free(sp.elem);
    tram__free(sp.num);
    tram__free(names);
    tram__free(lines);
    tram__schema_free(&schema);
    {
        unsigned long long sum_value = tram__checksum_finish(&sum);
        if (r) r->checksum = sum_value;
    }
    if (st != TRAM_OK) {
        tram_records_destroy(r);
        return st;
    }
    *out = r;
    return TRAM_OK;
}
