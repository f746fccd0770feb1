/*
 * tram/se3.h - rigid transforms as 4x4 homogeneous matrices in double.
 *
 * Notation: T_a_b is the pose of frame b in frame a; p_a = T_a_b p_b and
 * T_a_c = T_a_b T_b_c.  The matrix is row-major, m[3] = (0 0 0 1).  Lengths
 * are in whatever unit the caller's data uses; the functions never rescale.
 *
 * Math: composition is the matrix product; the inverse is (R^T, -R^T t)
 * (no general matrix inverse); exp/log of SE(3) use the closed forms with
 * the left Jacobian V of SO(3) (e.g. Barfoot, "State Estimation for
 * Robotics", 2017, section 7.1).
 */
#ifndef TRAM_SE3_H
#define TRAM_SE3_H

#include "tram/so3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct tram_se3 {
    double m[4][4]; /* row-major homogeneous matrix */
} tram_se3;

/* Tolerance of tram_se3_is_valid on the last row (the rotation part uses
 * TRAM_SO3_VALID_TOL). */
#define TRAM_SE3_ROW_TOL 1e-9

TRAM_API void tram_se3_identity(tram_se3 *out);
/* Build from a rotation and a translation (length unit of the caller). */
TRAM_API void tram_se3_from_rt(const tram_mat3 *R, const double t[3], tram_se3 *out);
/* Split into rotation and translation (either output may be NULL). */
TRAM_API void tram_se3_to_rt(const tram_se3 *T, tram_mat3 *R, double t[3]);

/* T_a_c = T_a_b * T_b_c. */
TRAM_API void tram_se3_compose(const tram_se3 *T_a_b, const tram_se3 *T_b_c, tram_se3 *T_a_c);
/* T_b_a = inverse(T_a_b) = (R^T, -R^T t). */
TRAM_API void tram_se3_invert(const tram_se3 *T_a_b, tram_se3 *T_b_a);
/* p_a = T_a_b p_b (homogeneous coordinate 1: translation applies). */
TRAM_API void tram_se3_apply_point(const tram_se3 *T_a_b, const double p_b[3], double p_a[3]);
/* d_a = R_a_b d_b (homogeneous coordinate 0: translation does not apply). */
TRAM_API void tram_se3_apply_direction(const tram_se3 *T_a_b, const double d_b[3], double d_a[3]);

/* Distance between two poses of the same frame pair: the rotation angle of
 * a^-1 b in degrees and the distance between their origins (caller's
 * length unit).  Either output may be NULL. */
TRAM_API void tram_se3_distance(const tram_se3 *a, const tram_se3 *b,
                                double *angle_deg, double *length);

/* SE(3) exp: xi = (rho, w) with rho the translational part (length) and w
 * the rotation vector (rad).  T = (exp(w), V(w) rho). */
TRAM_API void tram_se3_exp(const double xi[6], tram_se3 *out);
/* SE(3) log, the inverse of tram_se3_exp (angle in [0, pi]). */
TRAM_API void tram_se3_log(const tram_se3 *T, double out_xi[6]);

/* Largest deviation from a rigid transform: rotation defect (see
 * tram_so3_defect) or deviation of the last row from (0 0 0 1). */
TRAM_API double tram_se3_defect(const tram_se3 *T);
/* 1 when the rotation part passes tram_so3_is_valid(tol) and the last row
 * is (0 0 0 1) within TRAM_SE3_ROW_TOL, else 0. */
TRAM_API int tram_se3_is_valid(const tram_se3 *T, double tol);

/* Scale the translation by s (unit conversion). */
TRAM_API void tram_se3_scale_translation(const tram_se3 *T, double s, tram_se3 *out);

#ifdef __cplusplus
}
#endif
#endif
