/* report_json: the machine-readable report (schema 3, documented in README): tool and inputs, the
 * corners, one object per device with its sizes and, per corner, its normalized operating point and
 * figures, the findings of every corner with the worst corner of their device and check, the
 * comparison with a baseline, and a summary. SI units throughout; an absent value is never 0: its
 * key is left out of the objects in arrays (null at the top level). Values as read or given are
 * written with the fewest digits that read back to the same double, figures biaslint computed with
 * six significant digits. One device or finding per line, without spaces, so the file diffs and
 * greps well and a million devices stay a few hundred bytes each.
 *
 * With one corner a device keeps the flat layout of schema 1 (figures beside the name); with
 * several, its figures sit in a "corners" array, one object per corner.
 *
 * The text is built in a buffer of its own and written in large pieces (no stdio call per key). */
#include "report.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "asyncw.h"
#include "diag.h"
#include "numfmt.h"


/* ---- the writer: the report is built in a buffer and written in large pieces ---- */

#define JW_FLUSH ((size_t)1 << 18) /* bytes kept before a write to the file */

typedef struct {
    FILE *fp;   /* where full buffers go */
    AsyncW *aw; /* the thread that writes them, or NULL: written here */
    char *p;
    size_t n, cap;
    int bad;    /* out of memory or a write failed: the rest is dropped, the report fails */
    int io;     /* it was a write */
} JW;

/* Make room for k more bytes: writes out what waits, or grows. 0 when it cannot. */
static int jw_make_room(JW *w, size_t k)
{
    if (w->bad)
        return 0;
    if (w->n && w->n + k > w->cap) {
        if (w->aw) {
            w->p = aw_swap(w->aw, w->p, w->n, &w->cap);
        } else if (fwrite(w->p, 1, w->n, w->fp) != w->n) {
            return w->io = w->bad = 1, 0;
        }
        w->n = 0;
    }
    if (w->n + k <= w->cap)
        return 1;
    size_t cap = w->cap ? w->cap : JW_FLUSH;
    while (cap < w->n + k) {
        if (cap > SIZE_MAX / 2)
            return w->bad = 1, 0;
        cap *= 2;
    }
    char *p = realloc(w->p, cap);
    if (!p)
        return w->bad = 1, 0;
    w->p = p;
    w->cap = cap;
    return 1;
}

static inline int jw_room(JW *w, size_t k)
{
    return w->cap - w->n >= k ? 1 : jw_make_room(w, k);
}

static inline void jw_raw(JW *w, const char *s, size_t n)
{
    if (jw_room(w, n)) {
        memcpy(w->p + w->n, s, n);
        w->n += n;
    }
}

#define JW_LIT(w, s) jw_raw((w), (s), sizeof(s) - 1)

/* Out to the file, and the buffer freed. ERR_OK, ERR_NOMEM or ERR_IO. */
static int jw_close(JW *w)
{
    int io = w->io;
    if (w->aw) {
        if (!w->bad && w->n) {
            w->p = aw_swap(w->aw, w->p, w->n, &w->cap);
            w->n = 0;
        }
        io |= aw_finish(w->aw) != ERR_OK;
        w->aw = NULL;
    } else if (!w->bad && w->n && fwrite(w->p, 1, w->n, w->fp) != w->n) {
        io = 1;
    }
    free(w->p);
    w->p = NULL;
    w->n = w->cap = 0;
    return io ? ERR_IO : w->bad ? ERR_NOMEM : ERR_OK;
}

/* s escaped, without quotes. */
static void jw_esc(JW *w, const char *s)
{
    size_t n = strlen(s);
    if (jw_room(w, n * REP_JSON_ESC_MAX))
        w->n += rep_json_escape(w->p + w->n, s, n);
}

/* A string in quotes, escaped; null for NULL. */
static void jw_str(JW *w, const char *s)
{
    if (!s) {
        JW_LIT(w, "null");
        return;
    }
    JW_LIT(w, "\"");
    jw_esc(w, s);
    JW_LIT(w, "\"");
}

/* ,"k": (keys are this file's plain names) */
static inline void jw_key(JW *w, const char *k)
{
    size_t n = strlen(k);
    if (jw_room(w, n + 4)) {
        char *d = w->p + w->n;
        d[0] = ',';
        d[1] = '"';
        memcpy(d + 2, k, n);
        d[n + 2] = '"';
        d[n + 3] = ':';
        w->n += n + 4;
    }
}

/* The keys below are left out when their value is absent (null): a reader takes a missing key for
 * null. */
static inline void kv_str(JW *w, const char *k, const char *v)
{
    if (v) {
        jw_key(w, k);
        jw_str(w, v);
    }
}

static inline void jw_num(JW *w, double v)
{
    if (!isfinite(v))
        JW_LIT(w, "null");
    else if (jw_room(w, NUMFMT_SIZE))
        w->n += numfmt_json(w->p + w->n, v);
}

/* A number as read or as given: the fewest digits that read back to the same double. */
static inline void kv_num(JW *w, const char *k, double v)
{
    if (isfinite(v)) {
        jw_key(w, k);
        jw_num(w, v);
    }
}

/* A figure biaslint computed: six significant digits, the precision of a simulator's printout
 * (more would only show rounding noise of the arithmetic). */
#define FIG_DIGITS 6
static inline void kv_fig(JW *w, const char *k, double v)
{
    if (isfinite(v)) {
        jw_key(w, k);
        if (jw_room(w, NUMFMT_SIZE))
            w->n += numfmt_g(w->p + w->n, v, FIG_DIGITS);
    }
}

static inline void jw_uint(JW *w, size_t v)
{
    char b[24];
    size_t n = sizeof b;
    do
        b[--n] = (char)('0' + v % 10);
    while (v /= 10);
    jw_raw(w, b + n, sizeof b - n);
}

static inline void kv_uint(JW *w, const char *k, size_t v)
{
    jw_key(w, k);
    jw_uint(w, v);
}

static inline void kv_line(JW *w, const char *k, uint32_t line)
{
    if (line)
        kv_uint(w, k, line);
}

static inline void kv_bool(JW *w, const char *k, int v)
{
    jw_key(w, k);
    if (v)
        JW_LIT(w, "true");
    else
        JW_LIT(w, "false");
}

/* The figures of one row, each key preceded by ",". */
static void figures(JW *w, const Row *r)
{
    const Figures *f = &r->fig;
    kv_bool(w, "has_data", r->op != NULL);
    kv_num(w, "id", f->id);
    kv_num(w, "gm", f->gm);
    kv_num(w, "gds", f->gds);
    kv_num(w, "gmbs", f->gmbs);
    kv_num(w, "vgs", f->vgs);
    kv_num(w, "vds", f->vds);
    kv_num(w, "vsb", f->vsb);
    kv_num(w, "vth", f->vth);
    kv_num(w, "vdsat", f->vdsat);
    kv_num(w, "cgg", f->cgg);
    kv_str(w, "cgg_source", !r->op || isnan(f->cgg) ? NULL : f->cgg_summed ? "cgs+cgd+cgb" : "cgg");
    kv_bool(w, "cgg_overlap", r->op && f->cgg_overlap);
    kv_fig(w, "gm_id", f->gm_id);
    kv_fig(w, "id_w", f->id_w);
    kv_fig(w, "gain", f->gain);
    kv_fig(w, "ft", f->ft);
    kv_fig(w, "vov", f->vov);
    kv_fig(w, "margin", f->margin);
    kv_str(w, "region", fig_region_name[(unsigned)f->region < REGION_COUNT && r->op ? f->region : 0]);
    kv_bool(w, "swapped", r->op && f->swapped);
    kv_str(w, "source", rep_source(r));
    kv_str(w, "table", rep_table_path(r));
    double sw = NAN, g = NAN;
    rep_suggestion(r, &sw, &g);
    kv_fig(w, "suggest_w", sw);
    kv_fig(w, "suggest_gm_id", g);
}

static void device(const ReportCtx *c, JW *w, size_t i)
{
    const Row *r0 = &c->corners[0].joined->rows[i];
    const Device *dv = r0->dev;
    const char *file;
    uint32_t line;
    rep_card_place(c->design, dv, &file, &line);
    JW_LIT(w, "    {\"name\":");
    jw_str(w, dv->name);
    kv_str(w, "model", dv->model);
    kv_str(w, "type", rep_type_name(dv->type));
    kv_str(w, "cell", dv->cell);
    kv_num(w, "w", dv->w);
    kv_num(w, "l", dv->l);
    kv_num(w, "m", dv->m);
    kv_num(w, "nf", dv->nf);
    kv_str(w, "file", file);
    kv_line(w, "line", line);
    if (c->ncorners == 1) {
        figures(w, r0);
    } else {
        JW_LIT(w, ",\"corners\":[");
        for (size_t k = 0; k < c->ncorners; k++) {
            if (k)
                JW_LIT(w, ",{\"corner\":");
            else
                JW_LIT(w, "{\"corner\":");
            jw_str(w, c->corners[k].label);
            figures(w, &c->corners[k].joined->rows[i]);
            JW_LIT(w, "}");
        }
        JW_LIT(w, "]");
    }
    JW_LIT(w, "}");
}

static const char *sev_name(Severity s)
{
    return rule_severity_name[(unsigned)s < SEV_COUNT ? s : 0];
}

static void origin(JW *w, const char *k, RuleOrigin o);

/* The keys every finding has, new or resolved, after "device". */
static void finding_core(JW *w, const char *check, Severity sev, double value, double limit, const char *msg,
                         const char *file, uint32_t line, RuleOrigin rule)
{
    kv_str(w, "check", check);
    kv_str(w, "severity", sev_name(sev));
    kv_fig(w, "value", value);
    kv_num(w, "limit", limit);
    kv_str(w, "message", msg);
    kv_str(w, "file", file);
    kv_line(w, "line", line);
    origin(w, "rule", rule);
    kv_str(w, "rule_file", rule.file);
    kv_line(w, "rule_line", rule.line);
}

/* "FILE:LINE" of a rule or waiver; left out when it has no file. */
static void origin(JW *w, const char *k, RuleOrigin o)
{
    if (!o.file)
        return;
    jw_key(w, k);
    JW_LIT(w, "\"");
    jw_esc(w, o.file);
    if (o.line) {
        JW_LIT(w, ":");
        jw_uint(w, o.line);
    }
    JW_LIT(w, "\"");
}

/* The keys of intents, matched groups and waivers (left out when they do not apply). */
static void intent_keys(JW *w, const Finding *f)
{
    kv_str(w, "intended", f->intended);
    kv_num(w, "want_lo", f->want_lo);
    kv_num(w, "want_hi", f->want_hi);
    kv_str(w, "direction", f->direction);
    kv_str(w, "group", f->group);
    kv_bool(w, "waived", f->waived);
    kv_str(w, "waiver_reason", f->waived ? f->waiver_reason : NULL);
    origin(w, "waiver", f->waived ? f->waiver : (RuleOrigin){NULL, 0});
}

static void finding(const ReportCtx *c, JW *w, const RepGroup *g, RepRef ref)
{
    const Joined *j = c->corners[ref.corner].joined;
    const Finding *f = rep_finding(c, ref);
    JW_LIT(w, "    {\"device\":");
    jw_str(w, f->row < j->n ? j->rows[f->row].dev->name : NULL);
    finding_core(w, rep_check_name((int)f->check), f->sev, f->value, f->limit, f->message, f->loc.file, f->loc.line,
                 f->rule);
    intent_keys(w, f);
    kv_str(w, "corner", c->corners[ref.corner].label);
    kv_str(w, "worst_corner", c->corners[g->worst.corner].label);
    kv_uint(w, "in_corners", g->n);
    if (c->baseline) {
        BlStatus st = rep_status(c, ref.corner, ref.index);
        kv_str(w, "status", st == BL_NEW ? "new" : "unchanged");
        int8_t was = c->baseline->was_sev ? c->baseline->was_sev[c->prep->base[ref.corner] + ref.index] : -1;
        kv_str(w, "was_severity", was >= 0 ? sev_name((Severity)was) : NULL);
    }
    kv_bool(w, "fails", rep_fails(c, ref.corner, ref.index));
    JW_LIT(w, "}");
}

static const char *format_word(const OpTable *t)
{
    if (!t)
        return NULL;
    switch (t->format) {
    case OPFMT_SHOW: return "show";
    case OPFMT_RAW: return "raw";
    case OPFMT_CSV: return "csv";
    default: return NULL;
    }
}

static size_t without_data(const Joined *j)
{
    size_t n = 0;
    for (size_t i = 0; i < j->n; i++)
        n += j->rows[i].op == NULL;
    return n;
}

/* Opens the k-th item of an array: a new line, indented. */
static void item(JW *w, size_t k)
{
    if (k)
        JW_LIT(w, ",\n    {");
    else
        JW_LIT(w, "\n    {");
}

/* Closes an array of n items. */
static void close_array(JW *w, size_t n)
{
    if (n)
        JW_LIT(w, "\n  ]");
    else
        JW_LIT(w, "]");
}

static void corners(const ReportCtx *c, JW *w)
{
    JW_LIT(w, ",\n  \"corners\":[");
    for (size_t k = 0; k < c->ncorners; k++) {
        const RepCorner *rc = &c->corners[k];
        const Findings *fs = rc->findings;
        item(w, k);
        JW_LIT(w, "\"label\":");
        jw_str(w, rc->label);
        kv_str(w, "op", rc->op_path);
        kv_str(w, "op_format", format_word(rc->op));
        kv_num(w, "op_temp_c", rc->op ? rc->op->temp_c : NAN);
        kv_uint(w, "matched", rc->joined->nmatched);
        kv_uint(w, "without_data", without_data(rc->joined));
        kv_uint(w, "orphans", rc->joined->norphans);
        kv_uint(w, "errors", fs ? fs->count[SEV_ERROR] : 0);
        kv_uint(w, "warnings", fs ? fs->count[SEV_WARNING] : 0);
        kv_uint(w, "infos", fs ? fs->count[SEV_INFO] : 0);
        JW_LIT(w, "}");
    }
    close_array(w, c->ncorners);
}

static void baseline(const ReportCtx *c, JW *w)
{
    const BlCompare *b = c->baseline;
    const Joined *j = c->corners[0].joined;
    JW_LIT(w, ",\n  \"baseline\":{\"file\":");
    jw_str(w, b->path);
    kv_uint(w, "new", b->nnew);
    kv_uint(w, "new_failing", b->nnew_failing);
    kv_uint(w, "unchanged", b->nunchanged);
    kv_uint(w, "resolved", b->nresolved);
    kv_uint(w, "devices_not_in_baseline", b->ndevices_unmatched);
    JW_LIT(w, ",\"resolved_findings\":[");
    for (size_t i = 0; i < b->nresolved; i++) {
        const BlOldFinding *o = &b->resolved[i];
        item(w, i);
        JW_LIT(w, "\"device\":");
        jw_str(w, o->device);
        /* the baseline's rule origin is kept as written there */
        finding_core(w, o->check, o->sev, o->value, o->limit, o->message, o->file, o->line, (RuleOrigin){NULL, 0});
        kv_str(w, "corner", o->corner);
        kv_str(w, "status", "resolved");
        kv_str(w, "was_rule", o->rule);
        JW_LIT(w, "}");
    }
    close_array(w, b->nresolved);
    JW_LIT(w, ",\"region_changes\":[");
    for (size_t i = 0; i < b->nregions; i++) {
        const BlRegionChange *rg = &b->regions[i];
        const Row *r = rg->row < j->n ? &c->corners[rg->corner].joined->rows[rg->row] : NULL;
        item(w, i);
        JW_LIT(w, "\"device\":");
        jw_str(w, r ? r->dev->name : NULL);
        kv_str(w, "corner", c->corners[rg->corner].label);
        kv_str(w, "was", rg->was);
        kv_str(w, "now", r ? fig_region_name[(unsigned)r->fig.region < REGION_COUNT && r->op ? r->fig.region : 0]
                           : NULL);
        JW_LIT(w, "}");
    }
    close_array(w, b->nregions);
    JW_LIT(w, "}");
}

static int write_json(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    const RepPrep *p = c->prep;
    const Joined *j0 = c->corners[0].joined;
    /* a thread of its own writes the file while the next piece is formatted */
    JW jw = {fp, aw_start(fp), NULL, 0, 0, 0, 0}, *w = &jw;
    JW_LIT(w, "{\n  \"tool\":\"biaslint\"");
    kv_str(w, "version", BIASLINT_VERSION);
    kv_uint(w, "schema", REP_JSON_SCHEMA);
    JW_LIT(w, ",\n  \"netlist\":");
    jw_str(w, c->netlist_path);
    jw_key(w, "op"); /* the top level keeps its keys, null or not */
    jw_str(w, c->corners[0].op_path);
    jw_key(w, "op_format");
    jw_str(w, format_word(c->corners[0].op));
    jw_key(w, "temp_c");
    jw_num(w, c->design ? c->design->temp_c : NAN);
    corners(c, w);
    JW_LIT(w, ",\n  \"devices\":[");
    for (size_t i = 0; i < j0->n; i++) {
        if (i)
            JW_LIT(w, ",\n");
        else
            JW_LIT(w, "\n");
        device(c, w, i);
    }
    close_array(w, j0->n);
    JW_LIT(w, ",\n  \"findings\":[");
    size_t nf = 0;
    for (size_t gi = 0; gi < p->ngroups; gi++) {
        const RepGroup *g = &p->groups[gi];
        for (size_t q = g->first; q < g->first + g->n; q++) {
            if (nf++)
                JW_LIT(w, ",\n");
            else
                JW_LIT(w, "\n");
            finding(c, w, g, p->refs[q]);
        }
    }
    close_array(w, nf);
    JW_LIT(w, ",\n  \"orphan_records\":[");
    size_t no = 0, count[SEV_COUNT], matched = 0, without = 0, orphans = 0;
    rep_counts(c, count);
    for (size_t k = 0; k < c->ncorners; k++) {
        const RepCorner *rc = &c->corners[k];
        for (size_t i = 0; i < rc->joined->norphans; i++) {
            const OpRecord *r = rc->joined->orphans[i];
            item(w, no++);
            JW_LIT(w, "\"name\":");
            jw_str(w, r->name);
            kv_str(w, "file", r->loc.file);
            kv_line(w, "line", r->loc.line);
            kv_str(w, "corner", rc->label);
            JW_LIT(w, "}");
        }
        matched += rc->joined->nmatched;
        without += without_data(rc->joined);
        orphans += rc->joined->norphans;
    }
    close_array(w, no);
    JW_LIT(w, ",\n  \"loose_findings\":[");
    size_t nloose;
    const Finding *loose = rep_loose(c, &nloose);
    for (size_t i = 0; i < nloose; i++) {
        const Finding *f = &loose[i];
        item(w, i);
        JW_LIT(w, "\"device\":null");
        finding_core(w, rep_check_name((int)f->check), f->sev, f->value, f->limit, f->message, f->loc.file,
                     f->loc.line, f->rule);
        intent_keys(w, f);
        JW_LIT(w, "}");
    }
    close_array(w, nloose);
    if (c->baseline)
        baseline(c, w);
    Severity fl = (unsigned)c->fail_level < SEV_COUNT ? c->fail_level : SEV_ERROR;
    size_t failing = rep_failing(c);
    JW_LIT(w, ",\n  \"summary\":{\"devices\":");
    jw_uint(w, j0->n);
    kv_uint(w, "corners", c->ncorners);
    kv_uint(w, "errors", count[SEV_ERROR]);
    kv_uint(w, "warnings", count[SEV_WARNING]);
    kv_uint(w, "infos", count[SEV_INFO]);
    kv_uint(w, "waived", c->prep->nwaived);
    kv_uint(w, "matched", matched);
    kv_uint(w, "without_data", without);
    kv_uint(w, "orphans", orphans);
    kv_str(w, "fail_level", c->fail_new ? "new" : rule_severity_name[fl]);
    kv_uint(w, "failing", failing);
    kv_bool(w, "failed", failing > 0);
    JW_LIT(w, "}\n}\n");
    int rc = jw_close(w);
    if (rc == ERR_OK && fflush(fp) != 0)
        rc = ERR_IO;
    return rc;
}

const ReportWriter rep_json_writer = {"json", "json", write_json};
