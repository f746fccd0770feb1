/*
 * records.c - the public entry points of record files: reading a file or
 * a buffer (dispatched to the CSV or JSON reader by the first character),
 * and the record set's lifetime.
 */
#include "io/records_csv_internal.h"
#include "io/records_json_internal.h"
#include "io/records_store_internal.h"
#include "io/text_internal.h"

#include <string.h>

/* ---- lifetime and reading ------------------------------------------ */

void tram_records_destroy(tram_records *r)
{
    if (!r) return;
    tram__records_free_arrays(r);
    tram__free(r);
}

tram_records *tram_records_clone(const tram_records *r)
{
    tram_records *c = tram__malloc(sizeof *c);
    if (!c) return NULL;
    *c = *r;
    if (tram__records_copy_arrays(c, r) != TRAM_OK) {
        tram__free(c);
        return NULL;
    }
    return c;
}

tram_status tram_records_read_buffer(const char *name, const char *data, size_t len,
                                     const tram_read_options *opt, tram_records **out,
                                     tram_error *err)
{
    *out = NULL;
    /* A UTF-8 byte-order mark (spreadsheets write one) is not part of the
     * text: skip it, so that columns count from the first character. */
    if (len >= 3 && (unsigned char)data[0] == 0xEF && (unsigned char)data[1] == 0xBB &&
        (unsigned char)data[2] == 0xBF) {
        data += 3;
        len -= 3;
    }
    size_t i = 0;
    while (i < len && (data[i] == ' ' || data[i] == '\t' || data[i] == '\r' || data[i] == '\n'))
        i++;
    if (i < len && data[i] == '{') return tram__records_read_json(name, data, len, opt, out, err);
    return tram__records_read_csv(name, data, len, opt, out, err);
}

tram_status tram_records_read_file(const char *path, const tram_read_options *opt,
                                   tram_records **out, tram_error *err)
{
    *out = NULL;
    char *data;
    size_t len;
    tram_status s = tram__read_all(path, &data, &len, err);
    if (s != TRAM_OK) return s;
    s = tram_records_read_buffer(strcmp(path, "-") == 0 ? "<stdin>" : path, data, len, opt, out,
                                 err);
    tram__free(data);
    return s;
}
