/*
 * camera_jac.c - analytic Jacobians of the Brown-Conrady projection
 * (Brown 1966, "Decentering distortion of lenses"; the model written out in
 * tram/camera.h) with respect to the point in the sensor frame and to the
 * intrinsic parameters, for the Levenberg-Marquardt refinements on pixels.
 */
#include "camera/camera_jac_internal.h"
#include "camera/camera_internal.h"

void tram__camera_params(const tram_camera *c, double v[TRAM__CAM_NPARAM])
{
    v[0] = c->fx; v[1] = c->fy; v[2] = c->cx; v[3] = c->cy; v[4] = c->skew;
    v[5] = c->k1; v[6] = c->k2; v[7] = c->k3; v[8] = c->p1; v[9] = c->p2;
}

void tram__camera_set_params(tram_camera *c, const double v[TRAM__CAM_NPARAM])
{
    c->fx = v[0]; c->fy = v[1]; c->cx = v[2]; c->cy = v[3]; c->skew = v[4];
    c->k1 = v[5]; c->k2 = v[6]; c->k3 = v[7]; c->p1 = v[8]; c->p2 = v[9];
}

int tram__camera_free_params(const tram_camera *c, int idx[TRAM__CAM_NPARAM])
{
    int n = 0;
    for (int i = 0; i < 4; i++) idx[n++] = i;
    switch (c->distortion) {
    case TRAM_DISTORTION_FULL:
        idx[n++] = 5; idx[n++] = 6; idx[n++] = 7; idx[n++] = 8; idx[n++] = 9;
        break;
    case TRAM_DISTORTION_RADIAL3:
        idx[n++] = 5; idx[n++] = 6; idx[n++] = 7;
        break;
    case TRAM_DISTORTION_RADIAL2:
        idx[n++] = 5; idx[n++] = 6;
        break;
    default:
        break;
    }
    return n;
}

int tram__camera_project_jac(const tram_camera *c, const double p[3], double uv[2], double Jp[6],
                             double *Ji)
{
    if (!(p[2] > 0.0)) return 0;
    double iz = 1.0 / p[2], x = p[0] * iz, y = p[1] * iz;
    double r2 = x * x + y * y, r4 = r2 * r2, r6 = r4 * r2;
    if (!tram__camera_inside_fold(c, r2)) return 0; /* as tram_camera_project */
    double radial = 1.0 + c->k1 * r2 + c->k2 * r4 + c->k3 * r6;
    double dradial = c->k1 + 2.0 * c->k2 * r2 + 3.0 * c->k3 * r4; /* d radial / d r2 */
    double xd = x * radial + 2.0 * c->p1 * x * y + c->p2 * (r2 + 2.0 * x * x);
    double yd = y * radial + c->p1 * (r2 + 2.0 * y * y) + 2.0 * c->p2 * x * y;
    uv[0] = c->fx * xd + c->skew * yd + c->cx;
    uv[1] = c->fy * yd + c->cy;
    /* d(xd, yd) / d(x, y) */
    double a = radial + 2.0 * x * x * dradial + 2.0 * c->p1 * y + 6.0 * c->p2 * x;
    double b = 2.0 * x * y * dradial + 2.0 * c->p1 * x + 2.0 * c->p2 * y;
    double d = radial + 2.0 * y * y * dradial + 6.0 * c->p1 * y + 2.0 * c->p2 * x;
    /* d(u, v) / d(x, y) */
    double ux = c->fx * a + c->skew * b, uy = c->fx * b + c->skew * d;
    double vx = c->fy * b, vy = c->fy * d;
    /* d(x, y) / dp = [iz 0 -x iz; 0 iz -y iz] */
    Jp[0] = ux * iz; Jp[1] = uy * iz; Jp[2] = -(ux * x + uy * y) * iz;
    Jp[3] = vx * iz; Jp[4] = vy * iz; Jp[5] = -(vx * x + vy * y) * iz;
    if (Ji) {
        double *ju = Ji, *jv = Ji + TRAM__CAM_NPARAM;
        for (int i = 0; i < TRAM__CAM_NPARAM; i++) ju[i] = jv[i] = 0.0;
        ju[0] = xd; ju[2] = 1.0; ju[4] = yd;
        jv[1] = yd; jv[3] = 1.0;
        /* d(xd, yd) / d(k1, k2, k3, p1, p2) */
        double dx[5] = {x * r2, x * r4, x * r6, 2.0 * x * y, r2 + 2.0 * x * x};
        double dy[5] = {y * r2, y * r4, y * r6, r2 + 2.0 * y * y, 2.0 * x * y};
        for (int k = 0; k < 5; k++) {
            ju[5 + k] = c->fx * dx[k] + c->skew * dy[k];
            jv[5 + k] = c->fy * dy[k];
        }
    }
    return 1;
}
