/* memhint: madvise(MADV_HUGEPAGE) where Linux has it, nothing elsewhere. */
#define _DEFAULT_SOURCE /* MADV_HUGEPAGE is outside POSIX */
#include "memhint.h"

#include <stdint.h>

#if defined(__linux__)
#include <sys/mman.h>
#endif

#define HUGE_PAGE ((uintptr_t)2 << 20)

void mem_hint_huge(void *p, size_t n)
{
#if defined(__linux__) && defined(MADV_HUGEPAGE)
    uintptr_t s = ((uintptr_t)p + HUGE_PAGE - 1) & ~(HUGE_PAGE - 1), e = ((uintptr_t)p + n) & ~(HUGE_PAGE - 1);
    if (p && e > s)
        (void)madvise((void *)s, (size_t)(e - s), MADV_HUGEPAGE); /* refused advice changes nothing */
#else
    (void)p;
    (void)n;
#endif
}
