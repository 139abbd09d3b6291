/* size: the front ends of the table commands. `biaslint size` answers a designer's question from a
 * table (the figures at a bias, or the bias and width for a gm/ID target); `biaslint characterize`
 * turns the options into a sweep (characterize.h) with a progress bar. main calls them. */
#ifndef SIZE_H
#define SIZE_H

#include <stdio.h>

#include "buf.h"
#include "check.h"
#include "cli.h"
#include "diag.h"
#include "join.h"
#include "lut.h"

/* The answer of `size`. NaN where a figure is absent (fT without Cgg, W without --id or --gm). */
typedef struct {
    double l, vds, vsb;  /* the point asked for */
    double vgs, gm_id, id_w, gain, ft, vth, vdsat;
    double w;            /* width for want_id or want_gm, m, total over fingers */
    double id, gm;       /* the ID or gm that W was sized for (NaN when none) */
    int inverse;         /* VGS came from the gm/ID target */
} SizeAnswer;

/* Answer at (l, vds, vsb) for vgs, or (vgs NaN) for target gm_id; want_id or want_gm (NaN: none) gives
 * the width. ERR_OK, or ERR_INPUT with a diagnostic at the table's path (outside the grid, gm/ID out
 * of reach). */
int size_answer(const Lut *t, double l, double vgs, double vds, double vsb, double gm_id, double want_id,
                double want_gm, SizeAnswer *a, DiagList *d) MUST_CHECK;

/* The answer as text (for a designer) or as JSON (keys vgs gm_id id_w gain ft vth vdsat, and w when
 * a width was asked for; SI units; null for an absent figure), appended to out. ERR_OK or ERR_NOMEM. */
int size_format_text(const Lut *t, const SizeAnswer *a, Buf *out) MUST_CHECK;
int size_format_json(const SizeAnswer *a, Buf *out) MUST_CHECK;

/* check --table: for every gm/ID finding (a device that misses its gm/ID intent) whose model has a
 * table, the width that restores the intended gm/ID (the middle of the intended range, or its bound)
 * at the device's measured ID, L, VDS and VSB (lut_suggest_w): Row.suggest_w and suggest_gmid are set
 * and the finding's message gets the sentence "W 4 um -> 9.3 um restores gm/ID 15 /V at 125 uA
 * (table ...)." (arena of f). temp_c picks among tables of one model. ERR_OK or ERR_NOMEM. */
int size_suggest(const Lut *const *tables, size_t ntables, double temp_c, Joined *j, Findings *f) MUST_CHECK;

/* `biaslint size` as o says; output to o->output or out. Returns the exit status (run.h). */
int run_size(const Options *o, FILE *out, DiagList *d);

/* `biaslint characterize` as o says; a progress bar goes to progress when not NULL (main passes
 * stderr when it is a terminal). Returns the exit status. */
int run_characterize(const Options *o, FILE *progress, DiagList *d);

#endif
