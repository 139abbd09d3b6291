/* report: one writer per output format behind one interface. Writers read the rows and findings;
 * they compute nothing. */
#ifndef REPORT_H
#define REPORT_H

#include <stdio.h>

#include "check.h"
#include "design.h"
#include "join.h"
#include "opdump.h"
#include "rules.h"

typedef struct {
    const Design *design;
    const OpTable *op;
    const Joined *joined;
    const Findings *findings;
    const RuleSet *rules;
    const char *netlist_path;
    const char *op_path;
    Severity fail_level;  /* findings at or above it make the exit status 1 */
    int color;            /* text writer: ANSI colour allowed */
} ReportCtx;

typedef struct {
    const char *name;     /* "text", "json" */
    int (*write)(const ReportCtx *c, FILE *fp); /* ERR_OK or ERR_IO */
} ReportWriter;

extern const ReportWriter rep_text_writer, rep_json_writer;

/* The writer for a format name, or NULL. */
const ReportWriter *rep_lookup(const char *name);

/* Engineering notation with an SI prefix and unit: 1.23e-5,"A" -> "12.3uA"; NaN -> "-". buf >= 24. */
char *rep_eng(double v, const char *unit, char *buf, size_t size);

#endif
