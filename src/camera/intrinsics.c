/*
 * intrinsics.c - camera calibration from views of a planar target, after
 * Zhang (2000), "A flexible new technique for camera calibration", IEEE
 * PAMI 22(11):1330-1334:
 *
 *   1. per view, the homography H ~ K [r1 r2 t] from the target plane to
 *      the image (normalised DLT, homography.c);
 *   2. the closed form: with B = K^-T K^-1 (symmetric, six unknowns b),
 *      each view gives h1^T B h2 = 0 and h1^T B h1 = h2^T B h2, i.e.
 *      v12^T b = 0 and (v11 - v22)^T b = 0 (Zhang's eq. 8); b is the null
 *      vector of the stacked system (SVD), and K follows from B (Zhang's
 *      appendix B; u0 = gamma v0 / beta - B13 alpha^2 / lambda).  With the
 *      skew held at 0, B12 = 0 and five unknowns remain.  The homographies
 *      are first mapped to image coordinates scaled by 1/max(W, H) about
 *      the image centre, which keeps the system well conditioned;
 *   3. per view, r1 = l K^-1 h1, r2 = l K^-1 h2, r3 = r1 x r2,
 *      t = l K^-1 h3 with l = 1 / |K^-1 h1|, then the nearest rotation;
 *   4. Levenberg-Marquardt over everything (intrinsics_lm.c): first the
 *      squared loss, then the Huber loss at huber_k robust sigmas, then
 *      once more without the flagged outliers;
 *   5. the covariance at the optimum, diagnostics and warnings.
 *
 * Rules (docs/camera.md): the robust sigma is the median residual length
 * divided by sqrt(2 ln 2) (the median of a 2D Gaussian's radius, Rayleigh);
 * an observation is an outlier when its residual length exceeds
 * outlier_k robust sigmas.  The covariance is s^2 (J^T W J)^-1 with
 * s^2 = sum w |r|^2 / (2 m - P) over the m inliers (Gauss-Markov, the
 * Huber weights at the optimum taken as fixed).
 */
#include "camera/homography_internal.h"
#include "camera/intrinsics_internal.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void tram_intrinsics_options_init(tram_intrinsics_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->distortion = TRAM_DISTORTION_RADIAL2;
    opt->free_skew = 0;
    opt->robust = 1;
    opt->huber_k = 5.0;
    opt->outlier_k = 8.0;
    opt->max_iterations = 200;
    opt->max_relative_sigma_f = 0.01;
}

void tram_intrinsics_result_destroy(tram_intrinsics_result *r)
{
    if (!r) return;
    tram__free(r->views);
    tram__free(r->obs_view);
    tram__free(r->residual_px);
    tram__free(r->outlier);
    tram__free(r->covariance);
    tram__free(r);
}

static const char tilt_advice[] = "tilt the board 20-45 degrees about both image axes";

/* Zhang's v_ij (eq. 7) from columns i and j of H. */
static void vij(const double H[9], int i, int j, double v[6])
{
    double hi[3] = {H[i], H[3 + i], H[6 + i]}, hj[3] = {H[j], H[3 + j], H[6 + j]};
    v[0] = hi[0] * hj[0];
    v[1] = hi[0] * hj[1] + hi[1] * hj[0];
    v[2] = hi[1] * hj[1];
    v[3] = hi[2] * hj[0] + hi[0] * hj[2];
    v[4] = hi[2] * hj[1] + hi[1] * hj[2];
    v[5] = hi[2] * hj[2];
}

/* The closed form for K from the homographies (already normalised). */
static tram_status closed_form(size_t nv, const double *H, int free_skew, double K[9], tram_error *err)
{
    int nu = free_skew ? 6 : 5;
    double *V = tram__malloc(2 * nv * 6 * sizeof *V);
    if (!V) return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    for (size_t k = 0; k < nv; k++) {
        double v12[6], v11[6], v22[6], rows[2][6];
        vij(&H[9 * k], 0, 1, v12);
        vij(&H[9 * k], 0, 0, v11);
        vij(&H[9 * k], 1, 1, v22);
        for (int a = 0; a < 6; a++) {
            rows[0][a] = v12[a];
            rows[1][a] = v11[a] - v22[a];
        }
        for (int r = 0; r < 2; r++)
            for (int a = 0, c = 0; a < 6; a++)
                if (free_skew || a != 1) V[(2 * k + (size_t)r) * (size_t)nu + (size_t)c++] = rows[r][a];
    }
    double s[6], Vt[36], b6[6];
    tram_status st = tram__svd((int)(2 * nv), nu, V, NULL, s, Vt);
    tram__free(V);
    if (st != TRAM_OK) return tram__fail(err, st, "", 0, 0, "closed form: the SVD failed");
    for (int a = 0, c = 0; a < 6; a++) b6[a] = (free_skew || a != 1) ? Vt[(nu - 1) * nu + c++] : 0.0;
    /* a second small singular value: the views do not fix K */
    if (!(s[nu - 2] > 1e-9 * s[0]))
        return tram__fail(err, TRAM_EUNDETERMINED, "", 0, 0,
                          "the views cannot fix the intrinsic matrix (the boards are nearly "
                          "parallel to one another): %s",
                          tilt_advice);
    if (b6[0] < 0)
        for (int a = 0; a < 6; a++) b6[a] = -b6[a];
    double B11 = b6[0], B12 = b6[1], B22 = b6[2], B13 = b6[3], B23 = b6[4], B33 = b6[5];
    double den = B11 * B22 - B12 * B12;
    double v0 = den != 0 ? (B12 * B13 - B11 * B23) / den : NAN;
    double lam = B33 - (B13 * B13 + v0 * (B12 * B13 - B11 * B23)) / B11;
    double al = sqrt(lam / B11), be = sqrt(lam * B11 / den);
    double ga = -B12 * al * al * be / lam, u0 = ga * v0 / be - B13 * al * al / lam;
    if (!(B11 > 0) || !(den > 0) || !(lam > 0) || !isfinite(al) || !isfinite(be) || !isfinite(u0))
        return tram__fail(err, TRAM_EUNDETERMINED, "", 0, 0,
                          "the closed form (Zhang 2000) is not positive definite: the views do not "
                          "fix the focal length; %s",
                          tilt_advice);
    double Km[9] = {al, ga, u0, 0, be, v0, 0, 0, 1};
    memcpy(K, Km, sizeof Km);
    return TRAM_OK;
}

/* A view's pose from its homography and K (Zhang's eq. 2 inverted). */
static void pose_from_h(const double Ki[9], const double H[9], tram_mat3 *R, double t[3])
{
    double c[3][3];
    for (int j = 0; j < 3; j++)
        for (int i = 0; i < 3; i++)
            c[j][i] = Ki[3 * i] * H[j] + Ki[3 * i + 1] * H[3 + j] + Ki[3 * i + 2] * H[6 + j];
    double l = 1.0 / sqrt(tram__dot3(c[0], c[0]));
    if (c[2][2] < 0) l = -l; /* the target in front of the camera */
    double r1[3], r2[3], r3[3];
    for (int a = 0; a < 3; a++) {
        r1[a] = l * c[0][a];
        r2[a] = l * c[1][a];
        t[a] = l * c[2][a];
    }
    tram__cross3(r1, r2, r3);
    tram_mat3 M;
    for (int a = 0; a < 3; a++) {
        M.m[a][0] = r1[a];
        M.m[a][1] = r2[a];
        M.m[a][2] = r3[a];
    }
    tram_so3_nearest(&M, R);
}

/* ---- the data ----------------------------------------------------------- */

typedef struct work {
    tram__bundle b;
    tram__bundle_state s;
    size_t *view;            /* nobs */
    double *xy, *uv;         /* 2 nobs */
    size_t *count;           /* nviews */
    double *H;               /* 9 nviews, pixel homographies */
    double *w, *e;           /* nobs: fixed weights, residual lengths */
    double *res;             /* 2 nobs */
    double *JtJ, *cov;       /* P^2 */
} work;

static void work_free(work *w)
{
    tram__free(w->view);
    tram__free(w->xy);
    tram__free(w->uv);
    tram__free(w->count);
    tram__free(w->H);
    tram__free(w->w);
    tram__free(w->e);
    tram__free(w->res);
    tram__free(w->JtJ);
    tram__free(w->cov);
    tram__free(w->s.R);
    tram__free(w->s.t);
}

/* Each observation's target point; an id that is not on the target is an
 * input error at the observation's line. */
static tram_status gather(const tram_pixel_obs *obs, const tram_planar_target *tg, work *w,
                          tram_error *err)
{
    size_t n = obs->n, nv = obs->nstations;
    long *map = tram__malloc((obs->npoints ? obs->npoints : 1) * sizeof *map);
    w->view = tram__malloc(n * sizeof *w->view);
    w->xy = tram__malloc(2 * n * sizeof *w->xy);
    w->uv = tram__malloc(2 * n * sizeof *w->uv);
    w->count = tram__calloc(nv ? nv : 1, sizeof *w->count);
    if (!map || !w->view || !w->xy || !w->uv || !w->count) {
        tram__free(map);
        return tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    }
    for (size_t p = 0; p < obs->npoints; p++) {
        map[p] = -1;
        for (size_t k = 0; k < tg->n && map[p] < 0; k++)
            if (strcmp(tg->id[k], obs->point_id[p]) == 0) map[p] = (long)k;
    }
    tram_status st = TRAM_OK;
    for (size_t i = 0; i < n && st == TRAM_OK; i++) {
        long k = map[obs->point[i]];
        if (k < 0) {
            st = tram__fail(err, TRAM_EINPUT, obs->source, obs->line[i], 0,
                            "point '%s' of station '%s' is not a point of the target "
                            "(expected a board corner id or a model point id)",
                            obs->point_id[obs->point[i]], obs->station_id[obs->station[i]]);
            break;
        }
        w->view[i] = obs->station[i];
        w->count[obs->station[i]]++;
        memcpy(&w->xy[2 * i], &tg->xy[2 * (size_t)k], 2 * sizeof *w->xy);
        memcpy(&w->uv[2 * i], &obs->uv[2 * i], 2 * sizeof *w->uv);
    }
    tram__free(map);
    return st;
}

/* Per-view homographies, the closed form and the initial poses. */
static tram_status initialise(const tram_pixel_obs *obs, const tram_intrinsics_options *opt,
                              work *w, tram_camera *initial, tram_error *err)
{
    size_t nv = obs->nstations, n = obs->n, maxc = 0;
    for (size_t k = 0; k < nv; k++) maxc = w->count[k] > maxc ? w->count[k] : maxc;
    double *pxy = tram__malloc(4 * maxc * sizeof *pxy), *puv = pxy ? pxy + 2 * maxc : NULL;
    double *Hn = tram__malloc(9 * nv * sizeof *Hn);
    w->H = tram__malloc(9 * nv * sizeof *w->H);
    tram_status st = TRAM_OK;
    if (!pxy || !Hn || !w->H) {
        st = tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
        goto done;
    }
    double sc = 1.0 / (double)(obs->width > obs->height ? obs->width : obs->height);
    double ox = 0.5 * (double)(obs->width - 1), oy = 0.5 * (double)(obs->height - 1);
    double N[9] = {sc, 0, -sc * ox, 0, sc, -sc * oy, 0, 0, 1}, Ni[9], Kn[9], K[9], Ki[9];
    for (size_t k = 0; k < nv; k++) {
        size_t m = 0;
        for (size_t i = 0; i < n; i++)
            if (w->view[i] == k) {
                memcpy(&pxy[2 * m], &w->xy[2 * i], 2 * sizeof *pxy);
                memcpy(&puv[2 * m], &w->uv[2 * i], 2 * sizeof *puv);
                m++;
            }
        st = tram__homography_dlt(m, pxy, puv, &w->H[9 * k]);
        if (st == TRAM_EUNDETERMINED)
            st = tram__fail(err, st, obs->source, 0, 0,
                            "view '%s': its %zu points do not fix a homography (on a line, or "
                            "fewer than 4 distinct): use views of the whole board",
                            obs->station_id[k], m);
        else if (st != TRAM_OK)
            st = tram__fail(err, st, obs->source, 0, 0, "view '%s': homography failed", obs->station_id[k]);
        if (st != TRAM_OK) goto done;
        tram__mat3_mul(N, &w->H[9 * k], &Hn[9 * k]);
        double f = 0;
        for (int a = 0; a < 9; a++) f += Hn[9 * k + (size_t)a] * Hn[9 * k + (size_t)a];
        for (int a = 0; a < 9; a++) Hn[9 * k + (size_t)a] /= sqrt(f);
    }
    if ((st = closed_form(nv, Hn, opt->free_skew, Kn, err)) != TRAM_OK) goto done;
    tram__mat3_inv(N, Ni);
    tram__mat3_mul(Ni, Kn, K);
    memset(initial, 0, sizeof *initial);
    initial->fx = K[0];
    initial->skew = opt->free_skew ? K[1] : 0.0;
    initial->cx = K[2];
    initial->fy = K[4];
    initial->cy = K[5];
    initial->distortion = opt->distortion;
    initial->width = obs->width;
    initial->height = obs->height;
    double Kz[9] = {initial->fx, initial->skew, initial->cx, 0, initial->fy, initial->cy, 0, 0, 1};
    tram__mat3_inv(Kz, Ki);
    for (size_t k = 0; k < nv; k++) pose_from_h(Ki, &w->H[9 * k], &w->s.R[k], w->s.t[k]);
done:
    tram__free(pxy);
    tram__free(Hn);
    return st;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Residual lengths into w->e; the median of those with weight (NULL: all). */
static tram_status lengths(work *w, const double *weight, double *median)
{
    size_t n = w->b.nobs, m = 0;
    if (!tram__bundle_residuals(&w->b, &w->s, w->res)) return TRAM_EUNDETERMINED;
    double *tmp = tram__malloc(n * sizeof *tmp);
    if (!tmp) return TRAM_ENOMEM;
    for (size_t i = 0; i < n; i++) {
        w->e[i] = hypot(w->res[2 * i], w->res[2 * i + 1]);
        if (!weight || weight[i] > 0) tmp[m++] = w->e[i];
    }
    qsort(tmp, m, sizeof *tmp, cmp_double);
    *median = m == 0 ? 0 : (m % 2 ? tmp[m / 2] : 0.5 * (tmp[m / 2 - 1] + tmp[m / 2]));
    tram__free(tmp);
    return TRAM_OK;
}

/* ---- the refinement passes ----------------------------------------------- */

static tram_status refine_failed(tram_status st, tram_error *err)
{
    if (st == TRAM_ENOMEM) return tram__fail(err, st, "", 0, 0, "out of memory");
    return tram__fail(err, TRAM_EUNDETERMINED, "", 0, 0,
                      "the refinement moved a target point behind the camera: the closed form "
                      "was too far off; %s",
                      tilt_advice);
}

/* Squared loss; then (robust) Huber, the outlier flags, and Huber again
 * without the outliers.  Leaves the final J^T W J in w->JtJ. */
static tram_status passes(work *w, const tram_intrinsics_options *opt, tram_intrinsics_result *r,
                          tram_error *err)
{
    size_t n = w->b.nobs;
    int it = 0, total = 0;
    double med;
    const double rayleigh = sqrt(2.0 * log(2.0));
    tram_status st = tram__bundle_refine(&w->b, &w->s, NULL, 0.0, opt->max_iterations, &it,
                                         opt->robust ? NULL : w->JtJ);
    total += it;
    if (st == TRAM_OK) st = lengths(w, NULL, &med);
    if (st != TRAM_OK) return refine_failed(st, err);
    r->noise_px = med / rayleigh;
    r->huber_px = opt->robust ? opt->huber_k * r->noise_px : 0.0;
    r->outlier_px = opt->outlier_k * r->noise_px;
    if (opt->robust) {
        st = tram__bundle_refine(&w->b, &w->s, NULL, r->huber_px, opt->max_iterations, &it, w->JtJ);
        total += it;
        if (st == TRAM_OK) st = lengths(w, NULL, &med);
        if (st != TRAM_OK) return refine_failed(st, err);
    }
    size_t nout = 0;
    for (size_t i = 0; i < n; i++) {
        r->outlier[i] = w->e[i] > r->outlier_px;
        nout += (size_t)r->outlier[i];
        w->w[i] = r->outlier[i] && opt->robust ? 0.0 : 1.0;
    }
    if (opt->robust && nout > 0) {
        st = tram__bundle_refine(&w->b, &w->s, w->w, r->huber_px, opt->max_iterations, &it, w->JtJ);
        total += it;
        if (st == TRAM_OK) st = lengths(w, w->w, &med);
        if (st != TRAM_OK) return refine_failed(st, err);
    }
    r->iterations = total;
    return TRAM_OK;
}

/* The covariance s^2 (J^T W J)^-1 and the sigmas of the result. */
static tram_status covariance(work *w, const tram_intrinsics_options *opt,
                              tram_intrinsics_result *r, tram_error *err)
{
    size_t P = tram__bundle_nparam(&w->b), m = 0;
    double ss = 0, sse = 0;
    for (size_t i = 0; i < w->b.nobs; i++) {
        if (w->w[i] == 0 && opt->robust) continue;
        double hw = r->huber_px > 0 && w->e[i] > r->huber_px ? r->huber_px / w->e[i] : 1.0;
        ss += hw * w->e[i] * w->e[i];
        sse += w->e[i] * w->e[i];
        m++;
    }
    if (2 * m <= P)
        return tram__fail(err, TRAM_EUNDETERMINED, "", 0, 0,
                          "%zu inlier points for %zu unknowns: add views", m, P);
    r->rms_px = sqrt(sse / (double)m);
    double s2 = ss / (double)(2 * m - P);
    tram_status st = tram__spd_inverse((int)P, w->JtJ, w->cov);
    if (st == TRAM_ENOMEM) return tram__fail(err, st, "", 0, 0, "out of memory");
    if (st != TRAM_OK)
        return tram__fail(err, TRAM_EUNDETERMINED, "", 0, 0,
                          "the views do not fix every parameter (singular normal matrix); %s",
                          tilt_advice);
    for (size_t a = 0; a < P * P; a++) w->cov[a] *= s2;
    r->nparam = P;
    int q = 0;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        r->calib.free_param[k] = w->b.free_param[k];
        r->calib.sigma[k] = w->b.free_param[k] ? sqrt(w->cov[(size_t)q * P + (size_t)q]) : 0.0;
        q += w->b.free_param[k];
    }
    /* the correlations of the camera's parameters, for the camera file: the
     * solve from pixels carries them into its intervals */
    memset(r->calib.correlation, 0, sizeof r->calib.correlation);
    for (int a = 0, qa = 0; a < TRAM_CAM_NPARAM; qa += w->b.free_param[a], a++)
        for (int b = 0, qb = 0; b < TRAM_CAM_NPARAM; qb += w->b.free_param[b], b++) {
            if (!w->b.free_param[a] || !w->b.free_param[b]) continue;
            double d = sqrt(w->cov[(size_t)qa * P + (size_t)qa] * w->cov[(size_t)qb * P + (size_t)qb]);
            double rho = a == b ? 1.0 : d > 0 ? w->cov[(size_t)qa * P + (size_t)qb] / d : 0.0;
            r->calib.correlation[a * TRAM_CAM_NPARAM + b] = fmax(-1.0, fmin(1.0, rho));
        }
    r->calib.has_correlation = 1;
    for (size_t k = 0; k < w->b.nviews; k++)
        for (int a = 0; a < 3; a++) {
            size_t ir = (size_t)w->b.nint + 6 * k + (size_t)a, itr = ir + 3;
            r->views[k].sigma_rot_deg[a] = sqrt(w->cov[ir * P + ir]) * 180.0 / TRAM_PI;
            r->views[k].sigma_t[a] = sqrt(w->cov[itr * P + itr]);
        }
    return TRAM_OK;
}

/* ---- diagnostics ---------------------------------------------------------- */

static double cross2(const double *o, const double *a, const double *b)
{
    return (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
}

static int cmp_point(const void *a, const void *b)
{
    const double *p = a, *q = b;
    return p[0] != q[0] ? (p[0] > q[0]) - (p[0] < q[0]) : (p[1] > q[1]) - (p[1] < q[1]);
}

/* Convex hull (Andrew's monotone chain) of the m points p, in place;
 * returns its size (counter-clockwise in a y-up frame). */
static size_t hull(double *p, size_t m, double *h)
{
    qsort(p, m, 2 * sizeof *p, cmp_point);
    size_t k = 0;
    for (size_t i = 0; i < m; i++) {
        while (k >= 2 && cross2(&h[2 * (k - 2)], &h[2 * (k - 1)], &p[2 * i]) <= 0) k--;
        memcpy(&h[2 * k++], &p[2 * i], 2 * sizeof *h);
    }
    for (size_t i = m - 1, lo = k + 1; i-- > 0;) {
        while (k >= lo && cross2(&h[2 * (k - 2)], &h[2 * (k - 1)], &p[2 * i]) <= 0) k--;
        memcpy(&h[2 * k++], &p[2 * i], 2 * sizeof *h);
    }
    return k > 1 ? k - 1 : k;
}

/* Fraction of a grid of cells (about 40 along the longer side) whose
 * centre lies inside the convex hull of some view's observed points. */
static tram_status coverage(const tram_pixel_obs *obs, const work *w, double *out)
{
    size_t W = obs->width, Hh = obs->height, n = obs->n;
    size_t gx = 40, gy = (size_t)fmax(1.0, round(40.0 * (double)Hh / (double)W));
    if (Hh > W) {
        gy = 40;
        gx = (size_t)fmax(1.0, round(40.0 * (double)W / (double)Hh));
    }
    unsigned char *cell = tram__calloc(gx * gy, 1);
    double *p = tram__malloc(6 * (n + 1) * sizeof *p), *h = p ? p + 2 * (n + 1) : NULL;
    if (!cell || !p) {
        tram__free(cell);
        tram__free(p);
        return TRAM_ENOMEM;
    }
    for (size_t k = 0; k < w->b.nviews; k++) {
        size_t m = 0;
        for (size_t i = 0; i < n; i++)
            if (w->view[i] == k) memcpy(&p[2 * m++], &w->uv[2 * i], 2 * sizeof *p);
        size_t nh = m >= 3 ? hull(p, m, h) : 0;
        if (nh < 3) continue;
        for (size_t cy = 0; cy < gy; cy++)
            for (size_t cx = 0; cx < gx; cx++) {
                double c[2] = {((double)cx + 0.5) * (double)W / (double)gx - 0.5,
                               ((double)cy + 0.5) * (double)Hh / (double)gy - 0.5};
                int in = 1;
                for (size_t j = 0; j < nh && in; j++) in = cross2(&h[2 * j], &h[2 * ((j + 1) % nh)], c) >= 0;
                cell[cy * gx + cx] |= (unsigned char)in;
            }
    }
    size_t cnt = 0;
    for (size_t a = 0; a < gx * gy; a++) cnt += cell[a];
    *out = (double)cnt / (double)(gx * gy);
    tram__free(cell);
    tram__free(p);
    return TRAM_OK;
}

/* Per-view RMS, tilt, and the warnings. */
static tram_status views_and_warnings(const tram_pixel_obs *obs, const work *w,
                                      tram_intrinsics_result *r)
{
    size_t nv = w->b.nviews;
    double *ss = tram__calloc(nv, sizeof *ss);
    if (!ss) return TRAM_ENOMEM;
    for (size_t k = 0; k < nv; k++) {
        tram_intrinsics_view *v = &r->views[k];
        snprintf(v->id, sizeof v->id, "%s", obs->station_id[k]);
        tram_se3_from_rt(&w->s.R[k], w->s.t[k], &v->T_sensor_target);
        /* the target normal, turned to face away from the camera */
        double nx = w->s.R[k].m[0][2], ny = w->s.R[k].m[1][2], nz = w->s.R[k].m[2][2];
        if (nz < 0) nx = -nx, ny = -ny, nz = -nz;
        v->tilt_x_deg = atan2(-ny, nz) * 180.0 / TRAM_PI;
        v->tilt_y_deg = atan2(nx, nz) * 180.0 / TRAM_PI;
        r->max_tilt_x_deg = fmax(r->max_tilt_x_deg, fabs(v->tilt_x_deg));
        r->max_tilt_y_deg = fmax(r->max_tilt_y_deg, fabs(v->tilt_y_deg));
    }
    size_t nout = 0;
    for (size_t i = 0; i < w->b.nobs; i++) {
        tram_intrinsics_view *v = &r->views[w->view[i]];
        v->nobs++;
        if (r->outlier[i]) {
            v->noutliers++;
            nout++;
        } else {
            ss[w->view[i]] += w->e[i] * w->e[i];
        }
    }
    for (size_t k = 0; k < nv; k++) {
        size_t m = r->views[k].nobs - r->views[k].noutliers;
        r->views[k].rms_px = m ? sqrt(ss[k] / (double)m) : NAN;
    }
    tram__free(ss);
    if (r->coverage < 0.5) r->warnings |= TRAM_INTRINSICS_WARN_COVERAGE;
    if (r->rms_px > 1.0) r->warnings |= TRAM_INTRINSICS_WARN_RMS;
    if (r->max_tilt_x_deg < 15.0 || r->max_tilt_y_deg < 15.0) r->warnings |= TRAM_INTRINSICS_WARN_TILT;
    if ((double)nout > 0.05 * (double)w->b.nobs) r->warnings |= TRAM_INTRINSICS_WARN_OUTLIERS;
    r->calib.noutliers = nout;
    return TRAM_OK;
}

static tram_status check_inputs(const tram_pixel_obs *obs, const tram_planar_target *tg,
                                const tram_intrinsics_options *opt, const work *w, tram_error *err)
{
    if (obs->width == 0 || obs->height == 0)
        return tram__fail(err, TRAM_EINPUT, obs->source, 0, 0, "no image size");
    if ((int)opt->distortion < 0 || (int)opt->distortion > (int)TRAM_DISTORTION_FULL)
        return tram__fail(err, TRAM_EINPUT, "", 0, 0, "unknown distortion model");
    for (size_t k = 0; k < tg->n; k++)
        if (!isfinite(tg->xy[2 * k]) || !isfinite(tg->xy[2 * k + 1]))
            return tram__fail(err, TRAM_EINPUT, "", 0, 0, "target point '%s' is not finite", tg->id[k]);
    if (obs->nstations < 3)
        return tram__fail(err, TRAM_EUNDETERMINED, obs->source, 0, 0,
                          "%zu view%s: Zhang's method needs at least 3 views of the board in "
                          "different orientations; add views and %s",
                          obs->nstations, obs->nstations == 1 ? "" : "s", tilt_advice);
    for (size_t k = 0; k < obs->nstations; k++)
        if (w->count[k] < 6)
            return tram__fail(err, TRAM_EUNDETERMINED, obs->source, 0, 0,
                              "view '%s' has %zu point%s: a view needs at least 6 (the whole board)",
                              obs->station_id[k], w->count[k], w->count[k] == 1 ? "" : "s");
    return TRAM_OK;
}

static tram_status allocate(const tram_pixel_obs *obs, work *w, tram_intrinsics_result *r,
                            const tram_intrinsics_options *opt)
{
    size_t n = obs->n, nv = obs->nstations;
    w->b.nviews = nv;
    w->b.nobs = n;
    w->b.view = w->view;
    w->b.xy = w->xy;
    w->b.uv = w->uv;
    w->b.nint = 0;
    for (int k = 0; k < TRAM_CAM_NPARAM; k++) {
        w->b.free_param[k] = tram_distortion_has(opt->distortion, k) && (k != TRAM_CAM_SKEW || opt->free_skew);
        w->b.nint += w->b.free_param[k];
    }
    size_t P = tram__bundle_nparam(&w->b);
    w->s.R = tram__malloc(nv * sizeof *w->s.R);
    w->s.t = tram__malloc(nv * sizeof *w->s.t);
    w->w = tram__malloc(n * sizeof *w->w);
    w->e = tram__malloc(n * sizeof *w->e);
    w->res = tram__malloc(2 * n * sizeof *w->res);
    w->JtJ = tram__malloc(P * P * sizeof *w->JtJ);
    w->cov = tram__malloc(P * P * sizeof *w->cov);
    r->views = tram__calloc(nv, sizeof *r->views);
    r->obs_view = tram__malloc(n * sizeof *r->obs_view);
    r->residual_px = tram__malloc(2 * n * sizeof *r->residual_px);
    r->outlier = tram__calloc(n, sizeof *r->outlier);
    return w->s.R && w->s.t && w->w && w->e && w->res && w->JtJ && w->cov && r->views &&
                   r->obs_view && r->residual_px && r->outlier
               ? TRAM_OK
               : TRAM_ENOMEM;
}

/* The focal length must be fixed by the views (Zhang 2000, section 3.4:
 * parallel or untilted views leave it free). */
static tram_status focal_fixed(const tram_intrinsics_result *r, const tram_intrinsics_options *opt,
                               tram_error *err)
{
    double rx = r->calib.sigma[TRAM_CAM_FX] / r->camera.fx, ry = r->calib.sigma[TRAM_CAM_FY] / r->camera.fy;
    if (rx <= opt->max_relative_sigma_f && ry <= opt->max_relative_sigma_f) return TRAM_OK;
    return tram__fail(err, TRAM_EUNDETERMINED, "", 0, 0,
                      "the views do not fix the focal length: 1-sigma of fx %.2g%%, of fy %.2g%% "
                      "(limit %.2g%%); the largest tilt is %.1f deg about the image x axis and "
                      "%.1f deg about y: %s",
                      100 * rx, 100 * ry, 100 * opt->max_relative_sigma_f, r->max_tilt_x_deg,
                      r->max_tilt_y_deg, tilt_advice);
}

tram_status tram_intrinsics_calibrate(const tram_pixel_obs *obs, const tram_planar_target *tg,
                                      const tram_intrinsics_options *optin,
                                      tram_intrinsics_result **out, tram_error *err)
{
    *out = NULL;
    tram_intrinsics_options opt;
    if (optin)
        opt = *optin;
    else
        tram_intrinsics_options_init(&opt);
    work w;
    memset(&w, 0, sizeof w);
    tram_intrinsics_result *r = tram__calloc(1, sizeof *r);
    tram_status st = r ? gather(obs, tg, &w, err) : tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    if (st == TRAM_OK) st = check_inputs(obs, tg, &opt, &w, err);
    if (st == TRAM_OK && allocate(obs, &w, r, &opt) != TRAM_OK)
        st = tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    if (st == TRAM_OK) st = initialise(obs, &opt, &w, &r->initial, err);
    if (st == TRAM_OK) {
        w.s.cam = r->initial;
        st = passes(&w, &opt, r, err);
    }
    if (st == TRAM_OK) {
        r->nviews = w.b.nviews;
        r->nobs = w.b.nobs;
        st = covariance(&w, &opt, r, err);
    }
    if (st == TRAM_OK && coverage(obs, &w, &r->coverage) != TRAM_OK)
        st = tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
    if (st == TRAM_OK) {
        r->camera = w.s.cam;
        memcpy(r->obs_view, w.view, w.b.nobs * sizeof *w.view);
        memcpy(r->residual_px, w.res, 2 * w.b.nobs * sizeof *w.res);
        r->calib.present = 1;
        snprintf(r->calib.method, sizeof r->calib.method,
                 "Zhang 2000 closed form, Levenberg-Marquardt, %s loss", opt.robust ? "Huber" : "squared");
        r->calib.nviews = w.b.nviews;
        r->calib.npoints = w.b.nobs;
        if (views_and_warnings(obs, &w, r) != TRAM_OK) st = tram__fail(err, TRAM_ENOMEM, "", 0, 0, "out of memory");
        r->calib.rms_px = r->rms_px;
        if (st == TRAM_OK) st = focal_fixed(r, &opt, err);
    }
    if (st == TRAM_OK) {
        r->covariance = w.cov;
        w.cov = NULL;
    }
    work_free(&w);
    if (st != TRAM_OK) {
        /* a message about the data as a whole names the observation file */
        if (err && !err->file[0]) snprintf(err->file, sizeof err->file, "%s", obs->source);
        tram_intrinsics_result_destroy(r);
        return st;
    }
    *out = r;
    return TRAM_OK;
}
