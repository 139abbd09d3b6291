/* report_json: the machine-readable report (schema 2, documented in README): tool and inputs, the
 * corners, one object per device with its sizes and, per corner, its normalized operating point and
 * figures, the findings of every corner with the worst corner of their device and check, the
 * comparison with a baseline, and a summary. SI units throughout; an absent value is null, never 0;
 * numbers are written with the fewest digits that read back to the same double. One device or
 * finding per line, so the file diffs and greps well.
 *
 * With one corner a device keeps the flat layout of schema 1 (figures beside the name); with
 * several, its figures sit in a "corners" array, one object per corner. */
#include "report.h"

#include <math.h>
#include <string.h>

#include "diag.h"
#include "numfmt.h"

#define JSON_SCHEMA 2

static void key(FILE *fp, const char *k, int first)
{
    if (!first)
        fputs(", ", fp);
    rep_json_str(fp, k);
    fputs(": ", fp);
}

/* ", \"k\": " and text[0..n) in one write. A report of a million devices makes tens of millions of
 * these; one stdio call per key and value, instead of one per piece and per character, is most of
 * the writer's time. Keys are this file's own plain names; anything else goes the escaping way. */
static void kv_text(FILE *fp, const char *k, const char *text, size_t n)
{
    char b[160];
    size_t kn = strlen(k);
    int plain = kn + n + 6 <= sizeof b;
    for (size_t i = 0; plain && i < kn; i++)
        plain = k[i] >= 0x20 && k[i] < 0x7f && k[i] != '"' && k[i] != '\\';
    if (!plain) {
        key(fp, k, 0);
        fwrite(text, 1, n, fp);
        return;
    }
    memcpy(b, ", \"", 3);
    memcpy(b + 3, k, kn);
    memcpy(b + 3 + kn, "\": ", 3);
    memcpy(b + 6 + kn, text, n);
    fwrite(b, 1, kn + 6 + n, fp);
}

static void kv_str(FILE *fp, const char *k, const char *v)
{
    if (!v) {
        kv_text(fp, k, "null", 4);
        return;
    }
    char b[130];
    size_t n = 0;
    b[n++] = '"';
    for (const char *q = v; *q; q++) { /* a short name that needs no escape, quoted as it is */
        unsigned char ch = (unsigned char)*q;
        if (n >= sizeof b - 2 || ch < 0x20 || ch >= 0x80 || ch == '"' || ch == '\\') {
            key(fp, k, 0);
            rep_json_str(fp, v);
            return;
        }
        b[n++] = (char)ch;
    }
    b[n++] = '"';
    kv_text(fp, k, b, n);
}

static void kv_num(FILE *fp, const char *k, double v)
{
    char b[NUMFMT_SIZE];
    if (!isfinite(v))
        kv_text(fp, k, "null", 4);
    else
        kv_text(fp, k, b, numfmt_json(b, v)); /* as rep_json_num writes it */
}

static void kv_uint(FILE *fp, const char *k, size_t v)
{
    key(fp, k, 0);
    fprintf(fp, "%zu", v);
}

static void kv_line(FILE *fp, const char *k, uint32_t line)
{
    char b[12];
    size_t n = sizeof b;
    if (!line) {
        kv_text(fp, k, "null", 4);
        return;
    }
    for (uint32_t x = line; x; x /= 10)
        b[--n] = (char)('0' + x % 10);
    kv_text(fp, k, b + n, sizeof b - n);
}

static void kv_bool(FILE *fp, const char *k, int v)
{
    kv_text(fp, k, v ? "true" : "false", v ? 4 : 5);
}

/* The figures of one row, each key preceded by ", ". */
static void figures(FILE *fp, const Row *r)
{
    const Figures *f = &r->fig;
    kv_bool(fp, "has_data", r->op != NULL);
    kv_num(fp, "id", f->id);
    kv_num(fp, "gm", f->gm);
    kv_num(fp, "gds", f->gds);
    kv_num(fp, "gmbs", f->gmbs);
    kv_num(fp, "vgs", f->vgs);
    kv_num(fp, "vds", f->vds);
    kv_num(fp, "vsb", f->vsb);
    kv_num(fp, "vth", f->vth);
    kv_num(fp, "vdsat", f->vdsat);
    kv_num(fp, "cgg", f->cgg);
    kv_str(fp, "cgg_source", !r->op || isnan(f->cgg) ? NULL : f->cgg_summed ? "cgs+cgd+cgb" : "cgg");
    kv_bool(fp, "cgg_overlap", r->op && f->cgg_overlap);
    kv_num(fp, "gm_id", f->gm_id);
    kv_num(fp, "id_w", f->id_w);
    kv_num(fp, "gain", f->gain);
    kv_num(fp, "ft", f->ft);
    kv_num(fp, "vov", f->vov);
    kv_num(fp, "margin", f->margin);
    kv_str(fp, "region", fig_region_name[(unsigned)f->region < REGION_COUNT && r->op ? f->region : 0]);
    kv_bool(fp, "swapped", r->op && f->swapped);
    kv_str(fp, "source", rep_source(r));
    kv_str(fp, "table", rep_table_path(r));
    double w = NAN, g = NAN;
    rep_suggestion(r, &w, &g);
    kv_num(fp, "suggest_w", w);
    kv_num(fp, "suggest_gm_id", g);
}

static void device(const ReportCtx *c, FILE *fp, size_t i)
{
    const Row *r0 = &c->corners[0].joined->rows[i];
    const Device *dv = r0->dev;
    const char *file;
    uint32_t line;
    rep_card_place(c->design, dv, &file, &line);
    fputs("    {", fp);
    key(fp, "name", 1);
    rep_json_str(fp, dv->name);
    kv_str(fp, "model", dv->model);
    kv_str(fp, "type", rep_type_name(dv->type));
    kv_str(fp, "cell", dv->cell);
    kv_num(fp, "w", dv->w);
    kv_num(fp, "l", dv->l);
    kv_num(fp, "m", dv->m);
    kv_num(fp, "nf", dv->nf);
    kv_str(fp, "file", file);
    kv_line(fp, "line", line);
    if (c->ncorners == 1) {
        figures(fp, r0);
    } else {
        fputs(", \"corners\": [", fp);
        for (size_t k = 0; k < c->ncorners; k++) {
            fputs(k ? ", {" : "{", fp);
            key(fp, "corner", 1);
            rep_json_str(fp, c->corners[k].label);
            figures(fp, &c->corners[k].joined->rows[i]);
            fputc('}', fp);
        }
        fputc(']', fp);
    }
    fputc('}', fp);
}

static const char *sev_name(Severity s)
{
    return rule_severity_name[(unsigned)s < SEV_COUNT ? s : 0];
}

static void origin(FILE *fp, const char *k, RuleOrigin o);

/* The keys every finding has, new or resolved, after "device". */
static void finding_core(FILE *fp, const char *check, Severity sev, double value, double limit, const char *msg,
                         const char *file, uint32_t line, RuleOrigin rule)
{
    kv_str(fp, "check", check);
    kv_str(fp, "severity", sev_name(sev));
    kv_num(fp, "value", value);
    kv_num(fp, "limit", limit);
    kv_str(fp, "message", msg);
    kv_str(fp, "file", file);
    kv_line(fp, "line", line);
    origin(fp, "rule", rule);
    kv_str(fp, "rule_file", rule.file);
    kv_line(fp, "rule_line", rule.line);
}

static void origin(FILE *fp, const char *k, RuleOrigin o)
{
    key(fp, k, 0);
    if (!o.file) {
        fputs("null", fp);
        return;
    }
    fputc('"', fp);
    rep_json_raw(fp, o.file);
    if (o.line)
        fprintf(fp, ":%u", o.line);
    fputc('"', fp);
}

/* The keys of intents, matched groups and waivers (null when they do not apply). */
static void intent_keys(FILE *fp, const Finding *f)
{
    kv_str(fp, "intended", f->intended);
    kv_num(fp, "want_lo", f->want_lo);
    kv_num(fp, "want_hi", f->want_hi);
    kv_str(fp, "direction", f->direction);
    kv_str(fp, "group", f->group);
    kv_bool(fp, "waived", f->waived);
    kv_str(fp, "waiver_reason", f->waived ? f->waiver_reason : NULL);
    origin(fp, "waiver", f->waived ? f->waiver : (RuleOrigin){NULL, 0});
}

static void finding(const ReportCtx *c, FILE *fp, const RepGroup *g, RepRef ref)
{
    const Joined *j = c->corners[ref.corner].joined;
    const Finding *f = rep_finding(c, ref);
    fputs("    {", fp);
    key(fp, "device", 1);
    rep_json_str(fp, f->row < j->n ? j->rows[f->row].dev->name : NULL);
    finding_core(fp, rep_check_name((int)f->check), f->sev, f->value, f->limit, f->message, f->loc.file, f->loc.line,
                 f->rule);
    intent_keys(fp, f);
    kv_str(fp, "corner", c->corners[ref.corner].label);
    kv_str(fp, "worst_corner", c->corners[g->worst.corner].label);
    kv_uint(fp, "in_corners", g->n);
    if (c->baseline) {
        BlStatus st = rep_status(c, ref.corner, ref.index);
        kv_str(fp, "status", st == BL_NEW ? "new" : "unchanged");
        int8_t was = c->baseline->was_sev ? c->baseline->was_sev[c->prep->base[ref.corner] + ref.index] : -1;
        kv_str(fp, "was_severity", was >= 0 ? sev_name((Severity)was) : NULL);
    }
    kv_bool(fp, "fails", rep_fails(c, ref.corner, ref.index));
    fputc('}', fp);
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

static void corners(const ReportCtx *c, FILE *fp)
{
    fputs(",\n  \"corners\": [", fp);
    for (size_t k = 0; k < c->ncorners; k++) {
        const RepCorner *rc = &c->corners[k];
        const Findings *fs = rc->findings;
        fputs(k ? ",\n    {" : "\n    {", fp);
        key(fp, "label", 1);
        rep_json_str(fp, rc->label);
        kv_str(fp, "op", rc->op_path);
        kv_str(fp, "op_format", format_word(rc->op));
        kv_num(fp, "op_temp_c", rc->op ? rc->op->temp_c : NAN);
        kv_uint(fp, "matched", rc->joined->nmatched);
        kv_uint(fp, "without_data", without_data(rc->joined));
        kv_uint(fp, "orphans", rc->joined->norphans);
        kv_uint(fp, "errors", fs ? fs->count[SEV_ERROR] : 0);
        kv_uint(fp, "warnings", fs ? fs->count[SEV_WARNING] : 0);
        kv_uint(fp, "infos", fs ? fs->count[SEV_INFO] : 0);
        fputc('}', fp);
    }
    fputs("\n  ]", fp);
}

static void baseline(const ReportCtx *c, FILE *fp)
{
    const BlCompare *b = c->baseline;
    const Joined *j = c->corners[0].joined;
    fputs(",\n  \"baseline\": {", fp);
    key(fp, "file", 1);
    rep_json_str(fp, b->path);
    kv_uint(fp, "new", b->nnew);
    kv_uint(fp, "new_failing", b->nnew_failing);
    kv_uint(fp, "unchanged", b->nunchanged);
    kv_uint(fp, "resolved", b->nresolved);
    kv_uint(fp, "devices_not_in_baseline", b->ndevices_unmatched);
    fputs(", \"resolved_findings\": [", fp);
    for (size_t i = 0; i < b->nresolved; i++) {
        const BlOldFinding *o = &b->resolved[i];
        fputs(i ? ",\n    {" : "\n    {", fp);
        key(fp, "device", 1);
        rep_json_str(fp, o->device);
        /* the baseline's rule origin is kept as written there */
        finding_core(fp, o->check, o->sev, o->value, o->limit, o->message, o->file, o->line, (RuleOrigin){NULL, 0});
        kv_str(fp, "corner", o->corner);
        kv_str(fp, "status", "resolved");
        kv_str(fp, "was_rule", o->rule);
        fputc('}', fp);
    }
    fputs(b->nresolved ? "\n  ], \"region_changes\": [" : "], \"region_changes\": [", fp);
    for (size_t i = 0; i < b->nregions; i++) {
        const BlRegionChange *rg = &b->regions[i];
        const Row *r = rg->row < j->n ? &c->corners[rg->corner].joined->rows[rg->row] : NULL;
        fputs(i ? ",\n    {" : "\n    {", fp);
        key(fp, "device", 1);
        rep_json_str(fp, r ? r->dev->name : NULL);
        kv_str(fp, "corner", c->corners[rg->corner].label);
        kv_str(fp, "was", rg->was);
        kv_str(fp, "now", r ? fig_region_name[(unsigned)r->fig.region < REGION_COUNT && r->op ? r->fig.region : 0]
                            : NULL);
        fputc('}', fp);
    }
    fputs(b->nregions ? "\n  ]}" : "]}", fp);
}

static int write_json(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    const RepPrep *p = c->prep;
    const Joined *j0 = c->corners[0].joined;
    flockfile(fp); /* held for the whole report: each of its many stdio calls then skips the lock */
    fputs("{\n  ", fp);
    key(fp, "tool", 1);
    rep_json_str(fp, "biaslint");
    kv_str(fp, "version", BIASLINT_VERSION);
    kv_uint(fp, "schema", JSON_SCHEMA);
    fputs(",\n  ", fp);
    key(fp, "netlist", 1);
    rep_json_str(fp, c->netlist_path);
    kv_str(fp, "op", c->corners[0].op_path);
    kv_str(fp, "op_format", format_word(c->corners[0].op));
    kv_num(fp, "temp_c", c->design ? c->design->temp_c : NAN);
    corners(c, fp);
    fputs(",\n  \"devices\": [", fp);
    for (size_t i = 0; i < j0->n; i++) {
        fputs(i ? ",\n" : "\n", fp);
        device(c, fp, i);
    }
    fputs(j0->n ? "\n  ],\n  \"findings\": [" : "],\n  \"findings\": [", fp);
    size_t nf = 0;
    for (size_t gi = 0; gi < p->ngroups; gi++) {
        const RepGroup *g = &p->groups[gi];
        for (size_t q = g->first; q < g->first + g->n; q++) {
            fputs(nf++ ? ",\n" : "\n", fp);
            finding(c, fp, g, p->refs[q]);
        }
    }
    fputs(nf ? "\n  ],\n  \"orphan_records\": [" : "],\n  \"orphan_records\": [", fp);
    size_t no = 0, count[SEV_COUNT], matched = 0, without = 0, orphans = 0;
    rep_counts(c, count);
    for (size_t k = 0; k < c->ncorners; k++) {
        const RepCorner *rc = &c->corners[k];
        for (size_t i = 0; i < rc->joined->norphans; i++) {
            const OpRecord *r = rc->joined->orphans[i];
            fputs(no++ ? ",\n    {" : "\n    {", fp);
            key(fp, "name", 1);
            rep_json_str(fp, r->name);
            kv_str(fp, "file", r->loc.file);
            kv_line(fp, "line", r->loc.line);
            kv_str(fp, "corner", rc->label);
            fputc('}', fp);
        }
        matched += rc->joined->nmatched;
        without += without_data(rc->joined);
        orphans += rc->joined->norphans;
    }
    fputs(no ? "\n  ],\n  \"loose_findings\": [" : "],\n  \"loose_findings\": [", fp);
    size_t nloose;
    const Finding *loose = rep_loose(c, &nloose);
    for (size_t i = 0; i < nloose; i++) {
        const Finding *f = &loose[i];
        fputs(i ? ",\n    {" : "\n    {", fp);
        key(fp, "device", 1);
        fputs("null", fp);
        finding_core(fp, rep_check_name((int)f->check), f->sev, f->value, f->limit, f->message, f->loc.file,
                     f->loc.line, f->rule);
        intent_keys(fp, f);
        fputc('}', fp);
    }
    fputs(nloose ? "\n  ]" : "]", fp);
    if (c->baseline)
        baseline(c, fp);
    fputs(",\n  \"summary\": {", fp);
    Severity fl = (unsigned)c->fail_level < SEV_COUNT ? c->fail_level : SEV_ERROR;
    size_t failing = rep_failing(c);
    key(fp, "devices", 1);
    fprintf(fp, "%zu", j0->n);
    kv_uint(fp, "corners", c->ncorners);
    kv_uint(fp, "errors", count[SEV_ERROR]);
    kv_uint(fp, "warnings", count[SEV_WARNING]);
    kv_uint(fp, "infos", count[SEV_INFO]);
    kv_uint(fp, "waived", c->prep->nwaived);
    kv_uint(fp, "matched", matched);
    kv_uint(fp, "without_data", without);
    kv_uint(fp, "orphans", orphans);
    kv_str(fp, "fail_level", c->fail_new ? "new" : rule_severity_name[fl]);
    kv_uint(fp, "failing", failing);
    kv_bool(fp, "failed", failing > 0);
    fputs("}\n}\n", fp);
    int bad = fflush(fp) != 0 || ferror(fp);
    funlockfile(fp);
    return bad ? ERR_IO : ERR_OK;
}

const ReportWriter rep_json_writer = {"json", "json", write_json};
