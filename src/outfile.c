/* outfile: temporary file + fsync-free rename. The temporary name holds the pid so two runs that
 * write the same target do not share a temporary file. */
#include "outfile.h"

#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <fcntl.h>
#include <unistd.h>

#include "source.h"

int out_open(OutFile *o, const char *path, const char *const *inputs, size_t ninputs, DiagList *d)
{
    memset(o, 0, sizeof *o);
    for (size_t i = 0; i < ninputs; i++) {
        if (inputs[i] && (strcmp(inputs[i], path) == 0 || src_same_file(inputs[i], path)))
            return diag_add(d, DIAG_ERROR, (SrcLoc){path, 0, 0},
                            "refusing to write output over the input file '%s': choose another output name",
                            inputs[i]);
    }
    size_t n = strlen(path) + 32;
    o->path = strdup(path);
    o->tmp = malloc(n);
    if (!o->path || !o->tmp) {
        out_abort(o);
        return diag_nomem(d);
    }
    for (unsigned attempt = 0;; attempt++) {
        snprintf(o->tmp, n, "%s.tmp%ld.%u", path, (long)getpid(), attempt);
        int fd = open(o->tmp, O_WRONLY | O_CREAT | O_EXCL, 0666);
        if (fd >= 0) {
            o->fp = fdopen(fd, "wb");
            if (!o->fp) {
                close(fd);
                unlink(o->tmp);
                break;
            }
            return ERR_OK;
        }
        if (errno != EEXIST || attempt > 100)
            break;
    }
    int e = errno;
    diag_add(d, DIAG_ERROR, (SrcLoc){path, 0, 0}, "cannot write '%s': %s", path, strerror(e));
    free(o->tmp);
    o->tmp = NULL; /* nothing was created */
    out_abort(o);
    return ERR_IO;
}

int out_commit(OutFile *o, DiagList *d)
{
    int bad = ferror(o->fp);
    if (fclose(o->fp) != 0)
        bad = 1;
    o->fp = NULL;
    if (bad || rename(o->tmp, o->path) != 0) {
        int e = errno;
        diag_add(d, DIAG_ERROR, (SrcLoc){o->path, 0, 0}, "cannot write '%s': %s", o->path,
                 bad ? "write error" : strerror(e));
        out_abort(o);
        return ERR_IO;
    }
    free(o->tmp);
    free(o->path);
    o->tmp = o->path = NULL;
    return ERR_OK;
}

void out_abort(OutFile *o)
{
    if (o->fp)
        fclose(o->fp);
    if (o->tmp)
        unlink(o->tmp);
    free(o->tmp);
    free(o->path);
    memset(o, 0, sizeof *o);
}
