/* check: the rules applied to joined rows, producing findings. */
#ifndef CHECK_H
#define CHECK_H

#include <stddef.h>

#include "join.h"
#include "rules.h"

typedef struct {
    size_t row;          /* index into Joined.rows */
    CheckId check;
    Severity sev;
    double value;        /* measured, NaN when none */
    double limit;        /* NaN when none */
    const char *message; /* arena-owned, one sentence a designer can act on */
    SrcLoc loc;          /* the device card */
    RuleOrigin rule;     /* the statement that asked for this check */
} Finding;

typedef struct {
    Finding *items;      /* ordered by severity (errors first), then netlist order */
    size_t n, cap;
    size_t count[SEV_COUNT];
    Arena arena;
} Findings;

int chk_run(const RuleSet *rs, const Design *ds, const Joined *j, Findings *out) MUST_CHECK;
void chk_free(Findings *f);

#endif
