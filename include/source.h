/* source: a file loaded whole into one NUL-terminated buffer, with byte offsets mapped to
 * line:column on demand, and the set of files a run has loaded. */
#ifndef SOURCE_H
#define SOURCE_H

#include <stddef.h>
#include <stdint.h>

#include "diag.h"

typedef struct {
    char *path;        /* as opened (include paths resolved against the including file); owned */
    char *text;        /* file bytes plus a terminating NUL; owned, read-only. May hold NUL bytes itself. */
    size_t len;        /* bytes in the file, without the added NUL */
    size_t span;       /* bytes mapped when text is a mapping of the file (see src_drop), 0 when read */
    size_t *lines;     /* start offset of every line, built on first use; owned */
    size_t nlines;
    uint64_t dev, ino; /* identity, to spot an include cycle or an output over an input */
} SrcFile;

/* Read path whole. On failure records an error at `from` (where the file was asked for; a zero
 * SrcLoc for a command-line argument) and returns ERR_IO; f is then empty. */
int src_load(SrcFile *f, const char *path, SrcLoc from, DiagList *d) MUST_CHECK;
void src_free(SrcFile *f); /* accepts NULL and a zeroed SrcFile */

/* Free the text and line table only, keeping path and identity (a dump once parsed). */
void src_free_text(SrcFile *f);

/* Advice that text[from..to) will not be read soon: the whole pages inside it leave this process's
 * memory. Reading them again is still correct (they come back from the file), so a reader calls this
 * behind its cursor and a large input never sits in memory whole. Does nothing for a file that was
 * read rather than mapped. */
void src_drop(const SrcFile *f, size_t from, size_t to);

/* For a reader going through f in order, at each step: drops what lies behind pos once it has moved
 * SRC_DROP_STEP bytes past *mark (where the last drop ended, 0 at first). */
#define SRC_DROP_STEP ((size_t)8 << 20)
static inline void src_drop_behind(const SrcFile *f, size_t *mark, size_t pos)
{
    if (pos - *mark >= SRC_DROP_STEP) {
        src_drop(f, *mark, pos);
        *mark = pos;
    }
}

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
