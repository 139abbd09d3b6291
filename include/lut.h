/* lut: characterization tables. A table holds, for one model at one temperature and one reference
 * width, the quantities ngspice reports (id, gm, gds, gmbs, cgg, cgs, cgd, vth, vdsat) over a
 * rectangular grid of L, VSB, VDS and VGS. This module loads and validates table files (CSV read
 * with libcsv; the format is described at the top of src/lut.c and in README.md), writes them,
 * interpolates any point inside the grid, and answers the inverse question: the VGS that gives a
 * target gm/ID. Callers: characterize (writes), run/join (check --table), size. */
#ifndef LUT_H
#define LUT_H

#include <stddef.h>
#include <stdio.h>

#include "design.h"
#include "diag.h"

/* Quantities of a table, per reference width, in the n-type convention (PMOS magnitudes), SI
 * units. ORDER LUTQ */
typedef enum {
    LUTQ_ID,    /* drain current, A (positive when the channel conducts) */
    LUTQ_GM,    /* S */
    LUTQ_GDS,   /* S */
    LUTQ_GMBS,  /* S (optional column) */
    LUTQ_CGG,   /* F, intrinsic: overlap capacitance left out, as ngspice's BSIM4 gives it (optional) */
    LUTQ_CGS,   /* F, as ngspice prints it for the model (BSIM: -dQg/dVs, negative) (optional) */
    LUTQ_CGD,   /* F, likewise (optional) */
    LUTQ_VTH,   /* V, threshold from the real source (level 1-3: von) */
    LUTQ_VDSAT, /* V */
    LUTQ_COUNT
} LutQty;

extern const char *const lut_qty_column[LUTQ_COUNT]; /* "id_a", "gm_s", ... ORDER LUTQ */

/* Columns every table must have; the others may be left out (level-1 tables have no capacitances). */
#define LUT_REQUIRED ((1u << LUTQ_ID) | (1u << LUTQ_GM) | (1u << LUTQ_GDS) | (1u << LUTQ_VTH) | (1u << LUTQ_VDSAT))

/* Grid axes, slowest-varying first: the row order of a table file. ORDER LUTAX */
typedef enum { LUTAX_L, LUTAX_VSB, LUTAX_VDS, LUTAX_VGS, LUTAX_COUNT } LutAxis;

extern const char *const lut_axis_column[LUTAX_COUNT]; /* "l_m", "vsb_v", "vds_v", "vgs_v" ORDER LUTAX */
extern const char *const lut_axis_label[LUTAX_COUNT];  /* "L", "VSB", "VDS", "VGS" ORDER LUTAX */

/* What a table says about itself (its header) and its grid. Strings may be NULL when unknown. */
typedef struct {
    const char *model;            /* model name, lower case */
    MosType type;
    int level;                    /* model level, 0 when unknown */
    double temp_c;                /* simulation temperature, degrees C */
    double w_ref;                 /* reference width, m (one finger, m=1) */
    const char *models_file;      /* provenance: the model file and section characterized */
    const char *section;
    const char *biaslint_version; /* the versions that built it */
    const char *ngspice_version;
    const double *axis[LUTAX_COUNT]; /* strictly increasing values of each axis */
    size_t n[LUTAX_COUNT];           /* points on each axis, at least 1 */
    unsigned have;                /* bit (1 << q) set when column q is present (LUT_REQUIRED always) */
} LutInfo;

typedef struct Lut Lut;

/* Nodes in the grid: the product of info->n[]. */
size_t lut_nodes(const LutInfo *info);

/* A table from values in memory: vals[node * LUTQ_COUNT + q], nodes in file row order (L slowest,
 * VGS fastest); entries of absent columns are ignored. Copies everything. Checks what lut_load
 * checks except file positions (monotone axes, finite values, units). NULL with a diagnostic at
 * `where` on bad input or out of memory. */
Lut *lut_new(const LutInfo *info, const double *vals, const char *where, DiagList *d);

/* What lut_new checks, without building the table: ERR_OK or ERR_INPUT with a diagnostic. */
int lut_check(const LutInfo *info, const double *vals, const char *where, DiagList *d) MUST_CHECK;

/* Read and validate a table file. NULL with located diagnostics (file:line:column) on error: not a
 * biaslint table, a missing header key or column, an empty, NaN or non-numeric value, a grid that
 * is not rectangular (ragged), an axis that does not increase, a value with the wrong unit. */
Lut *lut_load(const char *path, DiagList *d);
void lut_free(Lut *t); /* accepts NULL */

const LutInfo *lut_info(const Lut *t);
const char *lut_path(const Lut *t); /* the file it was read from, or the `where` of lut_new */

/* Write a table file: header from info, one row per node of vals (layout as lut_new). ERR_OK or
 * ERR_IO (the stream failed). Numbers are written with 10 significant digits. */
int lut_write(FILE *fp, const LutInfo *info, const double *vals) MUST_CHECK;

/* Interpolated values at one point, for the reference width. NaN where absent. */
typedef struct {
    double q[LUTQ_COUNT];
    double gm_id;   /* gm/ID, 1/V */
    double id_w;    /* ID/W_ref, A/m */
    double gain;    /* gm/gds */
    double ft;      /* gm/(2*pi*Cgg), Hz (intrinsic Cgg) */
} LutVals;

/* Interpolate every quantity at (l, vgs, vds, vsb) (n-type convention). Returns 0 when the point
 * lies inside the grid, else a bit mask (1 << LutAxis) of the axes it falls outside of; then every
 * value is NaN: a table never extrapolates. Scheme (see lut.c): piecewise cubic Hermite along VGS,
 * VDS and VSB with slopes from three-point differences, linear along log(L); log(id) and the logs of
 * gm/id, gds/id, gmbs/id interpolated. */
unsigned lut_eval(const Lut *t, double l, double vgs, double vds, double vsb, LutVals *out);

/* gm/ID alone at (l, vgs, vds, vsb), as lut_eval computes it, and ID for the reference width when id
 * is not NULL: the fast path (inverse lookups, sweeps). Returns the miss bits of lut_eval; NaN then. */
unsigned lut_eval_gmid(const Lut *t, double l, double vgs, double vds, double vsb, double *gm_id, double *id);

/* The table among tables[0..n) for a device of this type and model (case-insensitive); among several,
 * the one made nearest temp_c (NaN: the first). NULL when none. */
const Lut *lut_for_device(const Lut *const *tables, size_t n, MosType type, const char *model, double temp_c);

/* Results of lut_vgs_for_gmid. */
enum {
    LUT_INV_OK = 0,
    LUT_INV_OUTSIDE = 1, /* (l, vds, vsb) outside the grid */
    LUT_INV_HIGH = 2,    /* target above every gm/ID the table reaches there (*limit: the highest) */
    LUT_INV_LOW = 3,     /* target below every gm/ID the table reaches there (*limit: the lowest) */
};

/* The VGS at which gm/ID equals target at (l, vds, vsb), and the values there. Where several VGS
 * give the target, the highest is taken. limit (optional) receives the reachable extreme on
 * LUT_INV_HIGH / LUT_INV_LOW. On failure *vgs is NaN and out all NaN. */
int lut_vgs_for_gmid(const Lut *t, double l, double vds, double vsb, double target, double *vgs, LutVals *out,
                     double *limit);

/* The width (total over fingers, per copy of m) that makes a device of length l at (vds, vsb) carry
 * current id at gm/ID = target: W = id / (m * ID/W at the inverse-lookup VGS). Returns the status
 * of lut_vgs_for_gmid; *w (and *vgs when not NULL) are NaN on failure. */
int lut_suggest_w(const Lut *t, double l, double vds, double vsb, double target, double id, double m, double *w,
                  double *vgs);

#endif
