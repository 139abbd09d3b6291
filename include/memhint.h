/* memhint: advice to the operating system about large memory regions, and pages from it. A
 * million-device run keeps name tables and arena blocks of tens of megabytes and reads them in random
 * order; backed by huge pages, each of those reads costs one cache miss instead of a cache miss and
 * a page-table walk. */
#ifndef MEMHINT_H
#define MEMHINT_H

#include <stddef.h>

/* Ask for huge pages under the whole 2 MiB extents of p[0..n). Advice only: it does nothing for
 * small regions, where the system offers no such thing, or when the system declines; p stays the
 * caller's to free as it was allocated. */
void mem_hint_huge(void *p, size_t n);

/* n bytes of fresh pages (zero), mapped from the system where it can (mmap), else from malloc; NULL
 * when there is no memory. Given back with mem_pages_free(p, n), which returns them to the system at
 * once: for memory that a run frees part by part while it still needs the rest, where malloc might
 * keep freed blocks in the process. */
void *mem_pages(size_t n);
void mem_pages_free(void *p, size_t n);

/* n * size zeroed bytes from malloc (free them with free), zeroed by writing rather than by calloc,
 * huge pages asked for first; NULL on overflow or when there is no memory. For a table whose probes
 * read before they write: a page first read is the shared zero page, which the first write must then
 * replace (a second fault and, with another thread running, a TLB shootdown on every core), where a
 * page first written is one fault. */
void *mem_zeroed(size_t n, size_t size);

#endif
