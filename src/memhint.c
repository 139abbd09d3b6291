/* memhint: madvise(MADV_HUGEPAGE) where Linux has it, nothing elsewhere; pages by mmap on Linux, by
 * malloc elsewhere. */
#define _DEFAULT_SOURCE /* MADV_HUGEPAGE is outside POSIX */
#include "memhint.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

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

void *mem_zeroed(size_t n, size_t size)
{
    if (size && n > SIZE_MAX / size)
        return NULL;
    void *p = malloc(n && size ? n * size : 1);
    if (p) {
        mem_hint_huge(p, n * size);
        memset(p, 0, n * size);
    }
    return p;
}

void *mem_pages(size_t n)
{
#if defined(__linux__) && defined(MAP_ANONYMOUS)
    void *p = mmap(NULL, n ? n : 1, PROT_READ | PROT_WRITE, MAP_PRIVATE | MAP_ANONYMOUS, -1, 0);
    return p == MAP_FAILED ? NULL : p;
#else
    return calloc(1, n ? n : 1);
#endif
}

void mem_pages_free(void *p, size_t n)
{
    if (!p)
        return;
#if defined(__linux__) && defined(MAP_ANONYMOUS)
    munmap(p, n ? n : 1);
#else
    (void)n;
    free(p);
#endif
}
