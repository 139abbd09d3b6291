/* test_opbind: record names for PDK netlists: the testbench prefix of a cell checked with --top
 * (given, found, ambiguous), and the record of a transistor read from its X card (found under the
 * instance, its W, L, nf, m and type taken from the dump). Designs come from small netlists of our
 * own, dumps from CSV device tables (the format of op_csv.c); test_primitive runs the same against
 * ngspice's own output. */
#include "testutil.h"

#include "netlist.h"
#include "opbind.h"
#include "opdump.h"

static Design ds;
static DiagList d;
static OpTable *t;

static void setup(const char *net, const char *top, const char *csv)
{
    static int k;
    char name[64];
    diag_init(&d);
    snprintf(name, sizeof name, "ob%d.sp", k);
    char *np = tu_tmpfile(name, net, strlen(net));
    snprintf(name, sizeof name, "ob%d.csv", k++);
    char *cp = tu_tmpfile(name, csv, strlen(csv));
    assert_non_null(np);
    assert_non_null(cp);
    NlOptions o = {0, 0, 0};
    NlPdkOptions po = {top, NULL, 0, 0};
    assert_int_equal(nl_load_pdk(np, &o, &po, &ds, &d), ERR_OK);
    assert_int_equal(op_read(cp, OPFMT_CSV, &t, &d), ERR_OK);
    free(np);
    free(cp);
}

static void teardown(void)
{
    op_free(t);
    t = NULL;
    nl_free(&ds);
    diag_free(&d);
}

static const Device *dev(const char *name)
{
    for (size_t i = 0; i < ds.ndevs; i++)
        if (strcmp(ds.devs[i].name, name) == 0)
            return &ds.devs[i];
    fail_msg("no device %s", name);
    return NULL;
}

static const Diag *diag_with(DiagSeverity sev, const char *text)
{
    for (size_t i = 0; i < d.n; i++)
        if (d.items[i].sev == sev && strstr(d.items[i].msg, text))
            return &d.items[i];
    for (size_t i = 0; i < d.n; i++)
        print_error("  [%d] %s\n", d.items[i].sev, d.items[i].msg);
    fail_msg("no diagnostic containing \"%s\"", text);
    return NULL;
}

#define CELL                                                                                   \
    "* cell\n.model nx nmos level=14 version=4.8\n"                                            \
    ".subckt ncell d g s b w=1u l=1u\nmx d g s b nx w={w} l={l}\n.ends\n"                      \
    ".subckt amp a b vss\nm1 a b vss vss nx w=1u l=1u\nx2 a b vss vss ncell w=2u\n.ends\n"

static void test_prefix(void **state)
{
    (void)state;
    const char *found;
    BindOptions det = {NULL, 1};

    /* the dump is the cell's own: no prefix */
    setup(CELL, "amp", "name,id,gm\nm1,1e-6,1e-5\nx2.mx,2e-6,2e-5\n");
    assert_int_equal(bind_run(&ds, t, &det, &found, &d), ERR_OK);
    assert_string_equal(found, "");
    assert_null(dev("m1")->simname);
    assert_string_equal(dev("x2")->simname, "x2.mx");
    teardown();

    /* under a testbench path: found, and every record name gets it */
    setup(CELL, "amp", "name,id,gm\nxtop.x1.m1,1e-6,1e-5\nxtop.x1.x2.mx,2e-6,2e-5\nvd_dummy,0,0\n");
    assert_int_equal(bind_run(&ds, t, &det, &found, &d), ERR_OK);
    assert_string_equal(found, "xtop.x1");
    assert_string_equal(dev("m1")->simname, "xtop.x1.m1");
    assert_string_equal(dev("x2")->simname, "xtop.x1.x2.mx");
    diag_with(DIAG_NOTE, "the dump holds the design under the instance path 'xtop.x1' (found in its device names");
    teardown();

    /* the best path wins: xtop.x2 holds only one of the two devices */
    setup(CELL, "amp", "name,id\nxtop.x2.m1,1e-6\nxtop.x1.m1,1e-6\nxtop.x1.x2.mx,2e-6\n");
    assert_int_equal(bind_run(&ds, t, &det, &found, &d), ERR_OK);
    assert_string_equal(found, "xtop.x1");
    teardown();

    /* two instances of the cell in the testbench: ambiguous, an error naming both */
    setup(CELL, "amp", "name,id\nxtop.x1.m1,1e-6\nxtop.x1.x2.mx,2e-6\nxtop.x2.m1,1e-6\nxtop.x2.x2.mx,2e-6\n");
    assert_int_equal(bind_run(&ds, t, &det, &found, &d), ERR_INPUT);
    const Diag *g = diag_with(DIAG_ERROR, "the dump holds the design's devices under several instance paths ('xtop.x1', "
                                          "'xtop.x2', each with 2 of the 2 devices): name the one to check with --prefix");
    assert_non_null(g->loc.file);
    teardown();

    /* ... which --prefix settles (case and a trailing dot do not matter) */
    setup(CELL, "amp", "name,id\nxtop.x1.m1,1e-6\nxtop.x1.x2.mx,2e-6\nxtop.x2.m1,1e-6\nxtop.x2.x2.mx,2e-6\n");
    BindOptions given = {"XTOP.X2.", 1};
    assert_int_equal(bind_run(&ds, t, &given, &found, &d), ERR_OK);
    assert_string_equal(found, "xtop.x2");
    assert_string_equal(dev("m1")->simname, "xtop.x2.m1");
    teardown();

    /* nothing in the dump looks like the design */
    setup(CELL, "amp", "name,id\nzz.q1,1e-6\n");
    assert_int_equal(bind_run(&ds, t, &det, &found, &d), ERR_OK);
    assert_string_equal(found, "");
    diag_with(DIAG_WARNING, "no record of the dump is named like a device of the design (e.g. m1)");
    teardown();

    /* no --top and no --prefix: nothing changes */
    setup(CELL "x1 a b 0 amp\n", NULL, "name,id\nx1.m1,1e-6\n");
    BindOptions none = {NULL, 0};
    assert_int_equal(bind_run(&ds, t, &none, &found, &d), ERR_OK);
    assert_null(dev("x1.m1")->simname);
    teardown();
}

#define BARE "* bare\n.option scale=1u\nXM1 d g s b lp_nch_18 W=2 L=0.15\nXM2 d g s b core_dev W=1 L=1\n"

static void test_bare(void **state)
{
    (void)state;
    const char *found;
    BindOptions det = {NULL, 1};
    PrimSpec sp;
    assert_true(prim_parse_spec("core_dev", PRIM_DECLARE, &sp)); /* a transistor of unknown type */
    diag_init(&d);
    char *np = TU_TMPFILE("bare.sp", BARE);
    char *cp = TU_TMPFILE("bare.csv", "name,id,w,l,m,nf,model\n"
                                      "xtop.xm1.mlp,1e-6,2.5e-6,1.5e-7,2,2,lp_nch_18_mod\n"
                                      "xtop.xm2.m0,1e-6,,,,,core_pch_mod\n");
    NlOptions o = {0, 0, 0};
    NlPdkOptions po = {NULL, &sp, 1, 0};
    assert_int_equal(nl_load_pdk(np, &o, &po, &ds, &d), ERR_OK);
    assert_int_equal(op_read(cp, OPFMT_CSV, &t, &d), ERR_OK);
    free(np);
    free(cp);
    assert_int_equal(dev("xm2")->type, MOS_UNKNOWN);
    assert_int_equal(bind_run(&ds, t, &det, &found, &d), ERR_OK);
    assert_string_equal(found, "xtop");
    const Device *m1 = dev("xm1"), *m2 = dev("xm2");
    assert_string_equal(m1->simname, "xtop.xm1.mlp"); /* the one record under the instance */
    assert_close(m1->w, 2.5e-6, 1e-12);                /* the dump's, not the X card's 2u */
    assert_close(m1->m, 2, 0);
    assert_close(m1->nf, 2, 0);
    assert_string_equal(m2->simname, "xtop.xm2.m0");
    assert_close(m2->w, 1e-6, 1e-12);       /* the dump has none: the X card's */
    assert_int_equal(m2->type, MOS_PMOS);   /* from the record's model name */
    diag_with(DIAG_NOTE, "1 of the transistors read from their X cards takes W, L, nf or m from the dump");
    teardown();

    /* several records under one instance, or none: said, none taken */
    diag_init(&d);
    np = TU_TMPFILE("bare2.sp", BARE);
    cp = TU_TMPFILE("bare2.csv", "name,id\nxm1.ma,1e-6\nxm1.mb,1e-6\n");
    assert_int_equal(nl_load_pdk(np, &o, &po, &ds, &d), ERR_OK);
    assert_int_equal(op_read(cp, OPFMT_CSV, &t, &d), ERR_OK);
    free(np);
    free(cp);
    BindOptions none = {NULL, 0};
    assert_int_equal(bind_run(&ds, t, &none, &found, &d), ERR_OK);
    assert_null(dev("xm1")->simname);
    assert_null(dev("xm2")->simname);
    diag_with(DIAG_WARNING, "1 X instance of an undefined cell holds more than one device record in the dump (first: xm1)");
    diag_with(DIAG_WARNING, "1 X instance of an undefined cell has no device record under it in the dump (first: xm2)");
    diag_with(DIAG_WARNING, "the type of 1 transistor read from its X card is unknown (first: xm2, cell core_dev)");
    teardown();
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_prefix),
        cmocka_unit_test(test_bare),
    };
    return cmocka_run_group_tests_name("opbind", tests, NULL, NULL);
}
