/* buf: growable buffers; growth checks for overflow before it multiplies. */
#include "buf.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

int buf_grow_array(void **data, size_t *cap, size_t need, size_t elsize)
{
    if (need <= *cap)
        return ERR_OK;
    size_t ncap = *cap < 16 ? 16 : *cap;
    while (ncap < need) {
        if (ncap > SIZE_MAX / 3)
            return ERR_NOMEM;
        ncap += ncap / 2;
    }
    if (elsize && ncap > SIZE_MAX / elsize)
        return ERR_NOMEM;
    void *p = realloc(*data, ncap * elsize);
    if (!p)
        return ERR_NOMEM;
    *data = p;
    *cap = ncap;
    return ERR_OK;
}

int buf_reserve(Buf *b, size_t extra)
{
    if (extra > SIZE_MAX - b->len - 1)
        return ERR_NOMEM;
    return buf_grow_array((void **)&b->data, &b->cap, b->len + extra + 1, 1);
}

int buf_append(Buf *b, const void *p, size_t n)
{
    if (buf_reserve(b, n) != ERR_OK)
        return ERR_NOMEM;
    if (n)
        memcpy(b->data + b->len, p, n);
    b->len += n;
    b->data[b->len] = '\0';
    return ERR_OK;
}

int buf_puts(Buf *b, const char *s)
{
    return buf_append(b, s, strlen(s));
}

int buf_putc(Buf *b, char c)
{
    return buf_append(b, &c, 1);
}

int buf_vprintf(Buf *b, const char *fmt, va_list ap)
{
    va_list ap2;
    va_copy(ap2, ap);
    char small[256];
    int n = vsnprintf(small, sizeof small, fmt, ap2);
    va_end(ap2);
    if (n < 0)
        return ERR_NOMEM;
    if ((size_t)n < sizeof small)
        return buf_append(b, small, (size_t)n);
    if (buf_reserve(b, (size_t)n) != ERR_OK)
        return ERR_NOMEM;
    vsnprintf(b->data + b->len, (size_t)n + 1, fmt, ap);
    b->len += (size_t)n;
    return ERR_OK;
}

int buf_printf(Buf *b, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(b, fmt, ap);
    va_end(ap);
    return rc;
}

void buf_clear(Buf *b)
{
    b->len = 0;
    if (b->data)
        b->data[0] = '\0';
}

void buf_free(Buf *b)
{
    if (!b)
        return;
    free(b->data);
    b->data = NULL;
    b->len = b->cap = 0;
}
