/*
 * pixels_solve_internal.h - hooks of the solve from pixels
 * (pixels_solve.c) used by the rest of the solve layer: freeing the pixel
 * results with the solution (solve.c) and their JSON (solution_json.c).
 */
#ifndef TRAM_PIXELS_SOLVE_INTERNAL_H
#define TRAM_PIXELS_SOLVE_INTERNAL_H

#include "tram/pixel_solve.h"
#include "io/json_internal.h"

/* The "pixels" member of a solution document (nothing when s->pixels is
 * NULL); station ids from r when given, else the solution's order. */
void tram__pixel_result_json(tram__jb *b, cJSON *root, const tram_solution *s,
                             const tram_records *r);

/* The pixel results for nst stations and nobs observations (zeroed). */
/* The input files of the solve (observations, camera, target) with
 * the FNV-1a 64 checksum of each, read again from disk. */
void tram__pixel_result_inputs(tram_pixel_result *p, const tram_pixel_obs *obs,
                               const tram_pixel_solve_options *popt);
tram_status tram__pixel_result_alloc(size_t nst, size_t nobs, tram_pixel_result **out);
/* From the observed stations of a solve back to every station of r
 * (keep_of_r: r's station -> observed station, SIZE_MAX for none). */
tram_status tram__pixel_result_expand(tram_solution *sol, const tram_records *r,
                                      const size_t *keep_of_r);
#endif
