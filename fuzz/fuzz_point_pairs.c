/*
 * fuzz_point_pairs.c - libFuzzer harness for the point-pair reader
 * (docs/points.md).  Pairs that read are registered (rigid and similarity)
 * so that the registration sees every shape of input the reader accepts.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_point_pairs *p = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_point_pairs_read_buffer("fuzz.csv", (const char *)data, size, TRAM_LENGTH_UNSET, &p,
                                     &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    for (int scale = 0; scale <= 1; scale++) {
        tram_register_options o = {TRAM_REGISTER_SVD, scale, p->dim, 1};
        tram_register_result res;
        (void)tram_register_points(p->from, p->to, p->weight, p->n, &o, &res, &err);
    }
    tram_point_pairs_destroy(p);
    return 0;
}
