/*
 * linalg_internal.h - thin wrappers over LAPACKE used by the solvers: SVD,
 * null vectors, linear least squares and symmetric eigenproblems.  All
 * matrices are row-major and owned by the caller.  Each wrapper returns
 * TRAM_OK, TRAM_ENOMEM or TRAM_ENUMERIC (LAPACK did not converge, or an
 * input holds NaN or Inf - refused before LAPACK sees it).
 */
#ifndef TRAM_LINALG_INTERNAL_H
#define TRAM_LINALG_INTERNAL_H

#include "core/tram_internal.h"

/* SVD of the m x n matrix A (not modified): s has min(m,n) values in
 * decreasing order; U (m x m) and Vt (n x n) may be NULL when not wanted. */
tram_status tram__svd(int m, int n, const double *A, double *U, double *s, double *Vt);

/* Unit right singular vector of A (m x n, m >= n) for the smallest singular
 * value, and optionally the two smallest singular values (s_min, s_next). */
tram_status tram__nullvec(int m, int n, const double *A, double *v, double *s_min,
                          double *s_next);

/* The right singular vectors of A for its two smallest singular values
 * (rows n-2 and n-1 of Vt), for problems with a two-dimensional null space. */
tram_status tram__null2(int m, int n, const double *A, double *v1, double *v2);

/* Least-squares x minimising |A x - b| (A m x n, m >= n, full column rank),
 * via QR (LAPACKE_dgels).  A and b are not modified. */
tram_status tram__lstsq(int m, int n, const double *A, const double *b, double *x);

/* Eigen decomposition of the symmetric n x n matrix A: eigenvalues w in
 * ascending order, eigenvectors as the columns of V (row-major n x n). */
tram_status tram__symeig(int n, const double *A, double *w, double *V);

/* Inverse of the symmetric positive definite n x n matrix A (Cholesky);
 * TRAM_ENUMERIC when A is not positive definite. */
tram_status tram__spd_inverse(int n, const double *A, double *out);


/* Solve A x = b for the symmetric positive definite n x n A (Cholesky,
 * LAPACKE_dposv).  A and b are not modified.  TRAM_ENUMERIC when A is not
 * positive definite. */
tram_status tram__spd_solve(int n, const double *A, const double *b, double *x);

/* The same for any n, without copies: A is overwritten by its Cholesky
 * factor and bx (b on entry) by x.  For the dense normal equations of
 * bundle problems (camera/intrinsics_lm.c, math/lm.c). */
tram_status tram__spd_solve_overwrite(int n, double *A, double *bx);

/* Streaming QR of a tall m x n matrix given a block of rows at a time, for
 * the closed forms' null vectors: only the n x n triangle R (A = Q R) is
 * kept, so a problem of any height needs (n + TRAM__QRS_BLOCK) x n doubles
 * and no copy or transpose of the tall matrix.  A and R have the same
 * right singular vectors and singular values, so tram__nullvec(n, n, R)
 * answers for A without squaring the condition number (as A^T A would).
 * Each flush stacks [R; block] and re-factors it (LAPACKE_dgeqrf). */
#define TRAM__QRS_MAXN 18
#define TRAM__QRS_BLOCK 72
typedef struct tram__qrs {
    int n;        /* columns                                          */
    int rows;     /* rows held in a (the triangle, then the new block) */
    tram_status st;
    double a[(TRAM__QRS_MAXN + TRAM__QRS_BLOCK) * TRAM__QRS_MAXN]; /* row-major, n columns */
} tram__qrs;

void tram__qrs_init(tram__qrs *q, int n);
/* Room for k <= TRAM__QRS_BLOCK more rows (n doubles each, zeroed), which
 * the caller fills before the next call; a full buffer is folded into R
 * first.  NULL (and the status kept for tram__qrs_finish) when a
 * factorisation failed. */
double *tram__qrs_rows(tram__qrs *q, int k);
/* Fold the last rows in: q->a then holds q->rows <= n rows of R.  Returns
 * the first failure (TRAM_ENOMEM, TRAM_ENUMERIC for NaN or Inf). */
tram_status tram__qrs_finish(tram__qrs *q);

#endif
