/* join: devices to operating-point records. Exact names go through the dump's hash index; names the
 * dump cut short are matched by unique prefix against the sorted device names. */
#include "join.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "lut.h"

#define JOIN_NAMES_LISTED 5

/* The name under which the dump holds a device's record: a primitive's inner M card, or the name
 * under the testbench prefix (Device.simname, PDK netlists); else its own name. */
static inline const char *rec_name(const Device *dv)
{
    return dv->simname ? dv->simname : dv->name;
}

static int by_name(const void *a, const void *b)
{
    const Device *x = *(const Device *const *)a, *y = *(const Device *const *)b;
    return strcmp(rec_name(x), rec_name(y));
}

/* Index of the first sorted device whose name is >= key. */
static size_t lower_bound(const Device **sorted, size_t n, const char *key)
{
    size_t lo = 0, hi = n;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (strcmp(rec_name(sorted[mid]), key) < 0)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

/* Match the dump's cut names. Each must extend to exactly one device that has no exact match. */
static int match_truncated(const Design *ds, const OpTable *t, const OpRecord **by_dev, DiagList *d)
{
    size_t ncut = 0;
    for (size_t i = 0; i < t->n; i++)
        ncut += t->recs[i].truncated;
    if (!ncut)
        return ERR_OK;
    const Device **sorted = malloc(ds->ndevs * sizeof *sorted);
    if (ds->ndevs && !sorted)
        return diag_nomem(d);
    for (size_t i = 0; i < ds->ndevs; i++)
        sorted[i] = &ds->devs[i];
    qsort(sorted, ds->ndevs, sizeof *sorted, by_name);
    int rc = ERR_OK;
    for (size_t i = 0; i < t->n; i++) {
        const OpRecord *r = &t->recs[i];
        if (!r->truncated)
            continue;
        size_t plen = strlen(r->name), k = lower_bound(sorted, ds->ndevs, r->name);
        const Device *hit = NULL;
        size_t nhits = 0;
        for (; k < ds->ndevs && strncmp(rec_name(sorted[k]), r->name, plen) == 0; k++) {
            if (by_dev[sorted[k] - ds->devs] && by_dev[sorted[k] - ds->devs] != r)
                continue; /* this device has its own, exact record */
            hit = sorted[k];
            nhits++;
        }
        if (nhits > 1) {
            rc = diag_add(d, DIAG_ERROR, r->loc,
                          "the dump cut the device name to '%s', which fits %zu devices of the netlist "
                          "(e.g. '%s'); ngspice's show tables keep 21 characters: write a raw file or a "
                          "CSV dump instead",
                          r->name, nhits, hit->name);
        } else if (nhits == 1) {
            by_dev[hit - ds->devs] = r;
        }
    }
    free(sorted);
    return rc;
}

static int report_unmatched(const Design *ds, const OpTable *t, const Joined *j, DiagList *d)
{
    size_t missing = ds->ndevs - j->nmatched - j->ntable;
    if (missing) {
        char list[512] = "";
        size_t shown = 0, len = 0;
        for (size_t i = 0; i < j->n && shown < JOIN_NAMES_LISTED; i++) {
            if (j->rows[i].op)
                continue;
            int w = snprintf(list + len, sizeof list - len, "%s%s", shown ? ", " : "", j->rows[i].dev->name);
            if (w < 0 || (size_t)w >= sizeof list - len)
                break;
            len += (size_t)w;
            shown++;
        }
        diag_add(d, DIAG_WARNING, (SrcLoc){t->file.path, 0, 0},
                 "%zu of %zu MOSFETs have no operating-point data in this dump: %s%s", missing, ds->ndevs, list,
                 missing > shown ? ", ..." : "");
    }
    if (j->norphans) {
        char list[512] = "";
        size_t shown = 0, len = 0;
        for (size_t i = 0; i < j->norphans && shown < JOIN_NAMES_LISTED; i++, shown++) {
            int w = snprintf(list + len, sizeof list - len, "%s%s", shown ? ", " : "", j->orphans[i]->name);
            if (w < 0 || (size_t)w >= sizeof list - len)
                break;
            len += (size_t)w;
        }
        diag_add(d, DIAG_WARNING, j->orphans[0]->loc,
                 "%zu device records in the dump match no MOSFET of the netlist: %s%s", j->norphans, list,
                 j->norphans > shown ? ", ..." : "");
    }
    return ERR_OK;
}

static int fill_from_tables(const Design *ds, const OpTable *t, const RuleSet *rs, const JoinOptions *opt,
                            const Lut *const *tables, size_t ntables, Joined *out, DiagList *d);

int join_run(const Design *ds, OpTable *t, const RuleSet *rs, const JoinOptions *opt, Joined *out,
             DiagList *d)
{
    return join_run_tables(ds, t, rs, opt, NULL, 0, out, d);
}

/* One half of the devices, for a stage of the join that treats each device alone: the lookup of the
 * records, or the rows. */
typedef struct {
    const Design *ds;
    const RuleSet *rs;
    const JoinOptions *opt;
    const OpRecord **by_dev;
    Row *rows;
    size_t from, to;
    const OpTable *t;           /* the dump */
    size_t nmatched, nm_differ; /* fill_rows: what it found */
    const Device *first_m;      /* fill_rows: the first device whose dump m differs */
    const char **names;         /* find_records: the record name of every device */
} RowJob;

static void *find_records(void *arg)
{
    RowJob *j = arg;
    op_find_all(j->t, j->names + j->from, j->to - j->from, j->by_dev + j->from);
    return NULL;
}

static void *fill_rows(void *arg)
{
    RowJob *j = arg;
    const Design *ds = j->ds;
    const OpRecord **by_dev = j->by_dev;
    for (size_t i = j->from; i < j->to; i++) {
        Row *row = &j->rows[i];
        const Device *dv = &ds->devs[i];
#if defined(__GNUC__)
        /* the records come in the dump's order, not the netlist's: ask for the ones a few devices
           ahead, so that their cache misses overlap instead of following one another; first the
           record, then (once it is there) its values */
        if (i + 16 < j->to && by_dev[i + 16])
            __builtin_prefetch(by_dev[i + 16]);
        if (i + 8 < j->to && by_dev[i + 8]) {
            const double *ahead = by_dev[i + 8]->q;
            __builtin_prefetch(ahead);
            __builtin_prefetch(ahead + 8);
            __builtin_prefetch(ahead + 16);
        }
#endif
        row->dev = dv;
        row->op = by_dev[i];
        if (!row->op) {
            fig_normalize(NULL, dv->type, &row->fig);
            continue;
        }
        j->nmatched++;
        /* the figures read every quantity in OpQty order; a table that keeps fewer lends them out */
        const OpRecord *rec = row->op;
        OpRecord full;
        double all[OPQ_COUNT];
        if (j->t->nq) {
            full = *rec;
            op_values(j->t, rec, all);
            full.q = all;
            rec = &full;
        }
        fig_normalize(rec, dv->type, &row->fig);
        /* The simulator's own m wins where the dump gives it: ngspice 39 does not multiply m
           through subcircuit levels, so the netlist's product can differ from what ran. */
        Device sim = *dv;
        double dm = rec->q[OPQ_M];
        if (!isnan(dm) && dm > 0 && fabs(dm - dv->m) > 1e-9 * dv->m) {
            if (!j->nm_differ++)
                j->first_m = dv;
            sim.m = dm;
        }
        if (j->opt->add_overlap)
            fig_add_overlap(&row->fig, &sim);
        fig_derive(&row->fig, &sim, rule_bands(j->rs, dv, NULL));
    }
    return NULL;
}

/* Run fn on the two halves of devices 0..n (job[0] the first, job[1] the second): the second in a
 * thread of its own when the design is large enough to repay it (and a thread can be had), else both
 * here. fn shares nothing between the halves. */
#define JOIN_THREAD_MIN 65536
static void halves(RowJob job[2], size_t n, void *(*fn)(void *))
{
    job[0].from = 0;
    job[0].to = job[1].from = n / 2;
    job[1].to = n;
    pthread_t th;
    int on = n >= JOIN_THREAD_MIN && pthread_create(&th, NULL, fn, &job[1]) == 0;
    fn(&job[0]);
    if (on)
        pthread_join(th, NULL);
    else
        fn(&job[1]);
}

int join_run_tables(const Design *ds, OpTable *t, const RuleSet *rs, const JoinOptions *opt,
                    const Lut *const *tables, size_t ntables, Joined *out, DiagList *d)
{
    memset(out, 0, sizeof *out);
    const OpRecord **by_dev = calloc(ds->ndevs ? ds->ndevs : 1, sizeof *by_dev);
    unsigned char *used = calloc(t->n ? t->n : 1, 1);
    out->rows = calloc(ds->ndevs ? ds->ndevs : 1, sizeof *out->rows);
    if (!by_dev || !used || !out->rows)
        goto nomem;
    {
        const char **names = malloc((ds->ndevs ? ds->ndevs : 1) * sizeof *names);
        if (!names)
            goto nomem;
        for (size_t i = 0; i < ds->ndevs; i++)
            names[i] = rec_name(&ds->devs[i]);
        RowJob job[2] = {{.by_dev = by_dev, .t = t, .names = names}, {.by_dev = by_dev, .t = t, .names = names}};
        halves(job, ds->ndevs, find_records);
        free(names);
    }
    int rc = match_truncated(ds, t, by_dev, d);
    if (rc != ERR_OK)
        goto fail;
    if (opt->consume)
        op_release_index(t); /* before the rows take its room */

    out->n = ds->ndevs;
    out->overlap = opt->add_overlap;
    RowJob job[2] = {{.ds = ds, .rs = rs, .opt = opt, .by_dev = by_dev, .rows = out->rows, .t = t},
                     {.ds = ds, .rs = rs, .opt = opt, .by_dev = by_dev, .rows = out->rows, .t = t}};
    halves(job, ds->ndevs, fill_rows);
    out->nmatched = job[0].nmatched + job[1].nmatched;
    size_t nm_differ = job[0].nm_differ + job[1].nm_differ;
    const Device *first_m = job[0].first_m ? job[0].first_m : job[1].first_m;
    for (size_t i = 0; i < ds->ndevs; i++)
        if (by_dev[i])
            used[by_dev[i] - t->recs] = 1;
    for (size_t i = 0; i < t->n; i++) {
        if (used[i])
            continue;
        if (BUF_PUSH(out->orphans, out->norphans, out->orphans_cap, &t->recs[i]) != ERR_OK)
            goto nomem;
    }
    /* the message below wants the dump's m of the first device whose m differs */
    double first_dm = first_m ? op_q(t, by_dev[first_m - ds->devs], OPQ_M) : NAN;
    if (opt->consume)
        op_release_values(t); /* the rows hold what the reports need */
    if (ntables) { /* check --table: the tables' part of every row, no width suggestion yet (size_suggest) */
        if (!(out->tab = calloc(out->n ? out->n : 1, sizeof *out->tab)))
            goto nomem;
        for (size_t i = 0; i < out->n; i++) {
            out->tab[i].suggest_w = out->tab[i].suggest_gmid = NAN;
            out->rows[i].tab = &out->tab[i];
        }
    }
    if (ntables && (rc = fill_from_tables(ds, t, rs, opt, tables, ntables, out, d)) != ERR_OK)
        goto fail;
    double need = opt->min_match_fraction > 0 ? opt->min_match_fraction : 0.5;
    if (ds->ndevs && (double)(out->nmatched + out->ntable) < need * (double)ds->ndevs) {
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, 0, 0},
                      "the dump gives data for only %zu of the netlist's %zu MOSFETs: it looks like the "
                      "output of another netlist (or the names do not follow ngspice's); rerun the "
                      "simulation of this netlist",
                      out->nmatched + out->ntable, ds->ndevs);
        goto fail;
    }
    report_unmatched(ds, t, out, d);
    if (nm_differ)
        diag_add(d, DIAG_WARNING, (SrcLoc){t->file.path, 0, 0},
                 "for %zu MOSFETs the dump's multiplier m differs from the netlist's (first: %s, netlist "
                 "m=%g, dump m=%g); the figures use the dump's m, which is what was simulated (the netlist "
                 "reader already follows ngspice's m= rule, so the dump may come from another version of "
                 "the netlist)",
                 nm_differ, first_m->name, first_m->m, first_dm);
    free(by_dev);
    free(used);
    return ERR_OK;
nomem:
    rc = diag_nomem(d);
fail:
    free(by_dev);
    free(used);
    join_free(out);
    return rc;
}

void join_free(Joined *j)
{
    if (!j)
        return;
    free(j->rows);
    free(j->tab);
    free(j->derived);
    free(j->derived_q);
    free(j->orphans);
    memset(j, 0, sizeof *j);
}

/* ---- figures from characterization tables (check --table) ------------------------------------ */

/* The voltage of net n, from the dump's node voltages (map: design-interned name -> node index);
 * ground ("0", "gnd") is 0 V. NaN when the dump does not have it. */
static double net_voltage(const OpTable *t, const StrMap *map, const char *n)
{
    if (!n)
        return NAN;
    if (strcmp(n, "0") == 0 || strcmp(n, "gnd") == 0)
        return 0.0;
    uint32_t k;
    return strmap_get(map, n, &k) ? t->node_v[k] : NAN;
}

/* "VGS 1.95 V outside 0..1.8 V" for the first axis in miss. */
static void miss_text(const Lut *lt, unsigned miss, const double v[LUTAX_COUNT], char *buf, size_t size)
{
    const LutInfo *in = lut_info(lt);
    for (int a = 0; a < LUTAX_COUNT; a++) {
        if (!(miss >> a & 1u))
            continue;
        const double *x = in->axis[a];
        size_t n = in->n[a];
        if (a == LUTAX_L)
            snprintf(buf, size, "L %g um outside %g..%g um", v[a] * 1e6, x[0] * 1e6, x[n - 1] * 1e6);
        else
            snprintf(buf, size, "%s %.4g V outside %g..%g V", lut_axis_label[a], v[a], x[0], x[n - 1]);
        return;
    }
    snprintf(buf, size, "outside the grid");
}

typedef struct {
    size_t n;
    char list[600];
    size_t len;
} NameList;

static void list_add(NameList *l, const char *name, const char *why)
{
    if (l->n++ >= JOIN_NAMES_LISTED)
        return;
    int w = snprintf(l->list + l->len, sizeof l->list - l->len, "%s%s%s%s%s", l->len ? ", " : "", name,
                     why ? " (" : "", why ? why : "", why ? ")" : "");
    if (w > 0 && (size_t)w < sizeof l->list - l->len)
        l->len += (size_t)w;
}

/* "N <what>: a, b, c, d, e, ..." at the dump, when the list has any name. */
static void list_report(DiagList *d, DiagSeverity sev, const char *dump, const NameList *l, const char *what)
{
    if (l->n)
        diag_add(d, sev, (SrcLoc){dump, 0, 0}, "%zu %s: %s%s", l->n, what, l->list,
                 l->n > JOIN_NAMES_LISTED ? ", ..." : "");
}

static int fill_from_tables(const Design *ds, const OpTable *t, const RuleSet *rs, const JoinOptions *opt,
                            const Lut *const *tables, size_t ntables, Joined *out, DiagList *d)
{
    size_t want = 0;
    for (size_t i = 0; i < out->n; i++)
        want += out->rows[i].op == NULL;
    if (!want)
        return ERR_OK;
    const char *dump = t->file.path;
    if (!t->nnodes) {
        diag_add(d, DIAG_WARNING, (SrcLoc){dump, 0, 0},
                 "%zu MOSFETs have no data in this dump, and the dump holds no node voltages, so the tables "
                 "cannot stand in for them (an ngspice raw file written after `save all` has them)",
                 want);
        return ERR_OK;
    }
    /* node name (interned in the design) -> index of its first voltage in the dump */
    StrMap map = STRMAP_INIT;
    for (size_t k = 0; k < t->nnodes; k++) {
        const char *nm = str_lookup(ds->names, t->node_name[k], strlen(t->node_name[k]));
        if (nm && !strmap_get(&map, nm, NULL) && strmap_put(&map, nm, (uint32_t)k) != ERR_OK) {
            strmap_free(&map);
            return diag_nomem(d);
        }
    }
    out->derived = calloc(want, sizeof *out->derived);
    out->derived_q = malloc(want * OPQ_COUNT * sizeof *out->derived_q);
    if (!out->derived || !out->derived_q) {
        strmap_free(&map);
        return diag_nomem(d);
    }
    double temp = !isnan(t->temp_c) ? t->temp_c : ds->temp_c;
    NameList nonodes = {0}, notable = {0}, outside = {0}, narrow = {0};
    unsigned char *temp_warned = calloc(ntables, 1);
    if (!temp_warned) {
        strmap_free(&map);
        return diag_nomem(d);
    }
    for (size_t i = 0; i < out->n; i++) {
        Row *row = &out->rows[i];
        const Device *dv = row->dev;
        if (row->op)
            continue;
        double vn[4];
        int known = 1;
        for (int k = 0; k < 4; k++)
            known &= !isnan(vn[k] = net_voltage(t, &map, nl_nets(ds, dv)[k]));
        if (!known) {
            list_add(&nonodes, dv->name, NULL);
            continue;
        }
        const Lut *lt = lut_for_device(tables, ntables, dv->type, dv->model, temp);
        if (!lt) {
            list_add(&notable, dv->name, dv->model);
            continue;
        }
        const LutInfo *in = lut_info(lt);
        /* as ngspice would report them: from the instance's source pin, times the type sign */
        double s = dv->type == MOS_PMOS ? -1.0 : 1.0;
        double vgs = s * (vn[1] - vn[2]), vds = s * (vn[0] - vn[2]), vbs = s * (vn[3] - vn[2]);
        double q[LUTAX_COUNT] = {dv->l, -vbs, vds, vgs}; /* ORDER LUTAX */
        if (vds < 0) { /* the drain pin is the source: look up the device the other way round */
            q[LUTAX_VGS] = vgs - vds;
            q[LUTAX_VDS] = -vds;
            q[LUTAX_VSB] = -(vbs - vds);
        }
        LutVals v;
        unsigned miss = lut_eval(lt, q[LUTAX_L], q[LUTAX_VGS], q[LUTAX_VDS], q[LUTAX_VSB], &v);
        row->tab->lut = lt;
        row->tab->lut_miss = miss;
        if (miss) {
            char why[96];
            miss_text(lt, miss, q, why, sizeof why);
            list_add(&outside, dv->name, why);
            continue;
        }
        size_t ti = 0;
        while (tables[ti] != lt)
            ti++;
        if (!isnan(temp) && fabs(in->temp_c - temp) > 0.5 && !temp_warned[ti]) {
            temp_warned[ti] = 1;
            diag_add(d, DIAG_WARNING, (SrcLoc){lut_path(lt), 0, 0},
                     "this table was made at %g C but the simulation ran at %g C: its figures are for "
                     "another temperature",
                     in->temp_c, temp);
        }
        double fw = dv->nf > 0 ? dv->w / dv->nf : dv->w;
        if (!(fw >= 0.5 * in->w_ref && fw <= 2 * in->w_ref)) { /* more than a factor 2 away */
            char why[64];
            snprintf(why, sizeof why, "finger width %g um", fw * 1e6);
            list_add(&narrow, dv->name, why);
        }
        OpRecord *r = &out->derived[out->ntable];
        r->q = out->derived_q + out->ntable++ * OPQ_COUNT;
        for (int k = 0; k < OPQ_COUNT; k++)
            r->q[k] = NAN;
        r->name = dv->name;
        r->family = OPFAM_BSIM; /* magnitudes: the table is in the n-type convention */
        r->model = dv->model;
        r->loc = (SrcLoc){lut_path(lt), 0, 0};
        double scale = dv->w * dv->m / in->w_ref;
        r->q[OPQ_ID] = v.q[LUTQ_ID] * scale;
        r->q[OPQ_GM] = v.q[LUTQ_GM] * scale;
        r->q[OPQ_GDS] = v.q[LUTQ_GDS] * scale;
        r->q[OPQ_GMBS] = v.q[LUTQ_GMBS] * scale;
        r->q[OPQ_CGG] = v.q[LUTQ_CGG] * scale;
        r->q[OPQ_CGS] = v.q[LUTQ_CGS] * scale;
        r->q[OPQ_CGD] = v.q[LUTQ_CGD] * scale;
        r->q[OPQ_VTH] = v.q[LUTQ_VTH];
        r->q[OPQ_VDSAT] = v.q[LUTQ_VDSAT];
        r->q[OPQ_VGS] = vgs;
        r->q[OPQ_VDS] = vds;
        r->q[OPQ_VBS] = vbs;
        r->q[OPQ_W] = dv->w;
        r->q[OPQ_L] = dv->l;
        r->q[OPQ_M] = dv->m;
        r->q[OPQ_NF] = dv->nf;
        row->op = r;
        fig_normalize(r, dv->type, &row->fig);
        if (opt->add_overlap)
            fig_add_overlap(&row->fig, dv);
        fig_derive(&row->fig, dv, rule_bands(rs, dv, NULL));
    }
    free(temp_warned);
    strmap_free(&map);
    if (out->ntable)
        diag_add(d, DIAG_NOTE, (SrcLoc){dump, 0, 0},
                 "%zu MOSFETs have no device data in this dump: their figures come from the tables, at the bias "
                 "of their node voltages",
                 out->ntable);
    list_report(d, DIAG_WARNING, dump, &outside,
                "MOSFETs lie outside their table's grid and get no figures (a table never extrapolates)");
    list_report(d, DIAG_WARNING, dump, &notable, "MOSFETs have no data in this dump and no table for their model and type");
    list_report(d, DIAG_WARNING, dump, &nonodes,
                "MOSFETs have no data in this dump and the voltage of one of their nodes is missing too");
    list_report(d, DIAG_NOTE, dump, &narrow,
                "table-derived MOSFETs have a finger width (W/nf) far from their table's reference width; their "
                "figures are the table's scaled by W, which leaves out narrow-width effects");
    return ERR_OK;
}
