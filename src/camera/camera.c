/*
 * camera.c - the pinhole camera with Brown-Conrady distortion: projection
 * of sensor-frame points to pixels and its inverse.
 *
 * Model (Brown 1966, "Decentering distortion of lenses"; the radial and
 * decentring terms as written in tram/camera.h).  The inverse is solved by
 * Gauss-Newton on the 2x2 distortion Jacobian, starting from the
 * undistorted guess, which converges in a few steps for real lenses.
 */
#include <math.h>
#include <string.h>

#include "camera/camera_internal.h"
#include "tram/camera.h"

static const char *const distortion_names[] = {"none", "radial2", "radial3", "full"};

const char *tram_distortion_name(tram_distortion d)
{
    if ((int)d < 0 || (int)d > (int)TRAM_DISTORTION_FULL) return "?";
    return distortion_names[d];
}

int tram_distortion_parse(const char *name)
{
    for (int i = 0; i <= (int)TRAM_DISTORTION_FULL; i++)
        if (name && strcmp(name, distortion_names[i]) == 0) return i;
    return -1;
}

void tram_camera_distort(const tram_camera *c, const double xy[2], double xyd[2])
{
    double x = xy[0], y = xy[1];
    double r2 = x * x + y * y;
    double radial = 1.0 + r2 * (c->k1 + r2 * (c->k2 + r2 * c->k3));
    double xd = x * radial + 2.0 * c->p1 * x * y + c->p2 * (r2 + 2.0 * x * x);
    double yd = y * radial + c->p1 * (r2 + 2.0 * y * y) + 2.0 * c->p2 * x * y;
    xyd[0] = xd;
    xyd[1] = yd;
}

int tram_camera_project(const tram_camera *c, const double p[3], double uv[2])
{
    if (!(p[2] > 0.0)) return 0;
    double xy[2] = {p[0] / p[2], p[1] / p[2]}, d[2];
    tram_camera_distort(c, xy, d);
    uv[0] = c->fx * d[0] + c->skew * d[1] + c->cx;
    uv[1] = c->fy * d[1] + c->cy;
    return 1;
}

/* Jacobian of the distortion at (x, y): J = d(xd, yd) / d(x, y). */
void tram__camera_distort_jacobian(const tram_camera *c, double x, double y, double J[4])
{
    double r2 = x * x + y * y;
    double radial = 1.0 + r2 * (c->k1 + r2 * (c->k2 + r2 * c->k3));
    double dradial = c->k1 + r2 * (2.0 * c->k2 + 3.0 * c->k3 * r2); /* d radial / d r2 */
    J[0] = radial + 2.0 * x * x * dradial + 2.0 * c->p1 * y + 6.0 * c->p2 * x;
    J[1] = 2.0 * x * y * dradial + 2.0 * c->p1 * x + 2.0 * c->p2 * y;
    J[2] = 2.0 * x * y * dradial + 2.0 * c->p1 * x + 2.0 * c->p2 * y;
    J[3] = radial + 2.0 * y * y * dradial + 6.0 * c->p1 * y + 2.0 * c->p2 * x;
}

int tram_camera_unproject(const tram_camera *c, const double uv[2], double xy[2])
{
    /* undo the intrinsic matrix */
    double yd = (uv[1] - c->cy) / c->fy;
    double xd = (uv[0] - c->cx - c->skew * yd) / c->fx;
    double x = xd, y = yd;
    for (int it = 0; it < 50; it++) {
        double cur[2], J[4];
        tram_camera_distort(c, (double[2]){x, y}, cur);
        double ex = cur[0] - xd, ey = cur[1] - yd;
        if (fabs(ex) < 1e-12 && fabs(ey) < 1e-12) {
            xy[0] = x;
            xy[1] = y;
            return 1;
        }
        tram__camera_distort_jacobian(c, x, y, J);
        double det = J[0] * J[3] - J[1] * J[2];
        if (!(fabs(det) > 1e-300)) break;
        x -= (J[3] * ex - J[1] * ey) / det;
        y -= (-J[2] * ex + J[0] * ey) / det;
    }
    xy[0] = x;
    xy[1] = y;
    return 0;
}

int tram_camera_reproject(const tram_camera *c, const tram_se3 *T, const double X[3], double uv[2])
{
    double p[3];
    tram_se3_apply_point(T, X, p);
    return tram_camera_project(c, p, uv);
}
