/*
 * tram/register_json.h - what a registration reports (tram register):
 * its plausibility warnings as text, and its JSON document (schema:
 * docs/points.md, "JSON output").
 */
#ifndef TRAM_REGISTER_JSON_H
#define TRAM_REGISTER_JSON_H

#include "tram/points.h"
#include "tram/register.h"

#ifdef __cplusplus
extern "C" {
#endif

#define TRAM_REGISTER_WARNINGS_MAX 2

typedef struct tram_register_warning {
    char code[40];     /* e.g. "implausible-residuals"            */
    char message[600]; /* the reason and what to check, in words */
} tram_register_warning;

/* The warnings of the plausibility checks t (run with options o), lengths
 * named in unit, into out; returns how many (0 when both checks passed). */
TRAM_API size_t tram_register_trust_warnings(const tram_register_trust *t,
                                             const tram_register_trust_options *o,
                                             tram_length_unit unit,
                                             tram_register_warning out[TRAM_REGISTER_WARNINGS_MAX]);

/* A registration as the command reports it. */
typedef struct tram_register_report {
    const tram_point_pairs *pairs;
    const tram_register_result *result;
    const double *residuals;  /* pairs->n residuals (tram_register_residuals) */
    const int *inlier;        /* pairs->n flags from the robust fit, or NULL  */
    double threshold;         /* the robust fit's inlier distance (length)    */
    const char *method;       /* "svd" or "quaternion"                        */
    int scale_solved;         /* similarity (Umeyama) rather than rigid        */
    const tram_register_trust *trust;
    const tram_register_trust_options *trust_options;
} tram_register_report;

/* The JSON document of r (indented, with a final newline) into *text,
 * which the caller frees with tram_free.  TRAM_ENOMEM, and *text NULL, if
 * any allocation failed: never a partial document. */
TRAM_API tram_status tram_register_to_json(const tram_register_report *r, char **text,
                                           tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
