/* lut: characterization tables: the file format, validation, interpolation and inverse lookup.
 *
 * Table file (written by `biaslint characterize`, read by `check --table` and `size`):
 *
 *     # biaslint-table 1                       first line, always: format name and version
 *     # model: ncore                           header block: "# key: value" lines
 *     # type: nmos
 *     # level: 14
 *     # temp_c: 27
 *     # w_ref_m: 1e-05
 *     # models_file: /path/models.lib          (optional: provenance)
 *     # section: mild                          (optional)
 *     # biaslint: 0.1.0                        (optional)
 *     # ngspice: 39                            (optional)
 *     # grid l_m: 1.8e-07 ... (10 values)      (optional, informational: the rows define the grid)
 *     l_m,vsb_v,vds_v,vgs_v,id_a,gm_s,gds_s,gmbs_s,cgg_f,cgs_f,cgd_f,vth_v,vdsat_v
 *     1.8e-07,0,0,0,0,...
 *
 * - Required header keys: model, type (nmos|pmos), temp_c (degrees C), w_ref_m (the reference
 *   width in metres: one finger, m=1). Unknown keys are ignored; other comment lines too.
 * - Columns, in any order (names are ours: quantity plus SI unit): the grid l_m (drawn channel
 *   length), vsb_v, vds_v, vgs_v; the quantities id_a, gm_s, gds_s, vth_v, vdsat_v (required) and
 *   gmbs_s, cgg_f, cgs_f, cgd_f (optional). Values are for the reference width, in the n-type
 *   convention (PMOS voltages and currents as magnitudes), plain decimal numbers, SI units. cgg_f
 *   is intrinsic (ngspice's BSIM4 cgg leaves out overlap capacitance); cgs_f, cgd_f keep ngspice's
 *   sign for the model family. vth_v is the threshold (von for levels 1-3).
 * - Rows form a complete rectangular grid ordered l_m, vsb_v, vds_v, vgs_v, the last changing
 *   fastest; every axis strictly increasing. No empty, NaN or infinite value.
 *
 * Interpolation (lut_eval): a tensor product of one-dimensional interpolants, piecewise cubic
 * Hermite along VGS, VDS and VSB (node slopes from the three-point, parabola, difference, which
 * keeps every weight linear in the node values) and linear along log(L) (axis_cubic says why); so a
 * value is a fixed weighted sum over a 2x4x4x4 stencil (1 node on an axis when the point sits on one
 * of its nodes, as a device at one of the table's lengths does). L is taken as log(L) (long-channel
 * currents go as 1/L). The current is interpolated as log(id) and the conductances as log(gm/id),
 * log(gds/id), log(gmbs/id): exact for exponentials, which keeps weak inversion accurate, and gm/ID
 * is exp(log(gm/id)) directly. Where a node in the stencil holds a value <= 0 (VDS = 0, a cut-off
 * level-1 device) those quantities fall back to linear interpolation. Values are kept as floats (the
 * logs against the table's mean log id, so 7 digits hold), far below the scheme's own error, to halve
 * the memory traffic. A point outside the grid gets no values: the table never extrapolates. */
#include "lut.h"

#include <csv.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "arena.h"
#include "buf.h"
#include "opdump.h"
#include "source.h"

const char *const lut_qty_column[LUTQ_COUNT] = {"id_a",  "gm_s",  "gds_s", "gmbs_s", "cgg_f",
                                                "cgs_f", "cgd_f", "vth_v", "vdsat_v"}; /* ORDER LUTQ */
const char *const lut_axis_column[LUTAX_COUNT] = {"l_m", "vsb_v", "vds_v", "vgs_v"};    /* ORDER LUTAX */
const char *const lut_axis_label[LUTAX_COUNT] = {"L", "VSB", "VDS", "VGS"};             /* ORDER LUTAX */

#define LUT_MAGIC "# biaslint-table"
#define LUT_VERSION 1
#define LOGQ ((1u << LUTQ_ID) | (1u << LUTQ_GM) | (1u << LUTQ_GDS) | (1u << LUTQ_GMBS))
#define NLOG 4 /* quantities LUTQ_ID..LUTQ_GMBS: the log-interpolated ones, first in ORDER LUTQ */
/* Cubic (1) or linear (0) between the nodes of each axis. ORDER LUTAX. Along VSB the body effect
 * bends the curves enough that linear interpolation costs accuracy a designer sees (0.4-0.9 % in
 * gm/ID at mid-VSB with 0.2 V steps on the demo's models, 2.8 % on a level-1 device near threshold),
 * so VSB is cubic. Along L, cubic would lower the error at lengths off the grid (95th percentile
 * 0.16 % against about 0.6 %) but double the stencil again; devices mostly sit on the table's
 * lengths, where both give the same numbers. */
static const int axis_cubic[LUTAX_COUNT] = {0, 1, 1, 1};
#define HOT_W LUTQ_COUNT /* values per node in the hot array */
#ifndef LUT_HOT_DOUBLE
typedef float Hot; /* 7 significant digits: far below the scheme's own error, half the memory traffic */
#define LUT_VALUE_MAX 1e30 /* quantities beyond it (none is physical) would overflow a float */
#else
typedef double Hot;
#endif
#define MAX_NODES ((size_t)1 << 28)
#define MAX_LOAD_ERRORS 20
#define TWO_PI 6.283185307179586

/* One interval of an axis: the stencil weights as cubics in s, the position in the interval. */
typedef struct {
    double inv_d;     /* 1/(x[k+1] - x[k]) */
    size_t base;      /* first node of the stencil */
    int cnt;          /* nodes in the stencil, 2 to 4 */
    double m[4][4];   /* weight of node base+j = m[j][0] + m[j][1]*s + m[j][2]*s^2 + m[j][3]*s^3 */
} Span;

/* One axis, prepared for interpolation. */
typedef struct {
    double *x;        /* coordinates (log L for the L axis), n of them */
    size_t n;
    double lo, hi;    /* accepted range in coordinates (the ends plus a small tolerance) */
    double inv_h;     /* 1/step when uniform, else 0 */
    int cubic;        /* cubic Hermite (else linear) between nodes, when the axis has 3 points or more */
    double (*c)[3];   /* per node: slope = c[0]*f[s] + c[1]*f[s+1] + c[2]*f[s+2] */
    size_t *s;        /* per node: first node of its slope stencil */
    Span *span;       /* n-1 intervals (set by axis_spans) */
} Axis;

struct Lut {
    LutInfo info;
    char *path;
    Arena arena;          /* info strings, axis values */
    Axis ax[LUTAX_COUNT];
    size_t stride[LUTAX_COUNT];
    size_t nnodes;
    Hot *hot;             /* nnodes * HOT_W: log id, log(gm/id), log(gds/id), log(gmbs/id) (NaN where a value
                             is <= 0), the rest as they are */
    Hot *pair;            /* nnodes * 2: log id, log(gm/id) again, packed: gm/ID alone touches 8 bytes a node */
    double *lin;          /* nnodes * NLOG: id, gm, gds, gmbs as they are, for the fallback */
    double lid0;          /* hot and pair hold log id - lid0 (the mean log id): small numbers, precise floats */
};

size_t lut_nodes(const LutInfo *info)
{
    size_t n = 1;
    for (int a = 0; a < LUTAX_COUNT; a++) {
        if (info->n[a] == 0 || n > MAX_NODES / info->n[a])
            return 0;
        n *= info->n[a];
    }
    return n;
}

const LutInfo *lut_info(const Lut *t)
{
    return &t->info;
}

const char *lut_path(const Lut *t)
{
    return t->path;
}

void lut_free(Lut *t)
{
    if (!t)
        return;
    for (int a = 0; a < LUTAX_COUNT; a++) {
        free(t->ax[a].x);
        free(t->ax[a].c);
        free(t->ax[a].s);
        free(t->ax[a].span);
    }
    free(t->hot);
    free(t->pair);
    free(t->lin);
    free(t->path);
    arena_free(&t->arena);
    free(t);
}

/* ---- building ------------------------------------------------------------------------------ */

static int axis_prepare(Axis *a, const double *v, size_t n, int log_scale, double single_tol)
{
    a->n = n;
    a->x = malloc(n * sizeof *a->x);
    a->c = malloc(n * sizeof *a->c);
    a->s = malloc(n * sizeof *a->s);
    if (!a->x || !a->c || !a->s)
        return ERR_NOMEM;
    for (size_t i = 0; i < n; i++)
        a->x[i] = log_scale ? log(v[i]) : v[i];
    const double *x = a->x;
    double span = x[n - 1] - x[0];
    double tol = n > 1 ? 1e-6 * span : single_tol;
    a->lo = x[0] - tol;
    a->hi = x[n - 1] + tol;
    a->inv_h = 0;
    if (n > 1) {
        double h = span / (double)(n - 1);
        int uniform = 1;
        for (size_t i = 1; i < n && uniform; i++)
            uniform = fabs((x[i] - x[i - 1]) - h) <= 1e-9 * h;
        if (uniform)
            a->inv_h = 1.0 / h;
    }
    for (size_t i = 0; i < n; i++) {
        a->c[i][0] = a->c[i][1] = a->c[i][2] = 0;
        a->s[i] = 0;
        if (n < 3)
            continue;
        if (i == 0) {
            double h1 = x[1] - x[0], h2 = x[2] - x[1];
            a->s[i] = 0;
            a->c[i][0] = -(2 * h1 + h2) / (h1 * (h1 + h2));
            a->c[i][1] = (h1 + h2) / (h1 * h2);
            a->c[i][2] = -h1 / (h2 * (h1 + h2));
        } else if (i == n - 1) {
            double h1 = x[n - 2] - x[n - 3], h2 = x[n - 1] - x[n - 2];
            a->s[i] = n - 3;
            a->c[i][0] = h2 / (h1 * (h1 + h2));
            a->c[i][1] = -(h1 + h2) / (h1 * h2);
            a->c[i][2] = (2 * h2 + h1) / (h2 * (h1 + h2));
        } else {
            double h1 = x[i] - x[i - 1], h2 = x[i + 1] - x[i];
            a->s[i] = i - 1;
            a->c[i][0] = -h2 / (h1 * (h1 + h2));
            a->c[i][1] = (h2 - h1) / (h1 * h2);
            a->c[i][2] = h1 / (h2 * (h1 + h2));
        }
    }
    return ERR_OK;
}

/* The nodes and weights of one axis at coordinate t: w[0..*cnt) for nodes base..base+cnt-1.
 * Returns 1 when t lies outside the axis. */
typedef struct {
    size_t base;
    int cnt;
    double w[4];
} Stencil;

static inline int axis_weights(const Axis *a, double t, Stencil *st)
{
    if (!(t >= a->lo && t <= a->hi)) /* also catches NaN */
        return 1;
    size_t n = a->n;
    if (n == 1) {
        st->base = 0;
        st->cnt = 1;
        st->w[0] = 1;
        return 0;
    }
    const double *x = a->x;
    size_t k;
    double s;
    if (a->inv_h > 0) {
        double p = (t - x[0]) * a->inv_h;
        p = p < 0 ? 0 : p;
        k = (size_t)p;
        if (k > n - 2)
            k = n - 2;
        s = p - (double)k;
    } else {
        size_t lo = 0, hi = n - 1; /* x[lo] <= t < x[hi] */
        while (hi - lo > 1) {
            size_t mid = lo + (hi - lo) / 2;
            if (x[mid] <= t)
                lo = mid;
            else
                hi = mid;
        }
        k = lo;
        s = (t - x[k]) * a->span[k].inv_d;
    }
    s = s < 0 ? 0 : s > 1 ? 1 : s;
    if (s < 1e-12 || s > 1 - 1e-12) { /* on a node: that node alone (a device at one of the table's L) */
        st->base = s < 0.5 ? k : k + 1;
        st->cnt = 1;
        st->w[0] = 1;
        return 0;
    }
    if (!a->cubic || n == 2) {
        st->base = k;
        st->cnt = 2;
        st->w[0] = 1 - s;
        st->w[1] = s;
        return 0;
    }
    const Span *sp = &a->span[k];
    st->base = sp->base;
    st->cnt = sp->cnt;
    for (int j = 0; j < 4; j++)
        st->w[j] = sp->m[j][0] + s * (sp->m[j][1] + s * (sp->m[j][2] + s * sp->m[j][3]));
    return 0;
}

/* The weights of every interval as cubics in s: cubic Hermite with the three-point slopes (linear
 * for two-point or linear axes), the stencil clamped to the axis. */
static int axis_spans(Axis *a)
{
    size_t n = a->n;
    if (n < 2)
        return ERR_OK;
    if (!(a->span = calloc(n - 1, sizeof *a->span)))
        return ERR_NOMEM;
    const double *x = a->x;
    for (size_t k = 0; k + 1 < n; k++) {
        Span *sp = &a->span[k];
        double d = x[k + 1] - x[k];
        sp->inv_d = 1.0 / d;
        if (n == 2 || !a->cubic) {
            sp->base = k;
            sp->cnt = 2;
            sp->m[0][0] = 1, sp->m[0][1] = -1; /* 1 - s */
            sp->m[1][1] = 1;                   /* s */
            continue;
        }
        /* basis: h00 = 1 - 3s^2 + 2s^3, h01 = 3s^2 - 2s^3, h10 = d(s - 2s^2 + s^3), h11 = d(s^3 - s^2) */
        static const double H00[4] = {1, 0, -3, 2}, H01[4] = {0, 0, 3, -2}, H10[4] = {0, 1, -2, 1},
                            H11[4] = {0, 0, -1, 1};
        /* the nodes that carry weight: k-1..k+2 inside, three at either end (a node of zero weight
           would still bring its NaN into the sums) */
        int edge = k == 0 || k == n - 2;
        size_t base = k == 0 ? 0 : k == n - 2 ? n - 3 : k - 1;
        sp->base = base;
        sp->cnt = edge ? 3 : 4;
        for (int i = 0; i < 4; i++) {
            sp->m[k - base][i] += H00[i];
            sp->m[k + 1 - base][i] += H01[i];
            for (int j = 0; j < 3; j++) {
                sp->m[a->s[k] - base + (size_t)j][i] += d * H10[i] * a->c[k][j];
                sp->m[a->s[k + 1] - base + (size_t)j][i] += d * H11[i] * a->c[k + 1][j];
            }
        }
    }
    return ERR_OK;
}

static int bad_value(DiagList *d, const char *where, const char *fmt, ...) PRINTF_LIKE(3, 4);
static int bad_value(DiagList *d, const char *where, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    Buf b = BUF_INIT;
    int rc = buf_vprintf(&b, fmt, ap);
    va_end(ap);
    if (rc != ERR_OK)
        return diag_nomem(d);
    diag_add(d, DIAG_ERROR, (SrcLoc){where, 0, 0}, "%s", b.data);
    buf_free(&b);
    return ERR_INPUT;
}

/* Limits that catch a value in the wrong unit (micrometres for metres, mV for V). */
#define L_MAX 1e-3     /* m */
#define V_MAX 100.0    /* V */
#define W_MAX 1.0      /* m */

static int check_info(const LutInfo *in, const char *where, DiagList *d)
{
    if (!in->model || !in->model[0])
        return bad_value(d, where, "the table names no model");
    if (in->type != MOS_NMOS && in->type != MOS_PMOS)
        return bad_value(d, where, "the table's device type must be nmos or pmos");
    if (!(in->w_ref > 0 && in->w_ref <= W_MAX))
        return bad_value(d, where, "reference width %g m: it must lie in (0, 1] metres (write 10u as 1e-05)",
                         in->w_ref);
    if (!isfinite(in->temp_c) || in->temp_c < -273.15)
        return bad_value(d, where, "temperature %g C is not a temperature", in->temp_c);
    if ((in->have & LUT_REQUIRED) != LUT_REQUIRED)
        return bad_value(d, where, "the table lacks a required quantity (id_a, gm_s, gds_s, vth_v, vdsat_v)");
    if (!lut_nodes(in))
        return bad_value(d, where, "the grid is empty or too large (more than %zu points)", MAX_NODES);
    for (int a = 0; a < LUTAX_COUNT; a++) {
        const double *v = in->axis[a];
        for (size_t i = 0; i < in->n[a]; i++) {
            if (!isfinite(v[i]))
                return bad_value(d, where, "the %s axis holds a value that is not a number", lut_axis_label[a]);
            if (i && !(v[i] > v[i - 1]))
                return bad_value(d, where, "the %s axis does not increase (%g after %g)", lut_axis_label[a], v[i],
                                 v[i - 1]);
        }
        double lo = v[0], hi = v[in->n[a] - 1];
        if (a == LUTAX_L && !(lo > 0 && hi <= L_MAX))
            return bad_value(d, where, "L from %g to %g: lengths are in metres (1u is 1e-06) and positive", lo, hi);
        if (a != LUTAX_L && !(fabs(lo) <= V_MAX && fabs(hi) <= V_MAX))
            return bad_value(d, where, "%s from %g to %g V: voltages are in volts", lut_axis_label[a], lo, hi);
    }
    if (in->axis[LUTAX_VDS][0] < 0)
        return bad_value(d, where, "VDS starts at %g V: tables hold VDS >= 0 (n-type convention; a reversed "
                                   "device is looked up with drain and source swapped)",
                         in->axis[LUTAX_VDS][0]);
    return ERR_OK;
}

static char *dup_str(Arena *a, const char *s)
{
    return s ? arena_strndup(a, s, strlen(s)) : NULL;
}

int lut_check(const LutInfo *in, const double *vals, const char *where, DiagList *d)
{
    if (!where)
        where = "<table>";
    if (check_info(in, where, d) != ERR_OK)
        return ERR_INPUT;
    size_t nn = lut_nodes(in);
    for (size_t i = 0; i < nn; i++)
        for (int q = 0; q < LUTQ_COUNT; q++)
            if ((in->have >> q & 1u) && !isfinite(vals[i * LUTQ_COUNT + q]))
                return bad_value(d, where, "grid point %zu: %s is not a finite number", i + 1, lut_qty_column[q]);
            else if ((in->have >> q & 1u) && fabs(vals[i * LUTQ_COUNT + q]) > LUT_VALUE_MAX)
                return bad_value(d, where, "grid point %zu: %s is %g, over %g in magnitude", i + 1, lut_qty_column[q],
                                 vals[i * LUTQ_COUNT + q], LUT_VALUE_MAX);
    return ERR_OK;
}

Lut *lut_new(const LutInfo *in, const double *vals, const char *where, DiagList *d)
{
    if (!where)
        where = "<table>";
    if (lut_check(in, vals, where, d) != ERR_OK)
        return NULL;
    size_t nn = lut_nodes(in);
    Lut *t = calloc(1, sizeof *t);
    if (!t) {
        diag_nomem(d);
        return NULL;
    }
    arena_init(&t->arena);
    t->info = *in;
    t->nnodes = nn;
    t->path = malloc(strlen(where) + 1);
    if (!t->path)
        goto nomem;
    strcpy(t->path, where);
    LutInfo *ti = &t->info;
    if ((in->model && !(ti->model = dup_str(&t->arena, in->model))) ||
        (in->models_file && !(ti->models_file = dup_str(&t->arena, in->models_file))) ||
        (in->section && !(ti->section = dup_str(&t->arena, in->section))) ||
        (in->biaslint_version && !(ti->biaslint_version = dup_str(&t->arena, in->biaslint_version))) ||
        (in->ngspice_version && !(ti->ngspice_version = dup_str(&t->arena, in->ngspice_version))))
        goto nomem;
    for (char *p = (char *)ti->model; *p; p++)
        if (*p >= 'A' && *p <= 'Z')
            *p = (char)(*p + 32);
    for (int a = 0; a < LUTAX_COUNT; a++) {
        double *v = arena_array(&t->arena, in->n[a], sizeof *v);
        if (!v)
            goto nomem;
        memcpy(v, in->axis[a], in->n[a] * sizeof *v);
        ti->axis[a] = v;
        /* a one-point axis accepts 0.1 mV (or 1 ppm of L) around its value */
        if (axis_prepare(&t->ax[a], v, in->n[a], a == LUTAX_L, a == LUTAX_L ? 1e-6 : 1e-4) != ERR_OK)
            goto nomem;
        t->ax[a].cubic = axis_cubic[a];
        if (axis_spans(&t->ax[a]) != ERR_OK)
            goto nomem;
    }
    t->stride[LUTAX_VGS] = 1;
    t->stride[LUTAX_VDS] = in->n[LUTAX_VGS];
    t->stride[LUTAX_VSB] = in->n[LUTAX_VGS] * in->n[LUTAX_VDS];
    t->stride[LUTAX_L] = t->stride[LUTAX_VSB] * in->n[LUTAX_VSB];
    t->hot = malloc(nn * HOT_W * sizeof *t->hot);
    t->pair = malloc(nn * 2 * sizeof *t->pair);
    t->lin = malloc(nn * NLOG * sizeof *t->lin);
    if (!t->hot || !t->pair || !t->lin)
        goto nomem;
    double sum = 0;
    size_t cnt = 0;
    for (size_t i = 0; i < nn && (in->have & 1u); i++)
        if (vals[i * LUTQ_COUNT + LUTQ_ID] > 0) {
            sum += log(vals[i * LUTQ_COUNT + LUTQ_ID]);
            cnt++;
        }
    t->lid0 = cnt ? sum / (double)cnt : 0;
    for (size_t i = 0; i < nn; i++) {
        const double *src = vals + i * LUTQ_COUNT;
        Hot *h = t->hot + i * HOT_W;
        double *l = t->lin + i * NLOG;
        /* log id, and log(x/id) for gm, gds, gmbs: ratios near 1 to 1e3, so a float holds their logs to
           1e-7 and gm/ID, gm/gds come out as accurate as the scheme is */
        double id = (in->have & 1u) ? src[LUTQ_ID] : 0.0, lid = id > 0 ? log(id) : NAN;
        for (int q = 0; q < HOT_W; q++) {
            double v = q < LUTQ_COUNT && (in->have >> q & 1u) ? src[q] : 0.0;
            if (q < NLOG) {
                l[q] = v;
                h[q] = (Hot)(q == LUTQ_ID ? lid - t->lid0 : v > 0 ? log(v) - lid : NAN);
            } else {
                h[q] = (Hot)v;
            }
        }
        t->pair[2 * i] = h[LUTQ_ID];
        t->pair[2 * i + 1] = h[LUTQ_GM];
    }
    return t;
nomem:
    diag_nomem(d);
    lut_free(t);
    return NULL;
}

/* ---- interpolation ------------------------------------------------------------------------- */

static void all_nan(LutVals *o)
{
    for (int q = 0; q < LUTQ_COUNT; q++)
        o->q[q] = NAN;
    o->gm_id = o->id_w = o->gain = o->ft = NAN;
}

/* The weighted sum over the stencil of `width` values per node from data (node stride in values). */
static void sum_stencil(const Lut *t, const Stencil st[LUTAX_COUNT], const double *data, int width, double *acc)
{
    for (int q = 0; q < width; q++)
        acc[q] = 0;
    const Stencil *sl = &st[LUTAX_L], *sb = &st[LUTAX_VSB], *sd = &st[LUTAX_VDS], *sg = &st[LUTAX_VGS];
    size_t base = sl->base * t->stride[LUTAX_L] + sb->base * t->stride[LUTAX_VSB] +
                  sd->base * t->stride[LUTAX_VDS] + sg->base;
    for (int a = 0; a < sl->cnt; a++)
        for (int b = 0; b < sb->cnt; b++) {
            double wab = sl->w[a] * sb->w[b];
            for (int c = 0; c < sd->cnt; c++) {
                double w3 = wab * sd->w[c];
                const double *row = data + (base + (size_t)a * t->stride[LUTAX_L] + (size_t)b * t->stride[LUTAX_VSB] +
                                            (size_t)c * t->stride[LUTAX_VDS]) *
                                               (size_t)width;
                for (int g = 0; g < sg->cnt; g++) {
                    double w = w3 * sg->w[g];
                    const double *p = row + (size_t)g * (size_t)width;
                    for (int q = 0; q < width; q++)
                        acc[q] += w * p[q];
                }
            }
        }
}

/* The weighted sum over the stencil's VGS nodes of value q of a line (nodes `stride` values apart):
 * written out for four nodes, in pairs, so that the sums do not wait on each other (lut_eval_gmid). */
static inline Hot line_sum(const Hot *p, size_t stride, int q, const Hot wg[4], int ng)
{
    if (ng == 4)
        return (wg[0] * p[q] + wg[1] * p[stride + (size_t)q]) +
               (wg[2] * p[2 * stride + (size_t)q] + wg[3] * p[3 * stride + (size_t)q]);
    Hot t = 0;
    for (int g = 0; g < ng; g++)
        t += wg[g] * p[(size_t)g * stride + (size_t)q];
    return t;
}

/* The weighted sum of the hot values over the stencil: the hot path of lut_eval. The VGS nodes of a
 * line are contiguous, HOT_W values each; nine independent sums (the compiler pairs them up). The
 * order of the additions differs from lut_eval_gmid's, so the two agree to float rounding only. */
static void sum_hot(const Lut *t, const Stencil st[LUTAX_COUNT], double acc[LUTQ_COUNT])
{
    Hot s[LUTQ_COUNT] = {0};
    const Stencil *sl = &st[LUTAX_L], *sb = &st[LUTAX_VSB], *sd = &st[LUTAX_VDS], *sg = &st[LUTAX_VGS];
    size_t base = sl->base * t->stride[LUTAX_L] + sb->base * t->stride[LUTAX_VSB] +
                  sd->base * t->stride[LUTAX_VDS] + sg->base;
    int ng = sg->cnt;
    Hot wg[4] = {(Hot)sg->w[0], (Hot)sg->w[1], (Hot)sg->w[2], (Hot)sg->w[3]};
    for (int a = 0; a < sl->cnt; a++)
        for (int b = 0; b < sb->cnt; b++) {
            double wab = sl->w[a] * sb->w[b];
            const Hot *pab = t->hot + (base + (size_t)a * t->stride[LUTAX_L] + (size_t)b * t->stride[LUTAX_VSB]) * HOT_W;
            for (int c = 0; c < sd->cnt; c++) {
                Hot w3 = (Hot)(wab * sd->w[c]);
                const Hot *p = pab + (size_t)c * t->stride[LUTAX_VDS] * HOT_W;
                for (int g = 0; g < ng; g++, p += HOT_W) {
                    Hot w = w3 * wg[g];
                    s[0] += w * p[0], s[1] += w * p[1], s[2] += w * p[2], s[3] += w * p[3], s[4] += w * p[4];
                    s[5] += w * p[5], s[6] += w * p[6], s[7] += w * p[7], s[8] += w * p[8]; /* ORDER LUTQ */
                }
            }
        }
    for (int q = 0; q < LUTQ_COUNT; q++)
        acc[q] = (double)s[q];
}

/* The cell's corners alone, weighted linearly (one node on an axis the point sits on): the fallback
 * stencil near nodes whose logs do not exist. */
static void cell_axis(const Axis *a, const Stencil *wide, double t, Stencil *st)
{
    size_t n = a->n;
    if (wide->cnt == 1 || n == 1) {
        *st = *wide;
        return;
    }
    const double *x = a->x;
    t = t < x[0] ? x[0] : t > x[n - 1] ? x[n - 1] : t;
    size_t k = wide->base;
    while (k + 2 < n && x[k + 1] <= t)
        k++;
    while (k > 0 && x[k] > t)
        k--;
    double s = (t - x[k]) / (x[k + 1] - x[k]);
    st->base = k;
    st->cnt = 2;
    st->w[0] = 1 - s;
    st->w[1] = s;
}

static void cells(const Lut *t, double l, double vgs, double vds, double vsb, const Stencil wide[LUTAX_COUNT],
                  Stencil st[LUTAX_COUNT])
{
    cell_axis(&t->ax[LUTAX_L], &wide[LUTAX_L], log(l), &st[LUTAX_L]);
    cell_axis(&t->ax[LUTAX_VSB], &wide[LUTAX_VSB], vsb, &st[LUTAX_VSB]);
    cell_axis(&t->ax[LUTAX_VDS], &wide[LUTAX_VDS], vds, &st[LUTAX_VDS]);
    cell_axis(&t->ax[LUTAX_VGS], &wide[LUTAX_VGS], vgs, &st[LUTAX_VGS]);
}

/* The weighted sum of `width` float values per node (hot or pair data) over a small stencil. */
static void sum_floats(const Lut *t, const Stencil st[LUTAX_COUNT], const Hot *data, int width, double *acc)
{
    for (int q = 0; q < width; q++)
        acc[q] = 0;
    const Stencil *sl = &st[LUTAX_L], *sb = &st[LUTAX_VSB], *sd = &st[LUTAX_VDS], *sg = &st[LUTAX_VGS];
    size_t base = sl->base * t->stride[LUTAX_L] + sb->base * t->stride[LUTAX_VSB] +
                  sd->base * t->stride[LUTAX_VDS] + sg->base;
    for (int a = 0; a < sl->cnt; a++)
        for (int b = 0; b < sb->cnt; b++)
            for (int c = 0; c < sd->cnt; c++)
                for (int g = 0; g < sg->cnt; g++) {
                    double w = sl->w[a] * sb->w[b] * sd->w[c] * sg->w[g];
                    const Hot *p = data + (base + (size_t)a * t->stride[LUTAX_L] + (size_t)b * t->stride[LUTAX_VSB] +
                                           (size_t)c * t->stride[LUTAX_VDS] + (size_t)g) *
                                              (size_t)width;
                    for (int q = 0; q < width; q++)
                        acc[q] += w * (double)p[q];
                }
}

static unsigned stencils(const Lut *t, double l, double vgs, double vds, double vsb, Stencil st[LUTAX_COUNT])
{
    unsigned miss = 0;
    miss |= (unsigned)axis_weights(&t->ax[LUTAX_L], l > 0 ? log(l) : NAN, &st[LUTAX_L]) << LUTAX_L;
    miss |= (unsigned)axis_weights(&t->ax[LUTAX_VSB], vsb, &st[LUTAX_VSB]) << LUTAX_VSB;
    miss |= (unsigned)axis_weights(&t->ax[LUTAX_VDS], vds, &st[LUTAX_VDS]) << LUTAX_VDS;
    miss |= (unsigned)axis_weights(&t->ax[LUTAX_VGS], vgs, &st[LUTAX_VGS]) << LUTAX_VGS;
    return miss;
}

/* gm/ID alone, from the packed pairs (log id, log gm); the linear fallback as in lut_eval. */
unsigned lut_eval_gmid(const Lut *t, double l, double vgs, double vds, double vsb, double *gm_id, double *id)
{
    Stencil st[LUTAX_COUNT] = {{0, 0, {0, 0, 0, 0}}};
    unsigned miss = stencils(t, l, vgs, vds, vsb, st);
    if (miss) {
        *gm_id = NAN;
        if (id)
            *id = NAN;
        return miss;
    }
    const Stencil *sl = &st[LUTAX_L], *sb = &st[LUTAX_VSB], *sd = &st[LUTAX_VDS], *sg = &st[LUTAX_VGS];
    size_t base = sl->base * t->stride[LUTAX_L] + sb->base * t->stride[LUTAX_VSB] +
                  sd->base * t->stride[LUTAX_VDS] + sg->base;
    Hot a0 = 0, a1 = 0;
    int ng = sg->cnt;
    Hot wg[4] = {(Hot)sg->w[0], (Hot)sg->w[1], (Hot)sg->w[2], (Hot)sg->w[3]};
    for (int a = 0; a < sl->cnt; a++)
        for (int b = 0; b < sb->cnt; b++) {
            double wab = sl->w[a] * sb->w[b];
            const Hot *pab = t->pair + (base + (size_t)a * t->stride[LUTAX_L] + (size_t)b * t->stride[LUTAX_VSB]) * 2;
            for (int c = 0; c < sd->cnt; c++) {
                Hot w3 = (Hot)(wab * sd->w[c]);
                const Hot *p = pab + (size_t)c * t->stride[LUTAX_VDS] * 2;
                a0 += w3 * line_sum(p, 2, LUTQ_ID, wg, ng);
                a1 += w3 * line_sum(p, 2, LUTQ_GM, wg, ng);
            }
        }
    if (!isnan(a0) && !isnan(a1)) {
        *gm_id = exp((double)a1);
        if (id)
            *id = exp((double)a0 + t->lid0);
        return 0;
    }
    /* as lut_eval: the cell's corners in log scale, else their values */
    Stencil c[LUTAX_COUNT];
    double cl[2], lin[NLOG];
    cells(t, l, vgs, vds, vsb, st, c);
    sum_floats(t, c, t->pair, 2, cl);
    int need_lin = (isnan(a0) && isnan(cl[0])) || (isnan(a1) && isnan(cl[1]));
    if (need_lin)
        sum_stencil(t, st, t->lin, NLOG, lin);
    double idv = !isnan(a0) ? exp((double)a0 + t->lid0) : !isnan(cl[0]) ? exp(cl[0] + t->lid0) : lin[LUTQ_ID];
    double g = !isnan(a1) ? exp((double)a1) : !isnan(cl[1]) ? exp(cl[1]) : idv > 0 ? lin[LUTQ_GM] / idv : NAN;
    *gm_id = isinf(g) ? NAN : g;
    if (id)
        *id = isinf(idv) ? NAN : idv;
    return 0;
}

unsigned lut_eval(const Lut *t, double l, double vgs, double vds, double vsb, LutVals *out)
{
    Stencil st[LUTAX_COUNT] = {{0, 0, {0, 0, 0, 0}}};
    unsigned miss = stencils(t, l, vgs, vds, vsb, st);
    if (miss) {
        all_nan(out);
        return miss;
    }
    double acc[LUTQ_COUNT];
    sum_hot(t, st, acc);
    unsigned have = t->info.have;
    unsigned bad = 0;
    for (int q = 0; q < NLOG; q++)
        if ((have >> q & 1u) && isnan(acc[q]))
            bad |= 1u << q;
    /* Near a node whose log does not exist (a value <= 0: VDS = 0, a level-1 device cut off): the
       cell's corners alone in log scale when they all have logs (a cut-off node next door), else the
       full stencil on the values themselves (a corner at VDS = 0, where id goes as VDS). Each log
       quantity takes the best it can get; a ratio to id is multiplied by the id found. */
    double lg[NLOG], cl[HOT_W], lin[NLOG];
    int ok[NLOG];
    if (bad) {
        Stencil c[LUTAX_COUNT];
        cells(t, l, vgs, vds, vsb, st, c);
        sum_floats(t, c, t->hot, HOT_W, cl);
        int need_lin = 0;
        for (int q = 0; q < NLOG; q++)
            need_lin |= (bad >> q & 1u) && isnan(cl[q]);
        if (need_lin)
            sum_stencil(t, st, t->lin, NLOG, lin);
    }
    for (int q = 0; q < NLOG; q++) {
        ok[q] = !(bad >> q & 1u) || !isnan(cl[q]);
        lg[q] = !(bad >> q & 1u) ? acc[q] : cl[q];
    }
    double idl = ok[LUTQ_ID] ? exp(lg[LUTQ_ID] + t->lid0) : lin[LUTQ_ID];
    for (int q = 0; q < LUTQ_COUNT; q++) {
        if (!(have >> q & 1u))
            out->q[q] = NAN;
        else if (q >= NLOG)
            out->q[q] = acc[q];
        else if (q == LUTQ_ID)
            out->q[q] = idl;
        else /* logs summed first: a subnormal ID times the exp of a huge ratio was 0 * inf (fuzz_lut) */
            out->q[q] = !ok[q] ? lin[q] : ok[LUTQ_ID] ? exp(lg[LUTQ_ID] + t->lid0 + lg[q]) : idl * exp(lg[q]);
    }
    double id = out->q[LUTQ_ID], gm = out->q[LUTQ_GM], gds = out->q[LUTQ_GDS], cgg = out->q[LUTQ_CGG];
    out->gm_id = ok[LUTQ_GM] ? exp(lg[LUTQ_GM]) : id > 0 ? gm / id : NAN;
    out->id_w = id / t->info.w_ref;
    out->gain = gds > 0 ? gm / gds : NAN;
    out->ft = cgg > 0 ? gm / (TWO_PI * cgg) : NAN;
    /* on a pathological table the interpolant can overshoot past the double range (found by
       fuzz_lut): such a value is missing, never infinite */
    for (int q = 0; q < LUTQ_COUNT; q++)
        if (isinf(out->q[q]))
            out->q[q] = NAN;
    double *fig[] = {&out->gm_id, &out->id_w, &out->gain, &out->ft};
    for (size_t k = 0; k < sizeof fig / sizeof fig[0]; k++)
        if (isinf(*fig[k]))
            *fig[k] = NAN;
    return 0;
}

const Lut *lut_for_device(const Lut *const *tables, size_t n, MosType type, const char *model, double temp_c)
{
    const Lut *best = NULL;
    for (size_t i = 0; model && i < n; i++) {
        const LutInfo *in = &tables[i]->info;
        if (in->type != type || strcasecmp(in->model, model) != 0)
            continue;
        if (!best || (!isnan(temp_c) && fabs(in->temp_c - temp_c) < fabs(best->info.temp_c - temp_c)))
            best = tables[i];
    }
    return best;
}

/* ---- inverse lookup -------------------------------------------------------------------------- */

static double gmid_at(const Lut *t, double l, double vgs, double vds, double vsb, LutVals *v)
{
    (void)v;
    double g;
    if (lut_eval_gmid(t, l, vgs, vds, vsb, &g, NULL))
        return NAN;
    return g;
}

int lut_vgs_for_gmid(const Lut *t, double l, double vds, double vsb, double target, double *vgs, LutVals *out,
                     double *limit)
{
    LutVals v;
    *vgs = NAN;
    all_nan(out);
    const double *xg = t->info.axis[LUTAX_VGS];
    size_t n = t->info.n[LUTAX_VGS];
    if (lut_eval(t, l, xg[0], vds, vsb, &v) & ~(1u << LUTAX_VGS))
        return LUT_INV_OUTSIDE;
    if (!(target > 0) || !isfinite(target)) {
        if (limit)
            *limit = NAN;
        return LUT_INV_LOW;
    }
    /* gm/ID at the VGS nodes, from the top down: the bracket nearest strong inversion */
    double hi_val = -INFINITY, lo_val = INFINITY;
    double fb = gmid_at(t, l, xg[n - 1], vds, vsb, &v);
    if (isfinite(fb)) {
        hi_val = lo_val = fb;
        if (fb == target) {
            *vgs = xg[n - 1];
            *out = v;
            return LUT_INV_OK;
        }
    }
    size_t k = n;
    for (size_t i = n - 1; i-- > 0;) {
        double fa = gmid_at(t, l, xg[i], vds, vsb, &v);
        if (isfinite(fa)) {
            hi_val = fa > hi_val ? fa : hi_val;
            lo_val = fa < lo_val ? fa : lo_val;
            if (fa >= target && isfinite(fb) && fb < target) {
                k = i;
                break;
            }
        }
        fb = fa;
    }
    if (k == n) {
        if (limit)
            *limit = hi_val < target ? hi_val : lo_val;
        if (hi_val == -INFINITY)
            return LUT_INV_HIGH;
        return hi_val < target ? LUT_INV_HIGH : LUT_INV_LOW;
    }
    /* Illinois regula falsi on f(vgs) - target over [a, b], f(a) >= 0 > f(b) */
    double a = xg[k], b = xg[k + 1];
    double fa = gmid_at(t, l, a, vds, vsb, &v) - target, fbb = gmid_at(t, l, b, vds, vsb, &v) - target;
    int side = 0;
    double x = a;
    for (int it = 0; it < 100; it++) {
        x = (a * fbb - b * fa) / (fbb - fa);
        if (!(x > a && x < b))
            x = 0.5 * (a + b);
        double fx = gmid_at(t, l, x, vds, vsb, &v) - target;
        if (!isfinite(fx))
            break;
        if (fabs(fx) <= 1e-12 * target || b - a < 1e-12)
            break;
        if (fx > 0) {
            a = x;
            fa = fx;
            if (side == 1)
                fbb *= 0.5;
            side = 1;
        } else {
            b = x;
            fbb = fx;
            if (side == -1)
                fa *= 0.5;
            side = -1;
        }
    }
    if (lut_eval(t, l, x, vds, vsb, out) || !isfinite(out->gm_id)) {
        all_nan(out);
        return LUT_INV_OUTSIDE;
    }
    *vgs = x;
    return LUT_INV_OK;
}

int lut_suggest_w(const Lut *t, double l, double vds, double vsb, double target, double id, double m, double *w,
                  double *vgs)
{
    LutVals v;
    double g;
    *w = NAN;
    if (vgs)
        *vgs = NAN;
    int rc = lut_vgs_for_gmid(t, l, vds, vsb, target, &g, &v, NULL);
    if (rc != LUT_INV_OK)
        return rc;
    if (vgs)
        *vgs = g;
    if (v.id_w > 0 && m > 0 && id > 0)
        *w = id / (m * v.id_w);
    return LUT_INV_OK;
}

/* ---- writing ----------------------------------------------------------------------------------- */

static const double pow10_tab[23] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
                                     1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

/* 1e0 .. 1e44: the scales put_num needs for values from 1e-35 to 1e9, one multiplication each */
static const double pow10_pos[45] = {
    1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14,
    1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22, 1e23, 1e24, 1e25, 1e26, 1e27, 1e28, 1e29,
    1e30, 1e31, 1e32, 1e33, 1e34, 1e35, 1e36, 1e37, 1e38, 1e39, 1e40, 1e41, 1e42, 1e43, 1e44};

static double pow10i(int k)
{
    double r = 1;
    int neg = k < 0;
    if (neg)
        k = -k;
    while (k > 22) {
        r *= 1e22;
        k -= 22;
    }
    r *= pow10_tab[k];
    return neg ? 1 / r : r;
}

#define NUM_DIGITS 10 /* significant digits written: well past the float precision tables are read with */

/* v with NUM_DIGITS significant digits, as short as it goes ("0", "0.025", "1.8", "1.234567891e-06"):
 * a plain decimal that op_parse_number (and strtod) reads back. p needs 24 bytes. Returns the end.
 * (snprintf("%.10g") would do, at several times the cost: a table has a million numbers.) */
static char *put_num(char *p, double v)
{
    static const char two[201] = "00010203040506070809101112131415161718192021222324252627282930313233343536373839"
                                 "40414243444546474849505152535455565758596061626364656667686970717273747576777879"
                                 "8081828384858687888990919293949596979899";
    if (v == 0) {
        *p++ = '0';
        return p;
    }
    /* near the ends of the double range (subnormals, and wherever the scaling by 10^k below would
       overflow: 1.025e-300 needed 10^310, found by fuzz_lut): the slow way */
    if (!(fabs(v) > 1e-290 && fabs(v) < 1e290))
        return p + snprintf(p, 24, "%.10g", v);
    if (v < 0) {
        *p++ = '-';
        v = -v;
    }
    uint64_t bits;
    memcpy(&bits, &v, sizeof bits);
    int e2 = (int)((bits >> 52) & 0x7ff) - 1023;
    /* floor(e2 * log10(2)) in integers (78913 / 2^18 = log10(2) to 6 digits): log10(v), or one less */
    int e = e2 >= 0 ? (e2 * 78913) >> 18 : -((-e2 * 78913 + 262143) >> 18);
    int k = NUM_DIGITS - 1 - e;
    double m = k >= 0 && k <= 44 ? v * pow10_pos[k] : v * pow10i(k);
    if (m >= 1e10) {
        e++;
        k--;
        m = k >= 0 && k <= 44 ? v * pow10_pos[k] : v * pow10i(k);
    }
    uint64_t dg = (uint64_t)(m + 0.5);
    if (dg >= 10000000000u) {
        dg /= 10;
        e++;
    } else if (dg < 1000000000u) {
        dg *= 10;
        e--;
    }
    char dig[NUM_DIGITS];
    for (int i = NUM_DIGITS - 2; i >= 0; i -= 2) {
        unsigned r = (unsigned)(dg % 100);
        dg /= 100;
        dig[i] = two[2 * r];
        dig[i + 1] = two[2 * r + 1];
    }
    int nd = NUM_DIGITS;
    while (nd > 1 && dig[nd - 1] == '0')
        nd--;
    if (e >= -4 && e < NUM_DIGITS) {
        if (e < 0) {
            *p++ = '0';
            *p++ = '.';
            for (int i = -1; i > e; i--)
                *p++ = '0';
            memcpy(p, dig, (size_t)nd);
            p += nd;
        } else {
            for (int i = 0; i <= e; i++)
                *p++ = i < nd ? dig[i] : '0';
            if (nd > e + 1) {
                *p++ = '.';
                memcpy(p, dig + e + 1, (size_t)(nd - e - 1));
                p += nd - e - 1;
            }
        }
        return p;
    }
    *p++ = dig[0];
    if (nd > 1) {
        *p++ = '.';
        memcpy(p, dig + 1, (size_t)(nd - 1));
        p += nd - 1;
    }
    *p++ = 'e';
    if (e < 0) {
        *p++ = '-';
        e = -e;
    } else {
        *p++ = '+';
    }
    if (e >= 100)
        *p++ = (char)('0' + e / 100);
    *p++ = (char)('0' + e / 10 % 10);
    *p++ = (char)('0' + e % 10);
    return p;
}

static void put_axis_line(FILE *fp, const LutInfo *in, int a)
{
    fprintf(fp, "# grid %s: %zu values:", lut_axis_column[a], in->n[a]);
    char num[32];
    for (size_t i = 0; i < in->n[a]; i++) {
        *put_num(num, in->axis[a][i]) = '\0';
        fprintf(fp, " %s", num);
    }
    fputc('\n', fp);
}

/* Header strings are written as they are; a line break in one would end the comment. */
static void put_key(FILE *fp, const char *key, const char *val)
{
    if (!val)
        return;
    fprintf(fp, "# %s: ", key);
    for (const char *p = val; *p; p++)
        fputc(*p == '\n' || *p == '\r' ? ' ' : *p, fp);
    fputc('\n', fp);
}

int lut_write(FILE *fp, const LutInfo *in, const double *vals)
{
    char num[32];
    fprintf(fp, "%s %d\n", LUT_MAGIC, LUT_VERSION);
    put_key(fp, "model", in->model);
    put_key(fp, "type", in->type == MOS_PMOS ? "pmos" : "nmos");
    if (in->level > 0)
        fprintf(fp, "# level: %d\n", in->level);
    *put_num(num, in->temp_c) = '\0';
    put_key(fp, "temp_c", num);
    *put_num(num, in->w_ref) = '\0';
    put_key(fp, "w_ref_m", num);
    put_key(fp, "models_file", in->models_file);
    put_key(fp, "section", in->section);
    put_key(fp, "biaslint", in->biaslint_version);
    put_key(fp, "ngspice", in->ngspice_version);
    fprintf(fp, "# values: per reference width w_ref_m, n-type convention (PMOS as magnitudes), SI units; "
                "cgg_f intrinsic (no overlap)\n");
    for (int a = 0; a < LUTAX_COUNT; a++)
        put_axis_line(fp, in, a);
    for (int a = 0; a < LUTAX_COUNT; a++)
        fprintf(fp, "%s%s", a ? "," : "", lut_axis_column[a]);
    for (int q = 0; q < LUTQ_COUNT; q++)
        if (in->have >> q & 1u)
            fprintf(fp, ",%s", lut_qty_column[q]);
    fputc('\n', fp);

    /* axis values once, as text */
    size_t maxn = 0, nn = lut_nodes(in);
    for (int a = 0; a < LUTAX_COUNT; a++)
        maxn += in->n[a];
    char (*axt)[24] = malloc(maxn * sizeof *axt);
    unsigned char *axl = malloc(maxn);
    char *row = malloc(64 * 1024);
    if (!axt || !axl || !row) {
        free(axt);
        free(axl);
        free(row);
        return ERR_IO;
    }
    size_t off[LUTAX_COUNT], k = 0;
    for (int a = 0; a < LUTAX_COUNT; a++) {
        off[a] = k;
        for (size_t i = 0; i < in->n[a]; i++, k++)
            axl[k] = (unsigned char)(put_num(axt[k], in->axis[a][i]) - axt[k]);
    }
    size_t idx[LUTAX_COUNT] = {0};
    size_t used = 0;
    for (size_t node = 0; node < nn; node++) {
        if (used > 64 * 1024 - 512) {
            if (fwrite(row, 1, used, fp) != used)
                break;
            used = 0;
        }
        char *p = row + used;
        for (int a = 0; a < LUTAX_COUNT; a++) {
            if (a)
                *p++ = ',';
            size_t j = off[a] + idx[a];
            memcpy(p, axt[j], axl[j]);
            p += axl[j];
        }
        const double *v = vals + node * LUTQ_COUNT;
        for (int q = 0; q < LUTQ_COUNT; q++)
            if (in->have >> q & 1u) {
                *p++ = ',';
                p = put_num(p, v[q]);
            }
        *p++ = '\n';
        used = (size_t)(p - row);
        for (int a = LUTAX_COUNT - 1; a >= 0; a--) {
            if (++idx[a] < in->n[a])
                break;
            idx[a] = 0;
        }
    }
    if (used && fwrite(row, 1, used, fp) != used)
        used = SIZE_MAX;
    free(axt);
    free(axl);
    free(row);
    return ferror(fp) || used == SIZE_MAX ? ERR_IO : ERR_OK;
}

/* ---- reading ------------------------------------------------------------------------------------ */

enum { ROLE_NONE = -1 };

typedef struct {
    const char *path;
    SrcFile f;
    DiagList *d;
    size_t nerr;
    int oom;
    /* the line being read */
    uint32_t line;
    const char *lp;
    size_t ll;
    /* header */
    char *key[16];
    LutInfo info;
    uint32_t key_line[16];
    /* columns: role per column (axis a as a, quantity q as LUTAX_COUNT + q), and where each is */
    int *role;
    size_t ncols, capcols;
    size_t col_of[LUTAX_COUNT + LUTQ_COUNT]; /* 1-based, 0 when absent */
    int have_header;
    uint32_t head_line;
    /* rows */
    size_t field;
    double rowv[LUTAX_COUNT + LUTQ_COUNT];
    int row_bad;
    double *ax;         /* nrows * LUTAX_COUNT */
    double *vals;       /* nrows * LUTQ_COUNT */
    uint32_t *rline;    /* line of each row */
    size_t *roff;       /* first byte of each row */
    size_t nrows, capax, capvals, caplines, capoffs;
    size_t loff;        /* first byte of the current line */
} Load;

static void PRINTF_LIKE(4, 5) lerr(Load *c, uint32_t col, uint32_t span, const char *fmt, ...)
{
    c->nerr++;
    if (c->nerr > MAX_LOAD_ERRORS)
        return;
    Buf b = BUF_INIT;
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&b, fmt, ap);
    va_end(ap);
    if (rc != ERR_OK) {
        c->oom = 1;
        return;
    }
    SrcLoc at = {c->path, c->line, col};
    if (c->lp)
        diag_add_excerpt(c->d, DIAG_ERROR, at, c->lp, c->ll, span, "%s", b.data);
    else
        diag_add(c->d, DIAG_ERROR, at, "%s", b.data);
    buf_free(&b);
}

/* Column (1-based) of field k of the current line; fields are plain (our tables quote nothing). */
static uint32_t field_col(const Load *c, size_t k)
{
    if (!c->lp)
        return 1; /* the last row, flushed by csv_fini after the line loop (found by fuzz_lut) */
    size_t i = 0, f = 0;
    int q = 0;
    while (i < c->ll && f < k) {
        char ch = c->lp[i];
        if (ch == '"')
            q = !q;
        else if (ch == ',' && !q)
            f++;
        i++;
    }
    while (i < c->ll && (c->lp[i] == ' ' || c->lp[i] == '\t'))
        i++;
    return (uint32_t)(i + 1);
}

static void trim(const char **s, size_t *n)
{
    while (*n && (**s == ' ' || **s == '\t'))
        (*s)++, (*n)--;
    while (*n && ((*s)[*n - 1] == ' ' || (*s)[*n - 1] == '\t' || (*s)[*n - 1] == '\r'))
        (*n)--;
}

static int word_eq(const char *s, size_t n, const char *w)
{
    size_t k = strlen(w);
    if (n != k)
        return 0;
    for (size_t i = 0; i < n; i++) {
        char ch = s[i] >= 'A' && s[i] <= 'Z' ? (char)(s[i] + 32) : s[i];
        if (ch != w[i])
            return 0;
    }
    return 1;
}

/* Unit suffixes of our column names, to explain a column written with another unit. */
static const char *unit_hint(const char *s, size_t n)
{
    static const struct {
        const char *stem, *right;
    } stems[] = {{"l_", "l_m (metres)"},         {"vgs_", "vgs_v (volts)"},     {"vds_", "vds_v (volts)"},
                 {"vsb_", "vsb_v (volts)"},      {"id_", "id_a (amperes)"},     {"gm_", "gm_s (siemens)"},
                 {"gds_", "gds_s (siemens)"},    {"gmbs_", "gmbs_s (siemens)"}, {"cgg_", "cgg_f (farads)"},
                 {"cgs_", "cgs_f (farads)"},     {"cgd_", "cgd_f (farads)"},    {"vth_", "vth_v (volts)"},
                 {"vdsat_", "vdsat_v (volts)"}};
    for (size_t i = 0; i < sizeof stems / sizeof stems[0]; i++) {
        size_t k = strlen(stems[i].stem);
        if (n > k && word_eq(s, k, stems[i].stem))
            return stems[i].right;
    }
    return NULL;
}

static void header_field(Load *c, const char *s, size_t n)
{
    size_t k = c->ncols;
    trim(&s, &n);
    int role = ROLE_NONE;
    for (int a = 0; a < LUTAX_COUNT && role == ROLE_NONE; a++)
        if (word_eq(s, n, lut_axis_column[a]))
            role = a;
    for (int q = 0; q < LUTQ_COUNT && role == ROLE_NONE; q++)
        if (word_eq(s, n, lut_qty_column[q]))
            role = LUTAX_COUNT + q;
    if (BUF_PUSH(c->role, c->ncols, c->capcols, role) != ERR_OK) {
        c->oom = 1;
        return;
    }
    if (role == ROLE_NONE) {
        const char *hint = unit_hint(s, n);
        if (hint)
            lerr(c, field_col(c, k), (uint32_t)n, "column '%.*s': table values are in SI units, this column is %s",
                 (int)n, s, hint);
        else if (n)
            diag_add(c->d, DIAG_WARNING, (SrcLoc){c->path, c->line, field_col(c, k)},
                     "column '%.*s' is not a table column: ignored", (int)n, s);
        return;
    }
    if (c->col_of[role]) {
        lerr(c, field_col(c, k), (uint32_t)n, "column '%.*s' appears twice (first as column %zu)", (int)n, s,
             c->col_of[role]);
        return;
    }
    c->col_of[role] = k + 1;
}

static void on_field(void *data, size_t n, void *ctx)
{
    Load *c = ctx;
    const char *s = data ? data : "";
    if (!c->have_header) {
        header_field(c, s, data ? n : 0);
        return;
    }
    size_t k = c->field++;
    if (k >= c->ncols || c->role[k] == ROLE_NONE)
        return;
    trim(&s, &n);
    double v;
    int st = n ? op_parse_number(s, n, &v) : OPNUM_SYNTAX;
    int role = c->role[k];
    const char *name = role < LUTAX_COUNT ? lut_axis_column[role] : lut_qty_column[role - LUTAX_COUNT];
    if (st != OPNUM_OK) {
        c->row_bad = 1;
        if (!n)
            lerr(c, field_col(c, k), 1, "%s is empty: a table has a value in every column of every row", name);
        else if (st == OPNUM_NONFINITE)
            lerr(c, field_col(c, k), (uint32_t)n, "%s is '%.*s': NaN and infinite values are not allowed in a table",
                 name, (int)n, s);
        else
            lerr(c, field_col(c, k), (uint32_t)n, "%s is '%.*s', not a plain decimal number in SI units", name,
                 (int)n, s);
        return;
    }
    if (role >= LUTAX_COUNT && fabs(v) > LUT_VALUE_MAX) { /* it would not survive the float storage (fuzz_lut) */
        c->row_bad = 1;
        lerr(c, field_col(c, k), (uint32_t)n, "%s is '%.*s': a table value must be below %g in magnitude", name,
             (int)n, s, LUT_VALUE_MAX);
        return;
    }
    c->rowv[role] = v;
}

static void on_row(int term, void *ctx)
{
    (void)term;
    Load *c = ctx;
    if (!c->have_header) {
        c->have_header = 1;
        c->head_line = c->line;
        for (int a = 0; a < LUTAX_COUNT; a++)
            if (!c->col_of[a])
                lerr(c, 1, 0, "the table has no %s column (the grid needs l_m, vsb_v, vds_v and vgs_v)",
                     lut_axis_column[a]);
        for (int q = 0; q < LUTQ_COUNT; q++) {
            if (c->col_of[LUTAX_COUNT + q])
                c->info.have |= 1u << q;
            else if (LUT_REQUIRED >> q & 1u)
                lerr(c, 1, 0, "the table has no %s column (required: id_a, gm_s, gds_s, vth_v, vdsat_v)",
                     lut_qty_column[q]);
        }
        return;
    }
    if (c->field != c->ncols)
        lerr(c, field_col(c, c->field < c->ncols ? c->field : c->ncols), 1,
             "this row has %zu fields, the column line has %zu", c->field, c->ncols);
    else if (!c->row_bad) {
        if (buf_grow_array((void **)&c->ax, &c->capax, (c->nrows + 1) * LUTAX_COUNT, sizeof *c->ax) != ERR_OK ||
            buf_grow_array((void **)&c->vals, &c->capvals, (c->nrows + 1) * LUTQ_COUNT, sizeof *c->vals) != ERR_OK ||
            buf_grow_array((void **)&c->rline, &c->caplines, c->nrows + 1, sizeof *c->rline) != ERR_OK ||
            buf_grow_array((void **)&c->roff, &c->capoffs, c->nrows + 1, sizeof *c->roff) != ERR_OK) {
            c->oom = 1;
            return;
        }
        memcpy(c->ax + c->nrows * LUTAX_COUNT, c->rowv, LUTAX_COUNT * sizeof(double));
        memcpy(c->vals + c->nrows * LUTQ_COUNT, c->rowv + LUTAX_COUNT, LUTQ_COUNT * sizeof(double));
        c->roff[c->nrows] = c->loff;
        c->rline[c->nrows++] = c->line;
    }
    c->field = 0;
    c->row_bad = 0;
    for (int i = 0; i < LUTAX_COUNT + LUTQ_COUNT; i++)
        c->rowv[i] = NAN;
}

/* Header keys we read. ORDER KEY */
enum { KEY_MODEL, KEY_TYPE, KEY_LEVEL, KEY_TEMP, KEY_WREF, KEY_MODELS, KEY_SECTION, KEY_BIASLINT, KEY_NGSPICE, NKEYS };
static const char *const key_name[NKEYS] = {"model",       "type",    "level",    "temp_c", "w_ref_m",
                                            "models_file", "section", "biaslint", "ngspice"};

static void header_line(Load *c, const char *s, size_t n)
{
    s++, n--; /* the '#' */
    const char *colon = memchr(s, ':', n);
    if (!colon)
        return;
    const char *k = s, *v = colon + 1;
    size_t kn = (size_t)(colon - s), vn = n - kn - 1;
    trim(&k, &kn);
    trim(&v, &vn);
    int key = -1;
    for (int i = 0; i < NKEYS && key < 0; i++)
        if (word_eq(k, kn, key_name[i]))
            key = i;
    if (key < 0)
        return;
    uint32_t col = (uint32_t)(v - c->lp + 1);
    for (size_t i = 0; i < vn; i++)
        if ((unsigned char)v[i] < 0x20 && v[i] != '\t') { /* a NUL or CR would not survive a rewrite (fuzz_lut) */
            lerr(c, (uint32_t)(v + i - c->lp + 1), 1, "a control byte in the value of header key '%s'", key_name[key]);
            return;
        }
    if (c->key[key]) {
        lerr(c, (uint32_t)(k - c->lp + 1), (uint32_t)kn, "header key '%s' given twice (first on line %u)",
             key_name[key], c->key_line[key]);
        return;
    }
    if (!(c->key[key] = malloc(vn + 1))) {
        c->oom = 1;
        return;
    }
    memcpy(c->key[key], v, vn);
    c->key[key][vn] = '\0';
    c->key_line[key] = c->line;
    double x;
    switch (key) {
    case KEY_TYPE:
        if (word_eq(v, vn, "nmos"))
            c->info.type = MOS_NMOS;
        else if (word_eq(v, vn, "pmos"))
            c->info.type = MOS_PMOS;
        else
            lerr(c, col, (uint32_t)vn, "device type '%.*s': nmos or pmos", (int)vn, v);
        break;
    case KEY_LEVEL:
        if (op_parse_number(v, vn, &x) != OPNUM_OK || x < 0 || x > 1000 || x != floor(x))
            lerr(c, col, (uint32_t)vn, "model level '%.*s' is not a whole number", (int)vn, v);
        else
            c->info.level = (int)x;
        break;
    case KEY_TEMP:
        if (op_parse_number(v, vn, &x) != OPNUM_OK || x < -273.15 || x > 1000)
            lerr(c, col, (uint32_t)vn, "temperature '%.*s' is not a number of degrees C", (int)vn, v);
        else
            c->info.temp_c = x;
        break;
    case KEY_WREF:
        if (op_parse_number(v, vn, &x) != OPNUM_OK || !(x > 0 && x <= W_MAX))
            lerr(c, col, (uint32_t)vn,
                 "reference width '%.*s': a plain number of metres in (0, 1] (10u is written 1e-05)", (int)vn, v);
        else
            c->info.w_ref = x;
        break;
    default:
        break;
    }
}

/* Make row i the current line, for messages. */
static void at_row(Load *c, size_t i)
{
    size_t ls;
    c->line = c->rline[i];
    c->ll = src_line_at(&c->f, c->roff[i], &ls);
    c->lp = c->f.text + ls;
}

/* The grid from the rows: the first block of rows fixes each axis, every other row must repeat it. */
static int infer_grid(Load *c, double *axes[LUTAX_COUNT])
{
    size_t N = c->nrows;
    const double *ax = c->ax;
#define AX(i, a) ax[(i) * LUTAX_COUNT + (a)]
    size_t block = 1; /* rows per step of the axis being counted */
    size_t cnt[LUTAX_COUNT];
    for (int a = LUTAX_COUNT - 1; a >= 0; a--) {
        /* count steps of axis a while the slower axes keep row 0's values */
        size_t k = 0;
        for (size_t i = 0; i < N; i += block, k++) {
            int same = 1;
            for (int b = 0; b < a && same; b++)
                same = AX(i, b) == AX(0, b);
            if (!same)
                break;
        }
        if (a == LUTAX_L)
            k = (N + block - 1) / block;
        cnt[a] = k;
        if (!(axes[a] = malloc(k * sizeof(double)))) {
            c->oom = 1;
            return ERR_NOMEM;
        }
        for (size_t j = 0; j < k; j++) {
            size_t i = j * block;
            axes[a][j] = AX(i, a);
            if (j && !(axes[a][j] > axes[a][j - 1])) {
                at_row(c, i);
                lerr(c, field_col(c, c->col_of[a] - 1), 1,
                     "the %s axis does not increase here (%g after %g): rows go by l_m, then vsb_v, vds_v and "
                     "vgs_v, the last changing fastest, each axis increasing",
                     lut_axis_column[a], axes[a][j], axes[a][j - 1]);
                return ERR_INPUT;
            }
        }
        c->info.n[a] = k;
        block *= k;
    }
    /* every row where the grid puts it */
    size_t idx[LUTAX_COUNT] = {0};
    for (size_t i = 0; i < N; i++) {
        for (int a = 0; a < LUTAX_COUNT; a++) {
            if (idx[a] >= cnt[a] || AX(i, a) != axes[a][idx[a]]) {
                at_row(c, i);
                uint32_t col = field_col(c, c->col_of[a] - 1);
                if (idx[a] >= cnt[a])
                    lerr(c, col, 1, "ragged grid: %s = %g here, but the first block of rows fixes %zu values of %s",
                         lut_axis_column[a], AX(i, a), cnt[a], lut_axis_column[a]);
                else
                    lerr(c, col, 1,
                         "ragged grid: this row should hold %s = %g (value %zu of %zu, as in the first block), "
                         "not %g: every combination of l_m, vsb_v, vds_v, vgs_v once, vgs_v fastest",
                         lut_axis_column[a], axes[a][idx[a]], idx[a] + 1, cnt[a], AX(i, a));
                return ERR_INPUT;
            }
        }
        for (int a = LUTAX_COUNT - 1; a >= 0; a--) {
            if (++idx[a] < cnt[a])
                break;
            idx[a] = 0;
        }
    }
    if (idx[LUTAX_VGS] || idx[LUTAX_VDS] || idx[LUTAX_VSB]) {
        at_row(c, N - 1);
        lerr(c, 1, 0, "ragged grid: the table ends inside a block (%zu rows; the grid of %zu x %zu x %zu x %zu needs %zu)",
             N, cnt[0], cnt[1], cnt[2], cnt[3], cnt[0] * cnt[1] * cnt[2] * cnt[3]);
        return ERR_INPUT;
    }
#undef AX
    return ERR_OK;
}

static int check_units(Load *c)
{
    /* each axis once, at the first row that shows the problem */
    for (size_t i = 0; i < c->nrows; i++) {
        const double *a = c->ax + i * LUTAX_COUNT;
        if (!(a[LUTAX_L] > 0 && a[LUTAX_L] <= L_MAX)) {
            at_row(c, i);
            lerr(c, field_col(c, c->col_of[LUTAX_L] - 1), 1,
                 "l_m is %g: lengths are in metres (1u is written 1e-06)", a[LUTAX_L]);
            return ERR_INPUT;
        }
        for (int k = LUTAX_VSB; k <= LUTAX_VGS; k++)
            if (fabs(a[k]) > V_MAX) {
                at_row(c, i);
                lerr(c, field_col(c, c->col_of[k] - 1), 1, "%s is %g: voltages are in volts", lut_axis_column[k], a[k]);
                return ERR_INPUT;
            }
        if (a[LUTAX_VDS] < 0) {
            at_row(c, i);
            lerr(c, field_col(c, c->col_of[LUTAX_VDS] - 1), 1, "vds_v is %g: tables hold VDS >= 0 in the n-type convention (PMOS as magnitudes)",
                 a[LUTAX_VDS]);
            return ERR_INPUT;
        }
    }
    return ERR_OK;
}

static void load_free(Load *c)
{
    for (int i = 0; i < NKEYS; i++)
        free(c->key[i]);
    free(c->role);
    free(c->ax);
    free(c->vals);
    free(c->rline);
    free(c->roff);
    src_free(&c->f);
}

Lut *lut_load(const char *path, DiagList *d)
{
    Load c;
    memset(&c, 0, sizeof c);
    c.path = path;
    c.d = d;
    c.info.temp_c = NAN;
    c.info.w_ref = NAN;
    for (int i = 0; i < LUTAX_COUNT + LUTQ_COUNT; i++)
        c.rowv[i] = NAN;
    Lut *t = NULL;
    double *axes[LUTAX_COUNT] = {NULL};
    if (src_load(&c.f, path, (SrcLoc){0}, d) != ERR_OK)
        return NULL;
    c.path = c.f.path;
    struct csv_parser p;
    if (csv_init(&p, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL | CSV_EMPTY_IS_NULL) != 0) {
        diag_nomem(d);
        src_free(&c.f);
        return NULL;
    }
    const char *text = c.f.text;
    size_t len = c.f.len, pos = 0;
    if (len >= 3 && memcmp(text, "\xEF\xBB\xBF", 3) == 0)
        pos = 3;
    int stopped = 0;
    while (pos < len && !c.oom && !stopped) {
        const char *lp = text + pos;
        const char *nl = memchr(lp, '\n', len - pos);
        size_t n = nl ? (size_t)(nl - lp) + 1 : len - pos;
        c.line++;
        c.lp = lp;
        c.loff = (size_t)(lp - text);
        c.ll = n;
        while (c.ll && (lp[c.ll - 1] == '\n' || lp[c.ll - 1] == '\r'))
            c.ll--;
        pos += n;
        if (c.line == 1) {
            size_t ml = strlen(LUT_MAGIC);
            const char *v = lp + ml;
            size_t vn = c.ll >= ml ? c.ll - ml : 0;
            trim(&v, &vn);
            double ver;
            if (c.ll < ml || memcmp(lp, LUT_MAGIC, ml) != 0 || op_parse_number(v, vn, &ver) != OPNUM_OK) {
                lerr(&c, 1, (uint32_t)(c.ll ? c.ll : 1),
                     "not a biaslint table: its first line must be '%s %d' (tables are written by biaslint "
                     "characterize)",
                     LUT_MAGIC, LUT_VERSION);
                stopped = 1;
                break;
            }
            if (ver != LUT_VERSION) {
                lerr(&c, (uint32_t)(v - lp + 1), (uint32_t)vn, "table format version %.*s: this biaslint reads version %d",
                     (int)vn, v, LUT_VERSION);
                stopped = 1;
            }
            continue;
        }
        size_t k = 0;
        while (k < c.ll && (lp[k] == ' ' || lp[k] == '\t'))
            k++;
        if (k == c.ll)
            continue; /* blank line */
        if (lp[k] == '#') {
            if (!c.have_header)
                header_line(&c, lp + k, c.ll - k);
            continue;
        }
        size_t done = csv_parse(&p, lp, n, on_field, on_row, &c);
        if (done != n) {
            int e = csv_error(&p);
            if (e == CSV_ENOMEM || e == CSV_ETOOBIG) {
                c.oom = 1;
                break;
            }
            lerr(&c, (uint32_t)(done + 1), 1, "CSV syntax: %s", csv_strerror(e));
            stopped = 1;
        }
        if (c.have_header && c.nerr && c.head_line == c.line)
            stopped = 1; /* a bad column line: every row would repeat its errors */
        if (c.nerr >= MAX_LOAD_ERRORS)
            stopped = 1;
    }
    c.lp = NULL;
    if (!stopped && !c.oom && csv_fini(&p, on_field, on_row, &c) != 0)
        lerr(&c, 1, 0, "CSV syntax: a quoted field is never closed");
    csv_free(&p);
    if (c.oom) {
        diag_nomem(d);
        goto done;
    }
    if (c.nerr)
        goto done;
    /* the header keys */
    c.line = c.head_line ? c.head_line : 1;
    static const int need[] = {KEY_MODEL, KEY_TYPE, KEY_TEMP, KEY_WREF};
    for (size_t i = 0; i < sizeof need / sizeof need[0]; i++)
        if (!c.key[need[i]])
            lerr(&c, 0, 0, "the header has no '# %s: ...' line (a table needs model, type, temp_c and w_ref_m)",
                 key_name[need[i]]);
    if (!c.have_header)
        lerr(&c, 0, 0, "the table has no column line");
    else if (!c.nrows)
        lerr(&c, 0, 0, "the table has a column line but no rows");
    if (c.nerr || check_units(&c) != ERR_OK || infer_grid(&c, axes) != ERR_OK)
        goto done;
    c.info.model = c.key[KEY_MODEL];
    c.info.models_file = c.key[KEY_MODELS];
    c.info.section = c.key[KEY_SECTION];
    c.info.biaslint_version = c.key[KEY_BIASLINT];
    c.info.ngspice_version = c.key[KEY_NGSPICE];
    for (int a = 0; a < LUTAX_COUNT; a++)
        c.info.axis[a] = axes[a];
    t = lut_new(&c.info, c.vals, c.path, d);
done:
    for (int a = 0; a < LUTAX_COUNT; a++)
        free(axes[a]);
    if (c.nerr > MAX_LOAD_ERRORS)
        diag_add(d, DIAG_ERROR, (SrcLoc){c.path, 0, 0}, "%zu more errors in this table not shown",
                 c.nerr - MAX_LOAD_ERRORS);
    load_free(&c);
    return t;
}
