/*
 * tram/plan.h - station planning: the robot poses that best cut the
 * uncertainty of a hand-eye calibration, inside the cell's view and reach
 * (docs/plan.md).
 *
 * The problem is that of tram/handeye.h, P_i X S_i = Z.  A candidate
 * robot pose P gives, at the current estimate (X, Z), the observation
 * S = X^-1 P^-1 Z that the sensor would see; its information about
 * (X, Z) is J^T J with J the refinement's weighted Jacobian (the noise per
 * station as weights).  Candidates are sampled inside the view (target in
 * the image with a margin, working distance, board tilt) and the reach
 * (flange box or sphere and tilt from a nominal orientation, or a chain
 * with joint limits reached by damped least-squares inverse kinematics),
 * then chosen to maximise log det of the information (D-optimality;
 * Kiefer & Wolfowitz, Canad. J. Math. 12, 1960; Pukelsheim, Optimal Design
 * of Experiments, Wiley 1993, ch. 9), greedily and then improved by
 * exchanges (Fedorov, Theory of Optimal Experiments, 1972).  The visiting
 * order is a nearest-neighbour tour improved by 2-opt (Croes, Oper. Res.
 * 6(6), 1958).
 *
 * A proposed pose is an unverified motion: tram checks no collisions with
 * fixtures, cables or people.
 *
 * Lengths are in the cell's length unit throughout; angles in radians
 * unless a name says _deg.
 */
#ifndef TRAM_PLAN_H
#define TRAM_PLAN_H

#include "tram/camera.h"
#include "tram/chain.h"
#include "tram/records.h"
#include "tram/solve.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum tram_reach_kind {
    TRAM_REACH_NONE = 0,   /* no region (a chain gives the reach)                  */
    TRAM_REACH_BOX,    /* flange origin inside [lo, hi] per axis (base frame) */
    TRAM_REACH_SPHERE      /* flange origin within radius of centre               */
} tram_reach_kind;

/* A cell (docs/plan.md, format "tram-cell", version 1). */
typedef struct tram_cell {
    char source[256];
    tram_setup setup;
    tram_length_unit length_unit;
    tram_se3 X, Z;               /* the rough guess (tram/handeye.h's X and Z)        */
    double target_x[2], target_y[2]; /* the board's extent in the target frame (z = 0) */
    tram_camera camera;          /* from a camera file or the field of view          */
    double distance[2];          /* working distance range: depth of the board
                                    centre along the optical axis                     */
    double max_board_tilt_rad;   /* board normal against the optical axis             */
    double margin_px;            /* from the image border                              */
    tram_reach_kind reach;       /* flange position region (NONE only with a chain)   */
    double box_lo[3], box_hi[3]; /* TRAM_REACH_BOX                                     */
    double centre[3], radius;    /* TRAM_REACH_SPHERE                                  */
    int has_nominal;             /* 1: the flange tilt limit applies                   */
    tram_mat3 R_nominal;         /* nominal flange orientation in the base frame       */
    double max_flange_tilt_rad;  /* largest rotation angle from R_nominal              */
    tram_chain *chain;           /* or NULL; owned                                     */
    int noise_given;
    double noise_length, noise_angle_rad; /* per-axis 1-sigma of a station             */
    tram_output_rep out_rep;     /* the robot convention of the written stations       */
    int out_rep_given;
} tram_cell;

/* Read a cell file.  setup must be set (the guess's keys depend on it).
 * Files it names (camera, chain) are read relative to the cell file's
 * folder.  Every refusal names file:line:column and what was expected
 * (TRAM_EINPUT); TRAM_EIO when a file cannot be read.  Caller frees *out
 * with tram_cell_destroy (NULL is a no-op). */
TRAM_API tram_status tram_cell_read_file(const char *path, tram_setup setup, tram_cell **out,
                                         tram_error *err);
/* The same on a buffer; dir is the folder for the files it names (NULL:
 * the current folder). */
TRAM_API tram_status tram_cell_read_buffer(const char *name, const char *data, size_t len,
                                           const char *dir, tram_setup setup, tram_cell **out,
                                           tram_error *err);
TRAM_API void tram_cell_destroy(tram_cell *c);

typedef struct tram_plan_options {
    size_t stations;          /* K, stations to propose (6)                        */
    size_t candidates;        /* feasible candidates to sample (1500)               */
    size_t max_samples;       /* sampling attempts before giving up (400000)        */
    size_t random_draws;      /* random feasible sets for the comparison (20)      */
    unsigned long long seed;  /* sampling seed (1); printed in the report           */
    int exchange;             /* 1 (default): improve the greedy choice by exchanges */
} tram_plan_options;

TRAM_API void tram_plan_options_init(tram_plan_options *opt);

typedef struct tram_plan_station {
    char id[TRAM_STATION_ID_MAX];
    tram_se3 T_base_flange;      /* the proposed robot pose                             */
    tram_se3 T_sensor_target;    /* what the sensor should see there (at the guess)     */
    double joints[TRAM_JOINTS_MAX]; /* chain readings (chain units), when a chain is given */
    double ik_err_length, ik_err_rad; /* reached pose against the asked one             */
    double distance;             /* depth of the board centre                          */
    double board_tilt_deg;       /* board normal against the optical axis               */
    double flange_tilt_deg;      /* from the nominal orientation (NaN without one)      */
    double gain;                 /* log det the plan loses without this station        */
} tram_plan_station;

/* 1-sigma of X: per axis (translation in the length unit, parent frame;
 * rotation about X's own axes, deg) and the root sum of squares. */
typedef struct tram_plan_sigma {
    int valid;                   /* 0: the information is singular (not determined)     */
    double trans_axis[3], rot_axis_deg[3];
    double trans, rot_deg;       /* sqrt of the sum of the three variances             */
} tram_plan_sigma;

typedef struct tram_plan_result {
    tram_setup setup;
    tram_length_unit length_unit;
    tram_se3 X, Z;               /* the estimate planned at                             */
    const char *estimate_source; /* "guess" (the cell's) or "records" (their solve)     */
    double noise_length, noise_angle_rad;
    const char *noise_source;    /* "given", "records"                                  */
    size_t n_existing;           /* stations of the records                             */
    size_t n;                    /* proposed stations, in visiting order                */
    tram_plan_station *stations;
    size_t n_joints;             /* chain joints (0: no chain)                          */
    size_t candidates, samples;  /* feasible candidates found, attempts made            */
    unsigned long long seed;
    size_t random_draws;
    tram_plan_sigma current;     /* from the records' stations (invalid without)        */
    tram_plan_sigma planned;     /* predicted after the proposed stations               */
    tram_plan_sigma random;      /* median over random_draws sets of K random feasible  */
    double logdet_planned, logdet_random_median; /* of the 12x12 information           */
    double info[144];            /* information of (X, Z) after the proposal: existing
                                    plus proposed (tram/solve.h's parameter order,
                                    rad and length, weights 1 / sigma^2)              */
    double path_length;          /* flange travel along the visiting order              */
} tram_plan_result;

/* Plan.  existing (may be NULL) holds the stations already recorded; sol
 * (may be NULL) is their solve: when solved, its X, Z replace the cell's
 * guess and its noise is used unless the cell gives one.  Returns
 * TRAM_EUNDETERMINED when no pose satisfies the constraints (err says
 * which constraint stops it) or no noise is known; TRAM_EINPUT for a
 * cell whose units or setup disagree with the records; TRAM_ENOMEM.
 * Caller frees *out with tram_plan_result_destroy (NULL is a no-op). */
TRAM_API tram_status tram_plan(const tram_cell *cell, const tram_records *existing,
                               const tram_solution *sol, const tram_plan_options *opt,
                               tram_plan_result **out, tram_error *err);
TRAM_API void tram_plan_result_destroy(tram_plan_result *p);

/* The proposed stations as a record set: robot block in the cell's length
 * unit, ids, the setup, and with a chain the joint readings (joint_1 ...,
 * in the chain's units; the records' angle unit is the chain's).  Caller
 * frees with tram_records_destroy. */
TRAM_API tram_status tram_plan_records(const tram_plan_result *p, const tram_cell *cell,
                                       tram_records **out, tram_error *err);

/* The plan's JSON document (docs/plan.md).  *text is allocated; free()
 * it. */
TRAM_API tram_status tram_plan_to_json(const tram_plan_result *p, char **text, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
