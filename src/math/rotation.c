/*
 * rotation.c - unit quaternions (stored w, x, y, z), rotation vectors and
 * axis-angle, converted to and from rotation matrices.
 *
 * Math:
 *   R(q) for a unit Hamilton quaternion q = (w, x, y, z) is the usual
 *     [1-2(y2+z2)  2(xy-wz)  2(xz+wy); 2(xy+wz) 1-2(x2+z2) 2(yz-wx);
 *      2(xz-wy) 2(yz+wx) 1-2(x2+y2)].
 *   q(R) by Shepperd's method ("Quaternion from rotation matrix", J.
 *     Guidance and Control 1(3), 1978): take the square root of the largest
 *     of 1 + tr R and 1 + 2 R_ii - tr R, so the division is always by a
 *     number of at least 1/2.
 *   Rotation vectors are the SO(3) exp/log maps (so3.c).
 */
#include "math/so3_internal.h"
#include "tram/rotation.h"
#include "core/tram_internal.h"

#include <math.h>

double tram_quat_wxyz_norm(const tram_quat_wxyz *q)
{
    return sqrt(q->w * q->w + q->x * q->x + q->y * q->y + q->z * q->z);
}

void tram_quat_wxyz_canonical(const tram_quat_wxyz *q, tram_quat_wxyz *out)
{
    double v[4] = {q->w, q->x, q->y, q->z};
    int flip = 0;
    for (int i = 0; i < 4; i++) {
        if (v[i] > 0.0) break;
        if (v[i] < 0.0) {
            flip = 1;
            break;
        }
    }
    double s = flip ? -1.0 : 1.0;
    out->w = s * v[0];
    out->x = s * v[1];
    out->y = s * v[2];
    out->z = s * v[3];
}

void tram_quat_wxyz_mul(const tram_quat_wxyz *a, const tram_quat_wxyz *b, tram_quat_wxyz *out)
{
    tram_quat_wxyz r;
    r.w = a->w * b->w - a->x * b->x - a->y * b->y - a->z * b->z;
    r.x = a->w * b->x + a->x * b->w + a->y * b->z - a->z * b->y;
    r.y = a->w * b->y - a->x * b->z + a->y * b->w + a->z * b->x;
    r.z = a->w * b->z + a->x * b->y - a->y * b->x + a->z * b->w;
    *out = r;
}

void tram_quat_wxyz_to_mat3(const tram_quat_wxyz *q, tram_mat3 *out)
{
    double n = tram_quat_wxyz_norm(q);
    if (!(n > 0.0)) {
        tram_so3_identity(out);
        return;
    }
    double w = q->w / n, x = q->x / n, y = q->y / n, z = q->z / n;
    out->m[0][0] = 1.0 - 2.0 * (y * y + z * z);
    out->m[0][1] = 2.0 * (x * y - w * z);
    out->m[0][2] = 2.0 * (x * z + w * y);
    out->m[1][0] = 2.0 * (x * y + w * z);
    out->m[1][1] = 1.0 - 2.0 * (x * x + z * z);
    out->m[1][2] = 2.0 * (y * z - w * x);
    out->m[2][0] = 2.0 * (x * z - w * y);
    out->m[2][1] = 2.0 * (y * z + w * x);
    out->m[2][2] = 1.0 - 2.0 * (x * x + y * y);
}

void tram_quat_wxyz_from_mat3(const tram_mat3 *R, tram_quat_wxyz *out)
{
    const double(*m)[3] = R->m;
    double tr = m[0][0] + m[1][1] + m[2][2];
    double w, x, y, z;
    if (tr >= m[0][0] && tr >= m[1][1] && tr >= m[2][2]) {
        double r = sqrt(1.0 + tr);
        w = 0.5 * r;
        double f = 0.5 / r;
        x = (m[2][1] - m[1][2]) * f;
        y = (m[0][2] - m[2][0]) * f;
        z = (m[1][0] - m[0][1]) * f;
    } else if (m[0][0] >= m[1][1] && m[0][0] >= m[2][2]) {
        double r = sqrt(fmax(1.0 + 2.0 * m[0][0] - tr, 0.0));
        x = 0.5 * r;
        double f = 0.5 / r;
        w = (m[2][1] - m[1][2]) * f;
        y = (m[0][1] + m[1][0]) * f;
        z = (m[0][2] + m[2][0]) * f;
    } else if (m[1][1] >= m[2][2]) {
        double r = sqrt(fmax(1.0 + 2.0 * m[1][1] - tr, 0.0));
        y = 0.5 * r;
        double f = 0.5 / r;
        w = (m[0][2] - m[2][0]) * f;
        x = (m[0][1] + m[1][0]) * f;
        z = (m[1][2] + m[2][1]) * f;
    } else {
        double r = sqrt(fmax(1.0 + 2.0 * m[2][2] - tr, 0.0));
        z = 0.5 * r;
        double f = 0.5 / r;
        w = (m[1][0] - m[0][1]) * f;
        x = (m[0][2] + m[2][0]) * f;
        y = (m[1][2] + m[2][1]) * f;
    }
    double n = sqrt(w * w + x * x + y * y + z * z);
    tram_quat_wxyz q = {w / n, x / n, y / n, z / n};
    tram_quat_wxyz_canonical(&q, out);
}

void tram_rotvec_to_mat3(const double rv[3], tram_mat3 *out) { tram_so3_exp(rv, out); }

void tram_rotvec_from_mat3(const tram_mat3 *R, double out_rv[3]) { tram_so3_log(R, out_rv); }

void tram_axis_angle_to_mat3(const double axis[3], double angle_rad, tram_mat3 *out)
{
    double n = tram__norm3(axis);
    if (!(n > 0.0)) {
        tram_so3_identity(out);
        return;
    }
    double w[3] = {axis[0] / n * angle_rad, axis[1] / n * angle_rad, axis[2] / n * angle_rad};
    tram_so3_exp(w, out);
}

void tram_axis_angle_from_mat3(const tram_mat3 *R, double out_axis[3], double *out_angle_rad)
{
    double w[3];
    tram_so3_log(R, w);
    double t = tram__norm3(w);
    if (t == 0.0) {
        out_axis[0] = 1.0;
        out_axis[1] = out_axis[2] = 0.0;
    } else {
        for (int i = 0; i < 3; i++) out_axis[i] = w[i] / t;
    }
    *out_angle_rad = t;
}
