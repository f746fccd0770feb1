/*
 * design_internal.h - D-optimal choice of stations (design.c): the
 * information of (X, Z) from the refinement's Jacobian, the greedy choice
 * with exchanges, and the 1-sigma of X from an information matrix.
 */
#ifndef TRAM_DESIGN_INTERNAL_H
#define TRAM_DESIGN_INTERNAL_H

#include "plan/sample_internal.h"

/* Weighted Jacobian J (6 x 12, row-major) of station (P, S) at (X, Z):
 * solve/refine.c's station Jacobian with weights 1/sigma. */
void tram__plan_jacobian(const tram_se3 *P, const tram_se3 *S, const tram_se3 *X, const tram_se3 *Z,
                         double sigma_length, double sigma_angle, double length_scale, double J[72]);
/* H += J^T J (12 x 12). */
void tram__plan_add_info(double H[144], const double J[72]);
/* log det of the symmetric 12 x 12 H; -INFINITY when it is not positive
 * definite.  TRAM_ENUMERIC / TRAM_ENOMEM from LAPACK. */
tram_status tram__plan_logdet(const double H[144], double *logdet);
/* 1-sigma of X from the information H (sigma->valid = 0 when singular). */
void tram__plan_sigma(const double H[144], tram_plan_sigma *sigma);

/* Choose k of the n candidates maximising log det(H0 + prior + sum J^T J):
 * greedy by the determinant lemma, then exchanges (exchange != 0).  chosen
 * (k entries) gets the candidate indices, gain[s] the log det that the
 * final choice loses without station s. */
tram_status tram__plan_choose(const double H0[144], const double prior[12],
                              const tram__plan_cand *cand, size_t n, size_t k, int exchange,
                              size_t *chosen, double *gain);

#endif
