/*
 * report_sections_internal.h - what the calibration report shows
 * (report_sections.c lays it out; report.c gathers it).
 */
#ifndef TRAM_REPORT_SECTIONS_INTERNAL_H
#define TRAM_REPORT_SECTIONS_INTERNAL_H

#include "tram/report.h"
#include "report/report_doc_internal.h"

/* One input file listed with its hash. */
typedef struct tram__report_file {
    char role[48];        /* "calibration", "records (solved)", "camera", ...  */
    char path[256];
    int found;            /* read at report time                             */
    size_t bytes;
    char sha256[65];
    char note[160];       /* e.g. "FNV-1a matches the calibration"           */
} tram__report_file;

typedef struct tram__report_ctx {
    const tram_calibration *cal;
    const tram_report_options *opt;
    const char *X_name, *Z_name;   /* "T_flange_sensor", ...                  */
    size_t nfiles;
    tram__report_file files[8]; /* calibration, records, 4 pixel inputs, history */
    const tram_check_history *history; /* or NULL                              */
    tram_image *frames, *residuals, *history_img; /* pictures, or NULL        */
} tram__report_ctx;

/* Lay the whole report out on d (d open; the caller closes it). */
void tram__report_lay_out(tram__doc *d, const tram__report_ctx *c);

/* The status line: "consistent with the data; NOT verified on the cell",
 * or the NOT trustworthy form. */
const char *tram__report_status(const tram_calibration *cal);

#endif
