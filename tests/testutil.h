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

/* 1 when ngspice is on PATH (integration tests skip without it). */
static inline int tu_have_ngspice(void)
{
    return system("command -v ngspice >/dev/null 2>&1") == 0;
}

#endif
