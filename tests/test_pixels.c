/* test_pixels.c - tests of pixels_io.c: reading pixel-observation files
 * (tram-pixels-1), the refusals with file:line:column, and the writer's
 * exact round trip. */
#include "test_util.h"

#include "tram/pixels.h"

static const char good[] = "# format: tram-pixels-1\n"
                           "# pixel-origin: top-left-pixel-centre\n"
                           "# image-size: 1280x960\n"
                           "# board: board.json\n"
                           "station,point,u,v\n"
                           "img_001,0,412.2503,305.1177\n"
                           "img_001,1,440.9012,305.8020\n"
                           "# a comment\n"
                           "img_002,0,1.5e2,-0.25\n";

static void test_read_good(void **state)
{
    (void)state;
    tram_pixel_obs *o;
    tram_error err;
    assert_int_equal(tram_pixel_obs_read_buffer("g.csv", good, strlen(good), &o, &err), TRAM_OK);
    assert_int_equal(o->n, 3);
    assert_int_equal(o->nstations, 2);
    assert_int_equal(o->npoints, 2);
    assert_int_equal(o->width, 1280);
    assert_int_equal(o->height, 960);
    assert_string_equal(o->board, "board.json");
    assert_string_equal(o->station_id[o->station[2]], "img_002");
    assert_string_equal(o->point_id[o->point[1]], "1");
    assert_close(o->uv[0], 412.2503, 0);
    assert_close(o->uv[5], -0.25, 0);
    assert_int_equal(o->line[2], 9);
    assert_int_equal(tram_pixel_obs_station_index(o, "img_002"), 1);
    assert_int_equal(tram_pixel_obs_point_index(o, "7"), -1);
    tram_pixel_obs_destroy(o);
    tram_pixel_obs_destroy(NULL);
}

typedef struct refusal {
    const char *text, *needle;
    long line, col;
} refusal;

#define HDR "# pixel-origin: top-left-pixel-centre\n# image-size: 640x480\n"

static void test_refusals(void **state)
{
    (void)state;
    static const refusal cases[] = {
        {"# image-size: 640x480\nstation,point,u,v\na,0,1,2\n", "no pixel-origin", 2, 0},
        {"# pixel-origin: top-left-pixel-corner\n# image-size: 640x480\nstation,point,u,v\na,0,1,2\n",
         "pixel-origin 'top-left-pixel-corner'", 1, 3},
        {"# pixel-origin: top-left-pixel-centre\nstation,point,u,v\na,0,1,2\n", "no image size", 2, 0},
        {"# pixel-origin: top-left-pixel-centre\n# image-size: 640*480\nstation,point,u,v\na,0,1,2\n",
         "image-size '640*480'", 2, 3},
        {"# pixel-origin: top-left-pixel-centre\n# image-size: 0x480\nstation,point,u,v\na,0,1,2\n",
         "image-size '0x480'", 2, 3},
        {HDR "# image-size: 800x600\nstation,point,u,v\na,0,1,2\n", "'image-size' given twice", 3, 3},
        {HDR "# format: tram-pixels-2\nstation,point,u,v\na,0,1,2\n", "format 'tram-pixels-2'", 3, 3},
        {HDR "# length-unit: mm\nstation,point,u,v\na,0,1,2\n", "unknown directive 'length-unit'", 3, 3},
        {HDR "station,point,u,w\na,0,1,2\n", "unknown column 'w'", 3, 17},
        {HDR "station,point,u\na,0,1\n", "missing column 'v'", 3, 0},
        {HDR "station,point,u,v\na,0,1,nan\n", "NaN and Inf", 4, 7},
        {HDR "station,point,u,v\na,0,1,inf\n", "NaN and Inf", 4, 7},
        {HDR "station,point,u,v\na,0,1,2x\n", "expected a number", 4, 7},
        {HDR "station,point,u,v\na,0,1,\n", "empty field", 4, 7},
        {HDR "station,point,u,v\n,0,1,2\n", "column 'station'", 4, 1},
        {HDR "station,point,u,v\na,,1,2\n", "column 'point'", 4, 3},
        {HDR "station,point,u,v\na,0,1,2\nb,0,1,2\na,0,3,4\n", "given twice (first at line 4)", 6, 0},
        {HDR "station,point,u,v\na,0,1\n", "short row", 4, 0},
        {HDR "station,point,u,v\n", "no observations", 3, 0},
        {HDR, "no header row", 0, 0},
    };
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        tram_pixel_obs *o = (tram_pixel_obs *)1;
        tram_error err;
        tram_status st = tram_pixel_obs_read_buffer("bad.csv", cases[k].text, strlen(cases[k].text), &o, &err);
        char buf[1200];
        printf("  refusal %zu: %s\n", k, tram_error_format(&err, buf, sizeof buf));
        assert_int_equal(st, TRAM_EINPUT);
        assert_null(o);
        assert_non_null(strstr(err.message, cases[k].needle));
        assert_string_equal(err.file, "bad.csv");
        if (cases[k].line) assert_int_equal(err.line, cases[k].line);
        assert_int_equal(err.column, cases[k].col);
    }
}

static void test_write_round_trip(void **state)
{
    (void)state;
    test_rng rng = {20260101};
    printf("  seed %llu\n", (unsigned long long)rng.s);
    tram_pixel_obs *o, *back;
    tram_error err;
    assert_int_equal(tram_pixel_obs_create(1280, 960, "board.json", &o, &err), TRAM_OK);
    for (int s = 0; s < 3; s++)
        for (int p = 0; p < 70; p++) {
            char sid[16], pid[16];
            snprintf(sid, sizeof sid, "img_%03d", s + 1);
            snprintf(pid, sizeof pid, "%d", p);
            double u = 1280.0 * test_rng_uniform(&rng), v = 960.0 * test_rng_uniform(&rng) - 0.5;
            assert_int_equal(tram_pixel_obs_add(o, sid, pid, u, v, &err), TRAM_OK);
        }
    assert_int_equal(tram_pixel_obs_add(o, "img_001", "3", 1, 2, &err), TRAM_EINPUT);
    assert_int_equal(tram_pixel_obs_add(o, "a,b", "3", 1, 2, &err), TRAM_EINPUT);
    assert_int_equal(tram_pixel_obs_add(o, "#a", "3", 1, 2, &err), TRAM_EINPUT);
    assert_int_equal(tram_pixel_obs_add(o, "a", "", 1, 2, &err), TRAM_EINPUT);
    assert_int_equal(tram_pixel_obs_add(o, "a", "3", NAN, 2, &err), TRAM_EINPUT);
    assert_int_equal(o->n, 210);
    char *text;
    assert_int_equal(tram_pixel_obs_write(o, &text, &err), TRAM_OK);
    assert_int_equal(tram_pixel_obs_read_buffer("rt.csv", text, strlen(text), &back, &err), TRAM_OK);
    assert_int_equal(back->n, o->n);
    assert_int_equal(back->nstations, 3);
    assert_int_equal(back->npoints, 70);
    assert_int_equal(back->width, 1280);
    assert_string_equal(back->board, "board.json");
    for (size_t i = 0; i < o->n; i++) {
        assert_true(back->uv[2 * i] == o->uv[2 * i]);
        assert_true(back->uv[2 * i + 1] == o->uv[2 * i + 1]);
        assert_string_equal(back->station_id[back->station[i]], o->station_id[o->station[i]]);
        assert_string_equal(back->point_id[back->point[i]], o->point_id[o->point[i]]);
    }
    free(text);
    tram_pixel_obs_destroy(back);
    tram_pixel_obs_destroy(o);
    assert_int_equal(tram_pixel_obs_create(0, 960, NULL, &o, &err), TRAM_EINPUT);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_read_good), cmocka_unit_test(test_refusals),
                                       cmocka_unit_test(test_write_round_trip)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
