/* report_text: the plain-text report for a terminal or a log: a header, one aligned table row per
 * device, notes on how fT was computed and which devices were swapped, the limits in force, the
 * findings grouped by severity and a closing summary. Column widths are measured in one pass over
 * the rows and the table printed in a second, so the work is linear in the number of devices. */
#include "report.h"

#include <math.h>
#include <string.h>

#include "diag.h"

#define NAME_COL_MAX 40   /* longer names overflow their own row instead of widening every row */
#define SWAPPED_LISTED 20 /* the JSON report lists every swapped device */

enum { C_NAME, C_MODEL, C_WL, C_ID, C_GMID, C_GAIN, C_FT, C_MARGIN, C_REGION, NCOLS };
static const char *const col_head[NCOLS] = {"device", "model", "W/L", "ID", "gm/ID", "gm/gds", "fT", "VDS-VDSAT",
                                            "region"};
static const int col_right[NCOLS] = {0, 0, 0, 1, 1, 1, 1, 1, 0};

typedef struct {
    char wl[96];
    char id[32], gmid[32], gain[32], ft[32], margin[32];
    const char *name, *model, *region;
} Cells;

static const char *paint(const ReportCtx *c, Severity s)
{
    if (!c->color)
        return "";
    return s == SEV_ERROR ? "\033[1;31m" : s == SEV_WARNING ? "\033[1;33m" : "\033[36m";
}

static const char *unpaint(const ReportCtx *c)
{
    return c->color ? "\033[0m" : "";
}

/* "1u/200n", with " m=4" and " nf=2" when they are not 1. */
static void format_wl(const Device *dv, char *buf, size_t size)
{
    char w[32], l[32];
    rep_eng(dv->w, "", w, sizeof w);
    rep_eng(dv->l, "", l, sizeof l);
    int n = snprintf(buf, size, "%s/%s", w, l);
    if (n < 0 || (size_t)n >= size)
        return;
    if (!isnan(dv->m) && dv->m != 1.0)
        n += snprintf(buf + n, size - (size_t)n, " m=%g", dv->m);
    if (n >= 0 && (size_t)n < size && !isnan(dv->nf) && dv->nf != 1.0)
        snprintf(buf + n, size - (size_t)n, " nf=%g", dv->nf);
}

static void format_row(const Row *r, Cells *k)
{
    const Device *dv = r->dev;
    const Figures *f = &r->fig;
    k->name = dv->name ? dv->name : "?";
    k->model = dv->model ? dv->model : "-";
    format_wl(dv, k->wl, sizeof k->wl);
    rep_eng(f->id, "A", k->id, sizeof k->id);
    rep_eng(f->gm_id, "/V", k->gmid, sizeof k->gmid);
    rep_eng(f->gain, "", k->gain, sizeof k->gain);
    rep_eng(f->ft, "Hz", k->ft, sizeof k->ft);
    rep_eng(f->margin, "V", k->margin, sizeof k->margin);
    k->region = !r->op ? "no data" : fig_region_name[(unsigned)f->region < REGION_COUNT ? f->region : 0];
}

static const char *cell(const Cells *k, int col)
{
    switch (col) {
    case C_NAME: return k->name;
    case C_MODEL: return k->model;
    case C_WL: return k->wl;
    case C_ID: return k->id;
    case C_GMID: return k->gmid;
    case C_GAIN: return k->gain;
    case C_FT: return k->ft;
    case C_MARGIN: return k->margin;
    default: return k->region;
    }
}

static void pad(FILE *fp, size_t n)
{
    while (n--)
        fputc(' ', fp);
}

static void put_cells(FILE *fp, const char *const *text, const size_t *width)
{
    for (int col = 0; col < NCOLS; col++) {
        size_t len = strlen(text[col]);
        size_t w = width[col];
        size_t gap = len < w ? w - len : 0;
        if (col_right[col])
            pad(fp, gap);
        fputs(text[col], fp);
        if (col == NCOLS - 1)
            break;
        if (!col_right[col])
            pad(fp, gap);
        fputs("  ", fp);
    }
    fputc('\n', fp);
}

static void table(const ReportCtx *c, FILE *fp)
{
    const Joined *j = c->joined;
    size_t width[NCOLS];
    for (int col = 0; col < NCOLS; col++)
        width[col] = strlen(col_head[col]);
    Cells k;
    for (size_t i = 0; i < j->n; i++) {
        format_row(&j->rows[i], &k);
        for (int col = 0; col < NCOLS; col++) {
            size_t len = strlen(cell(&k, col));
            if (col == C_NAME && len > NAME_COL_MAX)
                continue;
            if (len > width[col])
                width[col] = len;
        }
    }
    put_cells(fp, col_head, width);
    for (size_t i = 0; i < j->n; i++) {
        format_row(&j->rows[i], &k);
        const char *text[NCOLS];
        for (int col = 0; col < NCOLS; col++)
            text[col] = cell(&k, col);
        put_cells(fp, text, width);
    }
}

static void plural(FILE *fp, size_t n, const char *one, const char *many)
{
    fprintf(fp, "%zu %s", n, n == 1 ? one : many);
}

/* Which Cgg fT used, counted over the devices with data. */
static void cgg_note(const ReportCtx *c, FILE *fp)
{
    const Joined *j = c->joined;
    size_t dump = 0, summed = 0, overlap = 0, none = 0;
    for (size_t i = 0; i < j->n; i++) {
        const Row *r = &j->rows[i];
        if (!r->op)
            continue;
        if (isnan(r->fig.cgg))
            none++;
        else if (r->fig.cgg_summed)
            summed++;
        else
            dump++;
        if (r->fig.cgg_overlap)
            overlap++;
    }
    if (dump + summed + none == 0)
        return;
    fputs("fT = gm/(2*pi*Cgg). Cgg:", fp);
    const char *sep = " ";
    if (dump) {
        fputs(sep, fp);
        fputs("the dump's cgg for ", fp);
        plural(fp, dump, "device", "devices");
        fputs(" (BSIM cgg leaves out the gate overlap capacitance)", fp);
        sep = "; ";
    }
    if (summed) {
        fputs(sep, fp);
        fputs("|cgs+cgd+cgb| for ", fp);
        plural(fp, summed, "device", "devices");
        fputs(" without cgg in the dump (level-1 Meyer capacitances include the overlap)", fp);
        sep = "; ";
    }
    if (none) {
        fputs(sep, fp);
        fputs("none for ", fp);
        plural(fp, none, "device", "devices");
        fputs(", so no fT", fp);
    }
    fputs(".\n", fp);
    if (overlap) {
        fputs("Overlap capacitance from the model cards ((cgso+cgdo)*W*m + cgbo*L*m) was added for ", fp);
        plural(fp, overlap, "device.\n", "devices.\n");
    } else if (j->overlap) {
        fputs("Overlap capacitance was asked for, but no model card of a BSIM device gives cgso and cgdo: "
              "nothing was added.\n",
              fp);
    }
}

static void swapped_note(const ReportCtx *c, FILE *fp)
{
    const Joined *j = c->joined;
    size_t n = 0;
    for (size_t i = 0; i < j->n; i++)
        if (j->rows[i].op && j->rows[i].fig.swapped) {
            if (n == 0)
                fputs("Drain and source swapped (VDS < 0 in the dump; the figures use the real orientation):", fp);
            if (n < SWAPPED_LISTED)
                fprintf(fp, "%s %s", n ? "," : "", j->rows[i].dev->name ? j->rows[i].dev->name : "?");
            n++;
        }
    if (n > SWAPPED_LISTED)
        fprintf(fp, " and %zu more (the JSON report lists all)", n - SWAPPED_LISTED);
    if (n)
        fputc('\n', fp);
}

static void limits_note(const ReportCtx *c, FILE *fp)
{
    if (!c->rules)
        return;
    char a[32], b[32], o[32];
    fputs("Checks:", fp);
    for (int k = 0; k < CHECK_COUNT; k++) {
        const CheckRule *r = rule_check(c->rules, (CheckId)k);
        fprintf(fp, "%s %s", k ? "," : "", rule_check_name[k]);
        if (!r->enabled) {
            fputs(" ignored", fp);
            continue;
        }
        if (k == CHECK_MARGIN)
            fprintf(fp, " >= %s", rep_eng(r->limit, "V", a, sizeof a));
        else if (k == CHECK_GAIN)
            fprintf(fp, " >= %s", rep_eng(r->limit, "", a, sizeof a));
        fprintf(fp, " (%s)", rule_severity_name[r->sev]);
    }
    fputs(".\n", fp);
    Device any;
    memset(&any, 0, sizeof any);
    const BandRule *br = rule_band_rule(c->rules, &any);
    fprintf(fp, "Regions (where no statement for a type or model says otherwise): strong below %s, weak above %s, "
                "off below %s per square (%s:%u).\n",
            rep_eng(br->bands.strong_below, "/V", a, sizeof a), rep_eng(br->bands.weak_above, "/V", b, sizeof b),
            rep_eng(br->bands.off_below, "A", o, sizeof o), br->from.file ? br->from.file : "?", br->from.line);
}

static void origin(FILE *fp, RuleOrigin o)
{
    if (!o.file)
        return;
    if (o.line)
        fprintf(fp, "  [rule %s:%u]", o.file, o.line);
    else
        fprintf(fp, "  [rule %s]", o.file);
}

static size_t loc_len(const SrcLoc *l)
{
    if (!l->file)
        return 1;
    char num[16];
    return strlen(l->file) + 1 + (size_t)snprintf(num, sizeof num, "%u", l->line);
}

static void findings(const ReportCtx *c, FILE *fp)
{
    const Findings *fs = c->findings;
    const Joined *j = c->joined;
    if (!fs || fs->n == 0) {
        fputs("\nNo findings.\n", fp);
        return;
    }
    static const char *const heading[SEV_COUNT] = {"Info", "Warnings", "Errors"};
    size_t wloc = 0, wdev = 0, wchk = 0;
    for (size_t i = 0; i < fs->n; i++) {
        const Finding *f = &fs->items[i];
        size_t n = loc_len(&f->loc);
        if (n > wloc)
            wloc = n;
        const char *name = f->row < j->n && j->rows[f->row].dev->name ? j->rows[f->row].dev->name : "?";
        n = strlen(name);
        if (n > wdev && n <= NAME_COL_MAX)
            wdev = n;
        n = strlen(rule_check_name[f->check]);
        if (n > wchk)
            wchk = n;
    }
    int cur = -1;
    for (size_t i = 0; i < fs->n; i++) {
        const Finding *f = &fs->items[i];
        if ((int)f->sev != cur) {
            cur = (int)f->sev;
            fprintf(fp, "\n%s%s (%zu)%s\n", paint(c, f->sev), heading[f->sev], fs->count[f->sev], unpaint(c));
        }
        fputs("  ", fp);
        if (f->loc.file)
            fprintf(fp, "%s:%u", f->loc.file, f->loc.line);
        else
            fputc('-', fp);
        size_t n = loc_len(&f->loc);
        pad(fp, wloc > n ? wloc - n : 0);
        const char *name = f->row < j->n && j->rows[f->row].dev->name ? j->rows[f->row].dev->name : "?";
        fprintf(fp, "  %s", name);
        n = strlen(name);
        pad(fp, wdev > n ? wdev - n : 0);
        fprintf(fp, "  %s%s%s", paint(c, f->sev), rule_check_name[f->check], unpaint(c));
        n = strlen(rule_check_name[f->check]);
        pad(fp, wchk > n ? wchk - n : 0);
        fprintf(fp, "  %s", f->message ? f->message : "");
        origin(fp, f->rule);
        fputc('\n', fp);
    }
}

static void summary(const ReportCtx *c, FILE *fp)
{
    const Findings *fs = c->findings;
    size_t count[SEV_COUNT] = {0, 0, 0};
    if (fs)
        memcpy(count, fs->count, sizeof count);
    size_t failing = 0;
    for (int s = c->fail_level; s < SEV_COUNT; s++)
        failing += count[s];
    fputs("\nSummary: ", fp);
    plural(fp, c->joined->n, "device", "devices");
    fputs(", ", fp);
    plural(fp, count[SEV_ERROR], "error", "errors");
    fputs(", ", fp);
    plural(fp, count[SEV_WARNING], "warning", "warnings");
    fputs(", ", fp);
    plural(fp, count[SEV_INFO], "info", "info");
    Severity fl = (unsigned)c->fail_level < SEV_COUNT ? c->fail_level : SEV_ERROR;
    fprintf(fp, "; fail level %s: ", rule_severity_name[fl]);
    if (failing)
        fprintf(fp, "%s%zu at or above it, FAIL%s\n", paint(c, SEV_ERROR), failing, unpaint(c));
    else
        fputs("none at or above it, pass\n", fp);
}

static const char *format_name(const OpTable *t)
{
    switch (t->format) {
    case OPFMT_SHOW: return "ngspice show tables";
    case OPFMT_RAW: return "ngspice raw file";
    case OPFMT_CSV: return "CSV";
    default: return "op data";
    }
}

static int write_text(const ReportCtx *c, FILE *fp)
{
    const Joined *j = c->joined;
    fprintf(fp, "biaslint %s: operating-point check\n", BIASLINT_VERSION);
    fprintf(fp, "Netlist  %s\n", c->netlist_path ? c->netlist_path : "-");
    if (c->op)
        fprintf(fp, "Op data  %s (%s)\n", c->op_path ? c->op_path : "-", format_name(c->op));
    else
        fprintf(fp, "Op data  %s\n", c->op_path ? c->op_path : "-");
    size_t with = 0;
    for (size_t i = 0; i < j->n; i++)
        with += j->rows[i].op != NULL;
    fputs("Devices  ", fp);
    plural(fp, j->n, "MOSFET", "MOSFETs");
    fprintf(fp, ", %zu with operating-point data, %zu without; ", with, j->n - with);
    plural(fp, j->norphans, "record", "records");
    fputs(j->norphans == 1 ? " in the dump matches no device\n\n" : " in the dump match no device\n\n", fp);
    table(c, fp);
    fputc('\n', fp);
    cgg_note(c, fp);
    swapped_note(c, fp);
    limits_note(c, fp);
    findings(c, fp);
    summary(c, fp);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

const ReportWriter rep_text_writer = {"text", write_text};
