/*
 * so3_internal.h - small 3-vector and 3x3 helpers of the math layer
 * (so3.c) that the library shares.
 */
#ifndef TRAM_SO3_INTERNAL_H
#define TRAM_SO3_INTERNAL_H

#include "tram/so3.h"
#include "tram/se3.h"
#include "core/tram_internal.h"

/* Euclidean norm of a 3-vector. */
double tram__norm3(const double a[3]);

/* Determinant of a 3x3 matrix. */
static inline double tram__det3(const tram_mat3 *M)
{
    const double(*a)[3] = M->m;
    return a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1]) -
           a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0]) +
           a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
}

#endif
