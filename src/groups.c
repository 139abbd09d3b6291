/* groups: spreads and ratio errors of a matched group, and the split of a pattern-selected group
 * into one group per enclosing instance. */
#include "groups.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "diag.h"

double grp_size(const Device *dv)
{
    double w = dv->w, l = dv->l, m = dv->m;
    if (!(w > 0.0) || !(l > 0.0) || !(m > 0.0) || !isfinite(w) || !isfinite(l) || !isfinite(m))
        return NAN;
    return w * m / l;
}

/* max - min of v over the members, with the members that hold them; NaN when one is missing. */
static double spread(const Figures *const *figs, size_t n, size_t off, size_t *lo, size_t *hi, double *mean)
{
    *lo = *hi = 0;
    double sum = 0.0;
    for (size_t k = 0; k < n; k++) {
        double v = *(const double *)((const char *)figs[k] + off);
        if (isnan(v)) {
            *mean = NAN;
            return NAN;
        }
        double vlo = *(const double *)((const char *)figs[*lo] + off);
        double vhi = *(const double *)((const char *)figs[*hi] + off);
        if (v < vlo)
            *lo = k;
        if (v > vhi)
            *hi = k;
        sum += v;
    }
    *mean = sum / (double)n;
    return *(const double *)((const char *)figs[*hi] + off) - *(const double *)((const char *)figs[*lo] + off);
}

void grp_stats(const Figures *const *figs, const double *want, size_t n, GrpStats *out)
{
    memset(out, 0, sizeof *out);
    out->n = n;
    double mean;
    out->vgs_spread = spread(figs, n, offsetof(Figures, vgs), &out->vgs_lo, &out->vgs_hi, &mean);
    out->vds_spread = spread(figs, n, offsetof(Figures, vds), &out->vds_lo, &out->vds_hi, &mean);
    double g = spread(figs, n, offsetof(Figures, gm_id), &out->gmid_lo, &out->gmid_hi, &mean);
    out->gmid_spread = mean > 0.0 ? g / mean : NAN;
    out->ratio_err = out->ratio_meas = out->ratio_want = NAN;
    double id0 = figs[0]->id, w0 = want[0];
    if (!(id0 > 0.0) || !(w0 > 0.0) || !isfinite(w0))
        return;
    double worst = -1.0;
    for (size_t k = 1; k < n; k++) {
        double idk = figs[k]->id, wk = want[k];
        if (!(idk >= 0.0) || !(wk > 0.0) || !isfinite(wk)) {
            out->ratio_err = out->ratio_meas = out->ratio_want = NAN;
            return;
        }
        double meas = idk / id0, exp = wk / w0, err = meas / exp - 1.0;
        if (fabs(err) > worst) {
            worst = fabs(err);
            out->ratio_err = err;
            out->ratio_worst = k;
            out->ratio_meas = meas;
            out->ratio_want = exp;
        }
    }
}

size_t grp_parent_len(const char *name)
{
    const char *dot = strrchr(name, '.');
    return dot ? (size_t)(dot - name) : 0;
}

typedef struct {
    const char *name;
    size_t plen;
    size_t idx;
} Key;

static int by_parent(const void *a, const void *b)
{
    const Key *x = a, *y = b;
    size_t n = x->plen < y->plen ? x->plen : y->plen;
    int c = memcmp(x->name, y->name, n);
    if (c)
        return c;
    if (x->plen != y->plen)
        return x->plen < y->plen ? -1 : 1;
    return x->idx < y->idx ? -1 : x->idx > y->idx; /* stable: netlist order within a parent */
}

int grp_by_parent(const char *const *names, size_t *idx, size_t n, size_t *starts, size_t *nruns)
{
    *nruns = 0;
    if (n == 0) {
        starts[0] = 0;
        return ERR_OK;
    }
    Key *k = malloc(n * sizeof *k);
    if (!k)
        return ERR_NOMEM;
    for (size_t i = 0; i < n; i++)
        k[i] = (Key){names[idx[i]], grp_parent_len(names[idx[i]]), idx[i]};
    qsort(k, n, sizeof *k, by_parent);
    size_t r = 0;
    for (size_t i = 0; i < n; i++) {
        if (i == 0 || k[i].plen != k[i - 1].plen || memcmp(k[i].name, k[i - 1].name, k[i].plen) != 0)
            starts[r++] = i;
        idx[i] = k[i].idx;
    }
    starts[r] = n;
    *nruns = r;
    free(k);
    return ERR_OK;
}
