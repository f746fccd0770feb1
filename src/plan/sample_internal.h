/*
 * sample_internal.h - candidate stations inside a cell's view and reach
 * (sample.c), shared with the station planner (plan.c, design.c).
 */
#ifndef TRAM_SAMPLE_INTERNAL_H
#define TRAM_SAMPLE_INTERNAL_H

#include "tram/plan.h"
#include "core/tram_internal.h"

/* One feasible candidate: the robot pose, what the sensor would see there
 * at the estimate (X, Z), and its measures. */
typedef struct tram__plan_cand {
    tram_se3 P;                     /* the problem's P (tram/handeye.h)         */
    tram_se3 T_base_flange;
    tram_se3 S;                     /* predicted T_sensor_target                */
    double joints[TRAM_JOINTS_MAX]; /* chain readings (chain units)             */
    double ik_len, ik_rad;          /* IK's remaining error (cell length, rad)  */
    double distance, board_tilt, flange_tilt; /* (length, rad, rad; NaN)        */
    double J[6 * 12];               /* weighted refinement Jacobian (design.c)  */
} tram__plan_cand;

/* Why samples were turned down, in the order they are tested. */
typedef struct tram__sample_stats {
    size_t tries, flange_tilt, board_tilt, region, image, ik, found;
} tram__sample_stats;

/* Sample up to `want` feasible candidates in at most max_tries attempts
 * (seeded splitmix64).  *out is allocated with tram__malloc (NULL when
 * none was found); TRAM_ENOMEM. */
tram_status tram__plan_sample(const tram_cell *c, const tram_se3 *X, const tram_se3 *Z,
                              size_t want, size_t max_tries, unsigned long long seed,
                              tram__plan_cand **out, size_t *n, tram__sample_stats *stats);

/* The view measures of an observation S (target in the sensor frame):
 * depth of the board centre, tilt of the board normal against the optical
 * axis (rad), and whether every corner is inside the image with the
 * margin.  Returns 1 when S satisfies the cell's view. */
int tram__plan_view_ok(const tram_cell *c, const tram_se3 *S, double *distance, double *tilt);

/* The problem's observation S = X^-1 P^-1 Z for robot pose T_base_flange,
 * and P itself. */
void tram__plan_predict(tram_setup setup, const tram_se3 *X, const tram_se3 *Z,
                        const tram_se3 *T_base_flange, tram_se3 *P, tram_se3 *S);

/* Uniform in [0, 1) from a splitmix64 state. */
double tram__plan_uniform(unsigned long long *state);

#endif
