/*
 * fuzz_records.c - libFuzzer harness for the record-file reader (CSV and
 * JSON forms, one entry point: docs/records.md).  The input is a whole file.
 * Each input is read twice: with default options, and with a length and
 * angle unit given and re-orthonormalisation on (as the command's options
 * would).  A file that reads is then written back in both forms, cloned
 * and re-read under its own conventions, so that the writer and
 * tram_records_rebuild see every record set the reader accepts.
 */
#include "fuzz_common.h"

static void read_with(const uint8_t *data, size_t size, const tram_read_options *opt)
{
    tram_records *r = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_records_read_buffer("fuzz.csv", (const char *)data, size, opt, &r, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return;
    }
    fuzz_sink_records(r);
    tram_records *copy = tram_records_clone(r);
    if (copy) {
        tram_block_convention conv[TRAM_BLOCK_COUNT];
        memcpy(conv, copy->conv, sizeof conv);
        (void)tram_records_rebuild(copy, conv, &err);
    }
    tram_records_destroy(copy);
    tram_records_destroy(r);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    /* as read by default, and with the command-line options given: units
     * (which may conflict with the file's) and re-orthonormalisation */
    tram_read_options opt;
    memset(&opt, 0, sizeof opt);
    read_with(data, size, &opt);
    opt.length_unit = TRAM_LENGTH_MM;
    opt.angle_unit = TRAM_ANGLE_DEG;
    opt.reorthonormalize = 1;
    read_with(data, size, &opt);
    return 0;
}
