/*
 * pdf_stream_internal.h - a cairo PDF surface that writes into memory
 * (pdf_stream.c), shared by the printable board (board_print.c) and the
 * calibration report (report/report_doc.c): open it, draw, close it, then
 * write the bytes with tram_file_write_atomic.
 */
#ifndef TRAM_PDF_STREAM_INTERNAL_H
#define TRAM_PDF_STREAM_INTERNAL_H

#include <cairo.h>

#include "core/membuf_internal.h"
#include "core/tram_internal.h"

typedef struct tram__pdf_stream {
    cairo_surface_t *surf;
    cairo_t *cr;
    tram__membuf buf;   /* the PDF bytes; the caller frees them (tram__membuf_free) */
} tram__pdf_stream;

/* A PDF of pw x ph points (the first page's size) into s->buf, with the
 * title, creator "tram VERSION" and, when date_utc is not NULL, the
 * creation date ("YYYY-MM-DDTHH:MM:SSZ") in its metadata.  TRAM_ENOMEM
 * (nothing left open, s->buf empty) when cairo cannot start. */
tram_status tram__pdf_stream_open(tram__pdf_stream *s, double pw, double ph, const char *title,
                                  const char *date_utc, tram_error *err);
/* Show the last page and finish the PDF; the bytes stay in s->buf.  On
 * failure s->buf is freed: TRAM_ENOMEM (memory ran out while writing) or
 * TRAM_EIO (cairo's status named), with path (may be NULL) in err. */
tram_status tram__pdf_stream_close(tram__pdf_stream *s, const char *path, tram_error *err);

#endif
