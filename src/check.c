/* check: the rules applied to every joined row, producing findings with the measured value, the
 * limit, a sentence for the designer, the device card's location and the statement that asked for
 * the check. Called by the CLI after join; writers read the result. A check that cannot be
 * evaluated for lack of data gives a finding that says so, never a silent pass.
 *
 * Per device, in one pass over the rows: the selectors of every statement are tried once; the
 * requirements are resolved (the check defaults, then every `sized` statement that selects the
 * device in load order, then the card's inline intents: for each requirement the last one wins);
 * the device is checked; the waivers that select it mark its findings. Matched groups collect their
 * members during the pass and are checked after it; then the waivers that expired or matched
 * nothing are reported. Linear in rows times statements. */
#include "check.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "buf.h"
#include "groups.h"
#include "lut.h"
#include "report.h"
#include "strtab.h"

#define SAT_BITS ((1u << REGION_WEAK) | (1u << REGION_MODERATE) | (1u << REGION_STRONG))

typedef struct {
    const char *name;
    size_t slot;
} LitKey;

/* One requirement of one device after resolution. */
typedef struct {
    int set;            /* it applies */
    const Req *req;     /* the requirement that won; NULL: the check's own limit (sat-margin, gain) */
    double lo, hi;
    int sev;
    RuleOrigin from;
    int ignored;        /* it was stated, but `check NAME ignore` switched the check off */
} Need;

/* Per waiver (rule-file waivers first, then one slot per inline entry). */
typedef struct {
    const RuleWaiver *w;
    size_t used;        /* findings it waived */
    size_t expired_hits;/* findings it would have waived had it not expired */
    size_t first_row, first_hit_row; /* a device it selects, one whose finding it would have waived */
} WState;

typedef struct {
    const RuleSet *rs;
    const RuleStatements *st;
    const IntentSet *in;
    const Design *ds;
    const Joined *j;
    const ChkOptions *opt;
    Findings *out;
    DiagList *d;
    RuleMatcher *m;
    Buf msg;
    /* selector bookkeeping: one slot per statement (sized, then groups, then waivers) */
    size_t nsel;
    const RuleSel **sel;
    size_t *hits;        /* devices selected */
    size_t *pbase;       /* per statement: its first entry in phits */
    size_t *phits;       /* per name pattern: devices it selected first */
    /* groups: members in netlist order */
    size_t **members;
    size_t *nmembers, *capmembers;
    /* waivers */
    WState *ws;
    size_t nws;
    size_t *cur;         /* the waivers that select the current device */
    size_t ncur, capcur;
    /* which statements a device must try: those with a glob, regex or no name at all, and those
       whose names are all written in full and include the device's (a hash index by name), so a
       long list of named devices costs a lookup per device, not a comparison per statement */
    size_t *always;      /* slots without a name index, ascending */
    size_t nalways;
    LitKey *lit;         /* (name, slot) of every fully written name, sorted */
    size_t nlit;
    size_t *ltab;        /* open addressing: index into lit of each name's first entry; SIZE_MAX empty */
    size_t ltab_mask;
    size_t *cand;        /* the slots the current device tries, ascending */
    int oom, limit;
} Ctx;

/* Engineering notation for a sentence: "12 mV", "2.28 GHz", "8.2" (a space before the prefix). */
static const char *eng(double v, const char *unit, char *buf, size_t size)
{
    char tmp[48];
    rep_eng(v, unit, tmp, sizeof tmp);
    size_t i = tmp[0] == '-' ? 1 : 0, digits = 0;
    while (tmp[i] == '.' || (tmp[i] >= '0' && tmp[i] <= '9'))
        digits += tmp[i++] != '.';
    if (digits && tmp[i] && tmp[i] != 'e') /* "12mV" -> "12 mV"; "1e+30V", "inf" stay as they are */
        snprintf(buf, size, "%.*s %s", (int)i, tmp, tmp + i);
    else
        snprintf(buf, size, "%s", tmp);
    return buf;
}

static SrcLoc card_loc(const Design *ds, const Device *dv)
{
    SrcLoc loc = {NULL, 0, 0};
    if (!ds || dv->card >= ds->ncards)
        return loc;
    const Card *c = &ds->cards[dv->card];
    if (c->file < ds->files.n && ds->files.files[c->file])
        loc.file = ds->files.files[c->file]->path;
    loc.line = c->line;
    loc.col = c->col;
    return loc;
}

static char *keep(Ctx *c, const char *s)
{
    if (!s)
        return NULL;
    char *k = arena_strndup(&c->out->arena, s, strlen(s));
    if (!k)
        c->oom = 1;
    return k;
}

/* A finding under construction: add() fills the common fields. */
typedef struct {
    double lo, hi;
    const char *intended, *direction, *group;
    RuleOrigin rule;
    SrcLoc loc;
    int loose;
} Extra;

static void addx(Ctx *c, size_t row, CheckId id, Severity sev, double value, double limit, const Extra *x,
                 const char *fmt, ...) PRINTF_LIKE(8, 9);

static void addx(Ctx *c, size_t row, CheckId id, Severity sev, double value, double limit, const Extra *x,
                 const char *fmt, ...)
{
    if (c->oom)
        return;
    buf_clear(&c->msg);
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&c->msg, fmt, ap);
    va_end(ap);
    char *text = rc == ERR_OK ? arena_strndup(&c->out->arena, c->msg.data, c->msg.len) : NULL;
    if (!text) {
        c->oom = 1;
        return;
    }
    Finding f = {row, id, sev, value, limit, text, x->loc, x->rule, x->lo, x->hi, keep(c, x->intended),
                 keep(c, x->direction), keep(c, x->group), 0, NULL, {NULL, 0}};
    if (c->oom)
        return;
    Findings *o = c->out;
    if (x->loose) {
        f.row = SIZE_MAX;
        if (BUF_PUSH(o->loose, o->nloose, o->loose_cap, f) != ERR_OK) {
            c->oom = 1;
            return;
        }
    } else if (BUF_PUSH(o->items, o->n, o->cap, f) != ERR_OK) {
        c->oom = 1;
        return;
    }
    o->count[sev]++;
}

/* The finding of a default check on row's device: the check's own origin, no intent. */
static void add(Ctx *c, size_t row, const Device *dv, CheckId id, Severity sev, double value, double limit,
                RuleOrigin rule, const char *fmt, ...) PRINTF_LIKE(9, 10);

static void add(Ctx *c, size_t row, const Device *dv, CheckId id, Severity sev, double value, double limit,
                RuleOrigin rule, const char *fmt, ...)
{
    if (c->oom)
        return;
    buf_clear(&c->msg);
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&c->msg, fmt, ap);
    va_end(ap);
    char *text = rc == ERR_OK ? arena_strndup(&c->out->arena, c->msg.data, c->msg.len) : NULL;
    Finding f = {row, id, sev, value, limit, text, card_loc(c->ds, dv), rule, NAN, NAN, NULL, NULL, NULL, 0, NULL,
                 {NULL, 0}};
    if (!text || BUF_PUSH(c->out->items, c->out->n, c->out->cap, f) != ERR_OK) {
        c->oom = 1;
        return;
    }
    c->out->count[sev]++;
}

/* What the dump lacks for a figure, as words: "no vdsat", "no vds and no vdsat". */
static const char *lacking(double a, const char *an, double b, const char *bn, char *buf, size_t size)
{
    if (isnan(a) && isnan(b))
        snprintf(buf, size, "the dump has no %s and no %s", an, bn);
    else if (isnan(a))
        snprintf(buf, size, "the dump has no %s", an);
    else if (isnan(b))
        snprintf(buf, size, "the dump has no %s", bn);
    else
        snprintf(buf, size, "the values do not give a number");
    return buf;
}

/* ---- requirements in words ---- */

static const char *label(CheckId k)
{
    switch (k) {
    case CHECK_GMID: return "gm/ID";
    case CHECK_MARGIN: return "VDS-VDSAT";
    case CHECK_GAIN: return "gm/gds";
    case CHECK_FT: return "fT";
    case CHECK_IC: return "IC";
    case CHECK_ID: return "ID";
    case CHECK_VOV: return "VOV";
    case CHECK_REGION: return "region";
    default: return rule_check_name[k];
    }
}

static const char *value_words(CheckId k, double v, char *buf, size_t size)
{
    switch (k) {
    case CHECK_GMID: return eng(v, "/V", buf, size);
    case CHECK_MARGIN:
    case CHECK_VOV: return eng(v, "V", buf, size);
    case CHECK_FT: return eng(v, "Hz", buf, size);
    case CHECK_ID: return eng(v, "A", buf, size);
    default: snprintf(buf, size, "%.3g", v); return buf;
    }
}

/* "moderate or weak" */
static void regions_words(unsigned bits, Buf *b)
{
    int first = 1;
    static const int order[] = {REGION_WEAK, REGION_MODERATE, REGION_STRONG, REGION_TRIODE, REGION_OFF};
    for (size_t k = 0; k < sizeof order / sizeof order[0]; k++)
        if (bits & (1u << order[k])) {
            if (buf_printf(b, "%s%s", first ? "" : " or ", fig_region_name[order[k]]) != ERR_OK)
                return;
            first = 0;
        }
}

/* The intended value of a need in words: "at least 80 mV", "15 /V +-10 % (13.5 /V to 16.5 /V)". */
static void intended_words(CheckId k, const Need *n, Buf *b)
{
    char x[48], y[48], z[48];
    buf_clear(b);
    const Req *r = n->req;
    int rc = ERR_OK;
    if (r && r->form == REQ_REGIONS) {
        regions_words(r->regions, b);
        return;
    }
    ReqForm form = r ? r->form : REQ_MIN;
    switch (form) {
    case REQ_MIN: rc = buf_printf(b, "at least %s", value_words(k, n->lo, x, sizeof x)); break;
    case REQ_MAX: rc = buf_printf(b, "at most %s", value_words(k, n->hi, x, sizeof x)); break;
    case REQ_RANGE:
        rc = buf_printf(b, "%s to %s", value_words(k, n->lo, x, sizeof x), value_words(k, n->hi, y, sizeof y));
        break;
    case REQ_TARGET:
        if (r->tol_pct)
            rc = buf_printf(b, "%s +-%g %% (%s to %s)", value_words(k, r->target, x, sizeof x), r->tol,
                            value_words(k, n->lo, y, sizeof y), value_words(k, n->hi, z, sizeof z));
        else {
            char t[48];
            rc = buf_printf(b, "%s +-%s (%s to %s)", value_words(k, r->target, x, sizeof x),
                            value_words(k, r->tol, t, sizeof t), value_words(k, n->lo, y, sizeof y),
                            value_words(k, n->hi, z, sizeof z));
        }
        break;
    default: break;
    }
    (void)rc; /* a failed append leaves a shorter text; the caller checks for memory separately */
}

/* How a value below (low) or above the intended range reads for each requirement. */
static const char *direction(CheckId k, int low)
{
    switch (k) {
    case CHECK_GMID: return low ? "deeper in strong inversion than intended" : "closer to weak inversion than intended";
    case CHECK_IC: return low ? "closer to weak inversion than intended" : "deeper in strong inversion than intended";
    case CHECK_VOV:
        return low ? "less overdrive than intended, closer to weak inversion"
                   : "more overdrive than intended, deeper in strong inversion";
    case CHECK_ID: return low ? "less current than intended" : "more current than intended";
    case CHECK_MARGIN:
        return low ? "closer to leaving saturation than intended" : "more headroom than intended";
    case CHECK_GAIN: return low ? "less intrinsic gain than intended" : "more intrinsic gain than intended";
    case CHECK_FT: return low ? "slower than intended" : "faster than intended";
    default: return low ? "below the intended range" : "above the intended range";
    }
}

static Extra extra_for(Ctx *c, const Device *dv, const Need *n)
{
    Extra x = {n->lo, n->hi, NULL, NULL, NULL, n->from, card_loc(c->ds, dv), 0};
    return x;
}

static Severity cannot_sev(const Need *n)
{
    return n->req ? SEV_WARNING : SEV_INFO;
}

/* A stated numeric requirement of kind k against measured v; why: what is missing when v is NaN. */
static void check_value(Ctx *c, size_t row, const Device *dv, CheckId k, const Need *n, double v, const char *why)
{
    Buf iw = BUF_INIT;
    intended_words(k, n, &iw);
    Extra x = extra_for(c, dv, n);
    x.intended = iw.data;
    if (isnan(v)) {
        addx(c, row, k, cannot_sev(n), NAN, NAN, &x, "cannot check %s (intended %s): %s", label(k),
             iw.data ? iw.data : "", why);
        buf_free(&iw);
        return;
    }
    int low = !isnan(n->lo) && v < n->lo, high = !isnan(n->hi) && v > n->hi;
    if (!low && !high) {
        buf_free(&iw);
        return;
    }
    char a[48], dev[64];
    const Req *r = n->req;
    double bound = low ? n->lo : n->hi;
    if (r && r->form == REQ_TARGET && r->target != 0.0)
        snprintf(dev, sizeof dev, "%.0f %% %s the target", fabs(v - r->target) / fabs(r->target) * 100.0,
                 low ? "below" : "above");
    else {
        char g[48];
        snprintf(dev, sizeof dev, "%s %s", value_words(k, fabs(v - bound), g, sizeof g), low ? "short" : "over");
    }
    x.direction = direction(k, low);
    if (k == CHECK_MARGIN && v < 0.0)
        x.direction = "in triode, out of saturation";
    addx(c, row, k, (Severity)n->sev, v, bound, &x, "%s is %s, intended %s: %s, %s", label(k),
         value_words(k, v, a, sizeof a), iw.data ? iw.data : "", dev, x.direction);
    buf_free(&iw);
}

/* Why gm/ID is missing. */
static const char *why_gmid(const Figures *f, char *buf, size_t size)
{
    if (!isnan(f->id) && f->id == 0.0)
        snprintf(buf, size, "ID is 0");
    else
        lacking(f->gm, "gm", f->id, "id", buf, size);
    return buf;
}

/* ---- regions ---- */

static int rank(Region r)
{
    return r == REGION_WEAK ? 1 : r == REGION_MODERATE ? 2 : r == REGION_STRONG ? 3 : 0;
}

static void check_region(Ctx *c, size_t row, const Device *dv, const Figures *f, const Need *n)
{
    Buf iw = BUF_INIT;
    intended_words(CHECK_REGION, n, &iw);
    Extra x = extra_for(c, dv, n);
    x.intended = iw.data;
    unsigned want = n->req->regions;
    char a[48], b[48], why[96];
    if (f->region == REGION_UNKNOWN) {
        if (isnan(f->id))
            snprintf(why, sizeof why, "the dump has no id");
        else if (isnan(f->margin))
            lacking(f->vds, "vds", f->vdsat, "vdsat", why, sizeof why);
        else
            why_gmid(f, why, sizeof why);
        addx(c, row, CHECK_REGION, SEV_WARNING, NAN, NAN, &x, "cannot check the region (intended %s): %s",
             iw.data ? iw.data : "", why);
        buf_free(&iw);
        return;
    }
    if (want & (1u << f->region)) {
        buf_free(&iw);
        return;
    }
    const char *dir;
    char is[96];
    if (f->region == REGION_OFF) {
        snprintf(is, sizeof is, "off (ID %s)", eng(f->id, "A", a, sizeof a));
        dir = "the device does not conduct";
    } else if (f->region == REGION_TRIODE) {
        snprintf(is, sizeof is, "in triode (VDS %s, VDSAT %s)", eng(f->vds, "V", a, sizeof a),
                 eng(f->vdsat, "V", b, sizeof b));
        dir = "out of saturation";
    } else {
        snprintf(is, sizeof is, "in %s inversion (gm/ID %s)", fig_region_name[f->region], eng(f->gm_id, "/V", a, sizeof a));
        int lo = 4, hi = 0;
        for (int r = REGION_WEAK; r <= REGION_STRONG; r++)
            if (want & (1u << r)) {
                lo = rank((Region)r) < lo ? rank((Region)r) : lo;
                hi = rank((Region)r) > hi ? rank((Region)r) : hi;
            }
        int me = rank(f->region);
        dir = hi == 0                ? (want & (1u << REGION_OFF) ? "the device conducts" : "saturated, not a switch in triode")
              : me > hi              ? "deeper in strong inversion than intended"
              : me < lo              ? "closer to weak inversion than intended"
                                     : "between the intended regions";
    }
    x.direction = dir;
    addx(c, row, CHECK_REGION, (Severity)n->sev, NAN, NAN, &x, "the device is %s, intended %s: %s", is,
         iw.data ? iw.data : "", dir);
    buf_free(&iw);
}

/* ---- resolution ---- */

static void need_init(const RuleSet *rs, Need *need)
{
    memset(need, 0, CHECK_COUNT * sizeof *need);
    for (int k = 0; k < CHECK_COUNT; k++)
        need[k].lo = need[k].hi = NAN;
    static const CheckId lim[] = {CHECK_MARGIN, CHECK_GAIN};
    for (size_t i = 0; i < 2; i++) {
        const CheckRule *cr = rule_check(rs, lim[i]);
        Need *n = &need[lim[i]];
        if (!isnan(cr->limit)) {
            n->set = 1;
            n->lo = cr->limit;
            n->sev = (int)cr->sev;
            n->from = cr->from;
        }
    }
}

static void need_apply(const RuleSet *rs, Need *need, const Req *r)
{
    Need *n = &need[r->check];
    n->req = r;
    n->from = r->from;
    if (r->form == REQ_DROP) {
        n->set = 0;
        return;
    }
    n->set = 1;
    n->lo = r->lo;
    n->hi = r->hi;
    n->sev = r->sev >= 0 ? r->sev : (int)rule_check(rs, r->check)->sev;
}

static void need_finish(const RuleSet *rs, Need *need)
{
    for (int k = 0; k < CHECK_COUNT; k++)
        if (!rule_check(rs, (CheckId)k)->enabled) {
            need[k].ignored = need[k].set;
            need[k].set = 0;
        }
}

/* Statement slots: sized 0..ns-1, groups ns..ns+ng-1, waivers after. */
static int sel_try(Ctx *c, size_t slot, const Device *dv)
{
    int which;
    int hit = rule_sel_match(c->sel[slot], dv, c->m, &which, c->d);
    if (hit < 0) {
        c->limit = 1;
        return 0;
    }
    if (hit) {
        c->hits[slot]++;
        if (which >= 0)
            c->phits[c->pbase[slot] + (size_t)which]++;
    }
    return hit;
}

static int expired(const Ctx *c, const RuleWaiver *w)
{
    return w->until && c->opt->today && c->opt->today > w->until;
}

/* Marks the findings items[first..n) of device row with the waivers in c->cur. */
static void apply_waivers(Ctx *c, size_t first, size_t row)
{
    for (size_t i = first; i < c->out->n; i++) {
        Finding *f = &c->out->items[i];
        WState *win = NULL;
        for (size_t k = 0; k < c->ncur; k++) {
            WState *s = &c->ws[c->cur[k]];
            if (!(s->w->checks & (1u << f->check)))
                continue;
            if (expired(c, s->w)) {
                if (!s->expired_hits++)
                    s->first_hit_row = row;
                continue;
            }
            win = s; /* the last one that covers it */
        }
        if (!win)
            continue;
        win->used++;
        f->waived = 1;
        f->waiver_reason = win->w->reason;
        f->waiver = win->w->from;
        c->out->count[f->sev]--;
        c->out->nwaived++;
    }
}

/* ---- one device ---- */

static void check_row(Ctx *c, size_t i, const Row *r, const Need *need)
{
    const Device *dv = r->dev;
    const RuleSet *rs = c->rs;
    const CheckRule *nodata = rule_check(rs, CHECK_NODATA), *off = rule_check(rs, CHECK_OFF),
                    *tri = rule_check(rs, CHECK_TRIODE), *mar = rule_check(rs, CHECK_MARGIN),
                    *gain = rule_check(rs, CHECK_GAIN);
    char a[48], b[48], why[160];

    if (!r->op) {
        if (nodata->enabled && row_lut_miss(r)) {
            char which[40] = "";
            int many = 0;
            for (int k = 0, n = 0; k < LUTAX_COUNT; k++)
                if (row_lut_miss(r) & (1u << k)) {
                    many = n > 0;
                    n += snprintf(which + n, sizeof which - (size_t)n, "%s%s", n ? " and " : "", lut_axis_label[k]);
                }
            add(c, i, dv, CHECK_NODATA, nodata->sev, NAN, NAN, nodata->from,
                "no figures: the dump has no record for this device and its %s %s outside the grid of the "
                "lookup table for its model, which is never extrapolated; nothing was checked",
                which, many ? "lie" : "lies");
        } else if (nodata->enabled) {
            add(c, i, dv, CHECK_NODATA, nodata->sev, NAN, NAN, nodata->from,
                "no operating-point data: the dump has no record for this device, so nothing was checked");
        }
        return;
    }
    const Figures *f = &r->fig;
    const Bands *bands = rule_bands(rs, dv, NULL);
    const Need *reg = &need[CHECK_REGION];
    int sat_meant = !reg->set || (reg->req->regions & SAT_BITS);

    /* the region: an intended region replaces the triode and off checks */
    if (reg->set) {
        check_region(c, i, dv, f, reg);
        if (f->region == REGION_OFF)
            return; /* off: nothing else means anything */
    } else {
        double l = isfinite(dv->l) && dv->l > 0.0 ? dv->l : NAN;
        double per_square = f->id_w * l; /* ID*L/(W*m), as fig_derive reads it */
        if (f->region == REGION_OFF) {
            if (off->enabled) {
                if (f->id == 0.0)
                    add(c, i, dv, CHECK_OFF, off->sev, 0.0, bands->off_below, off->from, "ID is 0: the device is off");
                else
                    add(c, i, dv, CHECK_OFF, off->sev, per_square, bands->off_below, off->from,
                        "ID is %s, %s per square (ID*L/(W*m)), below the %s off limit: the device is off",
                        eng(f->id, "A", a, sizeof a), eng(per_square, "A", b, sizeof b),
                        eng(bands->off_below, "A", why, sizeof why));
            }
            return;
        }
        if (off->enabled) {
            if (isnan(f->id))
                add(c, i, dv, CHECK_OFF, SEV_INFO, NAN, bands->off_below, off->from,
                    "cannot check whether the device is off: the dump has no id");
            else if (isnan(per_square))
                add(c, i, dv, CHECK_OFF, SEV_INFO, NAN, bands->off_below, off->from,
                    "cannot check whether the device is off: its W, L or m is not known, so ID per square is not");
        }
    }

    /* triode and saturation margin */
    const Need *mn = &need[CHECK_MARGIN];
    int margin_on = mn->set && sat_meant;
    if (isnan(f->margin)) {
        lacking(f->vds, "vds", f->vdsat, "vdsat", why, sizeof why);
        if (!reg->set && tri->enabled)
            add(c, i, dv, CHECK_TRIODE, SEV_INFO, NAN, 0.0, tri->from, "cannot check for triode: %s", why);
        if (margin_on) {
            if (mn->req)
                check_value(c, i, dv, CHECK_MARGIN, mn, NAN, why);
            else
                add(c, i, dv, CHECK_MARGIN, SEV_INFO, NAN, mar->limit, mn->from, "cannot check the VDS-VDSAT margin: %s",
                    why);
        }
    } else {
        int triode = f->margin < 0.0;
        if (triode && reg->set) {
            /* the region requirement has given its verdict on triode */
        } else if (triode && tri->enabled) {
            char m[48];
            add(c, i, dv, CHECK_TRIODE, tri->sev, f->margin, 0.0, tri->from,
                "VDS is %s but VDSAT is %s (VDS-VDSAT = %s): the device is in triode", eng(f->vds, "V", a, sizeof a),
                eng(f->vdsat, "V", b, sizeof b), eng(f->margin, "V", m, sizeof m));
        } else if (margin_on && mn->req) {
            check_value(c, i, dv, CHECK_MARGIN, mn, f->margin, "");
        } else if (margin_on && f->margin < mn->lo) {
            /* with the triode check off, a triode device is still below the margin */
            add(c, i, dv, CHECK_MARGIN, (Severity)mn->sev, f->margin, mn->lo, mn->from,
                "VDS-VDSAT is %s, below the %s minimum: %s", eng(f->margin, "V", a, sizeof a),
                eng(mn->lo, "V", b, sizeof b),
                triode ? "the device is in triode" : "the device is close to leaving saturation");
            if (!c->oom) {
                Finding *last = &c->out->items[c->out->n - 1];
                last->want_lo = mn->lo;
                last->direction = triode ? "in triode, out of saturation" : "close to leaving saturation";
            }
        }
    }

    /* intrinsic gain */
    const Need *gn = &need[CHECK_GAIN];
    if (gn->set && sat_meant) {
        if (isnan(f->gain)) {
            if (isnan(f->gm) || isnan(f->gds))
                lacking(f->gm, "gm", f->gds, "gds", why, sizeof why);
            else if (f->gds == 0.0)
                snprintf(why, sizeof why, "gds is 0, so the gain is undefined");
            else
                snprintf(why, sizeof why, "the values do not give a number");
            if (gn->req)
                check_value(c, i, dv, CHECK_GAIN, gn, NAN, why);
            else
                add(c, i, dv, CHECK_GAIN, SEV_INFO, NAN, gain->limit, gn->from, "cannot check gm/gds: %s", why);
        } else if (gn->req) {
            check_value(c, i, dv, CHECK_GAIN, gn, f->gain, "");
        } else if (f->gain < gn->lo && !(f->margin < 0.0)) {
            /* in triode the gain is low by nature: the triode (or region) finding says what is wrong,
               and a gain warning beside it would only repeat it; a gain intent still applies */
            add(c, i, dv, CHECK_GAIN, (Severity)gn->sev, f->gain, gn->lo, gn->from,
                "gm/gds is %s, below the minimum of %s: the device gives little voltage gain",
                eng(f->gain, "", a, sizeof a), eng(gn->lo, "", b, sizeof b));
            if (!c->oom)
                c->out->items[c->out->n - 1].want_lo = gn->lo;
        }
    }

    /* the stated figures */
    if (need[CHECK_GMID].set)
        check_value(c, i, dv, CHECK_GMID, &need[CHECK_GMID], f->gm_id, why_gmid(f, why, sizeof why));
    if (need[CHECK_ID].set)
        check_value(c, i, dv, CHECK_ID, &need[CHECK_ID], f->id, "the dump has no id");
    if (need[CHECK_VOV].set)
        check_value(c, i, dv, CHECK_VOV, &need[CHECK_VOV], f->vov,
                    lacking(f->vgs, "vgs", f->vth, "vth (nor von)", why, sizeof why));
    if (need[CHECK_FT].set) {
        if (isnan(f->gm))
            snprintf(why, sizeof why, "the dump has no gm");
        else if (isnan(f->cgg))
            snprintf(why, sizeof why, "the dump has no cgg (nor cgs, cgd and cgb to sum)");
        else
            snprintf(why, sizeof why, "Cgg is 0");
        check_value(c, i, dv, CHECK_FT, &need[CHECK_FT], f->ft, why);
    }
    if (need[CHECK_IC].set) {
        const BandRule *br = rule_band_rule(rs, dv);
        double ut = fig_ut(c->ds ? c->ds->temp_c : 27.0);
        double ic = NAN;
        if (f->region == REGION_TRIODE) {
            snprintf(why, sizeof why, "the device is in triode, and IC from gm/ID holds in saturation only");
        } else if (isnan(f->gm_id) || !(f->gm_id > 0.0)) {
            why_gmid(f, why, sizeof why);
        } else {
            ic = fig_ic_from_gmid(f->gm_id, br->slope, ut);
            if (isnan(ic))
                snprintf(why, sizeof why,
                         "gm/ID %s is at or above 1/(n*UT) = %s (n = %g, %g C), where IC is not defined: lower "
                         "the slope-factor for this device",
                         eng(f->gm_id, "/V", a, sizeof a), eng(1.0 / (br->slope * ut), "/V", b, sizeof b), br->slope,
                         c->ds ? c->ds->temp_c : 27.0);
        }
        check_value(c, i, dv, CHECK_IC, &need[CHECK_IC], ic, why);
    }
}

/* The needs of dv: defaults, sized statements (recording selector hits), inline intents. The
 * waivers that select dv go to c->cur; groups collect it. */
/* The slots dv must try, ascending, into c->cand; their number. */
static size_t candidates(Ctx *c, const Device *dv)
{
    size_t lo = 0, hi = 0;
    if (c->ltab && dv->name) {
        uint64_t h = str_hash(dv->name, strlen(dv->name));
        for (size_t p = (size_t)h & c->ltab_mask; c->ltab[p] != SIZE_MAX; p = (p + 1) & c->ltab_mask)
            if (strcmp(c->lit[c->ltab[p]].name, dv->name) == 0) {
                lo = hi = c->ltab[p];
                while (hi < c->nlit && strcmp(c->lit[hi].name, dv->name) == 0)
                    hi++;
                break;
            }
    }
    size_t n = 0, i = 0, j = lo;
    while (i < c->nalways || j < hi) {
        size_t v;
        if (j >= hi || (i < c->nalways && c->always[i] < c->lit[j].slot))
            v = c->always[i++];
        else
            v = c->lit[j++].slot;
        if (n == 0 || c->cand[n - 1] != v) /* a name written twice in one statement */
            c->cand[n++] = v;
    }
    return n;
}

/* The needs of dv: defaults, sized statements (recording selector hits), inline intents. The
 * waivers that select dv go to c->cur; groups collect it. */
static void resolve_and_select(Ctx *c, size_t row, const Device *dv, Need *need)
{
    const RuleStatements *st = c->st;
    size_t nc = candidates(c, dv), k = 0;
    need_init(c->rs, need);
    for (; k < nc && c->cand[k] < st->nsized && !c->limit; k++)
        if (sel_try(c, c->cand[k], dv))
            for (size_t q = 0; q < st->sized[c->cand[k]].nreqs; q++)
                need_apply(c->rs, need, &st->sized[c->cand[k]].reqs[q]);
    size_t ne;
    const IntentEntry *e = intent_card(c->in, dv->card, &ne);
    for (size_t q = 0; q < ne; q++)
        if (e[q].kind == RULE_INLINE_SIZED)
            for (size_t z = 0; z < e[q].sized.nreqs; z++)
                need_apply(c->rs, need, &e[q].sized.reqs[z]);
    need_finish(c->rs, need);
    c->ncur = 0;
    for (; k < nc && !c->limit; k++) {
        size_t slot = c->cand[k];
        if (!sel_try(c, slot, dv))
            continue;
        if (slot < st->nsized + st->ngroups) {
            size_t g = slot - st->nsized;
            if (BUF_PUSH(c->members[g], c->nmembers[g], c->capmembers[g], row) != ERR_OK)
                c->oom = 1;
        } else {
            size_t w = slot - st->nsized - st->ngroups;
            if (c->ws[w].first_row == SIZE_MAX)
                c->ws[w].first_row = row;
            if (BUF_PUSH(c->cur, c->ncur, c->capcur, w) != ERR_OK)
                c->oom = 1;
        }
    }
    if (c->in && ne) {
        size_t base = st->nwaivers + (size_t)(e - c->in->items);
        for (size_t q = 0; q < ne; q++)
            if (e[q].kind == RULE_INLINE_WAIVE) {
                if (c->ws[base + q].first_row == SIZE_MAX)
                    c->ws[base + q].first_row = row;
                if (BUF_PUSH(c->cur, c->ncur, c->capcur, base + q) != ERR_OK)
                    c->oom = 1;
            }
    }
}

/* ---- matched groups ---- */

/* The waivers that select any member go to c->cur. */
static void group_waivers(Ctx *c, const size_t *mem, size_t n)
{
    c->ncur = 0;
    const RuleStatements *st = c->st;
    for (size_t w = 0; w < c->nws && !c->limit; w++) {
        const WState *s = &c->ws[w];
        if (!s->w)
            continue;
        int hit = 0;
        for (size_t k = 0; k < n && !hit; k++) {
            const Device *dv = c->j->rows[mem[k]].dev;
            if (w < st->nwaivers) {
                int h = rule_sel_match(s->w->sel, dv, c->m, NULL, c->d);
                if (h < 0)
                    c->limit = 1;
                hit = h > 0;
            } else {
                hit = c->in->items[w - st->nwaivers].card == dv->card;
            }
        }
        if (hit && BUF_PUSH(c->cur, c->ncur, c->capcur, w) != ERR_OK)
            c->oom = 1;
    }
}

static void check_group(Ctx *c, const RuleGroup *g, const size_t *mem, size_t n, const char *where)
{
    const Joined *j = c->j;
    Buf names = BUF_INIT;
    for (size_t k = 0; k < n; k++)
        if (buf_printf(&names, "%s%s", k ? ", " : "", j->rows[mem[k]].dev->name) != ERR_OK)
            c->oom = 1;
    size_t first = c->out->n;
    const Device *d0 = j->rows[mem[0]].dev;
    Extra x = {NAN, NAN, NULL, NULL, names.data, g->from, card_loc(c->ds, d0), 0};
    char a[48], b[48], e[48], q[48];
    if (g->ratio && g->nratio != n) {
        diag_add(c->d, DIAG_WARNING, rule_sel_loc(g->sel),
                 "the ratio of this matched group has %zu parts but %s has %zu of its devices (%s): that instance "
                 "was not checked",
                 g->nratio, where, n, names.data ? names.data : "");
        buf_free(&names);
        return;
    }
    for (size_t k = 0; k < n; k++)
        if (!j->rows[mem[k]].op) {
            addx(c, mem[0], CHECK_MATCH_RATIO, SEV_WARNING, NAN, NAN, &x,
                 "cannot check the matched group %s: %s has no operating-point data", names.data ? names.data : "",
                 j->rows[mem[k]].dev->name);
            goto waive;
        }
    {
        const Figures **figs = malloc(n * sizeof *figs);
        double *want = malloc(n * sizeof *want);
        if (!figs || !want) {
            free(figs);
            free(want);
            c->oom = 1;
            buf_free(&names);
            return;
        }
        for (size_t k = 0; k < n; k++) {
            figs[k] = &j->rows[mem[k]].fig;
            want[k] = g->ratio ? g->ratio[k] : grp_size(j->rows[mem[k]].dev);
        }
        GrpStats s;
        grp_stats(figs, want, n, &s);
        for (int k = 0; k < MATCH_NLIMITS; k++) {
            CheckId id = (CheckId)(CHECK_MATCH_VGS + k);
            const CheckRule *cr = rule_check(c->rs, id);
            if (!cr->enabled)
                continue;
            double lim = isnan(g->limit[k]) ? cr->limit : g->limit[k];
            Severity sev = g->sev[k] >= 0 ? (Severity)g->sev[k] : cr->sev;
            x.hi = lim;
            x.lo = NAN;
            char iw[64];
            if (k == MATCH_VGS || k == MATCH_VDS) {
                snprintf(iw, sizeof iw, "spread at most %s", eng(lim, "V", a, sizeof a));
                x.intended = iw;
                const char *what = k == MATCH_VGS ? "VGS" : "VDS";
                double sp = k == MATCH_VGS ? s.vgs_spread : s.vds_spread;
                size_t lo = k == MATCH_VGS ? s.vgs_lo : s.vds_lo, hi = k == MATCH_VGS ? s.vgs_hi : s.vds_hi;
                double vlo = k == MATCH_VGS ? figs[lo]->vgs : figs[lo]->vds, vhi = k == MATCH_VGS ? figs[hi]->vgs : figs[hi]->vds;
                if (isnan(sp)) {
                    addx(c, mem[0], id, SEV_WARNING, NAN, NAN, &x, "cannot check the %s spread of %s: the dump has no %s for "
                         "every member", what, names.data ? names.data : "", k == MATCH_VGS ? "vgs" : "vds");
                } else if (sp > lim) {
                    x.direction = k == MATCH_VGS ? "the devices are not biased alike" : "the devices see different VDS";
                    addx(c, mem[0], id, sev, sp, lim, &x,
                         "%s differs by %s across the group (%s %s, %s %s), above the %s limit: %s", what,
                         eng(sp, "V", b, sizeof b), j->rows[mem[lo]].dev->name, eng(vlo, "V", e, sizeof e),
                         j->rows[mem[hi]].dev->name, eng(vhi, "V", q, sizeof q), eng(lim, "V", a, sizeof a),
                         k == MATCH_VGS ? "the devices are not biased alike (offset, or unequal source voltages)"
                                        : "in a current mirror unequal VDS skews the copied current");
                    x.direction = NULL;
                }
            } else if (k == MATCH_GMID) {
                snprintf(iw, sizeof iw, "spread at most %g %%", lim * 100.0);
                x.intended = iw;
                if (isnan(s.gmid_spread)) {
                    addx(c, mem[0], id, SEV_WARNING, NAN, NAN, &x,
                         "cannot check the gm/ID spread of %s: gm/ID is missing for a member", names.data ? names.data : "");
                } else if (s.gmid_spread > lim) {
                    x.direction = "the devices sit at different inversion levels";
                    addx(c, mem[0], id, sev, s.gmid_spread, lim, &x,
                         "gm/ID differs by %.1f %% across the group (%s %s, %s %s), above the %g %% limit: the devices "
                         "sit at different inversion levels",
                         s.gmid_spread * 100.0, j->rows[mem[s.gmid_lo]].dev->name,
                         eng(figs[s.gmid_lo]->gm_id, "/V", e, sizeof e), j->rows[mem[s.gmid_hi]].dev->name,
                         eng(figs[s.gmid_hi]->gm_id, "/V", q, sizeof q), lim * 100.0);
                    x.direction = NULL;
                }
            } else {
                snprintf(iw, sizeof iw, "ratio error at most %g %%", lim * 100.0);
                x.intended = iw;
                size_t w = s.ratio_worst;
                if (isnan(s.ratio_err)) {
                    addx(c, mem[0], id, SEV_WARNING, NAN, NAN, &x,
                         "cannot check the ID ratio of %s: %s", names.data ? names.data : "",
                         g->ratio ? "a drain current is missing or zero" : "a drain current, W, L or m is missing or zero");
                } else if (fabs(s.ratio_err) > lim) {
                    const Device *dw = j->rows[mem[w]].dev;
                    double dvds = figs[w]->vds - figs[0]->vds;
                    char vd[320];
                    if (isnan(dvds))
                        snprintf(vd, sizeof vd, "the dump has no VDS to compare");
                    else if (fabs(dvds) >= 0.01)
                        snprintf(vd, sizeof vd,
                                 "their VDS differ by %s (%s %s, %s %s): unequal VDS is the likely cause, since "
                                 "channel-length modulation copies the current exactly only at equal VDS",
                                 eng(fabs(dvds), "V", a, sizeof a), d0->name, eng(figs[0]->vds, "V", e, sizeof e),
                                 dw->name, eng(figs[w]->vds, "V", q, sizeof q));
                    else if (fabs(figs[w]->vgs - figs[0]->vgs) >= 1e-3)
                        snprintf(vd, sizeof vd,
                                 "their VDS agree within %s, but their VGS differ by %s (%s %s, %s %s): the devices "
                                 "are not biased alike (in a pair: a systematic offset)",
                                 eng(fabs(dvds), "V", a, sizeof a), eng(fabs(figs[w]->vgs - figs[0]->vgs), "V", b, sizeof b),
                                 d0->name, eng(figs[0]->vgs, "V", e, sizeof e), dw->name,
                                 eng(figs[w]->vgs, "V", q, sizeof q));
                    else
                        snprintf(vd, sizeof vd,
                                 "their VDS and VGS agree within %s and %s, so the bias is not the cause: compare the "
                                 "sizes and the source connections",
                                 eng(fabs(dvds), "V", a, sizeof a), eng(fabs(figs[w]->vgs - figs[0]->vgs), "V", b, sizeof b));
                    char want_w[64];
                    if (g->ratio)
                        snprintf(want_w, sizeof want_w, "as written");
                    else
                        snprintf(want_w, sizeof want_w, "from W*m/L");
                    x.direction = s.ratio_err > 0 ? "the copy carries more current than its share"
                                                  : "the copy carries less current than its share";
                    addx(c, mem[0], id, sev, s.ratio_err, lim, &x,
                         "ID ratio %s/%s is %.3g, expected %.3g (%s): %+.1f %%, beyond the %g %% limit; %s", dw->name,
                         d0->name, s.ratio_meas, s.ratio_want, want_w, s.ratio_err * 100.0, lim * 100.0, vd);
                    x.direction = NULL;
                }
            }
        }
        free(figs);
        free(want);
    }
waive:
    group_waivers(c, mem, n);
    apply_waivers(c, first, mem[0]);
    buf_free(&names);
}

static void check_groups(Ctx *c)
{
    const RuleStatements *st = c->st;
    for (size_t g = 0; g < st->ngroups && !c->oom && !c->limit; g++) {
        const RuleGroup *gr = &st->groups[g];
        size_t *mem = c->members[g], n = c->nmembers[g];
        if (n == 0)
            continue; /* "matches no device" said so */
        const char *const *listed;
        size_t nl;
        if (rule_sel_listed(gr->sel, &listed, &nl)) {
            /* written out in full: one group, in the order written */
            size_t *ord = malloc(nl * sizeof *ord), k = 0;
            if (!ord) {
                c->oom = 1;
                return;
            }
            for (size_t q = 0; q < nl; q++)
                for (size_t z = 0; z < n; z++)
                    if (strcmp(c->j->rows[mem[z]].dev->name, listed[q]) == 0) {
                        ord[k++] = mem[z];
                        break;
                    }
            if (k < 2)
                diag_add(c->d, DIAG_WARNING, rule_sel_loc(gr->sel),
                         "this matched group has only %zu device in the netlist: nothing to compare", k);
            else
                check_group(c, gr, ord, k, "the group");
            free(ord);
            continue;
        }
        const char **names = malloc(n * sizeof *names);
        size_t *idx = malloc(n * sizeof *idx), *starts = malloc((n + 1) * sizeof *starts), *run = malloc(n * sizeof *run);
        size_t nruns = 0, single = 0;
        if (!names || !idx || !starts || !run) {
            c->oom = 1;
        } else {
            for (size_t k = 0; k < n; k++) {
                names[k] = c->j->rows[mem[k]].dev->name;
                idx[k] = k;
            }
            if (grp_by_parent(names, idx, n, starts, &nruns) != ERR_OK)
                c->oom = 1;
            for (size_t r = 0; r < nruns && !c->oom && !c->limit; r++) {
                size_t len = starts[r + 1] - starts[r];
                for (size_t k = 0; k < len; k++)
                    run[k] = mem[idx[starts[r] + k]];
                if (len < 2) {
                    single++;
                    continue;
                }
                const char *nm = names[idx[starts[r]]];
                size_t pl = grp_parent_len(nm);
                char where[160];
                if (pl)
                    snprintf(where, sizeof where, "instance %.*s", (int)(pl < 120 ? pl : 120), nm);
                else
                    snprintf(where, sizeof where, "the top level");
                check_group(c, gr, run, len, where);
            }
            if (single)
                diag_add(c->d, DIAG_WARNING, rule_sel_loc(gr->sel),
                         "this matched group selects a single device in %zu instance%s (groups are formed per "
                         "enclosing instance): nothing to compare there",
                         single, single == 1 ? "" : "s");
        }
        free(names);
        free(idx);
        free(starts);
        free(run);
    }
}

/* ---- waivers that expired or matched nothing ---- */

static void date_words(int32_t d, char *buf, size_t size)
{
    snprintf(buf, size, "%04d-%02d-%02d", (int)(d / 10000), (int)(d / 100 % 100), (int)(d % 100));
}

static void check_waivers(Ctx *c)
{
    const CheckRule *cr = rule_check(c->rs, CHECK_WAIVER);
    if (!cr->enabled)
        return;
    for (size_t k = 0; k < c->nws && !c->oom; k++) {
        const WState *s = &c->ws[k];
        if (!s->w)
            continue;
        int exp = expired(c, s->w);
        if (!exp && s->used)
            continue;
        size_t row = exp && s->expired_hits ? s->first_hit_row : s->first_row;
        Extra x = {NAN, NAN, NULL, NULL, NULL, s->w->from, {s->w->from.file, s->w->from.line, 1}, row == SIZE_MAX};
        char d[16];
        if (exp) {
            date_words(s->w->until, d, sizeof d);
            x.direction = "expired";
            if (s->expired_hits)
                addx(c, row, CHECK_WAIVER, cr->sev, NAN, NAN, &x,
                     "this waiver expired on %s (reason: %s): the %zu finding%s it covered count%s again; renew it "
                     "with a new date or fix the design",
                     d, s->w->reason, s->expired_hits, s->expired_hits == 1 ? "" : "s",
                     s->expired_hits == 1 ? "s" : "");
            else
                addx(c, row, CHECK_WAIVER, cr->sev, NAN, NAN, &x,
                     "this waiver expired on %s and matches no finding anyway (reason: %s): remove it", d, s->w->reason);
        } else {
            x.direction = "stale";
            addx(c, row, CHECK_WAIVER, cr->sev, NAN, NAN, &x,
                 "this waiver matched no finding (reason: %s): %s; remove it or correct its devices or checks",
                 s->w->reason,
                 s->first_row == SIZE_MAX ? "it selects no device" : "the problem it waived is gone");
        }
    }
}

/* ---- selector warnings ---- */

static void selector_warnings(Ctx *c)
{
    if (c->opt->quiet)
        return;
    for (size_t k = 0; k < c->nsel; k++) {
        const RuleSel *s = c->sel[k];
        if (!c->hits[k]) {
            diag_add(c->d, DIAG_WARNING, rule_sel_loc(s), "this selector matches no device of the netlist");
            continue;
        }
        size_t np = rule_sel_npatterns(s);
        for (size_t q = 0; q < np && np > 1; q++)
            if (!c->phits[c->pbase[k] + q]) {
                const char *text;
                SrcLoc loc = rule_sel_pattern_loc(s, q, &text);
                diag_add(c->d, DIAG_WARNING, loc, "'%s' selects no device that the names before it do not already select",
                         text);
            }
    }
}

/* ---- ordering ---- */

/* Not waived first, then waived; each by severity (errors first), then by device in netlist
 * order, then in the order made. Two stable counting sorts: linear. Every item has a valid row. */
static int sort_findings(Findings *o, size_t nrows)
{
    size_t n = o->n;
    if (n < 2)
        return ERR_OK;
    Finding *tmp = malloc(n * sizeof *tmp);
    size_t *cnt = calloc(nrows + 1, sizeof *cnt);
    if (!tmp || !cnt) {
        free(tmp);
        free(cnt);
        return ERR_NOMEM;
    }
    for (size_t i = 0; i < n; i++)
        cnt[(o->items[i].row < nrows ? o->items[i].row : nrows - 1) + 1]++;
    for (size_t r = 0; r < nrows; r++)
        cnt[r + 1] += cnt[r];
    for (size_t i = 0; i < n; i++)
        tmp[cnt[o->items[i].row < nrows ? o->items[i].row : nrows - 1]++] = o->items[i];
    size_t at[2 * SEV_COUNT + 1] = {0};
    for (size_t i = 0; i < n; i++)
        at[(size_t)(tmp[i].waived ? SEV_COUNT : 0) + (size_t)(SEV_ERROR - tmp[i].sev) + 1]++;
    for (size_t b = 0; b < 2 * SEV_COUNT; b++)
        at[b + 1] += at[b];
    for (size_t i = 0; i < n; i++)
        o->items[at[(size_t)(tmp[i].waived ? SEV_COUNT : 0) + (size_t)(SEV_ERROR - tmp[i].sev)]++] = tmp[i];
    free(tmp);
    free(cnt);
    return ERR_OK;
}

/* ---- public ---- */

static int by_lit(const void *a, const void *b)
{
    const LitKey *x = a, *y = b;
    int r = strcmp(x->name, y->name);
    return r ? r : x->slot < y->slot ? -1 : x->slot > y->slot;
}

static void ctx_free(Ctx *c)
{
    if (c->members)
        for (size_t g = 0; g < c->st->ngroups; g++)
            free(c->members[g]);
    free(c->members);
    free(c->nmembers);
    free(c->capmembers);
    free(c->sel);
    free(c->hits);
    free(c->pbase);
    free(c->phits);
    free(c->ws);
    free(c->cur);
    free(c->always);
    free(c->lit);
    free(c->ltab);
    free(c->cand);
    rule_matcher_free(c->m);
    buf_free(&c->msg);
}

static int ctx_init(Ctx *c, const RuleSet *rs, const IntentSet *in, const Design *ds, const Joined *j,
                    const ChkOptions *opt, Findings *out, DiagList *d)
{
    memset(c, 0, sizeof *c);
    c->rs = rs;
    c->st = rule_statements(rs);
    c->in = in;
    c->ds = ds;
    c->j = j;
    c->opt = opt;
    c->out = out;
    c->d = d;
    const RuleStatements *st = c->st;
    c->nsel = st->nsized + st->ngroups + st->nwaivers;
    size_t ns = c->nsel ? c->nsel : 1, ng = st->ngroups ? st->ngroups : 1;
    c->sel = malloc(ns * sizeof *c->sel);
    c->hits = calloc(ns, sizeof *c->hits);
    c->pbase = malloc((ns + 1) * sizeof *c->pbase);
    c->members = calloc(ng, sizeof *c->members);
    c->nmembers = calloc(ng, sizeof *c->nmembers);
    c->capmembers = calloc(ng, sizeof *c->capmembers);
    c->nws = st->nwaivers + (in ? in->n : 0);
    c->ws = calloc(c->nws ? c->nws : 1, sizeof *c->ws);
    c->m = rule_matcher_new();
    if (!c->sel || !c->hits || !c->pbase || !c->members || !c->nmembers || !c->capmembers || !c->ws || !c->m)
        return ERR_NOMEM;
    size_t np = 0;
    for (size_t k = 0; k < c->nsel; k++) {
        c->sel[k] = k < st->nsized                ? st->sized[k].sel
                    : k < st->nsized + st->ngroups ? st->groups[k - st->nsized].sel
                                                   : st->waivers[k - st->nsized - st->ngroups].sel;
        c->pbase[k] = np;
        np += rule_sel_npatterns(c->sel[k]);
    }
    c->pbase[c->nsel] = np;
    c->phits = calloc(np ? np : 1, sizeof *c->phits);
    c->always = malloc(ns * sizeof *c->always);
    c->cand = malloc((ns + np) * sizeof *c->cand);
    c->lit = malloc((np ? np : 1) * sizeof *c->lit);
    if (!c->phits || !c->always || !c->cand || !c->lit)
        return ERR_NOMEM;
    for (size_t k = 0; k < c->nsel; k++) {
        const char *const *names;
        size_t n;
        if (rule_sel_listed(c->sel[k], &names, &n))
            for (size_t q = 0; q < n; q++)
                c->lit[c->nlit++] = (LitKey){names[q], k};
        else
            c->always[c->nalways++] = k;
    }
    if (c->nlit) {
        qsort(c->lit, c->nlit, sizeof *c->lit, by_lit);
        size_t cap = 16;
        while (cap < 2 * c->nlit)
            cap *= 2;
        c->ltab = malloc(cap * sizeof *c->ltab);
        if (!c->ltab)
            return ERR_NOMEM;
        for (size_t p = 0; p < cap; p++)
            c->ltab[p] = SIZE_MAX;
        c->ltab_mask = cap - 1;
        for (size_t i = 0; i < c->nlit; i++) {
            if (i && strcmp(c->lit[i].name, c->lit[i - 1].name) == 0)
                continue;
            size_t p = (size_t)str_hash(c->lit[i].name, strlen(c->lit[i].name)) & c->ltab_mask;
            while (c->ltab[p] != SIZE_MAX)
                p = (p + 1) & c->ltab_mask;
            c->ltab[p] = i;
        }
    }
    for (size_t k = 0; k < c->nws; k++) {
        WState *s = &c->ws[k];
        s->first_row = s->first_hit_row = SIZE_MAX;
        if (k < st->nwaivers)
            s->w = &st->waivers[k];
        else if (in->items[k - st->nwaivers].kind == RULE_INLINE_WAIVE)
            s->w = &in->items[k - st->nwaivers].waiver;
    }
    return ERR_OK;
}

int chk_evaluate(const RuleSet *rs, const IntentSet *in, const Design *ds, const Joined *j, const ChkOptions *opt,
                 Findings *out, DiagList *d)
{
    static const ChkOptions none = {0, 0};
    memset(out, 0, sizeof *out);
    arena_init(&out->arena);
    Ctx c;
    if (ctx_init(&c, rs, in, ds, j, opt ? opt : &none, out, d) != ERR_OK) {
        ctx_free(&c);
        chk_free(out);
        return diag_nomem(d);
    }
    Need need[CHECK_COUNT];
    for (size_t i = 0; i < j->n && !c.oom && !c.limit; i++) {
        const Row *r = &j->rows[i];
        resolve_and_select(&c, i, r->dev, need);
        if (c.oom || c.limit)
            break;
        size_t first = out->n;
        check_row(&c, i, r, need);
        apply_waivers(&c, first, i);
    }
    if (!c.oom && !c.limit)
        check_groups(&c);
    if (!c.oom && !c.limit)
        check_waivers(&c);
    if (!c.oom && !c.limit)
        selector_warnings(&c);
    int rc = c.oom ? ERR_NOMEM : c.limit ? ERR_LIMIT : ERR_OK;
    ctx_free(&c);
    if (rc == ERR_OK && sort_findings(out, j->n) != ERR_OK)
        rc = ERR_NOMEM;
    if (rc != ERR_OK) {
        chk_free(out);
        if (rc == ERR_NOMEM)
            diag_nomem(d);
    }
    return rc;
}

int chk_run(const RuleSet *rs, const Design *ds, const Joined *j, Findings *out)
{
    DiagList d;
    diag_init(&d);
    int rc = chk_evaluate(rs, NULL, ds, j, NULL, out, &d);
    diag_free(&d);
    return rc;
}

void chk_free(Findings *f)
{
    if (!f)
        return;
    free(f->items);
    free(f->loose);
    arena_free(&f->arena);
    memset(f, 0, sizeof *f);
}

int32_t chk_today(void)
{
    time_t t = time(NULL);
    struct tm tm;
    if (t == (time_t)-1 || !localtime_r(&t, &tm))
        return 0;
    return (int32_t)((tm.tm_year + 1900) * 10000 + (tm.tm_mon + 1) * 100 + tm.tm_mday);
}

/* ---- explain ---- */

typedef struct {
    CheckId k;
    const Req *r;    /* NULL: the check's own limit */
    RuleOrigin from;
} Trace;

static int origin_words(Buf *b, RuleOrigin o)
{
    if (!o.file)
        return buf_puts(b, "?");
    return o.line ? buf_printf(b, "%s:%u", o.file, o.line) : buf_puts(b, o.file);
}

static int push_trace(Trace **t, size_t *n, size_t *cap, Trace v)
{
    return BUF_PUSH(*t, *n, *cap, v);
}

/* The other devices of the group statement g that form dv's group (same parent instance unless
 * the names are written out in full). */
static int group_partners(const RuleGroup *g, const Design *ds, const Device *dv, RuleMatcher *m, Buf *b, DiagList *d)
{
    const char *const *listed;
    size_t nl;
    int is_listed = rule_sel_listed(g->sel, &listed, &nl);
    size_t pl = grp_parent_len(dv->name), n = 0;
    int rc = ERR_OK;
    for (size_t i = 0; i < ds->ndevs && rc == ERR_OK; i++) {
        const Device *o = &ds->devs[i];
        if (o == dv)
            continue;
        if (!is_listed && (grp_parent_len(o->name) != pl || strncmp(o->name, dv->name, pl) != 0))
            continue;
        int h = rule_sel_match(g->sel, o, m, NULL, d);
        if (h < 0)
            return ERR_LIMIT;
        if (h)
            rc = buf_printf(b, "%s%s", n++ ? ", " : "", o->name);
    }
    if (!n && rc == ERR_OK)
        rc = buf_puts(b, "no other device (nothing to compare)");
    return rc;
}

static int explain_one(const RuleSet *rs, const IntentSet *in, const Design *ds, const Joined *j, const Findings *fs,
                       size_t row, RuleMatcher *m, Buf *b, DiagList *d)
{
    const Device *dv = &ds->devs[row];
    const RuleStatements *st = rule_statements(rs);
    char w[48], l[48], x[48];
    int rc = buf_printf(b, "%s: %s, model %s%s%s, W/L %s/%s", dv->name,
                        dv->type == MOS_NMOS ? "nmos" : dv->type == MOS_PMOS ? "pmos" : "type unknown",
                        dv->model ? dv->model : "?", dv->cell ? ", in subcircuit " : " (top level)",
                        dv->cell ? dv->cell : "", rep_eng(dv->w, "", w, sizeof w), rep_eng(dv->l, "", l, sizeof l));
    if (dv->m != 1.0)
        rc |= buf_printf(b, " m=%g", dv->m);
    if (dv->nf != 1.0)
        rc |= buf_printf(b, " nf=%g", dv->nf);
    SrcLoc cl = card_loc(ds, dv);
    rc |= buf_printf(b, "\n  %-12s%s:%u\n", "card", cl.file ? cl.file : "?", cl.line);
    const BandRule *br = rule_band_rule(rs, dv);
    rc |= buf_printf(b, "  %-12sstrong below %s [", "regions", rep_eng(br->bands.strong_below, "/V", x, sizeof x));
    rc |= origin_words(b, br->field_from[BAND_STRONG_BELOW]);
    rc |= buf_printf(b, "], weak above %s [", rep_eng(br->bands.weak_above, "/V", x, sizeof x));
    rc |= origin_words(b, br->field_from[BAND_WEAK_ABOVE]);
    rc |= buf_printf(b, "], off below %s per square [", rep_eng(br->bands.off_below, "A", x, sizeof x));
    rc |= origin_words(b, br->field_from[BAND_OFF_BELOW]);
    rc |= buf_printf(b, "], slope factor %g [", br->slope);
    rc |= origin_words(b, br->field_from[BAND_SLOPE]);
    rc |= buf_puts(b, "]\n");
    if (rc != ERR_OK)
        return ERR_NOMEM;

    /* every statement that gives a requirement to dv, in the order they apply */
    Trace *tr = NULL;
    size_t ntr = 0, captr = 0;
    Need need[CHECK_COUNT];
    need_init(rs, need);
    static const CheckId lim[] = {CHECK_MARGIN, CHECK_GAIN};
    for (size_t k = 0; k < 2; k++)
        if (need[lim[k]].set)
            rc |= push_trace(&tr, &ntr, &captr, (Trace){lim[k], NULL, need[lim[k]].from});
    for (size_t k = 0; k < st->nsized; k++) {
        int h = rule_sel_match(st->sized[k].sel, dv, m, NULL, d);
        if (h < 0) {
            free(tr);
            return ERR_LIMIT;
        }
        for (size_t q = 0; h && q < st->sized[k].nreqs; q++) {
            need_apply(rs, need, &st->sized[k].reqs[q]);
            rc |= push_trace(&tr, &ntr, &captr, (Trace){st->sized[k].reqs[q].check, &st->sized[k].reqs[q],
                                                        st->sized[k].reqs[q].from});
        }
    }
    size_t ne;
    const IntentEntry *e = intent_card(in, dv->card, &ne);
    for (size_t q = 0; q < ne; q++)
        for (size_t z = 0; e[q].kind == RULE_INLINE_SIZED && z < e[q].sized.nreqs; z++) {
            need_apply(rs, need, &e[q].sized.reqs[z]);
            rc |= push_trace(&tr, &ntr, &captr, (Trace){e[q].sized.reqs[z].check, &e[q].sized.reqs[z],
                                                        e[q].sized.reqs[z].from});
        }
    need_finish(rs, need);
    if (rc != ERR_OK) {
        free(tr);
        return ERR_NOMEM;
    }
    const Need *reg = &need[CHECK_REGION];
    int sat_meant = !reg->set || (reg->req->regions & SAT_BITS);
    static const CheckId order[] = {CHECK_REGION, CHECK_GMID, CHECK_MARGIN, CHECK_GAIN, CHECK_FT, CHECK_IC,
                                    CHECK_ID, CHECK_VOV};
    Buf iw = BUF_INIT;
    for (size_t o = 0; o < sizeof order / sizeof order[0]; o++) {
        CheckId k = order[o];
        const Need *n = &need[k];
        size_t last = SIZE_MAX, nprev = 0;
        for (size_t t = 0; t < ntr; t++)
            if (tr[t].k == k) {
                if (last != SIZE_MAX)
                    nprev++;
                last = t;
            }
        rc |= buf_printf(b, "  %-12s", rule_check_name[k]);
        if (last == SIZE_MAX) {
            rc |= buf_puts(b, "none\n");
            continue;
        }
        const CheckRule *cr = rule_check(rs, k);
        if (n->ignored || (!cr->enabled && tr[last].r && tr[last].r->form != REQ_DROP)) {
            intended_words(k, n, &iw);
            rc |= buf_printf(b, "%s, but the check is switched off [", iw.data ? iw.data : "");
            rc |= origin_words(b, cr->from);
            rc |= buf_puts(b, "]");
        } else if (!n->set) {
            rc |= buf_printf(b, "none: taken away by 'no %s' [", k == CHECK_MARGIN ? "margin" : label(k));
            rc |= origin_words(b, tr[last].from);
            rc |= buf_puts(b, "]");
        } else {
            intended_words(k, n, &iw);
            rc |= buf_printf(b, "%s, %s [", iw.data ? iw.data : "", rule_severity_name[n->sev]);
            rc |= origin_words(b, n->from);
            rc |= buf_puts(b, n->req ? "]" : "] (the check's own limit)");
            if ((k == CHECK_MARGIN || k == CHECK_GAIN) && !sat_meant)
                rc |= buf_puts(b, ", not applied: no saturated region is intended");
        }
        if (nprev) {
            rc |= buf_puts(b, "; overrides");
            size_t shown = 0;
            for (size_t t = 0; t < last; t++)
                if (tr[t].k == k) {
                    rc |= buf_puts(b, shown++ ? ", " : " ");
                    rc |= origin_words(b, tr[t].from);
                }
        }
        rc |= buf_puts(b, "\n");
    }
    buf_free(&iw);
    free(tr);
    static const CheckId dflt[] = {CHECK_TRIODE, CHECK_OFF, CHECK_NODATA};
    for (size_t k = 0; k < 3; k++) {
        const CheckRule *cr = rule_check(rs, dflt[k]);
        rc |= buf_printf(b, "  %-12s", rule_check_name[dflt[k]]);
        if (!cr->enabled)
            rc |= buf_puts(b, "switched off [");
        else if (reg->set && dflt[k] != CHECK_NODATA)
            rc |= buf_puts(b, "not applied: a region is intended for this device [");
        else
            rc |= buf_printf(b, "%s [", rule_severity_name[cr->sev]);
        rc |= origin_words(b, cr->enabled && reg->set && dflt[k] != CHECK_NODATA ? reg->from : cr->from);
        rc |= buf_puts(b, "]\n");
    }
    /* groups and waivers */
    for (size_t g = 0; g < st->ngroups && rc == ERR_OK; g++) {
        int h = rule_sel_match(st->groups[g].sel, dv, m, NULL, d);
        if (h < 0)
            return ERR_LIMIT;
        if (!h)
            continue;
        rc |= buf_printf(b, "  %-12swith ", "matched");
        int pr = group_partners(&st->groups[g], ds, dv, m, b, d);
        if (pr == ERR_LIMIT)
            return ERR_LIMIT;
        rc |= pr;
        rc |= buf_puts(b, " [");
        rc |= origin_words(b, st->groups[g].from);
        rc |= buf_puts(b, st->groups[g].ratio ? "] (ratio as written)\n" : "] (ratio from W*m/L)\n");
    }
    for (size_t k = 0; k < st->nwaivers + ne && rc == ERR_OK; k++) {
        const RuleWaiver *wv;
        if (k < st->nwaivers) {
            wv = &st->waivers[k];
            int h = rule_sel_match(wv->sel, dv, m, NULL, d);
            if (h < 0)
                return ERR_LIMIT;
            if (!h)
                continue;
        } else {
            if (e[k - st->nwaivers].kind != RULE_INLINE_WAIVE)
                continue;
            wv = &e[k - st->nwaivers].waiver;
        }
        rc |= buf_printf(b, "  %-12s", "waived");
        int first = 1;
        for (int q = 0; q < CHECK_COUNT; q++)
            if (wv->checks & (1u << q)) {
                rc |= buf_printf(b, "%s%s", first ? "" : " ", rule_check_name[q]);
                first = 0;
            }
        if (wv->until) {
            char dw[16];
            date_words(wv->until, dw, sizeof dw);
            rc |= buf_printf(b, " until %s", dw);
        }
        rc |= buf_printf(b, " because %s [", wv->reason);
        rc |= origin_words(b, wv->from);
        rc |= buf_puts(b, "]\n");
    }
    /* the operating point and the findings */
    if (j && row < j->n) {
        const Row *r = &j->rows[row];
        if (!r->op) {
            rc |= buf_printf(b, "  %-12sno operating-point data in the dump\n", "measured");
        } else {
            const Figures *f = &r->fig;
            char a[48], c2[48], g[48], h[48], v[48];
            double ic = fig_ic_from_gmid(f->gm_id, br->slope, fig_ut(ds->temp_c));
            rc |= buf_printf(b, "  %-12s%s, gm/ID %s, ID %s, VDS-VDSAT %s, gm/gds %s, fT %s, VOV %s, IC ", "measured",
                             fig_region_name[(unsigned)f->region < REGION_COUNT ? f->region : 0],
                             rep_eng(f->gm_id, "/V", a, sizeof a), rep_eng(f->id, "A", c2, sizeof c2),
                             rep_eng(f->margin, "V", g, sizeof g), rep_eng(f->gain, "", h, sizeof h),
                             rep_eng(f->ft, "Hz", v, sizeof v), rep_eng(f->vov, "V", x, sizeof x));
            rc |= isnan(ic) ? buf_puts(b, "-") : buf_printf(b, "%.3g", ic);
            rc |= buf_printf(b, " (n %g, %g C)\n", br->slope, ds->temp_c);
        }
    }
    if (fs)
        for (size_t k = 0; k < fs->n && rc == ERR_OK; k++) {
            const Finding *f = &fs->items[k];
            if (f->row != row)
                continue;
            rc |= buf_printf(b, "  %-12s%s %s: %s [rule ", "finding", rule_severity_name[f->sev],
                             rule_check_name[f->check], f->message ? f->message : "");
            rc |= origin_words(b, f->rule);
            rc |= buf_puts(b, "]");
            if (f->waived) {
                rc |= buf_printf(b, " WAIVED because %s [", f->waiver_reason ? f->waiver_reason : "");
                rc |= origin_words(b, f->waiver);
                rc |= buf_puts(b, "]");
            }
            rc |= buf_puts(b, "\n");
        }
    return rc == ERR_OK ? ERR_OK : ERR_NOMEM;
}

int chk_explain(const RuleSet *rs, const IntentSet *in, const Design *ds, const Joined *j, const Findings *f,
                const char *device, Buf *out, DiagList *d)
{
    RuleMatcher *m = rule_matcher_new();
    if (!m)
        return diag_nomem(d);
    size_t hits = 0;
    int rc = ERR_OK;
    for (size_t i = 0; i < ds->ndevs && rc == ERR_OK; i++) {
        if (!rule_glob(device, ds->devs[i].name))
            continue;
        if (hits++ && buf_puts(out, "\n") != ERR_OK)
            rc = ERR_NOMEM;
        if (rc == ERR_OK)
            rc = explain_one(rs, in, ds, j, f, i, m, out, d);
    }
    rule_matcher_free(m);
    if (rc == ERR_NOMEM)
        return diag_nomem(d);
    if (rc == ERR_OK && !hits)
        return diag_add(d, DIAG_ERROR, (SrcLoc){0},
                        "explain: no device of the netlist is called '%s' (give a hierarchical name such as xamp.m1, "
                        "or a glob such as 'xamp.*')",
                        device);
    return rc;
}
