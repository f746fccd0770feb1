/*
 * text_internal.h - reading outside text (text.c): whole files, strict
 * numbers, checksums.
 */
#ifndef TRAM_TEXT_INTERNAL_H
#define TRAM_TEXT_INTERNAL_H

#include "core/tram_internal.h"

/* Parse a whole field as a finite double (no NaN, no Inf).  0 on success. */
int tram__parse_double(const char *s, double *out);

/* Read a whole file ("-" = stdin) into a NUL-terminated buffer. */
tram_status tram__read_all(const char *path, char **data, size_t *len, tram_error *err);

unsigned long long tram__fnv1a64(const char *data, size_t len);

#endif
