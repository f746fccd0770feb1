/*
 * lm_internal.h - a small dense Levenberg-Marquardt driver for problems
 * whose parameters live on a manifold (poses, cameras): the caller owns the
 * state, evaluates residuals and Jacobians at "state + delta", and commits
 * an accepted delta.  Used by the pose from pixels (camera/pose.c) and the
 * hand-eye refinement on pixels (solve/pixels_solve.c).
 */
#ifndef TRAM_LM_INTERNAL_H
#define TRAM_LM_INTERNAL_H

#include "core/tram_internal.h"

typedef struct tram__lm_problem {
    int np;          /* parameters (at most TRAM__LM_MAX_PARAMS)          */
    size_t nr;       /* residuals                                          */
    /* Residuals r (nr) at state + delta (delta NULL: the state itself) and,
     * when J is not NULL, their Jacobian with respect to delta at delta
     * (row-major nr x np).  Returns 0 on success, -1 when the trial is
     * invalid (e.g. a point behind the camera): the step is refused. */
    int (*eval)(void *ctx, const double *delta, double *r, double *J);
    /* Make state + delta the new state. */
    void (*commit)(void *ctx, const double *delta);
    void *ctx;
} tram__lm_problem;

#define TRAM__LM_MAX_PARAMS 32

typedef struct tram__lm_info {
    int iterations;
    double cost;     /* sum of squared residuals at the end               */
} tram__lm_info;

/* Minimise |r|^2 from the current state by Levenberg-Marquardt (Marquardt,
 * SIAM J. Appl. Math. 11(2), 1963; damping scaled by the diagonal of
 * J^T J), solving the damped normal equations through LAPACKE (dposv).
 * TRAM_EUNDETERMINED when the state itself cannot be evaluated. */
tram_status tram__lm_run(const tram__lm_problem *pb, int max_iter, tram__lm_info *info);

/* J^T J (np x np) and J^T r at the current state; r2 = |r|^2.  Work
 * buffers are allocated; TRAM_ENOMEM or TRAM_EUNDETERMINED on failure. */
tram_status tram__lm_normal(const tram__lm_problem *pb, double *JtJ, double *Jtr, double *r2);

#endif
