/*
 * text.c - reading outside text: a whole file (or stdin) into memory, a
 * strict decimal number parse, and the FNV-1a checksum of the input
 * (Fowler, Noll and Vo; the 64-bit offset basis and prime of the published
 * parameters).
 *
 * Numbers: the grammar is checked here (decimal only, as docs/records.md
 * says: no hexadecimal, no inf or nan), the conversion is fast_float's
 * Eisel-Lemire (Lemire 2021, through number_shim.cc), which rounds
 * correctly and so gives strtod's double bit for bit (tests/test_text.c
 * holds it to strtod on random and edge-case strings).
 */
#include "io/text_internal.h"
#include "io/number_shim_internal.h"

#include <errno.h>
#include <pthread.h>
#include <sys/stat.h>
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

/* The checksum beside the parse: FNV-1a is one serial chain of
 * multiplications (about 4 cycles a byte whatever the code), so for a
 * large input it runs on a second thread while the reader parses. */
enum { CHECKSUM_THREAD_MIN = 1 << 20 };

static void *checksum_thread(void *arg)
{
    tram__checksum_job *j = arg;
    j->value = tram__fnv1a64(j->data, j->len);
    return NULL;
}

void tram__checksum_start(tram__checksum_job *j, const char *data, size_t len)
{
    j->data = data;
    j->len = len;
    j->value = 0;
    j->running = 0;
    if (len >= CHECKSUM_THREAD_MIN &&
        pthread_create(&j->thread, NULL, checksum_thread, j) == 0)
        j->running = 1;
}

unsigned long long tram__checksum_finish(tram__checksum_job *j)
{
    if (j->running) {
        pthread_join(j->thread, NULL);
        j->running = 0;
    } else
        j->value = tram__fnv1a64(j->data, j->len);
    return j->value;
}

int tram__parse_number(const char *s, const char *e, double *out)
{
    /* leading white space as strtod skips it (the readers trim blanks) */
    while (s < e && (*s == ' ' || (*s >= '\t' && *s <= '\r'))) s++;
    /* fast_float reads [-] (digits [. digits] | . digits) [(e|E) [+-] digits]
     * and stops before anything else (a hexadecimal "0x1p3" stops at the
     * 'x'), so "all of it read" is the decimal grammar; it also reads
     * inf and nan, which the finiteness test refuses.  strtod's leading
     * '+' is taken off here (but not "+-1"). */
    if (s < e && *s == '+') {
        s++;
        if (s < e && (*s == '+' || *s == '-')) return -1;
    }
    double v;
    if (s == e || tram__number_convert(s, e, &v) != 0 || !isfinite(v)) return -1;
    *out = v;
    return 0;
}

int tram__parse_double(const char *s, double *out)
{
    if (!s || !*s) return -1;
    return tram__parse_number(s, s + strlen(s), out);
}

/* The size of a regular file, to read it in one go; -1 when not known. */
static long long regular_size(FILE *f)
{
    struct stat sb;
    if (fstat(fileno(f), &sb) != 0 || !S_ISREG(sb.st_mode)) return -1;
    return (long long)sb.st_size;
}

tram_status tram__read_all(const char *path, char **data, size_t *len, tram_error *err)
{
    if (!path || !*path)
        return tram__fail(err, TRAM_EIO, "", 0, 0, "empty file name: expected a file to read");
    const int is_stdin = strcmp(path, "-") == 0;
    const char *shown = is_stdin ? "<stdin>" : path;
    FILE *f = is_stdin ? stdin : fopen(path, "rb");
    if (!f)
        return tram__fail(err, TRAM_EIO, shown, 0, 0, "cannot open: %s", strerror(errno));
    struct stat sb;
    if (fstat(fileno(f), &sb) == 0 && S_ISDIR(sb.st_mode)) {
        if (!is_stdin) fclose(f);
        return tram__fail(err, TRAM_EIO, shown, 0, 0, "is a directory: expected a file");
    }
    long long known = regular_size(f);
    /* one read for a regular file (one more byte shows it did not grow) */
    size_t cap = known >= 0 ? (size_t)known + 2 : 65536, n = 0;
    char *buf = tram__malloc(cap);
    if (!buf) {
        if (!is_stdin) fclose(f);
        return tram__fail(err, TRAM_ENOMEM, shown, 0, 0, "out of memory");
    }
    tram__hint_fill(buf, cap);
    for (;;) {
        if (n + 1 >= cap) {
            char *nb = tram__realloc(buf, cap * 2);
            if (!nb) {
                tram__free(buf);
                if (!is_stdin) fclose(f);
                return tram__fail(err, TRAM_ENOMEM, shown, 0, 0, "out of memory");
            }
            buf = nb;
            cap *= 2;
        }
        size_t got = fread(buf + n, 1, cap - n - 1, f);
        n += got;
        if (got == 0) break;
    }
    int bad = ferror(f);
    int code = errno;
    if (!is_stdin) fclose(f);
    if (bad) {
        tram__free(buf);
        return tram__fail(err, TRAM_EIO, shown, 0, 0, "read error: %s", strerror(code));
    }
    buf[n] = '\0';
    *data = buf;
    *len = n;
    return TRAM_OK;
}
