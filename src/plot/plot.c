/*
 * plot.c - pictures drawn with cairo: frames in three orthographic views
 * and one oblique view, residual bars and scatters, check histories and
 * point residuals (docs/plot.md).
 *
 * Projections (base frame, lengths in the data's unit): top view (x right,
 * y up), front view (x right, z up), side view (y right, z up), oblique
 * view (the isometric direction (1, 1, 1): screen x = (x - y) cos 30,
 * screen y = z - (x + y) sin 30).  All four share one scale so a length
 * reads the same in every view; the scale bar is a round number.
 */
#include "tram/plot.h"
#include "tram/fileio.h"
#include "plot/canvas_internal.h"

#include <cairo.h>
#include <fontconfig/fontconfig.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Okabe-Ito colours */
#define C_BLUE 0.0, 0.447, 0.698
#define C_VERMILLION 0.835, 0.369, 0.0
#define C_ORANGE 0.902, 0.624, 0.0
#define C_SKY 0.337, 0.706, 0.914
#define C_GREY 0.6, 0.6, 0.6

void tram_image_destroy(tram_image *img)
{
    if (!img) return;
    tram__free(img->data);
    tram__free(img);
}

unsigned int tram_image_pixel(const tram_image *img, int x, int y)
{
    if (!img || x < 0 || y < 0 || x >= img->width || y >= img->height) return 0;
    const unsigned char *p = img->data + (size_t)y * (size_t)img->stride + 4 * (size_t)x;
    unsigned int v;
    memcpy(&v, p, sizeof v); /* native-endian ARGB32 */
    return v;
}

void tram_plot_shutdown(void)
{
    cairo_debug_reset_static_data();
    FcFini();
}

typedef tram__canvas canvas;

/* A picture of w x h within the sizes the command accepts. */
static tram_status canvas_open(canvas *c, int w, int h, tram_error *err)
{
    if (w < 200 || h < 150 || w > 10000 || h > 10000)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "image size %dx%d: expected 200x150 to 10000x10000", w, h);
    return tram__canvas_open(c, w, h, err);
}

typedef struct pngbuf {
    unsigned char *p;
    size_t n, cap;
} pngbuf;

static cairo_status_t png_sink(void *closure, const unsigned char *data, unsigned int len)
{
    pngbuf *b = closure;
    if (b->n + len > b->cap) {
        size_t nc = (b->cap ? 2 * b->cap : 65536) + len;
        unsigned char *q = tram__realloc(b->p, nc);
        if (!q) return CAIRO_STATUS_NO_MEMORY;
        b->p = q;
        b->cap = nc;
    }
    memcpy(b->p + b->n, data, len);
    b->n += len;
    return CAIRO_STATUS_SUCCESS;
}

tram_status tram_image_write_png(const tram_image *img, const char *path, int overwrite,
                                 tram_error *err)
{
    cairo_surface_t *s = cairo_image_surface_create_for_data(img->data, CAIRO_FORMAT_ARGB32,
                                                             img->width, img->height, img->stride);
    pngbuf b = {NULL, 0, 0};
    cairo_status_t cs = cairo_surface_write_to_png_stream(s, png_sink, &b);
    cairo_surface_destroy(s);
    if (cs != CAIRO_STATUS_SUCCESS) {
        tram__free(b.p);
        return tram__fail(err, TRAM_EIO, path, 0, 0, "PNG encoding failed: %s", cairo_status_to_string(cs));
    }
    tram_status st = tram_file_write_atomic(path, (const char *)b.p, b.n, overwrite, err);
    tram__free(b.p);
    return st;
}


static void title(cairo_t *cr, int w, const char *t)
{
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, w / 2.0, 30, 22, t ? t : "", 0.5);
}

/* A round number near x (1, 2 or 5 times a power of ten). */
static double nice(double x)
{
    if (!(x > 0)) return 1;
    double p = pow(10, floor(log10(x))), f = x / p;
    return (f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10) * p;
}

/* ---- frames -------------------------------------------------------- */

typedef struct fview {
    double cx, cy, scale;  /* screen centre of the panel and pixels per length */
    double ox, oy;         /* data centre in view coordinates                  */
} fview;

static void view_coords(int view, const double p[3], double *u, double *v)
{
    switch (view) {
    case TRAM_VIEW_TOP: *u = p[0]; *v = p[1]; break;
    case TRAM_VIEW_FRONT: *u = p[0]; *v = p[2]; break;
    case TRAM_VIEW_SIDE: *u = p[1]; *v = p[2]; break;
    default:
        *u = (p[0] - p[1]) * cos(TRAM_PI / 6);
        *v = p[2] - (p[0] + p[1]) * sin(TRAM_PI / 6);
    }
}

/* Every point the picture shows, handed to visit one at a time (no
 * buffer: drawing never fails for want of memory). */
typedef void (*point_visit)(void *ctx, const double p[3]);

static void scene_points(const tram_plot_frames_data *d, point_visit visit, void *ctx)
{
    const double origin[3] = {0, 0, 0};
    visit(ctx, origin);
    for (size_t i = 0; i < d->n; i++) {
        double p[3];
        for (int a = 0; a < 3; a++) p[a] = d->T_base_flange[i].m[a][3];
        visit(ctx, p);
        if (d->has_solution) {
            tram_se3 A;
            if (d->setup == TRAM_SETUP_EYE_IN_HAND) tram_se3_compose(&d->T_base_flange[i], &d->X, &A);
            else tram_se3_compose(&d->T_base_flange[i], &d->Z, &A);
            for (int a = 0; a < 3; a++) p[a] = A.m[a][3];
            visit(ctx, p);
        }
    }
    if (d->has_solution) {
        const tram_se3 *F = d->setup == TRAM_SETUP_EYE_IN_HAND ? &d->Z : &d->X;
        double p[3] = {F->m[0][3], F->m[1][3], F->m[2][3]};
        visit(ctx, p);
    }
    for (size_t i = 0; d->links && i < d->n * d->links_per_station; i++) {
        double p[3] = {d->links[i].m[0][3], d->links[i].m[1][3], d->links[i].m[2][3]};
        visit(ctx, p);
    }
}

/* The bounds of the scene in each view's coordinates. */
typedef struct view_bounds {
    double umin[4], umax[4], vmin[4], vmax[4];
} view_bounds;

static void widen(void *ctx, const double p[3])
{
    view_bounds *b = ctx;
    for (int view = 0; view < 4; view++) {
        double u, v;
        view_coords(view, p, &u, &v);
        b->umin[view] = fmin(b->umin[view], u);
        b->umax[view] = fmax(b->umax[view], u);
        b->vmin[view] = fmin(b->vmin[view], v);
        b->vmax[view] = fmax(b->vmax[view], v);
    }
}

static void frame_views(const tram_plot_frames_data *d, int w, int h, fview v[4], double *extent)
{
    view_bounds bd;
    for (int view = 0; view < 4; view++) {
        bd.umin[view] = bd.vmin[view] = INFINITY;
        bd.umax[view] = bd.vmax[view] = -INFINITY;
    }
    scene_points(d, widen, &bd);
    double pw = w / 2.0, ph = (h - 60) / 2.0, best = INFINITY, ext = 0;
    for (int view = 0; view < 4; view++) {
        double umin = bd.umin[view], umax = bd.umax[view], vmin = bd.vmin[view],
               vmax = bd.vmax[view];
        double span = fmax(umax - umin, vmax - vmin);
        ext = fmax(ext, span);
        double su = (pw - 90) / fmax(umax - umin, 1e-9), sv = (ph - 90) / fmax(vmax - vmin, 1e-9);
        best = fmin(best, fmin(su, sv));
        v[view].ox = 0.5 * (umin + umax);
        v[view].oy = 0.5 * (vmin + vmax);
        v[view].cx = (view % 2) * pw + pw / 2;
        v[view].cy = 60 + (view / 2) * ph + ph / 2;
    }
    if (!(ext > 0)) ext = 1;
    for (int view = 0; view < 4; view++) v[view].scale = isfinite(best) && best > 0 ? best : 1;
    *extent = ext;
}

void tram_plot_frames_project(const tram_plot_frames_data *d, int width, int height, int view,
                              const double p[3], double *px, double *py)
{
    fview v[4];
    double ext;
    frame_views(d, width, height, v, &ext);
    double u, vv;
    view_coords(view, p, &u, &vv);
    *px = v[view].cx + (u - v[view].ox) * v[view].scale;
    *py = v[view].cy - (vv - v[view].oy) * v[view].scale;
}

static void to_screen(const fview *v, int view, const double p[3], double *x, double *y)
{
    double u, vv;
    view_coords(view, p, &u, &vv);
    *x = v->cx + (u - v->ox) * v->scale;
    *y = v->cy - (vv - v->oy) * v->scale;
}

static void triad(cairo_t *cr, const fview *v, int view, const tram_se3 *T, double len, double lw)
{
    double o[3] = {T->m[0][3], T->m[1][3], T->m[2][3]}, ox, oy;
    to_screen(v, view, o, &ox, &oy);
    static const double col[3][3] = {{0.85, 0.1, 0.1}, {0.1, 0.65, 0.1}, {0.1, 0.2, 0.9}};
    cairo_set_line_width(cr, lw);
    for (int a = 0; a < 3; a++) {
        double e[3] = {o[0] + len * T->m[0][a], o[1] + len * T->m[1][a], o[2] + len * T->m[2][a]}, ex, ey;
        to_screen(v, view, e, &ex, &ey);
        cairo_set_source_rgb(cr, col[a][0], col[a][1], col[a][2]);
        cairo_move_to(cr, ox, oy);
        cairo_line_to(cr, ex, ey);
        cairo_stroke(cr);
    }
}

tram_status tram_plot_frames(const tram_plot_frames_data *d, int w, int h, tram_image **out,
                             tram_error *err)
{
    canvas c;
    tram_status st = canvas_open(&c, w, h, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = c.cr;
    fview v[4];
    double ext;
    frame_views(d, w, h, v, &ext);
    double len = 0.08 * ext;
    const char *u = tram_unit_length_name(d->length_unit);
    title(cr, w, d->title ? d->title : "Frames (x red, y green, z blue)");
    static const char *const names[4] = {"top view (x right, y up)", "front view (x right, z up)",
                                         "side view (y right, z up)", "oblique view"};
    double pw = w / 2.0, ph = (h - 60) / 2.0;
    for (int view = 0; view < 4; view++) {
        double x0 = (view % 2) * pw, y0 = 60 + (view / 2) * ph;
        cairo_set_source_rgb(cr, C_GREY);
        cairo_set_line_width(cr, 1);
        cairo_rectangle(cr, x0 + 5, y0 + 5, pw - 10, ph - 10);
        cairo_stroke(cr);
        cairo_set_source_rgb(cr, 0, 0, 0);
        tram__canvas_text(cr, x0 + 15, y0 + 25, 15, names[view], 0);
        cairo_save(cr);
        cairo_rectangle(cr, x0 + 5, y0 + 5, pw - 10, ph - 10);
        cairo_clip(cr);
        /* links of the arm */
        for (size_t i = 0; d->links && i < d->n; i++) {
            cairo_set_source_rgba(cr, C_GREY, 0.8);
            cairo_set_line_width(cr, 1.5);
            double zero[3] = {0, 0, 0}, x, y;
            to_screen(&v[view], view, zero, &x, &y);
            cairo_move_to(cr, x, y);
            for (size_t k = 0; k < d->links_per_station; k++) {
                const tram_se3 *L = &d->links[i * d->links_per_station + k];
                double p[3] = {L->m[0][3], L->m[1][3], L->m[2][3]};
                to_screen(&v[view], view, p, &x, &y);
                cairo_line_to(cr, x, y);
            }
            cairo_stroke(cr);
            for (size_t k = 0; k < d->links_per_station; k++)
                triad(cr, &v[view], view, &d->links[i * d->links_per_station + k], 0.5 * len, 1);
        }
        tram_se3 I;
        tram_se3_identity(&I);
        triad(cr, &v[view], view, &I, 1.5 * len, 3);
        double o[3] = {0, 0, 0}, bx, by;
        to_screen(&v[view], view, o, &bx, &by);
        cairo_set_source_rgb(cr, 0, 0, 0);
        tram__canvas_text(cr, bx + 6, by + 16, 13, "base", 0);
        for (size_t i = 0; i < d->n; i++) {
            const tram_se3 *F = &d->T_base_flange[i];
            int out_i = d->outlier && d->outlier[i];
            double p[3] = {F->m[0][3], F->m[1][3], F->m[2][3]}, x, y;
            to_screen(&v[view], view, p, &x, &y);
            if (out_i) {
                cairo_set_source_rgb(cr, C_VERMILLION);
                cairo_set_line_width(cr, 3);
                cairo_arc(cr, x, y, 0.6 * len * v[view].scale + 6, 0, 2 * TRAM_PI);
                cairo_stroke(cr);
            }
            triad(cr, &v[view], view, F, len, 2);
            char lab[80];
            snprintf(lab, sizeof lab, "%s", d->ids ? d->ids[i] : "");
            if (!d->ids) snprintf(lab, sizeof lab, "%zu", i + 1);
            if (out_i) cairo_set_source_rgb(cr, C_VERMILLION);
            else cairo_set_source_rgb(cr, 0.2, 0.2, 0.2);
            tram__canvas_text(cr, x + 5, y - 5, 12, lab, 0);
            if (d->has_solution) {
                tram_se3 A;
                /* the frame riding on the flange: sensor (eye-in-hand) or target */
                if (d->setup == TRAM_SETUP_EYE_IN_HAND) tram_se3_compose(F, &d->X, &A);
                else tram_se3_compose(F, &d->Z, &A);
                triad(cr, &v[view], view, &A, 0.7 * len, 1.5);
                if (d->setup == TRAM_SETUP_EYE_IN_HAND) {
                    /* the sensor's viewing direction (its z axis), dashed */
                    double s0[3] = {A.m[0][3], A.m[1][3], A.m[2][3]}, tz[3] = {d->Z.m[0][3], d->Z.m[1][3], d->Z.m[2][3]};
                    double dist = sqrt(tram__sq(tz[0] - s0[0]) + tram__sq(tz[1] - s0[1]) + tram__sq(tz[2] - s0[2]));
                    double e[3] = {s0[0] + dist * A.m[0][2], s0[1] + dist * A.m[1][2], s0[2] + dist * A.m[2][2]}, sx, sy, ex, ey;
                    to_screen(&v[view], view, s0, &sx, &sy);
                    to_screen(&v[view], view, e, &ex, &ey);
                    double dash[2] = {4, 4};
                    cairo_set_dash(cr, dash, 2, 0);
                    cairo_set_source_rgba(cr, C_SKY, 0.7);
                    cairo_set_line_width(cr, 1);
                    cairo_move_to(cr, sx, sy);
                    cairo_line_to(cr, ex, ey);
                    cairo_stroke(cr);
                    cairo_set_dash(cr, NULL, 0, 0);
                }
            }
        }
        if (d->has_solution) {
            const tram_se3 *fixed = d->setup == TRAM_SETUP_EYE_IN_HAND ? &d->Z : &d->X;
            triad(cr, &v[view], view, fixed, 1.3 * len, 3);
            double p[3] = {fixed->m[0][3], fixed->m[1][3], fixed->m[2][3]}, x, y;
            to_screen(&v[view], view, p, &x, &y);
            cairo_set_source_rgb(cr, 0, 0, 0);
            tram__canvas_text(cr, x + 6, y + 16, 13, d->setup == TRAM_SETUP_EYE_IN_HAND ? "target" : "sensor", 0);
        }
        cairo_restore(cr);
        /* scale bar */
        double bar = nice(0.25 * (pw - 90) / v[view].scale);
        double sx = x0 + pw - 30 - bar * v[view].scale, sy = y0 + ph - 22;
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 2);
        cairo_move_to(cr, sx, sy);
        cairo_line_to(cr, sx + bar * v[view].scale, sy);
        cairo_stroke(cr);
        char lab[64];
        snprintf(lab, sizeof lab, "%g %s", bar, u);
        tram__canvas_text(cr, sx + 0.5 * bar * v[view].scale, sy - 6, 13, lab, 0.5);
    }
    /* legend */
    cairo_set_source_rgb(cr, 0.2, 0.2, 0.2);
    tram__canvas_text(cr, 15, 52, 13,
         d->setup == TRAM_SETUP_EYE_IN_HAND
             ? "legend: large triad = base and target; triads with labels = flange per station; small = sensor; dashed = sensor z (viewing direction); vermillion ring = outlier"
             : "legend: large triad = base and sensor; triads with labels = flange per station; small = target; vermillion ring = outlier",
         0);
    return tram__canvas_close(&c, out, err);
}

/* ---- bar charts ---------------------------------------------------- */

typedef struct panel {
    double x0, y0, w, h; /* plot area */
    double ymax;
} panel;

static void axes(cairo_t *cr, const panel *p, const char *ylabel, const char *xlabel)
{
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 1);
    cairo_move_to(cr, p->x0, p->y0);
    cairo_line_to(cr, p->x0, p->y0 + p->h);
    cairo_line_to(cr, p->x0 + p->w, p->y0 + p->h);
    cairo_stroke(cr);
    double step = nice(p->ymax / 5);
    for (double t = 0; t <= p->ymax * 1.0001; t += step) {
        double y = p->y0 + p->h - t / p->ymax * p->h;
        cairo_move_to(cr, p->x0 - 5, y);
        cairo_line_to(cr, p->x0, y);
        cairo_stroke(cr);
        char lab[32];
        snprintf(lab, sizeof lab, "%g", t);
        tram__canvas_text(cr, p->x0 - 8, y + 5, 12, lab, 1.0);
    }
    cairo_save(cr);
    cairo_translate(cr, p->x0 - 60, p->y0 + p->h / 2);
    cairo_rotate(cr, -TRAM_PI / 2);
    tram__canvas_text(cr, 0, 0, 14, ylabel, 0.5);
    cairo_restore(cr);
    if (xlabel) tram__canvas_text(cr, p->x0 + p->w / 2, p->y0 + p->h + 48, 14, xlabel, 0.5);
}

static void hline(cairo_t *cr, const panel *p, double v, int dashed, double r, double g, double b,
                  const char *label)
{
    if (!(v > 0) || v > p->ymax) return;
    double y = p->y0 + p->h - v / p->ymax * p->h;
    double dash[2] = {8, 5};
    cairo_set_dash(cr, dash, dashed ? 2 : 0, 0);
    cairo_set_source_rgb(cr, r, g, b);
    cairo_set_line_width(cr, 2);
    cairo_move_to(cr, p->x0, y);
    cairo_line_to(cr, p->x0 + p->w, y);
    cairo_stroke(cr);
    cairo_set_dash(cr, NULL, 0, 0);
    tram__canvas_text(cr, p->x0 + p->w - 4, y - 5, 12, label, 1.0);
}

static void bars(cairo_t *cr, const panel *p, size_t n, const char *const *ids, const double *v,
                 const int *flag)
{
    double bw = p->w / (double)(n ? n : 1);
    size_t every = n > 40 ? n / 40 + 1 : 1;
    for (size_t i = 0; i < n; i++) {
        double val = isfinite(v[i]) ? fmin(v[i], p->ymax) : 0;
        double hgt = val / p->ymax * p->h;
        if (flag && flag[i]) cairo_set_source_rgb(cr, C_VERMILLION);
        else cairo_set_source_rgb(cr, C_BLUE);
        cairo_rectangle(cr, p->x0 + bw * (double)i + 0.15 * bw, p->y0 + p->h - hgt, 0.7 * bw, hgt);
        cairo_fill(cr);
        if (i % every == 0) {
            char lab[40];
            if (ids) snprintf(lab, sizeof lab, "%.12s", ids[i]);
            else snprintf(lab, sizeof lab, "%zu", i + 1);
            cairo_set_source_rgb(cr, 0, 0, 0);
            cairo_save(cr);
            cairo_translate(cr, p->x0 + bw * ((double)i + 0.5), p->y0 + p->h + 8);
            cairo_rotate(cr, TRAM_PI / 4);
            tram__canvas_text(cr, 0, 4, 11, lab, 0);
            cairo_restore(cr);
        }
    }
}

static double vmax_of(const double *v, size_t n, double extra)
{
    double m = extra;
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]) && v[i] > m) m = v[i];
    return m > 0 ? 1.1 * m : 1.0;
}

static double rms_of(const double *v, const int *flag, size_t n)
{
    double s = 0;
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]) && !(flag && flag[i])) {
            s += v[i] * v[i];
            k++;
        }
    return k ? sqrt(s / (double)k) : 0;
}

static void legend_bars(cairo_t *cr, double x, double y, int thresholds)
{
    cairo_set_source_rgb(cr, C_BLUE);
    cairo_rectangle(cr, x, y - 10, 14, 10);
    cairo_fill(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, x + 20, y, 12, "station", 0);
    cairo_set_source_rgb(cr, C_VERMILLION);
    cairo_rectangle(cr, x + 90, y - 10, 14, 10);
    cairo_fill(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, x + 110, y, 12, "outlier (excluded)", 0);
    tram__canvas_text(cr, x + 250, y, 12,
                      thresholds ? "dashed black: RMS   orange: outlier threshold"
                                 : "dashed black: RMS", 0);
}

tram_status tram_plot_residuals(const tram_plot_residuals_data *d, int w, int h, tram_image **out,
                                tram_error *err)
{
    canvas c;
    tram_status st = canvas_open(&c, w, h, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = c.cr;
    const char *u = tram_unit_length_name(d->length_unit);
    title(cr, w, d->title ? d->title : "Per-station residuals");
    legend_bars(cr, 90, 58, d->rot_threshold_deg > 0 || d->trans_threshold > 0);
    double left = 90, right = d->trans_vec ? 0.30 * w : 30, top = 80, gap = 90;
    double pw = w - left - right - (d->trans_vec ? 60 : 0), ph = (h - top - 2 * gap) / 2;
    panel p1 = {left, top, pw, ph, vmax_of(d->rot_deg, d->n, d->rot_threshold_deg)};
    panel p2 = {left, top + ph + gap, pw, ph, vmax_of(d->trans, d->n, d->trans_threshold)};
    char lab[64];
    axes(cr, &p1, "rotation residual (deg)", NULL);
    bars(cr, &p1, d->n, d->ids, d->rot_deg, d->outlier);
    hline(cr, &p1, rms_of(d->rot_deg, d->outlier, d->n), 1, 0, 0, 0, "RMS");
    hline(cr, &p1, d->rot_threshold_deg, 0, C_ORANGE, "outlier threshold");
    snprintf(lab, sizeof lab, "translation residual (%s)", u);
    axes(cr, &p2, lab, "station");
    bars(cr, &p2, d->n, d->ids, d->trans, d->outlier);
    hline(cr, &p2, rms_of(d->trans, d->outlier, d->n), 1, 0, 0, 0, "RMS");
    hline(cr, &p2, d->trans_threshold, 0, C_ORANGE, "outlier threshold");
    if (d->trans_vec) {
        /* scatter of the residual vectors: x-y and x-z */
        double m = 0;
        for (size_t i = 0; i < 3 * d->n; i++)
            if (isfinite(d->trans_vec[i])) m = fmax(m, fabs(d->trans_vec[i]));
        m = m > 0 ? 1.1 * m : 1;
        for (int k = 0; k < 2; k++) {
            double size = fmin(0.30 * w - 40, ph);
            double cx = w - 0.15 * w - 10, cy = (k ? p2.y0 : p1.y0) + ph / 2;
            cairo_set_source_rgb(cr, C_GREY);
            cairo_set_line_width(cr, 1);
            cairo_rectangle(cr, cx - size / 2, cy - size / 2, size, size);
            cairo_move_to(cr, cx - size / 2, cy);
            cairo_line_to(cr, cx + size / 2, cy);
            cairo_move_to(cr, cx, cy - size / 2);
            cairo_line_to(cr, cx, cy + size / 2);
            cairo_stroke(cr);
            for (size_t i = 0; i < d->n; i++) {
                double a = d->trans_vec[3 * i], b = d->trans_vec[3 * i + 1 + (size_t)k];
                if (!isfinite(a) || !isfinite(b)) continue;
                if (d->outlier && d->outlier[i]) cairo_set_source_rgb(cr, C_VERMILLION);
                else cairo_set_source_rgb(cr, C_BLUE);
                cairo_arc(cr, cx + a / m * size / 2, cy - b / m * size / 2, 4, 0, 2 * TRAM_PI);
                cairo_fill(cr);
            }
            cairo_set_source_rgb(cr, 0, 0, 0);
            snprintf(lab, sizeof lab, "residual %s vs x (%s), +-%.3g", k ? "z" : "y", u, m);
            tram__canvas_text(cr, cx, cy - size / 2 - 8, 13, lab, 0.5);
        }
    }
    return tram__canvas_close(&c, out, err);
}

tram_status tram_plot_points(size_t n, const char *const *ids, const double *residual,
                             const int *outlier, double threshold, tram_length_unit unit,
                             const char *t, int w, int h, tram_image **out, tram_error *err)
{
    canvas c;
    tram_status st = canvas_open(&c, w, h, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = c.cr;
    title(cr, w, t ? t : "Per-point registration residuals");
    legend_bars(cr, 90, 58, threshold > 0);
    panel p = {90, 80, w - 120.0, h - 170.0, vmax_of(residual, n, threshold)};
    char lab[64];
    snprintf(lab, sizeof lab, "residual (%s)", tram_unit_length_name(unit));
    axes(cr, &p, lab, "point");
    bars(cr, &p, n, ids, residual, outlier);
    hline(cr, &p, rms_of(residual, outlier, n), 1, 0, 0, 0, "RMS");
    hline(cr, &p, threshold, 0, C_ORANGE, "inlier threshold");
    return tram__canvas_close(&c, out, err);
}

tram_status tram_plot_history(const tram_plot_history_data *d, int w, int h, tram_image **out,
                              tram_error *err)
{
    canvas c;
    tram_status st = canvas_open(&c, w, h, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = c.cr;
    title(cr, w, d->title ? d->title : "Mount check history");
    double t0 = INFINITY, t1 = -INFINITY;
    for (size_t i = 0; i < d->n; i++) {
        t0 = fmin(t0, d->time_s[i]);
        t1 = fmax(t1, d->time_s[i]);
    }
    if (!(t1 > t0)) {
        t0 = (d->n ? t0 : 0) - 43200;
        t1 = t0 + 86400;
    }
    double top = 80, gap = 90, ph = (h - top - 2 * gap) / 2;
    const double *series[2] = {d->trans, d->rot_deg};
    double tol[2] = {d->tol_length, d->tol_angle_deg};
    char lab[64];
    snprintf(lab, sizeof lab, "change: translation (%s)", tram_unit_length_name(d->length_unit));
    const char *ylab[2] = {lab, "change: rotation (deg)"};
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, 90, 58, 12, "dots: checks (blue ok, vermillion alarm); band: tolerance", 0);
    for (int k = 0; k < 2; k++) {
        panel p = {90, top + k * (ph + gap), w - 130.0, ph, vmax_of(series[k], d->n, tol[k])};
        if (tol[k] > 0) {
            cairo_set_source_rgba(cr, C_SKY, 0.25);
            double y = p.y0 + p.h - tol[k] / p.ymax * p.h;
            cairo_rectangle(cr, p.x0, y, p.w, p.y0 + p.h - y);
            cairo_fill(cr);
        }
        axes(cr, &p, ylab[k], k ? "days since the first check" : NULL);
        /* time ticks in days */
        double days = (t1 - t0) / 86400, step = nice(days / 6);
        for (double dd = 0; dd <= days * 1.0001; dd += step) {
            double x = p.x0 + dd / days * p.w;
            cairo_set_source_rgb(cr, 0, 0, 0);
            snprintf(lab, sizeof lab, "%g", dd);
            tram__canvas_text(cr, x, p.y0 + p.h + 18, 12, lab, 0.5);
        }
        cairo_set_source_rgb(cr, C_GREY);
        cairo_set_line_width(cr, 1);
        for (size_t i = 0; i < d->n; i++) {
            double x = p.x0 + (d->time_s[i] - t0) / (t1 - t0) * p.w;
            double y = p.y0 + p.h - fmin(series[k][i], p.ymax) / p.ymax * p.h;
            if (i == 0) cairo_move_to(cr, x, y);
            else cairo_line_to(cr, x, y);
        }
        cairo_stroke(cr);
        for (size_t i = 0; i < d->n; i++) {
            double x = p.x0 + (d->time_s[i] - t0) / (t1 - t0) * p.w;
            double y = p.y0 + p.h - fmin(series[k][i], p.ymax) / p.ymax * p.h;
            if (d->alarm && d->alarm[i]) cairo_set_source_rgb(cr, C_VERMILLION);
            else cairo_set_source_rgb(cr, C_BLUE);
            cairo_arc(cr, x, y, 5, 0, 2 * TRAM_PI);
            cairo_fill(cr);
        }
    }
    return tram__canvas_close(&c, out, err);
}
