/*
 * tram/handeye.h - closed-form hand-eye solvers.
 *
 * All setups are reduced to one form.  Per station i, with P_i a robot pose
 * and S_i a sensor observation of the target,
 *
 *     P_i * X * S_i = Z        (the same X and Z for every station)
 *
 *   eye-in-hand:  P = T_base_flange,  X = T_flange_sensor, S = T_sensor_target,
 *                 Z = T_base_target;
 *   eye-to-hand:  P = T_flange_base,  X = T_base_sensor,   S = T_sensor_target,
 *                 Z = T_flange_target.
 *
 * AX=XB methods work on relative motions of a station pair (i, j):
 * A = P_j^-1 P_i, B = S_j S_i^-1, A X = X B; Z is then the mean of P_i X S_i.
 * AX=YB methods work on absolute poses: A_i = P_i, B_i = S_i^-1, A X = Z B.
 * Lengths are in the caller's unit throughout.
 */
#ifndef TRAM_HANDEYE_H
#define TRAM_HANDEYE_H

#include "tram/se3.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum tram_method {
    TRAM_METHOD_AUTO = 0,         /* best closed form as the start, then refinement */
    TRAM_METHOD_TSAI_LENZ,        /* AX=XB, Tsai & Lenz, IEEE T-RA 5(3), 1989        */
    TRAM_METHOD_PARK_MARTIN,      /* AX=XB, Park & Martin, IEEE T-RA 10(5), 1994     */
    TRAM_METHOD_HORAUD_DORNAIKA,  /* AX=XB, Horaud & Dornaika, IJRR 14(3), 1995      */
    TRAM_METHOD_DANIILIDIS,       /* AX=XB, Daniilidis, IJRR 18(3), 1999             */
    TRAM_METHOD_ANDREFF,          /* AX=XB, Andreff, Horaud & Espiau, IJRR 20(3), 2001 */
    TRAM_METHOD_SHAH,             /* AX=YB, Shah, J. Mech. Robotics 5(3), 2013       */
    TRAM_METHOD_ZHUANG,           /* AX=YB, Zhuang, Roth & Sudhakar, IEEE T-RA 10(4), 1994 */
    TRAM_METHOD_COUNT
} tram_method;

/* "auto", "tsai-lenz", "park-martin", "horaud-dornaika", "daniilidis",
 * "andreff", "shah", "zhuang". */
TRAM_API const char *tram_method_name(tram_method m);
/* TRAM_METHOD_COUNT when the name is unknown. */
TRAM_API tram_method tram_method_parse(const char *name);
/* 1 for the AX=YB methods (they do not use station pairs). */
TRAM_API int tram_method_is_axyb(tram_method m);

/* A motion pair: stations i and j (0-based). */
typedef struct tram_pair {
    size_t i, j;
} tram_pair;

typedef enum tram_pairs_mode {
    TRAM_PAIRS_AUTO = 0,    /* all pairs up to 60 stations, else each station with
                               the next and with the one half the list away */
    TRAM_PAIRS_ALL,         /* every i < j                                     */
    TRAM_PAIRS_CONSECUTIVE  /* (i, i+1)                                        */
} tram_pairs_mode;

/* Build station pairs.  *out is allocated (caller frees with free());
 * n < 2 gives no pairs.  Returns TRAM_ENOMEM on allocation failure. */
TRAM_API tram_status tram_handeye_pairs(size_t n, tram_pairs_mode mode, tram_pair **out,
                                        size_t *count);

/* Solve P_i X S_i = Z in closed form with `method` (not AUTO).  AX=XB
 * methods use `pairs` (npairs >= 2 with non-parallel rotation axes);
 * AX=YB methods use all n stations (n >= 3).  X and Z are always proper
 * rigid transforms.  Returns TRAM_EUNDETERMINED when the data leave the
 * answer undetermined (too few pairs, all rotations about one axis),
 * TRAM_ENUMERIC or TRAM_ENOMEM on failure; err says why. */
TRAM_API tram_status tram_handeye_closed_form(tram_method method, const tram_se3 *P,
                                              const tram_se3 *S, size_t n,
                                              const tram_pair *pairs, size_t npairs,
                                              tram_se3 *X, tram_se3 *Z, tram_error *err);

/* Per-station residuals of a solution: the rotation angle (rad) and the
 * translation distance between the station's prediction P_i X S_i of Z and
 * Z itself.  Either output array may be NULL. */
TRAM_API void tram_handeye_residuals(const tram_se3 *P, const tram_se3 *S, size_t n,
                                     const tram_se3 *X, const tram_se3 *Z, double *rot_rad,
                                     double *trans);

#ifdef __cplusplus
}
#endif
#endif
