/* merge: many JSON reports of `biaslint check` (Monte Carlo runs, sweeps, one per job of a batch)
 * combined into one summary per device and corner label: minimum, mean, maximum and standard
 * deviation of gm/ID, VDS-VDSAT and gm/gds, the fraction of runs in which each check failed, the
 * regions seen, and the worst run. Runs are read one at a time (their device and finding arrays
 * streamed), so the memory is the summary's, not the inputs'.
 *
 * A sample is one device in one corner of one run. Corners are matched by label across runs (a run
 * with one unnamed dump has the label ""). A check fails in a run when the run has a finding of it
 * for the device at warning or error that is not waived. The worst run of a device is the one with
 * its most severe such finding, then the least VDS-VDSAT, then the first. The standard deviation is
 * the sample one (n-1 in the denominator); with one sample it is absent. */
#ifndef MERGE_H
#define MERGE_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "arena.h"
#include "diag.h"
#include "metrics.h"
#include "rules.h"
#include "strtab.h"

typedef struct {
    size_t n;                /* samples with a value */
    double min, max, mean, m2; /* Welford's running mean and sum of squared deviations */
    uint32_t min_run, max_run; /* runs of the minimum and the maximum */
} MrgStat;

enum { MRG_GMID, MRG_MARGIN, MRG_GAIN, MRG_NSTATS };
extern const char *const mrg_stat_name[MRG_NSTATS]; /* "gm_id", "margin", "gain" */

typedef struct {
    const char *device;      /* as written in the first run that has it */
    const char *corner;
    const char *model, *type, *file;
    uint32_t line;
    uint32_t nruns;          /* runs that have this device in this corner */
    MrgStat stat[MRG_NSTATS];
    uint32_t region_n[REGION_COUNT]; /* samples per region word (unknown words and no data: unknown) */
    uint32_t *fail;          /* runs failing each check (CHECK_COUNT counters), NULL while none failed */
    uint32_t *fail_mark;     /* run index + 1 that last counted each check (internal) */
    int worst_sev;           /* -1: no failing finding in any run */
    double worst_margin;
    uint32_t worst_run;      /* index into MrgResult.runs; valid when nruns > 0 */
    /* internal, for the run being added */
    uint32_t cur_run;
    int cur_sev;
    double cur_margin;
    const char *dkey, *ckey; /* interned keys */
} MrgEntry;

typedef struct {
    const char *path;
    size_t ncorners, ndevices, nfailing; /* failing: findings at warning or error, not waived */
} MrgRun;

typedef struct {
    Arena arena;
    StrTab *names;
    MrgRun *runs;
    size_t nruns, runs_cap;
    MrgEntry *e;             /* in order of first appearance */
    size_t n, cap;
    size_t *slot;            /* hash of (device, corner) keys: entry index + 1 */
    size_t nslots;
    uint32_t check_runs[CHECK_COUNT];  /* runs in which the check failed for some device */
    uint32_t check_mark[CHECK_COUNT];
    const char *other_checks;/* a check name this biaslint does not know, seen in some run (first one) */
    size_t runs_failing;     /* runs with any failing finding */
    size_t region_changes;   /* entries that were in more than one region */
    /* scratch for the run being read */
    void *samples, *fails;
    size_t nsamples, samples_cap, nfails, fails_cap;
    const char *first_corner, *first_label;
    DiagList *d;
    const char *cur_path;
    int status;
} MrgResult;

void mrg_init(MrgResult *m);
void mrg_free(MrgResult *m);

/* Read one JSON report into m. Errors are located at path:line:column and leave m as it was before
 * the call. ERR_OK, ERR_IO, ERR_INPUT, ERR_LIMIT, ERR_NOMEM. */
int mrg_add(MrgResult *m, const char *path, DiagList *d) MUST_CHECK;

/* After the last mrg_add: counts the entries that changed region. */
void mrg_finish(MrgResult *m);

/* The sample standard deviation of s, NaN with fewer than two samples. */
double mrg_std(const MrgStat *s);
/* 1 when the entry was seen in more than one region. */
int mrg_region_changed(const MrgEntry *e);

/* The merge writers: text, json, csv, html. */
typedef struct {
    const char *name;
    int (*write)(const MrgResult *m, FILE *fp, int color); /* ERR_OK or ERR_IO */
} MrgWriter;

const MrgWriter *mrg_lookup(const char *name);

#endif
