/*
 * number_shim.cc - the C entry to Debian's fast_float (libfast-float-dev,
 * header-only C++): Lemire's implementation of the Eisel-Lemire algorithm
 * (D. Lemire, "Number parsing at a gigabyte per second", Software:
 * Practice and Experience 51(8), 2021), which rounds correctly, so its
 * results are those of a correctly rounding strtod (glibc's) bit for bit.
 *
 * The caller (text.c) has already checked the decimal grammar; this file
 * only converts.  No exceptions, no allocation, no global state.
 */
#include <fast_float/fast_float.h>

#include "io/number_shim_internal.h"

extern "C" int tram__number_convert(const char *first, const char *last, double *out)
{
    double v = 0.0;
    fast_float::from_chars_result r = fast_float::from_chars(first, last, v);
    if (r.ptr != last) return -1;
    *out = v;
    return 0;
}

extern "C" const char *tram__number_convert_prefix(const char *first, const char *last, double *out)
{
    double v = 0.0;
    fast_float::from_chars_result r = fast_float::from_chars(first, last, v);
    if (r.ptr == first) return nullptr; /* nothing read (invalid_argument) */
    *out = v;
    return r.ptr;
}
