/*
 * text.c - reading outside text: a whole file (or stdin) into memory, a
 * strict decimal number parse, and the FNV-1a checksum of the input
 * (Fowler, Noll and Vo; the 64-bit offset basis and prime of the published
 * parameters).
 */
#include "io/text_internal.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

unsigned long long tram__fnv1a64(const char *data, size_t len)
{
    unsigned long long h = 1469598103934665603ULL;
    for (size_t i = 0; i < len; i++) {
        h ^= (unsigned char)data[i];
        h *= 1099511628211ULL;
    }
    return h;
}

int tram__parse_double(const char *s, double *out)
{
    if (!s || !*s) return -1;
    char *end;
    errno = 0;
    double v = strtod(s, &end);
    if (end == s || *end != '\0' || !isfinite(v)) return -1;
    *out = v;
    return 0;
}

tram_status tram__read_all(const char *path, char **data, size_t *len, tram_error *err)
{
    FILE *f = strcmp(path, "-") == 0 ? stdin : fopen(path, "rb");
    if (!f)
        return tram__fail(err, TRAM_EIO, path, 0, 0, "cannot open: %s", strerror(errno));
    size_t cap = 65536, n = 0;
    char *buf = tram__malloc(cap);
    if (!buf) {
        if (f != stdin) fclose(f);
        return tram__fail(err, TRAM_ENOMEM, path, 0, 0, "out of memory");
    }
    for (;;) {
        if (n + 1 >= cap) {
            char *nb = tram__realloc(buf, cap * 2);
            if (!nb) {
                tram__free(buf);
                if (f != stdin) fclose(f);
                return tram__fail(err, TRAM_ENOMEM, path, 0, 0, "out of memory");
            }
            buf = nb;
            cap *= 2;
        }
        size_t got = fread(buf + n, 1, cap - n - 1, f);
        n += got;
        if (got == 0) break;
    }
    int bad = ferror(f);
    if (f != stdin) fclose(f);
    if (bad) {
        tram__free(buf);
        return tram__fail(err, TRAM_EIO, path, 0, 0, "read error");
    }
    buf[n] = '\0';
    *data = buf;
    *len = n;
    return TRAM_OK;
}
