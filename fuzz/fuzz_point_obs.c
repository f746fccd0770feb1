/*
 * fuzz_point_obs.c - libFuzzer harness for observed-point files
 * (docs/points.md), read against a fixed record set of three stations
 * (s1, s2, s3; fuzz_common.h).
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_point_obs *o = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_point_obs_read_buffer("fuzz.csv", (const char *)data, size, fuzz_fixed_records(), &o,
                                   &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    tram_point_obs_destroy(o);
    return 0;
}
