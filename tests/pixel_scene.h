/*
 * pixel_scene.h - synthetic hand-eye scenes seen through a camera, for the
 * tests of the pose and solve from pixels: robot poses from a chosen X, Z
 * and per-station views of a board, corners from the Brown-Conrady
 * projection of tram/camera.h plus Gaussian pixel noise.  Invented data
 * (a scenario of our own).
 */
#ifndef TRAM_PIXEL_SCENE_H
#define TRAM_PIXEL_SCENE_H

#include "test_util.h"

typedef struct scene {
    tram_camera cam;
    tram_board board;
    tram_setup setup;
    tram_se3 X, Z;
    size_t n;
    tram_se3 S[40];          /* true T_sensor_target */
    tram_records *rec;
    tram_pixel_obs *obs;
    double *xyz;             /* per observation, target frame (mm) */
} scene;

static inline void scene_camera(tram_camera *c)
{
    memset(c, 0, sizeof *c);
    c->fx = 1210.5; c->fy = 1204.25; c->cx = 643.2; c->cy = 478.9;
    c->k1 = -0.21; c->k2 = 0.08; c->k3 = 0.0; c->p1 = 8e-4; c->p2 = -5e-4;
    c->distortion = TRAM_DISTORTION_FULL;
    c->width = 1280;
    c->height = 960;
}

/* A view: target tilted up to ~30 degrees about x and y, any roll, 450-750 mm away,
 * the board's centre near the optical axis. */
static inline void scene_view(test_rng *r, const tram_board *b, tram_se3 *S)
{
    double w[3] = {1.0 * (test_rng_uniform(r) - 0.5), 1.0 * (test_rng_uniform(r) - 0.5),
                   2.0 * M_PI * test_rng_uniform(r)};
    tram_mat3 R;
    tram_so3_exp(w, &R);
    double z = 450 + 300 * test_rng_uniform(r);
    double t[3] = {0.1 * z * (test_rng_uniform(r) - 0.5), 0.1 * z * (test_rng_uniform(r) - 0.5), z};
    double c3[3] = {0.5 * (b->cols - 1) * b->square, 0.5 * (b->rows - 1) * b->square, 0}, rc[3];
    tram_so3_apply(&R, c3, rc);
    for (int a = 0; a < 3; a++) t[a] -= rc[a];
    tram_se3_from_rt(&R, t, S);
}

/* Build the scene: n stations, pixel noise sigma_px (0: exact). */
static inline void scene_make(scene *s, test_rng *r, tram_setup setup, size_t n, double sigma_px)
{
    tram_error e;
    memset(s, 0, sizeof *s);
    scene_camera(&s->cam);
    assert_int_equal(tram_board_init(&s->board, 9, 6, 25.0, TRAM_LENGTH_MM, &e), TRAM_OK);
    s->setup = setup;
    s->n = n;
    tram_mat3 R;
    double w[3] = {0.1, -0.2, 1.3}, tx[3] = {35.0, -60.0, 110.0};
    tram_so3_exp(w, &R);
    tram_se3_from_rt(&R, tx, &s->X);
    double wz[3] = {3.0, 0.2, -0.1}, tz[3] = {800.0, 150.0, -20.0};
    tram_so3_exp(wz, &R);
    tram_se3_from_rt(&R, tz, &s->Z);
    if (setup == TRAM_SETUP_EYE_TO_HAND) {
        double tz2[3] = {30.0, 10.0, 140.0};
        tram_se3_from_rt(&R, tz2, &s->Z);
    }
    size_t cap = 200 + n * 120;
    char *text = malloc(cap * 8);
    size_t len = (size_t)sprintf(text, "# length-unit: mm\n# setup: %s\nstation,robot_x,robot_y,robot_z,"
                                 "robot_r11,robot_r12,robot_r13,robot_r21,robot_r22,robot_r23,"
                                 "robot_r31,robot_r32,robot_r33\n", tram_setup_name(setup));
    assert_int_equal(tram_pixel_obs_create(1280, 960, "board.json", &s->obs, &e), TRAM_OK);
    size_t nc = tram_board_corner_count(&s->board);
    s->xyz = malloc(n * nc * 3 * sizeof *s->xyz);
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        scene_view(r, &s->board, &s->S[i]);
        /* P X S = Z  ->  P = Z S^-1 X^-1 */
        tram_se3 Si, Xi, ZS, P, Tbf;
        tram_se3_invert(&s->S[i], &Si);
        tram_se3_invert(&s->X, &Xi);
        tram_se3_compose(&s->Z, &Si, &ZS);
        tram_se3_compose(&ZS, &Xi, &P);
        if (setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(&P, &Tbf);
        else Tbf = P;
        len += (size_t)sprintf(text + len, "s%02zu,%.17g,%.17g,%.17g", i + 1, Tbf.m[0][3], Tbf.m[1][3], Tbf.m[2][3]);
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++) len += (size_t)sprintf(text + len, ",%.17g", Tbf.m[a][b]);
        len += (size_t)sprintf(text + len, "\n");
        char sid[32];
        snprintf(sid, sizeof sid, "s%02zu", i + 1);
        for (size_t c = 0; c < nc; c++) {
            double m[3], p[3], uv[2];
            tram_board_corner(&s->board, c, m);
            tram_se3_apply_point(&s->S[i], m, p);
            assert_true(tram_camera_project(&s->cam, p, uv));
            if (uv[0] < 0 || uv[1] < 0 || uv[0] > 1279 || uv[1] > 959) continue;
            char pid[32];
            snprintf(pid, sizeof pid, "%zu", c);
            assert_int_equal(tram_pixel_obs_add(s->obs, sid, pid, uv[0] + sigma_px * test_rng_normal(r),
                                                uv[1] + sigma_px * test_rng_normal(r), &e), TRAM_OK);
            memcpy(s->xyz + 3 * k, m, sizeof m);
            k++;
        }
    }
    tram_read_options ro;
    memset(&ro, 0, sizeof ro);
    assert_int_equal(tram_records_read_buffer("scene.csv", text, len, &ro, &s->rec, &e), TRAM_OK);
    free(text);
}

/* The scene's camera calibrated from nviews other views of its board
 * (pixel noise sigma_px), full distortion model, skew fixed. */
static inline tram_intrinsics_result *scene_calibrate(const scene *s, test_rng *r, int nviews, double sigma_px)
{
    tram_error e;
    tram_pixel_obs *co = NULL;
    assert_int_equal(tram_pixel_obs_create(1280, 960, NULL, &co, &e), TRAM_OK);
    size_t nc = tram_board_corner_count(&s->board);
    char ids[54][8];
    const char *idp[54];
    double xy[2 * 54];
    assert_true(nc <= 54);
    for (size_t c = 0; c < nc; c++) {
        double m[3];
        snprintf(ids[c], sizeof ids[c], "%zu", c);
        idp[c] = ids[c];
        tram_board_corner(&s->board, c, m);
        xy[2 * c] = m[0];
        xy[2 * c + 1] = m[1];
    }
    for (int v = 0; v < nviews; v++) {
        tram_se3 S;
        char sid[16];
        scene_view(r, &s->board, &S);
        snprintf(sid, sizeof sid, "c%02d", v);
        for (size_t c = 0; c < nc; c++) {
            double m[3] = {xy[2 * c], xy[2 * c + 1], 0}, p[3], uv[2];
            tram_se3_apply_point(&S, m, p);
            assert_true(tram_camera_project(&s->cam, p, uv));
            if (uv[0] < 0 || uv[1] < 0 || uv[0] > 1279 || uv[1] > 959) continue;
            assert_int_equal(tram_pixel_obs_add(co, sid, ids[c], uv[0] + sigma_px * test_rng_normal(r),
                                                uv[1] + sigma_px * test_rng_normal(r), &e), TRAM_OK);
        }
    }
    tram_planar_target tg = {nc, idp, xy};
    tram_intrinsics_options io;
    tram_intrinsics_options_init(&io);
    io.distortion = TRAM_DISTORTION_FULL;
    tram_intrinsics_result *ir = NULL;
    tram_status st = tram_intrinsics_calibrate(co, &tg, &io, &ir, &e);
    if (st != TRAM_OK) fail_msg("%s", e.message);
    tram_pixel_obs_destroy(co);
    return ir;
}

static inline void scene_free(scene *s)
{
    tram_records_destroy(s->rec);
    tram_pixel_obs_destroy(s->obs);
    free(s->xyz);
}

#endif
