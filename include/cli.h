/* cli: argv into an Options struct. Never prints or exits: help and errors come back as statuses
 * and text for main to print. */
#ifndef CLI_H
#define CLI_H

#include <stddef.h>

#include "buf.h"
#include "opdump.h"
#include "primitive.h"
#include "rules.h"

typedef enum { CMD_NONE = 0, CMD_CHECK, CMD_STRIP } Command;

typedef enum { COLOR_AUTO = 0, COLOR_ALWAYS, COLOR_NEVER } ColorMode;

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
    /* PDK netlists (README, "PDK netlists") */
    const char *top;           /* --top CELL: check this subcircuit of the netlist */
    const char *prefix;        /* --prefix PATH: its instance path in the simulated testbench */
    PrimSpec *cells;           /* --primitive / --not-primitive, in order; malloc'd */
    size_t ncells, cells_cap;
    int allow_missing_lib;     /* --allow-missing-lib */
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
