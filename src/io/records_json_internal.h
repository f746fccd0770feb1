/*
 * records_json_internal.h - the JSON record-file reader (records_json.c),
 * called by the public dispatch in records.c.
 */
#ifndef TRAM_RECORDS_JSON_INTERNAL_H
#define TRAM_RECORDS_JSON_INTERNAL_H

#include "tram/records.h"
#include "core/tram_internal.h"

tram_status tram__records_read_json(const char *name, const char *data, size_t len,
                                    const tram_read_options *opt, tram_records **out,
                                    tram_error *err);

#endif
