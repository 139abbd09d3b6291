/* report_json: the machine-readable report (schema 1): tool and inputs, one object per device with
 * its sizes, normalized operating point and figures, the findings and a summary. SI units throughout;
 * an absent value is null, never 0; numbers are written with the fewest digits that read back to the
 * same double. One device or finding per line, so the file diffs and greps well. */
#include "report.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "diag.h"

/* A JSON string: quotes, backslash and control characters escaped; valid UTF-8 passed through;
 * bytes that are not valid UTF-8 become U+FFFD so the output is always valid JSON. */
static void put_raw(FILE *fp, const char *s)
{
    const unsigned char *p = (const unsigned char *)s;
    while (*p) {
        unsigned char c = *p;
        if (c < 0x80) {
            switch (c) {
            case '"': fputs("\\\"", fp); break;
            case '\\': fputs("\\\\", fp); break;
            case '\n': fputs("\\n", fp); break;
            case '\r': fputs("\\r", fp); break;
            case '\t': fputs("\\t", fp); break;
            case '\b': fputs("\\b", fp); break;
            case '\f': fputs("\\f", fp); break;
            default:
                if (c < 0x20)
                    fprintf(fp, "\\u%04x", c);
                else
                    fputc(c, fp);
            }
            p++;
            continue;
        }
        /* length and lowest code point of a sequence led by c */
        size_t len = c >= 0xc2 && c <= 0xdf ? 2 : c >= 0xe0 && c <= 0xef ? 3 : c >= 0xf0 && c <= 0xf4 ? 4 : 0;
        int ok = len != 0;
        for (size_t k = 1; ok && k < len; k++)
            ok = (p[k] & 0xc0) == 0x80;
        if (ok && len == 3) {
            /* no overlong forms, no UTF-16 surrogates */
            ok = !(c == 0xe0 && p[1] < 0xa0) && !(c == 0xed && p[1] >= 0xa0);
        } else if (ok && len == 4) {
            ok = !(c == 0xf0 && p[1] < 0x90) && !(c == 0xf4 && p[1] >= 0x90);
        }
        if (ok) {
            fwrite(p, 1, len, fp);
            p += len;
        } else {
            fputs("\\ufffd", fp);
            p++;
        }
    }
}

static void put_str(FILE *fp, const char *s)
{
    if (!s) {
        fputs("null", fp);
        return;
    }
    fputc('"', fp);
    put_raw(fp, s);
    fputc('"', fp);
}

/* A number in the fewest significant digits (15..17) that read back exactly; null when absent. */
static void put_num(FILE *fp, double v)
{
    if (!isfinite(v)) {
        fputs("null", fp);
        return;
    }
    char buf[40];
    for (int prec = 15; prec <= 17; prec++) {
        snprintf(buf, sizeof buf, "%.*g", prec, v);
        if (prec == 17 || strtod(buf, NULL) == v)
            break;
    }
    fputs(buf, fp);
}

static void key(FILE *fp, const char *k, int first)
{
    if (!first)
        fputs(", ", fp);
    put_str(fp, k);
    fputs(": ", fp);
}

static void kv_str(FILE *fp, const char *k, const char *v)
{
    key(fp, k, 0);
    put_str(fp, v);
}

static void kv_num(FILE *fp, const char *k, double v)
{
    key(fp, k, 0);
    put_num(fp, v);
}

static void kv_uint(FILE *fp, const char *k, size_t v)
{
    key(fp, k, 0);
    fprintf(fp, "%zu", v);
}

static void kv_bool(FILE *fp, const char *k, int v)
{
    key(fp, k, 0);
    fputs(v ? "true" : "false", fp);
}

static const char *type_name(MosType t)
{
    return t == MOS_NMOS ? "nmos" : t == MOS_PMOS ? "pmos" : "unknown";
}

static void card_place(const Design *ds, const Device *dv, const char **file, uint32_t *line)
{
    *file = NULL;
    *line = 0;
    if (!ds || dv->card >= ds->ncards)
        return;
    const Card *c = &ds->cards[dv->card];
    if (c->file < ds->files.n && ds->files.files[c->file])
        *file = ds->files.files[c->file]->path;
    *line = c->line;
}

static void device(const ReportCtx *c, FILE *fp, const Row *r)
{
    const Device *dv = r->dev;
    const Figures *f = &r->fig;
    const char *file;
    uint32_t line;
    card_place(c->design, dv, &file, &line);
    fputs("    {", fp);
    key(fp, "name", 1);
    put_str(fp, dv->name);
    kv_str(fp, "model", dv->model);
    kv_str(fp, "type", type_name(dv->type));
    kv_str(fp, "cell", dv->cell);
    kv_num(fp, "w", dv->w);
    kv_num(fp, "l", dv->l);
    kv_num(fp, "m", dv->m);
    kv_num(fp, "nf", dv->nf);
    kv_str(fp, "file", file);
    key(fp, "line", 0);
    if (line)
        fprintf(fp, "%u", line);
    else
        fputs("null", fp);
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
    fputc('}', fp);
}

static void finding(const ReportCtx *c, FILE *fp, const Finding *f)
{
    const Joined *j = c->joined;
    fputs("    {", fp);
    key(fp, "device", 1);
    put_str(fp, f->row < j->n ? j->rows[f->row].dev->name : NULL);
    kv_str(fp, "check", rule_check_name[(unsigned)f->check < CHECK_COUNT ? f->check : 0]);
    kv_str(fp, "severity", rule_severity_name[(unsigned)f->sev < SEV_COUNT ? f->sev : 0]);
    kv_num(fp, "value", f->value);
    kv_num(fp, "limit", f->limit);
    kv_str(fp, "message", f->message);
    kv_str(fp, "file", f->loc.file);
    key(fp, "line", 0);
    if (f->loc.line)
        fprintf(fp, "%u", f->loc.line);
    else
        fputs("null", fp);
    key(fp, "rule", 0);
    if (!f->rule.file)
        fputs("null", fp);
    else {
        fputc('"', fp);
        put_raw(fp, f->rule.file);
        if (f->rule.line)
            fprintf(fp, ":%u", f->rule.line);
        fputc('"', fp);
    }
    kv_str(fp, "rule_file", f->rule.file);
    key(fp, "rule_line", 0);
    if (f->rule.line)
        fprintf(fp, "%u", f->rule.line);
    else
        fputs("null", fp);
    fputc('}', fp);
}

static const char *format_word(const OpTable *t)
{
    switch (t->format) {
    case OPFMT_SHOW: return "show";
    case OPFMT_RAW: return "raw";
    case OPFMT_CSV: return "csv";
    default: return NULL;
    }
}

static int write_json(const ReportCtx *c, FILE *fp)
{
    const Joined *j = c->joined;
    const Findings *fs = c->findings;
    fputs("{\n  ", fp);
    key(fp, "tool", 1);
    put_str(fp, "biaslint");
    kv_str(fp, "version", BIASLINT_VERSION);
    kv_uint(fp, "schema", 1);
    fputs(",\n  ", fp);
    key(fp, "netlist", 1);
    put_str(fp, c->netlist_path);
    kv_str(fp, "op", c->op_path);
    kv_str(fp, "op_format", c->op ? format_word(c->op) : NULL);
    kv_num(fp, "temp_c", c->design ? c->design->temp_c : NAN);
    fputs(",\n  \"devices\": [", fp);
    size_t without = 0;
    for (size_t i = 0; i < j->n; i++) {
        fputs(i ? ",\n" : "\n", fp);
        device(c, fp, &j->rows[i]);
        without += j->rows[i].op == NULL;
    }
    fputs(j->n ? "\n  ],\n  \"findings\": [" : "],\n  \"findings\": [", fp);
    size_t nf = fs ? fs->n : 0;
    for (size_t i = 0; i < nf; i++) {
        fputs(i ? ",\n" : "\n", fp);
        finding(c, fp, &fs->items[i]);
    }
    fputs(nf ? "\n  ],\n  \"orphan_records\": [" : "],\n  \"orphan_records\": [", fp);
    for (size_t i = 0; i < j->norphans; i++) {
        const OpRecord *r = j->orphans[i];
        fputs(i ? ",\n    {" : "\n    {", fp);
        key(fp, "name", 1);
        put_str(fp, r->name);
        kv_str(fp, "file", r->loc.file);
        key(fp, "line", 0);
        if (r->loc.line)
            fprintf(fp, "%u", r->loc.line);
        else
            fputs("null", fp);
        fputc('}', fp);
    }
    fputs(j->norphans ? "\n  ],\n  \"summary\": {" : "],\n  \"summary\": {", fp);
    size_t count[SEV_COUNT] = {0, 0, 0};
    if (fs)
        memcpy(count, fs->count, sizeof count);
    Severity fl = (unsigned)c->fail_level < SEV_COUNT ? c->fail_level : SEV_ERROR;
    size_t failing = 0;
    for (int s = fl; s < SEV_COUNT; s++)
        failing += count[s];
    key(fp, "devices", 1);
    fprintf(fp, "%zu", j->n);
    kv_uint(fp, "errors", count[SEV_ERROR]);
    kv_uint(fp, "warnings", count[SEV_WARNING]);
    kv_uint(fp, "infos", count[SEV_INFO]);
    kv_uint(fp, "matched", j->nmatched);
    kv_uint(fp, "without_data", without);
    kv_uint(fp, "orphans", j->norphans);
    kv_str(fp, "fail_level", rule_severity_name[fl]);
    kv_bool(fp, "failed", failing > 0);
    fputs("}\n}\n", fp);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

const ReportWriter rep_json_writer = {"json", write_json};
