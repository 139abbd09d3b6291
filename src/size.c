/* size: `biaslint size` (a table answers a sizing question) and the command glue of
 * `biaslint characterize` (options to a sweep, a progress bar, the table written). */
#include "size.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "characterize.h"
#include "outfile.h"
#include "run.h"

/* "L 5 um outside 0.18..4 um" for the first axis in miss. */
static void outside_text(const Lut *t, unsigned miss, const double v[LUTAX_COUNT], Buf *b)
{
    const LutInfo *in = lut_info(t);
    for (int a = 0; a < LUTAX_COUNT; a++) {
        if (!(miss >> a & 1u))
            continue;
        const double *x = in->axis[a];
        size_t n = in->n[a];
        int rc = a == LUTAX_L ? buf_printf(b, "%sL %g um is outside %g..%g um", b->len ? "; " : "", v[a] * 1e6,
                                           x[0] * 1e6, x[n - 1] * 1e6)
                              : buf_printf(b, "%s%s %g V is outside %g..%g V", b->len ? "; " : "",
                                           lut_axis_label[a], v[a], x[0], x[n - 1]);
        if (rc != ERR_OK)
            return;
    }
}

int size_answer(const Lut *t, double l, double vgs, double vds, double vsb, double gm_id, double want_id,
                double want_gm, SizeAnswer *a, DiagList *d)
{
    memset(a, 0, sizeof *a);
    a->l = l;
    a->vds = vds;
    a->vsb = vsb;
    a->w = a->id = a->gm = NAN;
    const LutInfo *in = lut_info(t);
    LutVals v;
    SrcLoc at = {lut_path(t), 0, 0};
    if (isnan(vgs)) {
        double limit = NAN;
        a->inverse = 1;
        int rc = lut_vgs_for_gmid(t, l, vds, vsb, gm_id, &vgs, &v, &limit);
        if (rc == LUT_INV_OUTSIDE) {
            double p[LUTAX_COUNT] = {l, vsb, vds, in->axis[LUTAX_VGS][0]};
            Buf b = BUF_INIT;
            LutVals tmp;
            outside_text(t, lut_eval(t, l, p[LUTAX_VGS], vds, vsb, &tmp), p, &b);
            diag_add(d, DIAG_ERROR, at, "no answer: %s (a table never extrapolates)", b.len ? b.data : "outside the grid");
            buf_free(&b);
            return ERR_INPUT;
        }
        if (rc == LUT_INV_HIGH)
            return diag_add(d, DIAG_ERROR, at,
                            "gm/ID %g /V is out of reach at L %g um, VDS %g V, VSB %g V: the table's highest there is "
                            "%.4g /V (weak inversion)",
                            gm_id, l * 1e6, vds, vsb, limit);
        if (rc == LUT_INV_LOW)
            return diag_add(d, DIAG_ERROR, at,
                            "gm/ID %g /V is out of reach at L %g um, VDS %g V, VSB %g V: the table's lowest there is "
                            "%.4g /V (at its highest VGS)",
                            gm_id, l * 1e6, vds, vsb, limit);
    } else {
        unsigned miss = lut_eval(t, l, vgs, vds, vsb, &v);
        if (miss) {
            double p[LUTAX_COUNT] = {l, vsb, vds, vgs};
            Buf b = BUF_INIT;
            outside_text(t, miss, p, &b);
            diag_add(d, DIAG_ERROR, at, "no answer: %s (a table never extrapolates)", b.len ? b.data : "outside the grid");
            buf_free(&b);
            return ERR_INPUT;
        }
    }
    a->vgs = vgs;
    a->gm_id = v.gm_id;
    a->id_w = v.id_w;
    a->gain = v.gain;
    a->ft = v.ft;
    a->vth = v.q[LUTQ_VTH];
    a->vdsat = v.q[LUTQ_VDSAT];
    if (!isnan(want_id)) {
        if (!(want_id > 0))
            return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "--id must be a positive current, not %g A", want_id);
        if (!(v.id_w > 0))
            return diag_add(d, DIAG_ERROR, at, "the device carries no current at this bias: no width gives %g A",
                            want_id);
        a->id = want_id;
        a->w = want_id / v.id_w;
    } else if (!isnan(want_gm)) {
        double gm_w = v.q[LUTQ_GM] / in->w_ref;
        if (!(want_gm > 0))
            return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "--gm must be a positive transconductance, not %g S", want_gm);
        if (!(gm_w > 0))
            return diag_add(d, DIAG_ERROR, at, "gm is 0 at this bias: no width gives %g S", want_gm);
        a->gm = want_gm;
        a->w = want_gm / gm_w;
    }
    return ERR_OK;
}

/* v in engineering notation with an SI prefix: 1.23e-5,"A" -> "12.3 uA"; NaN -> "-". */
static int put_eng(Buf *b, double v, const char *unit)
{
    if (isnan(v))
        return buf_puts(b, "-");
    static const char *const pre[] = {"a", "f", "p", "n", "u", "m", "", "k", "M", "G", "T"};
    int k = 6;
    double x = fabs(v);
    if (x != 0) {
        int e = (int)floor(log10(x) / 3);
        e = e < -6 ? -6 : e > 4 ? 4 : e;
        k = 6 + e;
        x = v / pow(1000.0, e);
    } else {
        x = 0;
    }
    return buf_printf(b, "%.4g %s%s", x, pre[k], unit);
}

int size_format_text(const Lut *t, const SizeAnswer *a, Buf *b)
{
    const LutInfo *in = lut_info(t);
    int rc = buf_printf(b, "table   %s: %s (%s%s%d), %g C, W_ref %g um\n", lut_path(t), in->model,
                        in->type == MOS_PMOS ? "pmos" : "nmos", in->level ? ", level " : "", in->level, in->temp_c,
                        in->w_ref * 1e6);
    rc |= buf_printf(b, "bias    L %g um, VDS %g V, VSB %g V%s\n", a->l * 1e6, a->vds, a->vsb,
                     in->type == MOS_PMOS ? " (magnitudes)" : "");
    rc |= buf_puts(b, "VGS     ");
    rc |= put_eng(b, a->vgs, "V");
    rc |= buf_puts(b, a->inverse ? "   (the VGS that gives this gm/ID)\n" : "\n");
    rc |= buf_printf(b, "gm/ID   %.4g /V\n", a->gm_id);
    rc |= buf_puts(b, "ID/W    ");
    rc |= put_eng(b, a->id_w, "A/m");
    rc |= buf_printf(b, "   (%.4g uA/um)\n", a->id_w);
    rc |= buf_printf(b, "gain    %.4g   (gm/gds)\n", a->gain);
    rc |= buf_puts(b, "fT      ");
    rc |= put_eng(b, a->ft, "Hz");
    rc |= buf_puts(b, isnan(a->ft) ? "   (the table has no Cgg)\n" : "   (intrinsic Cgg)\n");
    rc |= buf_puts(b, "VTH     ");
    rc |= put_eng(b, a->vth, "V");
    rc |= buf_puts(b, "\nVDSAT   ");
    rc |= put_eng(b, a->vdsat, "V");
    rc |= buf_putc(b, '\n');
    if (!isnan(a->id) || !isnan(a->gm)) {
        rc |= buf_puts(b, "W       ");
        rc |= put_eng(b, a->w, "m");
        rc |= buf_puts(b, "   (total over fingers, m=1, for ");
        rc |= !isnan(a->id) ? put_eng(b, a->id, "A") : put_eng(b, a->gm, "S");
        rc |= buf_puts(b, ")\n");
    }
    return rc ? ERR_NOMEM : ERR_OK;
}

static int put_json_num(Buf *b, const char *key, double v, int last)
{
    if (isfinite(v))
        return buf_printf(b, "  \"%s\": %.10g%s\n", key, v, last ? "" : ",");
    return buf_printf(b, "  \"%s\": null%s\n", key, last ? "" : ",");
}

int size_format_json(const SizeAnswer *a, Buf *b)
{
    int wide = !isnan(a->id) || !isnan(a->gm);
    int rc = buf_puts(b, "{\n");
    rc |= put_json_num(b, "vgs", a->vgs, 0);
    rc |= put_json_num(b, "gm_id", a->gm_id, 0);
    rc |= put_json_num(b, "id_w", a->id_w, 0);
    rc |= put_json_num(b, "gain", a->gain, 0);
    rc |= put_json_num(b, "ft", a->ft, 0);
    rc |= put_json_num(b, "vth", a->vth, 0);
    rc |= put_json_num(b, "vdsat", a->vdsat, !wide);
    if (wide)
        rc |= put_json_num(b, "w", a->w, 1);
    rc |= buf_puts(b, "}\n");
    return rc ? ERR_NOMEM : ERR_OK;
}

int run_size(const Options *o, FILE *out, DiagList *d)
{
    Lut *t = lut_load(o->table, d);
    if (!t)
        return d->oom ? EXIT_INTERNAL : EXIT_BAD_INPUT;
    SizeAnswer a;
    Buf b = BUF_INIT;
    int status = EXIT_BAD_INPUT;
    if (size_answer(t, o->at_l, o->at_vgs, o->at_vds, o->at_vsb, o->want_gm_id, o->want_id, o->want_gm, &a, d) !=
        ERR_OK)
        goto done;
    int rc = o->format && strcmp(o->format, "json") == 0 ? size_format_json(&a, &b) : size_format_text(t, &a, &b);
    if (rc != ERR_OK) {
        diag_nomem(d);
        status = EXIT_INTERNAL;
        goto done;
    }
    if (o->output) {
        OutFile of = {0};
        const char *inputs[1] = {o->table};
        if (out_open(&of, o->output, inputs, 1, d) == ERR_OK) {
            if (b.len)
                fwrite(b.data, 1, b.len, of.fp);
            if (out_commit(&of, d) == ERR_OK)
                status = EXIT_CLEAN;
        }
        out_abort(&of);
    } else {
        fwrite(b.data, 1, b.len, out);
        status = fflush(out) == 0 ? EXIT_CLEAN : EXIT_BAD_INPUT;
    }
done:
    buf_free(&b);
    lut_free(t);
    return status;
}

/* ---- width suggestions (check --table) --------------------------------------------------------- */

/* v as "9.3 um", "125 uA": 3 significant digits and an SI prefix, into buf. */
static const char *eng3(double v, const char *unit, char *buf, size_t size)
{
    static const char *const pre[] = {"f", "p", "n", "u", "m", "", "k", "M"};
    int e = v != 0 && isfinite(v) ? (int)floor(log10(fabs(v)) / 3) : 0;
    e = e < -5 ? -5 : e > 2 ? 2 : e;
    snprintf(buf, size, "%.3g %s%s", v / pow(1000.0, e), pre[e + 5], unit);
    return buf;
}

int size_suggest(const Lut *const *tables, size_t ntables, double temp_c, Joined *j, Findings *f)
{
    for (size_t i = 0; i < f->n; i++) {
        Finding *fd = &f->items[i];
        if (fd->check != CHECK_GMID || fd->row >= j->n)
            continue;
        Row *r = &j->rows[fd->row];
        const Device *dv = r->dev;
        double lo = fd->want_lo, hi = fd->want_hi;
        double target = !isnan(lo) && !isnan(hi) ? 0.5 * (lo + hi) : !isnan(lo) ? lo : hi;
        const Lut *t = lut_for_device(tables, ntables, dv->type, dv->model, temp_c);
        if (!t || !(target > 0) || !(r->fig.id > 0) || !(dv->m > 0))
            continue;
        double w, vgs;
        int rc = lut_suggest_w(t, dv->l, r->fig.vds, r->fig.vsb, target, r->fig.id, dv->m, &w, &vgs);
        char a[32], b[32], c[32], more[256];
        if (rc == LUT_INV_OK && w > 0 && r->tab) {
            r->tab->suggest_w = w;
            r->tab->suggest_gmid = target;
            char each[32] = "";
            if (dv->m != 1)
                snprintf(each, sizeof each, " (each of m=%g)", dv->m);
            snprintf(more, sizeof more, "W %s -> %s%s restores gm/ID %.3g /V at %s (table %s)",
                     eng3(dv->w, "m", a, sizeof a), eng3(w, "m", b, sizeof b), each, target,
                     eng3(r->fig.id, "A", c, sizeof c), lut_path(t));
        } else {
            snprintf(more, sizeof more, "no width suggestion: %s",
                     rc == LUT_INV_OUTSIDE ? "L or the bias lies outside the table's grid"
                                           : "the table does not reach that gm/ID at this L and bias");
        }
        size_t n1 = fd->message ? strlen(fd->message) : 0, n2 = strlen(more);
        char *m = arena_alloc(&f->arena, n1 + n2 + 4);
        if (!m)
            return ERR_NOMEM;
        size_t k = n1;
        if (n1)
            memcpy(m, fd->message, n1);
        if (k && m[k - 1] == '.')
            k--; /* "...intended. W ..." reads as two sentences: make it one */
        if (k) {
            memcpy(m + k, "; ", 2);
            k += 2;
        }
        memcpy(m + k, more, n2 + 1);
        fd->message = m;
    }
    return ERR_OK;
}

/* ---- characterize ------------------------------------------------------------------------------ */

typedef struct {
    FILE *fp;
    const char *what;
    int last;   /* last percentage drawn, -1 before the first */
} Bar;

#define BAR_WIDTH 30

static void draw(void *ctx, double f)
{
    Bar *b = ctx;
    int pct = (int)(f * 100 + 0.5);
    if (pct == b->last)
        return;
    b->last = pct;
    int fill = (int)(f * BAR_WIDTH + 0.5);
    fprintf(b->fp, "\r%s [", b->what);
    for (int i = 0; i < BAR_WIDTH; i++)
        fputc(i < fill ? '#' : '.', b->fp);
    fprintf(b->fp, "] %3d%%", pct);
    fflush(b->fp);
}

int run_characterize(const Options *o, FILE *progress, DiagList *d)
{
    CharSpec s;
    memset(&s, 0, sizeof s);
    s.models = o->models;
    s.section = o->section;
    s.model = o->model;
    s.l = o->lengths;
    s.nl = o->nlengths;
    s.vgs = (CharRange){o->vgs_grid[0], o->vgs_grid[1], o->vgs_grid[2]};
    s.vds = (CharRange){o->vds_grid[0], o->vds_grid[1], o->vds_grid[2]};
    s.vsb = (CharRange){o->vsb_grid[0], o->vsb_grid[1], o->vsb_grid[2]};
    s.temp_c = o->temp_c;
    s.w_ref = o->w_ref;
    const char *ng = getenv("BIASLINT_NGSPICE");
    s.ngspice = ng && ng[0] ? ng : NULL;
    s.deck_copy = o->deck;
    Buf what = BUF_INIT;
    Bar bar = {progress, o->model, -1};
    if (buf_printf(&what, "characterize %s", o->model) == ERR_OK)
        bar.what = what.data;
    int rc = char_run(&s, o->output, progress && !o->quiet ? draw : NULL, &bar, d);
    if (progress && !o->quiet && bar.last >= 0) {
        if (rc == ERR_OK)
            fputc('\n', progress);
        else
            fprintf(progress, "\r%*s\r", (int)strlen(bar.what) + BAR_WIDTH + 8, "");
    }
    buf_free(&what);
    if (rc == ERR_OK)
        return EXIT_CLEAN;
    return rc == ERR_NOMEM ? EXIT_INTERNAL : EXIT_BAD_INPUT;
}
