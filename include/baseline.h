/* baseline: a previous JSON report read back, and this run compared with it, so a CI job can fail
 * only on what got worse.
 *
 * Findings match across runs by device name, check name and corner label (names and labels compare
 * case-insensitively; the k-th finding of one device, check and corner matches the k-th of the
 * baseline). A current finding is
 *   new        when the baseline has no match, or has one of lower severity (a warning that became an
 *              error counts as new; was_sev gives the old severity);
 *   unchanged  when the baseline has a match of the same or higher severity (values may differ);
 * and a baseline finding with no match in this run is resolved. A device whose region word in a
 * corner differs from the baseline's in the same corner is a region change. Devices or corners the
 * baseline does not have produce only new findings. */
#ifndef BASELINE_H
#define BASELINE_H

#include "diag.h"
#include "report.h"

typedef struct Baseline Baseline;

/* Read a JSON report written by `biaslint check --format json` (schema 1, 2 or 3). Errors (the file
 * cannot be read, is not JSON, is not a biaslint report, or a finding lacks its keys) are located
 * at file:line:column; *out is then NULL. ERR_OK, ERR_IO, ERR_INPUT, ERR_LIMIT, ERR_NOMEM. */
int bl_load(const char *path, Baseline **out, DiagList *d) MUST_CHECK;
void bl_free(Baseline *b);

/* The corner labels the baseline has ("" for a run with one unnamed dump), in its order. */
size_t bl_ncorners(const Baseline *b);
const char *bl_corner(const Baseline *b, size_t k);
/* Its findings, in file order. */
size_t bl_nfindings(const Baseline *b);
const BlOldFinding *bl_finding(const Baseline *b, size_t i);

/* Compare the run c (rep_prepare done) with b into out; path is the baseline's name for reports.
 * Records a warning in d when no corner label of the run is in the baseline (nothing can match).
 * Linear in findings plus devices. ERR_OK or ERR_NOMEM (out then empty). Free with bl_compare_free. */
int bl_compare(const Baseline *b, const ReportCtx *c, const char *path, BlCompare *out, DiagList *d) MUST_CHECK;
void bl_compare_free(BlCompare *x);

#endif
