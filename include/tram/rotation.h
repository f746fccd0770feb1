/*
 * tram/rotation.h - rotation representations and conversions: unit
 * quaternions (stored w, x, y, z), rotation vectors, axis-angle, and Euler
 * angles for all 12 axis sequences, intrinsic or extrinsic (24 named
 * conventions, no default).
 *
 * Quaternion convention: Hamilton product, q = w + x i + y j + z k, and a
 * unit quaternion q represents R(q) with v' = q v q*.  The type name
 * tram_quat_wxyz carries the storage order.  q and -q are the same
 * rotation; conversions to a quaternion return the canonical sign (w > 0, or
 * when w = 0 the first non-zero of x, y, z positive).
 *
 * Euler angles: an intrinsic sequence "abc" with angles (e1, e2, e3) is
 * R = R_a(e1) R_b(e2) R_c(e3) (rotations about the moving axes); an
 * extrinsic sequence "abc" rotates about the fixed a by e1, then fixed b by
 * e2, then fixed c by e3: R = R_c(e3) R_b(e2) R_a(e1).  Angles in radians.
 * Extraction ranges: Tait-Bryan sequences (all axes distinct) give the
 * middle angle in [-pi/2, pi/2], proper Euler sequences (first = last) in
 * [0, pi]; the other two in [-pi, pi].  At gimbal lock (|cos| of the
 * middle angle, or |sin| for proper sequences, below 1e-12) the third
 * angle is set to 0 and the first carries the whole rotation about the
 * locked axis; the matrix round trip stays exact to rounding.
 */
#ifndef TRAM_ROTATION_H
#define TRAM_ROTATION_H

#include "tram/so3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct tram_quat_wxyz {
    double w, x, y, z;
} tram_quat_wxyz;

/* Default tolerance on | |q| - 1 | for quaternions read from files. */
#define TRAM_QUAT_NORM_TOL 1e-6
/* The widest tolerance a reader accepts when asked to normalise rounded
 * quaternions (tram --rounded-quat, tram_read_options.quat_norm_tol): a
 * quaternion printed to 4 decimals is off by up to about 1e-4 (common
 * practice: logs print 4-6 decimals); beyond 1e-2 the numbers are more
 * likely not a unit quaternion at all (wrong columns, scalar missing). */
#define TRAM_QUAT_NORM_MAX_FIX 1e-2

/* R from a quaternion; q is normalised first (a zero q gives identity). */
TRAM_API void tram_quat_wxyz_to_mat3(const tram_quat_wxyz *q, tram_mat3 *out);
/* Canonical unit quaternion of a rotation matrix (Shepperd's method). */
TRAM_API void tram_quat_wxyz_from_mat3(const tram_mat3 *R, tram_quat_wxyz *out);
/* Hamilton product out = a b. */
TRAM_API void tram_quat_wxyz_mul(const tram_quat_wxyz *a, const tram_quat_wxyz *b,
                                 tram_quat_wxyz *out);
TRAM_API double tram_quat_wxyz_norm(const tram_quat_wxyz *q);
/* Canonical sign (see above); out may alias q. */
TRAM_API void tram_quat_wxyz_canonical(const tram_quat_wxyz *q, tram_quat_wxyz *out);

/* Rotation vector (axis times angle in rad) <-> matrix: same as
 * tram_so3_exp / tram_so3_log. */
TRAM_API void tram_rotvec_to_mat3(const double rv[3], tram_mat3 *out);
TRAM_API void tram_rotvec_from_mat3(const tram_mat3 *R, double out_rv[3]);

/* Axis-angle: unit axis and angle in [0, pi].  For the identity the axis is
 * (1, 0, 0) and the angle 0.  to_mat3 normalises the axis; a zero axis
 * gives the identity. */
TRAM_API void tram_axis_angle_to_mat3(const double axis[3], double angle_rad, tram_mat3 *out);
TRAM_API void tram_axis_angle_from_mat3(const tram_mat3 *R, double out_axis[3],
                                        double *out_angle_rad);

/* The 24 Euler conventions.  The value encodes the sequence (0..11) and
 * the intrinsic flag; use tram_euler_parse / tram_euler_name. */
typedef enum tram_euler_seq {
    TRAM_EULER_UNSET = -1,
    TRAM_EULER_XYZ_INTRINSIC = 0, TRAM_EULER_XZY_INTRINSIC, TRAM_EULER_YXZ_INTRINSIC,
    TRAM_EULER_YZX_INTRINSIC, TRAM_EULER_ZXY_INTRINSIC, TRAM_EULER_ZYX_INTRINSIC,
    TRAM_EULER_XYX_INTRINSIC, TRAM_EULER_XZX_INTRINSIC, TRAM_EULER_YXY_INTRINSIC,
    TRAM_EULER_YZY_INTRINSIC, TRAM_EULER_ZXZ_INTRINSIC, TRAM_EULER_ZYZ_INTRINSIC,
    TRAM_EULER_XYZ_EXTRINSIC, TRAM_EULER_XZY_EXTRINSIC, TRAM_EULER_YXZ_EXTRINSIC,
    TRAM_EULER_YZX_EXTRINSIC, TRAM_EULER_ZXY_EXTRINSIC, TRAM_EULER_ZYX_EXTRINSIC,
    TRAM_EULER_XYX_EXTRINSIC, TRAM_EULER_XZX_EXTRINSIC, TRAM_EULER_YXY_EXTRINSIC,
    TRAM_EULER_YZY_EXTRINSIC, TRAM_EULER_ZXZ_EXTRINSIC, TRAM_EULER_ZYZ_EXTRINSIC
} tram_euler_seq;

#define TRAM_EULER_COUNT 24

/* Parse names like "zyx-intrinsic" or "xyz-extrinsic" (lower case, exact).
 * TRAM_EULER_UNSET for anything else. */
TRAM_API tram_euler_seq tram_euler_parse(const char *name);
/* "zyx-intrinsic", ...; "unset" for invalid values. */
TRAM_API const char *tram_euler_name(tram_euler_seq seq);
/* The three axis indices (0 = x, 1 = y, 2 = z) in the order of the name. */
TRAM_API void tram_euler_axes(tram_euler_seq seq, int out_axes[3]);

/* R from the three angles (rad) of the named convention.  An invalid seq
 * gives the identity. */
TRAM_API void tram_euler_to_mat3(tram_euler_seq seq, const double e[3], tram_mat3 *out);
/* The three angles (rad) of R in the named convention (ranges and gimbal
 * lock rule above).  An invalid seq gives zeros. */
TRAM_API void tram_euler_from_mat3(tram_euler_seq seq, const tram_mat3 *R, double out_e[3]);

/* How close to gimbal lock tram_euler_covariance still propagates: the
 * rotation must be at least TRAM_EULER_COV_LOCK_MIN_DEG from the lock of
 * the convention (middle angle +-90 deg for Tait-Bryan, 0 or 180 deg for
 * proper Euler sequences), and at least TRAM_EULER_COV_LOCK_SIGMAS times
 * the rotation's total 1-sigma (sqrt of the trace of its covariance).
 * Closer, the first and third angles are ill-determined (the Jacobian
 * grows as 1 / sin(distance)) and a linearised interval would mislead: a
 * choice of this project, not a standard. */
#define TRAM_EULER_COV_LOCK_MIN_DEG 1.0
#define TRAM_EULER_COV_LOCK_SIGMAS 5.0

/* The covariance (rad^2, row-major 3x3, order e1 e2 e3) of the Euler
 * angles of R in the named convention, given cov_body (rad^2, row-major
 * 3x3), the covariance of a small rotation w about R's own axes: the truth
 * is R exp(w) (right perturbation, the frame of tram's calibration
 * covariances, docs/solve.md).  First-order propagation through the
 * analytic Jacobian de/dw = M^-1, M the matrix of omega = M de/dt with
 * omega the body angular velocity (R^T dR/dt = [omega]x).  *out_lock_rad
 * (may be NULL) receives the distance of R from the convention's gimbal
 * lock, asin |det M| (rad).  Returns 1 when the covariance is defined, 0
 * (out_cov all NaN) for an invalid seq, a covariance with a negative or
 * NaN trace, or R too close to gimbal lock (the limits above). */
TRAM_API int tram_euler_covariance(tram_euler_seq seq, const tram_mat3 *R, const double cov_body[9],
                                   double out_cov[9], double *out_lock_rad);

#ifdef __cplusplus
}
#endif
#endif
