/* check: the rules applied to joined rows, producing findings: the default checks on every device,
 * the requirements of `sized` statements and inline intents (drift), the matched groups, and the
 * waivers (waived findings are kept and marked, never dropped). Also `explain`: which statement
 * supplied each requirement of a device. */
#ifndef CHECK_H
#define CHECK_H

#include <stddef.h>
#include <stdint.h>

#include "buf.h"
#include "intent.h"
#include "join.h"
#include "rules.h"

typedef struct {
    size_t row;          /* index into Joined.rows; SIZE_MAX in Findings.loose (no device) */
    CheckId check;
    Severity sev;
    double value;        /* measured, NaN when none */
    double limit;        /* the bound that was crossed (the nearer end of an intended range), NaN when none */
    const char *message; /* arena-owned, one sentence a designer can act on */
    SrcLoc loc;          /* the device card (for a waiver finding: the waiver statement) */
    RuleOrigin rule;     /* the statement that asked for this check (file:line): a rule file line or
                            the netlist line of an inline intent */
    /* for intents, matched groups and waivers */
    double want_lo, want_hi;   /* the intended range, NaN for an open end */
    const char *intended;      /* the requirement in words: "15 /V +-10 % (13.5 to 16.5 /V)"; NULL if none */
    const char *direction;     /* how the value drifted, in words; NULL when not a drift */
    const char *group;         /* matched-group findings: the members, "xbias.mbn0, xbias.mbn1"; else NULL */
    int waived;                /* 1: a waiver covers it; shown, but not counted in Findings.count */
    const char *waiver_reason; /* when waived */
    RuleOrigin waiver;         /* when waived: the waive statement */
} Finding;

typedef struct {
    Finding *items;      /* not waived first, then waived; each by severity (errors first), then
                            netlist order of the device */
    size_t n, cap;
    size_t count[SEV_COUNT]; /* findings that are not waived, items and loose together */
    Arena arena;
    size_t nwaived;      /* waived findings (at the end of items) */
    Finding *loose;      /* findings of no device: a waiver whose selector matched no device */
    size_t nloose, loose_cap;
} Findings;

typedef struct {
    int32_t today;       /* YYYYMMDD: a waiver whose `until` is before it has expired; 0: none expire */
    int quiet;           /* leave out the "matches no device" warnings (a second corner of one design) */
} ChkOptions;

/* Check every row of j: rs's checks and statements, the inline intents of in (NULL: none), the
 * matched groups and the waivers. Warnings for selectors that match no device, errors for a regex
 * that hit its match limit, go to d. ERR_OK; ERR_LIMIT (out then empty) when a selector cannot be
 * evaluated; ERR_NOMEM. opt NULL: today 0, warnings on. */
int chk_evaluate(const RuleSet *rs, const IntentSet *in, const Design *ds, const Joined *j, const ChkOptions *opt,
                 Findings *out, DiagList *d) MUST_CHECK;

/* chk_evaluate without inline intents, options or diagnostics (a regex limit error gives ERR_LIMIT). */
int chk_run(const RuleSet *rs, const Design *ds, const Joined *j, Findings *out) MUST_CHECK;
void chk_free(Findings *f);

/* The time of day does not matter: today as YYYYMMDD in local time, for ChkOptions.today. */
int32_t chk_today(void);

/* `explain`: for every device of ds whose name matches the glob `device`, which statement supplies
 * each requirement (and which ones it overrides), the region boundaries, the groups and waivers
 * that select it; with j (may be NULL) the measured figures and the device's findings f (may be
 * NULL). Appends text to out. ERR_OK; ERR_INPUT when no device matches (an error in d); ERR_LIMIT;
 * ERR_NOMEM. */
int chk_explain(const RuleSet *rs, const IntentSet *in, const Design *ds, const Joined *j, const Findings *f,
                const char *device, Buf *out, DiagList *d) MUST_CHECK;

#endif
