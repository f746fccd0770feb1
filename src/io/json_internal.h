/*
 * json_internal.h - reading whole JSON documents strictly, and building
 * the library's JSON documents (solutions,
 * calibration files, check results, record files) with cJSON so that no
 * failure goes unnoticed: cJSON's "add" calls drop an item silently when an
 * allocation fails, which would write a document with fields missing.
 * Every helper here takes the builder, records any failure in it, and
 * tolerates a NULL parent (left by an earlier failure); tram__jb_finish
 * then refuses to print a document that is not whole.
 */
#ifndef TRAM_JSON_INTERNAL_H
#define TRAM_JSON_INTERNAL_H

#include <cjson/cJSON.h>

#include "tram/se3.h"
#include "core/tram_internal.h"
#include "io/json_check_internal.h"

typedef struct tram__jb {
    int failed; /* an allocation failed: the document is not whole */
} tram__jb;

/* A new object or array added to parent under key (parent an object), or
 * appended (key NULL, parent an array).  NULL after a failure. */
cJSON *tram__jb_obj(tram__jb *b, cJSON *parent, const char *key);
cJSON *tram__jb_arr(tram__jb *b, cJSON *parent, const char *key);
/* Values, added like the above.  Numbers print with %.17g (exact round
 * trip; -0 prints as 0); NaN and Inf print as null. */
void tram__jb_str(tram__jb *b, cJSON *parent, const char *key, const char *v);
void tram__jb_num(tram__jb *b, cJSON *parent, const char *key, double v);
void tram__jb_bool(tram__jb *b, cJSON *parent, const char *key, int v);
void tram__jb_null(tram__jb *b, cJSON *parent, const char *key);
/* An array of the n numbers v[i] * f. */
void tram__jb_vec(tram__jb *b, cJSON *parent, const char *key, const double *v, int n, double f);
/* A 4x4 matrix as four rows. */
void tram__jb_matrix4(tram__jb *b, cJSON *parent, const char *key, const tram_se3 *T);

/* Print root (indented, or on one line) into *text, allocated with
 * tram__malloc (the caller frees it with free()), with a final newline
 * when newline != 0; root is deleted.  TRAM_ENOMEM, and *text NULL, when
 * any step of the build failed. */
tram_status tram__jb_finish(tram__jb *b, cJSON *root, int formatted, int newline, char **text,
                            tram_error *err);

/* Parse one whole JSON document of len bytes (no NUL needed), after the
 * strict check of json_check.c: a syntax error ("<what>: malformed JSON:
 * ..."), text after the document, nesting beyond cJSON's limit, a key
 * given twice in one object, or a number beyond double range (1e400)
 * fail with TRAM_EINPUT naming name:line:column; an allocation failure
 * inside cJSON with TRAM_ENOMEM.  *out is NULL then.  The caller deletes
 * *out. */
tram_status tram__json_parse(const char *name, const char *data, size_t len, const char *what,
                             cJSON **out, tram_error *err);

/* tram__json_parse for a document with one large top-level array member
 * (sp->key, the rest of sp zero): the same check, which also finds the
 * array's elements (sp, freed by the caller with tram__free(sp->elem)
 * whatever the result); *out is the document with that array left empty
 * ("[]"), so that the caller can parse the elements one at a time with
 * tram__json_parse_elem and cJSON never holds the whole tree.  When the
 * member is not an array (sp->found 0), *out is the whole document. */
tram_status tram__json_parse_outline(const char *name, const char *data, size_t len,
                                     const char *what, tram__json_spans *sp, cJSON **out,
                                     tram_error *err);

/* Element k of sp (a document checked by tram__json_parse_outline) with
 * cJSON; TRAM_ENOMEM as tram__json_parse.  The caller deletes *out. */
tram_status tram__json_parse_elem(const char *name, const char *data, const tram__json_spans *sp,
                                  size_t k, const char *what, cJSON **out, tram_error *err);

#endif
