/* source: whole-file loads (a mapping of a regular file, one read loop for a pipe; 64-bit sizes)
 * and the lazy line table. */
#define _DEFAULT_SOURCE /* MAP_ANONYMOUS and madvise are outside POSIX (Linux and the BSDs have both) */
#include "source.h"

#include <errno.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <fcntl.h>
#include <unistd.h>

#include "buf.h"

static size_t page_size(void)
{
    long p = sysconf(_SC_PAGESIZE);
    return p > 0 ? (size_t)p : 4096;
}

/* Map the regular file fd of len bytes (len > 0) read-only, followed by at least one zero byte:
   the bytes past the end of the file in its last page read as zeros; when the file ends on a page
   boundary, an anonymous page placed after it gives the NUL. The pages are the system's page
   cache, shared with every other reader of the file, and src_drop can hand them back at any time:
   touched again, they come back from the file. NULL when the system will not map it (the caller
   then reads it). */
static char *map_file(int fd, size_t len, size_t *span)
{
    size_t pg = page_size();
    if (len > SIZE_MAX - pg)
        return NULL;
    size_t whole = (len + 1 + pg - 1) / pg * pg, file = (len + pg - 1) / pg * pg;
    char *p = mmap(NULL, whole, PROT_READ, MAP_PRIVATE | MAP_ANONYMOUS, -1, 0);
    if (p == MAP_FAILED)
        return NULL;
    if (mmap(p, file, PROT_READ, MAP_PRIVATE | MAP_FIXED, fd, 0) == MAP_FAILED) {
        munmap(p, whole);
        return NULL;
    }
    *span = whole;
    return p;
}

/* Read fd to its end into a malloc'd buffer of first capacity cap, grown by doubling, with a NUL
   after the bytes. 0, or an errno value (ENOMEM when memory ran out); nothing is left allocated on
   failure. */
static int read_all(int fd, size_t cap, char **out, size_t *outlen)
{
    size_t len = 0;
    char *text = malloc(cap);
    if (!text)
        return ENOMEM;
    for (;;) {
        if (len + 1 >= cap) {
            char *p = cap <= SIZE_MAX / 2 ? realloc(text, cap * 2) : NULL;
            if (!p) {
                free(text);
                return ENOMEM;
            }
            text = p;
            cap *= 2;
        }
        ssize_t r = read(fd, text + len, cap - 1 - len);
        if (r < 0) {
            if (errno == EINTR)
                continue;
            int e = errno;
            free(text);
            return e;
        }
        if (r == 0)
            break;
        len += (size_t)r;
    }
    text[len] = '\0';
    *out = text;
    *outlen = len;
    return 0;
}

int src_load(SrcFile *f, const char *path, SrcLoc from, DiagList *d)
{
    memset(f, 0, sizeof *f);
    /* A file named inside another (an include) is opened without waiting: opening a named pipe that
       no program writes would otherwise wait for ever. */
    int fd = open(path, O_RDONLY | (from.file ? O_NONBLOCK : 0));
    struct stat st;
    if (fd < 0 || fstat(fd, &st) != 0) {
        int e = errno;
        if (fd >= 0)
            close(fd);
        diag_add(d, DIAG_ERROR, from.file ? from : (SrcLoc){path, 0, 0}, "cannot open '%s': %s", path,
                 strerror(e));
        return ERR_IO;
    }
    if (S_ISDIR(st.st_mode)) {
        close(fd);
        diag_add(d, DIAG_ERROR, from.file ? from : (SrcLoc){path, 0, 0}, "'%s' is a folder, not a file", path);
        return ERR_IO;
    }
    /* A device (/dev/zero, a terminal) may never end: only files and pipes are read. */
    if (S_ISCHR(st.st_mode) || S_ISBLK(st.st_mode) || S_ISSOCK(st.st_mode)) {
        close(fd);
        diag_add(d, DIAG_ERROR, from.file ? from : (SrcLoc){path, 0, 0},
                 "'%s' is a device, not a file: biaslint reads files and pipes only", path);
        return ERR_IO;
    }
    if (from.file && !S_ISREG(st.st_mode)) {
        close(fd);
        diag_add(d, DIAG_ERROR, from, "'%s' is a pipe, not a file: a file named in a netlist must be a regular file",
                 path);
        return ERR_IO;
    }
    /* Regular files are mapped; pipes, and files the system will not map, are read. A read regular file
       gets one spare byte beyond its NUL, so that the read which finds EOF needs no bigger buffer (a
       doubling realloc of a 100 MB dump, for nothing). */
    size_t len = 0, span = 0;
    char *text = NULL;
    int e = 0;
    if (S_ISREG(st.st_mode) && st.st_size > 0 && (uintmax_t)st.st_size < SIZE_MAX &&
        (text = map_file(fd, (size_t)st.st_size, &span)))
        len = (size_t)st.st_size;
    else
        e = read_all(fd, S_ISREG(st.st_mode) ? (size_t)st.st_size + 2 : 65536, &text, &len);
    close(fd);
    if (e == ENOMEM)
        return diag_nomem(d);
    if (e) {
        diag_add(d, DIAG_ERROR, (SrcLoc){path, 0, 0}, "cannot read '%s': %s", path, strerror(e));
        return ERR_IO;
    }
    f->text = text;
    f->span = span;
    f->path = strdup(path);
    if (!f->path) {
        src_free_text(f);
        return diag_nomem(d);
    }
    f->len = len;
    f->dev = (uint64_t)st.st_dev;
    f->ino = (uint64_t)st.st_ino;
    return ERR_OK;
}

void src_free_text(SrcFile *f)
{
    if (f->span)
        munmap(f->text, f->span);
    else
        free(f->text);
    free(f->lines);
    f->text = NULL;
    f->len = f->span = 0;
    f->lines = NULL;
    f->nlines = 0;
}

void src_drop(const SrcFile *f, size_t from, size_t to)
{
    if (!f->span)
        return;
    size_t pg = page_size();
    from = (from + pg - 1) / pg * pg; /* whole pages only: the ones at the ends may still be in use */
    to = to >= f->len ? f->span : to / pg * pg;
    if (to > from)
        madvise(f->text + from, to - from, MADV_DONTNEED);
}

void src_free(SrcFile *f)
{
    if (!f)
        return;
    free(f->path);
    src_free_text(f);
    memset(f, 0, sizeof *f);
}

static int build_lines(SrcFile *f)
{
    size_t n = 1;
    for (const char *p = f->text, *end = f->text + f->len; (p = memchr(p, '\n', (size_t)(end - p))); p++)
        n++;
    size_t *lines = malloc(n * sizeof *lines);
    if (!lines)
        return ERR_NOMEM;
    size_t k = 0;
    lines[k++] = 0;
    for (size_t i = 0; i < f->len; i++)
        if (f->text[i] == '\n')
            lines[k++] = i + 1;
    f->lines = lines;
    f->nlines = k;
    return ERR_OK;
}

SrcLoc src_loc(SrcFile *f, size_t off)
{
    SrcLoc loc = {f->path, 0, 0};
    if (!f->lines && build_lines(f) != ERR_OK)
        return loc;
    size_t lo = 0, hi = f->nlines; /* last line start <= off */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (f->lines[mid] <= off)
            lo = mid;
        else
            hi = mid;
    }
    loc.line = (uint32_t)(lo + 1);
    loc.col = (uint32_t)(off - f->lines[lo] + 1);
    return loc;
}

size_t src_line_at(const SrcFile *f, size_t off, size_t *start)
{
    if (off > f->len)
        off = f->len;
    size_t s = off;
    while (s > 0 && f->text[s - 1] != '\n')
        s--;
    size_t e = off;
    while (e < f->len && f->text[e] != '\n')
        e++;
    if (e > s && f->text[e - 1] == '\r')
        e--;
    *start = s;
    return e - s;
}

char *src_resolve(const char *base, const char *rel)
{
    if (rel[0] == '/' || !base)
        return strdup(rel);
    const char *slash = strrchr(base, '/');
    if (!slash)
        return strdup(rel);
    size_t dl = (size_t)(slash - base) + 1, rl = strlen(rel);
    char *p = malloc(dl + rl + 1);
    if (!p)
        return NULL;
    memcpy(p, base, dl);
    memcpy(p + dl, rel, rl + 1);
    return p;
}

int src_set_load(SrcSet *s, const char *path, SrcLoc from, DiagList *d, uint32_t *idx)
{
    if (buf_grow_array((void **)&s->files, &s->cap, s->n + 1, sizeof *s->files) != ERR_OK)
        return diag_nomem(d);
    SrcFile *f = malloc(sizeof *f);
    if (!f)
        return diag_nomem(d);
    int rc = src_load(f, path, from, d);
    if (rc != ERR_OK) {
        free(f);
        return rc;
    }
    s->files[s->n] = f;
    *idx = (uint32_t)s->n++;
    return ERR_OK;
}

void src_set_free(SrcSet *s)
{
    if (!s)
        return;
    for (size_t i = 0; i < s->n; i++) {
        src_free(s->files[i]);
        free(s->files[i]);
    }
    free(s->files);
    s->files = NULL;
    s->n = s->cap = 0;
}

int src_same_file(const char *a, const char *b)
{
    struct stat sa, sb;
    if (stat(a, &sa) != 0 || stat(b, &sb) != 0)
        return 0;
    return sa.st_dev == sb.st_dev && sa.st_ino == sb.st_ino;
}
