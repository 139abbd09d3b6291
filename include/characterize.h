/* characterize: build a characterization table by simulation. Writes an ngspice deck that sweeps
 * one model over L x VSB x VDS x VGS (one MOSFET per L on shared ideal sources; per VSB value a
 * nested dc sweep of VGS inside VDS, saving the @m[...] vectors into a binary raw file), runs
 * `ngspice -b` as a child process (fork and exec, no shell), reads the raw file back and hands the
 * values over as a table. The only module of biaslint that starts a process. */
#ifndef CHARACTERIZE_H
#define CHARACTERIZE_H

#include <stddef.h>

#include "diag.h"
#include "lut.h"

/* A grid axis given as start:stop:step (stop included when the steps reach it). */
typedef struct {
    double start, stop, step;
} CharRange;

typedef struct {
    const char *models;       /* the model file (.include'd, or .lib'd with section) */
    const char *section;      /* .lib section, NULL to .include the file */
    const char *model;        /* model name on its .model card; its type and level are read from the card */
    const double *l;          /* channel lengths, m, strictly increasing */
    size_t nl;
    CharRange vgs, vds, vsb;  /* n-type convention: PMOS grids are magnitudes too */
    double temp_c;            /* NaN: the temperature the model file sets (.temp), else ngspice's 27 C */
    double w_ref;             /* reference width, m (one finger, m=1) */
    const char *ngspice;      /* program to run; NULL: "ngspice", looked up on PATH */
    const char *deck_copy;    /* also write the deck here (to rerun or read it), NULL: no copy */
} CharSpec;

/* Progress callback: fraction done, 0..1, called from char_build while ngspice runs. */
typedef void (*CharProgress)(void *ctx, double done);

/* The points of a range: *out malloc'd (free it), *n of them. ERR_INPUT with a diagnostic naming
 * `what` when the range is empty, backwards, has a step <= 0 or more than 100000 points. */
int char_range_points(const CharRange *r, const char *what, double **out, size_t *n, DiagList *d) MUST_CHECK;

/* What char_build collects: the table's header and grid (info) and its values (vals, lut_new
 * layout), all owned by the result; free it with char_result_free. */
typedef struct {
    LutInfo info;
    double *vals;
    double ngspice_seconds;   /* wall time of the ngspice run */
    void *owned;              /* internal: memory behind info */
} CharResult;

/* Run the sweep into *res. Errors, each with a diagnostic: ERR_INPUT (bad spec, model not found,
 * unsupported level, ngspice failed or did not converge: its last messages quoted), ERR_IO (ngspice
 * missing, temporary files), ERR_NOMEM. Nothing is left behind on failure (res zeroed, the
 * temporary folder removed). */
int char_build(const CharSpec *s, CharProgress cb, void *ctx, CharResult *res, DiagList *d) MUST_CHECK;
void char_result_free(CharResult *res); /* accepts a zeroed result */

/* The reader of ngspice's sweep output on its own (for the fuzz target): the raw file at raw_path
 * read as char_build reads it for spec s's grid (the model file is not read) and a model of type
 * type whose family is BSIM (bsim 1) or levels 1 to 3 (bsim 0). ERR_OK, or ERR_INPUT with a
 * diagnostic, ERR_NOMEM. */
int char_read_sweep(const CharSpec *s, MosType type, int bsim, const char *raw_path, DiagList *d) MUST_CHECK;

/* char_build, then the table file written atomically to out (never over the model file). */
int char_run(const CharSpec *s, const char *out, CharProgress cb, void *ctx, DiagList *d) MUST_CHECK;

#endif
