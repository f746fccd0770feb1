/*
 * fuzz_point_model.c - libFuzzer harness for target-model point files
 * (docs/points.md), read against a fixed record set (fuzz_common.h) for
 * its length unit.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_point_model *m = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_point_model_read_buffer("fuzz.csv", (const char *)data, size, fuzz_fixed_records(), &m,
                                     &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    tram_point_model_destroy(m);
    return 0;
}
