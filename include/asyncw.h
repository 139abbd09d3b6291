/* asyncw: a file written by a thread of its own while the caller fills the next buffer. A report of
 * a million devices is half a gigabyte: the kernel's copy into the page cache then costs as much as
 * the formatting, and with two buffers the two run side by side. */
#ifndef ASYNCW_H
#define ASYNCW_H

#include <stddef.h>
#include <stdio.h>

#include "diag.h"

typedef struct AsyncW AsyncW;

/* A writer thread for fp, or NULL when none can start (the caller then writes itself). */
AsyncW *aw_start(FILE *fp);

/* Hands buf[0..n) (malloc'd) to the thread and returns the buffer to fill next: the one written
 * before, once it is written, or NULL when there is none yet (*cap is then 0). After a failed write
 * the buffers are still exchanged, and aw_finish reports the failure. */
char *aw_swap(AsyncW *w, char *buf, size_t n, size_t *cap);

/* Waits for the last write, stops the thread, frees the buffers it holds and w. ERR_OK or ERR_IO.
 * Accepts NULL (ERR_OK). */
int aw_finish(AsyncW *w);

#endif
