/* run: the stages of DESIGN.md in order. Each stage returns a status and leaves diagnostics; the
 * outputs are written only when every input was read without error, and each output file is
 * written atomically. */
#include "run.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "annotate.h"
#include "check.h"
#include "join.h"
#include "netlist.h"
#include "opbind.h"
#include "opdump.h"
#include "outfile.h"
#include "report.h"
#include "rules.h"

static int exit_for(int status)
{
    return status == ERR_NOMEM ? EXIT_INTERNAL : EXIT_BAD_INPUT;
}

/* The paths an output must never overwrite: the netlist with its includes, and the dump. */
static const char **input_paths(const Design *ds, const Options *o, size_t *n)
{
    const char **p = malloc((ds->files.n + 2 + o->nrules) * sizeof *p);
    if (!p)
        return NULL;
    size_t k = 0;
    for (size_t i = 0; i < ds->files.n; i++)
        p[k++] = ds->files.files[i]->path;
    p[k++] = o->op;
    for (size_t i = 0; i < o->nrules; i++)
        p[k++] = o->rules[i];
    *n = k;
    return p;
}

static int write_annotation(const ReportCtx *c, OutFile *of)
{
    Buf b = BUF_INIT;
    if (ann_render(c->design, c->joined, c->findings, &b) != ERR_OK) {
        buf_free(&b);
        return ERR_NOMEM;
    }
    int rc = b.len && fwrite(b.data, 1, b.len, of->fp) != b.len ? ERR_IO : ERR_OK;
    buf_free(&b);
    return rc;
}

int run_check(const Options *o, FILE *out, int color, DiagList *d)
{
    Design ds;
    memset(&ds, 0, sizeof ds);
    OpTable *op = NULL;
    Joined jn;
    Findings fs;
    memset(&jn, 0, sizeof jn);
    memset(&fs, 0, sizeof fs);
    OutFile ann = {0}, rep = {0};
    const char **inputs = NULL;
    int status = EXIT_BAD_INPUT, rc;

    RuleSet *rs = rule_new_defaults(d);
    if (!rs)
        goto done;
    for (size_t i = 0; i < o->nrules; i++)
        if ((rc = rule_load_file(rs, o->rules[i], d)) != ERR_OK) {
            status = exit_for(rc);
            goto done;
        }
    if (!isnan(o->min_margin))
        rule_set_limit(rs, CHECK_MARGIN, o->min_margin);
    if (!isnan(o->min_gain))
        rule_set_limit(rs, CHECK_GAIN, o->min_gain);

    NlOptions nlo = {o->max_devices, 0, 0};
    NlPdkOptions pdk = {o->top, o->cells, o->ncells, o->allow_missing_lib}; /* PDK netlists */
    if ((rc = nl_load_pdk(o->netlist, &nlo, &pdk, &ds, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    if (ds.ndevs == 0) {
        const SrcFile *top = ds.files.files[0];
        diag_add(d, DIAG_ERROR, (SrcLoc){top->path, top->len ? 1 : 0, top->len ? 1 : 0},
                 top->len ? "no MOSFET in this netlist (nor in what it includes): nothing to check"
                          : "the netlist file is empty: nothing to check");
        goto done;
    }
    if ((rc = op_read(o->op, o->op_format, &op, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    /* PDK netlists: record names under the testbench prefix, transistors read from their X cards
       (opbind.h) */
    BindOptions bo = {o->prefix, o->top != NULL};
    if ((rc = bind_run(&ds, op, &bo, NULL, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    JoinOptions jo = {o->add_overlap, 0.5};
    if ((rc = join_run(&ds, op, rs, &jo, &jn, d)) != ERR_OK || (rc = chk_run(rs, &ds, &jn, &fs)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }

    size_t ninputs = 0;
    if (!(inputs = input_paths(&ds, o, &ninputs))) {
        status = exit_for(diag_nomem(d));
        goto done;
    }
    ReportCtx c = {&ds, op, &jn, &fs, rs, o->netlist, o->op, o->fail_level, color};
    const ReportWriter *w = rep_lookup(o->format);
    if (!w) {
        diag_add(d, DIAG_ERROR, (SrcLoc){0}, "unknown report format '%s'", o->format);
        goto done;
    }
    /* open every output first, so a bad output path costs nothing and leaves nothing */
    if (o->annotate && (rc = out_open(&ann, o->annotate, inputs, ninputs, d)) != ERR_OK)
        goto done;
    if (o->output && (rc = out_open(&rep, o->output, inputs, ninputs, d)) != ERR_OK)
        goto done;
    if (o->annotate) {
        rc = write_annotation(&c, &ann);
        if (rc == ERR_NOMEM) {
            status = exit_for(diag_nomem(d));
            goto done;
        }
        if ((rc = out_commit(&ann, d)) != ERR_OK)
            goto done;
    }
    FILE *fp = o->output ? rep.fp : out;
    if (w->write(&c, fp) != ERR_OK) {
        diag_add(d, DIAG_ERROR, (SrcLoc){o->output ? o->output : "<stdout>", 0, 0}, "cannot write the report");
        goto done;
    }
    if (o->output && out_commit(&rep, d) != ERR_OK)
        goto done;
    status = EXIT_CLEAN;
    for (int s = o->fail_level; s < SEV_COUNT; s++)
        if (fs.count[s])
            status = EXIT_FINDINGS;
done:
    out_abort(&ann);
    out_abort(&rep);
    free(inputs);
    chk_free(&fs);
    join_free(&jn);
    op_free(op);
    nl_free(&ds);
    rule_free(rs);
    if (d->oom)
        status = EXIT_INTERNAL;
    return status;
}

int run_strip(const Options *o, DiagList *d)
{
    SrcFile f;
    if (src_load(&f, o->netlist, (SrcLoc){0}, d) != ERR_OK)
        return EXIT_BAD_INPUT;
    Buf b = BUF_INIT;
    OutFile of = {0};
    const char *inputs[1] = {o->netlist};
    int status = EXIT_BAD_INPUT;
    if (ann_strip(f.text, f.len, &b) != ERR_OK) {
        diag_nomem(d);
        status = EXIT_INTERNAL;
    } else if (out_open(&of, o->output, inputs, 1, d) == ERR_OK) {
        if (b.len)
            fwrite(b.data, 1, b.len, of.fp);
        if (out_commit(&of, d) == ERR_OK)
            status = EXIT_CLEAN;
    }
    out_abort(&of);
    buf_free(&b);
    src_free(&f);
    return status;
}
