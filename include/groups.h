/* groups: the figures of a matched group of devices (differential pair, current mirror, cascode
 * stack): the spreads of VGS, gm/ID and VDS, and the worst member's drain-current ratio against the
 * expected ratio. Pure arithmetic on normalized figures (metrics.h); check.c forms the groups from
 * the `matched` statements and turns these figures into findings. */
#ifndef GROUPS_H
#define GROUPS_H

#include <stddef.h>

#include "design.h"
#include "metrics.h"

typedef struct {
    size_t n;                  /* members */
    double vgs_spread;         /* V, max - min VGS; NaN when a member lacks VGS */
    size_t vgs_lo, vgs_hi;     /* members with the lowest and the highest VGS */
    double gmid_spread;        /* (max - min) / mean of gm/ID, a fraction; NaN when one lacks gm/ID */
    size_t gmid_lo, gmid_hi;
    double vds_spread;         /* V, max - min VDS; NaN when a member lacks VDS */
    size_t vds_lo, vds_hi;
    double ratio_err;          /* (ID_k/ID_0) / (want_k/want_0) - 1 of the member k >= 1 farthest from
                                  its expected ratio, a signed fraction; NaN when an ID or a want is
                                  missing or zero */
    size_t ratio_worst;        /* that member */
    double ratio_meas;         /* its measured ID_k/ID_0 */
    double ratio_want;         /* its expected want_k/want_0 */
} GrpStats;

/* A device's size for the default ratio: W*m/L. W is the total width over all fingers (as
 * ngspice reads it for BSIM4: w=4u nf=4 is four 1 um fingers), so nf does not enter. NaN when W, L
 * or m is unknown or not positive. */
double grp_size(const Device *dv);

/* The figures of members figs[0..n) against the expected ratio want[0..n) (any common scale;
 * member 0 is the reference). n >= 2. */
void grp_stats(const Figures *const *figs, const double *want, size_t n, GrpStats *out);

/* Length of a hierarchical name's parent instance: "xamp.xbias.m3" -> 10 ("xamp.xbias"), 0 for a
 * top-level name. */
size_t grp_parent_len(const char *name);

/* Orders idx[0..n) (indices into names[]) by parent instance, keeping their order within each
 * parent, and writes the start of each parent's run to starts[0..*nruns] (starts[*nruns] == n).
 * starts has room for n + 1 entries. ERR_OK or ERR_NOMEM (idx unchanged). */
int grp_by_parent(const char *const *names, size_t *idx, size_t n, size_t *starts, size_t *nruns);

#endif
