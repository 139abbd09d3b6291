/* run: the stages of DESIGN.md in order. Each stage returns a status and leaves diagnostics; the
 * outputs are written only when every input was read without error, and each output file is
 * written atomically. */
#include "run.h"

#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>
#include <unistd.h>

#include "annotate.h"
#include "baseline.h"
#include "check.h"
#include "intent.h"
#include "join.h"
#include "merge.h"
#include "lut.h"
#include "size.h"
#include "netlist.h"
#include "opbind.h"
#include "opdump.h"
#include "outfile.h"
#include "report.h"
#include "rules.h"
#include "source.h"

/* BIASLINT_STAGES=1 in the environment: the wall time of each stage of check and the peak RSS
 * after it, on standard error (for profiling large designs; DEVELOPERS.md). */
typedef struct {
    int on;
    struct timespec t0;
} Stages;

static void stage_init(Stages *s)
{
    const char *e = getenv("BIASLINT_STAGES");
    s->on = e && *e && strcmp(e, "0") != 0;
    clock_gettime(CLOCK_MONOTONIC, &s->t0);
}

static void stage(Stages *s, const char *name)
{
    if (!s->on)
        return;
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    /* the resident size now, where the system tells it (Linux: pages, second field) */
    double now = -1;
    FILE *f = fopen("/proc/self/statm", "r");
    if (f) {
        unsigned long size, res;
        if (fscanf(f, "%lu %lu", &size, &res) == 2)
            now = (double)res * (double)sysconf(_SC_PAGESIZE) / (1024.0 * 1024.0);
        fclose(f);
    }
    fprintf(stderr, "stage %-10s %8.3f s  peak RSS %6.0f MB  now %6.0f MB\n", name,
            (double)(t.tv_sec - s->t0.tv_sec) + (double)(t.tv_nsec - s->t0.tv_nsec) * 1e-9, (double)ru.ru_maxrss / 1024,
            now);
    s->t0 = t;
}

static int exit_for(int status)
{
    return status == ERR_NOMEM ? EXIT_INTERNAL : EXIT_BAD_INPUT;
}

/* The paths an output must never overwrite: the netlist with its includes, the dumps, the rule
 * files and the baseline. */
static const char **input_paths(const Design *ds, const Options *o, size_t *n)
{
    size_t slots = ds->files.n + 4 + o->nops + o->nrules + o->ntables, nl = strlen(o->netlist);
    /* intent (issue 3): NETLIST.rules is an input too; its path lives in the same block */
    const char **p = malloc(slots * sizeof *p + nl + sizeof ".rules");
    if (!p)
        return NULL;
    size_t k = 0;
    char *local = (char *)(p + slots);
    memcpy(local, o->netlist, nl);
    memcpy(local + nl, ".rules", sizeof ".rules");
    p[k++] = local;
    for (size_t i = 0; i < ds->files.n; i++)
        p[k++] = ds->files.files[i]->path;
    p[k++] = o->op;
    for (size_t i = 0; i < o->nops; i++)
        p[k++] = o->ops[i].path;
    for (size_t i = 0; i < o->nrules; i++)
        p[k++] = o->rules[i];
    for (size_t i = 0; i < o->ntables; i++) /* check --table */
        p[k++] = o->tables[i];
    if (o->baseline)
        p[k++] = o->baseline;
    *n = k;
    return p;
}

static int write_annotation(const ReportCtx *c, OutFile *of)
{
    AnnCorner *ac = malloc(c->ncorners * sizeof *ac);
    if (!ac)
        return ERR_NOMEM;
    for (size_t k = 0; k < c->ncorners; k++)
        ac[k] = (AnnCorner){c->ncorners > 1 ? c->corners[k].label : NULL, c->corners[k].joined, c->corners[k].findings};
    int rc = ann_write_corners(c->design, ac, c->ncorners, of->fp); /* streamed: not the whole text in memory */
    free(ac);
    return rc;
}


/* ---- corners: every dump read (in parallel with -j), joined and checked ---- */

typedef struct {
    OpTable *op;
    Joined jn;
    Findings fs;
    DiagList diag;   /* the reader's diagnostics when it ran in a thread of its own */
    int rc;
} CornerRun;

typedef struct {
    const Options *o;
    CornerRun *cr;
    size_t n, next;  /* next: the next dump to read, under lock */
    pthread_mutex_t lock;
} ReadPool;

/* A reader thread: takes the next dump until none is left. op_read shares nothing between calls
   (its own file, arena and name table), so the dumps can be read side by side; join and check stay
   in one thread, since a rule set's matching scratch is not shared between threads. */
static void *read_worker(void *arg)
{
    ReadPool *p = arg;
    for (;;) {
        pthread_mutex_lock(&p->lock);
        size_t i = p->next++;
        pthread_mutex_unlock(&p->lock);
        if (i >= p->n)
            return NULL;
        CornerRun *c = &p->cr[i];
        c->rc = op_read(p->o->ops[i].path, p->o->op_format, &c->op, &c->diag);
    }
}

/* The diagnostics of from appended to d, in their order. */
static void diag_take(DiagList *d, const DiagList *from)
{
    for (size_t i = 0; i < from->n; i++) {
        const Diag *g = &from->items[i];
        if (g->excerpt)
            diag_add_excerpt(d, g->sev, g->loc, g->excerpt, strlen(g->excerpt), g->span, "%s", g->msg);
        else
            diag_add(d, g->sev, g->loc, "%s", g->msg);
    }
    d->dropped += from->dropped;
    if (from->oom)
        d->oom = 1;
}

/* Read every dump into cr[0..n), up to jobs at a time. Returns the first failing status. */
static int read_dumps(const Options *o, CornerRun *cr, size_t n, DiagList *d)
{
    unsigned jobs = o->jobs > 1 ? o->jobs : 1;
    if (jobs > n)
        jobs = (unsigned)n;
    if (jobs <= 1) {
        for (size_t i = 0; i < n; i++)
            if ((cr[i].rc = op_read(o->ops[i].path, o->op_format, &cr[i].op, d)) != ERR_OK)
                return cr[i].rc;
        return ERR_OK;
    }
    ReadPool pool = {o, cr, n, 0, PTHREAD_MUTEX_INITIALIZER};
    pthread_t *t = malloc(jobs * sizeof *t);
    unsigned started = 0;
    for (size_t i = 0; i < n; i++) {
        diag_init(&cr[i].diag);
        cr[i].diag.max_kept = d->max_kept;
    }
    for (; t && started < jobs; started++)
        if (pthread_create(&t[started], NULL, read_worker, &pool) != 0)
            break;
    read_worker(&pool); /* this thread reads too (and alone when no thread could start) */
    for (unsigned k = 0; k < started; k++)
        pthread_join(t[k], NULL);
    free(t);
    int rc = ERR_OK;
    for (size_t i = 0; i < n; i++) {
        diag_take(d, &cr[i].diag);
        diag_free(&cr[i].diag);
        if (rc == ERR_OK && cr[i].rc != ERR_OK)
            rc = cr[i].rc;
    }
    return rc;
}

/* The dumps are read by a second thread while this one reads the netlist: neither depends on the
 * other (their own files, arenas and name tables), and on a large design the two take about the
 * same time. Its diagnostics wait in their own list and join the run's where read_dumps stood. */
typedef struct {
    const Options *o;
    CornerRun *cr;
    size_t n;
    int rc;
    DiagList diag;
    pthread_t thread;
    int running;
} DumpJob;

static void *dump_worker(void *arg)
{
    DumpJob *j = arg;
    j->rc = read_dumps(j->o, j->cr, j->n, &j->diag);
    return NULL;
}

static void dump_start(DumpJob *j, const Options *o, CornerRun *cr, size_t n, const DiagList *d)
{
    memset(j, 0, sizeof *j);
    j->o = o;
    j->cr = cr;
    j->n = n;
    diag_init(&j->diag);
    j->diag.max_kept = d->max_kept;
    j->running = pthread_create(&j->thread, NULL, dump_worker, j) == 0;
}

/* The dumps read: waits for the thread (or reads them here when none could start), then passes on
 * the diagnostics. With take 0 (the run stopped before the dumps mattered) they are dropped, as if
 * the dumps had never been read. Returns read_dumps' status. */
static int dump_finish(DumpJob *j, DiagList *d, int take)
{
    if (j->running) {
        pthread_join(j->thread, NULL);
        j->running = 0;
    } else if (take && j->cr) {
        j->rc = read_dumps(j->o, j->cr, j->n, &j->diag);
    }
    if (take)
        diag_take(d, &j->diag);
    diag_free(&j->diag);
    j->cr = NULL; /* finished */
    return j->rc;
}

/* The annotated netlist, written by a second thread while this one writes the reports: both only
 * read what join and check made. */
typedef struct {
    const ReportCtx *c;
    OutFile *of;
    int rc;
} AnnJob;

static int write_annotation(const ReportCtx *c, OutFile *of);

static void *ann_worker(void *arg)
{
    AnnJob *j = arg;
    j->rc = write_annotation(j->c, j->of);
    return NULL;
}

/* ---- outputs: all opened first, all written, then all committed; any failure removes them all ---- */

typedef struct {
    const ReportWriter *w;
    const char *path;   /* NULL: standard output */
    OutFile of;
} Output;

static int open_outputs(const Options *o, Output *outs, size_t *nout, const char *const *inputs, size_t ninputs,
                        DiagList *d)
{
    size_t n = 0;
    outs[n++] = (Output){rep_lookup(o->format), o->output, {0}};
    for (size_t i = 0; i < o->nreports; i++)
        outs[n++] = (Output){rep_lookup(o->reports[i].format), o->reports[i].path, {0}};
    *nout = n;
    for (size_t i = 0; i < n; i++) {
        if (!outs[i].w)
            return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "unknown report format '%s'",
                            i ? o->reports[i - 1].format : o->format);
        for (size_t k = 0; outs[i].path && k < i; k++)
            if (outs[k].path && (strcmp(outs[k].path, outs[i].path) == 0 || src_same_file(outs[k].path, outs[i].path)))
                return diag_add(d, DIAG_ERROR, (SrcLoc){outs[i].path, 0, 0},
                                "two reports would be written to '%s': give each its own file", outs[i].path);
        if (outs[i].path && o->annotate && strcmp(outs[i].path, o->annotate) == 0)
            return diag_add(d, DIAG_ERROR, (SrcLoc){outs[i].path, 0, 0},
                            "the report and the annotated netlist would both be written to '%s'", outs[i].path);
        if (outs[i].path && out_open(&outs[i].of, outs[i].path, inputs, ninputs, d) != ERR_OK)
            return ERR_IO;
    }
    return ERR_OK;
}

static int run_explain(const Options *o, FILE *out, DiagList *d); /* intent (issue 3), at the end */

int run_check(const Options *o, FILE *out, int color, DiagList *d)
{
    if (o->cmd == CMD_EXPLAIN)
        return run_explain(o, out, d);
    Design ds;
    memset(&ds, 0, sizeof ds);
    IntentSet intents; /* intent (issue 3): `sized for:` comments of the netlist */
    memset(&intents, 0, sizeof intents);
    size_t ncr = o->nops ? o->nops : 1;
    CornerRun *cr = calloc(ncr, sizeof *cr);
    RepCorner *corners = calloc(ncr, sizeof *corners);
    Output *outs = calloc(o->nreports + 1, sizeof *outs);
    size_t nout = 0;
    OutFile ann = {0};
    Baseline *bl = NULL;
    BlCompare cmp;
    RepPrep prep;
    memset(&cmp, 0, sizeof cmp);
    memset(&prep, 0, sizeof prep);
    const char **inputs = NULL;
    Lut **luts = NULL; /* check --table */
    int status = EXIT_BAD_INPUT, rc;
    DumpJob dumps = {0};
    Stages st;
    stage_init(&st);
    if (!cr || !corners || !outs) {
        free(cr);
        free(corners);
        free(outs);
        diag_nomem(d);
        return EXIT_INTERNAL;
    }
    /* options from before corners (tests build Options by hand): one dump, no label */
    OpCorner single = {"", o->op};
    const OpCorner *ops = o->nops ? o->ops : &single;
    Options oc = *o;
    oc.ops = (OpCorner *)ops;
    oc.nops = ncr;
    o = &oc;

    RuleSet *rs = rule_new_defaults(d);
    if (!rs)
        goto done;
    int local_rules = 0; /* intent (issue 3): NETLIST.rules before the --rules files */
    if (!o->no_local_rules && (rc = rule_load_local(rs, o->netlist, &local_rules, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
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
    dump_start(&dumps, o, cr, ncr, d);
    if ((rc = nl_load_pdk(o->netlist, &nlo, &pdk, &ds, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    stage(&st, "netlist");
    if (ds.ndevs == 0) {
        const SrcFile *top = ds.files.files[0];
        diag_add(d, DIAG_ERROR, (SrcLoc){top->path, top->len ? 1 : 0, top->len ? 1 : 0},
                 top->len ? "no MOSFET in this netlist (nor in what it includes): nothing to check"
                          : "the netlist file is empty: nothing to check");
        goto done;
    }
    if ((rc = intent_scan(&ds, &intents, d)) != ERR_OK) { /* intent (issue 3) */
        status = exit_for(rc);
        goto done;
    }
    if (o->baseline && (rc = bl_load(o->baseline, &bl, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    /* The netlist text is read again only for excerpts and by the annotation, in order: out of memory
       until then (names and values were copied out of it). */
    for (size_t i = 0; i < ds.files.n; i++)
        src_drop(ds.files.files[i], 0, ds.files.files[i]->len);
    stage(&st, "intents");
    if ((rc = dump_finish(&dumps, d, 1)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    stage(&st, "dumps");
    /* PDK netlists: record names under the testbench prefix, transistors read from their X cards;
       from the first dump, for every corner (opbind.h) */
    BindOptions bo = {o->prefix, o->top != NULL};
    if ((rc = bind_run(&ds, cr[0].op, &bo, NULL, d)) != ERR_OK) {
        status = exit_for(rc);
        goto done;
    }
    if (!o->ntables)
        nl_release_index(&ds); /* only the tables' node voltages look names up after this */
    /* check --table: lookup tables stand in for devices a dump has no data for (lut.h, join.h) */
    if (o->ntables && !(luts = calloc(o->ntables, sizeof *luts))) {
        status = exit_for(diag_nomem(d));
        goto done;
    }
    for (size_t i = 0; i < o->ntables; i++)
        if (!(luts[i] = lut_load(o->tables[i], d))) {
            status = d->oom ? EXIT_INTERNAL : EXIT_BAD_INPUT;
            goto done;
        }
    stage(&st, "bind");
    JoinOptions jo = {o->add_overlap, 0.5, 1}; /* nothing reads the dump after the join */
    for (size_t k = 0; k < ncr; k++) {
        if ((rc = join_run_tables(&ds, cr[k].op, rs, &jo, (const struct Lut *const *)luts, o->ntables, &cr[k].jn,
                                  d)) != ERR_OK ||
            (rc = chk_evaluate(rs, &intents, &ds, &cr[k].jn, &(ChkOptions){chk_today(), k > 0}, &cr[k].fs, d)) !=
                ERR_OK ||
            (o->ntables && (rc = size_suggest((const Lut *const *)luts, o->ntables,
                                              isnan(cr[k].op->temp_c) ? ds.temp_c : cr[k].op->temp_c, &cr[k].jn,
                                              &cr[k].fs)) != ERR_OK)) { /* check --table: width suggestions */
            status = exit_for(rc == ERR_NOMEM ? diag_nomem(d) : rc);
            goto done;
        }
        corners[k] = (RepCorner){ops[k].label, ops[k].path, cr[k].op, &cr[k].jn, &cr[k].fs};
    }

    stage(&st, "join+check");
    size_t ninputs = 0;
    if (!(inputs = input_paths(&ds, o, &ninputs))) {
        status = exit_for(diag_nomem(d));
        goto done;
    }
    ReportCtx c;
    memset(&c, 0, sizeof c);
    c.design = &ds;
    c.rules = rs;
    c.netlist_path = o->netlist;
    c.fail_level = o->fail_level;
    c.corners = corners;
    c.ncorners = ncr;
    c.fail_new = o->fail_new;
    if (rep_prepare(&c, &prep) != ERR_OK) {
        status = exit_for(diag_nomem(d));
        goto done;
    }
    if (bl) {
        if (bl_compare(bl, &c, o->baseline, &cmp, d) != ERR_OK) {
            status = EXIT_INTERNAL;
            goto done;
        }
        c.baseline = &cmp;
    }
    stage(&st, "prepare");
    /* open every output first, so a bad output path costs nothing and leaves nothing */
    if (o->annotate && (rc = out_open(&ann, o->annotate, inputs, ninputs, d)) != ERR_OK)
        goto done;
    if (open_outputs(o, outs, &nout, inputs, ninputs, d) != ERR_OK)
        goto done;
    AnnJob aj = {&c, &ann, ERR_OK};
    pthread_t ath;
    int ath_on = o->annotate && nout && pthread_create(&ath, NULL, ann_worker, &aj) == 0;
    if (o->annotate && !ath_on)
        aj.rc = write_annotation(&c, &ann);
    size_t bad_out = nout; /* the first report that failed, and how */
    int out_rc = ERR_OK;
    for (size_t i = 0; i < nout && (ath_on || aj.rc == ERR_OK); i++) {
        c.color = outs[i].path ? 0 : color;
        out_rc = outs[i].w->write(&c, outs[i].path ? outs[i].of.fp : out);
        if (out_rc != ERR_OK) {
            bad_out = i;
            break;
        }
    }
    stage(&st, "reports");
    if (ath_on)
        pthread_join(ath, NULL);
    stage(&st, "annotate");
    /* errors as when the annotation was written first: its failure is the one reported */
    if (o->annotate && aj.rc != ERR_OK) {
        if (aj.rc == ERR_NOMEM)
            status = exit_for(diag_nomem(d));
        else
            diag_add(d, DIAG_ERROR, (SrcLoc){o->annotate, 0, 0}, "cannot write the annotated netlist");
        goto done;
    }
    if (bad_out < nout) {
        if (out_rc == ERR_NOMEM)
            status = exit_for(diag_nomem(d));
        else
            diag_add(d, DIAG_ERROR, (SrcLoc){outs[bad_out].path ? outs[bad_out].path : "<stdout>", 0, 0},
                     "cannot write the %s report", outs[bad_out].w->name);
        goto done;
    }
    if (o->annotate && out_commit(&ann, d) != ERR_OK)
        goto done;
    for (size_t i = 0; i < nout; i++)
        if (outs[i].path && out_commit(&outs[i].of, d) != ERR_OK)
            goto done;
    stage(&st, "commit");
    status = rep_failing(&c) ? EXIT_FINDINGS : EXIT_CLEAN;
done:
    if (dumps.cr)
        dump_finish(&dumps, d, 0); /* stopped before the dumps were needed */
    out_abort(&ann);
    for (size_t i = 0; i < nout; i++)
        out_abort(&outs[i].of);
    free(outs);
    free(inputs);
    bl_compare_free(&cmp);
    rep_prep_free(&prep);
    bl_free(bl);
    for (size_t k = 0; k < ncr; k++) {
        chk_free(&cr[k].fs);
        join_free(&cr[k].jn);
        op_free(cr[k].op);
    }
    free(cr);
    free(corners);
    for (size_t i = 0; luts && i < o->ntables; i++)
        lut_free(luts[i]);
    free(luts);
    nl_free(&ds);
    intent_free(&intents);
    rule_free(rs);
    if (d->oom)
        status = EXIT_INTERNAL;
    return status;
}

int run_merge(const Options *o, FILE *out, int color, DiagList *d)
{
    MrgResult m;
    mrg_init(&m);
    size_t nout = 1 + o->nreports;
    OutFile *of = calloc(nout, sizeof *of);
    int status = EXIT_BAD_INPUT, rc;
    if (!of) {
        status = exit_for(diag_nomem(d));
        goto done;
    }
    for (size_t i = 0; i < o->nruns; i++)
        if ((rc = mrg_add(&m, o->runs[i], d)) != ERR_OK) {
            status = exit_for(rc);
            goto done;
        }
    mrg_finish(&m);
    /* every output opened first (never over a run file), written, then committed */
    for (size_t i = 0; i < nout; i++) {
        const char *path = i ? o->reports[i - 1].path : o->output;
        if (path && out_open(&of[i], path, o->runs, o->nruns, d) != ERR_OK)
            goto done;
    }
    for (size_t i = 0; i < nout; i++) {
        const char *path = i ? o->reports[i - 1].path : o->output;
        const MrgWriter *w = mrg_lookup(i ? o->reports[i - 1].format : o->format);
        if (!w) {
            diag_add(d, DIAG_ERROR, (SrcLoc){0}, "merge cannot write format '%s'", i ? o->reports[i - 1].format : o->format);
            goto done;
        }
        if (w->write(&m, path ? of[i].fp : out, path ? 0 : color) != ERR_OK) {
            diag_add(d, DIAG_ERROR, (SrcLoc){path ? path : "<stdout>", 0, 0}, "cannot write the %s summary", w->name);
            goto done;
        }
    }
    for (size_t i = 0; i < nout; i++)
        if ((i ? o->reports[i - 1].path : o->output) && out_commit(&of[i], d) != ERR_OK)
            goto done;
    status = EXIT_CLEAN;
done:
    for (size_t i = 0; of && i < nout; i++)
        out_abort(&of[i]);
    free(of);
    mrg_free(&m);
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

/* ---- intent (issue 3): `biaslint explain NETLIST DEVICE [--op DUMP]` ---- */

/* The statements that supply each requirement of the devices o->explain names; with --op their
 * figures and findings too. Same rules, netlist reading and binding as run_check. */
static int run_explain(const Options *o, FILE *out, DiagList *d)
{
    Design ds;
    IntentSet in;
    Joined jn;
    Findings fs;
    memset(&ds, 0, sizeof ds);
    memset(&in, 0, sizeof in);
    memset(&jn, 0, sizeof jn);
    memset(&fs, 0, sizeof fs);
    OpTable *op = NULL;
    Buf b = BUF_INIT;
    int status = EXIT_BAD_INPUT, rc, local = 0;
    RuleSet *rs = rule_new_defaults(d);
    if (!rs)
        goto done;
    if (!o->no_local_rules && (rc = rule_load_local(rs, o->netlist, &local, d)) != ERR_OK)
        goto fail;
    for (size_t i = 0; i < o->nrules; i++)
        if ((rc = rule_load_file(rs, o->rules[i], d)) != ERR_OK)
            goto fail;
    if (!isnan(o->min_margin))
        rule_set_limit(rs, CHECK_MARGIN, o->min_margin);
    if (!isnan(o->min_gain))
        rule_set_limit(rs, CHECK_GAIN, o->min_gain);
    NlOptions nlo = {o->max_devices, 0, 0};
    NlPdkOptions pdk = {o->top, o->cells, o->ncells, o->allow_missing_lib};
    if ((rc = nl_load_pdk(o->netlist, &nlo, &pdk, &ds, d)) != ERR_OK || (rc = intent_scan(&ds, &in, d)) != ERR_OK)
        goto fail;
    if (o->op) {
        BindOptions bo = {o->prefix, o->top != NULL};
        JoinOptions jo = {o->add_overlap, 0.5, 1}; /* nothing reads the dump after the join */
        if ((rc = op_read(o->op, o->op_format, &op, d)) != ERR_OK || (rc = bind_run(&ds, op, &bo, NULL, d)) != ERR_OK ||
            (rc = join_run(&ds, op, rs, &jo, &jn, d)) != ERR_OK ||
            (rc = chk_evaluate(rs, &in, &ds, &jn, &(ChkOptions){chk_today(), 0}, &fs, d)) != ERR_OK)
            goto fail;
    }
    if ((rc = chk_explain(rs, &in, &ds, o->op ? &jn : NULL, o->op ? &fs : NULL, o->explain, &b, d)) != ERR_OK)
        goto fail;
    if (b.len && fwrite(b.data, 1, b.len, out) != b.len)
        diag_add(d, DIAG_ERROR, (SrcLoc){"<stdout>", 0, 0}, "cannot write the explanation");
    else
        status = EXIT_CLEAN;
    goto done;
fail:
    status = exit_for(rc);
done:
    buf_free(&b);
    chk_free(&fs);
    join_free(&jn);
    op_free(op);
    intent_free(&in);
    nl_free(&ds);
    rule_free(rs);
    if (d->oom)
        status = EXIT_INTERNAL;
    return status;
}
