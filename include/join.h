/* join: netlist MOSFETs matched to operating-point records by canonical name (hash join), then
 * normalized and their figures derived. */
#ifndef JOIN_H
#define JOIN_H

#include <stddef.h>

#include "design.h"
#include "metrics.h"
#include "opdump.h"
#include "rules.h"

struct Lut; /* lut.h */

/* check --table: what the lookup tables gave a row; apart from Row, since only runs with tables
 * have it (Joined.tab). */
typedef struct {
    const struct Lut *lut; /* figures taken from this table at the bias the node voltages give; the
                              row's op then points at a record join built from it (Joined.derived).
                              NULL: the figures are the dump's own */
    unsigned lut_miss;   /* nonzero: the bias or L lies outside lut's grid (bits 1 << LutAxis); op is
                            NULL and no figure is given: a table never extrapolates */
    double suggest_w;    /* a device that misses its gm/ID intent: the W (total over fingers, per copy
                            of m) that restores the intended gm/ID at its measured ID, L, VDS and VSB
                            (size_suggest); NaN when there is none */
    double suggest_gmid; /* the gm/ID suggest_w is for, 1/V */
} RowTable;

typedef struct {
    const Device *dev;
    const OpRecord *op;  /* NULL: no operating-point data for this device */
    Figures fig;         /* all NaN when op is NULL */
    RowTable *tab;       /* check --table: the tables' part (in Joined.tab); NULL without tables */
} Row;

/* The table a row's figures come from, NULL when they are the dump's own. */
static inline const struct Lut *row_lut(const Row *r)
{
    return r->tab ? r->tab->lut : NULL;
}

/* Row.tab->lut_miss, 0 without tables. */
static inline unsigned row_lut_miss(const Row *r)
{
    return r->tab ? r->tab->lut_miss : 0;
}

typedef struct {
    Row *rows;                  /* one per Design device, in netlist order; malloc'd */
    size_t n;
    const OpRecord **orphans;   /* records that matched no device; malloc'd */
    size_t norphans, orphans_cap;
    size_t nmatched;
    int overlap;                /* overlap capacitance was added to Cgg where the model gives it */
    RowTable *tab;              /* check --table: one per row; malloc'd; NULL without tables */
    OpRecord *derived;          /* check --table: records built from tables, one per table-derived row; malloc'd */
    double *derived_q;          /* their values, OPQ_COUNT each; malloc'd */
    size_t ntable;              /* rows whose figures come from a table (Row.lut set, lut_miss 0) */
} Joined;

typedef struct {
    int add_overlap;            /* add the model cards' overlap capacitance to Cgg (fT) */
    double min_match_fraction;  /* below this fraction of devices matched, the dump is rejected (0.5) */
    int consume;                /* nothing reads the dump after the join: join hands back its name
                                   index once the records are found (op_release_index) and their
                                   values once the rows hold the figures (op_release_values; the
                                   records keep their names, not their q) */
} JoinOptions;

/* Match every device of ds to t. A dump that matches fewer than opt->min_match_fraction of the
 * devices is an error (it is likely from another netlist); an ambiguous cut name is an error.
 * Devices without data and records without a device are warnings. ERR_OK, ERR_INPUT, ERR_NOMEM. */
int join_run(const Design *ds, OpTable *t, const RuleSet *rs, const JoinOptions *opt, Joined *out,
             DiagList *d) MUST_CHECK;

/* join_run, and then for every device the dump has no record for: when the dump holds the voltages of
 * its four nodes and one of the tables is for its model and type, VGS, VDS, VSB from the node
 * voltages (n-type convention, drain and source swapped back when VDS < 0) and every figure from the
 * table, currents, conductances and capacitances scaled by W*m/w_ref (W total over fingers). Such
 * rows have Row.lut set and count as matched. A device outside the table's grid gets Row.lut and
 * Row.lut_miss, no figures, and a warning that says why. tables may be NULL when ntables is 0. */
int join_run_tables(const Design *ds, OpTable *t, const RuleSet *rs, const JoinOptions *opt,
                    const struct Lut *const *tables, size_t ntables, Joined *out, DiagList *d) MUST_CHECK;
void join_free(Joined *j);

#endif
