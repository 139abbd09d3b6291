/* source: whole-file reads (one read per file, 64-bit sizes) and the lazy line table. */
#include "source.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <fcntl.h>
#include <unistd.h>

#include "buf.h"

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
    /* Regular files are read in one go; pipes are read until EOF. A regular file gets one spare byte
       beyond its NUL, so that the read which finds EOF needs no bigger buffer (a doubling realloc of
       a 100 MB dump, for nothing). */
    size_t cap = S_ISREG(st.st_mode) ? (size_t)st.st_size + 2 : 65536;
    char *text = malloc(cap);
    size_t len = 0;
    if (!text)
        goto nomem;
    for (;;) {
        if (len + 1 >= cap) {
            size_t ncap = cap * 2;
            char *p = realloc(text, ncap);
            if (!p)
                goto nomem;
            text = p;
            cap = ncap;
        }
        ssize_t r = read(fd, text + len, cap - 1 - len);
        if (r < 0) {
            if (errno == EINTR)
                continue;
            int e = errno;
            free(text);
            close(fd);
            diag_add(d, DIAG_ERROR, (SrcLoc){path, 0, 0}, "cannot read '%s': %s", path, strerror(e));
            return ERR_IO;
        }
        if (r == 0)
            break;
        len += (size_t)r;
    }
    close(fd);
    text[len] = '\0';
    f->path = strdup(path);
    if (!f->path) {
        free(text);
        return diag_nomem(d);
    }
    f->text = text;
    f->len = len;
    f->dev = (uint64_t)st.st_dev;
    f->ino = (uint64_t)st.st_ino;
    return ERR_OK;
nomem:
    free(text);
    close(fd);
    return diag_nomem(d);
}

void src_free(SrcFile *f)
{
    if (!f)
        return;
    free(f->path);
    free(f->text);
    free(f->lines);
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
