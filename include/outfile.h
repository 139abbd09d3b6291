/* outfile: output files written atomically. The data goes to a temporary file beside the target and
 * is renamed into place on commit, so a failed run leaves no partial file and never touches an input. */
#ifndef OUTFILE_H
#define OUTFILE_H

#include <stdio.h>

#include "diag.h"

typedef struct {
    char *path;  /* final path; owned */
    char *tmp;   /* temporary path beside it; owned */
    FILE *fp;    /* open for writing while in use */
} OutFile;

/* Open a temporary file for path. It is an error (ERR_INPUT, with a diagnostic) for path to name
 * one of the ninputs input files. ERR_IO when the folder is not writable. */
int out_open(OutFile *o, const char *path, const char *const *inputs, size_t ninputs, DiagList *d) MUST_CHECK;

/* Flush, close and rename into place. On failure the temporary file is removed and ERR_IO recorded. */
int out_commit(OutFile *o, DiagList *d) MUST_CHECK;

/* Close and remove the temporary file; the target is left as it was. Accepts an unopened OutFile. */
void out_abort(OutFile *o);

#endif
