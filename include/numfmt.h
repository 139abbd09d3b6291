/* numfmt: doubles to decimal text, byte for byte what the C library's printf writes, without its
 * cost. The reports and the annotation write tens of millions of numbers for a large design; glibc's
 * printf takes a few hundred nanoseconds for each (multi-precision arithmetic), these take a few
 * tens. Exact integer arithmetic (128 bits) covers the magnitudes a circuit produces; anything
 * outside that range, and compilers without 128-bit integers, go through snprintf, so the result is
 * always the library's. */
#ifndef NUMFMT_H
#define NUMFMT_H

#include <stddef.h>

#define NUMFMT_SIZE 32 /* room for any result, with its NUL */

/* As snprintf(buf, NUMFMT_SIZE, "%.*g", prec, v) for prec 1..17 (other values are clamped to that
 * range), in the C locale. Returns the length written (buf is NUL-terminated). */
size_t numfmt_g(char *buf, double v, int prec);

/* The fewest significant digits among 15, 16 and 17 that read back (strtod) to the same double, in
 * %g style: the first of "%.15g", "%.16g", "%.17g" that round-trips, as the JSON writers want it.
 * NaN and infinities give "nan"/"inf" as printf would (callers write null for them). Returns the
 * length written. */
size_t numfmt_json(char *buf, double v);

#endif
