/*
 * pose.c - the pose of a target from its pixels in one image.
 *
 * Planar targets: Zhang (2000), "A flexible new technique for camera
 * calibration", IEEE PAMI 22(11), section 2 and appendix A: the homography
 * H ~ K [r1 r2 t] between the target plane and the image; with the pixels
 * first undistorted and normalised by the camera (tram_camera_unproject),
 * K = I, so r1 = l h1, r2 = l h2, t = l h3 with l = 1 / |h1| (here the mean
 * of 1/|h1| and 1/|h2|), r3 = r1 x r2, and R the rotation nearest to
 * [r1 r2 r3] (SVD, tram_so3_nearest).  H is the normalised DLT (Hartley,
 * "In defense of the eight-point algorithm", IEEE PAMI 19(6), 1997): both
 * point sets centred and scaled to mean distance sqrt(2), h the right
 * singular vector of the smallest singular value (LAPACKE).
 * Non-planar targets: EPnP (epnp.c).
 * Both starts are refined by Levenberg-Marquardt on the pixel residuals
 * through the full Brown-Conrady model (math/lm.c, analytic Jacobian,
 * camera_jac.c); the covariance is s^2 (J^T J)^-1, s^2 = chi^2 / (2n - 6).
 */
#include "math/so3_internal.h"
#include "camera/pose_internal.h"
#include "camera/camera_jac_internal.h"
#include "camera/camera_internal.h"
#include "math/linalg_internal.h"
#include "math/lm_internal.h"

#include <math.h>
#include <string.h>

int tram__points_shape(const double *xyz, size_t n, tram_se3 *T_target_plane)
{
    double c[3] = {0, 0, 0}, C[9] = {0}, ev[3], V[9];
    if (n == 0) return 0;
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++) c[a] += xyz[3 * i + (size_t)a] / (double)n;
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
                C[3 * a + b] += (xyz[3 * i + (size_t)a] - c[a]) * (xyz[3 * i + (size_t)b] - c[b]);
    if (tram__symeig(3, C, ev, V) != TRAM_OK) return 0;
    double big = sqrt(fmax(ev[2], 0.0)), mid = sqrt(fmax(ev[1], 0.0)), low = sqrt(fmax(ev[0], 0.0));
    double scale = 0;
    for (int a = 0; a < 3; a++) scale = fmax(scale, fabs(c[a]));
    if (!(big > 1e-12 * (scale > 1 ? scale : 1))) return 0;
    if (!(mid > 1e-9 * big)) return 1;
    if (T_target_plane) {
        /* plane axes: largest extent, next, normal (right-handed) */
        double ax[3] = {V[2], V[5], V[8]}, ay[3] = {V[1], V[4], V[7]}, az[3];
        tram__cross3(ax, ay, az);
        tram_mat3 R;
        for (int a = 0; a < 3; a++) {
            R.m[a][0] = ax[a];
            R.m[a][1] = ay[a];
            R.m[a][2] = az[a];
        }
        tram_se3_from_rt(&R, c, T_target_plane);
    }
    return low <= TRAM__PLANAR_RATIO * big ? 2 : 3;
}

/* Similarity that centres pts (n x 2) and scales them to mean distance
 * sqrt(2): T = [s 0 -s mx; 0 s -s my; 0 0 1]. */
static void hartley(const double *pts, size_t n, double T[9])
{
    double mx = 0, my = 0, d = 0;
    for (size_t i = 0; i < n; i++) {
        mx += pts[2 * i] / (double)n;
        my += pts[2 * i + 1] / (double)n;
    }
    for (size_t i = 0; i < n; i++) d += hypot(pts[2 * i] - mx, pts[2 * i + 1] - my) / (double)n;
    double s = d > 0 ? sqrt(2.0) / d : 1.0;
    double t[9] = {s, 0, -s * mx, 0, s, -s * my, 0, 0, 1};
    memcpy(T, t, sizeof t);
}

static void apply_h(const double T[9], const double p[2], double out[2])
{
    double w = T[6] * p[0] + T[7] * p[1] + T[8];
    out[0] = (T[0] * p[0] + T[1] * p[1] + T[2]) / w;
    out[1] = (T[3] * p[0] + T[4] * p[1] + T[5]) / w;
}

static void mat3_mul(const double a[9], const double b[9], double out[9])
{
    double r[9];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            r[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
    memcpy(out, r, sizeof r);
}

tram_status tram__pose_homography(const double *xyz, const double *xy, size_t n,
                                  const tram_se3 *T_target_plane, tram_se3 *T_sensor_target,
                                  tram_error *err)
{
    size_t rows = 2 * n < 9 ? 9 : 2 * n;
    double *ab = tram__malloc(2 * n * sizeof *ab), *A = tram__calloc(rows * 9, sizeof *A);
    double *U = NULL, s[9], Vt[81];
    tram_status st = TRAM_OK;
    if (!ab || !A) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    tram_se3 T_plane_target;
    tram_se3_invert(T_target_plane, &T_plane_target);
    for (size_t i = 0; i < n; i++) {
        double q[3];
        tram_se3_apply_point(&T_plane_target, xyz + 3 * i, q);
        ab[2 * i] = q[0];
        ab[2 * i + 1] = q[1];
    }
    double T1[9], T2[9];
    hartley(ab, n, T1);
    hartley(xy, n, T2);
    for (size_t i = 0; i < n; i++) {
        double p[2], q[2];
        apply_h(T1, ab + 2 * i, p);
        apply_h(T2, xy + 2 * i, q);
        double *r0 = A + 18 * i, *r1 = r0 + 9;
        r0[0] = p[0]; r0[1] = p[1]; r0[2] = 1;
        r0[6] = -q[0] * p[0]; r0[7] = -q[0] * p[1]; r0[8] = -q[0];
        r1[3] = p[0]; r1[4] = p[1]; r1[5] = 1;
        r1[6] = -q[1] * p[0]; r1[7] = -q[1] * p[1]; r1[8] = -q[1];
    }
    if ((st = tram__svd((int)rows, 9, A, U, s, Vt)) != TRAM_OK) {
        st = tram__fail(err, st, NULL, 0, 0, "the homography's SVD failed");
        goto out;
    }
    /* A one-dimensional null space is needed; a second near-null direction
     * means the points do not fix the homography (e.g. 3 of 4 on a line). */
    if (!(s[7] > 1e-9 * s[0])) {
        st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                        "the %zu points do not determine the target's plane-to-image mapping "
                        "(three of them on one line, or too few in general position)", n);
        goto out;
    }
    double Hn[9], T2i[9], H[9];
    memcpy(Hn, Vt + 72, sizeof Hn);
    {
        double s2 = T2[0];
        double t2i[9] = {1 / s2, 0, -T2[2] / s2, 0, 1 / s2, -T2[5] / s2, 0, 0, 1};
        memcpy(T2i, t2i, sizeof t2i);
    }
    mat3_mul(T2i, Hn, H);
    mat3_mul(H, T1, H);
    /* Zhang (2000): [h1 h2 h3] = l [r1 r2 t] */
    double h1[3] = {H[0], H[3], H[6]}, h2[3] = {H[1], H[4], H[7]}, h3[3] = {H[2], H[5], H[8]};
    double n1 = tram__norm3(h1), n2 = tram__norm3(h2);
    if (!(n1 > 0 && n2 > 0)) {
        st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0, "degenerate homography");
        goto out;
    }
    double l = 0.5 * (1.0 / n1 + 1.0 / n2);
    if (h3[2] * l < 0) l = -l; /* the target is in front of the camera */
    double r1[3], r2[3], r3[3], t[3];
    for (int a = 0; a < 3; a++) {
        r1[a] = l * h1[a];
        r2[a] = l * h2[a];
        t[a] = l * h3[a];
    }
    tram__cross3(r1, r2, r3);
    tram_mat3 M, R;
    for (int a = 0; a < 3; a++) {
        M.m[a][0] = r1[a];
        M.m[a][1] = r2[a];
        M.m[a][2] = r3[a];
    }
    tram_so3_nearest(&M, &R);
    tram_se3 T_sensor_plane;
    tram_se3_from_rt(&R, t, &T_sensor_plane);
    tram_se3_compose(&T_sensor_plane, &T_plane_target, T_sensor_target);
out:
    tram__free(ab);
    tram__free(A);
    return st;
}

/* ---- Levenberg-Marquardt on the pixels -------------------------------- */

typedef struct pose_ctx {
    const tram_camera *cam;
    const double *xyz, *uv, *w;
    size_t n;
    tram_se3 T;
} pose_ctx;

/* T (+) delta: (R exp(w), t + dt), delta = (dt, w). */
static void pose_apply(const tram_se3 *T, const double *d, tram_se3 *out)
{
    tram_mat3 R, E;
    double t[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_exp(d + 3, &E);
    tram_so3_mul(&R, &E, &R);
    for (int a = 0; a < 3; a++) t[a] += d[a];
    tram_se3_from_rt(&R, t, out);
}

static int pose_eval(void *vctx, const double *delta, double *r, double *J)
{
    pose_ctx *c = vctx;
    tram_se3 T = c->T;
    if (delta) pose_apply(&c->T, delta, &T);
    for (size_t i = 0; i < c->n; i++) {
        const double *p = c->xyz + 3 * i;
        double ps[3], uv[2], Jp[6], sw = c->w ? sqrt(c->w[i]) : 1.0;
        tram_se3_apply_point(&T, p, ps);
        if (!tram__camera_project_jac(c->cam, ps, uv, Jp, NULL)) return -1;
        r[2 * i] = sw * (uv[0] - c->uv[2 * i]);
        r[2 * i + 1] = sw * (uv[1] - c->uv[2 * i + 1]);
        if (!J) continue;
        /* d ps / d dt = I;  d ps / d w_k = R (e_k x p) */
        double D[3][6];
        for (int a = 0; a < 3; a++)
            for (int k = 0; k < 3; k++) D[a][k] = a == k;
        for (int k = 0; k < 3; k++) {
            double e[3] = {0, 0, 0}, ex[3], rex[3];
            e[k] = 1;
            tram__cross3(e, p, ex);
            for (int a = 0; a < 3; a++)
                rex[a] = T.m[a][0] * ex[0] + T.m[a][1] * ex[1] + T.m[a][2] * ex[2];
            for (int a = 0; a < 3; a++) D[a][3 + k] = rex[a];
        }
        for (int row = 0; row < 2; row++)
            for (int k = 0; k < 6; k++)
                J[(2 * i + (size_t)row) * 6 + (size_t)k] =
                    sw * (Jp[3 * row] * D[0][k] + Jp[3 * row + 1] * D[1][k] + Jp[3 * row + 2] * D[2][k]);
    }
    return 0;
}

static void pose_commit(void *vctx, const double *delta)
{
    pose_ctx *c = vctx;
    tram_se3 T;
    pose_apply(&c->T, delta, &T);
    c->T = T;
}

static void pose_residuals(const tram_camera *cam, const double *xyz, const double *uv, size_t n,
                           const tram_se3 *T, double *res)
{
    for (size_t i = 0; i < n; i++) {
        double ps[3], q[2];
        tram_se3_apply_point(T, xyz + 3 * i, ps);
        if (!tram_camera_project(cam, ps, q)) res[i] = INFINITY;
        else res[i] = hypot(q[0] - uv[2 * i], q[1] - uv[2 * i + 1]);
    }
}

tram_status tram__pose_refine(const tram_camera *cam, const double *xyz, const double *uv,
                              const double *w, size_t n, tram_se3 *T, int *iterations,
                              double *res_px)
{
    pose_ctx c = {cam, xyz, uv, w, n, *T};
    tram__lm_problem pb = {6, 2 * n, pose_eval, pose_commit, &c};
    tram__lm_info info;
    tram_status st = tram__lm_run(&pb, 100, &info);
    if (st == TRAM_OK) *T = c.T;
    if (iterations) *iterations = info.iterations;
    if (res_px) pose_residuals(cam, xyz, uv, n, T, res_px);
    return st;
}

/* Exactly flat (to rounding): the homography alone is the start. */
static int shape_flat(const double *xyz, size_t n)
{
    double c[3] = {0, 0, 0}, C[9] = {0}, ev[3], V[9];
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++) c[a] += xyz[3 * i + (size_t)a] / (double)n;
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
                C[3 * a + b] += (xyz[3 * i + (size_t)a] - c[a]) * (xyz[3 * i + (size_t)b] - c[b]);
    if (tram__symeig(3, C, ev, V) != TRAM_OK) return 1;
    return sqrt(fmax(ev[0], 0.0)) <= 1e-9 * sqrt(fmax(ev[2], 0.0));
}

static int finite_all(const double *v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (!isfinite(v[i])) return 0;
    return 1;
}

/* Covariance s^2 (J^T J)^-1 at T. */
static tram_status pose_covariance(const tram_camera *cam, const double *xyz, const double *uv,
                                   size_t n, tram_pose_result *out)
{
    pose_ctx c = {cam, xyz, uv, NULL, n, out->T_sensor_target};
    tram__lm_problem pb = {6, 2 * n, pose_eval, pose_commit, &c};
    double H[36], g[6], r2, Hi[36];
    out->cov_valid = 0;
    out->sigma_px = NAN;
    tram_status st = tram__lm_normal(&pb, H, g, &r2);
    if (st == TRAM_ENOMEM) return st;
    if (st != TRAM_OK) return TRAM_OK;
    if (2 * n > 6) out->sigma_px = sqrt(r2 / (double)(2 * n - 6));
    if (!(isfinite(out->sigma_px)) || tram__spd_inverse(6, H, Hi) != TRAM_OK) return TRAM_OK;
    for (int k = 0; k < 36; k++) out->cov[k] = Hi[k] * out->sigma_px * out->sigma_px;
    out->cov_valid = 1;
    return TRAM_OK;
}

tram_status tram_pose_from_pixels(const tram_camera *cam, const double *xyz, const double *uv,
                                  size_t n, tram_pose_result *out, tram_error *err)
{
    memset(out, 0, sizeof *out);
    tram_se3_identity(&out->T_sensor_target);
    out->sigma_px = out->rms_px = out->max_px = NAN;
    if (!(cam->fx > 0) || !(cam->fy > 0) || !isfinite(cam->cx) || !isfinite(cam->cy))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "the camera needs positive focal lengths fx, fy and a finite centre");
    if (n < 4)
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "%zu point(s) seen: at least 4 are needed for the target's pose", n);
    if (!finite_all(xyz, 3 * n) || !finite_all(uv, 2 * n))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "a point or pixel is NaN or infinite");
    tram_se3 T_target_plane;
    int shape = tram__points_shape(xyz, n, &T_target_plane);
    if (shape == 0)
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "the %zu target points coincide: no pose can be found", n);
    if (shape == 1)
        return tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                          "the %zu target points seen lie on one line: their pose about that "
                          "line is undetermined; the view must show points off the line", n);
    double *xy = tram__malloc(2 * n * sizeof *xy), *res = tram__malloc(n * sizeof *res);
    tram_status st = TRAM_OK;
    if (!xy || !res) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto out;
    }
    for (size_t i = 0; i < n; i++) {
        int why = tram__camera_unproject_why(cam, uv + 2 * i, xy + 2 * i);
        if (why == -1) {
            st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                            "pixel %zu (%.3f, %.3f) lies beyond the fold of the camera's lens "
                            "model (its radial distortion turns back for rays %.1f degrees off "
                            "the optical axis): no ray maps to it; check k1, k2, k3",
                            i + 1, uv[2 * i], uv[2 * i + 1],
                            atan(tram_camera_fold_radius(cam)) * 180.0 / TRAM_PI);
            goto out;
        }
        if (why != 1) {
            st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                            "pixel %zu (%.3f, %.3f) cannot be undistorted by the camera model "
                            "(no convergence in 50 steps)",
                            i + 1, uv[2 * i], uv[2 * i + 1]);
            goto out;
        }
    }
    out->planar = shape == 2;
    /* Starts: the homography for a flat point set, EPnP for one spread in
     * 3D, and both for a nearly flat one (within TRAM__PLANAR_RATIO but not
     * exactly flat), where either may be poor; the refined pose with the
     * smaller pixel cost wins. */
    int n_ok = 0;
    double best = INFINITY;
    tram_error first_err;
    tram_error_clear(&first_err);
    for (int k = 0; k < 2; k++) {
        int homography = k == 0;
        if (homography && !out->planar) continue;
        if (!homography && out->planar && shape_flat(xyz, n)) continue;
        tram_se3 T;
        tram_error e1;
        st = homography ? tram__pose_homography(xyz, xy, n, &T_target_plane, &T, &e1)
                        : tram__pose_epnp(xyz, xy, n, &T, &e1);
        if (st == TRAM_ENOMEM) {
            st = tram__fail(err, st, NULL, 0, 0, "out of memory");
            goto out;
        }
        if (st != TRAM_OK) {
            if (!first_err.message[0]) first_err = e1;
            continue;
        }
        int iters = 0;
        st = tram__pose_refine(cam, xyz, uv, NULL, n, &T, &iters, res);
        if (st == TRAM_ENOMEM) {
            st = tram__fail(err, st, NULL, 0, 0, "out of memory");
            goto out;
        }
        if (st != TRAM_OK) continue;
        double c = 0;
        for (size_t i = 0; i < n; i++) c += res[i] * res[i];
        n_ok++;
        if (c < best) {
            best = c;
            out->T_sensor_target = T;
            out->iterations = iters;
        }
    }
    if (!n_ok) {
        if (first_err.message[0]) {
            if (err) *err = first_err;
            st = first_err.status;
        } else {
            st = tram__fail(err, TRAM_EUNDETERMINED, NULL, 0, 0,
                            "the pose puts target points behind the camera: the view is "
                            "degenerate or the points do not match the pixels");
        }
        goto out;
    }
    st = TRAM_OK;
    pose_residuals(cam, xyz, uv, n, &out->T_sensor_target, res);
    double ss = 0;
    out->max_px = 0;
    for (size_t i = 0; i < n; i++) {
        ss += res[i] * res[i];
        if (res[i] > out->max_px) out->max_px = res[i];
    }
    out->n = n;
    out->rms_px = sqrt(ss / (double)n);
    if (pose_covariance(cam, xyz, uv, n, out) != TRAM_OK)
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
out:
    tram__free(xy);
    tram__free(res);
    return st;
}
