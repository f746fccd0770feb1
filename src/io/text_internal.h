/*
 * text_internal.h - reading outside text (text.c): whole files, strict
 * numbers, checksums.
 */
#ifndef TRAM_TEXT_INTERNAL_H
#define TRAM_TEXT_INTERNAL_H

#include <pthread.h>

#include "core/tram_internal.h"

/* Parse a whole field as a finite decimal double (no NaN, no Inf, no
 * hexadecimal; leading white space skipped as strtod does), rounded
 * exactly as strtod rounds.  0 on success. */
int tram__parse_double(const char *s, double *out);
/* The same on [s, e), which need not be NUL-terminated. */
int tram__parse_number(const char *s, const char *e, double *out);

/* Read a whole file ("-" = stdin) into a NUL-terminated buffer (a regular
 * file in one read).  An empty name or a directory is refused by name. */
tram_status tram__read_all(const char *path, char **data, size_t *len, tram_error *err);

unsigned long long tram__fnv1a64(const char *data, size_t len);

/* FNV-1a of a large input on a second thread while the caller parses it
 * (computed in tram__checksum_finish instead when the input is small or
 * no thread can be started).  Every start is followed by one finish,
 * also on failure paths: the thread reads data until it is joined. */
typedef struct tram__checksum_job {
    const char *data;
    size_t len;
    unsigned long long value;
    int running;
    pthread_t thread;
} tram__checksum_job;
void tram__checksum_start(tram__checksum_job *j, const char *data, size_t len);
unsigned long long tram__checksum_finish(tram__checksum_job *j);

#endif
