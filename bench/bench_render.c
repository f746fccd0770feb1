/*
 * bench_render.c - benchmark of the test renderer (tools/render/): the
 * seconds per image of a 1280 x 960 scene (the demo's camera, board 9x6 at
 * an oblique pose, blur, noise, lighting, 30 clutter shapes) and of the
 * 5 MP scene of the detection benchmark (render_scene_5mp), the best of
 * five runs each, with the share of pixels that were supersampled.  Writes
 * a JSON array to argv[1].  A benchmark, not a test: `make bench`.
 */
#include <stdio.h>
#include <string.h>

#include "render/render.h"
#include "bench_util.h"

static double best_of(const render_scene *s, int runs)
{
    double best = 1e30;
    for (int k = 0; k < runs; k++) {
        tram_grey_image *im;
        tram_error err;
        double t0 = now();
        if (render_chessboard(s, &im, NULL, &err) != TRAM_OK) {
            fprintf(stderr, "bench_render: %s\n", err.message);
            return -1;
        }
        double t = now() - t0;
        if (t < best) best = t;
        render_image_destroy(im);
    }
    return best;
}

int main(int argc, char **argv)
{
    if (argc != 2) {
        fprintf(stderr, "usage: bench_render OUT.json\n");
        return 2;
    }
    tram_board b = {TRAM_BOARD_CHESSBOARD, 9, 6, 25.0, TRAM_LENGTH_MM};
    tram_camera c;
    memset(&c, 0, sizeof c);
    c.width = 1280;
    c.height = 960;
    c.fx = c.fy = 1000;
    c.cx = 639.5;
    c.cy = 479.5;
    c.k1 = -0.1;
    c.distortion = TRAM_DISTORTION_RADIAL2;
    tram_se3 T;
    render_pose_facing(&b, 500, 0.05, -0.03, 30, 20, 15, &T);
    render_scene s[2];
    render_scene_init(&s[0], &b, &c, &T);
    s[0].blur_sigma_px = 0.8;
    s[0].noise_sigma = 2;
    s[0].gain_min = 0.6;
    s[0].gain_max = 1.2;
    s[0].clutter = 30;
    render_scene_5mp(&b, 3, &s[1]);
    const char *names[2] = {"render_1280x960", "render_5mp"};
    FILE *out = fopen(argv[1], "w");
    if (!out) return 1;
    fprintf(out, "[\n");
    printf("%-20s %12s %10s\n", "measurement", "pixels", "seconds");
    for (int i = 0; i < 2; i++) {
        double t = best_of(&s[i], 5);
        if (t < 0) return 1;
        size_t n = s[i].camera.width * s[i].camera.height;
        printf("%-20s %12zu %10.3f\n", names[i], n, t);
        fprintf(out, "  {\"name\": \"%s\", \"n\": %zu, \"seconds\": %.6g}%s\n", names[i], n, t,
                i ? "" : ",");
    }
    fprintf(out, "]\n");
    fclose(out);
    return 0;
}
