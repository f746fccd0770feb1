/*
 * report_doc_internal.h - the page layout of the calibration report
 * (report_doc.c): text that flows down a PDF page and onto the next,
 * wrapped paragraphs, monospaced table lines, pictures, boxes, and a
 * footer on every page.
 */
#ifndef TRAM_REPORT_DOC_INTERNAL_H
#define TRAM_REPORT_DOC_INTERNAL_H

#include <cairo.h>

#include "tram/plot.h"
#include "plot/pdf_stream_internal.h"
#include "core/tram_internal.h"

typedef struct tram__doc {
    tram__pdf_stream pdf;  /* the surface and the PDF bytes (pdf.buf)      */
    cairo_t *cr;           /* pdf.cr                                       */
    double pw, ph;         /* page size (pt)                               */
    double left, right;    /* text column (pt from the left edge)          */
    double top, bottom;    /* text area (pt from the top edge)             */
    double y;              /* baseline position of the next line           */
    int page;              /* current page, 1-based                        */
    int total;             /* pages in all (0 while counting)              */
    char footer[300];      /* left part of every page's footer             */
} tram__doc;

/* A document of pages pw x ph points; the PDF goes to memory.  title is
 * the PDF's title, date_utc ("YYYY-MM-DDTHH:MM:SSZ") its creation date.
 * TRAM_ENOMEM when cairo cannot start. */
tram_status tram__doc_open(tram__doc *d, double pw, double ph, const char *title,
                           const char *date_utc, tram_error *err);
/* Finish the last page and the PDF; the bytes stay in d->pdf.buf, which
 * the caller frees with tram__membuf_free.  TRAM_ENOMEM / TRAM_EIO. */
tram_status tram__doc_close(tram__doc *d, tram_error *err);

/* Start a new page when less than h points are left on this one. */
void tram__doc_need(tram__doc *d, double h);
void tram__doc_new_page(tram__doc *d);
void tram__doc_space(tram__doc *d, double h);
/* A section heading (level 0: the title, 1: a section, 2: a subsection),
 * kept with at least `keep` points of what follows. */
void tram__doc_heading(tram__doc *d, int level, const char *text, double keep);
/* A paragraph in sans-serif of `size` points, wrapped to the column,
 * indented by `indent` points; bold != 0 for bold.  Returns its height. */
double tram__doc_para(tram__doc *d, double size, double indent, int bold, const char *text);
/* One monospaced line (not wrapped). */
void tram__doc_mono(tram__doc *d, double size, const char *text);
/* A paragraph inside a framed box (the safety block). */
void tram__doc_box(tram__doc *d, double size, const char *title, const char *text);
/* A picture scaled to width_pt (its aspect kept), on this page or the next. */
void tram__doc_image(tram__doc *d, const tram_image *img, double width_pt);
/* A line to fill in by hand: label, then a rule to the column's end. */
void tram__doc_fill_line(tram__doc *d, double size, const char *label);

#endif
