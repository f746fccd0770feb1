/*
 * sha256.c - SHA-256 of a buffer (FIPS 180-4) for the input files that a
 * calibration report lists, through libmd (Debian libmd-dev), a
 * well-kept implementation of the message digests.
 */
#include "io/sha256_internal.h"

#include <stdint.h>
#include <sys/types.h>

#include <sha2.h>

void tram__sha256(const void *data, size_t len, unsigned char out[32])
{
    SHA2_CTX ctx;
    SHA256Init(&ctx);
    SHA256Update(&ctx, (const uint8_t *)data, len);
    SHA256Final(out, &ctx);
}

void tram__sha256_hex(const void *data, size_t len, char out[65])
{
    static const char digits[] = "0123456789abcdef";
    unsigned char d[32];
    tram__sha256(data, len, d);
    for (int i = 0; i < 32; i++) {
        out[2 * i] = digits[d[i] >> 4];
        out[2 * i + 1] = digits[d[i] & 15];
    }
    out[64] = '\0';
}
