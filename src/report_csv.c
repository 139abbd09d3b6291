/* report_csv: one row per device per corner, for spreadsheets and scripts. A header row names the
 * columns (README lists them); numbers in SI units with the fewest digits that read back exactly,
 * an empty field where a value is absent; text fields quoted by libcsv's writer. Each row also
 * carries the device's findings in that corner, its worst severity and, against a baseline, whether
 * any of them is new. */
#include "report.h"

#include <csv.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "numfmt.h"

static const char *const head[] = {
    "corner", "device", "model", "type", "cell", "w", "l", "m", "nf", "file", "line", "has_data", "id",
    "gm", "gds", "gmbs", "vgs", "vds", "vsb", "vth", "vdsat", "cgg", "gm_id", "id_w", "gain", "ft", "vov",
    "margin", "region", "swapped", "worst_severity", "findings", "baseline", "fails", "source", "table",
    "suggest_w", "suggest_gm_id",
};

/* A row is built in memory (text fields quoted by libcsv's csv_write) and written in one call: a
 * report of a million devices has tens of millions of fields. */
typedef struct {
    FILE *fp;
    Buf line;   /* the row being built */
    int first;  /* no separator before the first field of a row */
    int bad;    /* ERR_OK, or ERR_IO / ERR_NOMEM: the first failure */
} Out;

static void sep(Out *o)
{
    if (!o->first && buf_putc(&o->line, ',') != ERR_OK)
        o->bad = ERR_NOMEM;
    o->first = 0;
}

static void text(Out *o, const char *s)
{
    sep(o);
    if (!s)
        return;
    size_t len = strlen(s), need = 2 * len + 2; /* every byte a quote, doubled, and the two around */
    if (buf_reserve(&o->line, need) != ERR_OK) {
        o->bad = ERR_NOMEM;
        return;
    }
    o->line.len += csv_write(o->line.data + o->line.len, need, s, len);
    o->line.data[o->line.len] = '\0';
}

static void num(Out *o, double v)
{
    sep(o);
    if (!isfinite(v))
        return;
    char buf[NUMFMT_SIZE];
    if (buf_append(&o->line, buf, numfmt_json(buf, v)) != ERR_OK) /* the fewest digits that read back */
        o->bad = ERR_NOMEM;
}

static void uint_field(Out *o, size_t v, int present)
{
    sep(o);
    if (present && buf_printf(&o->line, "%zu", v) != ERR_OK)
        o->bad = ERR_NOMEM;
}

static void end_row(Out *o)
{
    if (buf_putc(&o->line, '\n') != ERR_OK)
        o->bad = ERR_NOMEM;
    if (o->line.len && fwrite(o->line.data, 1, o->line.len, o->fp) != o->line.len && !o->bad)
        o->bad = ERR_IO;
    buf_clear(&o->line);
    o->first = 1;
}

static void row(const ReportCtx *c, Out *o, size_t i, size_t k, Buf *list)
{
    const Row *r = &c->corners[k].joined->rows[i];
    const Device *dv = r->dev;
    const Figures *f = &r->fig;
    const char *file;
    uint32_t line;
    rep_card_place(c->design, dv, &file, &line);
    text(o, c->corners[k].label);
    text(o, dv->name);
    text(o, dv->model);
    text(o, rep_type_name(dv->type));
    text(o, dv->cell);
    num(o, dv->w);
    num(o, dv->l);
    num(o, dv->m);
    num(o, dv->nf);
    text(o, file);
    uint_field(o, line, line != 0);
    text(o, r->op ? "true" : "false");
    double q[] = {f->id, f->gm, f->gds, f->gmbs, f->vgs, f->vds, f->vsb, f->vth, f->vdsat, f->cgg,
                  f->gm_id, f->id_w, f->gain, f->ft, f->vov, f->margin};
    for (size_t n = 0; n < sizeof q / sizeof q[0]; n++)
        num(o, q[n]);
    text(o, rep_region_word(r));
    text(o, r->op && f->swapped ? "true" : "false");
    /* this device's findings in this corner */
    const RepPrep *p = c->prep;
    int worst = -1, any_new = 0;
    size_t fails = 0;
    buf_clear(list);
    for (size_t q2 = p->row_start[i]; q2 < p->row_start[i + 1]; q2++) {
        RepRef ref = p->refs[q2];
        if (ref.corner != k)
            continue;
        const Finding *fd = rep_finding(c, ref);
        if (!fd->waived && (int)fd->sev > worst)
            worst = (int)fd->sev;
        any_new |= rep_status(c, ref.corner, ref.index) == BL_NEW;
        fails += rep_fails(c, ref.corner, ref.index) != 0;
        if ((list->len && buf_puts(list, "; ") != ERR_OK) ||
            buf_printf(list, "%s:%s%s", rep_check_name((int)fd->check), rule_severity_name[fd->sev],
                       fd->waived ? " (waived)" : "") != ERR_OK)
            o->bad = ERR_NOMEM;
    }
    text(o, worst >= 0 ? rule_severity_name[worst] : NULL);
    text(o, list->len ? list->data : NULL);
    text(o, !c->baseline || !list->len ? NULL : any_new ? "new" : "unchanged");
    uint_field(o, fails, 1);
    text(o, rep_source(r));
    text(o, rep_table_path(r));
    double w = NAN, g = NAN;
    rep_suggestion(r, &w, &g);
    num(o, w);
    num(o, g);
    end_row(o);
}

static int write_csv(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    Out o = {fp, BUF_INIT, 1, ERR_OK};
    for (size_t h = 0; h < sizeof head / sizeof head[0]; h++)
        text(&o, head[h]);
    end_row(&o);
    Buf list = BUF_INIT;
    size_t n = c->corners[0].joined->n;
    for (size_t i = 0; i < n && !o.bad; i++)
        for (size_t k = 0; k < c->ncorners; k++)
            row(c, &o, i, k, &list);
    buf_free(&list);
    buf_free(&o.line);
    if (o.bad == ERR_NOMEM)
        return ERR_NOMEM;
    if (o.bad || fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

const ReportWriter rep_csv_writer = {"csv", "csv", write_csv};
