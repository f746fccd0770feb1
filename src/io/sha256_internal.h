/*
 * sha256_internal.h - SHA-256 of a buffer (sha256.c), for the hashes of
 * the input files a calibration report lists.
 */
#ifndef TRAM_SHA256_INTERNAL_H
#define TRAM_SHA256_INTERNAL_H

#include <stddef.h>

/* The SHA-256 digest of data[0..len) (FIPS 180-4, section 6.2). */
void tram__sha256(const void *data, size_t len, unsigned char out[32]);
/* The same as 64 lower-case hexadecimal digits and a NUL. */
void tram__sha256_hex(const void *data, size_t len, char out[65]);

#endif
