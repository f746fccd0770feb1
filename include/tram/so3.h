/*
 * tram/so3.h - rotation matrices: the group SO(3), its exp and log maps,
 * projection onto SO(3) and the chordal rotation mean.
 *
 * A rotation is a 3x3 row-major matrix R with R^T R = I and det R = +1.
 * R_a_b rotates directions in frame b into frame a (v_a = R_a_b v_b).
 * All angles are radians.  Kernels take inputs first and the output last,
 * return void and allow the output to alias an input.
 */
#ifndef TRAM_SO3_H
#define TRAM_SO3_H

#include "tram/common.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct tram_mat3 {
    double m[3][3]; /* row-major: m[row][col] */
} tram_mat3;

/* Tolerance of tram_so3_is_valid: max |R^T R - I| entry and |det - 1|. */
#define TRAM_SO3_VALID_TOL 1e-6

TRAM_API void tram_so3_identity(tram_mat3 *out);
/* out = a * b. */
TRAM_API void tram_so3_mul(const tram_mat3 *a, const tram_mat3 *b, tram_mat3 *out);
/* out = a^T (the inverse of a rotation). */
TRAM_API void tram_so3_transpose(const tram_mat3 *a, tram_mat3 *out);
/* out = R v. */
TRAM_API void tram_so3_apply(const tram_mat3 *R, const double v[3], double out[3]);

/* Exp map: rotation by |w| radians about w/|w| (Rodrigues' formula, with a
 * Taylor series below 1e-8 rad).  w = 0 gives the identity. */
TRAM_API void tram_so3_exp(const double w[3], tram_mat3 *out);
/* Log map: the rotation vector w (axis times angle, angle in [0, pi]) of R.
 * Accurate near 0 and at pi; at exactly pi the axis sign is chosen so that
 * its largest component is positive.  R must be a rotation. */
TRAM_API void tram_so3_log(const tram_mat3 *R, double out_w[3]);
/* Rotation angle of R in radians, in [0, pi] (robust near 0 and pi). */
TRAM_API double tram_so3_angle(const tram_mat3 *R);
/* Angle in radians of the rotation that takes a to b: angle(a^T b). */
TRAM_API double tram_so3_distance(const tram_mat3 *a, const tram_mat3 *b);

/* Nearest rotation in the Frobenius norm (SVD via LAPACKE, with the sign of
 * the smallest singular direction flipped when det would be -1).  For an
 * input with a repeated smallest singular value and det < 0 the result is
 * one of several equally near rotations.  A zero matrix gives the identity;
 * a matrix holding NaN or Inf (or LAPACK out of memory) gives all NaN. */
TRAM_API void tram_so3_nearest(const tram_mat3 *M, tram_mat3 *out);

/* Largest deviation of R from a rotation: max(|R^T R - I|_max, |det R - 1|). */
TRAM_API double tram_so3_defect(const tram_mat3 *R);
/* 1 when tram_so3_defect(R) <= tol, else 0. */
TRAM_API int tram_so3_is_valid(const tram_mat3 *R, double tol);

/* Chordal L2 mean of n rotations with optional weights (NULL: equal):
 * the rotation nearest to sum w_i R_i (Hartley et al., "Rotation
 * averaging", IJCV 2013).  n = 0 gives the identity. */
TRAM_API void tram_so3_mean(const tram_mat3 *R, const double *weights, size_t n,
                            tram_mat3 *out);

/* Elementary rotations about the x, y or z axis (axis = 0, 1, 2). */
TRAM_API void tram_so3_axis_rotation(int axis, double angle_rad, tram_mat3 *out);

/* Skew-symmetric cross-product matrix: hat(w) v = w x v. */
TRAM_API void tram_so3_hat(const double w[3], tram_mat3 *out);

#ifdef __cplusplus
}
#endif
#endif
