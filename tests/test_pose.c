/* test_pose.c - unit tests of the pose from pixels (camera/pose.c, epnp.c,
 * camera_jac.c): exact recovery on synthetic projections of our own (the
 * Brown-Conrady model of tram/camera.h), planar and non-planar, with
 * distortion; refusals of degenerate input; coverage of the covariance. */
#include "test_util.h"
#include "camera/camera_jac_internal.h"
#include "camera/pose_internal.h"

static tram_camera test_camera(int distorted)
{
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.fx = 1210.5; c.fy = 1204.25; c.cx = 643.2; c.cy = 478.9; c.skew = 0.0;
    if (distorted) {
        c.k1 = -0.21; c.k2 = 0.08; c.k3 = -0.01; c.p1 = 8e-4; c.p2 = -5e-4;
        c.distortion = TRAM_DISTORTION_FULL;
    }
    c.width = 1280;
    c.height = 960;
    return c;
}

/* A target pose facing the camera: tilts up to ~35 degrees, 400-900 mm away. */
static void facing_pose(test_rng *r, tram_se3 *T_sensor_target, double cx, double cy)
{
    double w[3] = {0.6 * (test_rng_uniform(r) - 0.5), 0.6 * (test_rng_uniform(r) - 0.5),
                   2.0 * M_PI * test_rng_uniform(r)};
    tram_mat3 R;
    tram_so3_exp(w, &R);
    double z = 400 + 500 * test_rng_uniform(r);
    double t[3] = {0.05 * z * (test_rng_uniform(r) - 0.5), 0.05 * z * (test_rng_uniform(r) - 0.5), z};
    /* put the target's centre (cx, cy, 0) on the ray t */
    double rc[3], c3[3] = {cx, cy, 0};
    tram_so3_apply(&R, c3, rc);
    for (int a = 0; a < 3; a++) t[a] -= rc[a];
    tram_se3_from_rt(&R, t, T_sensor_target);
}

static void board_points(int cols, int rows, double s, double *xyz)
{
    for (int r = 0; r < rows; r++)
        for (int c = 0; c < cols; c++) {
            double *p = xyz + 3 * (r * cols + c);
            p[0] = c * s;
            p[1] = r * s;
            p[2] = 0;
        }
}

static void project_all(const tram_camera *cam, const tram_se3 *T, const double *xyz, size_t n,
                        double *uv)
{
    for (size_t i = 0; i < n; i++) {
        double p[3];
        tram_se3_apply_point(T, xyz + 3 * i, p);
        assert_true(tram_camera_project(cam, p, uv + 2 * i));
    }
}

static void expect_pose(const tram_se3 *got, const tram_se3 *want, double tol_rot, double tol_rel)
{
    double ang, len;
    tram_se3_distance(got, want, &ang, &len);
    double tn = sqrt(tram__sq_t(want->m[0][3]) + tram__sq_t(want->m[1][3]) + tram__sq_t(want->m[2][3]));
    if (!(ang * M_PI / 180.0 <= tol_rot) || !(len <= tol_rel * tn))
        fail_msg("pose differs by %.3g rad and %.3g (relative %.3g)", ang * M_PI / 180.0, len, len / tn);
}

static void test_planar_exact(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("pose planar exact", 52001);
    double xyz[3 * 54], uv[2 * 54];
    board_points(9, 6, 25.0, xyz);
    double worst_rot = 0, worst_rel = 0;
    for (int t = 0; t < 100; t++) {
        tram_camera cam = test_camera(t % 2);
        tram_se3 T;
        facing_pose(&rng, &T, 100, 62.5);
        project_all(&cam, &T, xyz, 54, uv);
        tram_pose_result res;
        tram_error e;
        assert_int_equal(tram_pose_from_pixels(&cam, xyz, uv, 54, &res, &e), TRAM_OK);
        assert_true(res.planar);
        expect_pose(&res.T_sensor_target, &T, 1e-9, 1e-9);
        assert_true(res.rms_px < 1e-9);
        double ang, len;
        tram_se3_distance(&res.T_sensor_target, &T, &ang, &len);
        worst_rot = fmax(worst_rot, ang * M_PI / 180);
        worst_rel = fmax(worst_rel, len / T.m[2][3]);
    }
    printf("[ figures  ] planar, 100 poses: worst rotation error %.2e rad, translation %.2e relative\n",
           worst_rot, worst_rel);
    /* The homography alone (undistorted pixels) is already exact. */
    tram_camera cam = test_camera(0);
    tram_se3 T, Tp, Th;
    facing_pose(&rng, &T, 100, 62.5);
    project_all(&cam, &T, xyz, 54, uv);
    double xy[108];
    for (int i = 0; i < 54; i++) assert_true(tram_camera_unproject(&cam, uv + 2 * i, xy + 2 * i));
    assert_int_equal(tram__points_shape(xyz, 54, &Tp), 2);
    tram_error e;
    assert_int_equal(tram__pose_homography(xyz, xy, 54, &Tp, &Th, &e), TRAM_OK);
    expect_pose(&Th, &T, 1e-9, 1e-9);
}

/* Smallest over largest principal extent of a point set. */
static double flatness(const double *xyz, size_t n)
{
    double c[3] = {0, 0, 0}, C[9] = {0}, ev[3], V[9];
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++) c[a] += xyz[3 * i + (size_t)a] / (double)n;
    for (size_t i = 0; i < n; i++)
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
                C[3 * a + b] += (xyz[3 * i + (size_t)a] - c[a]) * (xyz[3 * i + (size_t)b] - c[b]);
    /* Eigenvalues of the symmetric 3x3 scatter from the trigonometric
     * solution of its characteristic cubic (O. K. Smith, Commun. ACM 4(4),
     * 1961), independent of the library's LAPACKE route. */
    double p1 = C[1] * C[1] + C[2] * C[2] + C[5] * C[5];
    double q = (C[0] + C[4] + C[8]) / 3;
    double p2 = tram__sq_t(C[0] - q) + tram__sq_t(C[4] - q) + tram__sq_t(C[8] - q) + 2 * p1;
    double p = sqrt(p2 / 6);
    if (p == 0) return 1;
    double B[9];
    for (int k = 0; k < 9; k++) B[k] = (C[k] - (k % 4 == 0 ? q : 0)) / p;
    double detB = B[0] * (B[4] * B[8] - B[5] * B[7]) - B[1] * (B[3] * B[8] - B[5] * B[6]) +
                  B[2] * (B[3] * B[7] - B[4] * B[6]);
    double r = fmax(-1, fmin(1, detB / 2)), phi = acos(r) / 3;
    ev[0] = q + 2 * p * cos(phi);
    ev[2] = q + 2 * p * cos(phi + 2 * M_PI / 3);
    (void)V;
    return sqrt(fmax(ev[2], 0) / ev[0]);
}

static void test_nonplanar_exact(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("pose non-planar exact", 52002);
    double worst_rot = 0, worst_rel = 0;
    for (int t = 0; t < 100; t++) {
        size_t n = 4 + (size_t)(t % 30);
        double xyz[3 * 40], uv[2 * 40], xy[2 * 40];
        /* 4 or 5 points nearly on one plane can have two poses that fit
         * their pixels; those sets are drawn again (spread >= 20% of the
         * extent in every direction). */
        tram_se3 Tp;
        do {
            for (size_t i = 0; i < n; i++)
                for (int a = 0; a < 3; a++) xyz[3 * i + (size_t)a] = 150 * (test_rng_uniform(&rng) - 0.5);
        } while (n < 6 && flatness(xyz, n) < 0.2);
        assert_int_equal(tram__points_shape(xyz, n, &Tp), flatness(xyz, n) <= TRAM__PLANAR_RATIO ? 2 : 3);
        tram_camera cam = test_camera(t % 2);
        tram_se3 T;
        facing_pose(&rng, &T, 0, 0);
        project_all(&cam, &T, xyz, n, uv);
        tram_pose_result res;
        tram_error e;
        tram_status st = tram_pose_from_pixels(&cam, xyz, uv, n, &res, &e);
        if (st != TRAM_OK) fail_msg("trial %d (%zu points): %s", t, n, e.message);

        expect_pose(&res.T_sensor_target, &T, 1e-9, 1e-9);
        double ang, len;
        tram_se3_distance(&res.T_sensor_target, &T, &ang, &len);
        worst_rot = fmax(worst_rot, ang * M_PI / 180);
        worst_rel = fmax(worst_rel, len / T.m[2][3]);
        /* EPnP alone is exact without noise for 6 or more points. */
        if (n >= 6 && t % 2 == 0) {
            tram_se3 Te;
            for (size_t i = 0; i < n; i++) assert_true(tram_camera_unproject(&cam, uv + 2 * i, xy + 2 * i));
            assert_int_equal(tram__pose_epnp(xyz, xy, n, &Te, &e), TRAM_OK);
            expect_pose(&Te, &T, 1e-7, 1e-7);
        }
    }
    printf("[ figures  ] non-planar, 100 poses (4-33 points): worst rotation error %.2e rad, "
           "translation %.2e relative\n", worst_rot, worst_rel);
}

static void test_degenerate(void **state)
{
    (void)state;
    tram_camera cam = test_camera(1);
    tram_se3 T;
    test_rng rng = test_rng_seeded("pose degenerate", 52003);
    facing_pose(&rng, &T, 0, 0);
    double xyz[3 * 8], uv[2 * 8];
    tram_pose_result res;
    tram_error e;
    /* fewer than 4 points */
    board_points(3, 1, 20, xyz);
    xyz[6 + 1] = 20; /* not collinear */
    project_all(&cam, &T, xyz, 3, uv);
    assert_int_equal(tram_pose_from_pixels(&cam, xyz, uv, 3, &res, &e), TRAM_EUNDETERMINED);
    assert_non_null(strstr(e.message, "at least 4"));
    /* collinear points */
    board_points(8, 1, 20, xyz);
    project_all(&cam, &T, xyz, 8, uv);
    assert_int_equal(tram_pose_from_pixels(&cam, xyz, uv, 8, &res, &e), TRAM_EUNDETERMINED);
    assert_non_null(strstr(e.message, "one line"));
    /* coincident points */
    for (int i = 0; i < 24; i++) xyz[i] = 5.0;
    project_all(&cam, &T, xyz, 8, uv);
    assert_int_equal(tram_pose_from_pixels(&cam, xyz, uv, 8, &res, &e), TRAM_EUNDETERMINED);
    /* four coplanar points, three of them on a line */
    double q[12] = {0, 0, 0, 10, 0, 0, 20, 0, 0, 5, 10, 0};
    project_all(&cam, &T, q, 4, uv);
    assert_int_equal(tram_pose_from_pixels(&cam, q, uv, 4, &res, &e), TRAM_EUNDETERMINED);
    printf("[ message  ] %s\n", e.message);
    /* NaN pixel */
    double sq[12] = {0, 0, 0, 10, 0, 0, 0, 10, 0, 10, 10, 0};
    project_all(&cam, &T, sq, 4, uv);
    uv[3] = NAN;
    assert_int_equal(tram_pose_from_pixels(&cam, sq, uv, 4, &res, &e), TRAM_EINPUT);
    /* a square of 4 is enough */
    project_all(&cam, &T, sq, 4, uv);
    assert_int_equal(tram_pose_from_pixels(&cam, sq, uv, 4, &res, &e), TRAM_OK);
    expect_pose(&res.T_sensor_target, &T, 1e-9, 1e-9);
    /* a camera without focal length */
    tram_camera bad = cam;
    bad.fx = 0;
    assert_int_equal(tram_pose_from_pixels(&bad, sq, uv, 4, &res, &e), TRAM_EINPUT);
}

static void test_jacobian(void **state)
{
    (void)state;
    tram_camera cam = test_camera(1);
    cam.skew = 0.7;
    double p[3] = {120, -80, 700}, uv[2], Jp[6], Ji[20];
    assert_true(tram__camera_project_jac(&cam, p, uv, Jp, Ji));
    double uv0[2];
    tram_camera_project(&cam, p, uv0);
    assert_close(uv[0], uv0[0], 1e-12);
    assert_close(uv[1], uv0[1], 1e-12);
    for (int k = 0; k < 3; k++) {
        double pp[3] = {p[0], p[1], p[2]}, pm[3] = {p[0], p[1], p[2]}, a[2], b[2];
        pp[k] += 1e-4;
        pm[k] -= 1e-4;
        tram_camera_project(&cam, pp, a);
        tram_camera_project(&cam, pm, b);
        for (int r = 0; r < 2; r++) assert_close(Jp[3 * r + k], (a[r] - b[r]) / 2e-4, 1e-6);
    }
    double v[10];
    tram__camera_params(&cam, v);
    for (int k = 0; k < 10; k++) {
        double h = k < 5 ? 1e-4 : 1e-7, a[2], b[2], vp[10], vm[10];
        memcpy(vp, v, sizeof v);
        memcpy(vm, v, sizeof v);
        vp[k] += h;
        vm[k] -= h;
        tram_camera cp = cam, cm = cam;
        tram__camera_set_params(&cp, vp);
        tram__camera_set_params(&cm, vm);
        tram_camera_project(&cp, p, a);
        tram_camera_project(&cm, p, b);
        for (int r = 0; r < 2; r++) assert_close(Ji[10 * r + k], (a[r] - b[r]) / (2 * h), 1e-5);
    }
}

/* The covariance: over 300 noisy views the 95% interval of each pose
 * parameter holds the truth 90-99% of the time. */
static void test_covariance_coverage(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    test_rng rng = test_rng_seeded("pose covariance", 52004);
    double xyz[3 * 54], uv[2 * 54];
    board_points(9, 6, 25.0, xyz);
    int inside[6] = {0}, trials = 300;
    for (int t = 0; t < trials; t++) {
        tram_camera cam = test_camera(1);
        tram_se3 T;
        facing_pose(&rng, &T, 100, 62.5);
        project_all(&cam, &T, xyz, 54, uv);
        for (int i = 0; i < 108; i++) uv[i] += 0.3 * test_rng_normal(&rng);
        tram_pose_result res;
        tram_error e;
        assert_int_equal(tram_pose_from_pixels(&cam, xyz, uv, 54, &res, &e), TRAM_OK);
        assert_true(res.cov_valid);
        /* deviation in the covariance's parameters: dt, and w with
         * R_true = R_est exp(w) */
        tram_mat3 Re, Rt, D, Ret;
        double te[3], tt[3], w[3];
        tram_se3_to_rt(&res.T_sensor_target, &Re, te);
        tram_se3_to_rt(&T, &Rt, tt);
        tram_so3_transpose(&Re, &Ret);
        tram_so3_mul(&Ret, &Rt, &D);
        tram_so3_log(&D, w);
        double dev[6] = {tt[0] - te[0], tt[1] - te[1], tt[2] - te[2], w[0], w[1], w[2]};
        for (int k = 0; k < 6; k++)
            if (fabs(dev[k]) <= 1.96 * sqrt(res.cov[7 * k])) inside[k]++;
    }
    printf("[ figures  ] pose 95%% intervals over %d views (0.3 px noise): tx %.1f%% ty %.1f%% "
           "tz %.1f%% rx %.1f%% ry %.1f%% rz %.1f%%\n",
           trials, 100.0 * inside[0] / trials, 100.0 * inside[1] / trials, 100.0 * inside[2] / trials,
           100.0 * inside[3] / trials, 100.0 * inside[4] / trials, 100.0 * inside[5] / trials);
    for (int k = 0; k < 6; k++) {
        assert_true(inside[k] >= 0.90 * trials);
        assert_true(inside[k] <= 0.99 * trials);
    }
}

/* The fold of a strong barrel lens (camera.c): with k1 = -0.5 alone,
 * d/dr [r (1 + k1 r^2)] = 1 + 3 k1 r^2 vanishes at r_f = sqrt(2/3) (worked
 * by hand), where the distorted radius peaks at r_f (1 - r_f^2 / 2) =
 * 0.5443.  A pixel inside that radius unprojects to the ray inside the
 * fold; one beyond is refused (it has no ray there) and tram_pose names
 * the fold. */
static void test_fold(void **state)
{
    (void)state;
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.fx = c.fy = 1000;
    c.cx = 640;
    c.cy = 480;
    c.k1 = -0.5;
    c.distortion = TRAM_DISTORTION_RADIAL2;
    assert_close(tram_camera_fold_radius(&c), sqrt(2.0 / 3.0), 1e-12);
    double xy[2], back[2];
    /* distorted radius 0.5 (inside the peak 0.5443): the near root */
    assert_true(tram_camera_unproject(&c, (double[2]){640 + 0.3 * 1000, 480 + 0.4 * 1000}, xy));
    assert_true(hypot(xy[0], xy[1]) < sqrt(2.0 / 3.0));
    tram_camera_distort(&c, xy, back);
    assert_close(back[0], 0.3, 1e-12);
    assert_close(back[1], 0.4, 1e-12);
    /* distorted radius 0.6: beyond the fold, refused */
    assert_false(tram_camera_unproject(&c, (double[2]){640 + 0.36 * 1000, 480 + 0.48 * 1000}, xy));
    c.k1 = 0.1; /* no fold for a pincushion lens */
    assert_true(isinf(tram_camera_fold_radius(&c)));
    c.k1 = -0.5;
    double pts[3 * 4] = {0, 0, 0, 100, 0, 0, 0, 100, 0, 100, 100, 0};
    double uv[2 * 4] = {640, 480, 700, 480, 640, 540, 640 + 360, 480 + 480};
    tram_pose_result pr;
    tram_error e;
    assert_int_equal(tram_pose_from_pixels(&c, pts, uv, 4, &pr, &e), TRAM_EUNDETERMINED);
    printf("  refusal: %s\n", e.message);
    assert_non_null(strstr(e.message, "beyond the fold of the camera's lens model"));
}

/* The projection refuses rays beyond the fold (camera.c), so that a pixel
 * on the model's folded branch never enters a fit.  k1 = -0.5: fold at
 * r = sqrt(2/3) = 0.8165 (worked by hand, above).  k1 = -0.5, k2 = 0.1:
 * 1 - 1.5 s + 0.5 s^2 has the roots s = 1 and 2 (by hand), so the model
 * turns back at r = 1 and grows again beyond r = sqrt(2); a ray at r =
 * sqrt(3), where the derivative is positive again (1 - 4.5 + 4.5 = 1), is
 * still beyond the fold and refused. */
static void test_project_fold(void **state)
{
    (void)state;
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.fx = c.fy = 1000;
    c.cx = 640;
    c.cy = 480;
    c.k1 = -0.5;
    c.distortion = TRAM_DISTORTION_RADIAL2;
    double uv[2] = {-1, -1}, Jp[6], Ji[2 * TRAM__CAM_NPARAM];
    double inside[3] = {0.48, 0.64, 1.0};   /* r = 0.8 < 0.8165 */
    double beyond[3] = {0.5, 0.66, 1.0};    /* r = 0.828 */
    assert_true(tram_camera_project(&c, inside, uv));
    assert_close(uv[0], 640 + 1000 * 0.48 * (1 - 0.5 * 0.64), 1e-9);
    assert_true(tram__camera_project_jac(&c, inside, uv, Jp, Ji));
    uv[0] = uv[1] = -1;
    assert_false(tram_camera_project(&c, beyond, uv));
    assert_false(tram__camera_project_jac(&c, beyond, uv, Jp, Ji));
    assert_true(uv[0] == -1 && uv[1] == -1); /* untouched */
    /* two roots: refused beyond the first, also where the model grows again */
    c.k2 = 0.1;
    assert_close(tram_camera_fold_radius(&c), 1.0, 1e-12);
    double r3[3] = {sqrt(3.0), 0.0, 1.0}, r09[3] = {0.9, 0.0, 1.0};
    assert_false(tram_camera_project(&c, r3, uv));
    assert_false(tram__camera_project_jac(&c, r3, uv, Jp, NULL));
    assert_true(tram_camera_project(&c, r09, uv));
    /* a usual lens (the tests' camera): rays far out are kept */
    tram_camera u = test_camera(1);
    double wide[3] = {0.9, 0.7, 1.0};
    printf("[ figures  ] fold radius of the usual lens %.4f; k1 -0.5: %.4f; k1 -0.5 k2 0.1: %.4f\n",
           tram_camera_fold_radius(&u), sqrt(2.0 / 3.0), tram_camera_fold_radius(&c));
    assert_true(tram_camera_fold_radius(&u) > hypot(0.9, 0.7));
    assert_true(tram_camera_project(&u, wide, uv));
    /* Z <= 0 as before */
    double behind[3] = {0.1, 0.1, -1.0};
    assert_false(tram_camera_project(&u, behind, uv));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_planar_exact), cmocka_unit_test(test_nonplanar_exact),
        cmocka_unit_test(test_degenerate), cmocka_unit_test(test_jacobian),
        cmocka_unit_test(test_covariance_coverage), cmocka_unit_test(test_fold),
        cmocka_unit_test(test_project_fold)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
