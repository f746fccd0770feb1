/*
 * tram/linalg.h - how the library runs its dense linear algebra (LAPACKE
 * on OpenBLAS, src/math/linalg.c).
 */
#ifndef TRAM_LINALG_H
#define TRAM_LINALG_H

#include "tram/common.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Run OpenBLAS on one thread: the library's matrices are small (at most a
 * few hundred entries per call, or tall ones reduced by streaming), where
 * OpenBLAS's worker threads only spin.  Does nothing when the environment
 * variable OPENBLAS_NUM_THREADS is set (the user's choice stands).  Returns
 * 1 when it set one thread, 0 when it left the setting alone.  The
 * library's own threads (tram_register_points) are not affected.  Call it
 * before any other tram function, from one thread (tram(1) does at
 * start-up; docs/performance.md). */
TRAM_API int tram_linalg_single_thread(void);

#ifdef __cplusplus
}
#endif
#endif
