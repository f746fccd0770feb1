/*
 * json_check_internal.h - the strict check of a JSON document that every
 * JSON reader makes through tram__json_parse (json_check.c).
 */
#ifndef TRAM_JSON_CHECK_INTERNAL_H
#define TRAM_JSON_CHECK_INTERNAL_H

#include "core/tram_internal.h"

#include <stdint.h>

/* TRAM_EINPUT naming name:line:column and "<what>: ..." unless data[0,
 * len) is one JSON document (RFC 8259; blanks around it) nested at most
 * CJSON_NESTING_LIMIT deep, with no key twice in one object and every
 * number within double range; TRAM_ENOMEM. */
tram_status tram__json_check(const char *name, const char *data, size_t len, const char *what,
                             tram_error *err);

/* The elements of one array member of the top-level object, found by the
 * check (so that a reader can hand cJSON one element at a time instead of
 * building the tree of the whole document). */
typedef struct tram__json_spans {
    const char *key;           /* in: the top-level key (as cJSON decodes it) */
    int found;                 /* out: the top level is an object whose member
                                * key is an array                             */
    size_t array_off, array_end; /* out: the array's text [off, end)          */
    size_t n, cap;             /* out: its elements                           */
    size_t *elem;              /* 5 per element: element k is the text
                                * [elem[5k], elem[5k+1]), its numbers are
                                * num[elem[5k+2]] and the elem[5k+3] after it
                                * ((size_t)-1: not recorded, element too long),
                                * and it starts on line elem[5k+4]            */
    uint32_t *num;             /* where each number of the elements starts,
                                * from its element's start                    */
    size_t nnum, capnum;       /* both freed by the caller with tram__free    */
} tram__json_spans;

/* tram__json_check that also fills sp (sp->key set, the rest zero). */
tram_status tram__json_check_spans(const char *name, const char *data, size_t len,
                                   const char *what, tram__json_spans *sp, tram_error *err);

#endif
