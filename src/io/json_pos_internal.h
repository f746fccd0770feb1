/*
 * json_pos_internal.h - where the members of a JSON document are in its
 * text.  cJSON keeps no position of an item, so readers that check
 * meanings scan the text once more, after tram__json_parse has accepted it
 * (and refused, with their positions, syntax errors, duplicate keys and
 * numbers beyond double range: json_check.c), to name file:line:column in
 * their messages.  The one way to fail at a member: tram__json_pos_fail.
 *
 * Paths: members as "a.b.c", array elements as "a[3]", the root as "".
 */
#ifndef TRAM_JSON_POS_INTERNAL_H
#define TRAM_JSON_POS_INTERNAL_H

#include "core/tram_internal.h"

typedef struct tram__json_item {
    char path[120];      /* "" for a path that did not fit */
    size_t key_off;      /* offset of the key's opening quote (= val_off for elements) */
    size_t val_off;      /* offset of the value's first character */
} tram__json_item;

typedef struct tram__json_pos {
    const char *data;    /* the text (borrowed: must outlive this) */
    size_t len, n, cap;
    tram__json_item *item;
} tram__json_pos;

/* Scan data (a document tram__json_parse has accepted).  TRAM_EINPUT for
 * nesting deeper than 64; TRAM_ENOMEM.  Free with tram__json_pos_free. */
tram_status tram__json_pos_scan(const char *name, const char *data, size_t len,
                                tram__json_pos **out, tram_error *err);
void tram__json_pos_free(tram__json_pos *p);

/* Line and column (1-based) of the value at path, or of its key when
 * key != 0.  When path is not there, the position of its nearest parent
 * that is (the root at worst). */
void tram__json_pos_where(const tram__json_pos *p, const char *path, int key, long *line,
                          long *col);

/* Fail with TRAM_EINPUT at the value of path (or at its key, key != 0) of
 * the document `name`: file:line:column and the message. */
tram_status tram__json_pos_fail(const tram__json_pos *p, const char *name, tram_error *err,
                                const char *path, int key, const char *fmt, ...)
    TRAM_PRINTF(6, 7);

/* out = path + "." + key ("" path: key alone), truncated to size. */
void tram__json_path_join(char *out, size_t size, const char *path, const char *key);

/* Every member of obj (the object at path, "" for the root) must be one
 * of known (NULL-terminated): else TRAM_EINPUT at the first other key,
 * 'unknown key "K" in PATH: expected HINT'. */
struct cJSON;
tram_status tram__json_known_keys(const tram__json_pos *p, const char *name, tram_error *err,
                                  const struct cJSON *obj, const char *path,
                                  const char *const *known, const char *hint);

/* tram__json_pos_fail on a text scanned now, for readers that keep no
 * positions (large documents) and look one up only on their error path.
 * data must have been accepted by tram__json_parse.  TRAM_ENOMEM when the
 * scan runs out of memory. */
tram_status tram__json_pos_fail_text(const char *name, const char *data, size_t len,
                                     tram_error *err, const char *path, int key,
                                     const char *fmt, ...) TRAM_PRINTF(7, 8);

#endif
