/* report: one writer per output format behind one interface. Writers read the rows and findings of
 * every corner, the grouping of findings across corners and the comparison with a baseline; they
 * compute nothing. rep_prepare builds the grouping once, before any writer runs. */
#ifndef REPORT_H
#define REPORT_H

#include <stdint.h>
#include <stdio.h>

#include "check.h"
#include "design.h"
#include "join.h"
#include "opdump.h"
#include "rules.h"

/* One operating point of the design: a corner, a Monte Carlo sample, one dump. */
typedef struct {
    const char *label;        /* "" for the single unnamed dump of `--op FILE` */
    const char *op_path;
    const OpTable *op;
    const Joined *joined;     /* one row per Design device, in netlist order, as in every corner */
    const Findings *findings;
} RepCorner;

/* A finding of one corner: corner index and index into that corner's Findings.items. */
typedef struct {
    uint32_t corner;
    uint32_t index;
} RepRef;

/* The findings of one device and check across corners (the k-th finding of that device and check
 * in each corner, when a check reports a device more than once). */
typedef struct {
    size_t row;               /* device: index into every corner's Joined.rows */
    int check;                /* CheckId */
    Severity sev;             /* the worst corner's severity */
    RepRef worst;             /* not waived, then highest severity, then farthest from its limit, then
                                 first corner */
    size_t first, n;          /* its members: RepPrep.refs[first .. first+n), in corner order */
    int waived;               /* every member is waived (such groups come last) */
} RepGroup;

typedef enum { BL_NONE = 0, BL_NEW, BL_UNCHANGED } BlStatus; /* a current finding against a baseline */

/* A finding of the baseline that matched none of this run ("resolved"). Strings are baseline-owned. */
typedef struct {
    const char *device, *check, *corner, *message, *file, *rule;
    Severity sev;
    double value, limit;
    uint32_t line;
} BlOldFinding;

/* A device whose region differs from the baseline's in the same corner. */
typedef struct {
    size_t row;               /* device row */
    uint32_t corner;          /* corner index in this run */
    const char *was;          /* the baseline's region word */
} BlRegionChange;

/* This run against a baseline (baseline.h fills it). */
typedef struct {
    const char *path;         /* the baseline file */
    uint8_t *status;          /* BlStatus per finding: status[RepPrep.base[corner] + index] */
    int8_t *was_sev;          /* the baseline's severity of a matched finding, -1 for a new one */
    BlOldFinding *resolved;
    size_t nresolved;
    BlRegionChange *regions;
    size_t nregions;
    size_t nnew, nunchanged;  /* current findings by status (new counts severity rises, see baseline.h) */
    size_t nnew_failing;      /* new findings at warning or error: what `--fail-on new` gates on */
    size_t ndevices_unmatched;/* devices of this run the baseline does not list */
} BlCompare;

/* What rep_prepare builds for the writers. */
typedef struct {
    RepCorner one;            /* the single corner built from ReportCtx's single-corner fields */
    RepGroup *groups;         /* not waived first, then waived; each by severity (errors first), then
                                 netlist order, then the order chk_run gave */
    size_t ngroups;
    RepRef *refs;             /* every finding of every corner, grouped */
    size_t nrefs;
    size_t *group_of;         /* group of each finding: group_of[base[corner] + index] */
    size_t *base;             /* per corner: offset of its findings in group_of (and BlCompare arrays) */
    size_t *row_start;        /* refs of device row r: refs[row_start[r] .. row_start[r+1]) (nrows+2 entries) */
    size_t count[SEV_COUNT];  /* groups that are not waived, by worst severity */
    size_t nwaived;           /* waived groups (the last ones) */
    int tables;               /* some row of some corner involves a lookup table (its figures come from
                                 one, or its bias lies outside one's grid): the reports then say where
                                 each row's figures come from */
} RepPrep;

typedef struct {
    const Design *design;
    /* the single-corner form (used when ncorners is 0) */
    const OpTable *op;
    const Joined *joined;
    const Findings *findings;
    const RuleSet *rules;
    const char *netlist_path;
    const char *op_path;
    Severity fail_level;      /* findings at or above it make the exit status 1 */
    int color;                /* text writer: ANSI colour allowed */
    /* several corners; rep_prepare points these at RepPrep.one in the single-corner form */
    const RepCorner *corners;
    size_t ncorners;
    const RepPrep *prep;      /* set by rep_prepare; writers need it */
    const BlCompare *baseline;/* NULL without --baseline */
    int fail_new;             /* --fail-on new: only new findings at warning or error fail the run */
    int single_form;          /* set by rep_prepare: corners was made from the single-corner fields (so a
                                 copy of the context prepared again takes them afresh); clear it when you
                                 point corners at one corner of your own */
} ReportCtx;

typedef struct {
    const char *name;         /* "text", "json", "csv", "junit", "sarif", "html" */
    const char *ext;          /* usual file name ending: "txt", "json", ... */
    int (*write)(const ReportCtx *c, FILE *fp); /* ERR_OK, ERR_IO, ERR_NOMEM (html) or ERR_INPUT (no prep) */
} ReportWriter;

extern const ReportWriter rep_text_writer, rep_json_writer, rep_csv_writer, rep_junit_writer, rep_sarif_writer,
    rep_html_writer;

/* The writer for a format name, or NULL. */
const ReportWriter *rep_lookup(const char *name);
/* "text|json|csv|junit|sarif|html": the names rep_lookup knows, for usage messages. */
extern const char rep_format_names[];

/* Group the findings of every corner of c by device and check, name each group's worst corner, and
 * point c->prep at p (and c->corners at p->one when c->ncorners is 0). Linear in devices plus
 * findings (a counting sort by device). ERR_OK or ERR_NOMEM (p then empty). Free with rep_prep_free. */
int rep_prepare(ReportCtx *c, RepPrep *p) MUST_CHECK;
void rep_prep_free(RepPrep *p);

/* Whether finding `index` of corner k makes the run fail: not waived, and at or above c->fail_level,
 * or with c->fail_new, new against the baseline and at warning or error. */
int rep_fails(const ReportCtx *c, size_t k, size_t index);
/* The finding a group's ref names. */
const Finding *rep_finding(const ReportCtx *c, RepRef r);
/* The baseline status of finding `index` of corner k (BL_NONE without a baseline). */
BlStatus rep_status(const ReportCtx *c, size_t k, size_t index);
/* A group's status: new when any member is new. */
BlStatus rep_group_status(const ReportCtx *c, const RepGroup *g);
/* Findings of the run that fail it (rep_fails) over every corner, plus the findings of no device
 * (Findings.loose) at or above the fail level. */
size_t rep_failing(const ReportCtx *c);
/* Findings that are not waived, by severity, over every corner; the findings of no device (the same
 * in every corner: a waiver that selects no device) counted once. */
void rep_counts(const ReportCtx *c, size_t count[SEV_COUNT]);
/* The findings of no device (corner 0's Findings.loose; every corner has the same ones). */
const Finding *rep_loose(const ReportCtx *c, size_t *n);

/* The name of check id k (rule_check_name), "?" when out of range. */
const char *rep_check_name(int k);
/* A sentence saying what check k looks at and what to do about it (SARIF help, HTML legend). */
const char *rep_check_help(int k);
/* The region word of a row: "no data" without a record, else fig_region_name. */
const char *rep_region_word(const Row *r);
/* Where a row's figures come from: "dump" (the simulator's device data), "table" (check --table:
 * looked up at the bias the node voltages give), NULL without figures. */
const char *rep_source(const Row *r);
/* The table a row's figures come from, or the table whose grid its bias or L lies outside; NULL when
 * no table is involved. */
const char *rep_table_path(const Row *r);
/* The width suggestion of a row (check --table, a missed gm/ID intent): 1 with *w and *gm_id set. */
int rep_suggestion(const Row *r, double *w, double *gm_id);
/* "nmos", "pmos", "unknown". */
const char *rep_type_name(MosType t);
/* The netlist file and line of a device's card (NULL, 0 when unknown). */
void rep_card_place(const Design *ds, const Device *dv, const char **file, uint32_t *line);

/* Engineering notation with an SI prefix and unit: 1.23e-5,"A" -> "12.3uA"; NaN -> "-". buf >= 24. */
char *rep_eng(double v, const char *unit, char *buf, size_t size);

/* The page frame of the HTML reports (style sheet, header; footer and the sorting script), shared by
 * the check and merge pages: what the page is, its subject (a netlist) and a detail (a title). */
void rep_html_open(FILE *fp, const char *what, const char *subject, const char *detail);
void rep_html_close(FILE *fp);

/* The schema of the JSON report (report_json.c). 3: keys whose value is absent are left out of the
 * objects in its arrays, figures biaslint computed have six significant digits. Baselines and merge
 * read every schema up to this one. */
#define REP_JSON_SCHEMA 3
static inline int rep_json_schema_known(double schema)
{
    return schema >= 1 && schema <= REP_JSON_SCHEMA && schema == (double)(int)schema;
}

/* ---- escaping shared by the writers ---- */

/* s as the inside of a JSON string: quotes, backslash and control characters escaped, valid UTF-8
 * kept, invalid bytes written as \ufffd. NULL writes nothing. */
void rep_json_raw(FILE *fp, const char *s);
/* The same for the n bytes at s into dst, which has room for REP_JSON_ESC_MAX * n bytes; returns the
 * bytes written. s[n] must be a byte that starts a character, or the string's NUL. */
#define REP_JSON_ESC_MAX 6
size_t rep_json_escape(char *dst, const char *s, size_t n);
/* A JSON string in quotes, or null for NULL. */
void rep_json_str(FILE *fp, const char *s);
/* The shortest of %.15g..%.17g that reads back as v; null for NaN and infinities. */
void rep_json_num(FILE *fp, double v);
/* s as XML/HTML character data or attribute text: & < > " ' escaped, characters XML 1.0 forbids
 * (controls other than tab, newline, return) and invalid UTF-8 written as U+FFFD. */
void rep_xml_text(FILE *fp, const char *s);

#endif
