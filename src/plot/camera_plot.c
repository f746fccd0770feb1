/*
 * camera_plot.c - pictures of a camera calibration drawn with cairo
 * (docs/camera.md): the reprojection residuals of a view as magnified
 * arrows over the image frame, and the lens distortion field of a camera
 * (Brown 1966 model of tram/camera.h) as arrows over banded shading of the
 * displacement's length.
 *
 * Pixel convention (tram/image.h): the centre of the top-left pixel is
 * (0, 0); pixel (u, v) lands at picture point ((u + 0.5) s, (v + 0.5) s +
 * top) for the scale s.  Colours: Okabe-Ito (Okabe and Ito 2008), inliers
 * blue #0072B2, outliers vermillion #D55E00, distortion arrows black.
 */
#include "tram/plot.h"
#include "plot/canvas_internal.h"

#include <cairo.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define TITLE_H 36.0
#define FOOT_H 40.0


/* Scale that brings the long side into 640 .. 1600 picture pixels. */
static double fit_scale(size_t w, size_t h)
{
    double m = (double)(w > h ? w : h);
    return m > 1600 ? 1600 / m : m < 640 ? 640 / m : 1.0;
}

/* The largest of 1, 2, 5 x 10^k not above x (x > 0). */
static double round_down(double x)
{
    double e = pow(10.0, floor(log10(x))), m = x / e;
    return (m >= 5 ? 5 : m >= 2 ? 2 : 1) * e;
}

/* An arrow from (x0, y0) to (x1, y1), head proportional to its length up
 * to 8 picture pixels. */
static void arrow(cairo_t *cr, double x0, double y0, double x1, double y1)
{
    double dx = x1 - x0, dy = y1 - y0, L = hypot(dx, dy);
    cairo_move_to(cr, x0, y0);
    cairo_line_to(cr, x1, y1);
    cairo_stroke(cr);
    if (L < 1e-9) return;
    double hl = fmin(8.0, 0.35 * L), ux = dx / L, uy = dy / L;
    cairo_move_to(cr, x1, y1);
    cairo_line_to(cr, x1 - hl * ux + 0.5 * hl * uy, y1 - hl * uy - 0.5 * hl * ux);
    cairo_line_to(cr, x1 - hl * ux - 0.5 * hl * uy, y1 - hl * uy + 0.5 * hl * ux);
    cairo_close_path(cr);
    cairo_fill(cr);
}

static void frame(cairo_t *cr, double s, size_t w, size_t h)
{
    cairo_set_source_rgb(cr, 0.3, 0.3, 0.3);
    cairo_set_line_width(cr, 1.0);
    cairo_rectangle(cr, 0.5, TITLE_H + 0.5, s * (double)w - 1, s * (double)h - 1);
    cairo_stroke(cr);
}

tram_status tram_plot_reprojection(const tram_plot_reprojection_data *d, tram_image **out,
                                   tram_error *err)
{
    *out = NULL;
    if (d->width == 0 || d->height == 0)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "reprojection picture: no image size");
    double s = fit_scale(d->width, d->height), emax = 0;
    for (size_t i = 0; i < d->n; i++)
        if (isfinite(d->residual_px[2 * i]) && isfinite(d->residual_px[2 * i + 1]))
            emax = fmax(emax, hypot(d->residual_px[2 * i], d->residual_px[2 * i + 1]));
    double diag = hypot((double)d->width, (double)d->height);
    double mag = emax > 0 ? round_down(0.1 * diag / emax) : 1.0;
    int pw = (int)ceil(s * (double)d->width), ph = (int)ceil(s * (double)d->height + TITLE_H + FOOT_H);
    tram__canvas p;
    tram_status st = tram__canvas_open(&p, pw, ph, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = p.cr;
    frame(cr, s, d->width, d->height);
    for (int pass = 0; pass < 2; pass++) /* outliers on top */
        for (size_t i = 0; i < d->n; i++) {
            int o = d->outlier && d->outlier[i];
            if (o != pass) continue;
            double x = (d->uv[2 * i] + 0.5) * s, y = (d->uv[2 * i + 1] + 0.5) * s + TITLE_H;
            if (o)
                cairo_set_source_rgb(cr, 0.835, 0.369, 0.0);
            else
                cairo_set_source_rgb(cr, 0.0, 0.447, 0.698);
            cairo_arc(cr, x, y, 1.8, 0, 2 * TRAM_PI);
            cairo_fill(cr);
            cairo_set_line_width(cr, 1.2);
            if (isfinite(d->residual_px[2 * i]) && isfinite(d->residual_px[2 * i + 1]))
                arrow(cr, x, y, x + mag * s * d->residual_px[2 * i], y + mag * s * d->residual_px[2 * i + 1]);
        }
    char line[256];
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, 8, 24, 15, d->title ? d->title : "reprojection residuals", 0);
    double ky = ph - 14.0, kx = 8.0;
    cairo_set_line_width(cr, 1.2);
    arrow(cr, kx, ky - 4, kx + mag * s, ky - 4);
    snprintf(line, sizeof line,
             "= 1 px of residual (arrows x%g, observed minus projected); %zu points%s", mag, d->n,
             d->outlier ? ", outliers in vermillion" : "");
    tram__canvas_text(cr, kx + mag * s + 8, ky, 12, line, 0);
    if (isfinite(d->rms_px)) {
        snprintf(line, sizeof line, "rms %.4f px, largest %.4f px", d->rms_px, emax);
        tram__canvas_text(cr, 8, ph - 30.0, 12, line, 0);
    }
    return tram__canvas_close(&p, out, err);
}

/* Displacement (distorted minus pinhole pixel) of the ray whose pinhole
 * pixel is (u, v). */
static void displacement(const tram_camera *c, double u, double v, double dd[2])
{
    double y = (v - c->cy) / c->fy, x = (u - c->cx - c->skew * y) / c->fx, xd[2];
    tram_camera_distort(c, (double[2]){x, y}, xd);
    dd[0] = c->fx * (xd[0] - x) + c->skew * (xd[1] - y);
    dd[1] = c->fy * (xd[1] - y);
}

tram_status tram_plot_distortion(const tram_camera *c, const char *title, tram_image **out,
                                 tram_error *err)
{
    *out = NULL;
    if (c->width == 0 || c->height == 0 || !(c->fx > 0) || !(c->fy > 0))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "distortion picture: camera without image size or focal length");
    double s = fit_scale(c->width, c->height);
    int pw = (int)ceil(s * (double)c->width), ph = (int)ceil(s * (double)c->height + TITLE_H + FOOT_H);
    /* the largest displacement over the image sets the band step and the magnification */
    double dmax = 0, dd[2];
    for (int j = 0; j <= 48; j++)
        for (int i = 0; i <= 64; i++) {
            displacement(c, (double)i / 64 * (double)(c->width - 1), (double)j / 48 * (double)(c->height - 1), dd);
            dmax = fmax(dmax, hypot(dd[0], dd[1]));
        }
    double step = dmax > 0 ? round_down(dmax / 6) : 1.0;
    tram__canvas p;
    tram_status st = tram__canvas_open(&p, pw, ph, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = p.cr;
    /* bands of the displacement length, alternately shaded: their edges are
     * the contours at multiples of step */
    const int cell = 4;
    for (int y = 0; y < (int)(s * (double)c->height); y += cell)
        for (int x = 0; x < pw; x += cell) {
            displacement(c, (x + 0.5 * cell) / s - 0.5, (y + 0.5 * cell) / s - 0.5, dd);
            double L = hypot(dd[0], dd[1]);
            int band = (int)floor(L / step);
            double g = 1.0 - 0.12 * fmin(L / (dmax > 0 ? dmax : 1), 1.0) - (band % 2 ? 0.06 : 0);
            cairo_set_source_rgb(cr, g, g, 1.0 - 0.5 * (1.0 - g));
            cairo_rectangle(cr, x, y + TITLE_H, cell, cell);
            cairo_fill(cr);
        }
    frame(cr, s, c->width, c->height);
    double mag = dmax > 0 ? fmax(1.0, round_down(0.06 * hypot((double)c->width, (double)c->height) / dmax)) : 1.0;
    if (dmax > 0.06 * hypot((double)c->width, (double)c->height)) mag = 1.0;
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 1.0);
    for (int j = 0; j <= 12; j++)
        for (int i = 0; i <= 16; i++) {
            double u = (double)i / 16 * (double)(c->width - 1), v = (double)j / 12 * (double)(c->height - 1);
            displacement(c, u, v, dd);
            double x = (u + 0.5) * s, y = (v + 0.5) * s + TITLE_H;
            arrow(cr, x, y, x + mag * s * dd[0], y + mag * s * dd[1]);
        }
    char line[300];
    snprintf(line, sizeof line, "%s", title ? title : "lens distortion");
    tram__canvas_text(cr, 8, 24, 15, line, 0);
    snprintf(line, sizeof line,
             "arrows: pinhole pixel to distorted pixel, x%g; bands every %g px; largest %.3g px "
             "(model %s)",
             mag, step, dmax, tram_distortion_name(c->distortion));
    tram__canvas_text(cr, 8, ph - 14.0, 12, line, 0);
    return tram__canvas_close(&p, out, err);
}
