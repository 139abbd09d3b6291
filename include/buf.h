/* buf: growable byte buffers and arrays. Every call returns a status; a failed call leaves the
 * buffer as it was. */
#ifndef BUF_H
#define BUF_H

#include <stdarg.h>
#include <stddef.h>

#include "diag.h"

typedef struct {
    char *data;  /* NUL-terminated when len > 0 or after any append */
    size_t len;
    size_t cap;
} Buf;

#define BUF_INIT {NULL, 0, 0}

/* Room for extra more bytes plus a NUL. ERR_OK or ERR_NOMEM. */
int buf_reserve(Buf *b, size_t extra) MUST_CHECK;
int buf_append(Buf *b, const void *p, size_t n) MUST_CHECK;
int buf_puts(Buf *b, const char *s) MUST_CHECK;
int buf_putc(Buf *b, char c) MUST_CHECK;
int buf_printf(Buf *b, const char *fmt, ...) PRINTF_LIKE(2, 3) MUST_CHECK;
int buf_vprintf(Buf *b, const char *fmt, va_list ap) MUST_CHECK;
void buf_clear(Buf *b);  /* len = 0, keeps the memory */
void buf_free(Buf *b);   /* accepts NULL */

/* Grow a malloc'd array *data of *cap elements of size elsize so it holds at least need elements
 * (x1.5 growth from a floor of 16). On failure *data and *cap are unchanged. ERR_OK or ERR_NOMEM. */
int buf_grow_array(void **data, size_t *cap, size_t need, size_t elsize) MUST_CHECK;

/* Append one element to a malloc'd array: `BUF_PUSH(arr, n, cap, value)` evaluates to a status. */
#define BUF_PUSH(arr, n, cap, value)                                                          \
    (((n) < (cap) || buf_grow_array((void **)&(arr), &(cap), (n) + 1, sizeof *(arr)) == ERR_OK) \
         ? ((arr)[(n)++] = (value), ERR_OK)                                                   \
         : ERR_NOMEM)

#endif
