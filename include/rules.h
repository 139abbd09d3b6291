/* rules: the limits and region boundaries biaslint checks against, read from rule files (the
 * defaults in rules/defaults.rules are compiled in and load first). */
#ifndef RULES_H
#define RULES_H

#include <stddef.h>

#include "design.h"
#include "diag.h"
#include "metrics.h"

typedef enum { SEV_INFO = 0, SEV_WARNING, SEV_ERROR, SEV_COUNT } Severity;
extern const char *const rule_severity_name[SEV_COUNT]; /* "info","warning","error" */

/* The default checks. ORDER CHECK */
typedef enum {
    CHECK_MARGIN,   /* VDS-VDSAT below a minimum */
    CHECK_TRIODE,   /* device in triode */
    CHECK_OFF,      /* device off */
    CHECK_GAIN,     /* gm/gds below a minimum */
    CHECK_NODATA,   /* device without operating-point data */
    CHECK_COUNT
} CheckId;
extern const char *const rule_check_name[CHECK_COUNT]; /* ids used in reports: "sat-margin", ... */

/* Where a setting came from, for `why` and reports. */
typedef struct {
    const char *file;   /* "<defaults>" for the compiled-in file, "<command line>" for options */
    unsigned line;
} RuleOrigin;

typedef struct {
    double limit;       /* margin minimum (V), gain minimum; unused for triode/off/nodata */
    Severity sev;
    int enabled;
    RuleOrigin from;
} CheckRule;

/* The fields of Bands in the order BandRule.field_from lists them. ORDER BANDFIELD */
enum { BAND_STRONG_BELOW, BAND_WEAK_ABOVE, BAND_OFF_BELOW, BAND_NFIELDS };

/* Region boundaries for devices whose type and (optionally) model match. */
typedef struct {
    MosType type;       /* MOS_UNKNOWN: any type */
    const char *model;  /* NULL: any model; else a lower-case model name */
    Bands bands;
    RuleOrigin from;    /* the latest statement that gave one of the fields */
    RuleOrigin field_from[BAND_NFIELDS]; /* where each field was set, ORDER BANDFIELD */
} BandRule;

typedef struct RuleSet RuleSet;

/* A rule set holding the compiled-in defaults. NULL on a parse error of the defaults (a build bug,
 * recorded in d) or out of memory. */
RuleSet *rule_new_defaults(DiagList *d);
/* Read one rule file on top (later statements override earlier ones). ERR_OK, ERR_IO, ERR_INPUT,
 * ERR_NOMEM. A file with any error changes nothing: the set stays as it was. */
int rule_load_file(RuleSet *rs, const char *path, DiagList *d) MUST_CHECK;
/* Parse rule text held in memory; name is used in diagnostics. */
int rule_load_text(RuleSet *rs, const char *name, const char *text, size_t len, DiagList *d) MUST_CHECK;
void rule_free(RuleSet *rs);

/* The setting of one default check (never NULL). */
const CheckRule *rule_check(const RuleSet *rs, CheckId id);
/* Override a check's limit from the command line. */
void rule_set_limit(RuleSet *rs, CheckId id, double limit);
void rule_set_severity(RuleSet *rs, CheckId id, Severity sev);

/* The boundaries for a device: for each field, the last matching `regions` statement that sets it
 * wins; *from (optional) is the latest statement that contributed. Never NULL once the defaults are
 * loaded (they set every field for every device). */
const Bands *rule_bands(const RuleSet *rs, const Device *dv, RuleOrigin *from);
/* The same, with the origin of every field (for `why` and reports). Never NULL. */
const BandRule *rule_band_rule(const RuleSet *rs, const Device *dv);

/* Parse a severity word; -1 if unknown. */
int rule_severity_lookup(const char *s, size_t n);

#endif
