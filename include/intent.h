/* intent: design intent written in the netlist itself. A comment that starts with `sized for:` (or
 * `waive:`) on a MOSFET card's own lines, or on the comment lines just above the card, states the
 * card's requirements in the rule language's words (rules.h, rule_parse_inline):
 *
 *     * sized for: gm/ID 15/V +-10%, moderate, margin >= 80mV
 *     m1 d g s b nch w=4u l=0.5u      $ sized for: gain >= 40
 *
 * Inside a subcircuit the intent applies to every instance of the card. A marked comment that is on
 * or above no MOSFET card applies to nothing and is reported as a warning. The netlist reader keeps
 * the files' bytes (Design.files) and each card's span (Design.cards); this module only reads them,
 * so the annotated netlist keeps the comments untouched. */
#ifndef INTENT_H
#define INTENT_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "design.h"
#include "diag.h"
#include "rules.h"

#define INTENT_MARK_SIZED "sized for:"
#define INTENT_MARK_WAIVE "waive:"

/* One marked comment of a card. */
typedef struct {
    uint32_t card;        /* index into Design.cards */
    RuleInlineKind kind;
    RuleSized sized;      /* kind RULE_INLINE_SIZED (sel NULL: the card's devices) */
    RuleWaiver waiver;    /* kind RULE_INLINE_WAIVE (sel NULL) */
} IntentEntry;

typedef struct {
    Arena arena;          /* requirements, reasons */
    IntentEntry *items;   /* grouped by card in card order; within a card in text order (the lines
                             above first, then the card's own lines): a later one wins */
    size_t n, cap;
    size_t *start;        /* ncards + 1 entries: card c owns items[start[c] .. start[c+1]) */
    size_t ncards;
} IntentSet;

/* Read the marked comments of every MOSFET card of ds into out (zeroed first). Every bad comment
 * is reported with file:line:column; stray marked comments are warnings. ERR_OK, ERR_INPUT (some
 * comment did not parse; out still holds the good ones), ERR_NOMEM. Free with intent_free. */
int intent_scan(const Design *ds, IntentSet *out, DiagList *d) MUST_CHECK;

/* The entries of card c (n set; NULL and 0 when none or when is is NULL). */
const IntentEntry *intent_card(const IntentSet *is, uint32_t card, size_t *n);

void intent_free(IntentSet *is); /* accepts NULL and a zeroed set */

#endif
