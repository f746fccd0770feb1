/*
 * grid.c - the board's lattice among the saddle points, grown locally,
 * and its order by the board convention (tram/image.h).
 *
 * Growth: a seed saddle point takes as neighbours the nearest saddle
 * points along its four edge rays (where its ring crosses its mean,
 * src/image/saddle.c).  Two saddle points are linked when each lies on an
 * edge ray of the other, the square between them has the same colour seen
 * from both, and the image across the midpoint of the segment shows that
 * edge.  From the seed, each empty lattice cell next to the lattice gets a
 * predicted position - one step on from two or three lattice neighbours
 * in a row (the step scaled by the change of spacing and turned by the
 * change of direction, which follows perspective and lens distortion to
 * second order) and the fourth corner of the parallelograms of known
 * cells - and takes the nearest saddle point within a third of a square
 * that links to all its lattice neighbours.  Growth is local, so no single
 * homography is assumed over the board (strong tilt, barrel distortion).
 *
 * Order: the lattice must be exactly cols x rows (or rows x cols); of its
 * eight symmetries those with the board's size remain, of these the ones
 * whose x, y axes turn like u, v in the image (the board's z = x cross y
 * points away from the camera), and of these two (half a turn apart) the
 * one whose squares are black where the convention says: the square at
 * (a, b) .. (a+1, b+1) is black when a + b is even, so the two disagree on
 * every square because cols + rows is odd.
 */
#include "image/grid_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "core/tram_internal.h"

#define MAX_SEEDS 400
#define RAY_TOL (17.0 * TRAM_PI / 180.0)

typedef struct grid {
    const tram__saddles *S;
    double W, H, dmin;
    /* buckets of saddle points */
    double cs;
    size_t nbx, nby;
    size_t *bstart, *bitem;
    /* lattice: G x G cells of saddle indices (-1 empty) */
    int G;
    int *cell;
    int *owner;          /* per saddle: cell index or -1 */
    int imin, imax, jmin, jmax;
    size_t count;
} grid;

static double wrap2pi(double a)
{
    a = fmod(a, 2.0 * TRAM_PI);
    return a < 0 ? a + 2.0 * TRAM_PI : a;
}

static double ang_dist(double a, double b)
{
    double d = fabs(wrap2pi(a - b));
    return d > TRAM_PI ? 2.0 * TRAM_PI - d : d;
}

static int near_cross(const tram__saddle *s, double th)
{
    for (int k = 0; k < 4; k++)
        if (ang_dist(s->cross[k], th) < RAY_TOL) return k;
    return -1;
}

static int link_ok(const grid *g, int ia, int ib)
{
    const tram__saddle *A = &g->S->s[ia], *B = &g->S->s[ib];
    double dx = B->u - A->u, dy = B->v - A->v, len = hypot(dx, dy);
    if (len < g->dmin) return 0;
    double th = atan2(dy, dx);
    int ka = near_cross(A, th), kb = near_cross(B, th + TRAM_PI);
    if (ka < 0 || kb < 0) return 0;
    /* the square ccw of the ray A->B at A is cw of the ray B->A at B */
    int dark = tram__saddle_dark(A, ka);
    if (dark != tram__saddle_dark(B, (kb + 3) % 4)) return 0;
    double nx = -dy / len, ny = dx / len, h = 0.25 * len;
    double mx = 0.5 * (A->u + B->u), my = 0.5 * (A->v + B->v);
    double ip = tram__level_sample(&g->S->level, mx + h * nx, my + h * ny);
    double im = tram__level_sample(&g->S->level, mx - h * nx, my - h * ny);
    double diff = dark ? im - ip : ip - im;
    double c = A->contrast < B->contrast ? A->contrast : B->contrast;
    return diff >= 0.5 * c;
}

/* ---- buckets ------------------------------------------------------------------ */

static tram_status buckets_build(grid *g)
{
    const tram__saddles *S = g->S;
    g->nbx = (size_t)(g->W / g->cs) + 1;
    g->nby = (size_t)(g->H / g->cs) + 1;
    size_t nb = g->nbx * g->nby;
    g->bstart = tram__calloc(nb + 1, sizeof *g->bstart);
    g->bitem = tram__malloc((S->n ? S->n : 1) * sizeof *g->bitem);
    if (!g->bstart || !g->bitem) return TRAM_ENOMEM;
    size_t *key = tram__malloc((S->n ? S->n : 1) * sizeof *key);
    if (!key) return TRAM_ENOMEM;
    for (size_t i = 0; i < S->n; i++) {
        double bx = S->s[i].u / g->cs, by = S->s[i].v / g->cs;
        size_t x = bx < 0 ? 0 : (size_t)bx, y = by < 0 ? 0 : (size_t)by;
        if (x >= g->nbx) x = g->nbx - 1;
        if (y >= g->nby) y = g->nby - 1;
        key[i] = y * g->nbx + x;
        g->bstart[key[i] + 1]++;
    }
    for (size_t b = 0; b < nb; b++) g->bstart[b + 1] += g->bstart[b];
    size_t *fill = tram__malloc((nb ? nb : 1) * sizeof *fill);
    if (!fill) {
        tram__free(key);
        return TRAM_ENOMEM;
    }
    memcpy(fill, g->bstart, nb * sizeof *fill);
    for (size_t i = 0; i < S->n; i++) g->bitem[fill[key[i]]++] = i;
    tram__free(fill);
    tram__free(key);
    return TRAM_OK;
}

/* The free saddle point nearest to (u, v) within rad that links to every
 * index in nb[0..nn) (and, when ray >= 0, lies within RAY_TOL of that
 * direction from (u, v)). */
static int nearest_linked(const grid *g, double u, double v, double rad, const int *nb, int nn,
                          double ray)
{
    long bx0 = (long)floor((u - rad) / g->cs), bx1 = (long)floor((u + rad) / g->cs);
    long by0 = (long)floor((v - rad) / g->cs), by1 = (long)floor((v + rad) / g->cs);
    if (bx0 < 0) bx0 = 0;
    if (by0 < 0) by0 = 0;
    if (bx1 >= (long)g->nbx) bx1 = (long)g->nbx - 1;
    if (by1 >= (long)g->nby) by1 = (long)g->nby - 1;
    /* collect, then try in order of distance */
    int cand[64];
    double cd[64];
    int nc = 0;
    for (long by = by0; by <= by1; by++)
        for (long bx = bx0; bx <= bx1; bx++) {
            size_t b = (size_t)by * g->nbx + (size_t)bx;
            for (size_t q = g->bstart[b]; q < g->bstart[b + 1]; q++) {
                int i = (int)g->bitem[q];
                if (g->owner[i] >= 0) continue;
                const tram__saddle *s = &g->S->s[i];
                double d = hypot(s->u - u, s->v - v);
                if (d > rad) continue;
                if (ray >= 0 && (d < g->dmin || ang_dist(atan2(s->v - v, s->u - u), ray) > RAY_TOL))
                    continue;
                /* keep the 64 nearest, sorted */
                int at = nc < 64 ? nc : 63;
                if (nc == 64 && d >= cd[63]) continue;
                while (at > 0 && cd[at - 1] > d) {
                    cand[at] = cand[at - 1];
                    cd[at] = cd[at - 1];
                    at--;
                }
                cand[at] = i;
                cd[at] = d;
                if (nc < 64) nc++;
            }
        }
    for (int c = 0; c < nc; c++) {
        int ok = 1;
        for (int k = 0; k < nn && ok; k++) ok = link_ok(g, nb[k], cand[c]);
        if (ok) return cand[c];
    }
    return -1;
}

/* ---- lattice -------------------------------------------------------------------- */

static int get(const grid *g, int i, int j)
{
    if (i < 0 || j < 0 || i >= g->G || j >= g->G) return -1;
    return g->cell[j * g->G + i];
}

static void put(grid *g, int i, int j, int s)
{
    g->cell[j * g->G + i] = s;
    g->owner[s] = j * g->G + i;
    if (!g->count) {
        g->imin = g->imax = i;
        g->jmin = g->jmax = j;
    }
    if (i < g->imin) g->imin = i;
    if (i > g->imax) g->imax = i;
    if (j < g->jmin) g->jmin = j;
    if (j > g->jmax) g->jmax = j;
    g->count++;
}

static void clear(grid *g)
{
    for (int j = g->jmin; g->count && j <= g->jmax; j++)
        for (int i = g->imin; i <= g->imax; i++) {
            int s = get(g, i, j);
            if (s >= 0) {
                g->owner[s] = -1;
                g->cell[j * g->G + i] = -1;
            }
        }
    g->count = 0;
}

static void pos(const grid *g, int s, double p[2])
{
    p[0] = g->S->s[s].u;
    p[1] = g->S->s[s].v;
}

/* Predicted position of cell (i, j) and the local spacing; 0 when no row
 * of two or parallelogram of three known cells leads there. */
static int predict(const grid *g, int i, int j, double p[2], double *spacing)
{
    static const int dir[4][2] = {{-1, 0}, {1, 0}, {0, -1}, {0, 1}};
    double sx = 0, sy = 0, sp = 1e300;
    int n = 0;
    for (int d = 0; d < 4; d++) {
        int a = get(g, i + dir[d][0], j + dir[d][1]);
        int b = get(g, i + 2 * dir[d][0], j + 2 * dir[d][1]);
        if (a < 0 || b < 0) continue;
        int c = get(g, i + 3 * dir[d][0], j + 3 * dir[d][1]);
        double A[2], B[2], vx, vy;
        pos(g, a, A);
        pos(g, b, B);
        vx = A[0] - B[0];
        vy = A[1] - B[1];
        double lv = hypot(vx, vy);
        if (c >= 0) {
            double C[2];
            pos(g, c, C);
            double wx = B[0] - C[0], wy = B[1] - C[1], lw = hypot(wx, wy);
            double ratio = lw > 0 ? lv / lw : 1.0;
            ratio = ratio < 0.7 ? 0.7 : ratio > 1.4 ? 1.4 : ratio;
            double turn = atan2(wx * vy - wy * vx, wx * vx + wy * vy);
            turn = turn < -0.35 ? -0.35 : turn > 0.35 ? 0.35 : turn;
            double cs = cos(turn), sn = sin(turn);
            double rx = (cs * vx - sn * vy) * ratio, ry = (sn * vx + cs * vy) * ratio;
            vx = rx;
            vy = ry;
        }
        sx += A[0] + vx;
        sy += A[1] + vy;
        if (lv < sp) sp = lv;
        n++;
    }
    for (int di = -1; di <= 1; di += 2)
        for (int dj = -1; dj <= 1; dj += 2) {
            int a = get(g, i + di, j), b = get(g, i, j + dj), c = get(g, i + di, j + dj);
            if (a < 0 || b < 0 || c < 0) continue;
            double A[2], B[2], C[2];
            pos(g, a, A);
            pos(g, b, B);
            pos(g, c, C);
            sx += A[0] + B[0] - C[0];
            sy += A[1] + B[1] - C[1];
            double l1 = hypot(A[0] - C[0], A[1] - C[1]), l2 = hypot(B[0] - C[0], B[1] - C[1]);
            if (l1 < sp) sp = l1;
            if (l2 < sp) sp = l2;
            n++;
        }
    if (!n) return 0;
    p[0] = sx / n;
    p[1] = sy / n;
    *spacing = sp;
    return 1;
}

/* One pass over the cells next to the lattice; returns how many were added. */
static int grow_pass(grid *g, int max_extent)
{
    static const int dir[4][2] = {{-1, 0}, {1, 0}, {0, -1}, {0, 1}};
    int added = 0;
    int i0 = g->imin - 1, i1 = g->imax + 1, j0 = g->jmin - 1, j1 = g->jmax + 1;
    for (int j = j0; j <= j1; j++)
        for (int i = i0; i <= i1; i++) {
            if (i < 0 || j < 0 || i >= g->G || j >= g->G || get(g, i, j) >= 0) continue;
            int ei = (i < g->imin ? g->imin - i : i > g->imax ? i - g->imax : 0);
            int ej = (j < g->jmin ? g->jmin - j : j > g->jmax ? j - g->jmax : 0);
            if ((ei && g->imax - g->imin + 1 >= max_extent) ||
                (ej && g->jmax - g->jmin + 1 >= max_extent))
                continue;
            int nb[4], nn = 0;
            for (int d = 0; d < 4; d++) {
                int s = get(g, i + dir[d][0], j + dir[d][1]);
                if (s >= 0) nb[nn++] = s;
            }
            if (!nn) continue;
            double p[2], sp;
            if (!predict(g, i, j, p, &sp)) continue;
            int s = nearest_linked(g, p[0], p[1], 0.33 * sp, nb, nn, -1.0);
            if (s < 0) continue;
            put(g, i, j, s);
            added++;
        }
    return added;
}

/* Seed at saddle a: its nearest linked neighbours along its four rays. */
static int seed(grid *g, int a)
{
    const tram__saddle *A = &g->S->s[a];
    int nbr[4], have = 0;
    double dist[4];
    double reach = 0.5 * (g->W > g->H ? g->W : g->H);
    g->owner[a] = 0;    /* not a candidate for its own rays */
    for (int k = 0; k < 4; k++) {
        /* widen the search until a linked neighbour turns up */
        nbr[k] = -1;
        for (double rad = 4.0 * g->dmin; rad < 2.0 * reach && nbr[k] < 0; rad *= 2.0)
            nbr[k] = nearest_linked(g, A->u, A->v, rad, &a, 1, A->cross[k]);
        if (nbr[k] >= 0) {
            have++;
            dist[k] = hypot(g->S->s[nbr[k]].u - A->u, g->S->s[nbr[k]].v - A->v);
        }
    }
    g->owner[a] = -1;
    if (have < 3) return 0;
    for (int k = 0; k < 4; k++)
        for (int l = k + 1; l < 4; l++) {
            if (nbr[k] < 0 || nbr[l] < 0) continue;
            if (nbr[k] == nbr[l]) return 0;
            double r = dist[k] / dist[l], lim = (l - k) == 2 ? 2.0 : 3.0;
            if (r > lim || r < 1.0 / lim) return 0;
        }
    int M = g->G / 2;
    put(g, M, M, a);
    static const int at[4][2] = {{1, 0}, {0, 1}, {-1, 0}, {0, -1}};
    for (int k = 0; k < 4; k++)
        if (nbr[k] >= 0) put(g, M + at[k][0], M + at[k][1], nbr[k]);
    return 1;
}

/* ---- order and reasons ------------------------------------------------------------ */

static tram_status order(const grid *g, const tram_board *b, tram__grid_result *res)
{
    int cols = b->cols, rows = b->rows, ni = g->imax - g->imin + 1;
    int t = ni == cols ? 0 : 1;
    size_t N = (size_t)cols * (size_t)rows;
    int best_f = -1;
    size_t best_agree = 0;
    for (int f = 0; f < 4; f++) {
        int fc = f & 1, fr = f >> 1;
        double handed = 0;
        size_t agree = 0;
#define AT(c, r, P)                                                                               \
    do {                                                                                          \
        int ii_ = t ? (fr ? rows - 1 - (r) : (r)) : (fc ? cols - 1 - (c) : (c));                  \
        int jj_ = t ? (fc ? cols - 1 - (c) : (c)) : (fr ? rows - 1 - (r) : (r));                  \
        pos(g, get(g, g->imin + ii_, g->jmin + jj_), P);                                          \
    } while (0)
        for (int r = 0; r < rows; r++)
            for (int c = 0; c < cols; c++) {
                double P[2], E[2], F[2];
                AT(c, r, P);
                if (c + 1 < cols) AT(c + 1, r, E);
                else {
                    AT(c - 1, r, E);
                    E[0] = 2 * P[0] - E[0];
                    E[1] = 2 * P[1] - E[1];
                }
                if (r + 1 < rows) AT(c, r + 1, F);
                else {
                    AT(c, r - 1, F);
                    F[0] = 2 * P[0] - F[0];
                    F[1] = 2 * P[1] - F[1];
                }
                double ex = E[0] - P[0], ey = E[1] - P[1], fx = F[0] - P[0], fy = F[1] - P[1];
                handed += ex * fy - ey * fx;
                const tram__level *lv = &g->S->level;
                double d1 = tram__level_sample(lv, P[0] + 0.3 * (ex + fx), P[1] + 0.3 * (ey + fy)) +
                            tram__level_sample(lv, P[0] - 0.3 * (ex + fx), P[1] - 0.3 * (ey + fy));
                double d2 = tram__level_sample(lv, P[0] + 0.3 * (ex - fx), P[1] + 0.3 * (ey - fy)) +
                            tram__level_sample(lv, P[0] - 0.3 * (ex - fx), P[1] - 0.3 * (ey - fy));
                /* square (c, r) .. (c+1, r+1) is black when c + r is even */
                if ((d1 < d2) == ((c + r) % 2 == 0)) agree++;
            }
        if (handed > 0 && (best_f < 0 || agree > best_agree)) {
            best_f = f;
            best_agree = agree;
        }
    }
    if (best_f < 0 || best_agree * 10 < N * 9) {
        snprintf(res->reason, sizeof res->reason,
                 "a %d x %d lattice of corners was found but the colours of its squares do not "
                 "fit the board (black square at corner 0)", cols, rows);
        return TRAM_OK;
    }
    res->uv = tram__malloc(2 * N * sizeof *res->uv);
    if (!res->uv) return TRAM_ENOMEM;
    int fc = best_f & 1, fr = best_f >> 1;
    for (int r = 0; r < rows; r++)
        for (int c = 0; c < cols; c++) AT(c, r, res->uv + 2 * ((size_t)r * (size_t)cols + (size_t)c));
#undef AT
    res->found = 1;
    return TRAM_OK;
}

/* Which image edges the lattice would cross one step beyond its sides. */
static void off_edges(const grid *g, int flags[4])
{
    double m = g->S->ring_px;
    for (int j = g->jmin; j <= g->jmax; j++)
        for (int i = g->imin; i <= g->imax; i++) {
            int s = get(g, i, j);
            if (s < 0) continue;
            static const int dir[4][2] = {{-1, 0}, {1, 0}, {0, -1}, {0, 1}};
            for (int d = 0; d < 4; d++) {
                if (get(g, i + dir[d][0], j + dir[d][1]) >= 0) continue;
                int o = get(g, i - dir[d][0], j - dir[d][1]);
                if (o < 0) continue;
                double P[2], O[2];
                pos(g, s, P);
                pos(g, o, O);
                double qx = 2 * P[0] - O[0], qy = 2 * P[1] - O[1];
                if (qx < m) flags[0] = 1;
                if (qx > g->W - 1 - m) flags[1] = 1;
                if (qy < m) flags[2] = 1;
                if (qy > g->H - 1 - m) flags[3] = 1;
            }
        }
}

static void partial_reason(const grid *g, const tram_board *b, size_t seen_cells, int ni, int nj,
                           int flags[4], tram__grid_result *res)
{
    size_t N = (size_t)b->cols * (size_t)b->rows;
    int maxdim = b->cols > b->rows ? b->cols : b->rows, mindim = b->cols + b->rows - maxdim;
    static const char *names[4] = {"left", "right", "top", "bottom"};
    (void)g;
    if ((ni > maxdim || nj > maxdim) || (ni > mindim && nj > mindim)) {
        snprintf(res->reason, sizeof res->reason,
                 "a lattice of %d x %d corners was found, larger than the board's %d x %d: "
                 "another chessboard pattern next to it?", ni, nj, b->cols, b->rows);
        return;
    }
    char edges[96] = "";
    int nf = 0;
    for (int k = 0; k < 4; k++)
        if (flags[k]) nf++;
    for (int k = 0, put_n = 0; k < 4; k++) {
        if (!flags[k]) continue;
        size_t len = strlen(edges);
        snprintf(edges + len, sizeof edges - len, "%s%s", put_n == 0 ? "" : put_n == nf - 1 ? " and " : ", ",
                 names[k]);
        put_n++;
    }
    if (nf)
        snprintf(res->reason, sizeof res->reason, "%zu of %zu corners found: the board runs off the %s edge%s",
                 seen_cells, N, edges, nf > 1 ? "s" : "");
    else
        snprintf(res->reason, sizeof res->reason,
                 "%zu of %zu corners found: the rest of the board is covered, in shadow or too blurred",
                 seen_cells, N);
}

tram_status tram__grid_find(const tram__saddles *S, const tram_board *b, size_t width,
                            size_t height, double min_square_px, tram__grid_result *res)
{
    memset(res, 0, sizeof *res);
    if (S->n == 0) {
        snprintf(res->reason, sizeof res->reason, "no chessboard corners found");
        return TRAM_OK;
    }
    grid g;
    memset(&g, 0, sizeof g);
    g.S = S;
    g.W = (double)width;
    g.H = (double)height;
    g.dmin = 0.5 * min_square_px;
    g.cs = min_square_px > 8.0 ? min_square_px : 8.0;
    int maxdim = b->cols > b->rows ? b->cols : b->rows;
    g.G = 2 * (maxdim + 2) + 1;
    tram_status st = buckets_build(&g);
    g.cell = tram__malloc((size_t)g.G * (size_t)g.G * sizeof *g.cell);
    g.owner = tram__malloc(S->n * sizeof *g.owner);
    unsigned char *tried = tram__calloc(S->n, 1);
    if (st != TRAM_OK || !g.cell || !g.owner || !tried) {
        st = TRAM_ENOMEM;
        goto done;
    }
    for (int k = 0; k < g.G * g.G; k++) g.cell[k] = -1;
    for (size_t k = 0; k < S->n; k++) g.owner[k] = -1;
    size_t N = (size_t)b->cols * (size_t)b->rows, best = 0;
    int best_ni = 0, best_nj = 0, best_flags[4] = {0, 0, 0, 0};
    int seeds = 0;
    for (size_t a = 0; a < S->n && seeds < MAX_SEEDS; a++) {
        if (tried[a]) continue;
        seeds++;
        if (!seed(&g, (int)a)) continue;
        while (grow_pass(&g, maxdim + 1)) {}
        int ni = g.imax - g.imin + 1, nj = g.jmax - g.jmin + 1;
        int fits = (ni == b->cols && nj == b->rows) || (ni == b->rows && nj == b->cols);
        if (fits && g.count == N) {
            st = order(&g, b, res);
            res->nseen = N;
            if (st != TRAM_OK || res->found) goto done;
        }
        for (int j = g.jmin; j <= g.jmax; j++)
            for (int i = g.imin; i <= g.imax; i++)
                if (get(&g, i, j) >= 0) tried[get(&g, i, j)] = 1;
        if (g.count > best) {
            best = g.count;
            best_ni = ni;
            best_nj = nj;
            memset(best_flags, 0, sizeof best_flags);
            off_edges(&g, best_flags);
            if (!(fits && g.count == N)) res->reason[0] = '\0';
        }
        clear(&g);
    }
    res->nseen = best;
    if (res->reason[0]) goto done;   /* a whole lattice with the wrong colours */
    if (best < 4)
        snprintf(res->reason, sizeof res->reason,
                 "no lattice of chessboard corners found (%zu saddle points)", S->n);
    else
        partial_reason(&g, b, best, best_ni, best_nj, best_flags, res);
done:
    tram__free(tried);
    tram__free(g.owner);
    tram__free(g.cell);
    tram__free(g.bstart);
    tram__free(g.bitem);
    return st;
}
