/* testutil: what every cmocka test file needs, plus small helpers for temporary files. */
#ifndef TESTUTIL_H
#define TESTUTIL_H

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* Relative closeness: |a-b| <= rel*max(|a|,|b|) (or both tiny). */
#define assert_close(a, b, rel)                                                                  \
    do {                                                                                         \
        double a_ = (a), b_ = (b), m_ = fmax(fabs(a_), fabs(b_));                                \
        if (!(fabs(a_ - b_) <= (rel) * m_ || m_ < 1e-300)) {                                     \
            print_error("%s = %.12g, expected %.12g (rel %.3g)\n", #a, a_, b_, (double)(rel));  \
            fail();                                                                              \
        }                                                                                        \
    } while (0)

/* Write text to a new file under a private temporary folder; returns a static-lifetime path
 * (malloc'd, freed at exit by the OS). */
static inline char *tu_tmpfile(const char *name, const char *text, size_t len)
{
    static char dir[64];
    if (!dir[0]) {
        snprintf(dir, sizeof dir, "/tmp/biaslint-test-XXXXXX");
        if (!mkdtemp(dir))
            return NULL;
    }
    size_t n = strlen(dir) + strlen(name) + 2;
    char *path = malloc(n);
    if (!path)
        return NULL;
    snprintf(path, n, "%s/%s", dir, name);
    FILE *fp = fopen(path, "wb");
    if (!fp) {
        free(path);
        return NULL;
    }
    fwrite(text, 1, len, fp);
    fclose(fp);
    return path;
}

#define TU_TMPFILE(name, lit) tu_tmpfile((name), (lit), sizeof(lit) - 1)

/* The whole file at path, NUL-terminated (malloc'd; it may hold NUL bytes of its own), its length
 * in *len when len is not NULL. A file that cannot be read fails the test. */
static inline char *tu_slurp(const char *path, size_t *len)
{
    FILE *fp = fopen(path, "rb");
    char *s = NULL;
    long n = -1;
    if (fp && fseek(fp, 0, SEEK_END) == 0 && (n = ftell(fp)) >= 0 && fseek(fp, 0, SEEK_SET) == 0 &&
        (s = malloc((size_t)n + 1)) && fread(s, 1, (size_t)n, fp) == (size_t)n) {
        s[n] = '\0';
    } else {
        free(s);
        s = NULL;
    }
    if (fp)
        fclose(fp);
    if (!s) {
        print_error("cannot read %s\n", path);
        fail();
    }
    if (len)
        *len = (size_t)n;
    return s;
}

/* The 1-based line and column of p in text. */
static inline void tu_line_col(const char *text, const char *p, uint32_t *line, uint32_t *col)
{
    uint32_t l = 1;
    const char *ls = text;
    for (const char *q = text; q < p; q++)
        if (*q == '\n') {
            l++;
            ls = q + 1;
        }
    *line = l;
    *col = (uint32_t)(p - ls + 1);
}

/* 1 when ngspice is on PATH (integration tests skip without it). */
/* A figure as the JSON report writes it (schema 3): six significant digits, as printf's %.6g. */
static inline double tu_six(double v)
{
    char b[32];
    snprintf(b, sizeof b, "%.6g", v);
    return strtod(b, NULL);
}

static inline int tu_have_ngspice(void)
{
    return system("command -v ngspice >/dev/null 2>&1") == 0;
}

#endif
