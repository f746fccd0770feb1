/*
 * records_csv_internal.h - the CSV record-file reader (records_csv.c),
 * called by the public dispatch in records.c.
 */
#ifndef TRAM_RECORDS_CSV_INTERNAL_H
#define TRAM_RECORDS_CSV_INTERNAL_H

#include "tram/records.h"
#include "core/tram_internal.h"

tram_status tram__records_read_csv(const char *name, const char *data, size_t len,
                                   const tram_read_options *opt, tram_records **out,
                                   tram_error *err);

#endif
