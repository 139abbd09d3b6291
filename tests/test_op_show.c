/* test_op_show: the reader of ngspice `show` tables. The happy-path fixtures were made by ngspice 39
 * from the decks in fixtures/op/gen (regen.sh); every expected value comes from ngspice's own text:
 * the `print` lines of the same run (15 digits) and the raw file written by the same run. */
#include "testutil.h"

#include <stdbool.h>

#include "opdump.h"

static uint32_t line_of(const char *text, const char *needle)
{
    const char *p = strstr(text, needle);
    assert_non_null(p);
    uint32_t l, c;
    tu_line_col(text, p, &l, &c);
    return l;
}

static OpTable *read_ok(const char *path, OpFormat fmt, DiagList *d)
{
    OpTable *t = NULL;
    diag_init(d);
    int rc = op_read(path, fmt, &t, d);
    if (rc != ERR_OK)
        diag_print(d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    return t;
}

static const Diag *first_sev(const DiagList *d, DiagSeverity sev)
{
    for (size_t i = 0; i < d->n; i++)
        if (d->items[i].sev == sev)
            return &d->items[i];
    return NULL;
}

/* The record for an ngspice device name: exact, or the one cut name it starts with. */
static const OpRecord *find_dev(const OpTable *t, const char *ngname)
{
    const char *cs;
    size_t cn;
    op_canonical(ngname, strlen(ngname), &cs, &cn);
    char buf[256];
    assert_true(cn < sizeof buf);
    memcpy(buf, cs, cn);
    buf[cn] = '\0';
    const OpRecord *r = op_find(t, buf);
    if (r)
        return r;
    for (size_t i = 0; i < t->n; i++)
        if (t->recs[i].truncated && strncmp(buf, t->recs[i].name, strlen(t->recs[i].name)) == 0)
            return &t->recs[i];
    return NULL;
}

/* `print` lines "@<dev>[<qty>] = <value>" from an ngspice log. */
typedef struct {
    char dev[128];
    int q;
    double v;
} PrintVal;

static size_t print_lines(const char *text, PrintVal *out, size_t max)
{
    size_t n = 0;
    for (const char *p = text; p && *p; p = strchr(p, '\n'), p = p ? p + 1 : NULL) {
        char dev[128], q[16];
        double v;
        if (*p != '@' || sscanf(p, "@%127[^[][%15[^]]] = %lf", dev, q, &v) != 3)
            continue;
        int qi = op_qty_lookup_ngspice(q, strlen(q));
        if (qi < 0 || n == max)
            continue;
        snprintf(out[n].dev, sizeof out[n].dev, "%s", dev);
        out[n].q = qi;
        out[n].v = v;
        n++;
    }
    return n;
}

/* show prints 6 significant digits: a value and its 6-digit print differ by at most half a unit of
 * the 6th digit, 5e-6 relative (%g rounding, C11 7.21.6.1); the sign is kept. */
#define SHOW_REL 5.000001e-6

static void same_sign(double a, double b)
{
    if (a != 0.0 && b != 0.0)
        assert_int_equal(signbit(a) != 0, signbit(b) != 0);
}

/* Every `print` value of the run is in the show tables, to 6 digits, with its sign. */
static size_t check_against_print(const OpTable *t, const char *log)
{
    static PrintVal pv[512];
    size_t n = print_lines(log, pv, 512), checked = 0;
    for (size_t i = 0; i < n; i++) {
        const OpRecord *r = find_dev(t, pv[i].dev);
        if (!r)
            print_error("no record for %s\n", pv[i].dev);
        assert_non_null(r);
        double v = r->q[pv[i].q];
        if (isnan(v))
            continue; /* that table did not ask for this quantity */
        assert_close(v, pv[i].v, SHOW_REL);
        same_sign(v, pv[i].v);
        checked++;
    }
    return checked;
}

static void test_mix_print(void **state)
{
    (void)state;
    DiagList d;
    OpTable *t = read_ok("fixtures/op/mix.out", OPFMT_SHOW, &d);
    char *log = tu_slurp("fixtures/op/mix.out", NULL);
    assert_true(check_against_print(t, log) >= 45);
    free(log);
    op_free(t);
    diag_free(&d);
}

/* The raw file of the same run holds the same device values (16 digits): show agrees to 6. */
static size_t check_against_raw(const OpTable *show, const OpTable *raw)
{
    size_t checked = 0;
    for (size_t i = 0; i < raw->n; i++) {
        const OpRecord *rr = &raw->recs[i];
        const OpRecord *sr = find_dev(show, rr->name);
        assert_non_null(sr);
        for (int q = 0; q < OPQ_COUNT; q++) {
            if (isnan(rr->q[q]))
                continue;
            assert_false(isnan(sr->q[q])); /* mix.cir shows every quantity it saves */
            assert_close(sr->q[q], rr->q[q], SHOW_REL);
            same_sign(sr->q[q], rr->q[q]);
            checked++;
        }
    }
    return checked;
}

static void test_mix_raw(void **state)
{
    (void)state;
    DiagList d1, d2;
    OpTable *s = read_ok("fixtures/op/mix.out", OPFMT_AUTO, &d1);
    OpTable *r = read_ok("fixtures/op/mix_bin.raw", OPFMT_AUTO, &d2);
    assert_true(check_against_raw(s, r) >= 70);
    op_free(s);
    op_free(r);
    diag_free(&d1);
    diag_free(&d2);
}

static void test_mix_details(void **state)
{
    (void)state;
    DiagList d;
    OpTable *t = read_ok("fixtures/op/mix.out", OPFMT_AUTO, &d);
    char *log = tu_slurp("fixtures/op/mix.out", NULL);
    assert_int_equal(t->format, OPFMT_SHOW);
    assert_int_equal(d.nerrors, 0);
    assert_int_equal(d.nwarnings, 0);
    /* nine MOSFETs; the Vsource, Isource and Resistor blocks of `show all` are not records */
    assert_int_equal(t->n, 9);
    assert_null(op_find(t, "vdd"));
    assert_null(op_find(t, "ib"));
    assert_null(op_find(t, "xm1.rtap"));
    assert_true(t->temp_c == 27.0); /* "Doing analysis at TEMP = 27.000000" */

    static const struct {
        const char *name;
        OpFamily fam;
        const char *model;
        bool cut;
    } rows[] = {
        {"mb3", OPFAM_BSIM, "nb3", false},           /* block "BSIM3:" */
        {"mabcdefghijklmnopqrst", OPFAM_BSIM, "nold", true}, /* "BSIM4v5:", a 21-character name */
        {"xm1.mref", OPFAM_BSIM, "nfast", false},    /* "BSIM4:" */
        {"xm1.mld", OPFAM_BSIM, "pfast", false},
        {"xlong_instance_path", OPFAM_BSIM, "nfast", true}, /* m.xlong_instance_path.mdevice_far_down, cut */
        {"mpsw", OPFAM_BSIM, "pfast", false},
        {"mpl", OPFAM_MOS1, "pslow", false},         /* "Mos1:" */
        {"mnsw", OPFAM_MOS1, "nslow", false},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        const OpRecord *r = op_find(t, rows[i].name);
        if (!r)
            print_error("no record %s\n", rows[i].name);
        assert_non_null(r);
        assert_int_equal(r->family, rows[i].fam);
        assert_non_null(r->model);
        assert_string_equal(r->model, rows[i].model);
        assert_int_equal(r->truncated, rows[i].cut);
    }
    const OpRecord *mb3 = op_find(t, "mb3"), *mpl = op_find(t, "mpl"), *mnsw = op_find(t, "mnsw"),
                   *mpsw = op_find(t, "mpsw"), *mld = op_find(t, "xm1.mld"), *mref = op_find(t, "xm1.mref");
    /* ????????? is absent: BSIM3 prints no cgb and no nf, Mos1 no vth and no cgg, BSIM no von */
    assert_true(isnan(mb3->q[OPQ_CGB]) && isnan(mb3->q[OPQ_NF]) && isnan(mb3->q[OPQ_VON]));
    assert_true(isnan(mpl->q[OPQ_VTH]) && isnan(mpl->q[OPQ_CGG]) && isnan(mpl->q[OPQ_NF]));
    /* BSIM3's gmb row of the wide table is ?????????; its gmbs from the first table stays */
    assert_false(isnan(mb3->q[OPQ_GMBS]));
    assert_false(isnan(mref->q[OPQ_GMBS]));
    /* signs as printed (ngspice-op-data.md section 4): the swapped BSIM4 PMOS has vgs, vds < 0 and
       a positive id and vth; the swapped Mos1 NMOS a negative id; the Mos1 PMOS negative von, vdsat */
    assert_true(mpsw->q[OPQ_VDS] == -1.2 && mpsw->q[OPQ_VGS] == -0.3 && mpsw->q[OPQ_VBS] == -1.2);
    assert_true(mpsw->q[OPQ_ID] > 0 && mpsw->q[OPQ_VTH] > 0);
    assert_true(mnsw->q[OPQ_ID] < 0 && mnsw->q[OPQ_VDS] == -1.2);
    assert_true(mpl->q[OPQ_VON] == -0.6 && mpl->q[OPQ_VDSAT] < 0 && mpl->q[OPQ_ID] > 0);
    assert_true(mld->q[OPQ_VBS] == 0.0 && signbit(mld->q[OPQ_VBS])); /* printed "-0" */
    assert_true(mld->q[OPQ_NF] == 2.0 && op_find(t, "xm1.mout")->q[OPQ_M] == 2.0);
    /* BSIM cgs is negative (dQg/dVs), Mos1 cgs positive (Meyer) */
    assert_true(mref->q[OPQ_CGS] < 0 && mpl->q[OPQ_CGS] > 0);
    /* the record starts at its first appearance: the device row of the first table naming mb3 */
    uint32_t l, c;
    const char *at = strstr(log, "     device                   mb3");
    assert_non_null(at);
    tu_line_col(log, strstr(at, "mb3"), &l, &c);
    assert_int_equal(mb3->loc.line, l);
    assert_int_equal(mb3->loc.col, c);
    free(log);
    op_free(t);
    diag_free(&d);
}

/* A wider `set width` (5 devices per block here) reads the same values. */
static void test_width(void **state)
{
    (void)state;
    size_t n;
    char *log = tu_slurp("fixtures/op/mix.out", &n);
    char *a = strstr(log, "=== show wide"), *b = strstr(log, "=== show all");
    assert_non_null(a);
    assert_non_null(b);
    assert_non_null(strstr(a, "m.xm1.mout            m.xm1.mref")); /* several devices on one line */
    char *path = tu_tmpfile("wide.out", a, (size_t)(b - a));
    DiagList d1, d2;
    OpTable *w = read_ok(path, OPFMT_AUTO, &d1), *all = read_ok("fixtures/op/mix.out", OPFMT_AUTO, &d2);
    assert_int_equal(w->n, 9);
    for (size_t i = 0; i < w->n; i++) {
        const OpRecord *r = &w->recs[i], *s = op_find(all, r->name);
        assert_non_null(s);
        assert_true(r->q[OPQ_ID] == s->q[OPQ_ID] && r->q[OPQ_GM] == s->q[OPQ_GM]);
        assert_true(isnan(r->q[OPQ_VTH]));
    }
    op_free(w);
    op_free(all);
    diag_free(&d1);
    diag_free(&d2);
    free(log);
    free(path);
}

/* A plain batch .op run: node table, model tables (skipped), instance tables of every type. */
static void test_batch(void **state)
{
    (void)state;
    DiagList d;
    OpTable *t = read_ok("fixtures/op/batch.out", OPFMT_AUTO, &d);
    assert_int_equal(t->n, 3);
    const OpRecord *mn = op_find(t, "xinv.mn"), *mp = op_find(t, "xinv.mp"), *ml = op_find(t, "mload");
    assert_non_null(mn);
    assert_non_null(mp);
    assert_non_null(ml);
    assert_int_equal(ml->family, OPFAM_MOS1);
    assert_string_equal(mn->model, "nlo");
    assert_null(op_find(t, "nlo")); /* a model table is not a device */
    assert_null(op_find(t, "rfb"));
    /* nodes: vdd, bias, in, mid; mid is the drain of xinv.mn, whose source is ground */
    assert_int_equal(t->nnodes, 4);
    double mid = NAN, vdd = NAN;
    for (size_t i = 0; i < t->nnodes; i++) {
        if (strcmp(t->node_name[i], "mid") == 0)
            mid = t->node_v[i];
        if (strcmp(t->node_name[i], "vdd") == 0)
            vdd = t->node_v[i];
    }
    assert_true(vdd == 1.3);
    assert_close(mid, mn->q[OPQ_VDS], SHOW_REL);
    assert_close(mid, ml->q[OPQ_VDS], SHOW_REL);
    op_free(t);
    diag_free(&d);
}

/* ---- failures ---- */

static void expect_error(const char *path, OpFormat fmt, uint32_t line, uint32_t col, const char *msg)
{
    DiagList d;
    diag_init(&d);
    OpTable *t = (OpTable *)1;
    int rc = op_read(path, fmt, &t, &d);
    if (rc != ERR_INPUT)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_INPUT);
    assert_null(t);
    const Diag *e = first_sev(&d, DIAG_ERROR);
    assert_non_null(e);
    if (e->loc.line != line || e->loc.col != col || !strstr(e->msg, msg))
        print_error("%s: got %u:%u '%s', expected %u:%u '%s'\n", path, e->loc.line, e->loc.col, e->msg, line, col, msg);
    assert_int_equal(e->loc.line, line);
    assert_int_equal(e->loc.col, col);
    assert_non_null(strstr(e->msg, msg));
    diag_free(&d);
}

static void test_failed_simulation(void **state)
{
    (void)state;
    static const struct {
        const char *path, *marker, *msg;
    } rows[] = {
        /* op failed in a control block: show still printed values from the failed iterations */
        {"fixtures/op/fail_ctl.out", "DC solution failed", "left from the failed iterations"},
        /* stdout and stderr together: the first failure line is stderr's */
        {"fixtures/op/fail_ctl.log", "op simulation(s) aborted", "left from the failed iterations"},
        /* stderr alone */
        {"fixtures/op/fail_ctl.err", "op simulation(s) aborted", "the simulation failed"},
        /* plain batch .op: no table at all */
        {"fixtures/op/fail_batch.out", "DC solution failed", "holds no device table"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        char *text = tu_slurp(rows[i].path, NULL);
        uint32_t line = line_of(text, rows[i].marker);
        if (strcmp(rows[i].path, "fixtures/op/fail_ctl.log") == 0) {
            uint32_t other = line_of(text, "DC solution failed");
            line = other < line ? other : line; /* whichever ngspice's buffering put first */
        }
        free(text);
        expect_error(rows[i].path, OPFMT_AUTO, line, 1, rows[i].msg);
    }
}

/* Two devices that show cuts to the same 21 characters, in one table. */
static void test_cut_ambiguous(void **state)
{
    (void)state;
    char *text = tu_slurp("fixtures/op/cut2.out", NULL);
    const char *row = strstr(text, "     device ");
    assert_non_null(row);
    const char *first = strstr(row, "m.xpair_of_devices_he");
    const char *second = strstr(first + 1, "m.xpair_of_devices_he");
    assert_non_null(second);
    uint32_t l, c;
    tu_line_col(text, second, &l, &c);
    free(text);
    expect_error("fixtures/op/cut2.out", OPFMT_AUTO, l, c, "cannot be told apart");
    DiagList d;
    diag_init(&d);
    OpTable *t;
    assert_int_equal(op_read("fixtures/op/cut2.out", OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_int_equal(d.nerrors, 1); /* no conflicts reported after it */
    diag_free(&d);
}

/* Bad or unusual tables, written here in ngspice's layout. */
#define HDR " BSIM4: Berkeley Short Channel IGFET Model-4\n"
#define DEV1 "     device                   mn1\n      model                   nch\n"
#define DEV2 "     device                   mn2                   mn1\n      model                   nch                   nch\n"

static void test_bad_tables(void **state)
{
    (void)state;
    static const struct {
        const char *name, *text, *at; /* at: where the error points (first match in text) */
        const char *msg;
    } rows[] = {
        {"conflict.out", HDR DEV1 "         gm           0.000587258\n\n" HDR DEV1 "         gm           0.000587259\n\n",
         "0.000587259", "conflicting values for gm of device 'mn1'"},
        {"nonnum.out", HDR DEV2 "         gm           0.000587258               0.1x\n\n", "0.1x",
         "'0.1x' is not a number"},
        {"range.out", HDR DEV1 "         gm                1e999\n\n", "1e999", "out of range"},
        {"count.out", HDR DEV2 "         gm           0.000587258\n\n", "gm", "has 1 values for 2 devices"},
        {"model.out", HDR DEV1 "\n" HDR "     device                   mn1\n      model                   pch\n\n", "pch",
         "has model 'pch' here but 'nch'"},
        {"family.out", HDR DEV1 "\n Mos1: Level 1 MOSfet model with Meyer capacitance model\n" DEV1 "\n",
         "mn1\n      model                   nch\n\n", "a Mos1 device here but a BSIM device"},
        {"notable.out", "\nCircuit: * nothing to see\n\nngspice-39 done\n", NULL, "no MOSFET table"},
        {"norun.out", "\nCircuit: * x\n\nNote: No \".plot\", \".print\", or \".fourier\" lines; no simulations run\n",
         "Note:", "the simulation failed"},
        {"interrupted.out", "Circuit: * x\n    Simulation interrupted due to error!\n", "Simulation",
         "the simulation failed"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        char *path = tu_tmpfile(rows[i].name, rows[i].text, strlen(rows[i].text));
        uint32_t l = 0, c = 0;
        if (rows[i].at) {
            const char *p = strstr(rows[i].text, rows[i].at);
            if (strcmp(rows[i].name, "family.out") == 0)
                p = strstr(strstr(rows[i].text, "Mos1:"), "mn1"); /* the second device row */
            else if (strcmp(rows[i].name, "conflict.out") == 0 || strcmp(rows[i].name, "model.out") == 0)
                p = strstr(strstr(rows[i].text, "\n\n"), rows[i].at); /* in the second table */
            assert_non_null(p);
            tu_line_col(rows[i].text, p, &l, &c);
            if (strcmp(rows[i].name, "norun.out") == 0 || strcmp(rows[i].name, "interrupted.out") == 0)
                c = 1;
        }
        expect_error(path, OPFMT_SHOW, l, c, rows[i].msg);
        free(path);
    }
}

/* Tables that are odd but fine. */
static void test_odd_tables(void **state)
{
    (void)state;
    DiagList d;
    OpTable *t;
    /* NaN printed as a value: absent, one warning; a stderr line landing inside the table; CRLF;
       no blank line at the end of the file */
    static const char nan_text[] = HDR DEV2 "         gm                  -nan           0.000587258\r\n"
                                            "Warning: Pd = 0 is less than W.\r\n"
                                            "         id                   nan           0.000204439\r\n"
                                            "        vth              0.340818              0.340818";
    char *path = TU_TMPFILE("nan.out", nan_text);
    t = read_ok(path, OPFMT_AUTO, &d);
    assert_int_equal(t->n, 2);
    const OpRecord *mn1 = op_find(t, "mn1"), *mn2 = op_find(t, "mn2");
    assert_true(isnan(mn2->q[OPQ_GM]) && isnan(mn2->q[OPQ_ID]));
    assert_true(mn1->q[OPQ_GM] == 0.000587258 && mn1->q[OPQ_ID] == 0.000204439 && mn2->q[OPQ_VTH] == 0.340818);
    assert_int_equal(d.nwarnings, 1);
    const Diag *w = first_sev(&d, DIAG_WARNING);
    assert_non_null(strstr(w->msg, "2 values printed as NaN"));
    assert_int_equal(w->loc.line, 4);
    op_free(t);
    diag_free(&d);
    free(path);

    /* stderr text with blank lines inside a table (2>&1): the table goes on after it */
    static const char inside[] = HDR DEV2 "         gm                   0.1                   0.2\n\n"
                                 "Warning: singular matrix:  check node x\n\n"
                                 "         id                   0.3                   0.4\n"
                                 "        vth             ?????????              0.340818\n\n"
                                 "@mn1[gm] = 2.000000e-01\nmodel 1 2\n";
    path = TU_TMPFILE("inside.out", inside);
    t = read_ok(path, OPFMT_AUTO, &d);
    assert_true(op_find(t, "mn2")->q[OPQ_ID] == 0.3 && op_find(t, "mn1")->q[OPQ_ID] == 0.4);
    assert_true(op_find(t, "mn1")->q[OPQ_VTH] == 0.340818 && isnan(op_find(t, "mn2")->q[OPQ_VTH]));
    assert_int_equal(d.n, 0);
    op_free(t);
    diag_free(&d);
    free(path);

    /* a MOSFET type whose conventions biaslint does not know: read, family unknown, one note */
    static const char mos2[] = " Mos2: Level 2 MOSfet model with Meyer capacitance model\n" DEV1
                               "         gm           1.65751e-05\n\n"
                               " Mos2: Level 2 MOSfet model with Meyer capacitance model\n"
                               "     device                   mn2\n      model                   nch\n"
                               "         gm           1.65751e-05\n\n"
                               " Vsource: Independent voltage source\n     device                    va\n"
                               "         dc                   0.6\n\n";
    path = TU_TMPFILE("mos2.out", mos2);
    t = read_ok(path, OPFMT_AUTO, &d);
    assert_int_equal(t->n, 2);
    assert_int_equal(op_find(t, "mn1")->family, OPFAM_UNKNOWN);
    size_t notes = 0;
    for (size_t i = 0; i < d.n; i++)
        notes += d.items[i].sev == DIAG_NOTE && strstr(d.items[i].msg, "'Mos2'") != NULL;
    assert_int_equal(notes, 1);
    op_free(t);
    diag_free(&d);
    free(path);

    /* a failure reported after the tables (a later analysis): the tables stand, with a warning */
    static const char late[] = HDR DEV1 "         gm           0.000587258\n\nDC solution failed -\n";
    path = TU_TMPFILE("late.out", late);
    t = read_ok(path, OPFMT_AUTO, &d);
    assert_int_equal(d.nwarnings, 1);
    assert_int_equal(first_sev(&d, DIAG_WARNING)->loc.line, 6);
    op_free(t);
    diag_free(&d);
    free(path);
}

/* The whole chain against ngspice itself, when it is installed: run the deck, read its stdout and
 * both raw files, and check them against its print lines and each other. */
static void test_live_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    char *deck = tu_slurp("fixtures/op/gen/mix.cir", NULL);
    char *path = tu_tmpfile("mix.cir", deck, strlen(deck));
    free(deck);
    char dir[256], cmd[768], out[300], bin[300];
    snprintf(dir, sizeof dir, "%s", path);
    *strrchr(dir, '/') = '\0';
    snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b mix.cir > mix.out 2> mix.err", dir);
    assert_int_equal(system(cmd), 0);
    snprintf(out, sizeof out, "%s/mix.out", dir);
    snprintf(bin, sizeof bin, "%s/mix_bin.raw", dir);
    DiagList d1, d2;
    OpTable *s = read_ok(out, OPFMT_AUTO, &d1), *r = read_ok(bin, OPFMT_AUTO, &d2);
    char *log = tu_slurp(out, NULL);
    assert_true(check_against_print(s, log) >= 45);
    assert_true(check_against_raw(s, r) >= 70);
    free(log);
    op_free(s);
    op_free(r);
    diag_free(&d1);
    diag_free(&d2);
    free(path);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_mix_print),     cmocka_unit_test(test_mix_raw),         cmocka_unit_test(test_mix_details),
        cmocka_unit_test(test_width),         cmocka_unit_test(test_batch),           cmocka_unit_test(test_failed_simulation),
        cmocka_unit_test(test_cut_ambiguous), cmocka_unit_test(test_bad_tables),      cmocka_unit_test(test_odd_tables),
        cmocka_unit_test(test_live_ngspice),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
