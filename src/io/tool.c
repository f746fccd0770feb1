/*
 * tool.c - robot poses logged as tool (TCP) poses.  A controller with a
 * tool offset active logs T_base_tool, the tool centre point's pose in the
 * base, rather than T_base_flange.  Solving with those poses would give
 * T_tool_sensor where T_flange_sensor is wanted.  With the tool's pose in
 * the flange frame, T_flange_tool, declared (directive tool-in-flange, or
 * tram_records_set_tool from the command's --tool), every station's flange
 * pose is T_base_flange = T_base_tool T_flange_tool^-1 (composition of
 * rigid transforms, docs/notation.md).  Nothing is assumed: tool poses
 * without a declared tool are refused before anything is solved.
 *
 * Text form: "X,Y,ZUNIT ROTATION", the translation with its length unit,
 * then one of quat:W,X,Y,Z (unit quaternion, scalar first),
 * rotvec:A,B,CUNIT (rotation vector with its angle unit),
 * euler:SEQ:A,B,CUNIT (Euler angles of a named convention) or
 * matrix:R11,...,R33 (row-major).
 */
#include "io/tool_internal.h"
#include "io/text_internal.h"

#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

/* n comma-separated numbers in [s, e), then an optional unit word. */
static int numbers(const char *s, const char *e, double *v, int n, char *unit, size_t ucap)
{
    const char *u = e;
    while (u > s && isalpha((unsigned char)u[-1])) u--;
    size_t ul = (size_t)(e - u);
    if (ul >= ucap) return -1;
    memcpy(unit, u, ul);
    unit[ul] = '\0';
    const char *p = s;
    for (int i = 0; i < n; i++) {
        const char *c = p;
        while (c < u && *c != ',') c++;
        if (c == p || tram__parse_number(p, c, &v[i]) != 0) return -1;
        if (i < n - 1 && c == u) return -1;
        p = c + 1;
    }
    return p == u + 1 ? 0 : -1;
}

static int fail_at(size_t *at, size_t off, char *why, size_t cap, const char *msg)
{
    *at = off;
    snprintf(why, cap, "%s", msg);
    return -1;
}

static int parse_rotation(const char *r, const char *e, tram_mat3 *R, char *why, size_t cap)
{
    char unit[16];
    double v[9];
    if (strncmp(r, "quat:", 5) == 0) {
        if (numbers(r + 5, e, v, 4, unit, sizeof unit) != 0 || unit[0]) goto bad;
        tram_quat_wxyz q = {v[0], v[1], v[2], v[3]};
        if (!(fabs(tram_quat_wxyz_norm(&q) - 1.0) <= TRAM_QUAT_NORM_TOL)) {
            snprintf(why, cap, "the tool's quaternion has norm %.9g, expected 1", tram_quat_wxyz_norm(&q));
            return -1;
        }
        tram_quat_wxyz_to_mat3(&q, R);
        return 0;
    }
    if (strncmp(r, "matrix:", 7) == 0) {
        if (numbers(r + 7, e, v, 9, unit, sizeof unit) != 0 || unit[0]) goto bad;
        for (int i = 0; i < 9; i++) R->m[i / 3][i % 3] = v[i];
        if (!(tram_so3_defect(R) <= TRAM_RECORDS_MATRIX_TOL)) {
            snprintf(why, cap, "the tool's matrix is not a rotation (expected orthonormal rows, det +1)");
            return -1;
        }
        return 0;
    }
    tram_euler_seq seq = TRAM_EULER_UNSET;
    const char *nums;
    if (strncmp(r, "rotvec:", 7) == 0) {
        nums = r + 7;
    } else if (strncmp(r, "euler:", 6) == 0) {
        const char *c = strchr(r + 6, ':');
        char name[24];
        if (!c || c > e || (size_t)(c - r - 6) >= sizeof name) goto bad;
        memcpy(name, r + 6, (size_t)(c - r - 6));
        name[c - r - 6] = '\0';
        seq = tram_euler_parse(name);
        if (seq == TRAM_EULER_UNSET) {
            snprintf(why, cap, "Euler convention '%s': expected e.g. zyx-intrinsic or xyz-extrinsic", name);
            return -1;
        }
        nums = c + 1;
    } else {
        goto bad;
    }
    if (numbers(nums, e, v, 3, unit, sizeof unit) != 0) goto bad;
    tram_angle_unit au = tram_unit_angle_parse(unit);
    if (au == TRAM_ANGLE_UNSET) {
        snprintf(why, cap, "the tool's angles need their unit, deg or rad (e.g. rotvec:0,0,90deg)");
        return -1;
    }
    double f = tram_unit_angle_in_rad(au), a[3] = {v[0] * f, v[1] * f, v[2] * f};
    if (seq == TRAM_EULER_UNSET) tram_so3_exp(a, R);
    else tram_euler_to_mat3(seq, a, R);
    return 0;
bad:
    snprintf(why, cap, "expected the tool's rotation as quat:W,X,Y,Z, rotvec:A,B,Cdeg, "
                       "euler:SEQ:A,B,Cdeg or matrix:R11,...,R33");
    return -1;
}

int tram__tool_parse(const char *s, tram_se3 *T_flange_tool, tram_length_unit *unit, size_t *at,
                     char *why, size_t cap)
{
    const char *p = s;
    while (*p == ' ' || *p == '\t') p++;
    const char *te = p;
    while (*te && *te != ' ' && *te != '\t') te++;
    double t[3];
    char un[16];
    if (te == p || numbers(p, te, t, 3, un, sizeof un) != 0)
        return fail_at(at, (size_t)(p - s), why, cap,
                       "expected the tool's pose in the flange frame as X,Y,ZUNIT ROTATION, e.g. "
                       "0,0,150mm quat:1,0,0,0");
    *unit = tram_unit_length_parse(un);
    if (*unit == TRAM_LENGTH_UNSET)
        return fail_at(at, (size_t)(p - s), why, cap,
                       "the tool's translation needs its unit: mm, cm, m or in (e.g. 0,0,150mm)");
    const char *r = te;
    while (*r == ' ' || *r == '\t') r++;
    const char *re = r;
    while (*re && *re != ' ' && *re != '\t') re++;
    const char *rest = re;
    while (*rest == ' ' || *rest == '\t') rest++;
    if (re == r)
        return fail_at(at, (size_t)(r - s), why, cap,
                       "the tool's rotation is missing: give it even when there is none, as "
                       "quat:1,0,0,0");
    if (*rest) return fail_at(at, (size_t)(rest - s), why, cap, "text after the tool's rotation");
    tram_mat3 R;
    if (parse_rotation(r, re, &R, why, cap) != 0) {
        *at = (size_t)(r - s);
        return -1;
    }
    tram_se3_from_rt(&R, t, T_flange_tool);
    return 0;
}

void tram__tool_to_flange(const tram_records *r, const tram_se3 *T_base_tool, tram_se3 *out)
{
    tram_se3 T_tool_flange;
    tram_se3_invert(&r->T_flange_tool, &T_tool_flange);
    tram_se3_compose(T_base_tool, &T_tool_flange, out);
}

tram_status tram_tool_parse(const char *text, tram_se3 *T_flange_tool, tram_length_unit *unit,
                            tram_error *err)
{
    size_t at = 0;
    char why[200];
    if (tram__tool_parse(text, T_flange_tool, unit, &at, why, sizeof why) != 0)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "tool '%s' (at character %zu): %s", text,
                          at + 1, why);
    return TRAM_OK;
}

tram_status tram_records_set_tool(tram_records *r, const tram_se3 *T_flange_tool,
                                  tram_length_unit unit, tram_error *err)
{
    if (!r->robot_tool)
        return tram__fail(err, TRAM_EINPUT, r->source, r->robot_pose_line, 0,
                          "a tool was given, but the robot poses are not declared as tool poses: "
                          "if the controller logged the TCP, add '# robot-pose: tool-in-base'");
    if (r->has_tool)
        return tram__fail(err, TRAM_EINPUT, r->source, r->tool_line, 0,
                          r->tool_in_file
                              ? "the file declares the tool (tool-in-flange); a second one was given"
                              : "the tool was given already; a second one was given");
    if (unit == TRAM_LENGTH_UNSET || !tram_se3_is_valid(T_flange_tool, TRAM_SO3_VALID_TOL))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "the tool must be a rigid transform with its length unit");
    r->T_flange_tool = *T_flange_tool;
    double f = tram_unit_length_factor(unit, r->length_unit);
    for (int i = 0; i < 3; i++) r->T_flange_tool.m[i][3] *= f;
    r->has_tool = 1;
    for (size_t i = 0; i < r->count; i++)
        tram__tool_to_flange(r, &r->stations[i].T_base_flange, &r->stations[i].T_base_flange);
    return TRAM_OK;
}

tram_status tram_records_require_flange(const tram_records *r, tram_error *err)
{
    if (r && r->robot_tool && !r->has_tool)
        return tram__fail(err, TRAM_EINPUT, r->source, r->robot_pose_line, 0,
                          "robot-pose: tool-in-base: the robot poses are tool (TCP) poses, but "
                          "the tool's pose in the flange frame is not given: add '# "
                          "tool-in-flange: X,Y,ZUNIT ROTATION' (e.g. 0,0,150mm quat:1,0,0,0) or "
                          "pass --tool; tram never assumes one");
    return TRAM_OK;
}
