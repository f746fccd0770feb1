/*
 * detect_plot.c - pictures of chessboard detections drawn with cairo
 * (docs/images.md): one image with its corners, the (0, 0) corner and the
 * target frame's x and y directions; and the coverage of the image frame
 * by the corners of every board found.
 *
 * Pixel convention (tram/image.h): the centre of the top-left pixel is
 * (0, 0), so pixel (u, v) covers [u - 0.5, u + 0.5] x [v - 0.5, v + 0.5]
 * and lands at picture point ((u + 0.5) s, (v + 0.5) s) for a scale s.
 * Colours: Okabe-Ito (Okabe and Ito 2008, "Color Universal Design"); axis
 * arrows x red and y green as in the frames pictures.
 */
#include "tram/plot.h"
#include "plot/canvas_internal.h"

#include <cairo.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define TITLE_H 36.0
#define FOOT_H 34.0

static const double okabe_ito[7][3] = {
    {0.0, 0.447, 0.698}, {0.835, 0.369, 0.0}, {0.0, 0.620, 0.451}, {0.902, 0.624, 0.0},
    {0.337, 0.706, 0.914}, {0.800, 0.475, 0.655}, {0.941, 0.894, 0.259}};


/* Text with a white halo, readable over the image. */
static void text_halo(cairo_t *cr, double x, double y, double size, const char *s)
{
    double r, g, b, a;
    cairo_pattern_get_rgba(cairo_get_source(cr), &r, &g, &b, &a);
    cairo_set_font_size(cr, size);
    cairo_move_to(cr, x, y);
    cairo_text_path(cr, s);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_set_line_width(cr, 3);
    cairo_stroke(cr);
    cairo_set_source_rgba(cr, r, g, b, a);
    tram__canvas_text(cr, x, y, size, s, 0);
}

/* Scale that brings the long side into 640 .. 1600 picture pixels. */
static double fit_scale(size_t w, size_t h)
{
    double m = (double)(w > h ? w : h);
    return m > 1600 ? 1600 / m : m < 640 ? 640 / m : 1.0;
}

/* The grey image, box-averaged (or repeated) to pw x ph, lightened a
 * little so that the marks stand out. */
static void draw_grey(cairo_t *cr, const tram_grey_image *im, int pw, int ph, double top)
{
    cairo_surface_t *g = cairo_image_surface_create(CAIRO_FORMAT_RGB24, pw, ph);
    if (cairo_surface_status(g) != CAIRO_STATUS_SUCCESS) {
        cairo_surface_destroy(g);
        return;
    }
    cairo_surface_flush(g);
    unsigned char *data = cairo_image_surface_get_data(g);
    int stride = cairo_image_surface_get_stride(g);
    double sx = (double)im->width / pw, sy = (double)im->height / ph;
    for (int y = 0; y < ph; y++) {
        size_t y0 = (size_t)(y * sy), y1 = (size_t)((y + 1) * sy);
        if (y1 <= y0) y1 = y0 + 1;
        if (y1 > im->height) y1 = im->height;
        for (int x = 0; x < pw; x++) {
            size_t x0 = (size_t)(x * sx), x1 = (size_t)((x + 1) * sx);
            if (x1 <= x0) x1 = x0 + 1;
            if (x1 > im->width) x1 = im->width;
            double sum = 0;
            for (size_t v = y0; v < y1; v++)
                for (size_t u = x0; u < x1; u++) sum += im->pixels[v * im->width + u];
            double gv = sum / (double)((y1 - y0) * (x1 - x0));
            if (!(gv >= 0)) gv = 0;
            if (gv > 255) gv = 255;
            unsigned int c = (unsigned int)lround(48 + 0.72 * gv);
            unsigned int px = 0xff000000u | (c << 16) | (c << 8) | c;
            memcpy(data + (size_t)y * (size_t)stride + 4 * (size_t)x, &px, sizeof px);
        }
    }
    cairo_surface_mark_dirty(g);
    cairo_set_source_surface(cr, g, 0, top);
    cairo_paint(cr);
    cairo_surface_destroy(g);
}

static void arrow(cairo_t *cr, double x0, double y0, double x1, double y1, const char *name)
{
    double dx = x1 - x0, dy = y1 - y0, L = hypot(dx, dy);
    if (!(L > 1e-9)) return;
    dx /= L;
    dy /= L;
    double head = fmin(14, 0.4 * L);
    cairo_set_line_width(cr, 3);
    cairo_move_to(cr, x0, y0);
    cairo_line_to(cr, x1 - head * dx * 0.8, y1 - head * dy * 0.8);
    cairo_stroke(cr);
    cairo_move_to(cr, x1, y1);
    cairo_line_to(cr, x1 - head * dx - 0.5 * head * dy, y1 - head * dy + 0.5 * head * dx);
    cairo_line_to(cr, x1 - head * dx + 0.5 * head * dy, y1 - head * dy - 0.5 * head * dx);
    cairo_close_path(cr);
    cairo_fill(cr);
    text_halo(cr, x1 + 8 * dx - 4, y1 + 10 * dy + 5, 16, name);
}

static void draw_lattice(cairo_t *cr, const tram_board *b, const tram_detection *d, double s,
                         double top)
{
    size_t cols = (size_t)b->cols, rows = (size_t)b->rows;
#define PX(k) ((d->uv[2 * (k)] + 0.5) * s)
#define PY(k) (top + (d->uv[2 * (k) + 1] + 0.5) * s)
    cairo_set_source_rgb(cr, okabe_ito[4][0], okabe_ito[4][1], okabe_ito[4][2]);
    cairo_set_line_width(cr, 1.2);
    for (size_t r = 0; r < rows; r++)
        for (size_t c = 0; c < cols; c++) {
            size_t k = r * cols + c;
            if (c + 1 < cols) {
                cairo_move_to(cr, PX(k), PY(k));
                cairo_line_to(cr, PX(k + 1), PY(k + 1));
            }
            if (r + 1 < rows) {
                cairo_move_to(cr, PX(k), PY(k));
                cairo_line_to(cr, PX(k + cols), PY(k + cols));
            }
        }
    cairo_stroke(cr);
    cairo_set_source_rgb(cr, okabe_ito[0][0], okabe_ito[0][1], okabe_ito[0][2]);
    for (size_t k = 0; k < d->ncorners; k++) {
        cairo_new_sub_path(cr);
        cairo_arc(cr, PX(k), PY(k), 3.5, 0, 2 * TRAM_PI);
    }
    cairo_fill(cr);
    /* the frame: x along increasing c, y along increasing r */
    size_t kx = cols - 1 < 3 ? cols - 1 : 3, ky = (rows - 1 < 3 ? rows - 1 : 3) * cols;
    cairo_set_source_rgb(cr, 0.85, 0.1, 0.1);
    arrow(cr, PX(0), PY(0), PX(kx), PY(kx), "x");
    cairo_set_source_rgb(cr, 0.1, 0.6, 0.1);
    arrow(cr, PX(0), PY(0), PX(ky), PY(ky), "y");
    cairo_set_source_rgb(cr, okabe_ito[3][0], okabe_ito[3][1], okabe_ito[3][2]);
    cairo_set_line_width(cr, 3);
    cairo_new_sub_path(cr);
    cairo_arc(cr, PX(0), PY(0), 9, 0, 2 * TRAM_PI);
    cairo_stroke(cr);
    text_halo(cr, PX(0) - 22, PY(0) - 10, 16, "0");
#undef PX
#undef PY
}

tram_status tram_plot_detection(const tram_grey_image *im, const tram_board *b,
                                const tram_detection *d, const char *title, tram_image **out,
                                tram_error *err)
{
    *out = NULL;
    if (!im || !im->pixels || !b || !d || im->width == 0 || im->height == 0)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detection picture: no image or detection");
    double s = fit_scale(im->width, im->height);
    int pw = (int)lround((double)im->width * s), ph = (int)lround((double)im->height * s);
    if (pw < 1) pw = 1;
    if (ph < 1) ph = 1;
    s = (double)pw / (double)im->width;
    tram__canvas p;
    tram_status st = tram__canvas_open(&p, pw < 480 ? 480 : pw, ph + (int)(TITLE_H + FOOT_H), err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = p.cr;
    draw_grey(cr, im, pw, ph, TITLE_H);
    int whole = d->found && d->uv && d->ncorners == tram_board_corner_count(b);
    if (whole) draw_lattice(cr, b, d, s, TITLE_H);
    char line[400];
    cairo_set_source_rgb(cr, 0, 0, 0);
    if (title) tram__canvas_text(cr, 8, 24, 16, title, 0);
    if (whole)
        snprintf(line, sizeof line, "found: %zu corners, edge blur %.2f px; corner 0 ringed, x red, y green",
                 d->ncorners, d->sharpness);
    else
        snprintf(line, sizeof line, "not found: %s (%zu corners of a lattice seen)",
                 d->reason[0] ? d->reason : "no reason given", d->nseen);
    if (!whole) cairo_set_source_rgb(cr, okabe_ito[1][0], okabe_ito[1][1], okabe_ito[1][2]);
    tram__canvas_text(cr, 8, TITLE_H + ph + 23, 14, line, 0);
    return tram__canvas_close(&p, out, err);
}

#define GRID_X 8
#define GRID_Y 6

tram_status tram_plot_coverage(const tram_plot_coverage_data *d, tram_image **out, tram_error *err)
{
    *out = NULL;
    if (!d || d->width == 0 || d->height == 0 || (d->n && !d->det))
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "coverage picture: no image size");
    double s = fit_scale(d->width, d->height);
    double fw = (double)d->width * s, fh = (double)d->height * s, m = 20;
    tram__canvas p;
    tram_status st = tram__canvas_open(&p, (int)ceil(fw + 2 * m), (int)ceil(fh + TITLE_H + FOOT_H + m), err);
    if (st != TRAM_OK) return st;
    cairo_t *cr = p.cr;
    double x0 = m, y0 = TITLE_H;
    int cell[GRID_Y][GRID_X] = {{0}};
    size_t boards = 0, corners = 0;
    for (size_t i = 0; i < d->n; i++) {
        const tram_detection *t = d->det[i];
        if (!t || !t->found || !t->uv) continue;
        boards++;
        for (size_t k = 0; k < t->ncorners; k++) {
            double u = t->uv[2 * k] + 0.5, v = t->uv[2 * k + 1] + 0.5;
            int cx = (int)floor(u / (double)d->width * GRID_X), cy = (int)floor(v / (double)d->height * GRID_Y);
            if (cx >= 0 && cx < GRID_X && cy >= 0 && cy < GRID_Y) cell[cy][cx]++;
            corners++;
        }
    }
    /* the frame, its grid, the covered cells */
    cairo_set_source_rgb(cr, 0.93, 0.93, 0.93);
    cairo_rectangle(cr, x0, y0, fw, fh);
    cairo_fill(cr);
    int covered = 0;
    cairo_set_source_rgb(cr, 0.80, 0.90, 0.97);
    for (int cy = 0; cy < GRID_Y; cy++)
        for (int cx = 0; cx < GRID_X; cx++)
            if (cell[cy][cx]) {
                covered++;
                cairo_rectangle(cr, x0 + cx * fw / GRID_X, y0 + cy * fh / GRID_Y, fw / GRID_X, fh / GRID_Y);
            }
    cairo_fill(cr);
    /* each cell's corner count in its top-left, so a cell that one corner
     * grazes reads differently from one that many boards cover */
    cairo_set_source_rgb(cr, 0.35, 0.35, 0.35);
    for (int cy = 0; cy < GRID_Y; cy++)
        for (int cx = 0; cx < GRID_X; cx++) {
            char num[16];
            snprintf(num, sizeof num, "%d", cell[cy][cx]);
            tram__canvas_text(cr, x0 + cx * fw / GRID_X + 4, y0 + cy * fh / GRID_Y + 13, 11, num, 0);
        }
    cairo_set_source_rgb(cr, 0.6, 0.6, 0.6);
    cairo_set_line_width(cr, 0.8);
    for (int k = 1; k < GRID_X; k++) {
        cairo_move_to(cr, x0 + k * fw / GRID_X, y0);
        cairo_line_to(cr, x0 + k * fw / GRID_X, y0 + fh);
    }
    for (int k = 1; k < GRID_Y; k++) {
        cairo_move_to(cr, x0, y0 + k * fh / GRID_Y);
        cairo_line_to(cr, x0 + fw, y0 + k * fh / GRID_Y);
    }
    cairo_stroke(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 1.5);
    cairo_rectangle(cr, x0, y0, fw, fh);
    cairo_stroke(cr);
    /* each board: its outline through the four outer corners, its corners */
    size_t colour = 0;
    for (size_t i = 0; i < d->n; i++) {
        const tram_detection *t = d->det[i];
        if (!t || !t->found || !t->uv) continue;
        const double *c = okabe_ito[colour++ % 7];
        cairo_set_source_rgb(cr, c[0], c[1], c[2]);
        if (d->board && t->ncorners == tram_board_corner_count(d->board)) {
            size_t cols = (size_t)d->board->cols, last = t->ncorners - 1;
            size_t q[4] = {0, cols - 1, last, last - (cols - 1)};
            cairo_set_line_width(cr, 1.5);
            for (int k = 0; k < 4; k++) {
                double u = x0 + (t->uv[2 * q[k]] + 0.5) * s, v = y0 + (t->uv[2 * q[k] + 1] + 0.5) * s;
                if (k == 0) cairo_move_to(cr, u, v);
                else cairo_line_to(cr, u, v);
            }
            cairo_close_path(cr);
            cairo_stroke(cr);
        }
        for (size_t k = 0; k < t->ncorners; k++) {
            cairo_new_sub_path(cr);
            cairo_arc(cr, x0 + (t->uv[2 * k] + 0.5) * s, y0 + (t->uv[2 * k + 1] + 0.5) * s, 2.5, 0,
                      2 * TRAM_PI);
        }
        cairo_fill(cr);
    }
    char line[300];
    cairo_set_source_rgb(cr, 0, 0, 0);
    snprintf(line, sizeof line, "%s (image frame %zux%zu pixels)", d->title ? d->title : "coverage",
             d->width, d->height);
    tram__canvas_text(cr, x0, 24, 16, line, 0);
    snprintf(line, sizeof line,
             "%zu boards, %zu corners; corners in %d of %d cells of the %dx%d grid (shaded; "
             "the number is the cell's corner count)", boards,
             corners, covered, GRID_X * GRID_Y, GRID_X, GRID_Y);
    tram__canvas_text(cr, x0, y0 + fh + 24, 14, line, 0);
    return tram__canvas_close(&p, out, err);
}
