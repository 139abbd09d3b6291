/* check: the default checks applied to every joined row, producing findings with the measured value,
 * the limit, a sentence for the designer, the device card's location and the rule that asked for the
 * check. Called by the CLI after join; writers read the result. A check that cannot be evaluated for
 * lack of data gives an info finding, never a silent pass. */
#include "check.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "report.h"

typedef struct {
    const RuleSet *rs;
    const Design *ds;
    Findings *out;
    Buf msg;
    int oom;
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

static void add(Ctx *c, size_t row, const Device *dv, CheckId id, Severity sev, double value, double limit,
                const char *fmt, ...) PRINTF_LIKE(8, 9);

static void add(Ctx *c, size_t row, const Device *dv, CheckId id, Severity sev, double value, double limit,
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
    Finding f = {row, id, sev, value, limit, text, card_loc(c->ds, dv), rule_check(c->rs, id)->from};
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

static void check_row(Ctx *c, size_t i, const Row *r)
{
    const Device *dv = r->dev;
    const RuleSet *rs = c->rs;
    const CheckRule *nodata = rule_check(rs, CHECK_NODATA), *off = rule_check(rs, CHECK_OFF),
                    *tri = rule_check(rs, CHECK_TRIODE), *mar = rule_check(rs, CHECK_MARGIN),
                    *gain = rule_check(rs, CHECK_GAIN);
    char a[40], b[40], why[96];

    if (!r->op) {
        if (nodata->enabled)
            add(c, i, dv, CHECK_NODATA, nodata->sev, NAN, NAN,
                "no operating-point data: the dump has no record for this device, so nothing was checked");
        return;
    }
    const Figures *f = &r->fig;
    const Bands *bands = rule_bands(rs, dv, NULL);

    /* off: an off device gets no other finding (its margin and gain mean nothing) */
    double l = isfinite(dv->l) && dv->l > 0.0 ? dv->l : NAN;
    double per_square = f->id_w * l; /* ID*L/(W*m), as fig_derive reads it */
    if (f->region == REGION_OFF) {
        if (off->enabled) {
            if (f->id == 0.0)
                add(c, i, dv, CHECK_OFF, off->sev, 0.0, bands->off_below, "ID is 0: the device is off");
            else
                add(c, i, dv, CHECK_OFF, off->sev, per_square, bands->off_below,
                    "ID is %s, %s per square (ID*L/(W*m)), below the %s off limit: the device is off",
                    eng(f->id, "A", a, sizeof a), eng(per_square, "A", b, sizeof b),
                    eng(bands->off_below, "A", why, sizeof why));
        }
        return;
    }
    if (off->enabled) {
        if (isnan(f->id))
            add(c, i, dv, CHECK_OFF, SEV_INFO, NAN, bands->off_below,
                "cannot check whether the device is off: the dump has no id");
        else if (isnan(per_square))
            add(c, i, dv, CHECK_OFF, SEV_INFO, NAN, bands->off_below,
                "cannot check whether the device is off: its W, L or m is not known, so ID per square is not");
    }

    /* triode and saturation margin */
    if (isnan(f->margin)) {
        lacking(f->vds, "vds", f->vdsat, "vdsat", why, sizeof why);
        if (tri->enabled)
            add(c, i, dv, CHECK_TRIODE, SEV_INFO, NAN, 0.0, "cannot check for triode: %s", why);
        if (mar->enabled)
            add(c, i, dv, CHECK_MARGIN, SEV_INFO, NAN, mar->limit, "cannot check the VDS-VDSAT margin: %s", why);
    } else {
        int triode = f->margin < 0.0;
        if (triode && tri->enabled) {
            char m[40];
            add(c, i, dv, CHECK_TRIODE, tri->sev, f->margin, 0.0,
                "VDS is %s but VDSAT is %s (VDS-VDSAT = %s): the device is in triode", eng(f->vds, "V", a, sizeof a),
                eng(f->vdsat, "V", b, sizeof b), eng(f->margin, "V", m, sizeof m));
        } else if (mar->enabled && !isnan(mar->limit) && f->margin < mar->limit) {
            /* with the triode check off, a triode device is still below the margin */
            add(c, i, dv, CHECK_MARGIN, mar->sev, f->margin, mar->limit,
                "VDS-VDSAT is %s, below the %s minimum: %s", eng(f->margin, "V", a, sizeof a),
                eng(mar->limit, "V", b, sizeof b),
                triode ? "the device is in triode" : "the device is close to leaving saturation");
        }
    }

    /* intrinsic gain */
    if (gain->enabled) {
        if (isnan(f->gain)) {
            if (isnan(f->gm) || isnan(f->gds))
                lacking(f->gm, "gm", f->gds, "gds", why, sizeof why);
            else if (f->gds == 0.0)
                snprintf(why, sizeof why, "gds is 0, so the gain is undefined");
            else
                snprintf(why, sizeof why, "the values do not give a number");
            add(c, i, dv, CHECK_GAIN, SEV_INFO, NAN, gain->limit, "cannot check gm/gds: %s", why);
        } else if (!isnan(gain->limit) && f->gain < gain->limit) {
            add(c, i, dv, CHECK_GAIN, gain->sev, f->gain, gain->limit,
                "gm/gds is %s, below the minimum of %s: the device gives little voltage gain",
                eng(f->gain, "", a, sizeof a), eng(gain->limit, "", b, sizeof b));
        }
    }
}

int chk_run(const RuleSet *rs, const Design *ds, const Joined *j, Findings *out)
{
    memset(out, 0, sizeof *out);
    arena_init(&out->arena);
    Ctx c = {rs, ds, out, BUF_INIT, 0};
    for (size_t i = 0; i < j->n && !c.oom; i++)
        check_row(&c, i, &j->rows[i]);
    buf_free(&c.msg);
    if (c.oom) {
        chk_free(out);
        return ERR_NOMEM;
    }
    /* Stable counting sort by severity, errors first: findings were made in netlist order. */
    if (out->n > 1) {
        Finding *sorted = malloc(out->n * sizeof *sorted);
        if (!sorted) {
            chk_free(out);
            return ERR_NOMEM;
        }
        size_t at[SEV_COUNT];
        at[SEV_ERROR] = 0;
        at[SEV_WARNING] = out->count[SEV_ERROR];
        at[SEV_INFO] = at[SEV_WARNING] + out->count[SEV_WARNING];
        for (size_t i = 0; i < out->n; i++)
            sorted[at[out->items[i].sev]++] = out->items[i];
        free(out->items);
        out->items = sorted;
        out->cap = out->n;
    }
    return ERR_OK;
}

void chk_free(Findings *f)
{
    if (!f)
        return;
    free(f->items);
    arena_free(&f->arena);
    memset(f, 0, sizeof *f);
}
