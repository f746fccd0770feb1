/*
 * fuzz_history.c - libFuzzer harness for the check-history reader (one
 * JSON object per line, docs/check.md).
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_check_history *h = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_check_history_read_buffer("fuzz.jsonl", (const char *)data, size, &h, &err) !=
        TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    tram_check_history_destroy(h);
    return 0;
}
