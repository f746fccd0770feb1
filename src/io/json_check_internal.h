/*
 * json_check_internal.h - the strict check of a JSON document that every
 * JSON reader makes through tram__json_parse (json_check.c).
 */
#ifndef TRAM_JSON_CHECK_INTERNAL_H
#define TRAM_JSON_CHECK_INTERNAL_H

#include "core/tram_internal.h"

/* TRAM_EINPUT naming name:line:column and "<what>: ..." unless data[0,
 * len) is one JSON document (RFC 8259; blanks around it) nested at most
 * CJSON_NESTING_LIMIT deep, with no key twice in one object and every
 * number within double range; TRAM_ENOMEM. */
tram_status tram__json_check(const char *name, const char *data, size_t len, const char *what,
                             tram_error *err);

#endif
