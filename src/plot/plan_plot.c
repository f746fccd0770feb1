/*
 * plan_plot.c - the picture of a station plan (tram plan --plot,
 * docs/plan.md): the flange positions in the top view (x right, y up) and
 * the front view (x right, z up) of the base frame - recorded stations as
 * grey dots, proposed ones as numbered vermillion squares joined in their
 * visiting order, the fixed part (target or sensor) as a blue cross - and
 * bars of the 1-sigma of X's translation and rotation now, predicted
 * after the plan and after as many random feasible stations.  Orthographic
 * views share one scale; colours are Okabe and Ito's.
 */
#include "tram/plot.h"
#include "plot/canvas_internal.h"

#include <math.h>
#include <stdio.h>

#define C_BLUE 0.0, 0.447, 0.698
#define C_VERMILLION 0.835, 0.369, 0.0
#define C_GREY 0.6, 0.6, 0.6

typedef struct box2 {
    double x0, y0, w, h;       /* panel on the canvas */
    double cu, cv, scale;      /* scene centre and pixels per length */
} box2;

/* Coordinates of p in view 0 (top: x, y) or 1 (front: x, z). */
static void uv_of(int view, const double p[3], double *u, double *v)
{
    *u = p[0];
    *v = view == 0 ? p[1] : p[2];
}

static void to_px(const box2 *b, int view, const double p[3], double *x, double *y)
{
    double u, v;
    uv_of(view, p, &u, &v);
    *x = b->x0 + b->w / 2 + (u - b->cu) * b->scale;
    *y = b->y0 + b->h / 2 - (v - b->cv) * b->scale;
}

/* The position of the fixed part: the target (eye-in-hand) or sensor. */
static void fixed_point(const tram_plan_result *p, double q[3])
{
    const tram_se3 *F = p->setup == TRAM_SETUP_EYE_IN_HAND ? &p->Z : &p->X;
    for (int a = 0; a < 3; a++) q[a] = F->m[a][3];
}

static void fit_views(const tram_plot_plan_data *d, box2 b[2])
{
    const tram_plan_result *p = d->plan;
    double scale = INFINITY;
    for (int view = 0; view < 2; view++) {
        double lo[2] = {INFINITY, INFINITY}, hi[2] = {-INFINITY, -INFINITY}, q[3], u, v;
        fixed_point(p, q);
        for (size_t i = 0; i < p->n + d->n_existing + 1; i++) {
            const double *pt = q;
            double s[3];
            if (i < p->n) {
                for (int a = 0; a < 3; a++) s[a] = p->stations[i].T_base_flange.m[a][3];
                pt = s;
            } else if (i < p->n + d->n_existing) {
                for (int a = 0; a < 3; a++) s[a] = d->existing[i - p->n].m[a][3];
                pt = s;
            }
            uv_of(view, pt, &u, &v);
            lo[0] = fmin(lo[0], u);
            hi[0] = fmax(hi[0], u);
            lo[1] = fmin(lo[1], v);
            hi[1] = fmax(hi[1], v);
        }
        b[view].cu = (lo[0] + hi[0]) / 2;
        b[view].cv = (lo[1] + hi[1]) / 2;
        scale = fmin(scale, fmin((b[view].w - 60) / fmax(hi[0] - lo[0], 1e-9),
                                 (b[view].h - 60) / fmax(hi[1] - lo[1], 1e-9)));
    }
    b[0].scale = b[1].scale = isfinite(scale) && scale > 0 ? scale : 1;
}

static void draw_view(cairo_t *cr, const tram_plot_plan_data *d, const box2 *b, int view)
{
    const tram_plan_result *p = d->plan;
    double x, y, q[3];
    cairo_set_source_rgb(cr, C_GREY);
    cairo_set_line_width(cr, 1);
    cairo_rectangle(cr, b->x0, b->y0, b->w, b->h);
    cairo_stroke(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, b->x0 + 10, b->y0 + 20, 14, view == 0 ? "top view (x right, y up)" : "front view (x right, z up)", 0);
    for (size_t i = 0; i < d->n_existing; i++) {
        double s[3] = {d->existing[i].m[0][3], d->existing[i].m[1][3], d->existing[i].m[2][3]};
        to_px(b, view, s, &x, &y);
        cairo_set_source_rgb(cr, C_GREY);
        cairo_arc(cr, x, y, 4, 0, 2 * TRAM_PI);
        cairo_fill(cr);
    }
    double dash[2] = {6, 4};
    cairo_set_dash(cr, dash, 2, 0);
    cairo_set_source_rgba(cr, C_VERMILLION, 0.6);
    cairo_set_line_width(cr, 1.5);
    for (size_t i = 0; i < p->n; i++) {
        const tram_se3 *T = &p->stations[i].T_base_flange;
        double s[3] = {T->m[0][3], T->m[1][3], T->m[2][3]};
        to_px(b, view, s, &x, &y);
        if (i == 0) cairo_move_to(cr, x, y);
        else cairo_line_to(cr, x, y);
    }
    cairo_stroke(cr);
    cairo_set_dash(cr, NULL, 0, 0);
    for (size_t i = 0; i < p->n; i++) {
        const tram_se3 *T = &p->stations[i].T_base_flange;
        double s[3] = {T->m[0][3], T->m[1][3], T->m[2][3]};
        to_px(b, view, s, &x, &y);
        cairo_set_source_rgb(cr, C_VERMILLION);
        cairo_rectangle(cr, x - 5, y - 5, 10, 10);
        cairo_fill(cr);
        char lab[24];
        snprintf(lab, sizeof lab, "%zu", i + 1);
        tram__canvas_text(cr, x + 8, y - 6, 13, lab, 0);
    }
    fixed_point(p, q);
    to_px(b, view, q, &x, &y);
    cairo_set_source_rgb(cr, C_BLUE);
    cairo_set_line_width(cr, 3);
    cairo_move_to(cr, x - 8, y - 8);
    cairo_line_to(cr, x + 8, y + 8);
    cairo_move_to(cr, x - 8, y + 8);
    cairo_line_to(cr, x + 8, y - 8);
    cairo_stroke(cr);
    tram__canvas_text(cr, x + 10, y + 16, 13, p->setup == TRAM_SETUP_EYE_IN_HAND ? "target" : "sensor", 0);
}

/* Bars of one quantity: now, predicted, random (NaN: not drawn). */
static void draw_bars(cairo_t *cr, double x0, double y0, double w, double h, const char *what,
                      const double v[3])
{
    static const char *const names[3] = {"now", "planned", "random"};
    double vmax = 0;
    for (int k = 0; k < 3; k++)
        if (isfinite(v[k])) vmax = fmax(vmax, v[k]);
    if (!(vmax > 0)) vmax = 1;
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, x0 + w / 2, y0 + 18, 14, what, 0.5);
    double base = y0 + h - 30, top = y0 + 50, bw = w / 5;
    cairo_set_line_width(cr, 1);
    cairo_move_to(cr, x0 + 10, base);
    cairo_line_to(cr, x0 + w - 10, base);
    cairo_stroke(cr);
    for (int k = 0; k < 3; k++) {
        double bx = x0 + (k + 0.5) * w / 3 - bw / 2;
        char lab[48];
        if (isfinite(v[k])) {
            double bh = (base - top) * v[k] / vmax;
            if (k == 1) cairo_set_source_rgb(cr, C_VERMILLION);
            else cairo_set_source_rgb(cr, k == 0 ? 0.45 : 0.7, k == 0 ? 0.45 : 0.7, k == 0 ? 0.45 : 0.7);
            cairo_rectangle(cr, bx, base - bh, bw, bh);
            cairo_fill(cr);
            snprintf(lab, sizeof lab, "%.3g", v[k]);
        } else {
            snprintf(lab, sizeof lab, "n/a");
        }
        cairo_set_source_rgb(cr, 0, 0, 0);
        tram__canvas_text(cr, bx + bw / 2, base + 18, 13, names[k], 0.5);
        double ty = isfinite(v[k]) ? base - (base - top) * v[k] / vmax - 6 : base - 6;
        tram__canvas_text(cr, bx + bw / 2, ty, 13, lab, 0.5);
    }
}

tram_status tram_plot_plan(const tram_plot_plan_data *d, int w, int h, tram_image **out,
                           tram_error *err)
{
    *out = NULL;
    if (w < 400 || h < 300 || w > 10000 || h > 10000)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "image size %dx%d: expected 400x300 to 10000x10000", w, h);
    tram__canvas c;
    tram_status st = tram__canvas_open(&c, w, h, err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = c.cr;
    const tram_plan_result *p = d->plan;
    cairo_set_source_rgb(cr, 0, 0, 0);
    tram__canvas_text(cr, 15, 28, 18, d->title ? d->title : "Proposed stations (unverified: check reach and collisions at reduced speed)", 0);
    double vw = 0.62 * w, ph = (h - 70) / 2.0;
    box2 b[2] = {{10, 50, vw - 20, ph - 10, 0, 0, 1}, {10, 50 + ph, vw - 20, ph - 10, 0, 0, 1}};
    fit_views(d, b);
    for (int view = 0; view < 2; view++) draw_view(cr, d, &b[view], view);
    const tram_plan_sigma *s[3] = {&p->current, &p->planned, &p->random};
    double tv[3], rv[3];
    for (int k = 0; k < 3; k++) {
        tv[k] = s[k]->valid ? s[k]->trans : NAN;
        rv[k] = s[k]->valid ? s[k]->rot_deg : NAN;
    }
    char lab[80];
    snprintf(lab, sizeof lab, "1-sigma of X, translation (%s)", tram_unit_length_name(p->length_unit));
    draw_bars(cr, vw, 50, w - vw - 10, ph - 10, lab, tv);
    draw_bars(cr, vw, 50 + ph, w - vw - 10, ph - 10, "1-sigma of X, rotation (deg)", rv);
    cairo_set_source_rgb(cr, 0.2, 0.2, 0.2);
    tram__canvas_text(cr, 15, h - 10, 13,
                      "grey dots = recorded stations; vermillion squares = proposed, numbered in visiting "
                      "order (dashed path); random = median of random feasible sets",
                      0);
    return tram__canvas_close(&c, out, err);
}
