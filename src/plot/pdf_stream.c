/*
 * pdf_stream.c - a cairo PDF surface (cairo_pdf_surface_create_for_stream)
 * writing into a growing buffer in memory (core/membuf.c), for documents
 * that are written atomically once complete.
 */
#include "plot/pdf_stream_internal.h"

#include <cairo-pdf.h>
#include <string.h>

static cairo_status_t write_bytes(void *closure, const unsigned char *data, unsigned int len)
{
    return tram__membuf_put(closure, data, len) == 0 ? CAIRO_STATUS_SUCCESS
                                                     : CAIRO_STATUS_WRITE_ERROR;
}

tram_status tram__pdf_stream_open(tram__pdf_stream *s, double pw, double ph, const char *title,
                                  const char *date_utc, tram_error *err)
{
    memset(s, 0, sizeof *s);
    s->surf = cairo_pdf_surface_create_for_stream(write_bytes, &s->buf, pw, ph);
    s->cr = cairo_create(s->surf);
    if (cairo_status(s->cr) != CAIRO_STATUS_SUCCESS) {
        cairo_destroy(s->cr);
        cairo_surface_destroy(s->surf);
        tram__membuf_free(&s->buf);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "cannot start a PDF document");
    }
    if (title) cairo_pdf_surface_set_metadata(s->surf, CAIRO_PDF_METADATA_TITLE, title);
    cairo_pdf_surface_set_metadata(s->surf, CAIRO_PDF_METADATA_CREATOR, "tram " TRAM_VERSION_STRING);
    if (date_utc) cairo_pdf_surface_set_metadata(s->surf, CAIRO_PDF_METADATA_CREATE_DATE, date_utc);
    return TRAM_OK;
}

tram_status tram__pdf_stream_close(tram__pdf_stream *s, const char *path, tram_error *err)
{
    cairo_show_page(s->cr);
    cairo_status_t cs = cairo_status(s->cr);
    cairo_destroy(s->cr);
    cairo_surface_finish(s->surf);
    if (cs == CAIRO_STATUS_SUCCESS) cs = cairo_surface_status(s->surf);
    cairo_surface_destroy(s->surf);
    s->cr = NULL;
    s->surf = NULL;
    if (cs == CAIRO_STATUS_SUCCESS && !s->buf.failed) return TRAM_OK;
    int oom = s->buf.failed;
    tram__membuf_free(&s->buf);
    return tram__fail(err, oom ? TRAM_ENOMEM : TRAM_EIO, path, 0, 0, "PDF drawing failed: %s",
                      oom ? "out of memory" : cairo_status_to_string(cs));
}
