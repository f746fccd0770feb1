/*
 * records_schema.c - the bottom of record-file reading, shared by the CSV
 * and JSON readers: directives, the column schema, turning raw numbers
 * into poses under an explicit convention, and the unique-id check.
 *
 * A pose block (robot_ or sensor_) holds x, y, z and exactly one rotation
 * set.  Its raw numbers become T = (R, s * t), inverted when the block's
 * pose directive says the file holds the other direction.  Nothing is
 * guessed: missing units, Euler blocks without a convention, non-unit
 * quaternions and non-rotation matrices are errors (docs/records.md).
 */
#include "io/records_schema_internal.h"
#include "io/records_store_internal.h"
#include "io/tool_internal.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

tram_setup tram_setup_parse(const char *s)
{
    if (!s) return TRAM_SETUP_UNSET;
    if (strcmp(s, "eye-in-hand") == 0) return TRAM_SETUP_EYE_IN_HAND;
    if (strcmp(s, "eye-to-hand") == 0) return TRAM_SETUP_EYE_TO_HAND;
    return TRAM_SETUP_UNSET;
}

const char *tram_setup_name(tram_setup s)
{
    switch (s) {
    case TRAM_SETUP_EYE_IN_HAND: return "eye-in-hand";
    case TRAM_SETUP_EYE_TO_HAND: return "eye-to-hand";
    default: return "unset";
    }
}

static const char *const block_prefix[TRAM_BLOCK_COUNT] = {"robot_", "sensor_"};
static const char *const block_word[TRAM_BLOCK_COUNT] = {"robot", "sensor"};

static const char *const quat_names[] = {"qw", "qx", "qy", "qz"};
static const char *const rotvec_names[] = {"rx", "ry", "rz"};
static const char *const matrix_names[] = {"r11", "r12", "r13", "r21", "r22",
                                           "r23", "r31", "r32", "r33"};
static const char *const euler_names[] = {"e1", "e2", "e3"};
static const char *const pos_names[] = {"x", "y", "z"};

int tram__rep_slots(tram_rep_kind k)
{
    switch (k) {
    case TRAM_REP_QUAT: return 7;
    case TRAM_REP_ROTVEC: return 6;
    case TRAM_REP_MATRIX: return 12;
    case TRAM_REP_EULER: return 6;
    default: return 3;
    }
}

const char *tram__rep_slot_name(tram_rep_kind k, int slot)
{
    if (slot < 3) return pos_names[slot];
    int i = slot - 3;
    switch (k) {
    case TRAM_REP_QUAT: return quat_names[i];
    case TRAM_REP_ROTVEC: return rotvec_names[i];
    case TRAM_REP_MATRIX: return matrix_names[i];
    case TRAM_REP_EULER: return euler_names[i];
    default: return "?";
    }
}

int tram_output_rep_parse(const char *s, tram_output_rep *out)
{
    memset(out, 0, sizeof *out);
    out->euler = TRAM_EULER_UNSET;
    if (!s) return -1;
    if (strcmp(s, "quat") == 0) out->kind = TRAM_REP_QUAT;
    else if (strcmp(s, "quat-xyzw") == 0) {
        out->kind = TRAM_REP_QUAT;
        out->quat_xyzw = 1;
    }
    else if (strcmp(s, "rotvec") == 0) out->kind = TRAM_REP_ROTVEC;
    else if (strcmp(s, "matrix") == 0) out->kind = TRAM_REP_MATRIX;
    else if (strncmp(s, "euler:", 6) == 0) {
        out->kind = TRAM_REP_EULER;
        out->euler = tram_euler_parse(s + 6);
        if (out->euler == TRAM_EULER_UNSET) return -1;
    } else
        return -1;
    return 0;
}

/* ---- directives ---------------------------------------------------- */

/* Every directive, in the order of docs/records.md's table. */
static const char *const directive_keys[] = {
    "format",           "length-unit",       "angle-unit",        "robot-length-unit",
    "sensor-length-unit", "robot-angle-unit", "sensor-angle-unit", "robot-euler",
    "sensor-euler",     "robot-pose",        "sensor-pose",       "setup",
    "tool-in-flange"};
#define N_DIRECTIVES (sizeof directive_keys / sizeof directive_keys[0])

/* Levenshtein distance of two short strings (longer ones count as far). */
static size_t edit_distance(const char *a, const char *b)
{
    size_t na = strlen(a), nb = strlen(b);
    if (na > 39 || nb > 39) return 99;
    size_t row[40];
    for (size_t j = 0; j <= nb; j++) row[j] = j;
    for (size_t i = 1; i <= na; i++) {
        size_t diag = row[0];
        row[0] = i;
        for (size_t j = 1; j <= nb; j++) {
            size_t up = row[j];
            size_t best = diag + (a[i - 1] != b[j - 1]);
            if (up + 1 < best) best = up + 1;
            if (row[j - 1] + 1 < best) best = row[j - 1] + 1;
            row[j] = best;
            diag = up;
        }
    }
    return row[nb];
}

const char *tram__directive_nearest(const char *key)
{
    char k[40];
    size_t n = 0;
    for (; key[n] && n < sizeof k - 1; n++) {
        char c = key[n];
        k[n] = c == '_' ? '-' : (c >= 'A' && c <= 'Z') ? (char)(c - 'A' + 'a') : c;
    }
    if (key[n]) return NULL;
    k[n] = '\0';
    const char *best = NULL;
    size_t bd = 3;
    for (size_t i = 0; i < N_DIRECTIVES; i++) {
        size_t d = edit_distance(k, directive_keys[i]);
        if (d < bd) {
            bd = d;
            best = directive_keys[i];
        }
    }
    /* a short word two edits from "setup" or "format" is more likely prose */
    if (best && bd > 0 && n < 6 + bd) return NULL;
    return best;
}

void tram__records_warn(tram_records *r, long line, long col, const char *fmt, ...)
{
    size_t i = r->n_warnings++;
    if (i >= TRAM_RECORDS_WARNINGS_MAX) return;
    char *w = r->warnings[i];
    size_t cap = sizeof r->warnings[i];
    int n = col > 0 ? snprintf(w, cap, "%s:%ld:%ld: warning: ", r->source, line, col)
                    : snprintf(w, cap, "%s:%ld: warning: ", r->source, line);
    if (n < 0 || (size_t)n >= cap) return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(w + n, cap - (size_t)n, fmt, ap);
    va_end(ap);
}

static tram_status conflict(const char *file, long line, long col, const char *key, long first,
                            tram_error *err)
{
    return tram__fail(err, TRAM_EINPUT, file, line, col,
                      "directive '%s' given again with a different value (first at line %ld)",
                      key, first);
}

/* The common parameter list of the directive helpers below. */
#define DIR_ARGS                                                                                  \
    rec_directives *d, const char *file, long line, long col, const char *key, const char *value, \
        tram_error *err

/* length-unit, angle-unit and their robot-/sensor- forms. */
static tram_status directive_unit(DIR_ARGS)
{
    if (strcmp(key, "length-unit") == 0) {
        tram_length_unit u = tram_unit_length_parse(value);
        if (u == TRAM_LENGTH_UNSET)
            return tram__fail(err, TRAM_EINPUT, file, line, col,
                              "length-unit '%s': expected one of mm, cm, m, in", value);
        if (d->length_unit_line && d->length_unit != u)
            return conflict(file, line, col, key, d->length_unit_line, err);
        d->length_unit = u;
        d->length_unit_line = line;
    } else if (strcmp(key, "angle-unit") == 0) {
        tram_angle_unit u = tram_unit_angle_parse(value);
        if (u == TRAM_ANGLE_UNSET)
            return tram__fail(err, TRAM_EINPUT, file, line, col,
                              "angle-unit '%s': expected deg or rad", value);
        if (d->angle_unit_line && d->angle_unit != u)
            return conflict(file, line, col, key, d->angle_unit_line, err);
        d->angle_unit = u;
        d->angle_unit_line = line;
    } else if (strcmp(key, "robot-length-unit") == 0 || strcmp(key, "sensor-length-unit") == 0) {
        int b = key[0] == 'r' ? TRAM_BLOCK_ROBOT : TRAM_BLOCK_SENSOR;
        tram_length_unit u = tram_unit_length_parse(value);
        if (u == TRAM_LENGTH_UNSET)
            return tram__fail(err, TRAM_EINPUT, file, line, col,
                              "%s '%s': expected one of mm, cm, m, in", key, value);
        if (d->block_length_line[b] && d->block_length[b] != u)
            return conflict(file, line, col, key, d->block_length_line[b], err);
        d->block_length[b] = u;
        d->block_length_line[b] = line;
    } else {
        int b = key[0] == 'r' ? TRAM_BLOCK_ROBOT : TRAM_BLOCK_SENSOR;
        tram_angle_unit u = tram_unit_angle_parse(value);
        if (u == TRAM_ANGLE_UNSET)
            return tram__fail(err, TRAM_EINPUT, file, line, col, "%s '%s': expected deg or rad",
                              key, value);
        if (d->block_angle_line[b] && d->block_angle[b] != u)
            return conflict(file, line, col, key, d->block_angle_line[b], err);
        d->block_angle[b] = u;
        d->block_angle_line[b] = line;
    }
    return TRAM_OK;
}

/* robot-euler, sensor-euler. */
static tram_status directive_euler(DIR_ARGS)
{
    int b = key[0] == 'r' ? TRAM_BLOCK_ROBOT : TRAM_BLOCK_SENSOR;
    tram_euler_seq e = tram_euler_parse(value);
    if (e == TRAM_EULER_UNSET)
        return tram__fail(err, TRAM_EINPUT, file, line, col,
                          "%s '%s': expected an axis sequence and a kind, e.g. "
                          "zyx-intrinsic or xyz-extrinsic",
                          key, value);
    if (d->euler_line[b] && d->euler[b] != e)
        return conflict(file, line, col, key, d->euler_line[b], err);
    d->euler[b] = e;
    d->euler_line[b] = line;
    return TRAM_OK;
}

/* robot-pose and sensor-pose: which way the logged transforms point. */
static tram_status directive_pose(DIR_ARGS)
{
    if (strcmp(key, "robot-pose") == 0) {
        int inv = 0, tool = 0;
        if (strcmp(value, "flange-in-base") == 0) inv = 0;
        else if (strcmp(value, "base-in-flange") == 0) inv = 1;
        else if (strcmp(value, "tool-in-base") == 0) tool = 1;
        else
            return tram__fail(err, TRAM_EINPUT, file, line, col,
                              "robot-pose '%s': expected flange-in-base (T_base_flange), "
                              "base-in-flange (T_flange_base) or tool-in-base (T_base_tool, the "
                              "TCP logged with a tool offset active)",
                              value);
        if (d->pose_line[0] && (d->inverted[0] != inv || d->robot_tool != tool))
            return conflict(file, line, col, key, d->pose_line[0], err);
        d->inverted[0] = inv;
        d->robot_tool = tool;
        d->pose_line[0] = line;
    } else {
        int inv;
        if (strcmp(value, "target-in-sensor") == 0) inv = 0;
        else if (strcmp(value, "sensor-in-target") == 0) inv = 1;
        else
            return tram__fail(err, TRAM_EINPUT, file, line, col,
                              "sensor-pose '%s': expected target-in-sensor (T_sensor_target) "
                              "or sensor-in-target (T_target_sensor)",
                              value);
        if (d->pose_line[1] && d->inverted[1] != inv)
            return conflict(file, line, col, key, d->pose_line[1], err);
        d->inverted[1] = inv;
        d->pose_line[1] = line;
    }
    return TRAM_OK;
}

/* tool-in-flange. */
static tram_status directive_tool(DIR_ARGS)
{
    size_t at = 0;
    char why[200];
    tram_se3 T;
    tram_length_unit u;
    if (tram__tool_parse(value, &T, &u, &at, why, sizeof why) != 0)
        return tram__fail(err, TRAM_EINPUT, file, line, col + (long)at, "tool-in-flange: %s", why);
    if (d->has_tool && memcmp(&T, &d->tool, sizeof T) != 0)
        return conflict(file, line, col, key, d->tool_line, err);
    d->tool = T;
    d->tool_unit = u;
    d->has_tool = 1;
    d->tool_line = line;
    return TRAM_OK;
}

/* setup. */
static tram_status directive_setup(DIR_ARGS)
{
    tram_setup s = tram_setup_parse(value);
    if (s == TRAM_SETUP_UNSET)
        return tram__fail(err, TRAM_EINPUT, file, line, col,
                          "setup '%s': expected eye-in-hand or eye-to-hand", value);
    if (d->setup_line && d->setup != s) return conflict(file, line, col, key, d->setup_line, err);
    d->setup = s;
    d->setup_line = line;
    return TRAM_OK;
}

/* format: tram-records-N, N at most the version this tram reads. */
static tram_status directive_format(DIR_ARGS)
{
    (void)key;
    if (strncmp(value, "tram-records-", 13) != 0)
        return tram__fail(err, TRAM_EINPUT, file, line, col,
                          "format '%s': expected tram-records-1", value);
    char *end;
    errno = 0;
    long v = strtol(value + 13, &end, 10);
    if (*end || end == value + 13 || v < 1)
        return tram__fail(err, TRAM_EINPUT, file, line, col,
                          "format '%s': expected tram-records-1", value);
    if (v > 1)
        return tram__fail(err, TRAM_EINPUT, file, line, col,
                          "format version %ld is newer than this tram (%s) reads (1)", v,
                          TRAM_VERSION_STRING);
    d->format_version = (int)v;
    d->format_line = line;
    return TRAM_OK;
}

/* A key that is no directive: the error, with the nearest name if any. */
static tram_status directive_unknown(const char *file, long line, long col, const char *key,
                                     tram_error *err)
{
    const char *near = tram__directive_nearest(key);
    if (near)
        return tram__fail(err, TRAM_EINPUT, file, line, col,
                          "unknown directive '%s': did you mean '%s'? (docs/records.md lists "
                          "every directive)",
                          key, near);
    return tram__fail(err, TRAM_EINPUT, file, line, col,
                      "unknown directive '%s' (known: format, length-unit, angle-unit, "
                      "robot-length-unit, sensor-length-unit, robot-angle-unit, "
                      "sensor-angle-unit, robot-euler, sensor-euler, robot-pose, "
                      "sensor-pose, tool-in-flange, setup)",
                      key);
}

tram_status tram__directive_apply(rec_directives *d, const char *file, long line, long col,
                                  const char *key, const char *value, tram_error *err)
{
    tram_status (*apply)(DIR_ARGS) = NULL;
    if (strcmp(key, "length-unit") == 0 || strcmp(key, "angle-unit") == 0 ||
        strcmp(key, "robot-length-unit") == 0 || strcmp(key, "sensor-length-unit") == 0 ||
        strcmp(key, "robot-angle-unit") == 0 || strcmp(key, "sensor-angle-unit") == 0)
        apply = directive_unit;
    else if (strcmp(key, "robot-euler") == 0 || strcmp(key, "sensor-euler") == 0)
        apply = directive_euler;
    else if (strcmp(key, "robot-pose") == 0 || strcmp(key, "sensor-pose") == 0)
        apply = directive_pose;
    else if (strcmp(key, "tool-in-flange") == 0)
        apply = directive_tool;
    else if (strcmp(key, "setup") == 0)
        apply = directive_setup;
    else if (strcmp(key, "format") == 0)
        apply = directive_format;
    else
        return directive_unknown(file, line, col, key, err);
    return apply(d, file, line, col, key, value, err);
}
#undef DIR_ARGS

/* ---- schema -------------------------------------------------------- */

static int name_slot(const char *suffix, tram_rep_kind *kind)
{
    static const struct { const char *const *names; int n; tram_rep_kind k; } sets[] = {
        {pos_names, 3, TRAM_REP_NONE},       {quat_names, 4, TRAM_REP_QUAT},
        {rotvec_names, 3, TRAM_REP_ROTVEC},  {matrix_names, 9, TRAM_REP_MATRIX},
        {euler_names, 3, TRAM_REP_EULER}};
    for (size_t s = 0; s < sizeof sets / sizeof sets[0]; s++)
        for (int i = 0; i < sets[s].n; i++)
            if (strcmp(suffix, sets[s].names[i]) == 0) {
                *kind = sets[s].k;
                return sets[s].k == TRAM_REP_NONE ? i : 3 + i;
            }
    return -1;
}

void tram__schema_free(rec_schema *s)
{
    if (!s) return;
    tram__free(s->cols);
    s->cols = NULL;
}

tram_status tram__schema_build(const char *file, const char *const *names, const long *lines,
                               const long *cols, int n, rec_schema *s, tram_error *err)
{
    memset(s, 0, sizeof *s);
    s->station_col = -1;
    s->ncols = n;
    s->cols = tram__calloc((size_t)(n > 0 ? n : 1), sizeof *s->cols);
    if (!s->cols) return tram__fail(err, TRAM_ENOMEM, file, 0, 0, "out of memory");
    /* seen[block][slot] = index+1 of the column holding that slot, per kind */
    int seen[TRAM_BLOCK_COUNT][5][TRAM_RAW_MAX];
    int joint_seen[TRAM_JOINTS_MAX];
    memset(seen, 0, sizeof seen);
    memset(joint_seen, 0, sizeof joint_seen);
    for (int i = 0; i < n; i++) {
        long ln = lines ? lines[i] : 0, cl = cols ? cols[i] : 0;
        const char *nm = names[i];
        if (strcmp(nm, "station") == 0) {
            if (s->station_col >= 0)
                return tram__fail(err, TRAM_EINPUT, file, ln, cl, "column 'station' appears twice");
            s->station_col = i;
            s->cols[i].kind = REC_COL_STATION;
            continue;
        }
        if (strncmp(nm, "joint_", 6) == 0) {
            char *end;
            long j = strtol(nm + 6, &end, 10);
            if (*end || end == nm + 6 || j < 1 || j > TRAM_JOINTS_MAX || nm[6] == '0')
                return tram__fail(err, TRAM_EINPUT, file, ln, cl,
                                  "unknown column '%s': joint columns are joint_1 ... joint_%d", nm,
                                  TRAM_JOINTS_MAX);
            if (joint_seen[j - 1])
                return tram__fail(err, TRAM_EINPUT, file, ln, cl, "column '%s' appears twice", nm);
            joint_seen[j - 1] = i + 1;
            s->cols[i].kind = REC_COL_JOINT;
            s->cols[i].slot = (int)j - 1;
            continue;
        }
        int b = -1;
        for (int k = 0; k < TRAM_BLOCK_COUNT; k++)
            if (strncmp(nm, block_prefix[k], strlen(block_prefix[k])) == 0) b = k;
        tram_rep_kind kind = TRAM_REP_NONE;
        int slot = b < 0 ? -1 : name_slot(nm + strlen(block_prefix[b]), &kind);
        if (slot < 0)
            return tram__fail(err, TRAM_EINPUT, file, ln, cl,
                              "unknown column '%s': expected station, or robot_/sensor_ followed "
                              "by x, y, z and one rotation set (qw,qx,qy,qz | rx,ry,rz | "
                              "r11..r33 | e1,e2,e3)",
                              nm);
        if (seen[b][kind][slot])
            return tram__fail(err, TRAM_EINPUT, file, ln, cl, "column '%s' appears twice", nm);
        seen[b][kind][slot] = i + 1;
        s->cols[i].kind = REC_COL_VALUE;
        s->cols[i].block = b;
        s->cols[i].slot = slot;
        s->has_block[b] = 1;
    }
    long hl = lines && n > 0 ? lines[0] : 0;
    for (int b = 0; b < TRAM_BLOCK_COUNT; b++) {
        if (!s->has_block[b]) continue;
        for (int j = 0; j < 3; j++)
            if (!seen[b][TRAM_REP_NONE][j])
                return tram__fail(err, TRAM_EINPUT, file, hl, 0,
                                  "missing column '%s%s': a %s block needs x, y and z",
                                  block_prefix[b], pos_names[j], block_word[b]);
        tram_rep_kind found = TRAM_REP_NONE;
        for (int k = TRAM_REP_QUAT; k <= TRAM_REP_EULER; k++) {
            int nslot = tram__rep_slots((tram_rep_kind)k), any = 0;
            for (int j = 3; j < nslot; j++)
                if (seen[b][k][j]) any = 1;
            if (!any) continue;
            for (int j = 3; j < nslot; j++)
                if (!seen[b][k][j])
                    return tram__fail(err, TRAM_EINPUT, file, hl, 0,
                                      "missing column '%s%s': the %s rotation set is incomplete",
                                      block_prefix[b], tram__rep_slot_name((tram_rep_kind)k, j),
                                      block_word[b]);
            if (found != TRAM_REP_NONE) {
                int idx = seen[b][k][3] - 1;
                return tram__fail(err, TRAM_EINPUT, file, lines ? lines[idx] : 0,
                                  cols ? cols[idx] : 0,
                                  "the %s block has two rotation sets (%s... and %s...): "
                                  "expected exactly one",
                                  block_word[b], tram__rep_slot_name(found, 3),
                                  tram__rep_slot_name((tram_rep_kind)k, 3));
            }
            found = (tram_rep_kind)k;
        }
        if (found == TRAM_REP_NONE)
            return tram__fail(err, TRAM_EINPUT, file, hl, 0,
                              "the %s block has no rotation columns: expected one of "
                              "%sqw..qz, %srx..rz, %sr11..r33 or %se1..e3",
                              block_word[b], block_prefix[b], block_prefix[b], block_prefix[b],
                              block_prefix[b]);
        s->rep[b] = found;
        s->nslots[b] = tram__rep_slots(found);
    }
    int nj = 0;
    while (nj < TRAM_JOINTS_MAX && joint_seen[nj]) nj++;
    for (int j = nj; j < TRAM_JOINTS_MAX; j++)
        if (joint_seen[j])
            return tram__fail(err, TRAM_EINPUT, file, hl, 0,
                              "missing column 'joint_%d': joint columns must be joint_1 ... "
                              "joint_n without gaps",
                              nj + 1);
    s->n_joints = nj;
    /* Both robot_ and joint_ columns: the pose is read, the joints are
     * kept; tram_records_apply_chain then checks that they agree. */
    if (!s->has_block[0] && !s->has_block[1] && !nj)
        return tram__fail(err, TRAM_EINPUT, file, hl, 0,
                          "no pose columns: expected robot_x,... (or joint_1,...) and/or "
                          "sensor_x,...");
    return TRAM_OK;
}

/* ---- building poses ------------------------------------------------ */

static tram_status block_pose(const tram_records *r, size_t i, int b,
                              const tram_block_convention *c, const tram_read_options *opt,
                              tram_se3 *out, tram_error *err)
{
    const tram_station *st = &r->stations[i];
    if (!r->raw)
        return tram__fail(err, TRAM_EINPUT, r->source, st->line, 0,
                          "station '%s': no numbers as read to build the %s pose from", st->id,
                          block_word[b]);
    const double *v = tram__records_raw(r, i, b);
    const long rcol = r->rot_col ? r->rot_col[i * TRAM_BLOCK_COUNT + (size_t)b] : 0;
    tram_mat3 R;
    double ang = tram_unit_angle_in_rad(c->angle_unit);
    switch (c->rep) {
    case TRAM_REP_QUAT: {
        tram_quat_wxyz q = {v[3], v[4], v[5], v[6]};
        if (c->quat_xyzw) q = (tram_quat_wxyz){v[6], v[3], v[4], v[5]};
        double n = tram_quat_wxyz_norm(&q);
        double tol = opt && opt->quat_norm_tol > 0 ? opt->quat_norm_tol : TRAM_QUAT_NORM_TOL;
        if (tol > TRAM_QUAT_NORM_MAX_FIX) tol = TRAM_QUAT_NORM_MAX_FIX;
        if (!(fabs(n - 1.0) <= tol)) {
            /* Name the option only where it would help: a rounded log. */
            const char *hint = fabs(n - 1.0) <= TRAM_QUAT_NORM_MAX_FIX
                                   ? "; if the quaternions are only rounded (printed to a few "
                                     "decimals), pass --rounded-quat to normalise those within "
                                     "0.01 of unit norm"
                                   : "; check the column order and that the four columns hold "
                                     "one quaternion";
            return tram__fail(err, TRAM_EINPUT, r->source, st->line, rcol,
                              "station '%s': %s quaternion norm is %.9g, expected 1 within %g "
                              "(columns %sqw,qx,qy,qz, scalar first)%s",
                              st->id, block_word[b], n, tol, block_prefix[b],
                              tol < TRAM_QUAT_NORM_MAX_FIX ? hint : "");
        }
        tram_quat_wxyz_to_mat3(&q, &R);
        break;
    }
    case TRAM_REP_ROTVEC: {
        double w[3] = {v[3] * ang, v[4] * ang, v[5] * ang};
        tram_so3_exp(w, &R);
        break;
    }
    case TRAM_REP_EULER: {
        double e[3] = {v[3] * ang, v[4] * ang, v[5] * ang};
        tram_euler_to_mat3(c->euler, e, &R);
        break;
    }
    case TRAM_REP_MATRIX: {
        for (int k = 0; k < 9; k++) R.m[k / 3][k % 3] = v[3 + k];
        double def = tram_so3_defect(&R);
        double tol = opt && opt->matrix_tol > 0 ? opt->matrix_tol : TRAM_RECORDS_MATRIX_TOL;
        if (!(def <= tol)) {
            if (opt && opt->reorthonormalize && def <= TRAM_RECORDS_MATRIX_MAX_FIX) {
                tram_so3_nearest(&R, &R);
            } else if (opt && opt->reorthonormalize) {
                return tram__fail(err, TRAM_EINPUT, r->source, st->line, rcol,
                                  "station '%s': %s matrix is far from a rotation (defect %.3g > "
                                  "%g): not re-orthonormalised; check the column order and "
                                  "that the matrix is row-major",
                                  st->id, block_word[b], def, TRAM_RECORDS_MATRIX_MAX_FIX);
            } else {
                return tram__fail(err, TRAM_EINPUT, r->source, st->line, rcol,
                                  "station '%s': %s matrix is not a rotation (defect %.3g, "
                                  "tolerance %g; expected orthonormal rows and det +1); if it is "
                                  "only rounded, pass --reorthonormalize",
                                  st->id, block_word[b], def, tol);
            }
        }
        break;
    }
    default:
        return tram__fail(err, TRAM_EINPUT, r->source, st->line, 0, "no rotation set");
    }
    double t[3] = {v[0] * c->length_scale, v[1] * c->length_scale, v[2] * c->length_scale};
    tram_se3_from_rt(&R, t, out);
    if (c->inverted) tram_se3_invert(out, out);
    return TRAM_OK;
}

static tram_status rebuild_with(tram_records *r, const tram_block_convention conv[2],
                                const tram_read_options *opt, tram_error *err)
{
    for (int b = 0; b < TRAM_BLOCK_COUNT; b++) {
        if (!r->has_block[b]) continue;
        /* Poses computed from joints have no raw numbers to re-read. */
        if (b == TRAM_BLOCK_ROBOT && r->robot_from_chain) continue;
        if (b == TRAM_BLOCK_SENSOR && r->sensor_from_points) continue;
        r->conv[b] = conv[b];
        for (size_t i = 0; i < r->count; i++) {
            tram_station *st = &r->stations[i];
            tram_se3 *dst = b == TRAM_BLOCK_ROBOT ? &st->T_base_flange : &st->T_sensor_target;
            tram_status s = block_pose(r, i, b, &conv[b], opt, dst, err);
            if (s != TRAM_OK) return s;
            if (b == TRAM_BLOCK_ROBOT && r->robot_tool && r->has_tool) tram__tool_to_flange(r, dst, dst);
        }
    }
    return TRAM_OK;
}

tram_status tram_records_rebuild(tram_records *r, const tram_block_convention conv[2],
                                 tram_error *err)
{
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    opt.reorthonormalize = r->reorthonormalize;
    opt.quat_norm_tol = r->quat_norm_tol;
    return rebuild_with(r, conv, &opt, err);
}

/* Append one missing declaration to buf ("A; also B"). */
static void missing_add(char *buf, size_t *len, int *n, const char *what)
{
    size_t cap = 700;
    if (*len < cap)
        *len += (size_t)snprintf(buf + *len, cap - *len, "%s%s", *n ? "; also " : "", what);
    if (*len > cap) *len = cap;
    (*n)++;
}

tram_status tram__records_finish(tram_records *r, const rec_schema *s, const rec_directives *d,
                                 const tram_read_options *opt, long header_line,
                                 tram_error *err)
{
    const char *file = r->source;
    tram_length_unit lu = d->length_unit;
    if (opt && opt->length_unit != TRAM_LENGTH_UNSET) {
        if (lu != TRAM_LENGTH_UNSET && lu != opt->length_unit)
            return tram__fail(err, TRAM_EINPUT, file, d->length_unit_line, 0,
                              "the file declares length-unit %s but --length-unit %s was given",
                              tram_unit_length_name(lu), tram_unit_length_name(opt->length_unit));
        lu = opt->length_unit;
    }
    tram_angle_unit au = d->angle_unit;
    if (opt && opt->angle_unit != TRAM_ANGLE_UNSET) {
        if (au != TRAM_ANGLE_UNSET && au != opt->angle_unit)
            return tram__fail(err, TRAM_EINPUT, file, d->angle_unit_line, 0,
                              "the file declares angle-unit %s but --angle-unit %s was given",
                              tram_unit_angle_name(au), tram_unit_angle_name(opt->angle_unit));
        au = opt->angle_unit;
    }
    /* Every missing declaration in one message, so that a file is fixed in
     * one edit rather than one run per directive. */
    char missing[700] = "";
    size_t ml = 0;
    int nmiss = 0;
    if (lu == TRAM_LENGTH_UNSET)
        missing_add(missing, &ml, &nmiss,
                    "no length unit: add '# length-unit: mm' (or cm, m, in) or pass "
                    "--length-unit");
    if (s->n_joints && au == TRAM_ANGLE_UNSET && d->block_angle[0] == TRAM_ANGLE_UNSET)
        missing_add(missing, &ml, &nmiss,
                    "joint columns hold angles but no angle unit is given: add '# angle-unit: "
                    "deg' (or rad) or pass --angle-unit");
    tram_angle_unit bau[TRAM_BLOCK_COUNT];
    for (int b = 0; b < TRAM_BLOCK_COUNT; b++) {
        bau[b] = d->block_angle[b] != TRAM_ANGLE_UNSET ? d->block_angle[b] : au;
        if (!s->has_block[b]) continue;
        tram_rep_kind k = s->rep[b];
        char one[300];
        if ((k == TRAM_REP_ROTVEC || k == TRAM_REP_EULER) && bau[b] == TRAM_ANGLE_UNSET) {
            snprintf(one, sizeof one,
                     "the %s block holds angles (%s...) but no angle unit is given: add '# "
                     "angle-unit: deg' (or rad; '# %s-angle-unit:' for this block only) or pass "
                     "--angle-unit",
                     block_word[b], tram__rep_slot_name(k, 3), block_word[b]);
            missing_add(missing, &ml, &nmiss, one);
        }
        if (k == TRAM_REP_EULER && d->euler[b] == TRAM_EULER_UNSET) {
            snprintf(one, sizeof one,
                     "the %s block holds Euler angles but its convention is not declared: add "
                     "'# %s-euler: SEQ-intrinsic|SEQ-extrinsic' (e.g. zyx-intrinsic); tram never "
                     "assumes one",
                     block_word[b], block_word[b]);
            missing_add(missing, &ml, &nmiss, one);
        }
    }
    if (opt && opt->need_setup && d->setup == TRAM_SETUP_UNSET)
        missing_add(missing, &ml, &nmiss,
                    "no setup: add '# setup: eye-in-hand' (or eye-to-hand) or pass --setup");
    /* A tool declaration that does not fit the robot poses: alone at its
     * directive's line, else in the list with the missing ones. */
    const char *tool_msg = NULL;
    long tool_at = 0;
    if (d->has_tool && !d->robot_tool) {
        tool_msg = "tool-in-flange is declared, but the robot poses are not declared as "
                   "tool poses: add '# robot-pose: tool-in-base' if the controller logged "
                   "the TCP, or remove the tool";
        tool_at = d->tool_line;
    } else if (d->robot_tool && !s->has_block[TRAM_BLOCK_ROBOT]) {
        tool_msg = "robot-pose: tool-in-base applies to robot_ pose columns; joint "
                   "readings give flange poses through the chain";
        tool_at = d->pose_line[0];
    }
    if (tool_msg && nmiss) missing_add(missing, &ml, &nmiss, tool_msg);
    if (nmiss)
        return tram__fail(err, TRAM_EINPUT, file, header_line, 0, "%s%s", missing,
                          nmiss > 1 ? " (every missing declaration is listed)" : "");
    if (tool_msg) return tram__fail(err, TRAM_EINPUT, file, tool_at, 0, "%s", tool_msg);
    r->length_unit = lu;
    /* The record set's angle unit: the common one, else the first block's. */
    r->angle_unit = au != TRAM_ANGLE_UNSET ? au : (bau[0] != TRAM_ANGLE_UNSET ? bau[0] : bau[1]);
    r->setup = d->setup;
    r->setup_line = d->setup_line;
    r->n_joints = (size_t)s->n_joints;
    r->reorthonormalize = opt ? opt->reorthonormalize : 0;
    r->robot_tool = d->robot_tool;
    r->robot_pose_line = d->pose_line[0];
    r->has_tool = d->has_tool;
    r->tool_line = d->tool_line;
    r->tool_in_file = d->has_tool;
    if (d->has_tool) {
        r->T_flange_tool = d->tool;
        double f = tram_unit_length_factor(d->tool_unit, lu);
        for (int i = 0; i < 3; i++) r->T_flange_tool.m[i][3] *= f;
    }
    r->quat_norm_tol = opt ? opt->quat_norm_tol : 0;
    tram_block_convention conv[2];
    for (int b = 0; b < TRAM_BLOCK_COUNT; b++) {
        r->has_block[b] = s->has_block[b];
        conv[b].rep = s->rep[b];
        conv[b].euler = s->rep[b] == TRAM_REP_EULER ? d->euler[b] : TRAM_EULER_UNSET;
        conv[b].inverted = d->inverted[b];
        conv[b].angle_unit = bau[b];
        /* A block in its own unit is converted to the file's length unit. */
        conv[b].length_scale = d->block_length[b] != TRAM_LENGTH_UNSET
                                   ? tram_unit_length_factor(d->block_length[b], lu)
                                   : 1.0;
        conv[b].quat_xyzw = 0;
    }
    return rebuild_with(r, conv, opt, err);
}

/* ---- station ids ---------------------------------------------------- */

/* FNV-1a 64 of a NUL-terminated id (the parameters of text.c). */
static unsigned long long id_hash(const char *s)
{
    unsigned long long h = 1469598103934665603ULL;
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ULL;
    }
    return h;
}

/* Duplicate station ids: one pass in file order through an open-addressing
 * hash table of station indices (at most half full), so the first row
 * that repeats an earlier id is the one reported.  Linear time; the table
 * is 2-4 size_t per station, freed before returning. */
tram_status tram__check_unique_ids(tram_records *r, tram_error *err)
{
    if (r->count < 2) return TRAM_OK;
    size_t cap = 16;
    while (cap < 2 * r->count) cap *= 2;
    size_t *slot = tram__malloc(cap * sizeof *slot);
    if (!slot) return tram__fail(err, TRAM_ENOMEM, r->source, 0, 0, "out of memory");
    const size_t empty = (size_t)-1;
    tram__hint_fill(slot, cap * sizeof *slot);
    for (size_t i = 0; i < cap; i++) slot[i] = empty;
    tram_status s = TRAM_OK;
    for (size_t i = 0; i < r->count && s == TRAM_OK; i++) {
        const tram_station *b = &r->stations[i];
        size_t h = (size_t)id_hash(b->id) & (cap - 1);
        while (slot[h] != empty) {
            const tram_station *a = &r->stations[slot[h]];
            if (strcmp(a->id, b->id) == 0) {
                s = tram__fail(err, TRAM_EINPUT, r->source, b->line, 0,
                               "duplicate station id '%s' (first at line %ld): station ids must "
                               "be unique",
                               b->id, a->line);
                break;
            }
            h = (h + 1) & (cap - 1);
        }
        slot[h] = i;
    }
    tram__free(slot);
    return s;
}
