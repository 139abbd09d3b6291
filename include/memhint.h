/* memhint: advice to the operating system about large memory regions. A million-device run keeps
 * name tables and arena blocks of tens of megabytes and reads them in random order; backed by huge
 * pages, each of those reads costs one cache miss instead of a cache miss and a page-table walk. */
#ifndef MEMHINT_H
#define MEMHINT_H

#include <stddef.h>

/* Ask for huge pages under the whole 2 MiB extents of p[0..n). Advice only: it does nothing for
 * small regions, where the system offers no such thing, or when the system declines; p stays the
 * caller's to free as it was allocated. */
void mem_hint_huge(void *p, size_t n);

#endif
