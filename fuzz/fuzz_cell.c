/*
 * fuzz_cell.c - libFuzzer harness for cell files (tram-cell, version 1,
 * docs/plan.md): every refusal must name what was expected, for either
 * setup.  Inputs that could name another file (a "camera" or "chain" key,
 * or any backslash escape that could spell one) are skipped, so that the
 * fuzzer never opens paths of its own making.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *t = (const char *)data;
    if (memchr(t, '\\', size)) return 0;
    for (size_t i = 0; i + 5 <= size; i++)
        if (!memcmp(t + i, "chain", 5) || (i + 6 <= size && !memcmp(t + i, "camera", 6))) return 0;
    for (int s = 0; s < 2; s++) {
        tram_cell *c = NULL;
        tram_error err;
        tram_error_clear(&err);
        tram_setup setup = s ? TRAM_SETUP_EYE_TO_HAND : TRAM_SETUP_EYE_IN_HAND;
        if (tram_cell_read_buffer("fuzz.json", t, size, NULL, setup, &c, &err) != TRAM_OK) {
            fuzz_check_error(&err);
            if (c) abort(); /* a refusal returns no cell */
            continue;
        }
        if (!(c->distance[0] > 0 && c->distance[0] < c->distance[1]) || c->camera.width == 0 ||
            !(c->camera.fx > 0)) {
            fprintf(stderr, "fuzz: a cell was accepted with an empty view\n");
            abort();
        }
        tram_cell_destroy(c);
    }
    return 0;
}
