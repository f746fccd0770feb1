/*
 * fuzz_chain.c - libFuzzer harness for the kinematic-chain reader
 * (docs/chain.md).  A chain that reads is run forward and its Jacobian
 * taken at the zero reading and at the middle of every joint's limits.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_chain *c = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_chain_read_buffer("fuzz.json", (const char *)data, size, &c, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    size_t nj = c->n_joints;
    double *q = calloc(nj ? nj : 1, sizeof *q);
    double *J = calloc(6 * (nj ? nj : 1), sizeof *J);
    tram_se3 *frames = calloc(nj + 2, sizeof *frames);
    if (q && J && frames) {
        tram_se3 T;
        tram_chain_forward(c, q, &T, frames);
        tram_chain_jacobian(c, q, J);
        size_t j = 0;
        for (size_t e = 0; e < c->n_elements; e++)
            if (c->elements[e].kind != TRAM_CHAIN_FIXED && j < nj)
                q[j++] = c->elements[e].has_limits ? 0.5 * (c->elements[e].lo + c->elements[e].hi) : 1.0;
        (void)tram_chain_limit_violation(c, q);
        tram_chain_forward(c, q, &T, NULL);
    }
    free(q);
    free(J);
    free(frames);
    tram_chain_destroy(c);
    return 0;
}
