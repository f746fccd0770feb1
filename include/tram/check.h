/*
 * tram/check.h - mount checks: has the sensor (or the target) moved since
 * the calibration?  Reads the calibration file written by tram_solve's
 * JSON (format tram-calibration, version 1) and compares new stations with
 * it.  Method and test: docs/check.md.
 *
 * Frames (T_a_b: pose of b in a).  A change of the sensor mount is reported
 * in the frame the sensor is fixed to - the flange for eye-in-hand, the
 * base for eye-to-hand; a change of the target in the frame the target is
 * fixed to - the base for eye-in-hand, the flange for eye-to-hand.  In both
 * cases the new transform is (exp(w) R, t + d) with w (rad) and d (length)
 * expressed in that frame: d is the displacement of the moved frame's
 * origin, w the rotation about that origin.
 */
#ifndef TRAM_CHECK_H
#define TRAM_CHECK_H

#include "tram/records.h"
#include "tram/solve.h"

#ifdef __cplusplus
extern "C" {
#endif

/* One station's residual as stored by solve (residuals.stations). */
typedef struct tram_calibration_residual {
    char station[TRAM_STATION_ID_MAX];
    double rotation_deg;  /* NaN when the file holds null                       */
    double translation;   /* calibration's length unit; NaN when null           */
    int outlier;
} tram_calibration_residual;

/* A stored calibration. */
typedef struct tram_calibration {
    tram_setup setup;
    tram_length_unit length_unit;
    tram_se3 X, Z;            /* T_flange_sensor and T_base_target (eye-in-hand), or
                                 T_base_sensor and T_flange_target (eye-to-hand) */
    int has_cov;
    double cov[144];          /* public order: X t, X w, Z t, Z w (length, rad);
                                 NaN where the file holds null (not determined) */
    double noise_length;      /* per-axis station noise of the calibration        */
    double noise_angle_rad;
    size_t stations;
    int trustworthy;          /* as stored by solve                               */
    char source[256];
    char checksum[24];        /* of the calibration's input records               */
    size_t nresiduals;        /* per-station residuals of the solve (0: none)     */
    tram_calibration_residual *residuals; /* owned by the calibration             */
    /* What a calibration report shows (tram/report.h); read when present,
     * left empty (NaN, 0, "") when the file does not hold them. */
    char written_by[64];      /* "tool": the tram that wrote the file             */
    char method[32];          /* "method": auto or the one asked for              */
    char start_method[32];    /* "start_method": the closed form the refinement began from */
    int refined;
    tram_stats rot_deg_stats; /* residuals.rotation_deg (rms, median, max)        */
    tram_stats trans_stats;   /* residuals.translation, length unit               */
    char noise_source[16];    /* "given" or "estimated"                           */
    double motion_min_deg, motion_max_deg, axis_spread_deg, condition;
    size_t outliers;
    char input_source[256];   /* input.source: the record file solved             */
    size_t ninput;            /* input.stations (0: none)                         */
    char (*input_ids)[TRAM_STATION_ID_MAX]; /* ninput ids, owned                   */
    tram_se3 *input_T_base_flange;          /* ninput poses, owned                 */
    size_t ndiag;             /* diagnostics of the solve, owned                  */
    tram_diagnostic *diag;
    int has_tool;             /* solved from tool (TCP) poses: tool_frame          */
    tram_se3 T_flange_tool;   /* the tool used (length unit)                       */
    /* The 95% half-widths the solve reported (uncertainty.<name>.translation_95
     * and rotation_95_deg: Student-t with the solve's degrees of freedom), in
     * the public order of cov but rotations in deg; has_half95 0 when the file
     * has none (then 1.96 sigma is the normal approximation). */
    int has_half95;
    double half95[12];
    /* A calibration solved from 3D points (solve --points) has a point noise
     * (noise_length) but no pose noise: noise_angle_rad is NaN, which the
     * report shows and tram_check refuses (it compares poses), naming the
     * position of "noise" in the file (noise_line, noise_column). */
    long noise_line, noise_column;
} tram_calibration;

/* Read a calibration file.  Wrong format, a newer version, missing or
 * damaged fields, and transforms that are not rigid are errors
 * (TRAM_EINPUT, naming the file and the field).  Caller frees *out with
 * tram_calibration_destroy. */
TRAM_API tram_status tram_calibration_read_file(const char *path, tram_calibration **out,
                                                tram_error *err);
TRAM_API tram_status tram_calibration_read_buffer(const char *name, const char *data, size_t len,
                                                  tram_calibration **out, tram_error *err);
/* NULL is a no-op. */
TRAM_API void tram_calibration_destroy(tram_calibration *c);

/* The Euler angles of a calibration's rotation in a named convention, with
 * their 1-sigma and 95% half-widths (tram_calibration_euler_intervals). */
typedef struct tram_calibration_euler {
    double angles_rad[3];      /* e1, e2, e3 of R                                   */
    int defined;               /* 1: the intervals below hold; 0: not defined (NaN) */
    double sigma_rad[3];       /* 1-sigma of e1, e2, e3                             */
    double half95_rad[3];      /* 95% half-widths: factor95 * sigma                 */
    double factor95;           /* the largest of the block's three rotation axes'
                                  half95 / sigma (the solve's Student t), or 1.96
                                  (normal approximation) when the file has none     */
    double lock_distance_rad;  /* R's distance from the gimbal lock; NaN when the
                                  block's covariance is not determined (null)      */
} tram_calibration_euler;

/* Euler angles of R in convention seq and their intervals: the rotation
 * covariance of block 0 (X: T_flange_sensor or T_base_sensor) or 1 (Z:
 * T_base_target or T_flange_target), about the transform's own axes,
 * propagated by tram_euler_covariance.  R is that transform's rotation, or
 * one that differs from it by a fixed rotation on the left (the tool-frame
 * transform T_flange_tool^-1 X, whose own-axes covariance is the same).
 * Returns out->defined: 0 when the calibration holds no covariance, seq is
 * invalid, or R is too close to gimbal lock (TRAM_EULER_COV_LOCK_*). */
TRAM_API int tram_calibration_euler_intervals(const tram_calibration *cal, int block,
                                              const tram_mat3 *R, tram_euler_seq seq,
                                              tram_calibration_euler *out);

typedef enum tram_verdict {
    TRAM_VERDICT_OK = 0,
    TRAM_VERDICT_SENSOR_MOVED,
    TRAM_VERDICT_TARGET_MOVED,
    TRAM_VERDICT_INCONSISTENT,
    TRAM_VERDICT_INCONCLUSIVE
} tram_verdict;

/* "ok", "sensor-moved", "target-moved", "inconsistent", "inconclusive". */
TRAM_API const char *tram_verdict_name(tram_verdict v);

typedef struct tram_check_options {
    int use_tolerance;       /* 1: ok means every station within the tolerances */
    double tol_length;       /* in the calibration's length unit                 */
    double tol_angle_rad;
    /* Before a verdict other than ok (docs/check.md, "Before blaming the
     * mount"): the convention search, the pairing test and the plausibility
     * gate.  Zero-initialised options run them with the defaults. */
    int no_plausibility;     /* 1: skip all three                                 */
    size_t pairing_permutations; /* 0: 30                                        */
    unsigned long long seed; /* pairing test's seed; 0: 1                          */
} tram_check_options;

/* The estimated change under one model. */
typedef struct tram_change {
    const char *model;       /* "sensor-moved" or "target-moved"                  */
    const char *frame;       /* "flange" or "base"                                */
    const char *transform;   /* the transform that changed, e.g. "T_flange_sensor" */
    double translation[3];   /* displacement of the moved frame's origin (length) */
    double rotation_deg[3];  /* rotation vector in that frame (deg)               */
    double translation_norm, rotation_angle_deg;
    double translation_sigma[3], rotation_sigma_deg[3]; /* 1-sigma per axis        */
    double significance;     /* chi-square of the change against its covariance   */
    double fit_chi2;         /* residual chi-square of the stations under the model */
    double fit_threshold;    /* the test's threshold for fit_chi2                  */
    int fits;                /* fit_chi2 <= fit_threshold                          */
} tram_change;

typedef struct tram_check_station {
    double rot_deg, trans;   /* deviation of the station's prediction from the
                                stored calibration                                */
    int disagrees;           /* inconsistent with the verdict's model             */
} tram_check_station;

typedef struct tram_check_result {
    tram_verdict verdict;
    tram_setup setup;
    tram_length_unit length_unit;
    size_t n;
    tram_check_station *stations;
    double chi2_none, threshold_none; /* omnibus test of "nothing changed"        */
    size_t dof_none;
    double orientation_spread_deg;    /* largest rotation between stations       */
    tram_change sensor, target;
    int best;                         /* 0: sensor model fits better, 1: target  */
    double false_alarm;               /* of the default test (0.01)               */
    size_t ndiag;
    tram_diagnostic *diag;
} tram_check_result;

/* Check new stations against a calibration.  The records' setup (if
 * declared) must match the calibration's; their lengths are converted to
 * the calibration's unit.  A calibration without a covariance (has_cov 0)
 * is refused with TRAM_EINPUT.  Caller frees *out with
 * tram_check_result_destroy. */
TRAM_API tram_status tram_check(const tram_calibration *cal, const tram_records *r,
                                const tram_check_options *opt, tram_check_result **out,
                                tram_error *err);
/* NULL is a no-op. */
TRAM_API void tram_check_result_destroy(tram_check_result *res);

/* JSON of a result (docs/check.md); with history != 0 a one-line record for
 * the history file instead (timestamp_utc: ISO 8601 text given by the
 * caller).  *text is allocated; free() it. */
TRAM_API tram_status tram_check_result_to_json(const tram_check_result *res,
                                               const tram_records *r, int history,
                                               const char *timestamp_utc, char **text,
                                               tram_error *err);

/* A check history file read back (docs/check.md): one entry per line of
 * the file (blank lines are skipped).  Every line must hold timestamp_utc
 * ("YYYY-MM-DDTHH:MM:SSZ"), a known verdict, length_unit, and
 * change.translation_norm and change.rotation_angle_deg as numbers;
 * translations are converted to the first line's length unit (the unit
 * is never assumed).  Arrays hold n values each and are owned by the
 * history. */
typedef struct tram_check_history {
    size_t n;
    double *time_s;             /* seconds since 1970-01-01T00:00:00Z (UTC)      */
    tram_verdict *verdict;
    double *translation_norm;   /* in length_unit                                 */
    double *rotation_angle_deg;
    long *line;                 /* source line of each entry                      */
    tram_length_unit length_unit;
    char source[256];
} tram_check_history;

/* Read a history file ("-": standard input).  A malformed line is an error
 * naming file:line and the field.  Caller frees *out with
 * tram_check_history_destroy. */
TRAM_API tram_status tram_check_history_read_file(const char *path, tram_check_history **out,
                                                  tram_error *err);
TRAM_API tram_status tram_check_history_read_buffer(const char *name, const char *data,
                                                    size_t len, tram_check_history **out,
                                                    tram_error *err);
/* NULL is a no-op. */
TRAM_API void tram_check_history_destroy(tram_check_history *h);

/* Parse a verdict name (tram_verdict_name); -1 when unknown. */
TRAM_API int tram_verdict_parse(const char *name);

/* Chi-square quantile for k degrees of freedom at the normal quantile z
 * (Wilson & Hilferty, Proc. Natl. Acad. Sci. 17(12), 1931); within 1% of
 * the exact value for k >= 6 at the upper tail probabilities used here. */
TRAM_API double tram_check_chi2_quantile(double k, double z);

#ifdef __cplusplus
}
#endif
#endif
