/*
 * fuzz_calibration.c - libFuzzer harness for the calibration-file reader
 * (format tram-calibration, docs/solve.md).  The input is a whole file.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_calibration *c = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_calibration_read_buffer("fuzz.json", (const char *)data, size, &c, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    tram_calibration_destroy(c);
    return 0;
}
