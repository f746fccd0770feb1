/*
 * fuzz_common.h - pieces shared by the libFuzzer harnesses in fuzz/: the
 * checks every failed read must pass (an error names what was expected,
 * in a NUL-terminated message) and a writer sink for what was read.
 *
 * The harnesses build two ways: with clang's -fsanitize=fuzzer for
 * `make fuzz`, and with fuzz/replay.c as main() for the corpus replay that
 * `make test` runs under AddressSanitizer and UBSan.
 */
#ifndef TRAM_FUZZ_COMMON_H
#define TRAM_FUZZ_COMMON_H

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tram/tram.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* A failed read must say why: a status other than OK, a non-empty
 * message.  abort() makes the fuzzer keep the input. */
static inline void fuzz_check_error(const tram_error *err)
{
    if (err->status == TRAM_OK || err->message[0] == '\0' ||
        memchr(err->message, '\0', sizeof err->message) == NULL) {
        fprintf(stderr, "fuzz: a failed read left no message\n");
        abort();
    }
}

/* Write a record set in both forms into memory and drop the text. */
static inline void fuzz_sink_records(const tram_records *r)
{
    for (int json = 0; json <= 1; json++) {
        char *buf = NULL;
        size_t len = 0;
        FILE *f = open_memstream(&buf, &len);
        if (!f) return;
        tram_output_rep rep;
        memset(&rep, 0, sizeof rep);
        rep.kind = TRAM_REP_QUAT;
        tram_error err;
        tram_error_clear(&err);
        (void)tram_records_write(r, &rep, json, f, &err);
        fclose(f);
        free(buf);
    }
}

/* Three robot-only stations with ids s1, s2, s3 in mm, read once: the
 * record set that observation and model files refer to. */
static inline const tram_records *fuzz_fixed_records(void)
{
    static tram_records *r;
    if (!r) {
        static const char text[] =
            "# length-unit: mm\n"
            "station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n"
            "s1,500,0,400,1,0,0,0\n"
            "s2,520,30,410,0.9950041652780258,0.0998334166468282,0,0\n"
            "s3,480,-20,390,0.9950041652780258,0,0.0998334166468282,0\n";
        tram_error err;
        if (tram_records_read_buffer("fixed.csv", text, sizeof text - 1, NULL, &r, &err) != TRAM_OK)
            abort();
    }
    return r;
}

#endif
