/* report_text: the plain-text report for a terminal or a log: a header, one aligned table row per
 * device (and per corner when there are several), notes on how fT was computed and which devices
 * were swapped, the limits in force, the findings grouped by severity (one line per device and
 * check, naming the worst corner), what changed since a baseline, and a closing summary. Column
 * widths are measured in one pass over the rows and the table printed in a second, so the work is
 * linear in the number of devices. */
#include "report.h"

#include <math.h>
#include <string.h>

#include "diag.h"

#define NAME_COL_MAX 40   /* longer names overflow their own row instead of widening every row */
#define SWAPPED_LISTED 20 /* the JSON report lists every swapped device */

#define TABLES_LISTED 8   /* table files named in the note on table-derived figures */

enum { C_NAME, C_MODEL, C_WL, C_CORNER, C_ID, C_GMID, C_GAIN, C_FT, C_MARGIN, C_DATA, C_REGION, NCOLS };
static const char *const col_head[NCOLS] = {"device", "model", "W/L", "corner", "ID", "gm/ID", "gm/gds", "fT",
                                            "VDS-VDSAT", "from", "region"};
static const int col_right[NCOLS] = {0, 0, 0, 0, 1, 1, 1, 1, 1, 0, 0};

typedef struct {
    char wl[96];
    char id[32], gmid[32], gain[32], ft[32], margin[32];
    const char *name, *model, *region, *corner, *data;
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

static void format_row(const Row *r, const char *corner, Cells *k)
{
    k->corner = corner ? corner : "";
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
    k->region = rep_region_word(r);
    k->data = rep_source(r) ? rep_source(r) : "-";
}

static const char *cell(const Cells *k, int col)
{
    switch (col) {
    case C_NAME: return k->name;
    case C_MODEL: return k->model;
    case C_WL: return k->wl;
    case C_CORNER: return k->corner;
    case C_ID: return k->id;
    case C_GMID: return k->gmid;
    case C_GAIN: return k->gain;
    case C_FT: return k->ft;
    case C_MARGIN: return k->margin;
    case C_DATA: return k->data;
    default: return k->region;
    }
}

static void pad(FILE *fp, size_t n)
{
    while (n--)
        fputc(' ', fp);
}

/* Columns in use: the corner column only when there are several corners, the column that says
 * where figures come from only when a table gave some. */
static int shown(const ReportCtx *c, int col)
{
    return col == C_CORNER ? c->ncorners > 1 : col == C_DATA ? c->prep->tables : 1;
}

static void put_cells(const ReportCtx *c, FILE *fp, const char *const *text, const size_t *width)
{
    int last = NCOLS - 1;
    for (int col = 0; col < NCOLS; col++) {
        if (!shown(c, col))
            continue;
        size_t len = strlen(text[col]);
        size_t w = width[col];
        size_t gap = len < w ? w - len : 0;
        if (col_right[col])
            pad(fp, gap);
        fputs(text[col], fp);
        if (col == last)
            break;
        if (!col_right[col])
            pad(fp, gap);
        fputs("  ", fp);
    }
    fputc('\n', fp);
}

static void table(const ReportCtx *c, FILE *fp)
{
    size_t n = c->corners[0].joined->n;
    size_t width[NCOLS];
    for (int col = 0; col < NCOLS; col++)
        width[col] = strlen(col_head[col]);
    Cells k;
    for (size_t i = 0; i < n; i++)
        for (size_t q = 0; q < c->ncorners; q++) {
            format_row(&c->corners[q].joined->rows[i], c->corners[q].label, &k);
            for (int col = 0; col < NCOLS; col++) {
                size_t len = strlen(cell(&k, col));
                if (col == C_NAME && len > NAME_COL_MAX)
                    continue;
                if (len > width[col])
                    width[col] = len;
            }
        }
    put_cells(c, fp, col_head, width);
    for (size_t i = 0; i < n; i++)
        for (size_t q = 0; q < c->ncorners; q++) {
            format_row(&c->corners[q].joined->rows[i], c->corners[q].label, &k);
            const char *text[NCOLS];
            for (int col = 0; col < NCOLS; col++)
                text[col] = cell(&k, col);
            put_cells(c, fp, text, width);
        }
}

static void plural(FILE *fp, size_t n, const char *one, const char *many)
{
    fprintf(fp, "%zu %s", n, n == 1 ? one : many);
}

/* Which Cgg fT used, counted over the devices with data. */
static void cgg_note(const ReportCtx *c, FILE *fp)
{
    const Joined *j = c->corners[0].joined;
    size_t dump = 0, table = 0, summed = 0, overlap = 0, none = 0;
    for (size_t i = 0; i < j->n; i++) {
        const Row *r = &j->rows[i];
        if (!r->op)
            continue;
        if (isnan(r->fig.cgg))
            none++;
        else if (row_lut(r))
            table++;
        else if (r->fig.cgg_summed)
            summed++;
        else
            dump++;
        if (r->fig.cgg_overlap)
            overlap++;
    }
    if (dump + table + summed + none == 0)
        return;
    fputs("fT = gm/(2*pi*Cgg). Cgg", fp);
    if (c->ncorners > 1) {
        fputs(" (corner ", fp);
        fputs(c->corners[0].label, fp);
        fputc(')', fp);
    }
    fputc(':', fp);
    const char *sep = " ";
    if (dump) {
        fputs(sep, fp);
        fputs("the dump's cgg for ", fp);
        plural(fp, dump, "device", "devices");
        fputs(" (BSIM cgg leaves out the gate overlap capacitance)", fp);
        sep = "; ";
    }
    if (table) {
        fputs(sep, fp);
        fputs("the lookup table's Cgg for ", fp);
        plural(fp, table, "device", "devices");
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
    size_t n = 0, nrows = c->corners[0].joined->n;
    for (size_t i = 0; i < nrows; i++)
        for (size_t q = 0; q < c->ncorners; q++) {
            const Row *r = &c->corners[q].joined->rows[i];
            if (!r->op || !r->fig.swapped)
                continue;
            if (n == 0)
                fputs("Drain and source swapped (VDS < 0 in the dump; the figures use the real orientation):", fp);
            if (n < SWAPPED_LISTED) {
                fprintf(fp, "%s %s", n ? "," : "", r->dev->name ? r->dev->name : "?");
                if (c->ncorners > 1)
                    fprintf(fp, " (%s)", c->corners[q].label);
            }
            n++;
        }
    if (n > SWAPPED_LISTED)
        fprintf(fp, " and %zu more (the JSON report lists all)", n - SWAPPED_LISTED);
    if (n)
        fputc('\n', fp);
}

/* Which devices have figures from lookup tables, from which files, and which lie outside a grid. */
static void tables_note(const ReportCtx *c, FILE *fp)
{
    size_t from = 0, outside = 0, nlisted = 0, more = 0;
    const char *listed[TABLES_LISTED];
    for (size_t q = 0; q < c->ncorners; q++) {
        const Joined *j = c->corners[q].joined;
        for (size_t i = 0; i < j->n; i++) {
            const Row *r = &j->rows[i];
            if (!row_lut(r))
                continue;
            if (row_lut_miss(r)) {
                outside++;
                continue;
            }
            from++;
            const char *p = rep_table_path(r);
            size_t k = 0;
            while (k < nlisted && strcmp(listed[k], p) != 0)
                k++;
            if (k == nlisted && nlisted < TABLES_LISTED)
                listed[nlisted++] = p;
            else if (k == nlisted)
                more = 1;
        }
    }
    if (from + outside == 0)
        return;
    fputs("Figures from lookup tables (\"from table\"): ", fp);
    plural(fp, from, "device", "devices");
    if (c->ncorners > 1)
        fputs(" over all corners", fp);
    fputs(" had no device data in the dump, so VGS, VDS and VSB come from its node voltages and every figure "
          "from the table of the device's model, scaled by W*nf*m (",
          fp);
    for (size_t k = 0; k < nlisted; k++)
        fprintf(fp, "%s%s", k ? ", " : "", listed[k]);
    fputs(more ? " and more)" : ")", fp);
    if (outside) {
        fputs("; ", fp);
        plural(fp, outside, "device lies", "devices lie");
        fputs(" outside a table's grid and get no figures (a table is never extrapolated)", fp);
    }
    fputs(".\n", fp);
}

static void limits_note(const ReportCtx *c, FILE *fp)
{
    if (!c->rules)
        return;
    char a[32], b[32], o[32];
    fputs("Checks:", fp);
    for (int k = 0; k < CHECK_NDEFAULT; k++) { /* the ones that run on every device */
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

static const char *row_name(const ReportCtx *c, size_t row)
{
    const Joined *j = c->corners[0].joined;
    return row < j->n && j->rows[row].dev->name ? j->rows[row].dev->name : "?";
}

/* "  [frost only]", "  [worst frost; also mild]" or "  [every corner, worst frost]", when there are
 * several corners. */
static void corner_note(const ReportCtx *c, FILE *fp, const RepGroup *g)
{
    if (c->ncorners < 2)
        return;
    const RepPrep *p = c->prep;
    if (g->n == 1) {
        fprintf(fp, "  [%s only]", c->corners[g->worst.corner].label);
        return;
    }
    if (g->n == c->ncorners) {
        fprintf(fp, "  [every corner, worst %s]", c->corners[g->worst.corner].label);
        return;
    }
    fprintf(fp, "  [worst %s; also", c->corners[g->worst.corner].label);
    const char *sep = " ";
    for (size_t q = g->first; q < g->first + g->n; q++)
        if (p->refs[q].corner != g->worst.corner) {
            fprintf(fp, "%s%s", sep, c->corners[p->refs[q].corner].label);
            sep = ", ";
        }
    fputc(']', fp);
}

static void findings(const ReportCtx *c, FILE *fp)
{
    const RepPrep *p = c->prep;
    size_t nloose;
    const Finding *loose = rep_loose(c, &nloose);
    if (p->ngroups == 0 && nloose == 0) {
        fputs("\nNo findings.\n", fp);
        return;
    }
    static const char *const heading[SEV_COUNT] = {"Info", "Warnings", "Errors"};
    size_t wloc = 0, wdev = 0, wchk = 0;
    for (size_t i = 0; i < p->ngroups; i++) {
        const Finding *f = rep_finding(c, p->groups[i].worst);
        size_t n = loc_len(&f->loc);
        if (n > wloc)
            wloc = n;
        n = strlen(row_name(c, p->groups[i].row));
        if (n > wdev && n <= NAME_COL_MAX)
            wdev = n;
        n = strlen(rep_check_name((int)f->check));
        if (n > wchk)
            wchk = n;
    }
    int cur = -1;
    for (size_t i = 0; i < p->ngroups; i++) {
        const RepGroup *g = &p->groups[i];
        const Finding *f = rep_finding(c, g->worst);
        int key = g->waived ? SEV_COUNT : (int)g->sev;
        if (key != cur) {
            cur = key;
            if (g->waived)
                fprintf(fp, "\nWaived (%zu): reported, not counted\n", p->nwaived);
            else
                fprintf(fp, "\n%s%s (%zu)%s\n", paint(c, g->sev), heading[g->sev], p->count[g->sev], unpaint(c));
        }
        fputs("  ", fp);
        if (c->baseline)
            fputs(rep_group_status(c, g) == BL_NEW ? "new  " : "     ", fp);
        if (f->loc.file)
            fprintf(fp, "%s:%u", f->loc.file, f->loc.line);
        else
            fputc('-', fp);
        size_t n = loc_len(&f->loc);
        pad(fp, wloc > n ? wloc - n : 0);
        const char *name = row_name(c, g->row);
        fprintf(fp, "  %s", name);
        n = strlen(name);
        pad(fp, wdev > n ? wdev - n : 0);
        const char *chk = rep_check_name((int)f->check);
        fprintf(fp, "  %s%s%s", paint(c, g->sev), chk, unpaint(c));
        n = strlen(chk);
        pad(fp, wchk > n ? wchk - n : 0);
        fprintf(fp, "  %s", f->message ? f->message : "");
        corner_note(c, fp, g);
        origin(fp, f->rule);
        if (f->waived) {
            fprintf(fp, "  (%s, waived: %s", rule_severity_name[f->sev], f->waiver_reason ? f->waiver_reason : "no reason");
            if (f->waiver.file)
                fprintf(fp, " [waiver %s:%u]", f->waiver.file, f->waiver.line);
            fputc(')', fp);
        }
        fputc('\n', fp);
    }
    if (nloose) {
        fprintf(fp, "\nStatements that select no device (%zu)\n", nloose);
        for (size_t i = 0; i < nloose; i++) {
            const Finding *f = &loose[i];
            fputs("  ", fp);
            if (f->loc.file)
                fprintf(fp, "%s:%u", f->loc.file, f->loc.line);
            else
                fputc('-', fp);
            fprintf(fp, "  %s%s%s  %s  %s\n", paint(c, f->sev), rule_severity_name[f->sev], unpaint(c),
                    rep_check_name((int)f->check), f->message ? f->message : "");
        }
    }
}

/* What changed since the baseline: the findings it had that this run has not, and region changes. */
static void since_baseline(const ReportCtx *c, FILE *fp)
{
    const BlCompare *b = c->baseline;
    if (!b)
        return;
    fprintf(fp, "\nSince the baseline %s: %zu new, %zu unchanged, %zu resolved", b->path ? b->path : "-", b->nnew,
            b->nunchanged, b->nresolved);
    if (b->ndevices_unmatched)
        fprintf(fp, "; %zu devices not in the baseline", b->ndevices_unmatched);
    fputs(".\n", fp);
    if (b->nresolved) {
        fprintf(fp, "\nResolved (%zu)\n", b->nresolved);
        for (size_t i = 0; i < b->nresolved; i++) {
            const BlOldFinding *o = &b->resolved[i];
            fputs("  ", fp);
            if (o->file)
                fprintf(fp, "%s:%u", o->file, o->line);
            else
                fputc('-', fp);
            fprintf(fp, "  %s  %s (%s)", o->device ? o->device : "?", o->check ? o->check : "?",
                    rule_severity_name[(unsigned)o->sev < SEV_COUNT ? o->sev : 0]);
            if (o->corner && o->corner[0])
                fprintf(fp, " in %s", o->corner);
            fprintf(fp, ": %s\n", o->message ? o->message : "");
        }
    }
    if (b->nregions) {
        fprintf(fp, "\nRegion changes (%zu)\n", b->nregions);
        for (size_t i = 0; i < b->nregions; i++) {
            const BlRegionChange *rg = &b->regions[i];
            const Row *r = &c->corners[rg->corner].joined->rows[rg->row];
            fprintf(fp, "  %s", r->dev->name ? r->dev->name : "?");
            if (c->ncorners > 1 || c->corners[rg->corner].label[0])
                fprintf(fp, " (%s)", c->corners[rg->corner].label);
            fprintf(fp, ": %s -> %s\n", rg->was ? rg->was : "?", rep_region_word(r));
        }
    }
}

static void summary(const ReportCtx *c, FILE *fp)
{
    size_t count[SEV_COUNT];
    rep_counts(c, count);
    size_t failing = rep_failing(c);
    fputs("\nSummary: ", fp);
    plural(fp, c->corners[0].joined->n, "device", "devices");
    if (c->ncorners > 1)
        fprintf(fp, " in %zu corners", c->ncorners);
    fputs(", ", fp);
    plural(fp, count[SEV_ERROR], "error", "errors");
    fputs(", ", fp);
    plural(fp, count[SEV_WARNING], "warning", "warnings");
    fputs(", ", fp);
    plural(fp, count[SEV_INFO], "info", "info");
    if (c->prep->nwaived)
        fprintf(fp, " (%zu waived)", c->prep->nwaived);
    if (c->fail_new) {
        fputs("; failing on new warnings and errors: ", fp);
        if (failing)
            fprintf(fp, "%s%zu new, FAIL%s\n", paint(c, SEV_ERROR), failing, unpaint(c));
        else
            fputs("none new, pass\n", fp);
        return;
    }
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

static size_t with_data(const Joined *j)
{
    size_t with = 0;
    for (size_t i = 0; i < j->n; i++)
        with += j->rows[i].op != NULL;
    return with;
}

static void op_line(FILE *fp, const RepCorner *rc)
{
    if (rc->op)
        fprintf(fp, "%s (%s)", rc->op_path ? rc->op_path : "-", format_name(rc->op));
    else
        fputs(rc->op_path ? rc->op_path : "-", fp);
}

static int write_text(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    const Joined *j = c->corners[0].joined;
    flockfile(fp); /* held for the whole report: each of its many stdio calls then skips the lock */
    fprintf(fp, "biaslint %s: operating-point check\n", BIASLINT_VERSION);
    fprintf(fp, "Netlist  %s\n", c->netlist_path ? c->netlist_path : "-");
    if (c->ncorners == 1) {
        fputs("Op data  ", fp);
        op_line(fp, &c->corners[0]);
        if (c->corners[0].label[0])
            fprintf(fp, ", corner %s", c->corners[0].label);
        size_t with = with_data(j);
        fputs("\nDevices  ", fp);
        plural(fp, j->n, "MOSFET", "MOSFETs");
        fprintf(fp, ", %zu with operating-point data", with);
        if (j->ntable)
            fprintf(fp, " (%zu of them from lookup tables)", j->ntable);
        fprintf(fp, ", %zu without; ", j->n - with);
        plural(fp, j->norphans, "record", "records");
        fputs(j->norphans == 1 ? " in the dump matches no device\n\n" : " in the dump match no device\n\n", fp);
    } else {
        size_t wl = 0;
        for (size_t k = 0; k < c->ncorners; k++)
            if (strlen(c->corners[k].label) > wl)
                wl = strlen(c->corners[k].label);
        fputs("Devices  ", fp);
        plural(fp, j->n, "MOSFET", "MOSFETs");
        fprintf(fp, " in %zu corners:\n", c->ncorners);
        for (size_t k = 0; k < c->ncorners; k++) {
            const RepCorner *rc = &c->corners[k];
            size_t with = with_data(rc->joined);
            fprintf(fp, "  %s", rc->label);
            pad(fp, wl - strlen(rc->label));
            fputs("  ", fp);
            op_line(fp, rc);
            fprintf(fp, ": %zu with data", with);
            if (rc->joined->ntable)
                fprintf(fp, " (%zu from tables)", rc->joined->ntable);
            fprintf(fp, ", %zu without; ", rc->joined->n - with);
            plural(fp, rc->joined->norphans, "record", "records");
            fputs(rc->joined->norphans == 1 ? " matches no device\n" : " match no device\n", fp);
        }
        fputc('\n', fp);
    }
    table(c, fp);
    fputc('\n', fp);
    cgg_note(c, fp);
    swapped_note(c, fp);
    tables_note(c, fp);
    limits_note(c, fp);
    findings(c, fp);
    since_baseline(c, fp);
    summary(c, fp);
    int bad = fflush(fp) != 0 || ferror(fp);
    funlockfile(fp);
    return bad ? ERR_IO : ERR_OK;
}

const ReportWriter rep_text_writer = {"text", "txt", write_text};
