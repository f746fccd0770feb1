/*
 * fuzz_pixels.c - libFuzzer harness for pixel-observation files
 * (tram-pixels-1, docs/camera.md): whatever reads must write and read back
 * to the same observations.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_pixel_obs *o = NULL, *b = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_pixel_obs_read_buffer("fuzz.csv", (const char *)data, size, &o, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    char *text = NULL;
    if (tram_pixel_obs_write(o, &text, &err) != TRAM_OK) {
        fuzz_check_error(&err);
    } else {
        if (tram_pixel_obs_read_buffer("back.csv", text, strlen(text), &b, &err) != TRAM_OK) {
            fprintf(stderr, "fuzz: written pixel file does not read back: %s\n", err.message);
            abort();
        }
        int same = b->n == o->n && b->width == o->width && b->height == o->height &&
                   strcmp(b->board, o->board) == 0;
        for (size_t i = 0; same && i < o->n; i++)
            same = b->uv[2 * i] == o->uv[2 * i] && b->uv[2 * i + 1] == o->uv[2 * i + 1] &&
                   strcmp(b->station_id[b->station[i]], o->station_id[o->station[i]]) == 0 &&
                   strcmp(b->point_id[b->point[i]], o->point_id[o->point[i]]) == 0;
        if (!same) {
            fprintf(stderr, "fuzz: pixel file round trip changed the observations\n");
            abort();
        }
        tram_pixel_obs_destroy(b);
    }
    free(text);
    tram_pixel_obs_destroy(o);
    return 0;
}
