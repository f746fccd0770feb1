/* test_intrinsics.c - tests of the planar calibration (homography.c,
 * intrinsics.c, intrinsics_lm.c, Zhang 2000): the analytic Jacobians
 * against central differences, the homography against an exact one,
 * recovery of a known camera from 15 rendered views (tools/render: true
 * corners plus noise, and the corners the detector finds in the rendered
 * images), outliers, and the refusals (too few views, parallel views,
 * collinear points, unknown point ids).  Seeds are fixed and printed. */
#include "test_util.h"

#include <cjson/cJSON.h>

#include "camera/homography_internal.h"
#include "camera/intrinsics_internal.h"
#include "render/render.h"

#define SEED 20001122ULL

/* The camera the renders are made with (invented, for the test only). */
static tram_camera true_camera(void)
{
    tram_camera c = {1105.0, 1098.5, 652.3, 471.8, 0.0, -0.15, 0.04, 0.0, 0.0, 0.0,
                     TRAM_DISTORTION_RADIAL2, 1280, 960};
    return c;
}

static void test_jacobian(void **state)
{
    (void)state;
    test_rng rng = {SEED};
    printf("  seed %llu\n", (unsigned long long)rng.s);
    tram_camera c = {900, 905, 320, 250, 0.7, -0.2, 0.05, -0.01, 0.002, -0.001, TRAM_DISTORTION_FULL, 640, 480};
    for (int trial = 0; trial < 20; trial++) {
        tram_mat3 R;
        test_random_rotation(&rng, &R);
        /* keep the board in front: tilt at most ~60 degrees */
        double w[3] = {0.6 * (test_rng_uniform(&rng) - 0.5), 0.6 * (test_rng_uniform(&rng) - 0.5),
                       3 * (test_rng_uniform(&rng) - 0.5)};
        tram_so3_exp(w, &R);
        double t[3] = {-50 + 100 * test_rng_uniform(&rng), -50 + 100 * test_rng_uniform(&rng),
                       400 + 200 * test_rng_uniform(&rng)};
        double xy[2] = {-80 + 160 * test_rng_uniform(&rng), -60 + 120 * test_rng_uniform(&rng)};
        double uv[2], Ji[2 * TRAM_CAM_NPARAM], Jp[12];
        assert_true(tram__bundle_project(&c, &R, t, xy, uv, Ji, Jp));
        for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
            tram_camera a = c, b = c;
            double *pa[TRAM_CAM_NPARAM] = {&a.fx, &a.fy, &a.cx, &a.cy, &a.skew, &a.k1, &a.k2, &a.k3, &a.p1, &a.p2};
            double *pb[TRAM_CAM_NPARAM] = {&b.fx, &b.fy, &b.cx, &b.cy, &b.skew, &b.k1, &b.k2, &b.k3, &b.p1, &b.p2};
            double h = 1e-6 * fmax(1.0, fabs(*pa[k]));
            *pa[k] += h;
            *pb[k] -= h;
            double ua[2], ub[2];
            tram__bundle_project(&a, &R, t, xy, ua, NULL, NULL);
            tram__bundle_project(&b, &R, t, xy, ub, NULL, NULL);
            for (int r = 0; r < 2; r++)
                assert_close(Ji[r * TRAM_CAM_NPARAM + k], (ua[r] - ub[r]) / (2 * h), 1e-5 * fmax(1, fabs(Ji[r * TRAM_CAM_NPARAM + k])));
        }
        for (int k = 0; k < 6; k++) {
            double h = k < 3 ? 1e-7 : 1e-5, d[3] = {0, 0, 0}, ua[2], ub[2], ta[3], tb[3];
            tram_mat3 Ra = R, Rb = R, E;
            memcpy(ta, t, sizeof ta);
            memcpy(tb, t, sizeof tb);
            if (k < 3) {
                d[k] = h;
                tram_so3_exp(d, &E);
                tram_so3_mul(&E, &R, &Ra);
                d[k] = -h;
                tram_so3_exp(d, &E);
                tram_so3_mul(&E, &R, &Rb);
            } else {
                ta[k - 3] += h;
                tb[k - 3] -= h;
            }
            tram__bundle_project(&c, &Ra, ta, xy, ua, NULL, NULL);
            tram__bundle_project(&c, &Rb, tb, xy, ub, NULL, NULL);
            for (int r = 0; r < 2; r++)
                assert_close(Jp[6 * r + k], (ua[r] - ub[r]) / (2 * h), 1e-5 * fmax(1, fabs(Jp[6 * r + k])));
        }
    }
}

static void test_homography_exact(void **state)
{
    (void)state;
    double H0[9] = {1.2, 0.1, 300, -0.05, 0.9, 200, 1e-4, -2e-4, 1}, xy[40], uv[40], H[9];
    for (int i = 0; i < 20; i++) {
        xy[2 * i] = 30.0 * (i % 5);
        xy[2 * i + 1] = 25.0 * (i / 5);
        double w = H0[6] * xy[2 * i] + H0[7] * xy[2 * i + 1] + H0[8];
        uv[2 * i] = (H0[0] * xy[2 * i] + H0[1] * xy[2 * i + 1] + H0[2]) / w;
        uv[2 * i + 1] = (H0[3] * xy[2 * i] + H0[4] * xy[2 * i + 1] + H0[5]) / w;
    }
    assert_int_equal(tram__homography_dlt(20, xy, uv, H), TRAM_OK);
    for (int k = 0; k < 9; k++) assert_close(H[k] / H[8], H0[k], 1e-9 * fmax(1, fabs(H0[k])));
    for (int i = 0; i < 20; i++) xy[2 * i + 1] = 2 * xy[2 * i] + 1; /* collinear */
    assert_int_equal(tram__homography_dlt(20, xy, uv, H), TRAM_EUNDETERMINED);
    assert_int_equal(tram__homography_dlt(3, xy, uv, H), TRAM_EUNDETERMINED);
}

/* 15 poses spread over the image, tilted 20-45 degrees in varied
 * directions; each view aims at a part of the frame (corners and edges
 * first) and is drawn towards the centre until the whole board is at
 * least 6 px inside the image. */
static void view_pose(const tram_board *b, const tram_camera *c, int k, tram_se3 *T)
{
    static const double aim[15][2] = {{-0.6, -0.45}, {0.6, -0.45}, {-0.6, 0.45}, {0.6, 0.45},
                                      {0, -0.4},     {0, 0.4},     {-0.55, 0},   {0.55, 0},
                                      {0, 0},        {-0.25, -0.2}, {0.25, 0.2}, {0.25, -0.2},
                                      {-0.25, 0.2},  {0.1, 0},     {-0.1, 0.05}};
    double tilt = 20 + 25 * (double)((k * 7) % 15) / 14.0, dir = 24.0 * k, roll = -20 + 40 * (double)((k * 4) % 15) / 14.0;
    for (double f = 1.0; f > 0; f -= 0.02) {
        render_pose_facing(b, 560 + 15 * (k % 5), f * aim[k][0], f * aim[k][1], tilt, dir, roll, T);
        int inside = 1;
        for (size_t i = 0; i < tram_board_corner_count(b) && inside; i++) {
            double X[3], uv[2];
            tram_board_corner(b, i, X);
            inside = tram_camera_reproject(c, T, X, uv) && uv[0] >= 6 && uv[1] >= 6 &&
                     uv[0] <= (double)c->width - 7 && uv[1] <= (double)c->height - 7;
        }
        if (inside) return;
    }
}

/* The pixel observations of the 15 views: true corners plus Gaussian noise
 * of sig px (sig < 0: the corners the detector finds in the renders). */
static tram_pixel_obs *make_views(const tram_board *b, const tram_camera *c, double sig, test_rng *rng)
{
    tram_pixel_obs *o;
    tram_error err;
    assert_int_equal(tram_pixel_obs_create(c->width, c->height, "render", &o, &err), TRAM_OK);
    tram_detect_options dopt;
    tram_detect_options_init(&dopt);
    for (int k = 0; k < 15; k++) {
        tram_se3 T;
        view_pose(b, c, k, &T);
        render_scene sc;
        render_scene_init(&sc, b, c, &T);
        sc.seed = SEED + (unsigned long long)k;
        sc.blur_sigma_px = 0.7;
        sc.noise_sigma = 2.0;
        render_truth tr;
        char sid[16];
        snprintf(sid, sizeof sid, "v%02d", k);
        if (sig >= 0) {
            assert_int_equal(render_truth_compute(&sc, &tr), 0);
            if (tr.nvisible != tr.ncorners) printf("  view %d: %zu of %zu corners inside\n", k, tr.nvisible, tr.ncorners);
            assert_int_equal(tr.nvisible, tr.ncorners);
            for (size_t i = 0; i < tr.ncorners; i++) {
                char pid[24];
                snprintf(pid, sizeof pid, "%zu", i);
                assert_int_equal(tram_pixel_obs_add(o, sid, pid, tr.uv[2 * i] + sig * test_rng_normal(rng),
                                                    tr.uv[2 * i + 1] + sig * test_rng_normal(rng), &err),
                                 TRAM_OK);
            }
            render_truth_free(&tr);
        } else {
            tram_grey_image *im;
            tram_detection *d;
            assert_int_equal(render_chessboard(&sc, &im, NULL, &err), TRAM_OK);
            assert_int_equal(tram_detect_chessboard(im, b, &dopt, &d, &err), TRAM_OK);
            if (!d->found) printf("  view %d: board not found: %s\n", k, d->reason);
            assert_true(d->found);
            for (size_t i = 0; i < d->ncorners; i++) {
                char pid[24];
                snprintf(pid, sizeof pid, "%zu", i);
                assert_int_equal(tram_pixel_obs_add(o, sid, pid, d->uv[2 * i], d->uv[2 * i + 1], &err), TRAM_OK);
            }
            tram_detection_destroy(d);
            render_image_destroy(im);
        }
    }
    return o;
}

typedef struct target_buf {
    char ids[200][24];
    const char *idp[200];
    double xy[400];
    tram_planar_target t;
} target_buf;

static void board_target(const tram_board *b, target_buf *g)
{
    size_t n = tram_board_corner_count(b);
    assert_true(n <= 200);
    for (size_t i = 0; i < n; i++) {
        double p[3];
        tram_board_corner(b, i, p);
        snprintf(g->ids[i], sizeof g->ids[i], "%zu", i);
        g->idp[i] = g->ids[i];
        g->xy[2 * i] = p[0];
        g->xy[2 * i + 1] = p[1];
    }
    g->t = (tram_planar_target){n, g->idp, g->xy};
}

/* Largest difference over a grid of the image between the two cameras'
 * displacement fields: at pixel p, p minus the pinhole pixel of the ray
 * each camera assigns to p. */
static double worst_at[2];
static double field_difference(const tram_camera *a, const tram_camera *b)
{
    double worst = 0;
    for (int j = 0; j <= 24; j++)
        for (int i = 0; i <= 32; i++) {
            double p[2] = {(double)i / 32 * (double)(a->width - 1), (double)j / 24 * (double)(a->height - 1)};
            double d[2][2];
            const tram_camera *c[2] = {a, b};
            for (int k = 0; k < 2; k++) {
                double xy[2];
                assert_true(tram_camera_unproject(c[k], p, xy));
                d[k][0] = p[0] - (c[k]->fx * xy[0] + c[k]->skew * xy[1] + c[k]->cx);
                d[k][1] = p[1] - (c[k]->fy * xy[1] + c[k]->cy);
            }
            double e = hypot(d[0][0] - d[1][0], d[0][1] - d[1][1]);
            if (e > worst) {
                worst = e;
                worst_at[0] = p[0];
                worst_at[1] = p[1];
            }
        }
    return worst;
}

static void check_recovery(const char *what, const tram_intrinsics_result *r, const tram_camera *c)
{
    const tram_camera *e = &r->camera;
    double field = field_difference(e, c);
    printf("  %s: fx %.3f (true %.3f, %.4f%%), fy %.3f (true %.3f, %.4f%%), cx %.3f (%.3f), cy %.3f "
           "(%.3f), k1 %.5f (%.5f), k2 %.5f (%.5f), rms %.4f px, field difference %.4f px (largest at %.0f, %.0f), coverage %.0f%%\n",
           what, e->fx, c->fx, 100 * fabs(e->fx / c->fx - 1), e->fy, c->fy, 100 * fabs(e->fy / c->fy - 1),
           e->cx, c->cx, e->cy, c->cy, e->k1, c->k1, e->k2, c->k2, r->rms_px, field, worst_at[0], worst_at[1],
           100 * r->coverage);
    assert_true(fabs(e->fx / c->fx - 1) < 1e-3);
    assert_true(fabs(e->fy / c->fy - 1) < 1e-3);
    assert_true(fabs(e->cx - c->cx) < 0.5);
    assert_true(fabs(e->cy - c->cy) < 0.5);
    assert_true(field < 0.05);
}

static void test_render_truth_plus_noise(void **state)
{
    (void)state;
    test_rng rng = {SEED};
    printf("  seed %llu, noise 0.02 px per axis (the detector's own RMS on these renders)\n", (unsigned long long)rng.s);
    tram_board b;
    tram_error err;
    assert_int_equal(tram_board_init(&b, 13, 10, 20.0, TRAM_LENGTH_MM, &err), TRAM_OK);
    tram_camera c = true_camera();
    tram_pixel_obs *o = make_views(&b, &c, 0.02, &rng);
    target_buf g;
    board_target(&b, &g);
    tram_intrinsics_options opt;
    tram_intrinsics_options_init(&opt);
    tram_intrinsics_result *r;
    assert_int_equal(tram_intrinsics_calibrate(o, &g.t, &opt, &r, &err), TRAM_OK);
    check_recovery("truth + noise", r, &c);
    assert_true(r->rms_px < 0.2);
    assert_int_equal(r->warnings & TRAM_INTRINSICS_WARN_TILT, 0);
    /* every view's pose: within 0.1 degree and 0.5 mm of the truth */
    for (size_t k = 0; k < r->nviews; k++) {
        tram_se3 T;
        view_pose(&b, &c, (int)k, &T);
        double ang, dist;
        tram_se3_distance(&r->views[k].T_sensor_target, &T, &ang, &dist);
        assert_true(ang < 0.1);
        assert_true(dist < 0.5);
    }
    tram_intrinsics_result_destroy(r);
    tram_pixel_obs_destroy(o);
}

static void test_render_detected(void **state)
{
    (void)state;
    test_rng rng = {SEED};
    printf("  seed %llu, corners from tram_detect_chessboard on 1280x960 renders (blur 0.7 px, noise 2 levels)\n",
           (unsigned long long)rng.s);
    tram_board b;
    tram_error err;
    assert_int_equal(tram_board_init(&b, 13, 10, 20.0, TRAM_LENGTH_MM, &err), TRAM_OK);
    tram_camera c = true_camera();
    tram_pixel_obs *o = make_views(&b, &c, -1, &rng);
    target_buf g;
    board_target(&b, &g);
    tram_intrinsics_options opt;
    tram_intrinsics_options_init(&opt);
    tram_intrinsics_result *r;
    assert_int_equal(tram_intrinsics_calibrate(o, &g.t, &opt, &r, &err), TRAM_OK);
    check_recovery("detected", r, &c);
    tram_intrinsics_result_destroy(r);
    tram_pixel_obs_destroy(o);
}

static void test_outliers(void **state)
{
    (void)state;
    test_rng rng = {SEED + 1};
    printf("  seed %llu, 3 corners moved by 6-9 px\n", (unsigned long long)rng.s);
    tram_board b;
    tram_error err;
    assert_int_equal(tram_board_init(&b, 13, 10, 20.0, TRAM_LENGTH_MM, &err), TRAM_OK);
    tram_camera c = true_camera();
    tram_pixel_obs *o = make_views(&b, &c, 0.02, &rng);
    size_t bad[3] = {17, 700, 1500};
    for (int k = 0; k < 3; k++) {
        o->uv[2 * bad[k]] += 6.0 + k;
        o->uv[2 * bad[k] + 1] -= 2.0 * k;
    }
    target_buf g;
    board_target(&b, &g);
    tram_intrinsics_options opt;
    tram_intrinsics_options_init(&opt);
    tram_intrinsics_result *r;
    assert_int_equal(tram_intrinsics_calibrate(o, &g.t, &opt, &r, &err), TRAM_OK);
    printf("  flagged %zu (threshold %.3f px)\n", r->calib.noutliers, r->outlier_px);
    assert_int_equal(r->calib.noutliers, 3);
    for (int k = 0; k < 3; k++) assert_true(r->outlier[bad[k]]);
    check_recovery("with outliers", r, &c);
    /* the JSON report carries the flags and the camera with exact numbers */
    const char *warn[1] = {"a warning"};
    tram_intrinsics_report rep = {o, "board 13x10", "mm", 1, r, 1, warn, "caution"};
    char *text = NULL;
    assert_int_equal(tram_intrinsics_report_to_json(&rep, &text, &err), TRAM_OK);
    cJSON *doc = cJSON_Parse(text);
    assert_non_null(doc);
    cJSON *res = cJSON_GetObjectItem(doc, "residuals");
    assert_int_equal((size_t)cJSON_GetArraySize(res), o->n);
    assert_true(cJSON_IsTrue(cJSON_GetObjectItem(cJSON_GetArrayItem(res, (int)bad[0]), "outlier")));
    assert_int_equal((size_t)cJSON_GetArraySize(cJSON_GetObjectItem(doc, "views")), r->nviews);
    cJSON *cam = cJSON_GetObjectItem(doc, "camera");
    assert_non_null(cam);
    assert_true(strstr(text, "\"rms_px\"") != NULL);
    assert_close(cJSON_GetObjectItem(doc, "rms_px")->valuedouble, r->rms_px, 0);
    cJSON_Delete(doc);
    tram_free(text);
    tram_intrinsics_result_destroy(r);
    tram_pixel_obs_destroy(o);
}

static void test_refusals(void **state)
{
    (void)state;
    test_rng rng = {SEED + 2};
    printf("  seed %llu\n", (unsigned long long)rng.s);
    tram_board b;
    tram_error err;
    assert_int_equal(tram_board_init(&b, 13, 10, 20.0, TRAM_LENGTH_MM, &err), TRAM_OK);
    tram_camera c = true_camera();
    target_buf g;
    board_target(&b, &g);
    tram_intrinsics_result *r = NULL;
    char buf[1200];
    /* two views */
    tram_pixel_obs *o;
    assert_int_equal(tram_pixel_obs_create(1280, 960, NULL, &o, &err), TRAM_OK);
    tram_pixel_obs *all = make_views(&b, &c, 0.02, &rng);
    for (size_t i = 0; i < all->n && all->station[i] < 2; i++)
        assert_int_equal(tram_pixel_obs_add(o, all->station_id[all->station[i]], all->point_id[all->point[i]],
                                            all->uv[2 * i], all->uv[2 * i + 1], &err), TRAM_OK);
    assert_int_equal(tram_intrinsics_calibrate(o, &g.t, NULL, &r, &err), TRAM_EUNDETERMINED);
    printf("  two views: %s\n", tram_error_format(&err, buf, sizeof buf));
    assert_non_null(strstr(err.message, "at least 3 views"));
    assert_null(r);
    tram_pixel_obs_destroy(o);
    /* an unknown point id names the line */
    snprintf(all->point_id[5], sizeof all->point_id[5], "999");
    all->line[0] = 42;
    all->point[0] = 5;
    assert_int_equal(tram_intrinsics_calibrate(all, &g.t, NULL, &r, &err), TRAM_EINPUT);
    printf("  unknown id: %s\n", tram_error_format(&err, buf, sizeof buf));
    assert_int_equal(err.line, 42);
    tram_pixel_obs_destroy(all);
    /* parallel views: the board always fronto-parallel, only moved and rolled */
    assert_int_equal(tram_pixel_obs_create(1280, 960, NULL, &o, &err), TRAM_OK);
    for (int k = 0; k < 6; k++) {
        tram_se3 T;
        render_pose_facing(&b, 600 + 40 * k, 0.05 * k - 0.1, 0.03 * k - 0.05, 0, 0, 15.0 * k, &T);
        for (size_t i = 0; i < g.t.n; i++) {
            double X[3] = {g.xy[2 * i], g.xy[2 * i + 1], 0}, uv[2];
            assert_true(tram_camera_reproject(&c, &T, X, uv));
            char sid[16];
            snprintf(sid, sizeof sid, "f%d", k);
            assert_int_equal(tram_pixel_obs_add(o, sid, g.ids[i], uv[0] + 0.1 * test_rng_normal(&rng),
                                                uv[1] + 0.1 * test_rng_normal(&rng), &err), TRAM_OK);
        }
    }
    tram_status st = tram_intrinsics_calibrate(o, &g.t, NULL, &r, &err);
    printf("  parallel views: %s\n", tram_error_format(&err, buf, sizeof buf));
    assert_int_equal(st, TRAM_EUNDETERMINED);
    assert_non_null(strstr(err.message, "tilt the board 20-45 degrees about both image axes"));
    /* collinear points in one view */
    for (size_t i = 0; i < o->n; i++)
        if (o->station[i] == 0) o->uv[2 * i + 1] = 0.5 * o->uv[2 * i] + 3;
    for (size_t i = 0; i < o->n; i++)
        if (o->station[i] == 0) o->uv[2 * i + 1] = 100.0;
    for (size_t i = 0; i < g.t.n; i++) g.xy[2 * i + 1] = 0; /* also the target's y */
    st = tram_intrinsics_calibrate(o, &g.t, NULL, &r, &err);
    printf("  collinear: %s\n", tram_error_format(&err, buf, sizeof buf));
    assert_int_equal(st, TRAM_EUNDETERMINED);
    assert_non_null(strstr(err.message, "do not fix a homography"));
    tram_pixel_obs_destroy(o);
    tram_intrinsics_result_destroy(NULL);
}

int main(void)
{
    printf("seed %llu\n", (unsigned long long)SEED);
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_jacobian),          cmocka_unit_test(test_homography_exact),
        cmocka_unit_test(test_render_truth_plus_noise), cmocka_unit_test(test_outliers),
        cmocka_unit_test(test_refusals),          cmocka_unit_test(test_render_detected)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
