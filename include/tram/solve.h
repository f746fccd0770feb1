/*
 * tram/solve.h - the hand-eye calibration pipeline: closed-form start,
 * robust refinement, outlier flags, residual statistics, uncertainty,
 * observability figures and convention checks (docs/solve.md).
 *
 * Unknowns by setup (T_a_b: pose of b in a):
 *   eye-in-hand:  X = T_flange_sensor, Z = T_base_target,
 *                 T_base_target = T_base_flange(i) T_flange_sensor T_sensor_target(i)
 *   eye-to-hand:  X = T_base_sensor,   Z = T_flange_target,
 *                 T_base_sensor T_sensor_target(i) = T_base_flange(i) T_flange_target
 * Lengths are in the records' length unit; angles in the results are in
 * degrees where the name says _deg, else radians.
 */
#ifndef TRAM_SOLVE_H
#define TRAM_SOLVE_H

#include "tram/handeye.h"
#include "tram/records.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef void (*tram_progress_fn)(void *ctx, const char *what, size_t done, size_t total);

/* Limits of the plausibility checks (docs/solve.md, "Plausibility").  The
 * defaults are common practice, not measured on a particular cell. */
typedef struct tram_trust_options {
    int gate;                    /* 1 (default): warn when the residuals are
                                    beyond any working sensor-robot pair's      */
    double max_rms_deg;          /* station RMS rotation residual (1 deg)       */
    double max_rms_m;            /* station RMS translation residual: this
                                    (0.005 m) plus ...                          */
    double max_rms_fraction;     /* ... this fraction (0.01) of the working
                                    distance (median sensor-target distance)    */
    double max_flange_offset_m;  /* part fixed to the flange (wrist sensor or
                                    held target) farther than this (0.5 m)      */
    double max_base_offset_m;    /* part fixed in the cell farther than this
                                    from the base (5 m)                         */
    size_t pairing_permutations; /* random pairings of the pairing test (30);
                                    0: no pairing test                          */
    double pairing_factor;       /* the true pairing must fit this many times
                                    better than every random one (3)            */
} tram_trust_options;

TRAM_API void tram_trust_options_init(tram_trust_options *t);

/* What the plausibility checks measured (docs/solve.md). */
typedef struct tram_trust_report {
    double working_distance;     /* median sensor-target distance (length)       */
    double limit_rot_deg;        /* the gate's limits used                       */
    double limit_length;         /* (length unit)                                */
    int gate_failed;
    int pairing_done;
    size_t pairing_permutations;
    unsigned long long pairing_seed;
    double pairing_ratio_rot;    /* best random pairing's median residual over
                                    the true pairing's (rotation; translation)   */
    double pairing_ratio_trans;
    int pairing_failed;
} tram_trust_report;

typedef struct tram_solve_options {
    tram_method method;      /* AUTO (default): best closed form, then refinement  */
    int refine;              /* 1 (default): refine; 0: report the closed form      */
    int robust;              /* 1 (default): Cauchy loss and outlier exclusion      */
    tram_pairs_mode pairs;   /* station pairs for AX=XB methods                     */
    const tram_pair *pair_list; /* an explicit selection of pairs (0-based station
                                   indices); overrides `pairs` when npair_list > 0  */
    size_t npair_list;
    double noise_length;     /* per-axis 1-sigma of the station residual in length;
                                0 (default): estimated from the data               */
    double noise_angle_rad;  /* per-axis 1-sigma in rad; 0: estimated               */
    size_t bootstrap;        /* number of resamples; 0 (default): none              */
    unsigned long long seed; /* bootstrap seed (default 1)                          */
    int check_conventions;   /* 1 (default): run the convention checks              */
    tram_progress_fn progress;
    void *progress_ctx;
    tram_trust_options trust; /* plausibility gate, pairing test, geometry; the
                                 pairing test's seed is `seed`                      */
    int fit_scale;           /* 0 (default): the sensor's length scale is tested
                                only; 1: fitted with X and Z (docs/solve.md,
                                "Sensor length scale")                             */
    /* The sensor's noise per axis of the sensor's frame (docs/solve.md, "Noise
     * model"): when all six are > 0 they are used instead of noise_length and
     * noise_angle_rad (1-sigma; length unit, rad). */
    double noise_length_axis[3];
    double noise_angle_axis_rad[3];
    /* The robot's isotropic noise of the flange pose (1-sigma per axis;
     * length unit, rad); 0 (default): none modelled apart from the sensor's */
    double robot_noise_length;
    double robot_noise_angle_rad;
} tram_solve_options;

TRAM_API void tram_solve_options_init(tram_solve_options *opt);

/* Options on the heap, initialised as by tram_solve_options_init, and
 * set by name - for bindings, so that they never depend on the struct's
 * layout.  Names: "method" (a tram_method value), "refine", "robust",
 * "pairs" (a tram_pairs_mode value), "noise_length", "noise_angle_rad",
 * "noise_length_x" ("_y", "_z"), "noise_angle_rad_x" ("_y", "_z"),
 * "robot_noise_length", "robot_noise_angle_rad", "bootstrap", "seed",
 * "check_conventions", "fit_scale".  _set returns 0, or -1 for an
 * unknown name or a value out of range.  destroy(NULL) is a no-op. */
TRAM_API tram_solve_options *tram_solve_options_create(void);
TRAM_API int tram_solve_options_set(tram_solve_options *opt, const char *name, double value);
TRAM_API void tram_solve_options_destroy(tram_solve_options *opt);

typedef enum tram_severity {
    TRAM_SEVERITY_INFO = 0,
    TRAM_SEVERITY_WARNING = 1, /* the result must not be used until explained */
    TRAM_SEVERITY_ERROR = 2    /* no trustworthy result                         */
} tram_severity;

typedef struct tram_diagnostic {
    char code[40];       /* stable identifier, e.g. "robot-pose-inverted" */
    tram_severity severity;
    char message[700];   /* one plain sentence or two, with the fix       */
} tram_diagnostic;

typedef struct tram_station_result {
    double rot_deg;  /* angle between the station's prediction of Z and Z */
    double trans;    /* distance between them (length unit)                */
    int outlier;     /* flagged and excluded from the final refinement      */
    int no_data;     /* the station has no sensor data in this solve (e.g. no
                        pixels in --pixels): left out, not an outlier; its
                        residuals are NaN                                   */
} tram_station_result;

typedef struct tram_stats {
    double rms, median, max;
} tram_stats;

/* Uncertainty of X and Z.  Index order of the 12 values: X translation
 * x, y, z (length, along the parent frame's axes), X rotation about its
 * own x, y, z axes (deg), Z translation, Z rotation.  The 95% bound is
 * half95 = t_0.975(dof) sigma, Student's t with the degrees of freedom of
 * each value (docs/solve.md, "Intervals"). */
typedef struct tram_uncertainty {
    int valid;
    double sigma[12];
    double cov[144];     /* covariance in (length, rad), same order          */
    int bootstrap_valid;
    size_t bootstrap_used;
    double bootstrap_sigma[12];
    double bootstrap_lo[12], bootstrap_hi[12]; /* 2.5 and 97.5 percentiles of
                                                  the deviation (deg / length) */
    double half95[12];   /* 95% half-width, units of sigma                  */
    double dof[12];      /* degrees of freedom of each sigma (inf: known)   */
} tram_uncertainty;

/* The sensor's length scale s: sensor lengths (the translations of the
 * sensor poses, or the observed points) times s are the robot's lengths.
 * Estimated with X and Z by the refinement (docs/solve.md). */
typedef struct tram_scale_result {
    int estimated;   /* 1: the figures below are set                          */
    int fitted;      /* 1: X, Z and the residuals use s (fit_scale); 0: s was
                        estimated as a test only and the result uses 1       */
    double scale;    /* s                                                     */
    double sigma;    /* its 1-sigma                                           */
    double z;        /* (s - 1) / sigma                                       */
    double p_value;  /* two-sided p of s = 1 (normal approximation)           */
} tram_scale_result;

typedef struct tram_solution {
    tram_setup setup;
    tram_length_unit length_unit;
    int solved;               /* 0 when the data cannot determine the answer  */
    int trustworthy;          /* 0 when a warning or error diagnostic stands   */
    tram_method start_method; /* the closed form used as the start             */
    int refined;
    tram_se3 X, Z;
    const char *X_name;       /* "T_flange_sensor" or "T_base_sensor"          */
    const char *Z_name;       /* "T_base_target" or "T_flange_target"          */
    size_t n;                 /* stations                                      */
    tram_station_result *stations;
    size_t n_outliers;
    tram_stats rot_deg, trans; /* over the stations not flagged                */
    double noise_length, noise_angle_deg; /* sensor noise used as weights: RMS
                                             over the sensor's three axes      */
    int noise_given;
    int noise_per_axis;       /* 1: per axis; 2: one value for the rotation axes,
                                 one for translation x and y, one for z; 0: one
                                 for rotation, one for translation            */
    double noise_length_axis[3], noise_angle_axis_deg[3]; /* per axis of the
                                 sensor's frame                                */
    double noise_dof[6];      /* degrees of freedom of the estimates (rotation
                                 x y z, translation x y z; inf when given)     */
    double robot_noise_length, robot_noise_angle_deg; /* the robot term used   */
    tram_uncertainty unc;
    /* observability (Tsai & Lenz 1989's station advice) */
    double motion_min_deg, motion_max_deg; /* relative rotation angles         */
    double axis_spread_deg;   /* equivalent angle between the rotation axes   */
    double condition;         /* of the refinement's normal matrix            */
    /* each closed form's residual RMS on the same data (NaN when it failed) */
    double closed_rot_rms_deg[TRAM_METHOD_COUNT];
    double closed_trans_rms[TRAM_METHOD_COUNT];
    size_t ndiag;
    tram_diagnostic *diag;
    struct tram_point_result *points; /* solves from observed points (tram/points.h) */
    struct tram_pixel_result *pixels; /* solves from pixels (tram/pixel_solve.h) */
    tram_trust_report trust;  /* the plausibility checks' figures                  */
    tram_scale_result sensor_scale; /* the sensor's length scale                    */
} tram_solution;

/* Solve.  `setup` must be set (from the records' directive or the caller).
 * MUST-CHECK: TRAM_OK also comes with results that must not be used; use
 * X and Z only when solved && trustworthy (docs/library.md).
 * Returns TRAM_OK with *out filled, or TRAM_EUNDETERMINED with *out filled
 * (solved = 0; diagnostics say what cannot be determined and what motion to
 * add), or an error (TRAM_EINPUT, TRAM_ENOMEM, ...) with *out NULL.  The
 * caller frees *out with tram_solution_destroy. */
TRAM_API tram_status tram_solve(const tram_records *r, tram_setup setup,
                                const tram_solve_options *opt, tram_solution **out,
                                tram_error *err);
/* Free a solution.  NULL is a no-op. */
TRAM_API void tram_solution_destroy(tram_solution *s);

/* The 12 x 12 covariance of X and Z (tram_uncertainty's order and units:
 * length and rad), row-major, into cov; 1 when it is valid, else 0 (cov
 * untouched). */
TRAM_API int tram_solution_covariance(const tram_solution *s, double cov[144]);

/* The JSON document of a solution (docs/solve.md); with calibration != 0
 * also the per-station input poses, the input checksum and the tool
 * version (the calibration file read by later checks).  *text is
 * allocated; free it with free(). */
TRAM_API tram_status tram_solution_to_json(const tram_solution *s, const tram_records *r,
                                           const char *method_name, int calibration,
                                           char **text, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
