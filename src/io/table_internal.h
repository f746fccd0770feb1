/*
 * table_internal.h - a strict reader of the CSV tables of point files
 * (point pairs, observed points, model points): the same line, comment,
 * directive and field rules as record files (docs/records.md), with the
 * meaning of columns and directives left to the caller.
 */
#ifndef TRAM_TABLE_INTERNAL_H
#define TRAM_TABLE_INTERNAL_H

#include "core/tram_internal.h"

typedef struct tram__directive {
    char key[40], value[80];
    long line, col;
} tram__directive;

typedef struct tram__table {
    char source[256];
    size_t ncols, nrows;
    char **names;      /* ncols column names                          */
    long *name_col;    /* their columns                               */
    long header_line;
    char **cells;      /* nrows * ncols field texts (trimmed)         */
    long *cell_col;    /* nrows * ncols columns                       */
    long *row_line;    /* nrows line numbers                          */
    size_t ndir;
    tram__directive *dir;
    char *text;        /* owned storage behind the pointers above     */
} tram__table;

/* Parse CSV text.  Errors: no header, short or long rows, empty column
 * names, NUL bytes.  Caller frees with tram__table_free. */
tram_status tram__table_parse(const char *name, const char *data, size_t len, tram__table **out,
                              tram_error *err);
void tram__table_free(tram__table *t);
/* Index of a column, or -1. */
int tram__table_col(const tram__table *t, const char *name);
/* The number in row r, column c; fails with file:line:col. */
tram_status tram__table_number(const tram__table *t, size_t r, int c, double *v, tram_error *err);

#endif
