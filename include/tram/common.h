/*
 * tram/common.h - shared definitions of the tram library: the export macro,
 * the version, status codes, the caller-owned error struct and the unit
 * enums.
 *
 * Conventions used throughout the library (see docs/notation.md):
 *   - T_a_b is the pose of frame b expressed in frame a.  It maps
 *     coordinates in b to coordinates in a:  p_a = T_a_b * p_b, and
 *     T_a_c = T_a_b * T_b_c.
 *   - Lengths carry the unit of the data they came from; the unit is held
 *     beside the numbers (tram_length_unit) and never guessed.
 *   - Angles inside the library are radians unless a name says _deg.
 *
 * Errors: functions that can fail on outside data return a tram_status and
 * fill a tram_error owned by the caller.  The library keeps no global error
 * state and never aborts.
 */
#ifndef TRAM_COMMON_H
#define TRAM_COMMON_H

#include <stddef.h>

#if defined(TRAM_BUILDING_LIBRARY) && defined(__GNUC__)
#define TRAM_API __attribute__((visibility("default")))
#else
#define TRAM_API
#endif

#define TRAM_VERSION_MAJOR 0
#define TRAM_VERSION_MINOR 1
#define TRAM_VERSION_PATCH 0
#define TRAM_VERSION_STRING "0.1.0"

#ifdef __cplusplus
extern "C" {
#endif

/* Status codes.  The numeric values of TRAM_EINPUT and TRAM_EUNDETERMINED
 * are also the command's exit codes (2 and 3). */
typedef enum tram_status {
    TRAM_OK = 0,
    TRAM_EINPUT = 2,          /* bad input: malformed file, bad option value */
    TRAM_EUNDETERMINED = 3,   /* the data cannot determine the answer       */
    TRAM_ENOMEM = 4,          /* an allocation failed                        */
    TRAM_EIO = 5,             /* a file could not be read or written         */
    TRAM_ENUMERIC = 6         /* a LAPACK routine failed to converge         */
} tram_status;

/* Caller-owned error description.  `file` is empty when the error is not
 * tied to a file; line and column are 1-based and 0 when unknown. */
typedef struct tram_error {
    tram_status status;
    char file[256];
    long line;
    long column;
    char message[768];
} tram_error;

/* Reset an error struct to "no error".  NULL is allowed (no-op). */
TRAM_API void tram_error_clear(tram_error *err);

/* Format as "file:line:column: message" (parts that are unknown are left
 * out).  Always NUL-terminates when size > 0; returns buf. */
TRAM_API char *tram_error_format(const tram_error *err, char *buf, size_t size);

/* Length units accepted in record files and options. */
typedef enum tram_length_unit {
    TRAM_LENGTH_UNSET = 0,
    TRAM_LENGTH_MM,
    TRAM_LENGTH_CM,
    TRAM_LENGTH_M,
    TRAM_LENGTH_IN
} tram_length_unit;

typedef enum tram_angle_unit {
    TRAM_ANGLE_UNSET = 0,
    TRAM_ANGLE_DEG,
    TRAM_ANGLE_RAD
} tram_angle_unit;

/* Parse "mm", "cm", "m", "in" (exact, lower case).  Returns TRAM_LENGTH_UNSET
 * for anything else. */
TRAM_API tram_length_unit tram_unit_length_parse(const char *s);
/* Name of a unit ("mm", ...); "unset" for TRAM_LENGTH_UNSET. */
TRAM_API const char *tram_unit_length_name(tram_length_unit u);
/* Length of one `u` in metres (mm -> 0.001).  0 for TRAM_LENGTH_UNSET. */
TRAM_API double tram_unit_length_in_m(tram_length_unit u);
/* Factor that converts a length in `from` to a length in `to`. */
TRAM_API double tram_unit_length_factor(tram_length_unit from, tram_length_unit to);

/* Parse "deg" or "rad"; TRAM_ANGLE_UNSET otherwise. */
TRAM_API tram_angle_unit tram_unit_angle_parse(const char *s);
TRAM_API const char *tram_unit_angle_name(tram_angle_unit u);
/* Radians per one `u` (deg -> pi/180).  0 for TRAM_ANGLE_UNSET. */
TRAM_API double tram_unit_angle_in_rad(tram_angle_unit u);

/* The library's version string, e.g. "0.1.0". */
TRAM_API const char *tram_version(void);

/* Release what the library handed to the caller to free() (JSON texts,
 * pair lists); for bindings that cannot call the C library's free(). */
TRAM_API void tram_free(void *p);

#ifdef __cplusplus
}
#endif
#endif
