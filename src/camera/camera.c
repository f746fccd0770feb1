/*
 * camera.c - the pinhole camera with Brown-Conrady distortion: projection
 * of sensor-frame points to pixels and its inverse.
 *
 * Model (Brown 1966, "Decentering distortion of lenses"; the radial and
 * decentring terms as written in tram/camera.h).  The inverse is solved by
 * Gauss-Newton on the 2x2 distortion Jacobian, starting from the
 * undistorted guess, which converges in a few steps for real lenses; it is
 * kept inside the fold radius of the radial distortion (where r (1 + k1 r^2
 * + k2 r^4 + k3 r^6) stops growing: a strong barrel lens maps no ray inside
 * it to pixels beyond), so such pixels are refused in a few steps rather
 * than after 50, and a point on the far, folded branch is never returned.
 * The projection refuses points beyond the same fold: there the model's
 * pixel moves back toward the centre as the ray moves out, a pixel no real
 * lens puts there, so it must not enter a fit as if it were measured.
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
    if (!tram__camera_inside_fold(c, xy[0] * xy[0] + xy[1] * xy[1])) return 0;
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

/* The fold of the radial distortion: r_d = r (1 + k1 r^2 + k2 r^4 + k3 r^6)
 * grows with r until d r_d / dr = 1 + 3 k1 s + 5 k2 s^2 + 7 k3 s^3 = 0
 * (s = r^2); beyond, the lens model turns back, so a distorted radius has
 * two preimages or none.  The smallest positive root s by a doubling scan
 * and bisection (INFINITY when the derivative stays positive, as for
 * every model without negative coefficients). */
double tram__camera_fold_r2(const tram_camera *c)
{
    double a = 3.0 * c->k1, b = 5.0 * c->k2, d = 7.0 * c->k3;
    if (a >= 0 && b >= 0 && d >= 0) return INFINITY;
    double lo = 0.0, hi = 1e-4;
    while (1.0 + hi * (a + hi * (b + hi * d)) > 0) {
        lo = hi;
        hi *= 2.0;
        if (hi > 1e8) return INFINITY;
    }
    for (int it = 0; it < 80; it++) {
        double m = 0.5 * (lo + hi);
        if (1.0 + m * (a + m * (b + m * d)) > 0) lo = m;
        else hi = m;
    }
    return lo;
}

double tram_camera_fold_radius(const tram_camera *c) { return sqrt(tram__camera_fold_r2(c)); }

/* Inside the fold: first a bound that needs no root, since the projection
 * asks for every corner of every step.  On [0, r2] the derivative
 * 1 + 3 k1 s + 5 k2 s^2 + 7 k3 s^3 is at least 1 + a r2 + b r2^2 + d r2^3
 * with a, b, d the negative parts of 3 k1, 5 k2, 7 k3 (each term's least
 * value is at s = r2); when that is positive there is no fold before r2,
 * as for every ray of a usual lens.  Otherwise the fold itself decides. */
int tram__camera_inside_fold(const tram_camera *c, double r2)
{
    double a = fmin(3.0 * c->k1, 0.0), b = fmin(5.0 * c->k2, 0.0), d = fmin(7.0 * c->k3, 0.0);
    if (1.0 + r2 * (a + r2 * (b + r2 * d)) > 0.0) return 1;
    return r2 < tram__camera_fold_r2(c);
}

int tram__camera_unproject_from(const tram_camera *c, double fold_r2, const double uv[2],
                                const double start[2], double xy[2])
{
    /* undo the intrinsic matrix */
    double yd = (uv[1] - c->cy) / c->fy;
    double xd = (uv[0] - c->cx - c->skew * yd) / c->fx;
    double x = start[0], y = start[1];
    int pushed = 0;
    for (int it = 0; it < 50; it++) {
        double cur[2], J[4];
        tram_camera_distort(c, (double[2]){x, y}, cur);
        double ex = cur[0] - xd, ey = cur[1] - yd;
        if (fabs(ex) < 1e-12 && fabs(ey) < 1e-12) {
            xy[0] = x;
            xy[1] = y;
            return x * x + y * y < fold_r2 ? 1 : -1;
        }
        tram__camera_distort_jacobian(c, x, y, J);
        double det = J[0] * J[3] - J[1] * J[2];
        if (!(fabs(det) > 1e-300)) break;
        x -= (J[3] * ex - J[1] * ey) / det;
        y -= (-J[2] * ex + J[0] * ey) / det;
        /* A step past the fold goes to the other branch (or nowhere): put it
         * back inside; a pixel that keeps pulling out has no ray inside. */
        double r2 = x * x + y * y;
        if (r2 >= fold_r2) {
            if (++pushed > 8) {
                xy[0] = x;
                xy[1] = y;
                return -1;
            }
            double f = sqrt(fold_r2 / r2) * (1.0 - 0.5 / (double)(1 << pushed));
            x *= f;
            y *= f;
        }
    }
    xy[0] = x;
    xy[1] = y;
    return 0;
}

int tram__camera_unproject_why(const tram_camera *c, const double uv[2], double xy[2])
{
    return tram__camera_unproject_fold(c, tram__camera_fold_r2(c), uv, xy);
}

int tram__camera_unproject_fold(const tram_camera *c, double fold, const double uv[2], double xy[2])
{
    double yd = (uv[1] - c->cy) / c->fy;
    double start[2] = {(uv[0] - c->cx - c->skew * yd) / c->fx, yd};
    /* first order: divide by the radial factor at the distorted radius
     * (two or three steps fewer than from the distorted point itself) */
    double rd2 = start[0] * start[0] + start[1] * start[1];
    double radial = 1.0 + rd2 * (c->k1 + rd2 * (c->k2 + rd2 * c->k3));
    if (radial > 0.5) {
        start[0] /= radial;
        start[1] /= radial;
    }
    if (start[0] * start[0] + start[1] * start[1] >= fold) {
        double f = sqrt(0.5 * fold / (start[0] * start[0] + start[1] * start[1]));
        start[0] *= f;
        start[1] *= f;
    }
    return tram__camera_unproject_from(c, fold, uv, start, xy);
}

int tram_camera_unproject(const tram_camera *c, const double uv[2], double xy[2])
{
    return tram__camera_unproject_why(c, uv, xy) == 1;
}

int tram_camera_reproject(const tram_camera *c, const tram_se3 *T, const double X[3], double uv[2])
{
    double p[3];
    tram_se3_apply_point(T, X, p);
    return tram_camera_project(c, p, uv);
}
