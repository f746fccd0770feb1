/*
 * render.c - the test renderer of tools/render/render.h: chessboard images
 * with known truth, by inverse mapping of each sample through the
 * Brown-Conrady camera of src/camera/camera.c (Brown 1966), adaptive
 * supersampling, lighting gain, Gaussian blur and seeded Gaussian noise
 * (splitmix64, Steele, Lea & Flood 2014; Box and Muller 1958).
 *
 * Why the adaptive rule is exact enough: every label names a convex region
 * of the board plane (one square or border cell, or one of the eight
 * convex pieces of the outside: four strips and four quadrants), and the
 * footprint of a pixel on the plane is very nearly convex, so a pixel whose
 * four corners carry one label lies wholly in that region.  Every other
 * pixel is averaged over N = n^2 samples of a rank-1 lattice (see
 * lattice()), u - 0.5 + (k + 0.5)/N, v - 0.5 + frac((k g + 0.5)/N).
 */
#include "render/render.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "camera/camera_internal.h"
#include "core/tram_internal.h"
#include "render/render_internal.h"

#define DEG (TRAM_PI / 180.0)

/* ---------------------------------------------------------------------------
 * Scene set-up. */
void render_scene_init(render_scene *s, const tram_board *b, const tram_camera *c,
                       const tram_se3 *T_sensor_target)
{
    memset(s, 0, sizeof *s);
    s->board = *b;
    s->camera = *c;
    if (T_sensor_target) s->T_sensor_target = *T_sensor_target;
    else tram_se3_identity(&s->T_sensor_target);
    s->board_present = 1;
    s->border_squares = 1;
    s->black = 30.0;
    s->white = 220.0;
    s->background = 110.0;
    s->plate = 140.0;
    s->supersample = 8;
    s->gain_min = s->gain_max = 1.0;
    s->clip = 1;
    s->occluder_uv[0] = s->occluder_uv[1] = NAN;
    s->occluder_level = 70.0;
    s->seed = 1;
}

void render_pose_facing(const tram_board *b, double dist, double ox, double oy, double tilt_deg,
                        double tilt_dir_deg, double roll_deg, tram_se3 *T_sensor_target)
{
    double axis[3] = {cos(tilt_dir_deg * DEG) * tilt_deg * DEG,
                      sin(tilt_dir_deg * DEG) * tilt_deg * DEG, 0.0};
    double wz[3] = {0.0, 0.0, roll_deg * DEG};
    tram_mat3 Rt, Rr, R;
    tram_so3_exp(axis, &Rt);
    tram_so3_exp(wz, &Rr);
    tram_so3_mul(&Rr, &Rt, &R);
    double n = sqrt(ox * ox + oy * oy + 1.0);
    double p[3] = {dist * ox / n, dist * oy / n, dist / n};
    double centre[3] = {0.5 * (b->cols - 1) * b->square, 0.5 * (b->rows - 1) * b->square, 0.0};
    double t[3];
    for (int i = 0; i < 3; i++)
        t[i] = p[i] - (R.m[i][0] * centre[0] + R.m[i][1] * centre[1] + R.m[i][2] * centre[2]);
    tram_se3_from_rt(&R, t, T_sensor_target);
}

tram_grey_image *render_image_create(size_t width, size_t height)
{
    if (width == 0 || height == 0 || width > 100000 || height > 100000) return NULL;
    tram_grey_image *im = malloc(sizeof *im);
    if (!im) return NULL;
    im->width = width;
    im->height = height;
    im->pixels = calloc(width * height, sizeof *im->pixels);
    if (!im->pixels) {
        free(im);
        return NULL;
    }
    return im;
}

void render_image_destroy(tram_grey_image *im)
{
    if (!im) return;
    free(im->pixels);
    free(im);
}

/* ---------------------------------------------------------------------------
 * The board plane: rays, labels and colours. */
typedef struct geo {
    const render_scene *s;
    double Rt[3][3];   /* R_target_sensor */
    double o[3];       /* camera centre in the target frame */
    int a0, a1, b0, b1; /* cells of the white area (pattern and border) */
    int na;            /* labels per row: a0-1 .. a1+1 */
    int front;         /* the camera is on the printed (-z) side */
    double fold_r2;    /* the lens model's fold (camera/camera.c)     */
    int nlat, glat;    /* the sample lattice of a mixed pixel (below) */
} geo;

static int gcd(int a, int b) { return b ? gcd(b, a % b) : a; }

/* The samples of a mixed pixel: the rank-1 lattice of N = n^2 points
 * ((k + 1/2) / N, frac((k g + 1/2) / N)), k = 0 .. N-1, with g the integer
 * coprime to N nearest N / phi (golden ratio: the Fibonacci lattice's
 * choice; Niederreiter 1992, "Random number generation and quasi-Monte
 * Carlo methods", ch. 5).  Every row and every column of the N x N grid
 * holds one sample, so an axis-aligned edge is resolved to 1/N of a pixel
 * (the n x n grid it replaces rounded it to 1/n). */
static void lattice(int n, int *N, int *g)
{
    *N = n * n;
    double want = *N / 1.6180339887498949;
    int best = 1;
    for (int c = 1; c <= *N; c++)
        if (gcd(c, *N) == 1 && fabs(c - want) < fabs(best - want)) best = c;
    *g = best;
}

static void geo_init(geo *g, const render_scene *s)
{
    g->s = s;
    const tram_se3 *T = &s->T_sensor_target;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) g->Rt[i][j] = T->m[j][i];
    for (int i = 0; i < 3; i++)
        g->o[i] = -(g->Rt[i][0] * T->m[0][3] + g->Rt[i][1] * T->m[1][3] + g->Rt[i][2] * T->m[2][3]);
    int B = s->border_squares;
    g->a0 = -1 - B;
    g->a1 = s->board.cols - 1 + B;
    g->b0 = -1 - B;
    g->b1 = s->board.rows - 1 + B;
    g->na = g->a1 - g->a0 + 3;
    g->front = g->o[2] < 0.0;
    g->fold_r2 = tram__camera_fold_r2(&s->camera);
    lattice(s->supersample, &g->nlat, &g->glat);
}

static int clampi(double v, int lo, int hi)
{
    if (!(v >= lo)) return lo; /* also NaN */
    if (v > hi) return hi;
    return (int)v;
}

/* Label of the board plane's point along the ray of normalised (x, y):
 * 0 for a ray that misses the plane, else 1 + the index of the (clamped)
 * cell. */
static int ray_label(const geo *g, const double xy[2])
{
    const render_scene *s = g->s;
    double d[3];
    for (int i = 0; i < 3; i++) d[i] = g->Rt[i][0] * xy[0] + g->Rt[i][1] * xy[1] + g->Rt[i][2];
    if (!(fabs(d[2]) > 1e-300)) return 0;
    double lam = -g->o[2] / d[2];
    if (!(lam > 0.0)) return 0; /* the plane is behind the camera along this ray */
    double X = g->o[0] + lam * d[0], Y = g->o[1] + lam * d[1];
    int a = clampi(floor(X / s->board.square), g->a0 - 1, g->a1 + 1);
    int b = clampi(floor(Y / s->board.square), g->b0 - 1, g->b1 + 1);
    return 1 + (b - (g->b0 - 1)) * g->na + (a - (g->a0 - 1));
}

/* Label under pixel position (u, v) (0 also for a pixel no ray inside the
 * lens's fold reaches). */
static int geo_label(const geo *g, double u, double v)
{
    if (!g->s->board_present) return 0;
    double uv[2] = {u, v}, xy[2];
    if (tram__camera_unproject_fold(&g->s->camera, g->fold_r2, uv, xy) != 1) return 0;
    return ray_label(g, xy);
}

/* The same for a sample near a pixel centre whose ray xy0 and inverse
 * distortion Jacobian Ji are known: Gauss-Newton from the first-order
 * prediction, which meets the 1e-12 tolerance in one step instead of the
 * four to six from the pixel itself (the same result). */
static int sample_label(const geo *g, double u, double v, const double uv0[2], const double xy0[2],
                        const double Ji[4])
{
    const tram_camera *c = &g->s->camera;
    double dyd = (v - uv0[1]) / c->fy, dxd = (u - uv0[0] - c->skew * dyd) / c->fx;
    double start[2] = {xy0[0] + Ji[0] * dxd + Ji[1] * dyd, xy0[1] + Ji[2] * dxd + Ji[3] * dyd};
    double xy[2];
    if (start[0] * start[0] + start[1] * start[1] >= g->fold_r2) return geo_label(g, u, v);
    if (tram__camera_unproject_from(c, g->fold_r2, (double[2]){u, v}, start, xy) != 1) return 0;
    return ray_label(g, xy);
}

/* Colour of a label; *on = 1 when it is part of the board. */
static double geo_colour(const geo *g, int label, int *on)
{
    const render_scene *s = g->s;
    *on = 0;
    if (label == 0) return 0.0;
    int a = (label - 1) % g->na + (g->a0 - 1), b = (label - 1) / g->na + (g->b0 - 1);
    if (a < g->a0 || a > g->a1 || b < g->b0 || b > g->b1) return 0.0;
    *on = 1;
    if (!g->front) return s->plate;
    int in_pattern = a >= -1 && a <= s->board.cols - 1 && b >= -1 && b <= s->board.rows - 1;
    /* the square (-1, -1) touching corner 0 on its -x,-y side is black */
    return in_pattern && ((a + b) & 1) == 0 ? s->black : s->white;
}

/* Label of pixel-corner grid point (i, j), i.e. image point (i - 0.5,
 * j - 0.5), computed once (lab[] starts at -1). */
static int corner_label(const geo *g, int *lab, size_t W1, size_t i, size_t j)
{
    int *l = &lab[j * W1 + i];
    if (*l < 0) *l = geo_label(g, (double)i - 0.5, (double)j - 0.5);
    return *l;
}

/* One pixel: uniform when its four corners share a label, else the mean
 * of n x n samples. */
static void board_pixel(const geo *g, int *lab, size_t i, size_t j, float *sum, float *cov)
{
    size_t W = g->s->camera.width, W1 = W + 1;
    int l = corner_label(g, lab, W1, i, j), on;
    if (l == corner_label(g, lab, W1, i + 1, j) && l == corner_label(g, lab, W1, i, j + 1) &&
        l == corner_label(g, lab, W1, i + 1, j + 1)) {
        double c = geo_colour(g, l, &on);
        sum[j * W + i] = on ? (float)c : 0.0f;
        cov[j * W + i] = on ? 1.0f : 0.0f;
        return;
    }
    int N = g->nlat, non = 0;
    double acc = 0.0, uv0[2] = {(double)i, (double)j}, xy0[2], Ji[4] = {1, 0, 0, 1};
    int centre = g->s->board_present && tram__camera_unproject_fold(&g->s->camera, g->fold_r2, uv0, xy0) == 1;
    if (centre) {
        double J[4];
        tram__camera_distort_jacobian(&g->s->camera, xy0[0], xy0[1], J);
        double det = J[0] * J[3] - J[1] * J[2];
        centre = fabs(det) > 1e-12;
        if (centre) {
            Ji[0] = J[3] / det;
            Ji[1] = -J[1] / det;
            Ji[2] = -J[2] / det;
            Ji[3] = J[0] / det;
        }
    }
    for (int k = 0; k < N; k++) {
        double fu = (k + 0.5) / N, fv = fmod((double)k * g->glat + 0.5, (double)N) / N;
        double u = (double)i - 0.5 + fu, v = (double)j - 0.5 + fv;
        int ls = centre ? sample_label(g, u, v, uv0, xy0, Ji) : geo_label(g, u, v);
        double c = geo_colour(g, ls, &on);
        if (on) {
            acc += c;
            non++;
        }
    }
    double inv = 1.0 / (double)N;
    sum[j * W + i] = (float)(acc * inv);
    cov[j * W + i] = (float)(non * inv);
}

/* The board layer: sum[i] = (board colour x area fraction), cov[i] = area
 * fraction of the board, for every pixel.  The same convexity argument
 * as for a pixel lets a whole BLOCK x BLOCK tile whose four corners share a
 * label be filled at once; only the other tiles are looked at pixel by
 * pixel. */
#define BLOCK 4
static int render_board(const geo *g, float *sum, float *cov)
{
    const render_scene *s = g->s;
    size_t W = s->camera.width, H = s->camera.height, W1 = W + 1;
    int *lab = malloc(W1 * (H + 1) * sizeof *lab);
    if (!lab) return -1;
    for (size_t k = 0; k < W1 * (H + 1); k++) lab[k] = -1;
    for (size_t j0 = 0; j0 < H; j0 += BLOCK) {
        size_t j1 = j0 + BLOCK < H ? j0 + BLOCK : H;
        for (size_t i0 = 0; i0 < W; i0 += BLOCK) {
            size_t i1 = i0 + BLOCK < W ? i0 + BLOCK : W;
            int l = corner_label(g, lab, W1, i0, j0), on;
            if (l == corner_label(g, lab, W1, i1, j0) && l == corner_label(g, lab, W1, i0, j1) &&
                l == corner_label(g, lab, W1, i1, j1)) {
                double c = geo_colour(g, l, &on);
                for (size_t j = j0; j < j1; j++)
                    for (size_t i = i0; i < i1; i++) {
                        sum[j * W + i] = on ? (float)c : 0.0f;
                        cov[j * W + i] = on ? 1.0f : 0.0f;
                    }
                continue;
            }
            for (size_t j = j0; j < j1; j++)
                for (size_t i = i0; i < i1; i++) board_pixel(g, lab, i, j, sum, cov);
        }
    }
    free(lab);
    return 0;
}

/* ---------------------------------------------------------------------------
 * Shapes of the background clutter and the occluder, drawn in image space
 * with 4 x 4 samples per pixel. */
enum { SHAPE_RECT, SHAPE_LINE, SHAPE_BLOB, SHAPE_CHECKER, SHAPE_KINDS };

typedef struct shape {
    int kind;
    double cx, cy, hx, hy, cs, sn; /* centre, half sizes, orientation (rect, checker) */
    double x1, y1, w;             /* line: from (cx, cy) to (x1, y1), width w */
    double r0, a2, p2, a3, p3;    /* blob: r(t) = r0 (1 + a2 sin(2t + p2) + a3 sin(3t + p3)) */
    double cell;                  /* checker: cell size */
    double level, level2;
} shape;

static double blob_radius(const shape *sh, double t)
{
    return sh->r0 * (1.0 + sh->a2 * sin(2.0 * t + sh->p2) + sh->a3 * sin(3.0 * t + sh->p3));
}

/* 1 when (u, v) is in the shape, with its grey level. */
static int shape_hit(const shape *sh, double u, double v, double *level)
{
    double dx = u - sh->cx, dy = v - sh->cy;
    *level = sh->level;
    switch (sh->kind) {
    case SHAPE_RECT:
    case SHAPE_CHECKER: {
        double lx = sh->cs * dx + sh->sn * dy, ly = -sh->sn * dx + sh->cs * dy;
        if (fabs(lx) > sh->hx || fabs(ly) > sh->hy) return 0;
        if (sh->kind == SHAPE_CHECKER) {
            long k = (long)floor((lx + sh->hx) / sh->cell) + (long)floor((ly + sh->hy) / sh->cell);
            if (k & 1) *level = sh->level2;
        }
        return 1;
    }
    case SHAPE_LINE: {
        double ex = sh->x1 - sh->cx, ey = sh->y1 - sh->cy, L2 = ex * ex + ey * ey;
        double t = L2 > 0 ? (dx * ex + dy * ey) / L2 : 0.0;
        t = t < 0 ? 0 : t > 1 ? 1 : t;
        double qx = dx - t * ex, qy = dy - t * ey;
        return qx * qx + qy * qy <= 0.25 * sh->w * sh->w;
    }
    default: /* SHAPE_BLOB */
        return sqrt(dx * dx + dy * dy) <= blob_radius(sh, atan2(dy, dx));
    }
}

/* Whole-pixel test at pixel centre (u, v): 1 all in, 0 all out, -1 mixed
 * (sample it).  The margin 0.75 px exceeds the half diagonal of a pixel. */
static int shape_classify(const shape *sh, double u, double v, double *level)
{
    const double m = 0.75;
    double dx = u - sh->cx, dy = v - sh->cy, d;
    *level = sh->level;
    switch (sh->kind) {
    case SHAPE_RECT:
    case SHAPE_CHECKER: {
        double lx = sh->cs * dx + sh->sn * dy, ly = -sh->sn * dx + sh->cs * dy;
        d = fmax(fabs(lx) - sh->hx, fabs(ly) - sh->hy); /* <0 inside; exact enough off corners */
        if (d > m) return 0;
        if (d > -m) return -1;
        if (sh->kind == SHAPE_CHECKER) {
            double fx = fmod(lx + sh->hx, sh->cell), fy = fmod(ly + sh->hy, sh->cell);
            if (fx < m || fx > sh->cell - m || fy < m || fy > sh->cell - m) return -1;
            return shape_hit(sh, u, v, level);
        }
        return 1;
    }
    case SHAPE_LINE: {
        double ex = sh->x1 - sh->cx, ey = sh->y1 - sh->cy, L2 = ex * ex + ey * ey;
        double t = L2 > 0 ? (dx * ex + dy * ey) / L2 : 0.0;
        t = t < 0 ? 0 : t > 1 ? 1 : t;
        d = hypot(dx - t * ex, dy - t * ey) - 0.5 * sh->w;
        return d > m ? 0 : d < -m ? 1 : -1;
    }
    default: { /* SHAPE_BLOB: r(t) changes slowly; a wider margin covers its slope */
        double rho = hypot(dx, dy);
        d = rho - blob_radius(sh, atan2(dy, dx));
        double mb = m + 0.5 * sh->r0 * (2.0 * fabs(sh->a2) + 3.0 * fabs(sh->a3)) * m / fmax(rho, 1.0);
        return d > mb ? 0 : d < -mb ? 1 : -1;
    }
    }
}

static void shape_bbox(const shape *sh, double box[4])
{
    double r;
    if (sh->kind == SHAPE_LINE) {
        box[0] = fmin(sh->cx, sh->x1) - sh->w;
        box[1] = fmin(sh->cy, sh->y1) - sh->w;
        box[2] = fmax(sh->cx, sh->x1) + sh->w;
        box[3] = fmax(sh->cy, sh->y1) + sh->w;
        return;
    }
    if (sh->kind == SHAPE_BLOB) r = sh->r0 * (1.0 + fabs(sh->a2) + fabs(sh->a3));
    else r = sqrt(sh->hx * sh->hx + sh->hy * sh->hy);
    box[0] = sh->cx - r - 1;
    box[1] = sh->cy - r - 1;
    box[2] = sh->cx + r + 1;
    box[3] = sh->cy + r + 1;
}

/* layer := layer over-painted by the shape (area-weighted). */
static void draw_shape(float *layer, size_t W, size_t H, const shape *sh)
{
    double box[4];
    shape_bbox(sh, box);
    long i0 = (long)floor(box[0]), i1 = (long)ceil(box[2]);
    long j0 = (long)floor(box[1]), j1 = (long)ceil(box[3]);
    if (i0 < 0) i0 = 0;
    if (j0 < 0) j0 = 0;
    if (i1 > (long)W - 1) i1 = (long)W - 1;
    if (j1 > (long)H - 1) j1 = (long)H - 1;
    for (long j = j0; j <= j1; j++) {
        for (long i = i0; i <= i1; i++) {
            double acc = 0.0, lev;
            int hits = 0, whole = shape_classify(sh, (double)i, (double)j, &lev);
            if (whole == 0) continue;
            if (whole == 1) {
                layer[(size_t)j * W + (size_t)i] = (float)lev;
                continue;
            }
            for (int sj = 0; sj < 4; sj++)
                for (int si = 0; si < 4; si++)
                    if (shape_hit(sh, (double)i - 0.375 + 0.25 * si, (double)j - 0.375 + 0.25 * sj,
                                  &lev)) {
                        acc += lev;
                        hits++;
                    }
            if (!hits) continue;
            float *p = &layer[(size_t)j * W + (size_t)i];
            *p = (float)(acc / 16.0 + (1.0 - hits / 16.0) * *p);
        }
    }
}

/* A random clutter shape in a W x H image. */
static void random_shape(rng *r, size_t W, size_t H, shape *sh)
{
    double size = fmin((double)W, (double)H);
    memset(sh, 0, sizeof *sh);
    sh->kind = (int)(rng_uniform(r) * SHAPE_KINDS) % SHAPE_KINDS;
    sh->cx = rng_range(r, 0, (double)W);
    sh->cy = rng_range(r, 0, (double)H);
    double a = rng_range(r, 0, TRAM_PI);
    sh->cs = cos(a);
    sh->sn = sin(a);
    sh->level = rng_range(r, 0, 255);
    sh->level2 = fmod(sh->level + 90 + rng_range(r, 0, 75), 255.0);
    sh->hx = rng_range(r, 0.01, 0.1) * size;
    sh->hy = rng_range(r, 0.01, 0.1) * size;
    switch (sh->kind) {
    case SHAPE_LINE:
        sh->x1 = sh->cx + rng_range(r, -0.3, 0.3) * size;
        sh->y1 = sh->cy + rng_range(r, -0.3, 0.3) * size;
        sh->w = rng_range(r, 1.0, 0.015 * size + 2.0);
        break;
    case SHAPE_BLOB:
        sh->r0 = rng_range(r, 0.01, 0.08) * size;
        sh->a2 = rng_range(r, 0, 0.3);
        sh->p2 = rng_range(r, 0, 2 * TRAM_PI);
        sh->a3 = rng_range(r, 0, 0.15);
        sh->p3 = rng_range(r, 0, 2 * TRAM_PI);
        break;
    case SHAPE_CHECKER: { /* 2 x 2 or 3 x 2 cells: at most 2 inner corners */
        sh->cell = rng_range(r, 0.015, 0.05) * size;
        int nx = rng_uniform(r) < 0.5 ? 2 : 3;
        sh->hx = 0.5 * nx * sh->cell;
        sh->hy = sh->cell;
        break;
    }
    default:
        break;
    }
}

/* ---------------------------------------------------------------------------
 * True corners and the occluder. */
static int project_target(const render_scene *s, const double p_t[3], double uv[2])
{
    double p_s[3];
    tram_se3_apply_point(&s->T_sensor_target, p_t, p_s);
    return tram_camera_project(&s->camera, p_s, uv);
}

/* The occluder of the scene (deterministic in the seed). */
static void build_occluder(const render_scene *s, double square_px, shape *sh)
{
    rng r = rng_stream(s->seed, 3);
    memset(sh, 0, sizeof *sh);
    sh->kind = SHAPE_BLOB;
    sh->level = s->occluder_level;
    double X = rng_range(&r, 0, (s->board.cols - 1) * s->board.square);
    double Y = rng_range(&r, 0, (s->board.rows - 1) * s->board.square);
    double uv[2] = {0.5 * (double)s->camera.width, 0.5 * (double)s->camera.height};
    (void)project_target(s, (double[3]){X, Y, 0.0}, uv);
    sh->cx = isnan(s->occluder_uv[0]) ? uv[0] : s->occluder_uv[0];
    sh->cy = isnan(s->occluder_uv[1]) ? uv[1] : s->occluder_uv[1];
    sh->r0 = s->occluder_radius_px > 0 ? s->occluder_radius_px : 1.5 * square_px;
    sh->a2 = rng_range(&r, 0.1, 0.25);
    sh->p2 = rng_range(&r, 0, 2 * TRAM_PI);
    sh->a3 = rng_range(&r, 0.0, 0.12);
    sh->p3 = rng_range(&r, 0, 2 * TRAM_PI);
}

void render_truth_free(render_truth *t)
{
    if (!t) return;
    free(t->uv);
    free(t->inside);
    free(t->occluded);
    memset(t, 0, sizeof *t);
}

int render_truth_compute(const render_scene *s, render_truth *t)
{
    memset(t, 0, sizeof *t);
    int C = s->board.cols, R = s->board.rows;
    if (C < 2 || R < 2 || !(s->board.square > 0)) return -1;
    size_t n = (size_t)C * (size_t)R;
    t->ncorners = n;
    t->uv = calloc(2 * n, sizeof *t->uv);
    t->inside = calloc(n, 1);
    t->occluded = calloc(n, 1);
    if (!t->uv || !t->inside || !t->occluded) {
        render_truth_free(t);
        return -1;
    }
    geo g;
    geo_init(&g, s);
    t->front = g.front;
    double W = (double)s->camera.width, H = (double)s->camera.height, dsum = 0.0;
    size_t dn = 0;
    for (int r = 0; r < R; r++) {
        for (int c = 0; c < C; c++) {
            size_t id = (size_t)r * (size_t)C + (size_t)c;
            double p[3] = {c * s->board.square, r * s->board.square, 0.0};
            double *uv = &t->uv[2 * id];
            if (!project_target(s, p, uv)) {
                uv[0] = uv[1] = NAN;
                continue;
            }
            t->inside[id] = s->board_present && uv[0] >= 0 && uv[0] <= W - 1 && uv[1] >= 0 &&
                            uv[1] <= H - 1;
            if (c > 0 && !isnan(uv[-2])) {
                dsum += hypot(uv[0] - uv[-2], uv[1] - uv[-1]);
                dn++;
            }
            if (r > 0 && !isnan(t->uv[2 * (id - (size_t)C)])) {
                dsum += hypot(uv[0] - t->uv[2 * (id - (size_t)C)], uv[1] - t->uv[2 * (id - (size_t)C) + 1]);
                dn++;
            }
        }
    }
    t->square_px = dn ? dsum / (double)dn : 0.0;
    shape occ;
    if (s->occluder) build_occluder(s, t->square_px, &occ);
    for (size_t id = 0; id < n; id++) {
        if (s->occluder && !isnan(t->uv[2 * id])) {
            double dx = t->uv[2 * id] - occ.cx, dy = t->uv[2 * id + 1] - occ.cy;
            t->occluded[id] = sqrt(dx * dx + dy * dy) <= blob_radius(&occ, atan2(dy, dx)) + 3.0;
        }
        t->ninside += t->inside[id];
        t->nvisible += t->inside[id] && !t->occluded[id] && t->front;
    }
    return 0;
}

/* ---------------------------------------------------------------------------
 * Lighting, blur and noise. */
static void apply_gain(const render_scene *s, float *img)
{
    if (s->gain_min == 1.0 && s->gain_max == 1.0 && s->vignetting == 0.0) return;
    size_t W = s->camera.width, H = s->camera.height;
    double ca = cos(s->gain_angle_deg * DEG), sa = sin(s->gain_angle_deg * DEG);
    double ext = fabs(ca) * (double)(W - 1) + fabs(sa) * (double)(H - 1);
    if (ext <= 0) ext = 1;
    /* squared distance from the principal point to the farthest image corner */
    double ex = fmax(s->camera.cx + 0.5, (double)W - 0.5 - s->camera.cx);
    double ey = fmax(s->camera.cy + 0.5, (double)H - 0.5 - s->camera.cy);
    double rc2 = ex * ex + ey * ey;
    for (size_t j = 0; j < H; j++)
        for (size_t i = 0; i < W; i++) {
            double t = ((double)i - 0.5 * (double)(W - 1)) * ca + ((double)j - 0.5 * (double)(H - 1)) * sa;
            double gain = s->gain_min + (s->gain_max - s->gain_min) * (t / ext + 0.5);
            double du = (double)i - s->camera.cx, dv = (double)j - s->camera.cy;
            gain *= 1.0 - s->vignetting * (du * du + dv * dv) / rc2;
            img[j * W + i] = (float)(img[j * W + i] * gain);
        }
}

/* Separable Gaussian blur of sigma px, edges extended. */
static int blur(float *img, size_t W, size_t H, double sigma)
{
    if (!(sigma > 0)) return 0;
    int rad = (int)ceil(3.5 * sigma);
    double *k = malloc((size_t)(2 * rad + 1) * sizeof *k);
    float *line = malloc((W > H ? W : H) * sizeof *line);
    if (!k || !line) {
        free(k);
        free(line);
        return -1;
    }
    double ks = 0;
    for (int i = -rad; i <= rad; i++) ks += k[i + rad] = exp(-0.5 * i * i / (sigma * sigma));
    for (int i = 0; i <= 2 * rad; i++) k[i] /= ks;
    for (int pass = 0; pass < 2; pass++) {
        size_t nlines = pass ? W : H, len = pass ? H : W, stride = pass ? W : 1;
        size_t step = pass ? 1 : W;
        for (size_t l = 0; l < nlines; l++) {
            float *base = img + l * step;
            for (size_t x = 0; x < len; x++) line[x] = base[x * stride];
            for (size_t x = 0; x < len; x++) {
                double acc = 0;
                for (int d = -rad; d <= rad; d++) {
                    long xx = (long)x + d;
                    if (xx < 0) xx = 0;
                    if (xx > (long)len - 1) xx = (long)len - 1;
                    acc += k[d + rad] * line[xx];
                }
                base[x * stride] = (float)acc;
            }
        }
    }
    free(k);
    free(line);
    return 0;
}

static void add_noise(const render_scene *s, float *img, size_t n)
{
    rng r = rng_stream(s->seed, 1);
    double z[2];
    for (size_t i = 0; i < n; i++) {
        if (s->noise_sigma > 0) {
            if (!(i & 1)) rng_normal2(&r, z);
            img[i] = (float)(img[i] + s->noise_sigma * z[i & 1]);
        }
        if (s->clip) img[i] = img[i] < 0 ? 0.0f : img[i] > 255 ? 255.0f : img[i];
    }
}

/* ---------------------------------------------------------------------------
 * The whole image. */
static tram_status check_scene(const render_scene *s, tram_error *err)
{
    const tram_camera *c = &s->camera;
    if (c->width == 0 || c->height == 0 || c->width > 20000 || c->height > 20000)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "render: image size %zux%zu", c->width,
                          c->height);
    if (!(c->fx > 0) || !(c->fy > 0))
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "render: focal lengths must be positive");
    if (s->board.cols < 2 || s->board.rows < 2 || s->board.cols > 1000 || s->board.rows > 1000 ||
        !(s->board.square > 0))
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "render: board of %d x %d corners, square %g",
                          s->board.cols, s->board.rows, s->board.square);
    if (s->supersample < 1 || s->supersample > 64 || s->border_squares < 1 ||
        s->border_squares > 100 || s->clutter < 0 || s->blur_sigma_px > 50 || s->noise_sigma < 0 ||
        !(s->vignetting >= 0 && s->vignetting < 1))
        return tram__fail(err, TRAM_EINPUT, "", 0, 0,
                          "render: supersample 1..64, border 1..100 squares, clutter >= 0, "
                          "blur <= 50 px, noise >= 0, vignetting 0..1");
    return TRAM_OK;
}

tram_status render_chessboard(const render_scene *s, tram_grey_image **out, render_truth *truth,
                              tram_error *err)
{
    *out = NULL;
    if (truth) memset(truth, 0, sizeof *truth);
    tram_status st = check_scene(s, err);
    if (st != TRAM_OK) return st;
    size_t W = s->camera.width, H = s->camera.height, N = W * H;
    render_truth tr;
    tram_grey_image *im = render_image_create(W, H);
    float *cov = malloc(N * sizeof *cov), *bg = malloc(N * sizeof *bg);
    if (!im || !cov || !bg || render_truth_compute(s, &tr) != 0) {
        render_image_destroy(im);
        free(cov);
        free(bg);
        return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "render: out of memory");
    }
    float *img = im->pixels;
    geo g;
    geo_init(&g, s);
    int fail = render_board(&g, img, cov);
    for (size_t i = 0; i < N; i++) bg[i] = (float)s->background;
    rng r = rng_stream(s->seed, 2);
    for (int k = 0; k < s->clutter; k++) {
        shape sh;
        random_shape(&r, W, H, &sh);
        draw_shape(bg, W, H, &sh);
    }
    for (size_t i = 0; i < N; i++) img[i] += (1.0f - cov[i]) * bg[i];
    if (s->occluder) {
        shape occ;
        build_occluder(s, tr.square_px, &occ);
        draw_shape(img, W, H, &occ);
    }
    apply_gain(s, img);
    fail |= blur(img, W, H, s->blur_sigma_px);
    add_noise(s, img, N);
    free(cov);
    free(bg);
    if (fail) {
        render_image_destroy(im);
        render_truth_free(&tr);
        return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "render: out of memory");
    }
    if (truth) *truth = tr;
    else render_truth_free(&tr);
    *out = im;
    return TRAM_OK;
}
