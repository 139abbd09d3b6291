/* test_lut: the table module. The scheme's exactness on quadratics (in log scale for currents), the
 * grid limits, the file format round trip and every malformed-table error with its line and column;
 * then, with tables built by ngspice (characterize), the interpolation against ngspice's own
 * operating point at off-grid points, weak and strong inversion limits, monotonicity, and the inverse
 * lookup. */
#include "testutil.h"

#include "characterize.h"
#include "join.h"
#include "lut.h"
#include "lutref.h"
#include "netlist.h"
#include "rules.h"

#define MODELS "fixtures/lut/models.inc"

/* exact SI values (2019 redefinition of the SI): k in J/K, q in C */
#define K_BOLTZMANN 1.380649e-23
#define Q_ELECTRON 1.602176634e-19

static unsigned long long rng_state = 0x9e3779b97f4a7c15ull;
static double urand(void) /* uniform in [0, 1), xorshift64 */
{
    rng_state ^= rng_state << 13;
    rng_state ^= rng_state >> 7;
    rng_state ^= rng_state << 17;
    return (double)(rng_state >> 11) / 9007199254740992.0;
}

/* ---- synthetic tables: the scheme itself -------------------------------------------------------- */

static const double ax_l[] = {0.5e-6, 1e-6, 2e-6, 4e-6, 9e-6};
static const double ax_sb[] = {0, 0.2, 0.5, 0.9};
static double ax_ds[11], ax_gs[21];

/* What the scheme reproduces: linear in log L, quadratic in VSB, VDS and VGS (tensor products). */
static double quad(double l, double sb, double ds, double gs)
{
    double x = log(l * 1e6);
    return (1 + 0.3 * x) * (1 - 0.4 * sb + 0.1 * sb * sb) * (0.5 + 0.2 * ds - 0.08 * ds * ds) *
           (0.2 + gs + 0.7 * gs * gs);
}
static double lnid(double l, double sb, double ds, double gs)
{
    return -20 + 0.8 * quad(l, sb, ds, gs) + 12 * gs - 2 * sb;
}

static void synth(LutInfo *in, double **vals, int zero_at_vds0)
{
    for (int i = 0; i < 11; i++)
        ax_ds[i] = 0.1 * i;
    for (int i = 0; i < 21; i++)
        ax_gs[i] = 0.05 * i;
    memset(in, 0, sizeof *in);
    in->model = "synth";
    in->type = MOS_NMOS;
    in->temp_c = 27;
    in->w_ref = 1e-6;
    in->axis[LUTAX_L] = ax_l, in->n[LUTAX_L] = 5;
    in->axis[LUTAX_VSB] = ax_sb, in->n[LUTAX_VSB] = 4;
    in->axis[LUTAX_VDS] = ax_ds, in->n[LUTAX_VDS] = 11;
    in->axis[LUTAX_VGS] = ax_gs, in->n[LUTAX_VGS] = 21;
    in->have = LUT_REQUIRED | (1u << LUTQ_CGG);
    size_t nn = lut_nodes(in);
    *vals = malloc(nn * LUTQ_COUNT * sizeof **vals);
    assert_non_null(*vals);
    size_t k = 0;
    for (int a = 0; a < 5; a++)
        for (int b = 0; b < 4; b++)
            for (int c = 0; c < 11; c++)
                for (int g = 0; g < 21; g++, k++) {
                    double *v = *vals + k * LUTQ_COUNT;
                    for (int q = 0; q < LUTQ_COUNT; q++)
                        v[q] = NAN;
                    double l = ax_l[a], sb = ax_sb[b], ds = ax_ds[c], gs = ax_gs[g];
                    v[LUTQ_ID] = zero_at_vds0 && c == 0 ? 0 : exp(lnid(l, sb, ds, gs));
                    v[LUTQ_GM] = exp(lnid(l, sb, ds, gs) - 1);
                    v[LUTQ_GDS] = exp(lnid(l, sb, ds, gs) - 3);
                    v[LUTQ_VTH] = quad(l, sb, ds, gs);
                    v[LUTQ_VDSAT] = 0.1 + 0.5 * gs * gs - 0.1 * sb;
                    v[LUTQ_CGG] = 1e-15 * quad(l, sb, ds, gs);
                }
}

/* Cubic Hermite with three-point (parabola) slopes reproduces a quadratic exactly, linear
 * interpolation a linear function; so the tensor scheme (cubic along VGS, VDS and VSB, linear along
 * log L) reproduces such products, and exponentials of them in the log-interpolated quantities (a
 * property of the scheme; common practice, no source). */
static void test_quadratics_exact(void **state)
{
    (void)state;
    LutInfo in;
    double *vals;
    synth(&in, &vals, 0);
    DiagList d;
    diag_init(&d);
    Lut *t = lut_new(&in, vals, "synth", &d);
    assert_non_null(t);
    for (int i = 0; i < 500; i++) {
        double l = exp(log(0.5e-6) + urand() * (log(9e-6) - log(0.5e-6)));
        double sb = 0.9 * urand(), ds = urand(), gs = urand();
        LutVals v;
        assert_int_equal(lut_eval(t, l, gs, ds, sb, &v), 0);
        /* exact up to the table's float storage (7 significant digits) */
        assert_close(v.q[LUTQ_VTH], quad(l, sb, ds, gs), 2e-6);
        assert_close(v.q[LUTQ_CGG], 1e-15 * quad(l, sb, ds, gs), 2e-6);
        assert_close(v.q[LUTQ_VDSAT], 0.1 + 0.5 * gs * gs - 0.1 * sb, 2e-6);
        assert_close(log(v.q[LUTQ_ID]), lnid(l, sb, ds, gs), 1e-6);
        assert_close(v.gm_id, exp(-1.0), 5e-5);
        assert_close(v.gain, exp(2.0), 5e-5);
        assert_close(v.id_w, v.q[LUTQ_ID] / 1e-6, 1e-14);
        assert_close(v.ft, v.q[LUTQ_GM] / (6.283185307179586 * v.q[LUTQ_CGG]), 1e-12);
        double g, id;
        assert_int_equal(lut_eval_gmid(t, l, gs, ds, sb, &g, &id), 0);
        assert_close(g, v.gm_id, 1e-6); /* the fast path: the same sums, added in another order */
        assert_close(id, v.q[LUTQ_ID], 5e-6);
        assert_true(isnan(v.q[LUTQ_GMBS]) && isnan(v.q[LUTQ_CGS])); /* absent columns stay absent */
    }
    /* the nodes themselves come back as they are */
    size_t k = 0;
    for (int a = 0; a < 5; a++)
        for (int b = 0; b < 4; b++)
            for (int c = 0; c < 11; c++)
                for (int g = 0; g < 21; g++, k++) {
                    LutVals v;
                    assert_int_equal(lut_eval(t, ax_l[a], ax_gs[g], ax_ds[c], ax_sb[b], &v), 0);
                    assert_close(v.q[LUTQ_ID], vals[k * LUTQ_COUNT + LUTQ_ID], 1e-6);
                    assert_close(v.q[LUTQ_VTH], vals[k * LUTQ_COUNT + LUTQ_VTH], 1e-6);
                }
    lut_free(t);
    free(vals);
    diag_free(&d);
}

/* A node with ID = 0 (VDS = 0) puts its neighbourhood on linear interpolation: finite, between the
 * node values, and exact on the nodes. */
static void test_zero_current_fallback(void **state)
{
    (void)state;
    LutInfo in;
    double *vals;
    synth(&in, &vals, 1);
    DiagList d;
    diag_init(&d);
    Lut *t = lut_new(&in, vals, "synth", &d);
    assert_non_null(t);
    LutVals v;
    assert_int_equal(lut_eval(t, 1e-6, 0.5, 0.0, 0.2, &v), 0);
    assert_true(v.q[LUTQ_ID] == 0.0);
    assert_true(isnan(v.gm_id)); /* gm/ID of no current is undefined, not 0 or infinite */
    assert_int_equal(lut_eval(t, 1e-6, 0.5, 0.05, 0.2, &v), 0);
    double hi = exp(lnid(1e-6, 0.2, 0.1, 0.5));
    assert_true(isfinite(v.q[LUTQ_ID]) && v.q[LUTQ_ID] > 0 && v.q[LUTQ_ID] < hi);
    /* far from VDS = 0 the logarithmic scheme is back */
    assert_int_equal(lut_eval(t, 1e-6, 0.5, 0.55, 0.2, &v), 0);
    assert_close(log(v.q[LUTQ_ID]), lnid(1e-6, 0.2, 0.55, 0.5), 2e-7);
    lut_free(t);
    free(vals);
    diag_free(&d);
}

/* Outside the grid: no values, and the axis named. Inside by less than the tolerance: values. */
static void test_outside_grid(void **state)
{
    (void)state;
    LutInfo in;
    double *vals;
    synth(&in, &vals, 0);
    DiagList d;
    diag_init(&d);
    Lut *t = lut_new(&in, vals, "synth", &d);
    assert_non_null(t);
    static const struct {
        double l, gs, ds, sb;
        unsigned miss;
    } rows[] = {
        {0.4e-6, 0.5, 0.5, 0.1, 1u << LUTAX_L},  {10e-6, 0.5, 0.5, 0.1, 1u << LUTAX_L},
        {1e-6, -0.01, 0.5, 0.1, 1u << LUTAX_VGS}, {1e-6, 1.01, 0.5, 0.1, 1u << LUTAX_VGS},
        {1e-6, 0.5, 1.01, 0.1, 1u << LUTAX_VDS},  {1e-6, 0.5, -0.01, 0.1, 1u << LUTAX_VDS},
        {1e-6, 0.5, 0.5, 0.95, 1u << LUTAX_VSB},  {1e-6, 0.5, 0.5, -0.1, 1u << LUTAX_VSB},
        {20e-6, 2, 0.5, 0.1, (1u << LUTAX_L) | (1u << LUTAX_VGS)},
        {NAN, 0.5, 0.5, 0.1, 1u << LUTAX_L},      {1e-6, NAN, 0.5, 0.1, 1u << LUTAX_VGS},
        {9e-6 * (1 + 1e-9), 1 + 1e-9, 1e-10 * -1, 0.9, 0}, /* within the tolerance of the ends */
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        LutVals v;
        unsigned m = lut_eval(t, rows[i].l, rows[i].gs, rows[i].ds, rows[i].sb, &v);
        assert_int_equal(m, rows[i].miss);
        if (m)
            for (int q = 0; q < LUTQ_COUNT; q++)
                assert_true(isnan(v.q[q]));
        else
            assert_true(isfinite(v.q[LUTQ_ID]));
    }
    lut_free(t);
    free(vals);
    diag_free(&d);
}

/* An axis of one value accepts that value (within 0.1 mV) and nothing else. */
static void test_single_point_axis(void **state)
{
    (void)state;
    static const double l[] = {1e-6}, sb[] = {0}, ds[] = {0.5, 1.0}, gs[] = {0.4, 0.6, 0.8};
    double vals[6 * LUTQ_COUNT];
    for (int i = 0; i < 6; i++) {
        double *v = vals + i * LUTQ_COUNT;
        for (int q = 0; q < LUTQ_COUNT; q++)
            v[q] = 1e-6 * (1 + i);
    }
    LutInfo in = {"one", MOS_PMOS, 1, 27, 2e-6, NULL, NULL, NULL, NULL, {l, sb, ds, gs}, {1, 1, 2, 3}, LUT_REQUIRED};
    DiagList d;
    diag_init(&d);
    Lut *t = lut_new(&in, vals, "one", &d);
    assert_non_null(t);
    LutVals v;
    assert_int_equal(lut_eval(t, 1e-6, 0.5, 0.75, 0, &v), 0);
    assert_int_equal(lut_eval(t, 1e-6, 0.5, 0.75, 5e-5, &v), 0);
    assert_int_equal(lut_eval(t, 1e-6, 0.5, 0.75, 1e-3, &v), 1u << LUTAX_VSB);
    assert_int_equal(lut_eval(t, 1.001e-6, 0.5, 0.75, 0, &v), 1u << LUTAX_L);
    assert_string_equal(lut_info(t)->model, "one");
    assert_int_equal(lut_info(t)->type, MOS_PMOS);
    lut_free(t);
    diag_free(&d);
}

/* lut_new refuses what a file could not hold either. */
static void test_new_rejects(void **state)
{
    (void)state;
    static const double l[] = {1e-6, 2e-6}, lbad[] = {2e-6, 1e-6}, lum[] = {1, 2}, sb[] = {0}, ds[] = {0.5, 1.0},
                        gs[] = {0.4, 0.6};
    double vals[8 * LUTQ_COUNT];
    for (int i = 0; i < 8 * LUTQ_COUNT; i++)
        vals[i] = 1e-6;
    static const struct {
        const double *l;
        double wref;
        unsigned have;
        int nan_at;
        const char *msg;
    } rows[] = {
        {lbad, 1e-6, LUT_REQUIRED, -1, "does not increase"},
        {lum, 1e-6, LUT_REQUIRED, -1, "lengths are in metres"},
        {l, 10, LUT_REQUIRED, -1, "reference width"},
        {l, 1e-6, LUT_REQUIRED & ~(1u << LUTQ_GM), -1, "lacks a required quantity"},
        {l, 1e-6, LUT_REQUIRED, 5 * LUTQ_COUNT + LUTQ_GDS, "not a finite number"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        double v2[8 * LUTQ_COUNT];
        memcpy(v2, vals, sizeof v2);
        if (rows[i].nan_at >= 0)
            v2[rows[i].nan_at] = NAN;
        LutInfo in = {"x", MOS_NMOS, 0, 27, rows[i].wref, NULL, NULL, NULL, NULL, {rows[i].l, sb, ds, gs},
                      {2, 1, 2, 2}, rows[i].have};
        DiagList d;
        diag_init(&d);
        Lut *t = lut_new(&in, v2, "mem", &d);
        assert_null(t);
        assert_int_equal(d.nerrors, 1);
        if (!strstr(d.items[0].msg, rows[i].msg))
            fail_msg("row %zu: '%s' lacks '%s'", i, d.items[0].msg, rows[i].msg);
        diag_free(&d);
    }
}

/* ---- the file format ------------------------------------------------------------------------- */

static void test_write_load_roundtrip(void **state)
{
    (void)state;
    LutInfo in;
    double *vals;
    synth(&in, &vals, 1);
    in.level = 14;
    in.models_file = "/some/where/models.lib";
    in.section = "typ";
    in.biaslint_version = "0.1.0";
    in.ngspice_version = "39";
    char *path = TU_TMPFILE("rt.lut", "");
    assert_non_null(path);
    FILE *fp = fopen(path, "w");
    assert_non_null(fp);
    assert_int_equal(lut_write(fp, &in, vals), ERR_OK);
    fclose(fp);
    DiagList d;
    diag_init(&d);
    Lut *t = lut_load(path, &d);
    if (!t)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_non_null(t);
    const LutInfo *o = lut_info(t);
    assert_string_equal(o->model, "synth");
    assert_int_equal(o->type, MOS_NMOS);
    assert_int_equal(o->level, 14);
    assert_string_equal(o->section, "typ");
    assert_string_equal(o->models_file, "/some/where/models.lib");
    assert_string_equal(o->ngspice_version, "39");
    assert_close(o->w_ref, 1e-6, 0);
    assert_int_equal(o->have, in.have);
    for (int a = 0; a < LUTAX_COUNT; a++) {
        assert_int_equal(o->n[a], in.n[a]);
        for (size_t i = 0; i < in.n[a]; i++)
            assert_close(o->axis[a][i], in.axis[a][i], 1e-12);
    }
    Lut *m = lut_new(&in, vals, "mem", &d);
    assert_non_null(m);
    for (int i = 0; i < 200; i++) {
        double l = 0.5e-6 + urand() * 8.5e-6, sb = 0.9 * urand(), ds = urand(), gs = urand();
        LutVals a, b;
        assert_int_equal(lut_eval(t, l, gs, ds, sb, &a), 0);
        assert_int_equal(lut_eval(m, l, gs, ds, sb, &b), 0);
        for (int q = 0; q < LUTQ_COUNT; q++)
            if (isfinite(b.q[q]))
                assert_close(a.q[q], b.q[q], 2e-6); /* 10 digits in the file, floats in memory */
    }
    assert_int_equal(d.nerrors, 0);
    lut_free(t);
    lut_free(m);
    free(vals);
    free(path);
    diag_free(&d);
}

/* The writer's numbers read back (strtod) within half a unit of their tenth digit. */
static void test_write_numbers(void **state)
{
    (void)state;
    static const double l[] = {1.8e-07, 2.5e-07}, sb[] = {0}, ds[] = {0.05, 1.75}, gs[] = {0.025, 0.075, 1.8};
    double vals[12 * LUTQ_COUNT];
    for (int i = 0; i < 12 * LUTQ_COUNT; i++) {
        double mag = pow(10, -25 + 28 * urand());
        vals[i] = (i % 7 == 3 ? -1 : 1) * mag * (1 + urand());
    }
    vals[5] = 0;
    vals[6] = 123456789012.0;
    vals[7] = 1e-310; /* subnormal */
    vals[8] = 1.025e-300; /* normal, but its digits need 10^310 in the fast path (fuzz_lut) */
    vals[9] = -9.99e299;
    LutInfo in = {"w", MOS_NMOS, 0, 27, 1e-6, NULL, NULL, NULL, NULL, {l, sb, ds, gs}, {2, 1, 2, 3},
                  (1u << LUTQ_COUNT) - 1};
    char *path = TU_TMPFILE("num.lut", "");
    FILE *fp = fopen(path, "w");
    assert_int_equal(lut_write(fp, &in, vals), ERR_OK);
    fclose(fp);
    fp = fopen(path, "r");
    char line[4096];
    size_t row = 0;
    while (fgets(line, sizeof line, fp)) {
        if (line[0] == '#' || line[0] == 'l')
            continue;
        char *p = line;
        for (int f = 0; f < LUTAX_COUNT + LUTQ_COUNT; f++) {
            char *end;
            double x = strtod(p, &end);
            assert_true(end > p);
            if (f >= LUTAX_COUNT) {
                double want = vals[row * LUTQ_COUNT + (f - LUTAX_COUNT)];
                if (!(fabs(x - want) <= 5e-10 * fabs(want)))
                    fail_msg("row %zu field %d: wrote %.17g for %.17g", row, f, x, want);
            }
            p = *end == ',' ? end + 1 : end;
        }
        row++;
    }
    fclose(fp);
    assert_int_equal(row, 12);
    free(path);
}

static void test_load_good_fixture(void **state)
{
    (void)state;
    DiagList d;
    diag_init(&d);
    Lut *t = lut_load("fixtures/lut/good.lut", &d);
    assert_non_null(t);
    const LutInfo *in = lut_info(t);
    assert_int_equal(in->n[LUTAX_L], 2);
    assert_int_equal(in->n[LUTAX_VSB], 1);
    assert_int_equal(in->n[LUTAX_VDS], 2);
    assert_int_equal(in->n[LUTAX_VGS], 3);
    assert_int_equal(in->have, LUT_REQUIRED);
    LutVals v;
    assert_int_equal(lut_eval(t, 1e-6, 0.8, 0.5, 0, &v), 0);
    assert_close(v.q[LUTQ_ID], 9.225e-06, 1e-6); /* the file's row for (1u, 0, 0.5, 0.8) */
    assert_int_equal(d.n, 0);
    lut_free(t);
    diag_free(&d);
}

/* Every malformed table is refused with the place of the problem. */
static void test_load_errors(void **state)
{
    (void)state;
    static const struct {
        const char *file;
        uint32_t line, col;
        const char *msg;
    } rows[] = {
        {"ragged.lut", 13, 11, "ragged grid"},
        {"nocol.lut", 8, 1, "no gm_s column"},
        {"nan.lut", 16, 28, "NaN"},
        {"nonmono.lut", 11, 13, "vgs_v axis does not increase"},
        {"nonmono_l.lut", 15, 1, "l_m axis does not increase"},
        {"badmagic.lut", 1, 1, "not a biaslint table"},
        {"version.lut", 1, 18, "format version 2"},
        {"nokey.lut", 7, 0, "w_ref_m"},
        {"unit.lut", 8, 23, "id_a (amperes)"},
        {"empty.lut", 12, 32, "gds_s is empty"},
        {"suffix.lut", 11, 15, "not a plain decimal number"},
        {"short.lut", 14, 44, "8 fields"},
        {"um.lut", 9, 1, "lengths are in metres"},
        {"dupcol.lut", 8, 53, "appears twice"},
        {"missing-file.lut", 0, 0, ""},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        char path[128];
        snprintf(path, sizeof path, "fixtures/lut/%s", rows[i].file);
        DiagList d;
        diag_init(&d);
        Lut *t = lut_load(path, &d);
        if (t)
            fail_msg("%s: accepted", rows[i].file);
        assert_true(d.nerrors >= 1);
        const Diag *e = NULL;
        for (size_t k = 0; k < d.n && !e; k++)
            if (d.items[k].sev == DIAG_ERROR)
                e = &d.items[k];
        assert_non_null(e);
        if (e->loc.line != rows[i].line || e->loc.col != rows[i].col || !strstr(e->msg, rows[i].msg))
            fail_msg("%s: got %u:%u '%s', expected %u:%u '%s'", rows[i].file, e->loc.line, e->loc.col, e->msg,
                     rows[i].line, rows[i].col, rows[i].msg);
        assert_non_null(e->loc.file);
        assert_non_null(strstr(e->loc.file, rows[i].file));
        diag_free(&d);
    }
}

/* ---- against ngspice ------------------------------------------------------------------------ */

static Lut *build(const char *model, const double *l, size_t nl, CharRange vgs, CharRange vds, CharRange vsb)
{
    CharSpec s;
    memset(&s, 0, sizeof s);
    s.models = MODELS;
    s.model = model;
    s.l = l;
    s.nl = nl;
    s.vgs = vgs;
    s.vds = vds;
    s.vsb = vsb;
    s.temp_c = NAN;
    s.w_ref = 10e-6;
    CharResult r;
    DiagList d;
    diag_init(&d);
    int rc = char_build(&s, NULL, NULL, &r, &d);
    if (rc != ERR_OK)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    Lut *t = lut_new(&r.info, r.vals, model, &d);
    assert_non_null(t);
    char_result_free(&r);
    diag_free(&d);
    return t;
}

static Lut *nch_table;
static const double nch_l[] = {0.5e-6, 1e-6, 2e-6};

static int setup_nch(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        return 0;
    nch_table = build("nch", nch_l, 3, (CharRange){0, 1.2, 0.025}, (CharRange){0, 1.2, 0.05},
                      (CharRange){0, 0.4, 0.2});
    return 0;
}

static int teardown_nch(void **state)
{
    (void)state;
    lut_free(nch_table);
    nch_table = NULL;
    return 0;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

/* The reference is ngspice's own operating point at each point (lutref.h), default BSIM4. */
static void test_nch_offgrid_vs_ngspice(void **state)
{
    (void)state;
    if (!nch_table)
        skip();
    enum { N = 60 };
    RefPoint p[N];
    RefVals r[N];
    for (int i = 0; i < N; i++) {
        /* VGS and VDS off the 25 mV / 50 mV grid; L on it; VSB on and between its points */
        p[i].l = nch_l[i % 3];
        p[i].vgs = 0.2 + 0.7 * urand();
        p[i].vds = 0.55 + 0.6 * urand();
        p[i].vsb = i % 4 == 3 ? 0.4 * urand() : 0.2 * (i % 3);
        p[i].w = 0;
    }
    char *dir = ref_dir();
    assert_non_null(dir);
    assert_int_equal(ref_op(dir, MODELS, NULL, "nch", 0, 0, 10e-6, p, N, r), 0);
    ref_dir_free(dir);
    double err[N];
    int n = 0;
    for (int i = 0; i < N; i++) {
        if (!(p[i].vds > r[i].vdsat + 0.05))
            continue; /* saturation only */
        LutVals v;
        assert_int_equal(lut_eval(nch_table, p[i].l, p[i].vgs, p[i].vds, p[i].vsb, &v), 0);
        double want = r[i].gm / r[i].id;
        err[n] = fabs(v.gm_id / want - 1);
        if (err[n] > 0.02)
            fail_msg("point %d (L %g, VGS %g, VDS %g, VSB %g): gm/ID %g, ngspice %g", i, p[i].l, p[i].vgs, p[i].vds,
                     p[i].vsb, v.gm_id, want);
        assert_close(v.q[LUTQ_ID], r[i].id, 0.02);
        assert_close(v.q[LUTQ_VTH], r[i].vth, 0.005);
        n++;
    }
    assert_true(n >= N / 2);
    qsort(err, (size_t)n, sizeof err[0], cmp_double);
    /* the floor: median <= 0.5 %, 95th percentile <= 2 % */
    assert_true(err[n / 2] <= 0.005);
    assert_true(err[(int)(0.95 * (n - 1))] <= 0.02);
}

/* Deep weak inversion: gm/ID tends to 1/(n*UT) with the slope factor n between 1.0 and 1.7, so
 * gm/ID*UT lies between 1/1.7 and 1/1.0 (common practice, no source); UT = kT/q with the exact SI
 * k and q at the table's temperature. */
static void test_nch_weak_inversion(void **state)
{
    (void)state;
    if (!nch_table)
        skip();
    double ut = K_BOLTZMANN * (lut_info(nch_table)->temp_c + 273.15) / Q_ELECTRON;
    for (double vgs = 0.0125; vgs < 0.15; vgs += 0.025) {
        LutVals v;
        assert_int_equal(lut_eval(nch_table, 1e-6, vgs, 0.6125, 0, &v), 0);
        double x = v.gm_id * ut;
        if (!(x >= 1 / 1.7 && x <= 1 / 1.0))
            fail_msg("VGS %g: gm/ID*UT = %g", vgs, x);
    }
}

/* In saturation gm/ID falls as VGS rises, also between grid points (common practice, no source). */
static void test_nch_monotone(void **state)
{
    (void)state;
    if (!nch_table)
        skip();
    for (size_t li = 0; li < 3; li++)
        for (double vsb = 0; vsb <= 0.4; vsb += 0.1) {
            double prev = INFINITY;
            for (double vgs = 0.05; vgs <= 1.2; vgs += 0.0025) {
                LutVals v;
                assert_int_equal(lut_eval(nch_table, nch_l[li], vgs, 1.1, vsb, &v), 0);
                if (!(v.gm_id <= prev))
                    fail_msg("L %g VSB %g: gm/ID rises from %.9g to %.9g at VGS %g", nch_l[li], vsb, prev, v.gm_id,
                             vgs);
                prev = v.gm_id;
            }
        }
}

/* The inverse lookup, then the forward one, gives the target back; and ngspice agrees at that VGS. */
static void test_nch_inverse(void **state)
{
    (void)state;
    if (!nch_table)
        skip();
    enum { N = 9 };
    RefPoint p[N];
    RefVals r[N];
    double target[N];
    for (int i = 0; i < N; i++) {
        target[i] = 5 + 2.5 * i;
        double vgs, lim;
        LutVals v, f;
        int rc = lut_vgs_for_gmid(nch_table, 1e-6, 0.9, 0.2, target[i], &vgs, &v, &lim);
        assert_int_equal(rc, LUT_INV_OK);
        assert_int_equal(lut_eval(nch_table, 1e-6, vgs, 0.9, 0.2, &f), 0);
        assert_close(f.gm_id, target[i], 1e-6);
        assert_close(v.gm_id, target[i], 1e-6);
        p[i] = (RefPoint){1e-6, vgs, 0.9, 0.2, 0};
    }
    char *dir = ref_dir();
    assert_non_null(dir);
    assert_int_equal(ref_op(dir, MODELS, NULL, "nch", 0, 0, 10e-6, p, N, r), 0);
    ref_dir_free(dir);
    for (int i = 0; i < N; i++)
        assert_close(r[i].gm / r[i].id, target[i], 0.01);
    /* out of reach, and outside the grid */
    double vgs, lim;
    LutVals v;
    assert_int_equal(lut_vgs_for_gmid(nch_table, 1e-6, 0.9, 0.2, 60, &vgs, &v, &lim), LUT_INV_HIGH);
    assert_true(lim > 20 && lim < 40 && isnan(vgs));
    assert_int_equal(lut_vgs_for_gmid(nch_table, 1e-6, 0.9, 0.2, 0.5, &vgs, &v, &lim), LUT_INV_LOW);
    assert_true(lim > 0.5 && lim < 5);
    assert_int_equal(lut_vgs_for_gmid(nch_table, 3e-6, 0.9, 0.2, 15, &vgs, &v, &lim), LUT_INV_OUTSIDE);
}

/* The width for a current at a gm/ID target: ngspice at that width and VGS carries the current at
 * that gm/ID (BSIM4's default narrow-width parameters allow a small difference). */
static void test_nch_suggest_w(void **state)
{
    (void)state;
    if (!nch_table)
        skip();
    double w, vgs;
    assert_int_equal(lut_suggest_w(nch_table, 1e-6, 0.9, 0, 15, 50e-6, 2, &w, &vgs), LUT_INV_OK);
    LutVals v;
    assert_int_equal(lut_eval(nch_table, 1e-6, vgs, 0.9, 0, &v), 0);
    assert_close(w * 2 * v.id_w, 50e-6, 1e-12);
    RefPoint p = {1e-6, vgs, 0.9, 0, w * 2}; /* m=2 copies of w are one device of 2w */
    RefVals r;
    char *dir = ref_dir();
    assert_non_null(dir);
    assert_int_equal(ref_op(dir, MODELS, NULL, "nch", 0, 0, 10e-6, &p, 1, &r), 0);
    ref_dir_free(dir);
    assert_close(r.id, 50e-6, 0.03);
    assert_close(r.gm / r.id, 15, 0.01);
    assert_int_equal(lut_suggest_w(nch_table, 1e-6, 0.9, 0, 80, 50e-6, 1, &w, &vgs), LUT_INV_HIGH);
    assert_true(isnan(w) && isnan(vgs));
}

/* Level 1 in strong inversion and saturation: gm/ID = 2/VOV (square law: Razavi, Design of Analog
 * CMOS Integrated Circuits, ch. 2), at points off the grid. */
static void test_level1_square_law(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    static const double l[] = {1e-6, 2e-6};
    Lut *t = build("n1", l, 2, (CharRange){0, 1.5, 0.025}, (CharRange){0, 1.5, 0.05}, (CharRange){0, 0, 1});
    static const double vgs[] = {0.7137, 0.8123, 0.9377, 1.0612, 1.1891};
    for (size_t li = 0; li < 2; li++)
        for (size_t i = 0; i < sizeof vgs / sizeof vgs[0]; i++) {
            LutVals v;
            assert_int_equal(lut_eval(t, l[li], vgs[i], 1.2137, 0, &v), 0);
            assert_close(v.q[LUTQ_VTH], 0.5, 1e-6); /* von = vto at VSB = 0 */
            assert_close(v.gm_id, 2 / (vgs[i] - 0.5), 0.005);
        }
    /* below threshold a level-1 device has no channel (what id shows there is the junction's gmin
       leakage, 1e-12 S at 1 V): gm is 0, and so is gm/ID */
    LutVals v;
    assert_int_equal(lut_eval(t, 1e-6, 0.3, 1.0, 0, &v), 0);
    assert_true(v.q[LUTQ_GM] == 0 && v.gm_id == 0);
    assert_true(v.q[LUTQ_ID] < 2e-12);
    lut_free(t);
}

/* check --table against the dump itself: one circuit simulated twice by ngspice, once saving every
 * device quantity, once with node voltages only; the rows join builds from the tables at the node
 * voltages must match the rows from ngspice's own device data (m, nf, VSB > 0, PMOS, a device
 * connected the other way round). */
static int sim_cell(const char *dir, const char *raw, int devices)
{
    char deck[700], cmd[1600], cwd[600];
    if (!getcwd(cwd, sizeof cwd))
        return -1;
    snprintf(deck, sizeof deck, "%s/%s.cir", dir, raw);
    FILE *fp = fopen(deck, "w");
    if (!fp)
        return -1;
    fprintf(fp, "* test_lut: the cell\n.include '%s/fixtures/lut/cell.cir'\n.control\nset filetype=binary\n", cwd);
    if (devices) {
        static const char *const dv[] = {"mn1", "mn2", "mp1", "mn3"};
        fprintf(fp, "save all\n");
        for (int i = 0; i < 4; i++)
            fprintf(fp, "save @%s[id] @%s[gm] @%s[gds] @%s[gmbs] @%s[vth] @%s[vdsat] @%s[cgg] @%s[vgs] @%s[vds] @%s[vbs]\n",
                    dv[i], dv[i], dv[i], dv[i], dv[i], dv[i], dv[i], dv[i], dv[i], dv[i]);
    }
    if (devices == 2) /* ngspice's own printout of the node voltages, "name = value" (made a CSV below) */
        fprintf(fp, "op\nprint all\nquit 0\n.endc\n.end\n");
    else
        fprintf(fp, "op\nwrite %s/%s\nquit 0\n.endc\n.end\n", dir, raw);
    fclose(fp);
    if (devices == 2)
        snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b '%s' >'%s.out' 2>/dev/null", dir, deck, raw);
    else
        snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b '%s' >/dev/null 2>&1", dir, deck);
    int rc = system(cmd);
    unlink(deck);
    return rc;
}

/* ngspice's `print all` lines "name = value" as a node-voltage CSV (node,v), branch currents left
 * out: the CSV form of a node-voltage dump (op_csv.c). */
static int print_to_csv(const char *out, const char *csv)
{
    FILE *in = fopen(out, "r"), *fp = fopen(csv, "w");
    if (!in || !fp) {
        if (in)
            fclose(in);
        if (fp)
            fclose(fp);
        return -1;
    }
    fprintf(fp, "# node voltages printed by ngspice\nnode,v\n");
    char line[512], name[256];
    double v;
    int n = 0;
    while (fgets(line, sizeof line, in))
        if (sscanf(line, "%255s = %lf", name, &v) == 2 && !strchr(name, '#')) {
            fprintf(fp, "%s,%.7e\n", name, v);
            n++;
        }
    fclose(in);
    fclose(fp);
    return n;
}

static void test_join_from_tables(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    static const double ln[] = {0.5e-6, 1e-6}, lp[] = {1e-6};
    Lut *tn = build("nch", ln, 2, (CharRange){0, 1.2, 0.025}, (CharRange){0, 1.2, 0.05}, (CharRange){0, 0.4, 0.1});
    Lut *tp = build("pch", lp, 1, (CharRange){0, 1.2, 0.025}, (CharRange){0, 1.2, 0.05}, (CharRange){0, 0.4, 0.1});
    const Lut *tables[2] = {tn, tp};
    char *dir = ref_dir();
    assert_non_null(dir);
    assert_int_equal(sim_cell(dir, "full.raw", 1), 0);
    assert_int_equal(sim_cell(dir, "nodes.raw", 0), 0);
    assert_int_equal(sim_cell(dir, "print", 2), 0);
    char full[600], nodes[600], printed[600], csv[600];
    snprintf(full, sizeof full, "%s/full.raw", dir);
    snprintf(nodes, sizeof nodes, "%s/nodes.raw", dir);
    snprintf(printed, sizeof printed, "%s/print.out", dir);
    snprintf(csv, sizeof csv, "%s/nodes.csv", dir);
    assert_true(print_to_csv(printed, csv) >= 4);
    DiagList d;
    diag_init(&d);
    Design ds;
    memset(&ds, 0, sizeof ds);
    NlOptions no;
    memset(&no, 0, sizeof no);
    assert_int_equal(nl_load("fixtures/lut/cell.cir", &no, &ds, &d), ERR_OK);
    assert_int_equal(ds.ndevs, 4);
    OpTable *of = NULL, *on = NULL;
    assert_int_equal(op_read(full, OPFMT_RAW, &of, &d), ERR_OK);
    assert_int_equal(op_read(nodes, OPFMT_RAW, &on, &d), ERR_OK);
    assert_int_equal(on->n, 0); /* no device record: node voltages only */
    OpTable *oc = NULL;
    assert_int_equal(op_read(csv, OPFMT_AUTO, &oc, &d), ERR_OK); /* detected as CSV */
    assert_int_equal(oc->format, OPFMT_CSV);
    assert_int_equal(oc->n, 0);
    assert_true(oc->nnodes >= 4);
    unlink(full);
    unlink(nodes);
    unlink(printed);
    unlink(csv);
    ref_dir_free(dir);
    RuleSet *rs = rule_new_defaults(&d);
    assert_non_null(rs);
    JoinOptions jo = {0, 0.5, 0};
    Joined a, b;
    assert_int_equal(join_run(&ds, of, rs, &jo, &a, &d), ERR_OK);
    assert_int_equal(join_run_tables(&ds, on, rs, &jo, tables, 2, &b, &d), ERR_OK);
    assert_int_equal(b.ntable, 4);
    Joined cj; /* the same from the CSV of ngspice's printout (7 digits) */
    assert_int_equal(join_run_tables(&ds, oc, rs, &jo, tables, 2, &cj, &d), ERR_OK);
    assert_int_equal(cj.ntable, 4);
    for (size_t i = 0; i < 4; i++) {
        assert_int_equal(cj.rows[i].fig.region, b.rows[i].fig.region);
        assert_close(cj.rows[i].fig.vgs, b.rows[i].fig.vgs, 1e-5);
        assert_close(cj.rows[i].fig.gm_id, b.rows[i].fig.gm_id, 1e-4);
    }
    join_free(&cj);
    op_free(oc);
    for (size_t i = 0; i < 4; i++) {
        const Row *x = &a.rows[i], *y = &b.rows[i];
        if (getenv("LUT_DEBUG"))
            fprintf(stderr, "%s: id %g/%g gm/ID %g/%g vgs %g/%g vds %g/%g vsb %g/%g\n", x->dev->name, x->fig.id, y->fig.id,
                    x->fig.gm_id, y->fig.gm_id, x->fig.vgs, y->fig.vgs, x->fig.vds, y->fig.vds, x->fig.vsb, y->fig.vsb);
        assert_non_null(x->op);
        assert_non_null(y->op);
        assert_true(row_lut(y) != NULL && row_lut_miss(y) == 0 && row_lut(x) == NULL);
        assert_int_equal(y->fig.region, x->fig.region);
        assert_int_equal(y->fig.swapped, x->fig.swapped);
        assert_close(y->fig.vgs, x->fig.vgs, 1e-6);
        assert_close(y->fig.vds, x->fig.vds, 1e-6);
        assert_close(y->fig.vsb + 1, x->fig.vsb + 1, 1e-6);
        assert_close(y->fig.gm_id, x->fig.gm_id, 0.005); /* the accuracy floor */
        assert_close(y->fig.id, x->fig.id, 0.01);        /* W*m/W_ref scaling, nf in W */
        assert_close(y->fig.cgg, x->fig.cgg, 0.01);
    }
    assert_true(a.rows[3].fig.swapped); /* mn3 really is the other way round */
    assert_true(a.rows[1].fig.vsb > 0.05);
    join_free(&a);
    join_free(&b);
    rule_free(rs);
    op_free(of);
    op_free(on);
    nl_free(&ds);
    lut_free(tn);
    lut_free(tp);
    diag_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_quadratics_exact),
        cmocka_unit_test(test_zero_current_fallback),
        cmocka_unit_test(test_outside_grid),
        cmocka_unit_test(test_single_point_axis),
        cmocka_unit_test(test_new_rejects),
        cmocka_unit_test(test_write_load_roundtrip),
        cmocka_unit_test(test_write_numbers),
        cmocka_unit_test(test_load_good_fixture),
        cmocka_unit_test(test_load_errors),
        cmocka_unit_test(test_nch_offgrid_vs_ngspice),
        cmocka_unit_test(test_nch_weak_inversion),
        cmocka_unit_test(test_nch_monotone),
        cmocka_unit_test(test_nch_inverse),
        cmocka_unit_test(test_nch_suggest_w),
        cmocka_unit_test(test_level1_square_law),
        cmocka_unit_test(test_join_from_tables),
    };
    return cmocka_run_group_tests(tests, setup_nch, teardown_nch);
}
