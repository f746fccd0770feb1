/*
 * number_shim_internal.h - the C declaration of the fast_float shim (number_shim.cc),
 * shared by text.c (C) and the shim (C++).
 */
#ifndef TRAM_NUMBER_SHIM_H
#define TRAM_NUMBER_SHIM_H

#ifdef __cplusplus
extern "C" {
#endif

/* Convert [first, last), a decimal number without a leading '+' that the
 * caller has checked, to the nearest double (ties to even; overflow gives
 * +-Inf, underflow 0 or a subnormal, as strtod).  0 when all of it was
 * read, -1 else. */
int tram__number_convert(const char *first, const char *last, double *out);

/* The longest decimal number at the start of [first, last) (the grammar
 * of tram__number_convert; the caller checks what follows it), converted
 * the same way; where it ends, or NULL when there is none. */
const char *tram__number_convert_prefix(const char *first, const char *last, double *out);

#ifdef __cplusplus
}
#endif
#endif
