/* cli: argv into an Options struct. Never prints or exits: help and errors come back as statuses
 * and text for main to print. */
#ifndef CLI_H
#define CLI_H

#include <stddef.h>

#include "buf.h"
#include "opdump.h"
#include "primitive.h"
#include "rules.h"

typedef enum { CMD_NONE = 0, CMD_CHECK, CMD_STRIP, CMD_MERGE, CMD_EXPLAIN, CMD_CHARACTERIZE, CMD_SIZE } Command;

typedef enum { COLOR_AUTO = 0, COLOR_ALWAYS, COLOR_NEVER } ColorMode;

/* One --op: a dump and the corner it stands for. */
typedef struct {
    const char *label;         /* "LABEL" of --op LABEL=FILE; "" for a plain --op FILE (see cli.c) */
    const char *path;
} OpCorner;

/* One --report FORMAT=FILE. */
typedef struct {
    const char *format;        /* a name rep_lookup knows */
    const char *path;
} ReportOut;

typedef struct {
    Command cmd;
    const char *netlist;       /* check: the netlist; strip: the annotated netlist */
    const char *op;            /* --op */
    OpFormat op_format;        /* --op-format */
    const char *annotate;      /* --annotate */
    const char *output;        /* -o */
    const char *format;        /* --format: text (default), json */
    const char **rules;        /* --rules, repeatable; malloc'd array of argv pointers */
    size_t nrules, rules_cap;
    double min_margin;         /* --min-margin, NaN when not given */
    double min_gain;           /* --min-gain, NaN when not given */
    Severity fail_level;       /* --fail-on */
    int add_overlap;           /* --add-overlap */
    size_t max_devices;        /* --max-devices, 0 for the default */
    ColorMode color;           /* --color */
    int quiet;                 /* -q: errors only on stderr */
    /* corners, more reports, baselines, merging */
    OpCorner *ops;             /* every --op in order (op is ops[0].path); malloc'd */
    size_t nops, ops_cap;
    ReportOut *reports;        /* --report FORMAT=FILE, repeatable; malloc'd */
    size_t nreports, reports_cap;
    const char *baseline;      /* --baseline OLD.json */
    int fail_new;              /* --fail-on new: exit 1 only for new findings at warning or error */
    unsigned jobs;             /* -j N: dumps read in parallel (0 or 1: one at a time) */
    const char **runs;         /* merge: the JSON reports to combine; malloc'd array of argv pointers */
    size_t nruns, runs_cap;
    int format_given;          /* --format was on the command line */
    /* PDK netlists (README, "PDK netlists") */
    const char *top;           /* --top CELL: check this subcircuit of the netlist */
    const char *prefix;        /* --prefix PATH: its instance path in the simulated testbench */
    PrimSpec *cells;           /* --primitive / --not-primitive, in order; malloc'd */
    size_t ncells, cells_cap;
    int allow_missing_lib;     /* --allow-missing-lib */
    /* design intent (README, "The rule language") */
    int no_local_rules;        /* --no-local-rules: do not read NETLIST.rules beside the netlist */
    const char *explain;       /* explain: the device (name or glob) to explain */
    /* lookup tables (README, "Lookup tables"): check --table, characterize, size */
    const char **tables;       /* check --table FILE, repeatable; malloc'd array of argv pointers */
    size_t ntables, tables_cap;
    const char *models;        /* characterize --models FILE */
    const char *section;       /* --section NAME */
    const char *model;         /* --model NAME */
    double *lengths;           /* --l LIST (m); malloc'd */
    size_t nlengths;
    double vgs_grid[3], vds_grid[3], vsb_grid[3]; /* --vgs/--vds/--vsb START:STOP:STEP; NaN when not given */
    double temp_c;             /* --temp C, NaN when not given */
    double w_ref;              /* --wref W (m), NaN when not given */
    const char *deck;          /* --deck FILE: keep a copy of the ngspice deck */
    const char *table;         /* size: the table file */
    double at_l, at_vgs, at_vds, at_vsb; /* size --l --vgs --vds --vsb, NaN when not given */
    double want_gm_id, want_id, want_gm; /* size --gm-id --id --gm, NaN when not given */
} Options;

/* Results of cli_parse besides ERR_OK. */
enum { CLI_HELP = 1, CLI_VERSION = 2, CLI_USAGE = 3 };

/* Parse argv. Returns ERR_OK (run o), CLI_HELP or CLI_VERSION (print msg, exit 0), CLI_USAGE (print
 * msg, exit 2), ERR_NOMEM. msg receives the text to print. Free o with cli_free. */
int cli_parse(int argc, char **argv, Options *o, Buf *msg) MUST_CHECK;
void cli_free(Options *o);

/* The number in s with an optional SI prefix and unit ("80mV", "1.5k", "20"): 1 on success. */
int cli_number(const char *s, double *out);

#endif
