/* source: a file loaded whole into one NUL-terminated buffer, with byte offsets mapped to
 * line:column on demand, and the set of files a run has loaded. */
#ifndef SOURCE_H
#define SOURCE_H

#include <stddef.h>
#include <stdint.h>

#include "diag.h"

typedef struct {
    char *path;        /* as opened (include paths resolved against the including file); owned */
    char *text;        /* file bytes plus a terminating NUL; owned. May hold NUL bytes itself. */
    size_t len;        /* bytes in the file, without the added NUL */
    size_t *lines;     /* start offset of every line, built on first use; owned */
    size_t nlines;
    uint64_t dev, ino; /* identity, to spot an include cycle or an output over an input */
} SrcFile;

/* Read path whole. On failure records an error at `from` (where the file was asked for; a zero
 * SrcLoc for a command-line argument) and returns ERR_IO; f is then empty. */
int src_load(SrcFile *f, const char *path, SrcLoc from, DiagList *d) MUST_CHECK;
void src_free(SrcFile *f); /* accepts NULL and a zeroed SrcFile */

/* The location of byte offset off (1-based line and column). Builds the line table the first
 * time; on out of memory gives line 0. */
SrcLoc src_loc(SrcFile *f, size_t off);

/* The physical line holding offset off: *start is its first byte, returns its length without the
 * line ending. */
size_t src_line_at(const SrcFile *f, size_t off, size_t *start);

/* A malloc'd path for `rel` as seen from the folder of `base` (rel itself when absolute). NULL on OOM. */
char *src_resolve(const char *base, const char *rel);

/* The files one run has loaded, in load order; index 0 is the top netlist. */
typedef struct {
    SrcFile **files;
    size_t n, cap;
} SrcSet;

/* Load path into the set and return its index through *idx. ERR_IO (with a diagnostic) or ERR_NOMEM. */
int src_set_load(SrcSet *s, const char *path, SrcLoc from, DiagList *d, uint32_t *idx) MUST_CHECK;
void src_set_free(SrcSet *s);

/* 1 when the two paths name the same existing file. */
int src_same_file(const char *a, const char *b);

#endif
