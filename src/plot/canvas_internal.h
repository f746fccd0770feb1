/*
 * canvas_internal.h - the drawing surface every picture of the plot layer
 * starts and ends with (canvas.c): a white ARGB32 cairo surface with the
 * sans-serif face selected, copied into a tram_image when done.
 */
#ifndef TRAM_CANVAS_INTERNAL_H
#define TRAM_CANVAS_INTERNAL_H

#include <cairo.h>

#include "tram/plot.h"
#include "core/tram_internal.h"

typedef struct tram__canvas {
    cairo_surface_t *s;
    cairo_t *cr;
} tram__canvas;

/* A w x h white canvas; TRAM_ENOMEM (nothing left open) when cairo cannot
 * make it. */
tram_status tram__canvas_open(tram__canvas *c, int w, int h, tram_error *err);
/* Copy the canvas into a new tram_image *out and release the canvas, also
 * on failure: TRAM_ENOMEM when cairo failed while drawing or the copy
 * cannot be allocated. */
tram_status tram__canvas_close(tram__canvas *c, tram_image **out, tram_error *err);
/* Text of `size` points whose baseline starts at (x, y); align 0 puts its
 * left end there, 0.5 its middle, 1 its right end. */
void tram__canvas_text(cairo_t *cr, double x, double y, double size, const char *s, double align);

#endif
