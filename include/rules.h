/* rules: what biaslint checks against, read from rule files (the defaults in rules/defaults.rules are
 * compiled in and load first): region boundaries and slope factor per type and model, the setting
 * of every check, and the statements of design intent: `sized` (requirements per device),
 * `matched` (groups that must match) and `waive`. Selectors (name glob, PCRE2 regex, model, cell,
 * type) are compiled here once; rules is the only PCRE2 user. The language is described in
 * rules/defaults.rules and in README.md ("The rule language"). */
#ifndef RULES_H
#define RULES_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "design.h"
#include "diag.h"
#include "metrics.h"

typedef enum { SEV_INFO = 0, SEV_WARNING, SEV_ERROR, SEV_COUNT } Severity;
extern const char *const rule_severity_name[SEV_COUNT]; /* "info","warning","error" */

/* Every check biaslint reports. ORDER CHECK */
typedef enum {
    CHECK_MARGIN,      /* VDS-VDSAT below a minimum ("sat-margin"; intents: `margin >= X`) */
    CHECK_TRIODE,      /* device in triode (when no region is intended for it) */
    CHECK_OFF,         /* device off (when no region is intended for it) */
    CHECK_GAIN,        /* gm/gds below a minimum (intents: `gain >= X`) */
    CHECK_NODATA,      /* device without operating-point data */
    CHECK_NDEFAULT,    /* the checks above run on every device; the ones below where a statement asks */
    CHECK_GMID = CHECK_NDEFAULT, /* gm/ID against the intended target or range */
    CHECK_REGION,      /* region against the intended set */
    CHECK_FT,          /* transit frequency */
    CHECK_IC,          /* inversion coefficient */
    CHECK_ID,          /* drain current */
    CHECK_VOV,         /* overdrive VGS-VTH */
    CHECK_MATCH_VGS,   /* matched group: VGS spread. ORDER MATCH */
    CHECK_MATCH_GMID,  /* matched group: gm/ID spread */
    CHECK_MATCH_RATIO, /* matched group: ID ratio against the expected ratio */
    CHECK_MATCH_VDS,   /* matched group: VDS spread */
    CHECK_WAIVER,      /* a waiver expired or matched no finding */
    CHECK_COUNT
} CheckId;
extern const char *const rule_check_name[CHECK_COUNT]; /* "sat-margin", ..., "gm/id", ... ORDER CHECK */

/* Where a setting came from, for `explain` and reports. */
typedef struct {
    const char *file;   /* "<defaults>" for the compiled-in file, "<command line>" for options */
    unsigned line;
} RuleOrigin;

typedef struct {
    double limit;       /* sat-margin, gain: the minimum; match-*: the maximum; else unused (NaN) */
    Severity sev;
    int enabled;
    RuleOrigin from;
} CheckRule;

/* The fields of a `regions` statement in the order BandRule.field_from lists them. ORDER BANDFIELD */
enum { BAND_STRONG_BELOW, BAND_WEAK_ABOVE, BAND_OFF_BELOW, BAND_SLOPE, BAND_NFIELDS };

/* Region boundaries for devices whose type and (optionally) model match. */
typedef struct {
    MosType type;       /* MOS_UNKNOWN: any type */
    const char *model;  /* NULL: any model; else a lower-case model name */
    Bands bands;
    RuleOrigin from;    /* the latest statement that gave one of the fields */
    RuleOrigin field_from[BAND_NFIELDS]; /* where each field was set, ORDER BANDFIELD */
    double slope;       /* slope factor n for the inversion coefficient (`slope-factor`) */
} BandRule;

/* ---- statements of intent ---- */

/* How a requirement is written. */
typedef enum {
    REQ_DROP,     /* `no margin`: the requirement is taken away from the devices */
    REQ_MIN,      /* `>= X` */
    REQ_MAX,      /* `<= X` */
    REQ_RANGE,    /* `A..B` */
    REQ_TARGET,   /* `T +-tol` (tol absolute, or in percent of T) */
    REQ_REGIONS   /* `moderate or weak` */
} ReqForm;

/* One requirement of a `sized` statement or an inline intent. */
typedef struct {
    CheckId check;      /* CHECK_GMID, CHECK_REGION, CHECK_MARGIN, CHECK_GAIN, CHECK_FT, CHECK_IC, CHECK_ID, CHECK_VOV */
    ReqForm form;
    int sev;            /* severity written with it; -1: the severity of the check */
    unsigned regions;   /* REQ_REGIONS: bit (1u << Region) for each allowed region */
    double lo, hi;      /* accepted interval, NaN for an open end (TARGET: T-tol .. T+tol) */
    double target, tol; /* REQ_TARGET as written (tol in percent when tol_pct) */
    int tol_pct;
    RuleOrigin from;
    uint32_t col;       /* column of the requirement */
} Req;

typedef struct RuleSel RuleSel;          /* a compiled selector (opaque) */
typedef struct RuleMatcher RuleMatcher;  /* scratch for matching regex selectors (one per thread) */

/* `sized SELECTOR... for: REQUIREMENT, ...` */
typedef struct {
    const RuleSel *sel;  /* NULL for an inline intent: the devices of its card */
    const Req *reqs;
    size_t nreqs;
    RuleOrigin from;
} RuleSized;

/* The limits of a matched group, ORDER MATCH (CHECK_MATCH_VGS + k). */
enum { MATCH_VGS, MATCH_GMID, MATCH_RATIO, MATCH_VDS, MATCH_NLIMITS };

/* `matched SELECTOR... [: ratio 1:2 +-3%, VGS spread <= 5mV, ...]` */
typedef struct {
    const RuleSel *sel;
    const double *ratio;            /* expected ID ratio, one value per member; NULL: W*m/L */
    size_t nratio;
    double limit[MATCH_NLIMITS];    /* NaN: the check's maximum (check match-vgs max 5mV, ...) */
    int sev[MATCH_NLIMITS];         /* -1: the check's severity */
    uint32_t limit_col[MATCH_NLIMITS];
    RuleOrigin from;
} RuleGroup;

/* `waive SELECTOR... : CHECK... [until DATE] because REASON` */
typedef struct {
    const RuleSel *sel;  /* NULL for an inline waiver: the devices of its card */
    uint32_t checks;     /* bit (1u << CheckId) per waived check */
    const char *reason;
    int32_t until;       /* last day it holds, YYYYMMDD; 0: no expiry */
    RuleOrigin from;
} RuleWaiver;

/* The statements of intent of a rule set, in load order (arrays owned by the set; valid until the
 * next load). */
typedef struct {
    const RuleSized *sized;
    size_t nsized;
    const RuleGroup *groups;
    size_t ngroups;
    const RuleWaiver *waivers;
    size_t nwaivers;
} RuleStatements;

typedef struct RuleSet RuleSet;

/* A rule set holding the compiled-in defaults. NULL on a parse error of the defaults (a build bug,
 * recorded in d) or out of memory. */
RuleSet *rule_new_defaults(DiagList *d);
/* Read one rule file on top (later statements override earlier ones). ERR_OK, ERR_IO, ERR_INPUT,
 * ERR_NOMEM. A file with any error changes nothing: the set stays as it was. */
int rule_load_file(RuleSet *rs, const char *path, DiagList *d) MUST_CHECK;
/* Parse rule text held in memory; name is used in diagnostics. */
int rule_load_text(RuleSet *rs, const char *name, const char *text, size_t len, DiagList *d) MUST_CHECK;
/* The rule file beside a netlist: "NETLIST.rules". Loaded when it exists (ERR_OK and *found 0
 * otherwise); errors as rule_load_file. */
int rule_load_local(RuleSet *rs, const char *netlist_path, int *found, DiagList *d) MUST_CHECK;
void rule_free(RuleSet *rs);

/* The setting of one check (never NULL). */
const CheckRule *rule_check(const RuleSet *rs, CheckId id);
/* Override a check's limit from the command line. */
void rule_set_limit(RuleSet *rs, CheckId id, double limit);
void rule_set_severity(RuleSet *rs, CheckId id, Severity sev);

/* The boundaries for a device: for each field, the last matching `regions` statement that sets it
 * wins; *from (optional) is the latest statement that contributed. Never NULL once the defaults are
 * loaded (they set every field for every device). */
const Bands *rule_bands(const RuleSet *rs, const Device *dv, RuleOrigin *from);
/* The same, with the origin of every field and the slope factor (for `explain` and reports). */
const BandRule *rule_band_rule(const RuleSet *rs, const Device *dv);

/* The statements of intent (never NULL). */
const RuleStatements *rule_statements(const RuleSet *rs);

/* Parse a severity word; -1 if unknown. */
int rule_severity_lookup(const char *s, size_t n);
/* Parse a check name (case-insensitive); -1 if unknown. */
int rule_check_lookup(const char *s, size_t n);

/* ---- selectors ---- */

/* Matching state: PCRE2 match data and a match context with the limits below. NULL on OOM. */
RuleMatcher *rule_matcher_new(void);
void rule_matcher_free(RuleMatcher *m);

#define RULE_MATCH_LIMIT 200000u  /* PCRE2 match limit per name: a pathological pattern stops */
#define RULE_DEPTH_LIMIT 2000u    /* PCRE2 backtracking depth limit */
#define RULE_HEAP_LIMIT 8192u     /* PCRE2 heap limit, KiB */

/* 1 when s selects dv, 0 when not. ERR_LIMIT after recording an error at the pattern when a regex
 * hit a match limit (the statement cannot be evaluated). *which (optional) is the index of the name
 * pattern that matched, or -1 when the selector has no name pattern. */
int rule_sel_match(const RuleSel *s, const Device *dv, RuleMatcher *m, int *which, DiagList *d);
/* Where the selector is written, the number of name patterns and the column and text of pattern k
 * (for "matches no device" warnings). */
SrcLoc rule_sel_loc(const RuleSel *s);
size_t rule_sel_npatterns(const RuleSel *s);
SrcLoc rule_sel_pattern_loc(const RuleSel *s, size_t k, const char **text);
/* 1 when every name of the selector is written out in full (no wildcard, no regex): a matched group
 * given so is one group, in the order written. *names then lists them (lower case). */
int rule_sel_listed(const RuleSel *s, const char *const **names, size_t *n);

/* A whole-name glob match, case-insensitive: `*` any run (dots included), `?` one byte, `[abc]`,
 * `[a-z]`, `[!abc]` a set. */
int rule_glob(const char *pat, const char *s);

/* ---- inline statements (netlist comments, see intent.h) ---- */

typedef enum { RULE_INLINE_SIZED, RULE_INLINE_WAIVE } RuleInlineKind;

/* Parse the body of an inline statement: line[0..len) is the physical line of file at line number
 * lineno, the body starts at byte offset body (after `sized for:` or `waive:`). Results are
 * allocated from a; *sized or *waiver (by kind) is filled with sel NULL. Errors are recorded with
 * their column in the netlist line. ERR_OK, ERR_INPUT, ERR_NOMEM. */
int rule_parse_inline(Arena *a, RuleInlineKind kind, const char *file, uint32_t lineno, const char *line,
                      size_t len, size_t body, RuleSized *sized, RuleWaiver *waiver, DiagList *d) MUST_CHECK;

#endif
