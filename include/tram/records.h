/*
 * tram/records.h - record files (format v1): per station, the robot's pose
 * paired with the sensor's observation of the calibration target.
 *
 * The reference for the format is docs/records.md.  In memory every station
 * holds, after reading, T_base_flange (the flange's pose in the robot base)
 * and T_sensor_target (the target's pose in the sensor frame), with lengths
 * in the file's declared length unit (never rescaled silently), together
 * with the raw numbers exactly as read, so that a block can be re-read under
 * another convention (tram_records_rebuild) - the basis of the convention
 * checks of the solver.
 *
 * Instead of robot_ pose columns a file may give joint readings, joint_1 ...
 * joint_n (angles in the angle unit, prismatic joints in the length unit);
 * tram_records_apply_chain (tram/chain.h) turns them into T_base_flange.
 *
 * Reading is strict: nothing is guessed.  Every problem is reported as an
 * error naming file:line:column and what was expected.
 */
#ifndef TRAM_RECORDS_H
#define TRAM_RECORDS_H

#include <stdio.h>

#include "tram/rotation.h"
#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum tram_setup {
    TRAM_SETUP_UNSET = 0,
    TRAM_SETUP_EYE_IN_HAND, /* sensor on the flange, target fixed in the cell */
    TRAM_SETUP_EYE_TO_HAND  /* sensor fixed in the cell, target on the flange */
} tram_setup;

TRAM_API tram_setup tram_setup_parse(const char *s);  /* "eye-in-hand" ... */
TRAM_API const char *tram_setup_name(tram_setup s);

/* The rotation set a pose block uses. */
typedef enum tram_rep_kind {
    TRAM_REP_NONE = 0,
    TRAM_REP_QUAT,   /* _qw,_qx,_qy,_qz: unit quaternion, scalar first       */
    TRAM_REP_ROTVEC, /* _rx,_ry,_rz: rotation vector, length = angle          */
    TRAM_REP_MATRIX, /* _r11 ... _r33: row-major rotation matrix              */
    TRAM_REP_EULER   /* _e1,_e2,_e3: angles of a declared Euler convention   */
} tram_rep_kind;

/* Blocks of a record. */
enum { TRAM_BLOCK_ROBOT = 0, TRAM_BLOCK_SENSOR = 1, TRAM_BLOCK_COUNT = 2 };

/* How the raw numbers of one block turn into a pose. */
typedef struct tram_block_convention {
    tram_rep_kind rep;          /* set by the header                           */
    tram_euler_seq euler;       /* for TRAM_REP_EULER; else TRAM_EULER_UNSET    */
    int inverted;               /* robot: 1 = base-in-flange (T_flange_base);
                                   sensor: 1 = sensor-in-target (T_target_sensor) */
    tram_angle_unit angle_unit; /* unit of rotation-vector or Euler angles      */
    double length_scale;        /* raw lengths are multiplied by this (1)        */
    int quat_xyzw;              /* 1: the qw,qx,qy,qz columns hold x,y,z,w
                                   (used only to test that hypothesis)          */
} tram_block_convention;

#define TRAM_STATION_ID_MAX 64
#define TRAM_JOINTS_MAX 16 /* joint_1 ... joint_16 */
#define TRAM_RAW_MAX 12 /* x, y, z and up to 9 rotation numbers */

/* One station, compact (docs/performance.md): its id, its line and the two
 * poses.  The numbers as read (for tram_records_rebuild), the joint
 * readings and the source columns live in arrays of the record set, only
 * when present; read them through tram_records_joints. */
typedef struct tram_station {
    const char *id;           /* NUL-terminated, at most TRAM_STATION_ID_MAX - 1
                                 characters; owned by the record set (its id
                                 pool), or by whoever built the set by hand   */
    long line;                /* source line (0: unknown)                     */
    tram_se3 T_base_flange;   /* valid when the robot block is present          */
    tram_se3 T_sensor_target; /* valid when the sensor block is present         */
} tram_station;

#define TRAM_RECORDS_WARNINGS_MAX 8 /* more are counted in n_warnings only */

typedef struct tram_records {
    size_t count;
    tram_station *stations;      /* count entries, owned by the record set     */
    char source[256];            /* file name used in messages                 */
    tram_length_unit length_unit;
    tram_angle_unit angle_unit;  /* UNSET when no block needs angles            */
    tram_setup setup;            /* from the setup directive, or UNSET           */
    long setup_line;             /* line of the setup declaration (0: none)      */
    int has_block[TRAM_BLOCK_COUNT];
    size_t n_joints;             /* joint_1..joint_n columns (0: none)           */
    int robot_from_chain;        /* T_base_flange computed from the joints       */
    int sensor_from_points;      /* T_sensor_target registered from points      */
    tram_block_convention conv[TRAM_BLOCK_COUNT];
    int reorthonormalize;        /* matrices were projected onto SO(3)          */
    unsigned long long checksum; /* FNV-1a 64 of the input bytes                */
    /* Tool poses (robot-pose: tool-in-base): the robot block holds T_base_tool,
     * the TCP's pose, logged with a tool offset active on the controller.
     * With the tool known, T_base_flange = T_base_tool T_flange_tool^-1;
     * without it the record set is refused by everything that needs flange
     * poses (tram_records_require_flange). */
    int robot_tool;              /* robot-pose: tool-in-base                      */
    int has_tool;                /* T_flange_tool known and applied              */
    tram_se3 T_flange_tool;      /* the tool's pose in the flange (length unit)  */
    long robot_pose_line;        /* line of the robot-pose directive (0: none)   */
    long tool_line;              /* line of tool-in-flange (0: none or unknown)  */
    int tool_in_file;            /* the tool came from the file (tool-in-flange) */
    double quat_norm_tol;        /* the quaternion tolerance read with (0: default) */
    /* Warnings of the reader, each "file:line:col: warning: ...": e.g. a
     * comment that looks like a misspelt directive (it is not applied). */
    size_t n_warnings;
    char warnings[TRAM_RECORDS_WARNINGS_MAX][512];
    /* The numbers as read, owned by the record set (NULL when absent, e.g.
     * in a set built by hand): station i's block b starts at
     * raw[i * raw_stride + raw_off[b]] (x, y, z, then the rotation
     * numbers); rot_col[i * TRAM_BLOCK_COUNT + b] is the source column of
     * its first rotation number (NULL: columns not known, as in JSON);
     * joints[i * n_joints + j] and joint_col likewise. */
    double *raw;
    size_t raw_stride;
    size_t raw_off[TRAM_BLOCK_COUNT];
    int *rot_col;
    double *joints;
    int *joint_col;
    char *id_pool;               /* the stations' ids, owned                    */
} tram_records;

typedef struct tram_read_options {
    tram_length_unit length_unit; /* given on the command line, or UNSET      */
    tram_angle_unit angle_unit;   /* given on the command line, or UNSET      */
    int reorthonormalize;         /* accept near-rotation matrices and project */
    double quat_norm_tol;         /* 0: TRAM_QUAT_NORM_TOL; up to
                                     TRAM_QUAT_NORM_MAX_FIX accepts rounded
                                     quaternions (they are normalised); a
                                     larger value is taken as that bound   */
    double matrix_tol;            /* 0: TRAM_RECORDS_MATRIX_TOL                 */
    int need_setup;               /* 1: the caller needs the setup from the file
                                     (no --setup): a file without '# setup:' is
                                     refused, listed with every other missing
                                     declaration in one message */
} tram_read_options;

/* Matrices whose defect (tram_so3_defect) exceeds this are rejected unless
 * re-orthonormalisation is asked for; beyond TRAM_RECORDS_MATRIX_MAX_FIX they
 * are rejected even then. */
#define TRAM_RECORDS_MATRIX_TOL 1e-6
#define TRAM_RECORDS_MATRIX_MAX_FIX 0.05

/* Read a record file: CSV, or JSON when the first non-blank byte is '{'.
 * path "-" reads standard input.  On success *out is a new record set the
 * caller frees with tram_records_destroy.  On failure *out is NULL and err
 * names file:line:column. */
TRAM_API tram_status tram_records_read_file(const char *path, const tram_read_options *opt,
                                            tram_records **out, tram_error *err);
/* The same on a buffer in memory; `name` is used in messages. */
TRAM_API tram_status tram_records_read_buffer(const char *name, const char *data, size_t len,
                                              const tram_read_options *opt, tram_records **out,
                                              tram_error *err);
/* Free a record set.  NULL is a no-op. */
TRAM_API void tram_records_destroy(tram_records *r);
/* A deep copy (NULL on allocation failure).  Caller frees. */
TRAM_API tram_records *tram_records_clone(const tram_records *r);

/* Recompute every station's poses from its raw numbers under `conv` (one
 * per block) and store conv in r.  Fails, leaving r's poses unspecified,
 * when a quaternion or matrix does not pass the checks. */
TRAM_API tram_status tram_records_rebuild(tram_records *r,
                                          const tram_block_convention conv[TRAM_BLOCK_COUNT],
                                          tram_error *err);

/* Output representation of tram_records_write. */
typedef struct tram_output_rep {
    tram_rep_kind kind;
    tram_euler_seq euler;          /* for TRAM_REP_EULER                       */
    tram_length_unit length_unit;  /* UNSET: the records' unit                  */
    tram_angle_unit angle_unit;    /* needed for ROTVEC and EULER                */
    int quat_xyzw;                 /* QUAT: columns in the order qx,qy,qz,qw
                                      (scalar last; the names keep each number's
                                      meaning, so the file reads back the same) */
    int digits;                    /* significant digits of CSV numbers, 1..17;
                                      0: 17 (reads back bit for bit)            */
    int with_joints;               /* 1: also the joint readings (joint_1 ...), in
                                      the records' own units (no unit change)    */
} tram_output_rep;

/* Parse "quat", "quat-xyzw", "rotvec", "matrix" or "euler:SEQ"; 0 on
 * success, -1 else. */
TRAM_API int tram_output_rep_parse(const char *s, tram_output_rep *out);

/* Write as a v1 record file (CSV when json == 0, else JSON) with the poses
 * in their default direction (flange-in-base, target-in-sensor), every
 * number printed with %.17g so that it reads back exactly (CSV: rep->digits
 * significant digits when set, for people; JSON always 17). */
TRAM_API tram_status tram_records_write(const tram_records *r, const tram_output_rep *rep,
                                        int json, FILE *f, tram_error *err);

/* ---- tool poses (tool.c, docs/records.md) --------------------------- */

/* Parse the tool's pose in the flange frame from its text form
 * "X,Y,ZUNIT ROTATION": the translation with its length unit, then
 * quat:W,X,Y,Z, rotvec:A,B,CUNIT, euler:SEQ:A,B,CUNIT or
 * matrix:R11,...,R33, e.g. "0,0,150mm quat:1,0,0,0" or
 * "0,0,0.15m euler:zyx-intrinsic:90,0,0deg".  Nothing is assumed: every
 * unit and convention is in the text.  *unit gets the translation's unit. */
TRAM_API tram_status tram_tool_parse(const char *text, tram_se3 *T_flange_tool,
                                     tram_length_unit *unit, tram_error *err);
/* Apply a tool (translation in `unit`, converted to the records' unit) to
 * a record set read with robot-pose: tool-in-base and no tool-in-flange:
 * every station's T_base_flange becomes T_base_tool T_flange_tool^-1.
 * Refused when the robot poses are not declared as tool poses or the file
 * declares its tool already. */
TRAM_API tram_status tram_records_set_tool(tram_records *r, const tram_se3 *T_flange_tool,
                                           tram_length_unit unit, tram_error *err);
/* TRAM_EINPUT (naming the robot-pose directive's line) when the robot
 * poses are tool poses whose tool is not known; TRAM_OK otherwise.  The
 * solvers, the mount check and the writer call it first. */
TRAM_API tram_status tram_records_require_flange(const tram_records *r, tram_error *err);

/* ---- plain-array access (for bindings; records_access.c) ----------- */

/* Number of stations (0 for NULL). */
TRAM_API size_t tram_records_count(const tram_records *r);
/* The reader's warning i ("file:line:col: warning: ..."), or NULL when i
 * is out of range. */
TRAM_API const char *tram_records_warning(const tram_records *r, size_t i);
/* Station i's id, or NULL when i is out of range. */
TRAM_API const char *tram_records_station_id(const tram_records *r, size_t i);
/* Station i's n_joints joint readings as read (records' units), or NULL
 * when the set has none or i is out of range. */
TRAM_API const double *tram_records_joints(const tram_records *r, size_t i);
/* Station i's pose of block TRAM_BLOCK_ROBOT (T_base_flange) or
 * TRAM_BLOCK_SENSOR (T_sensor_target) as a row-major 4x4 in the records'
 * length unit; 1 on success, 0 when the block is absent or i is out of
 * range. */
TRAM_API int tram_records_pose(const tram_records *r, size_t i, int block, double T[16]);
/* A record set from n row-major 4x4 poses per block (either may be NULL,
 * not both) in length unit `unit` (required), with station ids (NULL:
 * "1" .. "n") and an optional setup.  The poses go through the record
 * reader's checks (opt as for tram_records_read_buffer; a matrix that is
 * not a rotation is refused unless opt->reorthonormalize); messages name
 * "<arrays>" and the line of the generated text (line 4 + i for station
 * i, or 3 + i without a setup).  Caller frees *out. */
TRAM_API tram_status tram_records_from_poses(size_t n, const char *const *ids,
                                             const double *T_base_flange,
                                             const double *T_sensor_target, tram_length_unit unit,
                                             tram_setup setup, const tram_read_options *opt,
                                             tram_records **out, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
