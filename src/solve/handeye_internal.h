/*
 * handeye_internal.h - internals shared by the hand-eye solvers
 * (handeye_axxb.c, handeye_axyb.c, refine.c, solve.c).
 */
#ifndef TRAM_HANDEYE_INTERNAL_H
#define TRAM_HANDEYE_INTERNAL_H

#include "tram/handeye.h"
#include "core/tram_internal.h"

/* Quaternion (w,x,y,z) product matrices: q p = L(q) p, p q = R(q) p. */
void tram__quat_left(const double q[4], double L[16]);
void tram__quat_right(const double q[4], double R[16]);

/* Scale M by sign(det)/|det|^(1/3) so that det M = 1 (no-op for det 0). */
void tram__scale_to_det1(tram_mat3 *M);

/* Z from X: chordal mean of the rotations and mean of the translations of
 * P_i X S_i over all stations. */
void tram__target_from_x(const tram_se3 *P, const tram_se3 *S, size_t n, const tram_se3 *X,
                         tram_se3 *Z);

/* Scatter M = sum a a^T of the unit rotation axes of the relative motions
 * P_j^-1 P_i of the pairs rotating at least min_rad; *used counts them,
 * and the smallest and largest rotation angles (rad) come out too. */
void tram__motion_axes(const tram_se3 *P, const tram_pair *pairs, size_t npairs, double min_rad,
                       double M[9], size_t *used, double *min_angle, double *max_angle);

tram_status tram__solve_axxb(tram_method method, const tram_se3 *P, const tram_se3 *S, size_t n,
                             const tram_pair *pairs, size_t npairs, tram_se3 *X, tram_se3 *Z);
tram_status tram__solve_axyb(tram_method method, const tram_se3 *P, const tram_se3 *S, size_t n,
                             tram_se3 *X, tram_se3 *Z);

#endif
