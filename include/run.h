/* run: the check pipeline, from files to reports: netlist -> design, dump -> op table, join,
 * checks, annotated netlist and report. main calls it; it prints nothing to stderr itself. */
#ifndef RUN_H
#define RUN_H

#include <stdio.h>

#include "cli.h"
#include "diag.h"

/* Exit statuses, as documented in README. */
enum { EXIT_CLEAN = 0, EXIT_FINDINGS = 1, EXIT_BAD_INPUT = 2, EXIT_INTERNAL = 3 };

/* Run `biaslint check` as o says, writing the report to o->output or to out. Returns the exit
 * status; diagnostics are left in d. No output file is left behind on status 2 or 3. */
int run_check(const Options *o, FILE *out, int color, DiagList *d);

/* Run `biaslint merge`: the summary of o->runs to o->output (or out) and every --report. Exit status
 * 0, or 2 (3) with nothing written when a run cannot be read. */
int run_merge(const Options *o, FILE *out, int color, DiagList *d);

/* Run `biaslint strip`. */
int run_strip(const Options *o, DiagList *d);

#endif
