/*
 * sample.c - candidate robot poses inside a cell's view and reach
 * (docs/plan.md, "Candidates").
 *
 * The problem is P X S = Z (tram/handeye.h).  A sample draws the flange's
 * orientation from the reach (a rotation of at most the largest tilt about
 * a uniformly drawn axis from the nominal orientation; without one, the
 * forward kinematics of readings drawn uniformly inside the joint limits
 * with a chain, or a uniform rotation, Shoemake, Graphics Gems III 1992),
 * which
 * fixes the sensor's view of the board's orientation, R_S = R_X^T R_P^T
 * R_Z.  The board's centre is then placed in the view: a depth drawn in
 * the working distance range and a pixel drawn inside the image less the
 * margin, back-projected through the camera (camera.c).  That fixes S and
 * so the robot pose P = Z S^-1 X^-1.  The sample is kept when the board is
 * tilted no more than the limit, the flange is inside the box or sphere,
 * every board corner is in the image with the margin and - with a chain -
 * damped least-squares inverse kinematics (chain/ik.c) reaches the pose
 * inside the joint limits from the drawn readings; the pose is then the
 * chain's own, and the view is tested again on it.
 */
#include "plan/sample_internal.h"
#include "tram/rotation.h"

#include <math.h>
#include <string.h>

/* IK tolerances: well inside 0.01 mm and 0.001 degree. */
#define IK_TOL_MM 1e-4
#define IK_TOL_RAD 1e-7

double tram__plan_uniform(unsigned long long *state)
{
    return (double)(tram__splitmix64(state) >> 11) * (1.0 / 9007199254740992.0);
}

void tram__plan_predict(tram_setup setup, const tram_se3 *X, const tram_se3 *Z,
                        const tram_se3 *T_base_flange, tram_se3 *P, tram_se3 *S)
{
    if (setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(T_base_flange, P);
    else *P = *T_base_flange;
    tram_se3 PX, PXi;
    tram_se3_compose(P, X, &PX);
    tram_se3_invert(&PX, &PXi);
    tram_se3_compose(&PXi, Z, S);
}

int tram__plan_view_ok(const tram_cell *c, const tram_se3 *S, double *distance, double *tilt)
{
    double ctr[3] = {(c->target_x[0] + c->target_x[1]) / 2, (c->target_y[0] + c->target_y[1]) / 2, 0}, p[3];
    tram_se3_apply_point(S, ctr, p);
    *distance = p[2];
    double nz = S->m[2][2]; /* the board normal's component along the optical axis */
    *tilt = acos(fabs(nz) < 1 ? fabs(nz) : 1.0);
    if (!(p[2] >= c->distance[0] && p[2] <= c->distance[1])) return 0;
    if (*tilt > c->max_board_tilt_rad) return 0;
    double m = c->margin_px, W = (double)c->camera.width - 1, H = (double)c->camera.height - 1;
    for (int k = 0; k < 4; k++) {
        double corner[3] = {c->target_x[k & 1], c->target_y[k >> 1], 0}, uv[2];
        if (!tram_camera_reproject(&c->camera, S, corner, uv)) return 0;
        if (!(uv[0] >= m && uv[0] <= W - m && uv[1] >= m && uv[1] <= H - m)) return 0;
    }
    return 1;
}

static void random_axis(unsigned long long *st, double a[3])
{
    double z = 2 * tram__plan_uniform(st) - 1, phi = 2 * TRAM_PI * tram__plan_uniform(st);
    double s = sqrt(1 - z * z);
    a[0] = s * cos(phi);
    a[1] = s * sin(phi);
    a[2] = z;
}

/* Shoemake's uniform rotation. */
static void random_rotation(unsigned long long *st, tram_mat3 *R)
{
    double u1 = tram__plan_uniform(st), u2 = 2 * TRAM_PI * tram__plan_uniform(st),
           u3 = 2 * TRAM_PI * tram__plan_uniform(st);
    tram_quat_wxyz q = {sqrt(u1) * cos(u3), sqrt(1 - u1) * sin(u2), sqrt(1 - u1) * cos(u2),
                        sqrt(u1) * sin(u3)};
    tram_quat_wxyz_to_mat3(&q, R);
}

/* Readings drawn inside the limits (a joint without limits: a full turn,
 * or its zero reading for a prismatic one). */
static void random_readings(const tram_chain *ch, unsigned long long *st, double *q)
{
    size_t j = 0;
    double turn = TRAM_PI / tram_unit_angle_in_rad(ch->angle_unit);
    for (size_t i = 0; i < ch->n_elements; i++) {
        const tram_chain_element *e = &ch->elements[i];
        if (e->kind == TRAM_CHAIN_FIXED) continue;
        double u = tram__plan_uniform(st);
        if (e->has_limits) q[j] = e->lo + u * (e->hi - e->lo);
        else q[j] = e->kind == TRAM_CHAIN_REVOLUTE ? (2 * u - 1) * turn : 0.0;
        j++;
    }
}

static double flange_tilt(const tram_cell *c, const tram_mat3 *R)
{
    return c->has_nominal ? tram_so3_distance(&c->R_nominal, R) : NAN;
}

/* The flange orientation of one sample (and the chain readings it came
 * from); 0 when it is beyond the tilt limit. */
static int draw_orientation(const tram_cell *c, unsigned long long *st, tram_mat3 *R, double *q)
{
    if (c->chain) random_readings(c->chain, st, q); /* the IK's start */
    if (c->chain && !c->has_nominal) {
        tram_se3 T;
        tram_chain_forward(c->chain, q, &T, NULL);
        double t[3];
        tram_se3_to_rt(&T, R, t);
        return 1;
    }
    if (c->has_nominal) {
        double a[3], ang = c->max_flange_tilt_rad * cbrt(tram__plan_uniform(st));
        tram_mat3 E;
        random_axis(st, a);
        tram_axis_angle_to_mat3(a, ang, &E);
        tram_so3_mul(&c->R_nominal, &E, R);
        return 1;
    }
    random_rotation(st, R);
    return 1;
}

static int in_region(const tram_cell *c, const double t[3])
{
    if (c->reach == TRAM_REACH_BOX) {
        for (int k = 0; k < 3; k++)
            if (!(t[k] >= c->box_lo[k] && t[k] <= c->box_hi[k])) return 0;
    } else if (c->reach == TRAM_REACH_SPHERE) {
        double d2 = 0;
        for (int k = 0; k < 3; k++) d2 += tram__sq(t[k] - c->centre[k]);
        if (!(d2 <= c->radius * c->radius)) return 0;
    }
    return 1;
}

/* The observation with the board's orientation R_S and its centre at a
 * drawn depth and pixel.  0 when the pixel cannot be back-projected. */
static int place_board(const tram_cell *c, unsigned long long *st, const tram_mat3 *R_S, tram_se3 *S)
{
    double m = c->margin_px, W = (double)c->camera.width - 1, H = (double)c->camera.height - 1;
    double uv[2] = {m + tram__plan_uniform(st) * (W - 2 * m), m + tram__plan_uniform(st) * (H - 2 * m)};
    double d = c->distance[0] + tram__plan_uniform(st) * (c->distance[1] - c->distance[0]), xy[2];
    if (!tram_camera_unproject(&c->camera, uv, xy)) return 0;
    double ctr[3] = {(c->target_x[0] + c->target_x[1]) / 2, (c->target_y[0] + c->target_y[1]) / 2, 0}, rc[3];
    tram_so3_apply(R_S, ctr, rc);
    double t[3] = {xy[0] * d - rc[0], xy[1] * d - rc[1], d - rc[2]};
    tram_se3_from_rt(R_S, t, S);
    return 1;
}

/* Reach the candidate's pose with the chain; on success the pose becomes
 * the chain's and the view is tested again. */
static int reach_by_chain(const tram_cell *c, const tram_se3 *X, const tram_se3 *Z, const double *q0,
                          tram__plan_cand *k)
{
    const tram_chain *ch = c->chain;
    double to_chain = tram_unit_length_factor(c->length_unit, ch->length_unit);
    double tol = IK_TOL_MM * tram_unit_length_factor(TRAM_LENGTH_MM, ch->length_unit);
    tram_se3 goal, T;
    tram_se3_scale_translation(&k->T_base_flange, to_chain, &goal);
    if (!tram_chain_ik(ch, &goal, q0, tol, IK_TOL_RAD, k->joints)) return 0;
    tram_chain_forward(ch, k->joints, &T, NULL);
    double ang, len;
    tram_se3_distance(&goal, &T, &ang, &len);
    k->ik_len = len / to_chain;
    k->ik_rad = ang;
    tram_se3_scale_translation(&T, 1.0 / to_chain, &k->T_base_flange);
    tram__plan_predict(c->setup, X, Z, &k->T_base_flange, &k->P, &k->S);
    double t[3] = {k->T_base_flange.m[0][3], k->T_base_flange.m[1][3], k->T_base_flange.m[2][3]};
    return in_region(c, t) && tram__plan_view_ok(c, &k->S, &k->distance, &k->board_tilt);
}

/* One attempt; 1 when *k is a feasible candidate. */
static int attempt(const tram_cell *c, const tram_se3 *X, const tram_se3 *Z, unsigned long long *st,
                   tram__sample_stats *s, tram__plan_cand *k)
{
    tram_mat3 R_bf, R_P, R_X, R_Z, tmp, R_S;
    double q0[TRAM_JOINTS_MAX] = {0}, t[3];
    if (!draw_orientation(c, st, &R_bf, q0)) {
        s->flange_tilt++;
        return 0;
    }
    /* R_S = R_X^T R_P^T R_Z, with R_P = R_bf (eye-in-hand) or R_bf^T */
    if (c->setup == TRAM_SETUP_EYE_TO_HAND) tram_so3_transpose(&R_bf, &R_P);
    else R_P = R_bf;
    tram_se3_to_rt(X, &R_X, t);
    tram_se3_to_rt(Z, &R_Z, t);
    tram_so3_mul(&R_P, &R_X, &tmp);
    tram_so3_transpose(&tmp, &tmp);
    tram_so3_mul(&tmp, &R_Z, &R_S);
    double nz = fabs(R_S.m[2][2]);
    if (acos(nz < 1 ? nz : 1.0) > c->max_board_tilt_rad) {
        s->board_tilt++;
        return 0;
    }
    if (!place_board(c, st, &R_S, &k->S)) {
        s->image++;
        return 0;
    }
    tram_se3 XS, XSi;
    tram_se3_compose(X, &k->S, &XS);
    tram_se3_invert(&XS, &XSi);
    tram_se3_compose(Z, &XSi, &k->P);
    if (c->setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(&k->P, &k->T_base_flange);
    else k->T_base_flange = k->P;
    for (int i = 0; i < 3; i++) t[i] = k->T_base_flange.m[i][3];
    if (!in_region(c, t)) {
        s->region++;
        return 0;
    }
    if (!tram__plan_view_ok(c, &k->S, &k->distance, &k->board_tilt)) {
        s->image++;
        return 0;
    }
    k->ik_len = k->ik_rad = 0;
    if (c->chain && !reach_by_chain(c, X, Z, q0, k)) {
        s->ik++;
        return 0;
    }
    tram_se3_to_rt(&k->T_base_flange, &R_bf, t);
    k->flange_tilt = flange_tilt(c, &R_bf);
    if (c->has_nominal && k->flange_tilt > c->max_flange_tilt_rad) {
        s->flange_tilt++;
        return 0;
    }
    return 1;
}

tram_status tram__plan_sample(const tram_cell *c, const tram_se3 *X, const tram_se3 *Z,
                              size_t want, size_t max_tries, unsigned long long seed,
                              tram__plan_cand **out, size_t *n, tram__sample_stats *stats)
{
    memset(stats, 0, sizeof *stats);
    *out = NULL;
    *n = 0;
    tram__plan_cand *k = tram__malloc((want ? want : 1) * sizeof *k);
    if (!k) return TRAM_ENOMEM;
    unsigned long long st = seed;
    size_t got = 0;
    while (got < want && stats->tries < max_tries) {
        stats->tries++;
        memset(&k[got], 0, sizeof k[got]);
        if (attempt(c, X, Z, &st, stats, &k[got])) got++;
    }
    stats->found = got;
    if (!got) {
        tram__free(k);
        return TRAM_OK;
    }
    *out = k;
    *n = got;
    return TRAM_OK;
}
