/*
 * solve_refine_internal.h - the refinement stage of the solve pipeline
 * (solve_refine.c), called by tram_solve (solve.c).
 */
#ifndef TRAM_SOLVE_REFINE_INTERNAL_H
#define TRAM_SOLVE_REFINE_INTERNAL_H

#include "tram/solve.h"
#include "core/tram_internal.h"

/* Refine sol->X, sol->Z (the closed form's start) over the n stations of
 * P_i X S_i = Z: robust start, feasible GLS with the noise model, outlier
 * test, uncertainty and the optional bootstrap.  Fills sol->refined, the
 * noise figures, sol->unc, sol->condition and sol->stations[i].outlier. */
tram_status tram__solve_refine(const tram_se3 *P, const tram_se3 *S, size_t n, tram_setup setup,
                               const tram_solve_options *opt, tram_solution *sol, tram_error *err);

#endif
