/*
 * render_ref.c - prints scenes of the test renderer (tools/render/) for
 * tests/ref/check_render_numpy.py, which recomputes them with NumPy: the
 * true corners by its own Brown-Conrady projection (Brown 1966), and a
 * clean image (no blur, noise or lighting) by its own full supersampling
 * on the same sub-sample grid.  Not part of the product.
 *
 * Output, per scene:
 *   scene NAME
 *   camera fx fy cx cy skew k1 k2 k3 p1 p2 width height
 *   board cols rows square border supersample
 *   levels black white background plate
 *   pose m00 m01 ... m33                  (T_sensor_target, row-major)
 *   corners N, then N lines "u v inside"  (nan nan for a corner behind)
 *   image, then height lines of width values
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "render/render.h"

static tram_camera camera(size_t w, size_t h, double f, double k1, double k2, double k3,
                          double p1, double p2, double skew)
{
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.width = w;
    c.height = h;
    c.fx = f;
    c.fy = f * 1.01;
    c.cx = 0.5 * (double)w - 0.3;
    c.cy = 0.5 * (double)h + 0.7;
    c.skew = skew;
    c.k1 = k1;
    c.k2 = k2;
    c.k3 = k3;
    c.p1 = p1;
    c.p2 = p2;
    c.distortion = TRAM_DISTORTION_FULL;
    return c;
}

static int emit(const char *name, const render_scene *s)
{
    tram_grey_image *im = NULL;
    render_truth t;
    tram_error err;
    if (render_chessboard(s, &im, &t, &err) != TRAM_OK) {
        fprintf(stderr, "render_ref: %s\n", err.message);
        return 1;
    }
    const tram_camera *c = &s->camera;
    printf("scene %s\n", name);
    printf("camera %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %zu %zu\n", c->fx,
           c->fy, c->cx, c->cy, c->skew, c->k1, c->k2, c->k3, c->p1, c->p2, c->width, c->height);
    printf("board %d %d %.17g %d %d\n", s->board.cols, s->board.rows, s->board.square,
           s->border_squares, s->supersample);
    printf("levels %.17g %.17g %.17g %.17g\n", s->black, s->white, s->background, s->plate);
    printf("pose");
    for (int i = 0; i < 4; i++)
        for (int j = 0; j < 4; j++) printf(" %.17g", s->T_sensor_target.m[i][j]);
    printf("\ncorners %zu\n", t.ncorners);
    for (size_t i = 0; i < t.ncorners; i++)
        printf("%.17g %.17g %d\n", t.uv[2 * i], t.uv[2 * i + 1], t.inside[i]);
    printf("image\n");
    for (size_t j = 0; j < im->height; j++)
        for (size_t i = 0; i < im->width; i++)
            printf("%.9g%c", im->pixels[j * im->width + i], i + 1 == im->width ? '\n' : ' ');
    render_image_destroy(im);
    render_truth_free(&t);
    return 0;
}

int main(void)
{
    tram_board b = {TRAM_BOARD_CHESSBOARD, 9, 6, 25.0, TRAM_LENGTH_MM};
    tram_board b2 = {TRAM_BOARD_CHESSBOARD, 4, 3, 30.0, TRAM_LENGTH_MM};
    render_scene s;
    tram_se3 T;
    int fail = 0;

    tram_camera c0 = camera(200, 150, 160, 0, 0, 0, 0, 0, 0);
    render_pose_facing(&b, 400, 0.03, -0.02, 0, 0, 3, &T);
    render_scene_init(&s, &b, &c0, &T);
    s.supersample = 4;
    fail |= emit("pinhole-fronto", &s);

    tram_camera c1 = camera(200, 150, 170, -0.1, 0, 0, 0, 0, 0);
    render_pose_facing(&b, 420, -0.05, 0.04, 35, 60, -20, &T);
    render_scene_init(&s, &b, &c1, &T);
    s.supersample = 4;
    fail |= emit("k1-tilted", &s);

    tram_camera c2 = camera(180, 140, 150, -0.22, 0.07, -0.01, 0.002, -0.0015, 0.4);
    render_pose_facing(&b2, 330, 0.1, 0.05, 50, 200, 30, &T);
    render_scene_init(&s, &b2, &c2, &T);
    s.supersample = 3;
    s.border_squares = 2;
    fail |= emit("full-distortion-oblique", &s);

    /* grazing view: the plane's horizon inside the image, part of the board behind */
    tram_camera c3 = camera(160, 120, 140, -0.05, 0, 0, 0, 0, 0);
    render_pose_facing(&b2, 150, 0.0, 0.1, 72, 90, 0, &T);
    render_scene_init(&s, &b2, &c3, &T);
    s.supersample = 4;
    fail |= emit("grazing", &s);
    return fail;
}
