/*
 * plausibility_internal.h - the plausibility checks of a solve
 * (plausibility.c): the absolute gate on the residuals, the mount
 * geometry, and the hook that runs them with the pairing test.
 */
#ifndef TRAM_PLAUSIBILITY_INTERNAL_H
#define TRAM_PLAUSIBILITY_INTERNAL_H

#include "tram/solve.h"
#include "core/tram_internal.h"

/* Median distance of the sensor-target translations of S (length). */
double tram__working_distance(const tram_se3 *S, size_t n);

/* The gate's length limit in `unit` at working distance wd (in `unit`):
 * max_rms_m + max_rms_fraction * wd. */
double tram__gate_length(const tram_trust_options *t, tram_length_unit unit, double wd);

/* The gate: a warning "implausible-residuals" into s when rms_rot_deg
 * (NaN: no rotation residual) or rms_len exceeds the limits; `what`
 * names the residual ("station", "3D point").  Fills s->trust. */
tram_status tram__gate(tram_solution *s, const tram_trust_options *t, double wd,
                       double rms_rot_deg, double rms_len, const char *what);

/* The pairing test's verdict into s (warning "pairing-not-determined"). */
tram_status tram__pairing_report(tram_solution *s, size_t perms, unsigned long long seed,
                                 double ratio_rot, double ratio_trans, int failed,
                                 double factor);

/* Mount geometry: warnings when the part fixed to the flange sits farther
 * than max_flange_offset_m from it, or the part fixed in the cell farther
 * than max_base_offset_m from the base; names an inverted-pose reading of
 * r that fits as well and puts them where expected. */
tram_status tram__check_geometry(const tram_records *r, tram_setup setup, tram_solution *s,
                                 const tram_trust_options *t);

/* The plausibility checks of a pose solve (gate, pairing test, geometry)
 * on P_i X S_i = Z; the pairing test's seed is `seed`. */
tram_status tram__trust_checks(const tram_records *r, tram_setup setup, const tram_se3 *P,
                               const tram_se3 *S, size_t n, const tram_trust_options *t,
                               unsigned long long seed, tram_solution *s);

#endif
