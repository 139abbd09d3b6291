/* join: devices to operating-point records. Exact names go through the dump's hash index; names the
 * dump cut short are matched by unique prefix against the sorted device names. */
#include "join.h"

#include <math.h>

#include "buf.h"
#include <stdlib.h>
#include <string.h>

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
    size_t missing = ds->ndevs - j->nmatched;
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

int join_run(const Design *ds, const OpTable *t, const RuleSet *rs, const JoinOptions *opt, Joined *out,
             DiagList *d)
{
    memset(out, 0, sizeof *out);
    const OpRecord **by_dev = calloc(ds->ndevs ? ds->ndevs : 1, sizeof *by_dev);
    unsigned char *used = calloc(t->n ? t->n : 1, 1);
    out->rows = malloc((ds->ndevs ? ds->ndevs : 1) * sizeof *out->rows);
    if (!by_dev || !used || !out->rows)
        goto nomem;
    for (size_t i = 0; i < ds->ndevs; i++)
        by_dev[i] = op_find(t, rec_name(&ds->devs[i]));
    int rc = match_truncated(ds, t, by_dev, d);
    if (rc != ERR_OK)
        goto fail;

    size_t nm_differ = 0;
    const Device *first_m = NULL;
    out->n = ds->ndevs;
    out->overlap = opt->add_overlap;
    for (size_t i = 0; i < ds->ndevs; i++) {
        Row *row = &out->rows[i];
        const Device *dv = &ds->devs[i];
        row->dev = dv;
        row->op = by_dev[i];
        if (!row->op) {
            fig_normalize(NULL, dv->type, &row->fig);
            continue;
        }
        used[row->op - t->recs] = 1;
        out->nmatched++;
        fig_normalize(row->op, dv->type, &row->fig);
        /* The simulator's own m wins where the dump gives it: ngspice 39 does not multiply m
           through subcircuit levels, so the netlist's product can differ from what ran. */
        Device sim = *dv;
        double dm = row->op->q[OPQ_M];
        if (!isnan(dm) && dm > 0 && fabs(dm - dv->m) > 1e-9 * dv->m) {
            if (!nm_differ++)
                first_m = dv;
            sim.m = dm;
        }
        if (opt->add_overlap)
            fig_add_overlap(&row->fig, &sim);
        fig_derive(&row->fig, &sim, rule_bands(rs, dv, NULL));
    }
    for (size_t i = 0; i < t->n; i++) {
        if (used[i])
            continue;
        if (BUF_PUSH(out->orphans, out->norphans, out->orphans_cap, &t->recs[i]) != ERR_OK)
            goto nomem;
    }
    double need = opt->min_match_fraction > 0 ? opt->min_match_fraction : 0.5;
    if (ds->ndevs && (double)out->nmatched < need * (double)ds->ndevs) {
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, 0, 0},
                      "the dump gives data for only %zu of the netlist's %zu MOSFETs: it looks like the "
                      "output of another netlist (or the names do not follow ngspice's); rerun the "
                      "simulation of this netlist",
                      out->nmatched, ds->ndevs);
        goto fail;
    }
    report_unmatched(ds, t, out, d);
    if (nm_differ)
        diag_add(d, DIAG_WARNING, (SrcLoc){t->file.path, 0, 0},
                 "for %zu MOSFETs the dump's multiplier m differs from the netlist's (first: %s, netlist "
                 "m=%g, dump m=%g); the figures use the dump's m, which is what was simulated (the netlist "
                 "reader already follows ngspice's m= rule, so the dump may come from another version of "
                 "the netlist)",
                 nm_differ, first_m->name, first_m->m, by_dev[first_m - ds->devs]->q[OPQ_M]);
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
    free(j->orphans);
    memset(j, 0, sizeof *j);
}
