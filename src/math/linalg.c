/*
 * linalg.c - LAPACKE wrappers (see linalg_internal.h).  Every SVD,
 * eigenproblem and least-squares solve of the library goes through here, so
 * that the calls, workspace and error handling live in one place.
 *
 * Every input is checked for NaN and Inf first: some LAPACK routines never
 * return on such input (dbdsqr, behind dgesvd, loops on Inf), so
 * non-finite numbers are refused with TRAM_ENUMERIC before LAPACK sees
 * them.  LAPACKE's own workspace allocation failure maps to TRAM_ENOMEM.
 * tram_linalg_single_thread runs OpenBLAS on one thread unless the user
 * chose (OPENBLAS_NUM_THREADS): its workers only spin on small matrices.
 */
#include "math/linalg_internal.h"
#include "tram/linalg.h"

#include <cblas.h>
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

int tram_linalg_single_thread(void)
{
    const char *env = getenv("OPENBLAS_NUM_THREADS");
    if (env && *env) return 0;
    openblas_set_num_threads(1);
    return 1;
}

/* Largest matrix (entries) handled in stack buffers. */
#define SMALL 256

static int all_finite(const double *a, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (!isfinite(a[i])) return 0;
    return 1;
}

static tram_status status_of(lapack_int info)
{
    if (info == 0) return TRAM_OK;
    return info == LAPACK_WORK_MEMORY_ERROR || info == LAPACK_TRANSPOSE_MEMORY_ERROR
               ? TRAM_ENOMEM
               : TRAM_ENUMERIC;
}

tram_status tram__svd(int m, int n, const double *A, double *U, double *s, double *Vt)
{
    size_t mn = (size_t)m * (size_t)n;
    int k = m < n ? m : n;
    if (!all_finite(A, mn)) return TRAM_ENUMERIC;
    /* Small problems (the 3x3 and 4x4 kernels) use the stack: a math
     * kernel should not fail for want of heap. */
    double a_small[SMALL], superb_small[SMALL];
    int small = mn <= SMALL;
    double *a = small ? a_small : tram__malloc(mn * sizeof *a);
    double *superb = small ? superb_small : tram__malloc((size_t)(k > 1 ? k : 2) * sizeof *superb);
    double dummy_u = 0.0, dummy_vt = 0.0;
    if (!a || !superb) {
        if (!small) {
            tram__free(a);
            tram__free(superb);
        }
        return TRAM_ENOMEM;
    }
    memcpy(a, A, mn * sizeof *a);
    lapack_int info = LAPACKE_dgesvd(LAPACK_ROW_MAJOR, U ? 'A' : 'N', Vt ? 'A' : 'N', m, n, a, n,
                                     s, U ? U : &dummy_u, U ? m : 1, Vt ? Vt : &dummy_vt,
                                     Vt ? n : 1, superb);
    if (!small) {
        tram__free(a);
        tram__free(superb);
    }
    return status_of(info);
}

/* The right singular vectors of A (m x n) for its smallest and (when
 * v_prev is not NULL) second smallest singular values, and those values
 * (0 when m < n leaves them undefined: the null space is then at least
 * n - m dimensional). */
static tram_status right_tail(int m, int n, const double *A, double *v_last, double *v_prev,
                              double sv[2])
{
    double s_small[SMALL], Vt_small[SMALL];
    int small = (size_t)n * (size_t)n <= SMALL;
    double *s = small ? s_small : tram__malloc((size_t)n * sizeof *s);
    double *Vt = small ? Vt_small : tram__malloc((size_t)n * (size_t)n * sizeof *Vt);
    tram_status st = s && Vt ? tram__svd(m, n, A, NULL, s, Vt) : TRAM_ENOMEM;
    if (st == TRAM_OK) {
        int k = m < n ? m : n;
        for (int j = 0; j < n; j++) {
            v_last[j] = Vt[(size_t)(n - 1) * (size_t)n + (size_t)j];
            if (v_prev) v_prev[j] = Vt[(size_t)(n - 2) * (size_t)n + (size_t)j];
        }
        sv[0] = k == n ? s[n - 1] : 0.0;
        sv[1] = (k == n && n >= 2) ? s[n - 2] : 0.0;
    }
    if (!small) {
        tram__free(s);
        tram__free(Vt);
    }
    return st;
}

tram_status tram__nullvec(int m, int n, const double *A, double *v, double *s_min,
                          double *s_next)
{
    double sv[2];
    tram_status st = right_tail(m, n, A, v, NULL, sv);
    if (st == TRAM_OK) {
        if (s_min) *s_min = sv[0];
        if (s_next) *s_next = sv[1];
    }
    return st;
}

tram_status tram__null2(int m, int n, const double *A, double *v1, double *v2)
{
    double sv[2];
    return right_tail(m, n, A, v2, v1, sv);
}

tram_status tram__lstsq(int m, int n, const double *A, const double *b, double *x)
{
    if (!all_finite(A, (size_t)m * (size_t)n) || !all_finite(b, (size_t)m)) return TRAM_ENUMERIC;
    double *a = tram__malloc((size_t)m * (size_t)n * sizeof *a);
    double *bb = tram__malloc((size_t)m * sizeof *bb);
    if (!a || !bb) {
        tram__free(a);
        tram__free(bb);
        return TRAM_ENOMEM;
    }
    memcpy(a, A, (size_t)m * (size_t)n * sizeof *a);
    memcpy(bb, b, (size_t)m * sizeof *bb);
    lapack_int info = LAPACKE_dgels(LAPACK_ROW_MAJOR, 'N', m, n, 1, a, n, bb, 1);
    if (info == 0) memcpy(x, bb, (size_t)n * sizeof *x);
    tram__free(a);
    tram__free(bb);
    return status_of(info);
}

tram_status tram__symeig(int n, const double *A, double *w, double *V)
{
    if (!all_finite(A, (size_t)n * (size_t)n)) return TRAM_ENUMERIC;
    memcpy(V, A, (size_t)n * (size_t)n * sizeof *V);
    return status_of(LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', n, V, n, w));
}

tram_status tram__spd_inverse(int n, const double *A, double *out)
{
    if (!all_finite(A, (size_t)n * (size_t)n)) return TRAM_ENUMERIC;
    memcpy(out, A, (size_t)n * (size_t)n * sizeof *out);
    lapack_int info = LAPACKE_dpotrf(LAPACK_ROW_MAJOR, 'U', n, out, n);
    if (info != 0) return status_of(info);
    info = LAPACKE_dpotri(LAPACK_ROW_MAJOR, 'U', n, out, n);
    if (info != 0) return status_of(info);
    /* dpotri fills the upper triangle only. */
    for (int i = 0; i < n; i++)
        for (int j = 0; j < i; j++) out[i * n + j] = out[j * n + i];
    return TRAM_OK;
}

tram_status tram__spd_solve(int n, const double *A, const double *b, double *x)
{
    double a[144];
    if (n > 12 || !all_finite(A, (size_t)n * (size_t)n) || !all_finite(b, (size_t)n))
        return TRAM_ENUMERIC;
    memcpy(a, A, (size_t)n * (size_t)n * sizeof *a);
    memcpy(x, b, (size_t)n * sizeof *x);
    return tram__spd_solve_overwrite(n, a, x);
}

tram_status tram__spd_solve_overwrite(int n, double *A, double *bx)
{
    if (!all_finite(A, (size_t)n * (size_t)n) || !all_finite(bx, (size_t)n)) return TRAM_ENUMERIC;
    return status_of(LAPACKE_dposv(LAPACK_ROW_MAJOR, 'U', n, 1, A, n, bx, 1));
}

/* ---- streaming QR (tram__qrs) ------------------------------------- */

void tram__qrs_init(tram__qrs *q, int n)
{
    q->n = n;
    q->rows = 0;
    q->st = n > 0 && n <= TRAM__QRS_MAXN ? TRAM_OK : TRAM_ENUMERIC;
}

/* Replace the rows held by R of their QR factorisation (at most n rows). */
static void qrs_fold(tram__qrs *q)
{
    int m = q->rows, n = q->n;
    if (q->st != TRAM_OK || m <= n) return;
    if (!all_finite(q->a, (size_t)m * (size_t)n)) {
        q->st = TRAM_ENUMERIC;
        return;
    }
    double tau[TRAM__QRS_MAXN];
    lapack_int info = LAPACKE_dgeqrf(LAPACK_ROW_MAJOR, m, n, q->a, n, tau);
    if (info != 0) {
        q->st = status_of(info);
        return;
    }
    /* keep the upper triangle; below the diagonal dgeqrf left reflectors */
    for (int i = 1; i < n; i++)
        for (int j = 0; j < i; j++) q->a[(size_t)i * (size_t)n + (size_t)j] = 0.0;
    q->rows = n;
}

double *tram__qrs_rows(tram__qrs *q, int k)
{
    if (q->st != TRAM_OK || k < 0 || k > TRAM__QRS_BLOCK) {
        if (q->st == TRAM_OK) q->st = TRAM_ENUMERIC;
        return NULL;
    }
    if (q->rows + k > TRAM__QRS_MAXN + TRAM__QRS_BLOCK) qrs_fold(q);
    if (q->st != TRAM_OK) return NULL;
    double *r = q->a + (size_t)q->rows * (size_t)q->n;
    memset(r, 0, (size_t)k * (size_t)q->n * sizeof *r);
    q->rows += k;
    return r;
}

tram_status tram__qrs_finish(tram__qrs *q)
{
    qrs_fold(q);
    return q->st;
}
