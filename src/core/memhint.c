/*
 * memhint.c - a hint about large arrays the library is about to fill:
 * ask the kernel (madvise MADV_HUGEPAGE, Linux transparent huge pages in
 * "madvise" mode) to back them with 2 MiB pages, so that filling them
 * takes one page fault per 2 MiB instead of one per 4 KiB.  On virtual
 * machines a fresh-page fault costs tens of microseconds, which made
 * reading large record files superlinear (docs/performance.md).  Only a
 * hint: where it is not supported nothing changes.  No published method.
 */
#define _DEFAULT_SOURCE
#include "core/tram_internal.h"

#include <stdint.h>
#if defined(__linux__)
#include <sys/mman.h>
#endif

void tram__hint_fill(void *p, size_t n)
{
#if defined(__linux__) && defined(MADV_HUGEPAGE)
    const uintptr_t huge = (uintptr_t)2 << 20;
    if (!p || n < 2 * huge) return;
    /* the whole huge pages inside [p, p + n) */
    uintptr_t a = ((uintptr_t)p + huge - 1) & ~(huge - 1);
    uintptr_t e = ((uintptr_t)p + n) & ~(huge - 1);
    if (e > a) (void)madvise((void *)a, (size_t)(e - a), MADV_HUGEPAGE);
#else
    (void)p;
    (void)n;
#endif
}
