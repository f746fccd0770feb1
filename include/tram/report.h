/*
 * tram/report.h - the calibration record: a PDF that an integrator can
 * file or hand over with a calibration (docs/report.md).  It reads a
 * calibration file (tram solve -o) and lays out, on A4 or US Letter pages:
 * the setup and what each transform means in words; each transform as a
 * matrix, translation, unit quaternion, rotation vector and Euler angles
 * in the convention the caller names, with units; the 1-sigma and 95%
 * intervals; the station table with residuals and outliers; the frames and
 * residuals pictures (and a check history when given); the observability
 * figures and diagnostics; the input files with their SHA-256 hashes
 * (FIPS 180-4); tram's version and the date; the safety block; and lines
 * for "computed by" and "verified on the cell by (name, date)".
 *
 * The report never says or implies that the result is verified: tram
 * cannot know.  At best it is "consistent with the data; NOT verified on
 * the cell"; a calibration the solver did not find trustworthy is shown as
 * NOT trustworthy on every page.
 */
#ifndef TRAM_REPORT_H
#define TRAM_REPORT_H

#include "tram/check.h"
#include "tram/plot.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct tram_report_options {
    tram_plot_page page;         /* "a4" or "letter" (tram_plot_page_parse); nothing else */
    tram_euler_seq euler;        /* the Euler convention of the angles shown: required   */
    const char *history_path;    /* a check history file (tram check --history) to draw
                                    and list, or NULL                                    */
    const char *date_utc;        /* the report's date, "YYYY-MM-DDTHH:MM:SSZ": required
                                    (the library reads no clock)                          */
    const char *computed_by;     /* a name for the "computed by" line, or NULL: a blank
                                    line to fill in by hand                              */
} tram_report_options;

/* Read the calibration file at calibration_path, lay out the report and
 * write it to pdf_path atomically (tram_file_write_atomic; an existing
 * file is refused unless overwrite).  The record file named in the
 * calibration (input.source) is read, when it can be, only for its hash,
 * and is marked changed when its FNV-1a checksum no longer matches the
 * calibration's.  *pages (may be NULL) receives the page count.  An unset
 * Euler convention, a page other than a4 or letter, or a missing date is
 * TRAM_EINPUT (bad option value); so is a damaged calibration or history
 * file, naming file:line:column. */
TRAM_API tram_status tram_report_write_pdf(const char *calibration_path,
                                           const tram_report_options *opt, const char *pdf_path,
                                           int overwrite, int *pages, tram_error *err);

/* The report's date: SOURCE_DATE_EPOCH (whole seconds since 1970, UTC; the
 * reproducible-builds convention) when the environment sets it, else the
 * clock, as "YYYY-MM-DDTHH:MM:SSZ" in out (at least 21 bytes; 32 is safe).
 * The one place the library reads the clock and the environment, for the
 * command and the Python package alike.  A SOURCE_DATE_EPOCH that is not
 * whole seconds from 0 to 9999-12-31 is TRAM_EINPUT. */
TRAM_API tram_status tram_report_date_now(char *out, size_t cap, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
