/*
 * records_schema_internal.h - the bottom of record-file reading, shared by
 * the CSV and JSON readers and the writer: the column schema, the
 * directive set, the final checks that turn raw numbers into poses, and
 * the unique-id check (records_schema.c).
 */
#ifndef TRAM_RECORDS_SCHEMA_INTERNAL_H
#define TRAM_RECORDS_SCHEMA_INTERNAL_H

#include "tram/records.h"
#include "core/tram_internal.h"

/* One directive's value and where it was given (line 0: not given). */
typedef struct rec_directives {
    tram_length_unit length_unit; long length_unit_line;
    tram_angle_unit angle_unit;   long angle_unit_line;
    tram_euler_seq euler[TRAM_BLOCK_COUNT]; long euler_line[TRAM_BLOCK_COUNT];
    int inverted[TRAM_BLOCK_COUNT]; long pose_line[TRAM_BLOCK_COUNT];
    tram_setup setup; long setup_line;
    /* per-block overrides of the length and angle units */
    tram_length_unit block_length[TRAM_BLOCK_COUNT]; long block_length_line[TRAM_BLOCK_COUNT];
    tram_angle_unit block_angle[TRAM_BLOCK_COUNT]; long block_angle_line[TRAM_BLOCK_COUNT];
    int format_version; long format_line;
    int robot_tool;                 /* robot-pose: tool-in-base                */
    int has_tool; long tool_line;   /* tool-in-flange                          */
    tram_se3 tool; tram_length_unit tool_unit;
} rec_directives;

/* Apply one directive "key: value" read at file:line:col.  Returns
 * TRAM_EINPUT on an unknown key, a bad value or a conflicting repeat. */
tram_status tram__directive_apply(rec_directives *d, const char *file, long line, long col,
                                  const char *key, const char *value, tram_error *err);

/* The known directive nearest to `key` after lower-casing it and reading
 * '_' as '-' (edit distance at most 2, or 0 after that normalising alone);
 * NULL when none is that near. */
const char *tram__directive_nearest(const char *key);

/* Keep one reader warning in r: "file:line:col: warning: " and the text. */
void tram__records_warn(tram_records *r, long line, long col, const char *fmt, ...)
    TRAM_PRINTF(4, 5);

enum { REC_COL_STATION = 1, REC_COL_VALUE = 2, REC_COL_JOINT = 3 };

typedef struct rec_column {
    int kind;  /* REC_COL_STATION or REC_COL_VALUE */
    int block; /* TRAM_BLOCK_ROBOT / TRAM_BLOCK_SENSOR */
    int slot;  /* index into tram_station.raw[block] */
} rec_column;

typedef struct rec_schema {
    int ncols;
    rec_column *cols; /* ncols entries, owned */
    int station_col;  /* -1 when absent */
    int has_block[TRAM_BLOCK_COUNT];
    tram_rep_kind rep[TRAM_BLOCK_COUNT];
    int nslots[TRAM_BLOCK_COUNT];
    int n_joints;
} rec_schema;

/* Build the schema from column names (e.g. "robot_qw").  lines/cols give
 * each name's position for messages (cols may be NULL). */
tram_status tram__schema_build(const char *file, const char *const *names, const long *lines,
                               const long *cols, int n, rec_schema *s, tram_error *err);
void tram__schema_free(rec_schema *s);

/* Number of raw slots of a representation (3 + rotation numbers). */
int tram__rep_slots(tram_rep_kind k);
/* Column suffix of slot `slot` for representation k ("x", "qw", "r11"...). */
const char *tram__rep_slot_name(tram_rep_kind k, int slot);

/* Check units against options and directives, set r's conventions and
 * build the poses.  header_line locates messages about the header. */
tram_status tram__records_finish(tram_records *r, const rec_schema *s, const rec_directives *d,
                                 const tram_read_options *opt, long header_line,
                                 tram_error *err);

/* Error on the first repeated station id. */
tram_status tram__check_unique_ids(tram_records *r, tram_error *err);

#endif
