/* join: netlist MOSFETs matched to operating-point records by canonical name (hash join), then
 * normalized and their figures derived. */
#ifndef JOIN_H
#define JOIN_H

#include <stddef.h>

#include "design.h"
#include "metrics.h"
#include "opdump.h"
#include "rules.h"

typedef struct {
    const Device *dev;
    const OpRecord *op;  /* NULL: no operating-point data for this device */
    Figures fig;         /* all NaN when op is NULL */
} Row;

typedef struct {
    Row *rows;                  /* one per Design device, in netlist order; malloc'd */
    size_t n;
    const OpRecord **orphans;   /* records that matched no device; malloc'd */
    size_t norphans, orphans_cap;
    size_t nmatched;
    int overlap;                /* overlap capacitance was added to Cgg where the model gives it */
} Joined;

typedef struct {
    int add_overlap;            /* add the model cards' overlap capacitance to Cgg (fT) */
    double min_match_fraction;  /* below this fraction of devices matched, the dump is rejected (0.5) */
} JoinOptions;

/* Match every device of ds to t. A dump that matches fewer than opt->min_match_fraction of the
 * devices is an error (it is likely from another netlist); an ambiguous cut name is an error.
 * Devices without data and records without a device are warnings. ERR_OK, ERR_INPUT, ERR_NOMEM. */
int join_run(const Design *ds, const OpTable *t, const RuleSet *rs, const JoinOptions *opt, Joined *out,
             DiagList *d) MUST_CHECK;
void join_free(Joined *j);

#endif
