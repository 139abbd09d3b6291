/* annotate: one pass over the top file, copying every byte that is not an annotation line and
 * inserting the new lines at each card's anchor. Cards and findings are grouped by counting sorts,
 * so the pass is linear in the file plus the devices. */
#include "annotate.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "metrics.h"
#include "numfmt.h"
#include "report.h"

#define ANN_MAX_FINDING_LINES 6 /* per summary: the worst findings, then a count */

/* Whether the line at off is an annotation line. The first line never is: SPICE reads it as the
 * title whatever it holds, and biaslint writes its lines after cards only (a title starting with
 * the mark was dropped by strip and annotate: found by fuzz_netlist). */
static int is_mark(const char *text, size_t len, size_t off)
{
    return off > 0 && off + 1 < len && text[off] == ANN_MARK[0] && text[off + 1] == ANN_MARK[1];
}

static size_t line_end(const char *text, size_t len, size_t off)
{
    const char *nl = memchr(text + off, '\n', len - off);
    return nl ? (size_t)(nl - text) + 1 : len;
}

/* Length of the text once a final block of annotation lines without a line ending (written after a
 * last line that had none) is taken off, together with the line ending annotate put before it. */
static size_t effective_len(const char *text, size_t len)
{
    if (len == 0 || text[len - 1] == '\n')
        return len;
    size_t s = len;
    while (s > 0 && text[s - 1] != '\n')
        s--;
    if (!is_mark(text, len, s))
        return len;
    /* walk back over whole annotation lines */
    while (s > 0) {
        size_t p = s - 1; /* the '\n' ending the previous line */
        size_t b = p;
        while (b > 0 && text[b - 1] != '\n')
            b--;
        if (!is_mark(text, len, b))
            break;
        s = b;
    }
    if (s == 0)
        return 0;
    size_t e = s - 1;
    if (e > 0 && text[e - 1] == '\r')
        e--;
    return e;
}

int ann_strip(const char *text, size_t len, Buf *out)
{
    size_t eff = effective_len(text, len);
    for (size_t off = 0; off < eff;) {
        size_t e = line_end(text, eff, off);
        if (!is_mark(text, eff, off) && buf_append(out, text + off, e - off) != ERR_OK)
            return ERR_NOMEM;
        off = e;
    }
    return ERR_OK;
}

/* ---- the annotation lines ---- */

/* An index into the rows, the cards or a corner's findings: four bytes, since a large design holds
 * several arrays of them with one entry per device. */
typedef uint32_t Ix;
#define IX_MAX UINT32_MAX

typedef struct {
    const Design *ds;
    const Joined *j;                  /* the corner being written */
    const Findings *f;
    Ix *row_start, *row_list;         /* rows grouped by card */
    Ix *find_start, *find_list;       /* the corner's findings grouped by row */
    const char *eol;
    Buf *out;
    const AnnCorner *cs;              /* every corner, and their findings grouped by row */
    size_t ncs;
    Ix **fstart, **flist;
    const char *label;                /* the corner's label on each line, or NULL */
} Ctx;

static void use_corner(Ctx *c, size_t k)
{
    c->j = c->cs[k].joined;
    c->f = c->cs[k].findings;
    c->find_start = c->fstart[k];
    c->find_list = c->flist[k];
    c->label = c->cs[k].label && c->cs[k].label[0] ? c->cs[k].label : NULL;
}

/* "*~ [x1.m1] " and, with several corners, "frost: ". */
static int head(Ctx *c, const char *name)
{
    /* appends, not printf: these lines are written for every device of a large design */
    int rc = buf_puts(c->out, ANN_MARK " [") | buf_puts(c->out, name) | buf_puts(c->out, "] ");
    if (c->label)
        rc |= buf_puts(c->out, c->label) | buf_puts(c->out, ": ");
    return rc;
}

static int put_eng(Buf *b, const char *label, double v, const char *unit)
{
    char tmp[32];
    return buf_puts(b, " | ") | buf_puts(b, label) | buf_putc(b, ' ') | buf_puts(b, rep_eng(v, unit, tmp, sizeof tmp));
}

/* " | LABEL %.3gUNIT", or " | LABEL -" when v is absent. */
static int put_g3(Buf *b, const char *label, double v, const char *unit)
{
    char tmp[NUMFMT_SIZE];
    int rc = buf_puts(b, " | ") | buf_puts(b, label) | buf_putc(b, ' ');
    if (isnan(v))
        return rc | buf_putc(b, '-');
    return rc | buf_append(b, tmp, numfmt_g(tmp, v, 3)) | buf_puts(b, unit);
}

static int device_line(Ctx *c, const Row *r)
{
    const Figures *g = &r->fig;
    Buf *b = c->out;
    int rc = head(c, r->dev->name);
    if (!r->op)
        return rc | buf_printf(b, "%s%s", row_lut_miss(r) ? "no figures: the bias or L lies outside the lookup table's grid"
                                                      : "no operating-point data", c->eol);
    rc |= buf_puts(b, fig_region_name[g->region]);
    if (g->swapped)
        rc |= buf_puts(b, " (drain/source swapped)");
    rc |= put_g3(b, "gm/ID", g->gm_id, "/V");
    rc |= put_g3(b, "gain", g->gain, "");
    rc |= put_eng(b, "margin", g->margin, "V");
    rc |= put_eng(b, "ID", g->id, "A");
    rc |= put_eng(b, "fT", g->ft, "Hz");
    double w, gm_id;
    if (rep_suggestion(r, &w, &gm_id)) {
        char tmp[NUMFMT_SIZE];
        rc |= put_eng(b, "suggest W", w, "m") | buf_puts(b, " for gm/ID ") |
              buf_append(b, tmp, numfmt_g(tmp, gm_id, 3)) | buf_puts(b, "/V");
    }
    if (row_lut(r))
        rc |= buf_puts(b, " | from table ") | buf_puts(b, rep_table_path(r));
    return rc | buf_puts(b, c->eol);
}

static int finding_line(Ctx *c, const Finding *fd)
{
    const Row *r = &c->j->rows[fd->row];
    if (fd->waived) /* shown, marked, as in every report */
        return head(c, r->dev->name) | buf_printf(c->out, "waived %s %s: %s (%s)%s", rule_severity_name[fd->sev],
                                                  rule_check_name[fd->check], fd->message,
                                                  fd->waiver_reason ? fd->waiver_reason : "no reason given", c->eol);
    return head(c, r->dev->name) | buf_printf(c->out, "%s %s: %s%s", rule_severity_name[fd->sev],
                                              rule_check_name[fd->check], fd->message, c->eol);
}

static int row_findings(Ctx *c, size_t row)
{
    int rc = ERR_OK;
    for (size_t k = c->find_start[row]; k < c->find_start[row + 1]; k++)
        rc |= finding_line(c, &c->f->items[c->find_list[k]]);
    return rc;
}

/* One line for many instances of a card: region counts, gm/ID range, worst margin, then the worst
 * findings (they are sorted by severity already, so the first ones are the worst). */
static int summary_lines(Ctx *c, const Ix *rows, size_t n)
{
    size_t region_n[REGION_COUNT] = {0}, worst = SIZE_MAX, nfind = 0;
    double lo = NAN, hi = NAN;
    for (size_t k = 0; k < n; k++) {
        const Row *r = &c->j->rows[rows[k]];
        region_n[r->op ? r->fig.region : REGION_UNKNOWN]++;
        if (!isnan(r->fig.gm_id)) {
            lo = isnan(lo) || r->fig.gm_id < lo ? r->fig.gm_id : lo;
            hi = isnan(hi) || r->fig.gm_id > hi ? r->fig.gm_id : hi;
        }
        if (!isnan(r->fig.margin) && (worst == SIZE_MAX || r->fig.margin < c->j->rows[worst].fig.margin))
            worst = rows[k];
        nfind += c->find_start[rows[k] + 1] - c->find_start[rows[k]];
    }
    const char *card_name = c->j->rows[rows[0]].dev->name;
    const char *leaf = strrchr(card_name, '.');
    Buf *b = c->out;
    int rc = buf_printf(b, "%s [%zu instances of %s]", ANN_MARK, n, leaf ? leaf + 1 : card_name);
    if (c->label)
        rc |= buf_printf(b, " %s:", c->label);
    const char *sep = " ";
    for (int g = 0; g < REGION_COUNT; g++) {
        if (!region_n[g])
            continue;
        rc |= buf_printf(b, "%s%zu %s", sep, region_n[g], g == REGION_UNKNOWN ? "without data" : fig_region_name[g]);
        sep = ", ";
    }
    if (!isnan(lo) && lo == hi)
        rc |= buf_printf(b, " | gm/ID %.3g/V", lo);
    else if (!isnan(lo))
        rc |= buf_printf(b, " | gm/ID %.3g..%.3g/V", lo, hi);
    if (worst != SIZE_MAX) {
        char tmp[32];
        rc |= buf_printf(b, " | worst margin %s (%s)", rep_eng(c->j->rows[worst].fig.margin, "V", tmp, sizeof tmp),
                         c->j->rows[worst].dev->name);
    }
    rc |= buf_puts(b, c->eol);
    /* the worst findings of all instances: collect their indices, lowest (= most severe) first */
    size_t shown = 0;
    for (int sev = SEV_ERROR; sev >= SEV_INFO && shown < ANN_MAX_FINDING_LINES; sev--)
        for (size_t k = 0; k < n && shown < ANN_MAX_FINDING_LINES; k++)
            for (size_t q = c->find_start[rows[k]]; q < c->find_start[rows[k] + 1] && shown < ANN_MAX_FINDING_LINES; q++) {
                const Finding *fd = &c->f->items[c->find_list[q]];
                if ((int)fd->sev == sev) {
                    rc |= finding_line(c, fd);
                    shown++;
                }
            }
    if (nfind > shown)
        rc |= buf_printf(b, "%s %zu more findings for these instances%s%s are in the report%s", ANN_MARK,
                         nfind - shown, c->label ? " in " : "", c->label ? c->label : "", c->eol);
    return rc;
}

static int card_lines(Ctx *c, size_t card)
{
    const Ix *rows = c->row_list + c->row_start[card];
    size_t n = c->row_start[card + 1] - c->row_start[card];
    int rc = ERR_OK;
    if (n > ANN_MAX_INSTANCES) {
        for (size_t q = 0; q < c->ncs; q++) {
            use_corner(c, q);
            rc |= summary_lines(c, rows, n);
        }
        return rc;
    }
    /* each device with its corners together */
    for (size_t k = 0; k < n; k++)
        for (size_t q = 0; q < c->ncs; q++) {
            use_corner(c, q);
            rc |= device_line(c, &c->j->rows[rows[k]]);
            rc |= row_findings(c, rows[k]);
        }
    return rc;
}

/* Counting sort of n items into nkeys groups: start[] has nkeys+1 entries, list[] the items. */
static int group(size_t nkeys, size_t n, size_t (*key)(const void *, size_t), const void *ctx, Ix **start,
                 Ix **list)
{
    if (nkeys >= IX_MAX || n >= IX_MAX)
        return ERR_NOMEM; /* not reached: a design this large does not fit in memory to begin with */
    *start = calloc(nkeys + 1, sizeof **start);
    *list = malloc((n ? n : 1) * sizeof **list);
    if (!*start || !*list)
        return ERR_NOMEM;
    for (size_t i = 0; i < n; i++)
        (*start)[key(ctx, i) + 1]++;
    for (size_t k = 0; k < nkeys; k++)
        (*start)[k + 1] += (*start)[k];
    Ix *fill = malloc((nkeys ? nkeys : 1) * sizeof *fill);
    if (!fill)
        return ERR_NOMEM;
    memcpy(fill, *start, nkeys * sizeof *fill);
    for (size_t i = 0; i < n; i++)
        (*list)[fill[key(ctx, i)]++] = (Ix)i;
    free(fill);
    return ERR_OK;
}

static size_t row_card(const void *ctx, size_t i)
{
    return ((const Joined *)ctx)->rows[i].dev->card;
}

static size_t finding_row(const void *ctx, size_t i)
{
    return ((const Findings *)ctx)->items[i].row;
}

typedef struct {
    size_t anchor;
    Ix card;
} Slot;

static int by_anchor(const void *a, const void *b)
{
    const Slot *x = a, *y = b;
    if (x->anchor != y->anchor)
        return x->anchor < y->anchor ? -1 : 1;
    return x->card < y->card ? -1 : x->card > y->card;
}

/* order[0..n): cards (with rows) by anchor, then by card. They come in reading order, which is
 * anchor order unless a .lib section was read late: sorted only then. */
static int anchor_order(const Card *cards, Ix *order, size_t n)
{
    size_t k = 1;
    while (k < n && cards[order[k - 1]].anchor_end <= cards[order[k]].anchor_end)
        k++;
    if (k >= n)
        return ERR_OK;
    Slot *s = malloc(n * sizeof *s);
    if (!s)
        return ERR_NOMEM;
    for (k = 0; k < n; k++)
        s[k] = (Slot){cards[order[k]].anchor_end, order[k]};
    qsort(s, n, sizeof *s, by_anchor);
    for (k = 0; k < n; k++)
        order[k] = s[k].card;
    free(s);
    return ERR_OK;
}

int ann_render(const Design *ds, const Joined *j, const Findings *f, Buf *out)
{
    AnnCorner one = {NULL, j, f};
    return ann_render_corners(ds, &one, 1, out);
}

#define ANN_FLUSH ((size_t)1 << 20) /* ann_write_corners hands the text on in pieces of about this */

/* Where card k's annotation goes: its anchor, or the end of the text (eff) for one past it. */
static inline size_t anchor_at(const Design *ds, Ix k, size_t eff)
{
    return ds->cards[k].anchor_end > eff ? eff : ds->cards[k].anchor_end;
}

/* What ann_render_corners does; with sink set, out is written to it and emptied whenever it holds
 * ANN_FLUSH bytes (never inside one anchor's block, which the last-line fix below rewrites), so
 * that a netlist of a million cards is not held twice in memory. *ioerr is set on a write error. */
static int render(const Design *ds, const AnnCorner *corners, size_t ncorners, Buf *out, FILE *sink, int *ioerr)
{
    if (ncorners == 0)
        return ERR_OK;
    const SrcFile *top = ds->files.files[0];
    const Joined *j = corners[0].joined;
    Ctx c = {ds, j, corners[0].findings, NULL, NULL, NULL, NULL, "\n", out, corners, ncorners, NULL, NULL, NULL};
    Ix *order = malloc((ds->ncards ? ds->ncards : 1) * sizeof *order);
    c.fstart = calloc(ncorners, sizeof *c.fstart);
    c.flist = calloc(ncorners, sizeof *c.flist);
    int rc = ERR_NOMEM;
    if (!order || !c.fstart || !c.flist || group(ds->ncards, j->n, row_card, j, &c.row_start, &c.row_list) != ERR_OK)
        goto done;
    for (size_t k = 0; k < ncorners; k++)
        if (group(j->n, corners[k].findings->n, finding_row, corners[k].findings, &c.fstart[k], &c.flist[k]) != ERR_OK)
            goto done;
    size_t norder = 0;
    for (size_t k = 0; k < ds->ncards; k++)
        if (c.row_start[k + 1] > c.row_start[k])
            order[norder++] = (Ix)k;
    if (anchor_order(ds->cards, order, norder) != ERR_OK)
        goto done;

    const char *text = top->text;
    size_t eff = effective_len(text, top->len), off = 0, s = 0, dropped = 0;
    rc = ERR_OK;
    while (rc == ERR_OK && (off < eff || s < norder)) {
        size_t at = s < norder ? anchor_at(ds, order[s], eff) : eff;
        /* copy the original lines up to the anchor, leaving out old annotation lines */
        while (off < at) {
            size_t e = line_end(text, eff, off);
            if (!is_mark(text, eff, off))
                rc |= buf_append(out, text + off, e - off);
            off = e;
            if (sink && out->len >= ANN_FLUSH) {
                if (fwrite(out->data, 1, out->len, sink) != out->len)
                    *ioerr = 1;
                buf_clear(out);
                src_drop_behind(top, &dropped, off); /* a netlist copied out need not stay in memory */
            }
        }
        if (s >= norder)
            break;
        /* the new lines for every card anchored here, in the line ending of the line above */
        c.eol = at >= 2 && text[at - 1] == '\n' && text[at - 2] == '\r' ? "\r\n" : "\n";
        int no_eol = at == eff && (at == 0 || text[at - 1] != '\n');
        size_t mark = out->len;
        for (; s < norder && anchor_at(ds, order[s], eff) == at; s++)
            rc |= card_lines(&c, order[s]);
        if (no_eol && rc == ERR_OK) {
            /* the last line had no line ending: put one before the block and none after it. After a
               final CR that line ending is CRLF, as strip takes a CR before its LF for part of it
               (a bare LF there lost the file's CR: found by fuzz_netlist) */
            const char *sep = at > 0 && text[at - 1] == '\r' ? "\r\n" : c.eol;
            size_t el = strlen(c.eol), sl = strlen(sep), body = out->len - mark - el;
            if (sl > el && buf_reserve(out, sl - el) != ERR_OK) {
                rc = ERR_NOMEM;
                break;
            }
            memmove(out->data + mark + sl, out->data + mark, body);
            memcpy(out->data + mark, sep, sl);
            out->len = mark + sl + body;
            out->data[out->len] = '\0';
        }
    }
    if (rc != ERR_OK)
        rc = ERR_NOMEM;
done:
    free(order);
    free(c.row_start);
    free(c.row_list);
    for (size_t k = 0; c.fstart && k < ncorners; k++)
        free(c.fstart[k]);
    for (size_t k = 0; c.flist && k < ncorners; k++)
        free(c.flist[k]);
    free(c.fstart);
    free(c.flist);
    return rc;
}

int ann_render_corners(const Design *ds, const AnnCorner *corners, size_t ncorners, Buf *out)
{
    int ioerr = 0;
    return render(ds, corners, ncorners, out, NULL, &ioerr);
}

int ann_write_corners(const Design *ds, const AnnCorner *corners, size_t ncorners, FILE *fp)
{
    Buf b = BUF_INIT;
    int ioerr = 0;
    int rc = render(ds, corners, ncorners, &b, fp, &ioerr);
    if (rc == ERR_OK && b.len && fwrite(b.data, 1, b.len, fp) != b.len)
        ioerr = 1;
    buf_free(&b);
    return rc != ERR_OK ? rc : ioerr ? ERR_IO : ERR_OK;
}
