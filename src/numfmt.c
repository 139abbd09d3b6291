/* numfmt: printf's %g and the shortest 15..17-digit form, computed with exact integer arithmetic.
 *
 * A positive double is a = m * 2^e (m < 2^53). Rounding it to p significant digits means rounding
 * a * 10^s to an integer, s = p - 1 - E with E = floor(log10 a). For s >= 0 that is
 * (m * 5^s) / 2^k with k = -(e + s): one 128-bit product and a shift, and the bits shifted out say
 * exactly whether to round up (ties to even, as glibc's printf rounds an exact tie in the default
 * rounding mode). For s < 0 it is a division by 5^-s. Whether a p-digit decimal reads back to a is
 * decided in the same integers: it does when it lies within half a unit in the last place of a
 * (a quarter on the short side of a power of two), and such a distance never ties, because 5^s is odd.
 * Where the integers would not fit (|a| below about 1e-16 or far above 1e15, subnormals), the
 * library does the work. */
#include "numfmt.h"

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static size_t fallback_g(char *buf, double v, int prec)
{
    int n = snprintf(buf, NUMFMT_SIZE, "%.*g", prec, v);
    return n < 0 ? 0 : (size_t)n < NUMFMT_SIZE ? (size_t)n : NUMFMT_SIZE - 1;
}

static size_t fallback_json(char *buf, double v)
{
    size_t n = 0;
    for (int prec = 15; prec <= 17; prec++) {
        n = fallback_g(buf, v, prec);
        if (prec == 17 || strtod(buf, NULL) == v)
            break;
    }
    return n;
}

static const uint64_t pow10_u64[20] = {
    1ull, 10ull, 100ull, 1000ull, 10000ull, 100000ull, 1000000ull, 10000000ull, 100000000ull, 1000000000ull,
    10000000000ull, 100000000000ull, 1000000000000ull, 10000000000000ull, 100000000000000ull,
    1000000000000000ull, 10000000000000000ull, 100000000000000000ull, 1000000000000000000ull,
    10000000000000000000ull,
};

static const char pairs[201] = "00010203040506070809101112131415161718192021222324252627282930313233343536373839"
                               "40414243444546474849505152535455565758596061626364656667686970717273747576777879"
                               "8081828384858687888990919293949596979899";

/* The 8 digits of v < 10^8 at d: two independent halves of 32-bit arithmetic, which is where the
 * time of a long number goes (a chain of 64-bit divisions is twice as long). */
static inline void put8(char *d, uint32_t v)
{
    uint32_t hi = v / 10000, lo = v % 10000;
    memcpy(d, pairs + 2 * (hi / 100), 2);
    memcpy(d + 2, pairs + 2 * (hi % 100), 2);
    memcpy(d + 4, pairs + 2 * (lo / 100), 2);
    memcpy(d + 6, pairs + 2 * (lo % 100), 2);
}

/* The digits of q (exactly p of them, p <= 19) in %g style with decimal exponent x of the first
 * digit: trailing zeros dropped, scientific notation when x < -4 or x >= p. */
static size_t format_gp(char *buf, int neg, uint64_t q, int p, int x, int style);

static size_t format_g(char *buf, int neg, uint64_t q, int p, int x)
{
    return format_gp(buf, neg, q, p, x, p);
}

/* As format_g, with p digits in q but the notation chosen as for precision style (>= p). */
static size_t format_gp(char *buf, int neg, uint64_t q, int p, int x, int style)
{
    char dig[24];
    int pos = p;
    while (pos > 8) {
        put8(dig + pos - 8, (uint32_t)(q % 100000000u));
        q /= 100000000u;
        pos -= 8;
    }
    uint32_t r = (uint32_t)q;
    while (pos >= 2) {
        pos -= 2;
        memcpy(dig + pos, pairs + 2 * (r % 100), 2);
        r /= 100;
    }
    if (pos)
        dig[0] = (char)('0' + r);
    int nd = p;
    while (nd > 1 && dig[nd - 1] == '0')
        nd--;
    char *o = buf;
    if (neg)
        *o++ = '-';
    if (x < -4 || x >= style) {
        *o++ = dig[0];
        if (nd > 1) {
            *o++ = '.';
            memcpy(o, dig + 1, (size_t)(nd - 1));
            o += nd - 1;
        }
        *o++ = 'e';
        int ax = x;
        if (x < 0) {
            *o++ = '-';
            ax = -x;
        } else {
            *o++ = '+';
        }
        if (ax >= 100)
            *o++ = (char)('0' + ax / 100);
        *o++ = (char)('0' + ax / 10 % 10);
        *o++ = (char)('0' + ax % 10);
    } else if (x >= 0) {
        int ni = x + 1; /* digits before the point */
        for (int i = 0; i < ni; i++)
            *o++ = i < nd ? dig[i] : '0';
        if (nd > ni) {
            *o++ = '.';
            memcpy(o, dig + ni, (size_t)(nd - ni));
            o += nd - ni;
        }
    } else {
        *o++ = '0';
        *o++ = '.';
        for (int i = 0; i < -x - 1; i++)
            *o++ = '0';
        memcpy(o, dig, (size_t)nd);
        o += nd;
    }
    *o = '\0';
    return (size_t)(o - buf);
}

#if defined(__SIZEOF_INT128__)

__extension__ typedef unsigned __int128 u128;

static const uint64_t pow5_u64[28] = {
    1u, 5u, 25u, 125u, 625u, 3125u, 15625u, 78125u, 390625u, 1953125u, 9765625u, 48828125u, 244140625u,
    1220703125u, 6103515625ull, 30517578125ull, 152587890625ull, 762939453125ull, 3814697265625ull,
    19073486328125ull, 95367431640625ull, 476837158203125ull, 2384185791015625ull, 11920928955078125ull,
    59604644775390625ull, 298023223876953125ull, 1490116119384765625ull, 7450580596923828125ull,
};

/* 5^s for 0 <= s <= 54. */
static u128 pow5(int s)
{
    return s <= 27 ? (u128)pow5_u64[s] : (u128)pow5_u64[27] * pow5_u64[s - 27];
}

typedef struct {
    uint64_t m;  /* a = m * 2^e, 2^52 <= m < 2^53 */
    int e;
    int low;     /* m = 2^52 above the smallest normal: the double below a is closer than the one above */
} Bits;

/* a > 0, finite. 0 for a subnormal (left to the library). */
static int split(double a, Bits *b)
{
    uint64_t bits;
    memcpy(&bits, &a, sizeof bits);
    int be = (int)(bits >> 52) & 0x7ff;
    uint64_t frac = bits & ((1ull << 52) - 1);
    if (be == 0 || be == 0x7ff)
        return 0;
    b->m = frac | (1ull << 52);
    b->e = be - 1075;
    b->low = frac == 0 && be > 1;
    return 1;
}

/* floor(log10(a)) or one less, from the binary exponent (1233/4096 is just under log10 2). */
static int est_e10(const Bits *b)
{
    int l2 = b->e + 52;
    return l2 >= 0 ? (l2 * 1233) >> 12 : -((-l2 * 1233 + 4095) >> 12);
}

/* a * 10^(16 - e10) as q + rem / 2^k exactly (q its integer part, 17 digits), e10 = floor(log10 a),
 * and 5^(16 - e10), the half-unit test's yardstick. */
typedef struct {
    uint64_t q;
    u128 rem;
    int k;
    int e10;
    u128 p5;
} Dec17;

/* 0 when a lies outside [1e-16, 1e17) (the 128-bit integers would not hold it). */
static int dec17(const Bits *b, Dec17 *d)
{
    int e = est_e10(b);
    for (int tries = 0; tries < 3; tries++) {
        int s = 16 - e, t = b->e + s;
        if (s < 0 || s > 32) /* m * 5^s < 2^53 * 5^32 < 2^128 */
            return 0;
        u128 p5 = pow5(s), n = (u128)b->m * p5, q;
        if (t >= 0) {
            if (t >= 64 || (n >> (64 - t)) != 0)
                return 0;
            q = n << t;
            d->rem = 0;
            d->k = 0;
        } else {
            if (-t >= 128)
                return 0;
            d->k = -t;
            q = n >> d->k;
            d->rem = n - (q << d->k);
        }
        if (q >= pow10_u64[17]) {
            e++;
        } else if (q < pow10_u64[16]) {
            e--;
        } else {
            d->q = (uint64_t)q;
            d->e10 = e;
            d->p5 = p5;
            return 1;
        }
    }
    return 0;
}

/* a rounded to p <= 17 significant digits, ties to even: the p-digit integer, or 10^p after a carry. */
static inline uint64_t round17(const Dec17 *d, int p)
{
    int drop = 17 - p;
    uint64_t q, r, half;
    int frac; /* the part below q's last kept digit, against half of that digit: -1 below, 0 tie, 1 above */
    if (drop == 0) {
        q = d->q;
        if (d->k == 0)
            frac = -1;
        else {
            u128 h = (u128)1 << (d->k - 1);
            frac = d->rem > h ? 1 : d->rem == h ? 0 : -1;
        }
    } else {
        uint64_t div = pow10_u64[drop];
        q = d->q / div;
        r = d->q % div;
        half = div / 2;
        frac = r > half ? 1 : r < half ? -1 : d->rem != 0 ? 1 : 0;
    }
    return q + (frac > 0 || (frac == 0 && (q & 1)));
}

/* Whether the p-digit rounding qp (before a carry is undone) reads back to a. */
static inline int reads_back(const Bits *b, const Dec17 *d, uint64_t qp, int p)
{
    uint64_t c = qp * pow10_u64[17 - p]; /* at the 17-digit scale; <= 10^17 */
    u128 dist;
    int below;
    if (c > d->q) {
        dist = ((u128)(c - d->q) << d->k) - d->rem;
        below = 0;
    } else {
        dist = ((u128)(d->q - c) << d->k) + d->rem;
        below = 1;
    }
    return below && b->low ? dist <= d->p5 >> 2 : dist <= d->p5 >> 1;
}

#if defined(FLT_EVAL_METHOD) && FLT_EVAL_METHOD == 0
/* Fast paths in double arithmetic for the common cases, each falling back to the integers when it
 * cannot be sure. They need doubles without excess precision (FLT_EVAL_METHOD 0: x86-64, AArch64). */
static const double p10d[23] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
                                1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

/* a * 10^s, |s| <= 22: one correctly rounded operation, 10^s being exact. */
static inline double scale10(double a, int s)
{
    return s >= 0 ? a * p10d[s] : a / p10d[-s];
}

/* The JSON form of a when a decimal of 6 significant digits reads back to it, as a value printed by
 * a simulator does, or 0. The candidate t = a * 10^s rounded is an integer below 2^53 and 10^s is
 * exact, so t / 10^s is correctly rounded (Clinger): if it gives a back, strtod would too, a has a
 * representation of at most 6 digits, and it is what %.15g prints (at most one 6-digit decimal lies
 * within half a unit of a). e10 is floor(log10 a) or one less. */
static size_t short_json(char *buf, int neg, double a, int e10)
{
    for (int tries = 0; tries < 2; tries++, e10++) {
        int s = 5 - e10;
        if (s < -22 || s > 22)
            return 0;
        double x = scale10(a, s);
        if (!(x < 1e7))
            return 0;
        uint64_t q = (uint64_t)(x + 0.5); /* a candidate only: the test below decides */
        if (q < 100000u)
            return 0;
        if (q >= 1000000u)
            continue; /* the estimate was one low */
        if (scale10((double)q, -s) != a)
            return 0;
        return format_gp(buf, neg, q, 6, e10, 15); /* in %.15g's notation */
    }
    return 0;
}

/* "%.{p}g" of a (p <= 15) when the double product a * 10^s says for sure how it rounds, or 0: it is
 * off from the exact value by half a unit of its last place at most, so only a fraction that near
 * one half leaves the rounding in doubt (then the integers decide). */
static size_t short_g(char *buf, int neg, double a, int e10, int p)
{
    for (int tries = 0; tries < 2; tries++, e10++) {
        int s = p - 1 - e10;
        if (s < -22 || s > 22)
            return 0;
        double x = scale10(a, s);
        if (!(x < 1e16))
            return 0;
        double f = (double)(uint64_t)x, fr = x - f; /* x < 2^54: truncation is floor, exactly */
        if (f >= p10d[p])
            continue; /* the estimate was one low */
        if (f < p10d[p - 1] || fabs(fr - 0.5) <= x * 0x1p-51)
            return 0;
        uint64_t q = (uint64_t)f + (fr > 0.5);
        if (q == pow10_u64[p]) /* rounds up to the next power of ten */
            return format_g(buf, neg, pow10_u64[p - 1], p, e10 + 1);
        return format_g(buf, neg, q, p, e10);
    }
    return 0;
}
#define SHORT_JSON(buf, neg, a, e10) short_json(buf, neg, a, e10)
#define SHORT_G(buf, neg, a, e10, p) ((p) <= 15 ? short_g(buf, neg, a, e10, p) : 0)
#else
#define SHORT_JSON(buf, neg, a, e10) 0
#define SHORT_G(buf, neg, a, e10, p) 0
#endif

/* qp as %g digits: p digits, or 10^p (a carry: one digit more, exponent one higher). */
static size_t put_rounded(char *buf, int neg, uint64_t qp, int p, int e10)
{
    if (qp >= pow10_u64[p])
        return format_g(buf, neg, qp / 10, p, e10 + 1);
    return format_g(buf, neg, qp, p, e10);
}

size_t numfmt_g(char *buf, double v, int prec)
{
    if (prec < 1)
        prec = 1;
    if (prec > 17 || !isfinite(v))
        return fallback_g(buf, v, prec);
    int neg = signbit(v) != 0;
    double a = fabs(v);
    if (a == 0.0)
        return (size_t)(neg ? (memcpy(buf, "-0", 3), 2) : (memcpy(buf, "0", 2), 1));
    Bits b;
    Dec17 d;
    if (!split(a, &b))
        return fallback_g(buf, v, prec);
    size_t n = SHORT_G(buf, neg, a, est_e10(&b), prec);
    if (n)
        return n;
    if (!dec17(&b, &d))
        return fallback_g(buf, v, prec);
    uint64_t qp;
    switch (prec) { /* the usual precisions with constant divisors */
    case 3: qp = round17(&d, 3); break;
    case 6: qp = round17(&d, 6); break;
    default: qp = round17(&d, prec); break;
    }
    return put_rounded(buf, neg, qp, prec, d.e10);
}

size_t numfmt_json(char *buf, double v)
{
    if (!isfinite(v))
        return fallback_g(buf, v, 17);
    int neg = signbit(v) != 0;
    double a = fabs(v);
    if (a == 0.0)
        return (size_t)(neg ? (memcpy(buf, "-0", 3), 2) : (memcpy(buf, "0", 2), 1));
    Bits b;
    Dec17 d;
    if (!split(a, &b))
        return fallback_json(buf, v);
    size_t n = SHORT_JSON(buf, neg, a, est_e10(&b));
    if (n)
        return n;
    if (!dec17(&b, &d) || d.k == 0) /* k 0: a >= 2^53, an integer; rare, left to the library */
        return fallback_json(buf, v);
    uint64_t qp = round17(&d, 15); /* written out, so that the divisions are by constants */
    if (reads_back(&b, &d, qp, 15))
        return put_rounded(buf, neg, qp, 15, d.e10);
    qp = round17(&d, 16);
    if (reads_back(&b, &d, qp, 16))
        return put_rounded(buf, neg, qp, 16, d.e10);
    return put_rounded(buf, neg, round17(&d, 17), 17, d.e10);
}

#else /* no 128-bit integers: the library does it all */

size_t numfmt_g(char *buf, double v, int prec)
{
    return fallback_g(buf, v, prec < 1 ? 1 : prec);
}

size_t numfmt_json(char *buf, double v)
{
    if (!isfinite(v))
        return fallback_g(buf, v, 17);
    return fallback_json(buf, v);
}

#endif
