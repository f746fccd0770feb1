/*
 * ik.c - numerical inverse kinematics of a chain (tram/chain.h): damped
 * least squares on the geometric Jacobian of chain.c (Wampler, "Manipulator
 * inverse kinematic solutions based on vector formulations and damped
 * least-squares methods", IEEE T-SMC 16(1), 1986; Nakamura & Hanafusa,
 * "Inverse kinematic solutions with singularity robustness for robot
 * manipulator control", J. Dyn. Sys. Meas. Control 108(3), 1986).
 *
 * Error of the pose, in the base frame: e = (p* - p, log(R* R^T)) with the
 * translation divided by a length L (the flange's distance from the base
 * at the start, at least 1) so that both halves weigh alike.  Step:
 *     dq = J^T (J J^T + lambda^2 I)^-1 e
 * in readings (Jacobian columns times the encoder scale and the angle
 * unit), clamped to the joint limits; lambda grows when a step does not
 * lower |e| and shrinks when it does (Levenberg's rule).  The 6x6 system
 * is solved through LAPACKE (math/linalg.c).
 */
#include "tram/chain.h"
#include "math/linalg_internal.h"

#include <math.h>
#include <string.h>

#define IK_MAX_ITER 300

/* Pose error (translation / L, rotation) of the flange at readings q. */
static double pose_error(const tram_chain *c, const double *q, const tram_se3 *T_goal, double L,
                         double e[6], double *err_len, double *err_rad)
{
    tram_se3 T;
    tram_chain_forward(c, q, &T, NULL);
    tram_mat3 R, Rg, Rt, D;
    double t[3], tg[3];
    tram_se3_to_rt(&T, &R, t);
    tram_se3_to_rt(T_goal, &Rg, tg);
    tram_so3_transpose(&R, &Rt);
    tram_so3_mul(&Rg, &Rt, &D);
    tram_so3_log(&D, e + 3);
    double l2 = 0, a2 = 0;
    for (int k = 0; k < 3; k++) {
        e[k] = (tg[k] - t[k]) / L;
        l2 += tram__sq(tg[k] - t[k]);
        a2 += tram__sq(e[3 + k]);
    }
    *err_len = sqrt(l2);
    *err_rad = sqrt(a2);
    double s = 0;
    for (int k = 0; k < 6; k++) s += e[k] * e[k];
    return s;
}

/* Jacobian per reading (6 x n), translation rows divided by L. */
static void reading_jacobian(const tram_chain *c, const double *q, double L, double *J)
{
    size_t n = c->n_joints;
    tram_chain_jacobian(c, q, J);
    size_t j = 0;
    double per = tram_unit_angle_in_rad(c->angle_unit);
    for (size_t i = 0; i < c->n_elements; i++) {
        const tram_chain_element *el = &c->elements[i];
        if (el->kind == TRAM_CHAIN_FIXED) continue;
        double f = el->scale * (el->kind == TRAM_CHAIN_REVOLUTE ? per : 1.0);
        for (size_t k = 0; k < 6; k++) J[k * n + j] *= f * (k < 3 ? 1.0 / L : 1.0);
        j++;
    }
}

static void clamp_limits(const tram_chain *c, double *q)
{
    size_t j = 0;
    for (size_t i = 0; i < c->n_elements; i++) {
        const tram_chain_element *e = &c->elements[i];
        if (e->kind == TRAM_CHAIN_FIXED) continue;
        if (e->has_limits) q[j] = q[j] < e->lo ? e->lo : q[j] > e->hi ? e->hi : q[j];
        j++;
    }
}

/* One damped step dq = J^T (J J^T + lambda^2 I)^-1 e; 0 on success. */
static int dls_step(const double *J, size_t n, const double e[6], double lambda, double *dq)
{
    double A[36], y[6];
    for (size_t a = 0; a < 6; a++)
        for (size_t b = 0; b < 6; b++) {
            double s = 0;
            for (size_t k = 0; k < n; k++) s += J[a * n + k] * J[b * n + k];
            A[a * 6 + b] = s + (a == b ? lambda * lambda : 0.0);
        }
    if (tram__spd_solve(6, A, e, y) != TRAM_OK) return -1;
    for (size_t k = 0; k < n; k++) {
        double s = 0;
        for (size_t a = 0; a < 6; a++) s += J[a * n + k] * y[a];
        dq[k] = s;
    }
    return 0;
}

int tram_chain_ik(const tram_chain *c, const tram_se3 *T_base_flange, const double *q0,
                  double tol_length, double tol_rad, double *q)
{
    size_t n = c->n_joints;
    if (n == 0 || n > TRAM_JOINTS_MAX) return 0;
    double cur[TRAM_JOINTS_MAX], trial[TRAM_JOINTS_MAX], dq[TRAM_JOINTS_MAX];
    double J[6 * TRAM_JOINTS_MAX], e[6], et[6];
    memcpy(cur, q0, n * sizeof *cur);
    clamp_limits(c, cur);
    tram_se3 T0;
    tram_chain_forward(c, cur, &T0, NULL);
    double L = sqrt(tram__sq(T0.m[0][3]) + tram__sq(T0.m[1][3]) + tram__sq(T0.m[2][3]));
    if (!(L > 1.0)) L = 1.0;
    double el, ea, elt, eat;
    double cost = pose_error(c, cur, T_base_flange, L, e, &el, &ea), lambda = 0.1;
    for (int it = 0; it < IK_MAX_ITER; it++) {
        if (el <= tol_length && ea <= tol_rad) {
            memcpy(q, cur, n * sizeof *q);
            return 1;
        }
        reading_jacobian(c, cur, L, J);
        if (dls_step(J, n, e, lambda, dq) != 0) return 0;
        for (size_t k = 0; k < n; k++) trial[k] = cur[k] + dq[k];
        clamp_limits(c, trial);
        double ct = pose_error(c, trial, T_base_flange, L, et, &elt, &eat);
        if (ct < cost) {
            memcpy(cur, trial, n * sizeof *cur);
            memcpy(e, et, sizeof e);
            cost = ct;
            el = elt;
            ea = eat;
            lambda = lambda * 0.3 > 1e-6 ? lambda * 0.3 : 1e-6;
        } else {
            lambda *= 4;
            if (lambda > 1e4) break; /* stuck: at a limit or out of reach */
        }
    }
    if (el <= tol_length && ea <= tol_rad) {
        memcpy(q, cur, n * sizeof *q);
        return 1;
    }
    return 0;
}
