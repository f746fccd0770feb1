/*
 * board_print.c - the printable chessboard: one page drawn with cairo, as a
 * PDF at true scale or as a grey PNG at a given resolution (docs/images.md).
 *
 * Scale: cairo's PDF surface measures in PostScript points, 1 pt = 1/72 in
 * = 25.4/72 mm exactly (the inch is 25.4 mm by the international yard and
 * pound agreement of 1959), so a square of s mm is drawn s * 72 / 25.4 pt
 * wide.  A4 is 210 x 297 mm (ISO 216), US letter 8.5 x 11 in.
 *
 * Page layout, top to bottom: the printer margin (PRINTER_MM, where many
 * printers cannot print), the pattern centred in the space left with a
 * white quiet zone of at least one square on every side (the outer squares
 * need white around them to show their edges), then the label block:
 * the board's numbers, the printing instruction and a 100 mm scale bar.
 * The pattern follows the board convention of tram/image.h seen from the
 * printed side: corner 0 is the top-left inner corner, x runs right and y
 * down the page (z = x cross y into the paper), and the top-left square,
 * which touches corner 0 on its -x,-y side, is black.
 */
#include "tram/plot.h"
#include "tram/fileio.h"
#include "core/tram_internal.h"
#include "plot/pdf_stream_internal.h"

#include <cairo.h>
#include <math.h>
#include <png.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define PT_PER_MM (72.0 / 25.4)
#define PRINTER_MM 6.0  /* margin kept free at the paper's edge (common practice) */
#define LABEL_MM 24.0   /* height of the label block                          */
#define LABEL_W_MM 110.0 /* the scale bar and its labels                       */
#define BAR_MM 100.0

tram_status tram_plot_page_parse(const char *s, tram_plot_page *out, tram_error *err)
{
    memset(out, 0, sizeof *out);
    if (!s) s = "";
    if (strcmp(s, "a4") == 0 || strcmp(s, "A4") == 0) {
        out->width_mm = 210.0;
        out->height_mm = 297.0;
        out->named = 1;
    } else if (strcmp(s, "letter") == 0) {
        out->width_mm = 8.5 * 25.4;
        out->height_mm = 11.0 * 25.4;
        out->named = 1;
    } else {
        double w, h;
        char tail;
        if (sscanf(s, "%lfx%lf%c", &w, &h, &tail) != 2 || !(w >= 50 && w <= 2000) ||
            !(h >= 50 && h <= 2000))
            return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                              "page '%s': expected a4, letter or WxH in millimetres (50 to 2000 "
                              "each, e.g. 420x297)",
                              s);
        out->width_mm = w;
        out->height_mm = h;
    }
    snprintf(out->name, sizeof out->name, "%s", s);
    return TRAM_OK;
}

/* Where everything goes, in pt from the page's top-left corner. */
typedef struct layout {
    double pw, ph;       /* page                                 */
    double sq;           /* square side                          */
    double x0, y0;       /* top-left of the pattern (outer edge) */
    double label_y;      /* top of the label block               */
    double square_mm;
} layout;

static void needed_mm(const tram_board *b, double sq_mm, double *w, double *h)
{
    double pw = (b->cols + 1) * sq_mm, ph = (b->rows + 1) * sq_mm;
    *w = fmax(pw + 2 * sq_mm, LABEL_W_MM) + 2 * PRINTER_MM;
    *h = ph + 2 * sq_mm + LABEL_MM + 2 * PRINTER_MM;
}

static tram_status make_layout(const tram_board *b, const tram_plot_page *page, layout *L,
                               tram_error *err)
{
    double sq_mm = b->square * tram_unit_length_factor(b->unit, TRAM_LENGTH_MM);
    double nw, nh, pw = page->width_mm, ph = page->height_mm;
    needed_mm(b, sq_mm, &nw, &nh);
    int fits = nw <= pw && nh <= ph;
    if (!fits && page->named && nw <= ph && nh <= pw) { /* landscape */
        double t = pw;
        pw = ph;
        ph = t;
        fits = 1;
    }
    if (!fits)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "a %dx%d board of %g %s squares does not fit on %s: it needs %.1f x "
                          "%.1f mm (pattern %.1f x %.1f mm, one square of white around it, %.0f mm "
                          "for the labels and %.0f mm printer margins), the page is %.1f x %.1f "
                          "mm%s; choose smaller squares or a larger page (--page WxH in mm)",
                          b->cols, b->rows, b->square, tram_unit_length_name(b->unit), page->name,
                          nw, nh, (b->cols + 1) * sq_mm, (b->rows + 1) * sq_mm, LABEL_MM,
                          PRINTER_MM, pw, ph, page->named ? " (landscape tried too)" : "");
    L->square_mm = sq_mm;
    L->pw = pw * PT_PER_MM;
    L->ph = ph * PT_PER_MM;
    /* points straight from metres (1 pt = 0.0254 m / 72), so an inch is
     * exactly 72 pt and no mm round trip rounds */
    L->sq = b->square * tram_unit_length_in_m(b->unit) / 0.0254 * 72.0;
    double patw = (b->cols + 1) * L->sq, path = (b->rows + 1) * L->sq;
    L->label_y = L->ph - (PRINTER_MM + LABEL_MM) * PT_PER_MM;
    L->x0 = (L->pw - patw) / 2;
    L->y0 = (PRINTER_MM * PT_PER_MM + L->label_y - path) / 2;
    return TRAM_OK;
}

tram_status tram_plot_board_check_page(const tram_board *b, const tram_plot_page *page,
                                       tram_error *err)
{
    tram_board chk;
    if (tram_board_init(&chk, b->cols, b->rows, b->square, b->unit, err) != TRAM_OK) return err->status;
    layout L;
    return make_layout(b, page, &L, err);
}

static void label(cairo_t *cr, double x, double y, double size, const char *s, double align)
{
    cairo_text_extents_t e;
    cairo_set_font_size(cr, size);
    cairo_text_extents(cr, s, &e);
    cairo_move_to(cr, x - align * e.x_advance, y);
    cairo_show_text(cr, s);
}

/* The 100 mm bar: a line with a tick every millimetre, longer every 5 and
 * 10 mm, numbered every 10 mm. */
static void scale_bar(cairo_t *cr, double x, double y)
{
    double mm = PT_PER_MM;
    cairo_set_line_width(cr, 0.3);
    cairo_move_to(cr, x, y);
    cairo_line_to(cr, x + BAR_MM * mm, y);
    cairo_stroke(cr);
    for (int k = 0; k <= (int)BAR_MM; k++) {
        double len = k % 10 == 0 ? 3.0 : k % 5 == 0 ? 2.0 : 1.2;
        cairo_move_to(cr, x + k * mm, y);
        cairo_line_to(cr, x + k * mm, y - len * mm);
        cairo_stroke(cr);
        if (k % 10 == 0) {
            char t[16];
            snprintf(t, sizeof t, "%d", k);
            label(cr, x + k * mm, y + 3.0 * mm, 6.0, t, 0.5);
        }
    }
    label(cr, x + BAR_MM * mm + 2 * mm, y + 0.5 * mm, 6.5, "mm", 0.0);
}

static void draw_page(cairo_t *cr, const tram_board *b, const layout *L)
{
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_paint(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    /* square (i, j), i = 0 .. cols, j = 0 .. rows, spans corners i-1 .. i:
     * black when i + j is even, so square (0, 0) at corner 0's -x,-y side */
    for (int j = 0; j <= b->rows; j++)
        for (int i = 0; i <= b->cols; i++)
            if ((i + j) % 2 == 0) cairo_rectangle(cr, L->x0 + i * L->sq, L->y0 + j * L->sq, L->sq, L->sq);
    cairo_fill(cr);

    double mm = PT_PER_MM, x = L->x0 + (b->cols + 1) * L->sq / 2 - BAR_MM * mm / 2;
    if (x < PRINTER_MM * mm) x = PRINTER_MM * mm;
    double y = L->label_y + 4 * mm;
    char line[320];
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
    char in_mm[40] = "";
    if (b->unit != TRAM_LENGTH_MM) snprintf(in_mm, sizeof in_mm, " = %.3f mm", L->square_mm);
    snprintf(line, sizeof line,
             "tram chessboard: %d x %d inner corners (%d x %d squares), square %g %s%s; "
             "pattern %.1f x %.1f mm",
             b->cols, b->rows, b->cols + 1, b->rows + 1, b->square, tram_unit_length_name(b->unit),
             in_mm, (b->cols + 1) * L->square_mm, (b->rows + 1) * L->square_mm);
    label(cr, x, y, 7.0, line, 0.0);
    y += 3.5 * mm;
    label(cr, x, y, 7.0,
          "corner 0: the top-left inner corner; x to the right, y down; point id = row * cols + col",
          0.0);
    y += 3.8 * mm;
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_BOLD);
    label(cr, x, y, 7.5,
          "Print at 100% / actual size, no fit to page. Check: the bar below must measure 100 mm.",
          0.0);
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
    scale_bar(cr, x, y + 8 * mm);
}

tram_status tram_plot_board_write_pdf(const tram_board *b, const tram_plot_page *page,
                                      const char *path, int overwrite, tram_error *err)
{
    tram_board chk;
    if (tram_board_init(&chk, b->cols, b->rows, b->square, b->unit, err) != TRAM_OK) return err->status;
    layout L;
    tram_status st = make_layout(b, page, &L, err);
    if (st != TRAM_OK) return st;
    char title[128];
    snprintf(title, sizeof title, "tram chessboard %dx%d, %g %s squares", b->cols, b->rows,
             b->square, tram_unit_length_name(b->unit));
    tram__pdf_stream pdf;
    st = tram__pdf_stream_open(&pdf, L.pw, L.ph, title, NULL, err);
    if (st != TRAM_OK) return st;
    draw_page(pdf.cr, b, &L);
    st = tram__pdf_stream_close(&pdf, path, err);
    if (st == TRAM_OK)
        st = tram_file_write_atomic(path, (const char *)pdf.buf.p, pdf.buf.n, overwrite, err);
    tram__membuf_free(&pdf.buf);
    return st;
}

/* ---- PNG -------------------------------------------------------------- */

typedef struct png_out {
    tram__membuf s;
    char msg[160];
} png_out;

static void png_w(png_structp png, png_bytep data, size_t n)
{
    png_out *o = png_get_io_ptr(png);
    if (tram__membuf_put(&o->s, data, n) != 0) png_error(png, "out of memory");
}
static void png_fl(png_structp png) { (void)png; }
static void png_err(png_structp png, png_const_charp msg)
{
    png_out *o = png_get_error_ptr(png);
    snprintf(o->msg, sizeof o->msg, "%s", msg);
    png_longjmp(png, 1);
}
static void png_warn(png_structp png, png_const_charp msg)
{
    (void)png;
    (void)msg;
}

/* Encode the RGB24 surface as 8-bit grey with a pHYs chunk into o->s. */
static int encode_grey(png_out *o, cairo_surface_t *surf, double dpi)
{
    int w = cairo_image_surface_get_width(surf), h = cairo_image_surface_get_height(surf);
    int stride = cairo_image_surface_get_stride(surf);
    const unsigned char *data = cairo_image_surface_get_data(surf);
    unsigned char *row = tram__malloc((size_t)w);
    if (!row) return -1;
    png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, o, png_err, png_warn);
    png_infop info = png ? png_create_info_struct(png) : NULL;
    if (!png || !info) {
        png_destroy_write_struct(png ? &png : NULL, NULL);
        tram__free(row);
        return -1;
    }
    if (setjmp(png_jmpbuf(png))) {
        png_destroy_write_struct(&png, &info);
        tram__free(row);
        return -1;
    }
    png_set_write_fn(png, o, png_w, png_fl);
    png_set_IHDR(png, info, (png_uint_32)w, (png_uint_32)h, 8, PNG_COLOR_TYPE_GRAY,
                 PNG_INTERLACE_NONE, PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
    png_uint_32 ppm = (png_uint_32)lround(dpi / 0.0254);
    png_set_pHYs(png, info, ppm, ppm, PNG_RESOLUTION_METER);
    png_write_info(png, info);
    for (int y = 0; y < h; y++) {
        const unsigned char *p = data + (size_t)y * (size_t)stride;
        for (int x = 0; x < w; x++) {
            unsigned int v;
            memcpy(&v, p + 4 * (size_t)x, sizeof v); /* native-endian xRGB */
            double g = 0.299 * ((v >> 16) & 255) + 0.587 * ((v >> 8) & 255) + 0.114 * (v & 255);
            row[x] = (unsigned char)lround(g);
        }
        png_write_row(png, row);
    }
    png_write_end(png, info);
    png_destroy_write_struct(&png, &info);
    tram__free(row);
    return 0;
}

tram_status tram_plot_board_write_png(const tram_board *b, const tram_plot_page *page, double dpi,
                                      const char *path, int overwrite, tram_error *err)
{
    tram_board chk;
    if (tram_board_init(&chk, b->cols, b->rows, b->square, b->unit, err) != TRAM_OK) return err->status;
    if (!(dpi >= 50 && dpi <= 2400))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "resolution %g dpi: expected 50 to 2400", dpi);
    layout L;
    tram_status st = make_layout(b, page, &L, err);
    if (st != TRAM_OK) return st;
    double wpx = ceil(L.pw / 72.0 * dpi - 1e-9), hpx = ceil(L.ph / 72.0 * dpi - 1e-9);
    if (wpx * hpx > (double)TRAM_IMAGE_MAX_PIXELS || wpx > 32767 || hpx > 32767)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "at %g dpi the page is %.0f x %.0f pixels, more than this picture's "
                          "limit (%llu pixels, 32767 a side); lower --dpi",
                          dpi, wpx, hpx, TRAM_IMAGE_MAX_PIXELS);
    cairo_surface_t *surf = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)wpx, (int)hpx);
    cairo_t *cr = cairo_create(surf);
    cairo_scale(cr, dpi / 72.0, dpi / 72.0);
    draw_page(cr, b, &L);
    cairo_status_t cs = cairo_status(cr);
    cairo_destroy(cr);
    cairo_surface_flush(surf);
    png_out o;
    memset(&o, 0, sizeof o);
    if (cs != CAIRO_STATUS_SUCCESS)
        st = tram__fail(err, TRAM_ENOMEM, path, 0, 0, "drawing failed: %s", cairo_status_to_string(cs));
    else if (encode_grey(&o, surf, dpi) != 0)
        st = tram__fail(err, TRAM_ENOMEM, path, 0, 0, "PNG encoding failed: %s",
                        o.msg[0] ? o.msg : "out of memory");
    else
        st = tram_file_write_atomic(path, (const char *)o.s.p, o.s.n, overwrite, err);
    cairo_surface_destroy(surf);
    tram__membuf_free(&o.s);
    return st;
}
