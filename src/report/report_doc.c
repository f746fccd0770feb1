/*
 * report_doc.c - the page layout of the calibration report: a cairo PDF
 * surface written to memory (plot/pdf_stream.c), with a cursor that moves down the page.
 * Text is drawn with cairo's toy font interface (the sans-serif and
 * monospace faces fontconfig gives); paragraphs are wrapped greedily at
 * spaces by the measured advance of each word.  Every page carries a
 * footer with the page number of the total, which the caller learns by
 * laying the document out twice (report.c).
 */
#include "report/report_doc_internal.h"
#include "plot/canvas_internal.h"

#include <stdio.h>
#include <string.h>

static void footer(tram__doc *d)
{
    cairo_t *cr = d->cr;
    cairo_save(cr);
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_source_rgb(cr, 0.3, 0.3, 0.3);
    double y = d->ph - 0.55 * (d->ph - d->bottom);
    cairo_set_line_width(cr, 0.5);
    cairo_move_to(cr, d->left, y - 11);
    cairo_line_to(cr, d->right, y - 11);
    cairo_stroke(cr);
    tram__canvas_text(cr, d->left, y, 7.5, d->footer, 0);
    char pg[48];
    if (d->total > 0)
        snprintf(pg, sizeof pg, "page %d of %d", d->page, d->total);
    else
        snprintf(pg, sizeof pg, "page %d", d->page);
    tram__canvas_text(cr, d->right, y, 7.5, pg, 1);
    cairo_restore(cr);
}

tram_status tram__doc_open(tram__doc *d, double pw, double ph, const char *title,
                           const char *date_utc, tram_error *err)
{
    int total = d->total;
    char foot[sizeof d->footer];
    memcpy(foot, d->footer, sizeof foot);
    memset(d, 0, sizeof *d);
    d->total = total;
    memcpy(d->footer, foot, sizeof foot);
    d->pw = pw;
    d->ph = ph;
    d->left = 56.7; /* 20 mm */
    d->right = pw - 56.7;
    d->top = 56.7;
    d->bottom = ph - 62;
    tram_status st = tram__pdf_stream_open(&d->pdf, pw, ph, title, date_utc, err);
    if (st != TRAM_OK) return st;
    d->cr = d->pdf.cr;
    d->page = 1;
    d->y = d->top;
    footer(d);
    return TRAM_OK;
}

tram_status tram__doc_close(tram__doc *d, tram_error *err)
{
    d->cr = NULL;
    return tram__pdf_stream_close(&d->pdf, NULL, err);
}

void tram__doc_new_page(tram__doc *d)
{
    cairo_show_page(d->cr);
    d->page++;
    d->y = d->top;
    footer(d);
}

void tram__doc_need(tram__doc *d, double h)
{
    if (d->y + h > d->bottom && d->y > d->top) tram__doc_new_page(d);
}

void tram__doc_space(tram__doc *d, double h) { d->y += h; }

static void font(cairo_t *cr, const char *face, int bold, double size)
{
    cairo_select_font_face(cr, face, CAIRO_FONT_SLANT_NORMAL,
                           bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr, size);
}

void tram__doc_heading(tram__doc *d, int level, const char *text, double keep)
{
    double size = level == 0 ? 17 : level == 1 ? 12.5 : 10.5;
    tram__doc_space(d, level == 0 ? 0 : level == 1 ? 10 : 5);
    tram__doc_need(d, size * 1.6 + keep);
    d->y += size;
    cairo_set_source_rgb(d->cr, 0, 0, 0);
    font(d->cr, "sans-serif", 1, size);
    cairo_move_to(d->cr, d->left, d->y);
    cairo_show_text(d->cr, text);
    if (level == 1) {
        cairo_set_line_width(d->cr, 0.6);
        cairo_move_to(d->cr, d->left, d->y + 3);
        cairo_line_to(d->cr, d->right, d->y + 3);
        cairo_stroke(d->cr);
    }
    d->y += size * 0.6;
}

/* Lay out text in lines of at most width points ('\n' ends a line); draw
 * them at x when draw != 0, each line moving the cursor.  A word longer
 * than the line stands on a line of its own.  Returns the number of lines. */
static int wrap(tram__doc *d, double size, double x, double width, int draw, const char *text)
{
    cairo_t *cr = d->cr;
    char line[1024] = "";
    size_t ln = 0;
    int lines = 0;
    const char *p = text;
    for (;;) {
        while (*p == ' ') p++;
        const char *e = p;
        while (*e && *e != ' ' && *e != '\n') e++;
        if (e > p) {
            char cand[1100];
            snprintf(cand, sizeof cand, "%s%s%.*s", line, ln ? " " : "", (int)(e - p), p);
            cairo_text_extents_t ex;
            cairo_text_extents(cr, cand, &ex);
            int emit = ln && ex.x_advance > width;
            if (!emit) {
                ln = strlen(cand) < sizeof line ? strlen(cand) : sizeof line - 1;
                memcpy(line, cand, ln);
                line[ln] = '\0';
                p = e;
            }
            if (!emit) continue;
        } else if (*p == '\0' && ln == 0) {
            break;
        }
        /* the line is full, or ends here */
        lines++;
        if (draw) {
            tram__doc_need(d, size * 1.35);
            d->y += size * 1.35;
            cairo_move_to(cr, x, d->y);
            cairo_show_text(cr, line);
        }
        ln = 0;
        line[0] = '\0';
        if (e == p && *p == '\n') p++;
        else if (e == p && *p == '\0') break;
    }
    return lines;
}

double tram__doc_para(tram__doc *d, double size, double indent, int bold, const char *text)
{
    cairo_set_source_rgb(d->cr, 0, 0, 0);
    font(d->cr, "sans-serif", bold, size);
    double y0 = d->y;
    int p0 = d->page;
    wrap(d, size, d->left + indent, d->right - d->left - indent, 1, text);
    d->y += size * 0.35;
    return d->page == p0 ? d->y - y0 : d->y - d->top;
}

void tram__doc_mono(tram__doc *d, double size, const char *text)
{
    tram__doc_need(d, size * 1.3);
    d->y += size * 1.3;
    cairo_set_source_rgb(d->cr, 0, 0, 0);
    font(d->cr, "monospace", 0, size);
    cairo_move_to(d->cr, d->left, d->y);
    cairo_show_text(d->cr, text);
}

void tram__doc_box(tram__doc *d, double size, const char *title, const char *text)
{
    font(d->cr, "sans-serif", 0, size);
    double inner = d->right - d->left - 16;
    int n = wrap(d, size, 0, inner, 0, text);
    double h = (n + 1) * size * 1.35 + size * 0.8 + 14;
    tram__doc_need(d, h + 6);
    double y0 = d->y + 3;
    cairo_set_source_rgb(d->cr, 1.0, 0.95, 0.85);
    cairo_rectangle(d->cr, d->left, y0, d->right - d->left, h);
    cairo_fill_preserve(d->cr);
    cairo_set_source_rgb(d->cr, 0.835, 0.369, 0.0); /* vermillion #D55E00 */
    cairo_set_line_width(d->cr, 1.5);
    cairo_stroke(d->cr);
    d->y = y0 + 4;
    cairo_set_source_rgb(d->cr, 0, 0, 0);
    font(d->cr, "sans-serif", 1, size * 1.1);
    d->y += size * 1.35;
    cairo_move_to(d->cr, d->left + 8, d->y);
    cairo_show_text(d->cr, title);
    font(d->cr, "sans-serif", 0, size);
    wrap(d, size, d->left + 8, inner, 1, text);
    d->y = y0 + h + 6;
}

void tram__doc_image(tram__doc *d, const tram_image *img, double width_pt)
{
    double s = width_pt / img->width, h = img->height * s;
    tram__doc_need(d, h + 6);
    cairo_surface_t *is = cairo_image_surface_create_for_data(img->data, CAIRO_FORMAT_ARGB32,
                                                              img->width, img->height, img->stride);
    cairo_save(d->cr);
    cairo_translate(d->cr, d->left + (d->right - d->left - width_pt) / 2, d->y + 3);
    cairo_scale(d->cr, s, s);
    cairo_set_source_surface(d->cr, is, 0, 0);
    cairo_paint(d->cr);
    cairo_restore(d->cr);
    cairo_surface_destroy(is);
    d->y += h + 6;
}

void tram__doc_fill_line(tram__doc *d, double size, const char *label)
{
    tram__doc_need(d, size * 2.4);
    d->y += size * 2.4;
    cairo_set_source_rgb(d->cr, 0, 0, 0);
    font(d->cr, "sans-serif", 0, size);
    cairo_move_to(d->cr, d->left, d->y);
    cairo_show_text(d->cr, label);
    cairo_text_extents_t ex;
    cairo_text_extents(d->cr, label, &ex);
    cairo_set_line_width(d->cr, 0.6);
    cairo_move_to(d->cr, d->left + ex.x_advance + 6, d->y + 2);
    cairo_line_to(d->cr, d->right, d->y + 2);
    cairo_stroke(d->cr);
}
