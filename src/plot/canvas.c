/*
 * canvas.c - the drawing surface of the plot layer's pictures (plot.c,
 * detect_plot.c, camera_plot.c): open a white cairo image surface, draw,
 * and copy the pixels out into a tram_image the caller owns.
 */
#include "plot/canvas_internal.h"

#include <string.h>

tram_status tram__canvas_open(tram__canvas *c, int w, int h, tram_error *err)
{
    c->s = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, w, h);
    c->cr = cairo_create(c->s);
    if (cairo_status(c->cr) != CAIRO_STATUS_SUCCESS) {
        cairo_destroy(c->cr);
        cairo_surface_destroy(c->s);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "cannot create a %dx%d picture", w, h);
    }
    cairo_set_source_rgb(c->cr, 1, 1, 1);
    cairo_paint(c->cr);
    cairo_select_font_face(c->cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
    return TRAM_OK;
}

tram_status tram__canvas_close(tram__canvas *c, tram_image **out, tram_error *err)
{
    cairo_status_t cs = cairo_status(c->cr);
    cairo_destroy(c->cr);
    cairo_surface_flush(c->s);
    int w = cairo_image_surface_get_width(c->s), h = cairo_image_surface_get_height(c->s);
    int stride = cairo_image_surface_get_stride(c->s);
    tram_image *img = cs == CAIRO_STATUS_SUCCESS ? tram__calloc(1, sizeof *img) : NULL;
    if (img) img->data = tram__malloc((size_t)h * (size_t)stride);
    if (!img || !img->data) {
        tram__free(img);
        cairo_surface_destroy(c->s);
        return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory drawing a picture");
    }
    memcpy(img->data, cairo_image_surface_get_data(c->s), (size_t)h * (size_t)stride);
    img->width = w;
    img->height = h;
    img->stride = stride;
    cairo_surface_destroy(c->s);
    *out = img;
    return TRAM_OK;
}

void tram__canvas_text(cairo_t *cr, double x, double y, double size, const char *s, double align)
{
    cairo_set_font_size(cr, size);
    if (align != 0.0) {
        cairo_text_extents_t e;
        cairo_text_extents(cr, s, &e);
        x -= align * e.x_advance;
    }
    cairo_move_to(cr, x, y);
    cairo_show_text(cr, s);
}
