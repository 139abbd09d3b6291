/* diag: located diagnostics (severity, file, line, column, message) collected in a caller-owned list.
 * Library code records problems here and returns a status; only main.c prints them. */
#ifndef DIAG_H
#define DIAG_H

#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

/* Status values returned by library functions: 0 is success, negative is failure. */
enum {
    ERR_OK = 0,
    ERR_NOMEM = -1,  /* an allocation failed; a diagnostic says so */
    ERR_INPUT = -2,  /* bad input; the diagnostics say where */
    ERR_IO = -3,     /* a file could not be read or written */
    ERR_LIMIT = -4,  /* a documented limit was exceeded */
};

#if defined(__GNUC__)
#define MUST_CHECK __attribute__((warn_unused_result))
#define PRINTF_LIKE(f, a) __attribute__((format(printf, f, a)))
#else
#define MUST_CHECK
#define PRINTF_LIKE(f, a)
#endif

typedef enum { DIAG_NOTE, DIAG_WARNING, DIAG_ERROR } DiagSeverity;

/* A place in an input file. file is borrowed (it lives as long as the loaded file); line and col are
 * 1-based, 0 when unknown. */
typedef struct {
    const char *file;
    uint32_t line;
    uint32_t col;
} SrcLoc;

typedef struct {
    DiagSeverity sev;
    SrcLoc loc;     /* loc.file is an owned copy (diag_add copies it) */
    char *msg;      /* owned */
    char *excerpt;  /* owned copy of the source line, or NULL */
    uint32_t span;  /* columns to underline under the excerpt, 0 for none */
} Diag;

typedef struct {
    Diag *items;
    size_t n, cap;
    size_t nerrors, nwarnings;
    size_t max_kept; /* past this many, diagnostics are counted but not kept (0: default 200) */
    size_t dropped;
    int oom;         /* set when a diagnostic could not be stored: report "out of memory" */
} DiagList;

void diag_init(DiagList *d);
void diag_free(DiagList *d);

/* Record a diagnostic. Returns ERR_INPUT for an error, ERR_OK for a note or warning, so that
 * `return diag_add(...)` reads naturally; out of memory sets d->oom and returns ERR_NOMEM. */
int diag_add(DiagList *d, DiagSeverity sev, SrcLoc loc, const char *fmt, ...) PRINTF_LIKE(4, 5);
int diag_vadd(DiagList *d, DiagSeverity sev, SrcLoc loc, const char *fmt, va_list ap);

/* As diag_add, with the source line shown and `span` columns underlined from loc.col. */
int diag_add_excerpt(DiagList *d, DiagSeverity sev, SrcLoc loc, const char *line, size_t line_len,
                     uint32_t span, const char *fmt, ...) PRINTF_LIKE(7, 8);

/* Out-of-memory, recorded without allocating. Always returns ERR_NOMEM. */
int diag_nomem(DiagList *d);

/* Print every diagnostic at or above min as `file:line:col: severity: message`, with the excerpt
 * and a caret line under the span. */
void diag_print(const DiagList *d, FILE *fp, int color, DiagSeverity min);

#endif
