/* test_primitive: transistor primitive cells of PDK netlists and what comes with them. The policy
 * functions (cell names, declarations, classification, the summary text) from tables; then the
 * netlist reader on netlists of our own: primitives named by their X cards, cells that are not
 * defined, --top, device kinds biaslint does not check, dialect cards; last, the invented lp18
 * process of tests/circuits-pdk/ simulated with ngspice 39 in the test: the devices (names, W, L,
 * m, nf) and the figures biaslint derives from the dump must equal ngspice's own numbers. */
#define _DEFAULT_SOURCE /* realpath */
#include "testutil.h"

#include <limits.h>
#include <stdlib.h>

#include "buf.h"
#include "join.h"
#include "netlist.h"
#include "opbind.h"
#include "opdump.h"
#include "primitive.h"
#include "rules.h"

/* ---- the policy, from tables ------------------------------------------------------------------- */

/* The names a cell type is read from: common practice of PDK cell naming, no source. */
static void test_type_from_name(void **state)
{
    (void)state;
    static const struct {
        const char *name;
        MosType want;
    } rows[] = {
        {"lp_nch_18", MOS_NMOS},   {"lp_pch_18", MOS_PMOS},    {"nfet_01v8", MOS_NMOS},  {"pfet_g5v0d10v5", MOS_PMOS},
        {"NMOS4", MOS_NMOS},       {"pmos", MOS_PMOS},         {"nch", MOS_NMOS},        {"lvnmos", MOS_NMOS},
        {"hvpfet_3v3", MOS_PMOS},  {"cell_nmosfet", MOS_NMOS}, {"x.pch.2", MOS_PMOS},    {"sg13_lv_nmos", MOS_NMOS},
        /* not MOSFETs, or not telling */
        {"nmoscap", MOS_UNKNOWN},  {"npn", MOS_UNKNOWN},       {"lp_rpoly", MOS_UNKNOWN}, {"lp_vnpn", MOS_UNKNOWN},
        {"xnchx", MOS_UNKNOWN},    {"nch_pch", MOS_UNKNOWN},   {"abcdenmos", MOS_UNKNOWN}, {"mosn", MOS_UNKNOWN},
        {"n", MOS_UNKNOWN},        {"", MOS_UNKNOWN},          {"core_dev_1", MOS_UNKNOWN},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        MosType t = prim_type_from_name(rows[i].name);
        if (t != rows[i].want) {
            print_error("prim_type_from_name(\"%s\") = %d, expected %d\n", rows[i].name, t, rows[i].want);
            fail();
        }
    }
    assert_int_equal(prim_type_from_name(NULL), MOS_UNKNOWN);
}

static void test_glob_and_specs(void **state)
{
    (void)state;
    static const struct {
        const char *pat, *s;
        int want;
    } g[] = {
        {"lp_nch_18", "lp_nch_18", 1}, {"LP_NCH_18", "lp_nch_18", 1}, {"lp_*", "lp_nch_18", 1}, {"lp_?ch_18", "lp_pch_18", 1},
        {"*_18", "lp_nch_18", 1},      {"*", "", 1},                  {"lp_*_33", "lp_nch_18", 0}, {"lp", "lp_nch", 0},
        {"lp_nch_18x", "lp_nch_18", 0}, {"*a*b*c", "xaxbxbc", 1},     {"a*b", "ab", 1},           {"?", "", 0},
    };
    for (size_t i = 0; i < sizeof g / sizeof g[0]; i++)
        if (prim_glob(g[i].pat, strlen(g[i].pat), g[i].s) != g[i].want) {
            print_error("prim_glob(%s, %s) != %d\n", g[i].pat, g[i].s, g[i].want);
            fail();
        }
    static const struct {
        const char *arg;
        PrimDecl decl;
        int ok;
        size_t len;
        MosType type;
    } s[] = {
        {"lp_nch_18", PRIM_DECLARE, 1, 9, MOS_UNKNOWN}, {"core_n=nmos", PRIM_DECLARE, 1, 6, MOS_NMOS},
        {"core_p=PMOS", PRIM_DECLARE, 1, 6, MOS_PMOS},  {"x=nfet", PRIM_DECLARE, 0, 0, MOS_UNKNOWN},
        {"=nmos", PRIM_DECLARE, 0, 0, MOS_UNKNOWN},     {"", PRIM_DECLARE, 0, 0, MOS_UNKNOWN},
        {"a b", PRIM_DECLARE, 0, 0, MOS_UNKNOWN},       {"lp_*", PRIM_EXCLUDE, 1, 4, MOS_UNKNOWN},
        {"lp=nmos", PRIM_EXCLUDE, 0, 0, MOS_UNKNOWN},
    };
    for (size_t i = 0; i < sizeof s / sizeof s[0]; i++) {
        PrimSpec sp;
        int ok = prim_parse_spec(s[i].arg, s[i].decl, &sp);
        if (ok != s[i].ok) {
            print_error("prim_parse_spec(\"%s\") = %d\n", s[i].arg, ok);
            fail();
        }
        if (ok) {
            assert_int_equal(sp.len, s[i].len);
            assert_int_equal(sp.type, s[i].type);
            assert_int_equal(sp.decl, s[i].decl);
        }
    }
    /* the last matching declaration wins */
    PrimSpec specs[3];
    assert_true(prim_parse_spec("lp_*", PRIM_DECLARE, &specs[0]));
    assert_true(prim_parse_spec("lp_rpoly", PRIM_EXCLUDE, &specs[1]));
    assert_true(prim_parse_spec("other=pmos", PRIM_DECLARE, &specs[2]));
    assert_ptr_equal(prim_find_spec(specs, 3, "lp_nch_18"), &specs[0]);
    assert_ptr_equal(prim_find_spec(specs, 3, "lp_rpoly"), &specs[1]);
    assert_ptr_equal(prim_find_spec(specs, 3, "other"), &specs[2]);
    assert_null(prim_find_spec(specs, 3, "amp"));
    assert_null(prim_find_spec(specs, 3, NULL));
}

static void test_classify(void **state)
{
    (void)state;
    PrimSpec decl, excl;
    assert_true(prim_parse_spec("c", PRIM_DECLARE, &decl));
    assert_true(prim_parse_spec("c", PRIM_EXCLUDE, &excl));
    static const struct {
        size_t nmos, ninst, nforeign, nother;
        int spec; /* 0 none, 1 declared, 2 excluded */
        PrimClass want;
    } rows[] = {
        {1, 0, 0, 0, 0, PRIM_MOS},   /* one M card, any number of R C D (not counted here) */
        {1, 0, 1, 0, 0, PRIM_NONE},  /* and a source: not automatic */
        {1, 0, 1, 0, 1, PRIM_MOS},   /* ... unless declared */
        {1, 1, 0, 0, 1, PRIM_NONE},  /* an X card inside: never */
        {2, 0, 0, 0, 1, PRIM_NONE},  /* two M cards: never */
        {1, 0, 0, 0, 2, PRIM_NONE},  /* excluded */
        {0, 0, 1, 1, 0, PRIM_OTHER}, /* one Q J Z or N card */
        {0, 0, 2, 1, 0, PRIM_NONE},
        {0, 0, 0, 0, 0, PRIM_NONE},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        const PrimSpec *sp = rows[i].spec == 1 ? &decl : rows[i].spec == 2 ? &excl : NULL;
        assert_int_equal(prim_classify(rows[i].nmos, rows[i].ninst, rows[i].nforeign, rows[i].nother, sp), rows[i].want);
    }
}

static void test_unchecked_text(void **state)
{
    (void)state;
    PrimUnchecked u;
    memset(&u, 0, sizeof u);
    assert_true(prim_unchecked_wants_name(&u, UNCHK_BJT));
    prim_unchecked_add(&u, UNCHK_BJT, "x1.q1", NULL, 0, 10);
    prim_unchecked_add(&u, UNCHK_BJT, "xq2", "lp_vnpn", 0, 20);
    for (int i = 0; i < 5; i++)
        prim_unchecked_add(&u, UNCHK_NELEM, i < 4 ? "n1" : NULL, NULL, 1, 30);
    Buf b = BUF_INIT;
    assert_int_equal(prim_unchecked_text(&u, UNCHK_BJT, NULL, &b), ERR_OK);
    assert_string_equal(b.data, "2 bipolar transistors (Q cards) are not checked: biaslint reads MOSFET operating "
                                "points only (x1.q1, xq2 of cell lp_vnpn)");
    buf_clear(&b);
    assert_int_equal(prim_unchecked_text(&u, UNCHK_NELEM, NULL, &b), ERR_OK);
    assert_non_null(strstr(b.data, "5 N elements (compact models such as OSDI devices) are not checked"));
    assert_non_null(strstr(b.data, "(n1, n1, n1, n1, ...)"));
    assert_false(prim_unchecked_wants_name(&u, UNCHK_NELEM));
    assert_int_equal(u.off[UNCHK_BJT], 10); /* the first one's place */
    buf_clear(&b);
    assert_int_equal(prim_unchecked_text(&u, UNCHK_JFET, NULL, &b), ERR_OK);
    assert_int_equal(b.len, 0);
    prim_unchecked_add(&u, UNCHK_UNDEFINED, "xr1", "lp_rpoly", 0, 0);
    assert_int_equal(prim_unchecked_text(&u, UNCHK_UNDEFINED, "pdk/lp18.lib", &b), ERR_OK);
    assert_string_equal(b.data, "1 instance of a cell that is not defined is not checked: their definitions are not "
                                "read ('pdk/lp18.lib' was not found) and their names do not say they are MOSFETs "
                                "(declare one with --primitive CELL=nmos|pmos) (xr1 of cell lp_rpoly)");
    buf_free(&b);
    assert_int_equal(prim_unchecked_kind('Q'), UNCHK_BJT);
    assert_int_equal(prim_unchecked_kind('j'), UNCHK_JFET);
    assert_int_equal(prim_unchecked_kind('z'), UNCHK_MESFET);
    assert_int_equal(prim_unchecked_kind('N'), UNCHK_NELEM);
    assert_int_equal(prim_unchecked_kind('r'), -1);
}

/* ---- the reader on netlists of our own --------------------------------------------------------- */

static Design ds;
static DiagList d;

static int load(const char *name, const char *text, const NlPdkOptions *pdk)
{
    char *path = tu_tmpfile(name, text, strlen(text));
    assert_non_null(path);
    diag_init(&d);
    NlOptions o = {0, 0, 0};
    int rc = nl_load_pdk(path, &o, pdk, &ds, &d);
    free(path);
    return rc;
}

static void done(void)
{
    nl_free(&ds);
    diag_free(&d);
}

static const Device *dev(const char *name)
{
    for (size_t i = 0; i < ds.ndevs; i++)
        if (strcmp(ds.devs[i].name, name) == 0)
            return &ds.devs[i];
    print_error("no device '%s'\n", name);
    fail();
    return NULL;
}

/* The diagnostic whose message holds text (and of severity sev), or a failure. */
static const Diag *diag_with(DiagSeverity sev, const char *text)
{
    for (size_t i = 0; i < d.n; i++)
        if (d.items[i].sev == sev && strstr(d.items[i].msg, text))
            return &d.items[i];
    print_error("no diagnostic (severity %d) containing \"%s\"; there are:\n", sev, text);
    for (size_t i = 0; i < d.n; i++)
        print_error("  [%d] %u:%u %s\n", d.items[i].sev, d.items[i].loc.line, d.items[i].loc.col, d.items[i].msg);
    fail();
    return NULL;
}

#define LIB                                                                                       \
    ".model nx nmos level=14 version=4.8\n.model px pmos level=14 version=4.8\n.model dx d\n" \
    ".model qx npn\n"

/* A cell with one M card and parasitic R, C, D is one device named by its X card: annotated at the
 * X card, its record the inner card's, W L nf m as the cell passes them (with .option scale). */
static void test_primitive_cells(void **state)
{
    (void)state;
    assert_int_equal(load("prim.sp",
                          "* primitives\n" LIB ".option scale=1u\n"
                          ".subckt ncell d g s b w=1 l=1 nf=1 mult=1\n"
                          "rg g gi 10\n"
                          "mx d gi s b nx w={w} l={l} nf={nf} m={mult}\n"
                          "dd b d dx\n"
                          "cp d s 1f\n"
                          ".ends\n"
                          ".subckt pcell d g s b w=1 l=1\n"
                          "mx d g s b px w={w} l={l}\n"
                          ".ends\n"
                          ".subckt amp in out vdd\n"
                          "XM1 out in 0 0 ncell w=2 l=0.5 nf=2 mult=3\n"
                          "XM2 out out vdd vdd pcell w=4 l=0.5\n"
                          ".ends\n"
                          "vdd vdd 0 1\n"
                          "x1 a b vdd amp\n"
                          "XM9 b a 0 0 ncell w=1 l=0.2\n",
                          NULL),
                     ERR_OK);
    assert_int_equal(ds.ndevs, 3);
    const Device *m1 = dev("x1.xm1"), *m2 = dev("x1.xm2"), *m9 = dev("xm9");
    assert_string_equal(m1->simname, "x1.xm1.mx");
    assert_string_equal(m9->simname, "xm9.mx");
    assert_int_equal(m1->prim, DEV_PRIM);
    assert_string_equal(m1->model, "ncell"); /* the cell, as the designer wrote it */
    assert_string_equal(m1->mdl->name, "nx"); /* the inner card's model */
    assert_string_equal(m1->cell, "amp");
    assert_null(m9->cell);
    assert_int_equal(m1->type, MOS_NMOS);
    assert_int_equal(m2->type, MOS_PMOS);
    assert_close(m1->w, 2e-6, 1e-12);
    assert_close(m1->l, 0.5e-6, 1e-12);
    assert_close(m1->nf, 2, 0);
    assert_close(m1->m, 3, 0);
    assert_close(m9->m, 1, 0);
    /* nets: the gate is the inner node behind the gate resistor, the others the X card's */
    assert_string_equal(nl_nets(&ds, m1)[0], "b");
    assert_string_equal(nl_nets(&ds, m1)[1], "x1.xm1.gi");
    assert_string_equal(nl_nets(&ds, m1)[2], "0");
    /* cards: the X cards */
    const Card *c1 = &ds.cards[m1->card], *c9 = &ds.cards[m9->card];
    assert_int_equal(c1->line, 17);
    assert_int_equal(c9->line, 22);
    assert_memory_equal(ds.files.files[0]->text + c9->start, "XM9 ", 4);
    assert_int_equal(d.nwarnings, 0);
    done();

    /* a source inside keeps a cell from being a primitive; --primitive makes it one, --not-primitive
       expands a cell that would be one */
    const char *src = "* declared\n" LIB
                      ".subckt vcell d g s b\nvs g gi 0\nmx d gi s b nx w=1u l=1u\n.ends\n"
                      ".subckt ncell d g s b\nmx d g s b nx w=1u l=1u\n.ends\n"
                      "x1 a b 0 0 vcell\nx2 a b 0 0 ncell\n";
    assert_int_equal(load("decl1.sp", src, NULL), ERR_OK);
    assert_non_null(dev("x1.mx"));
    assert_non_null(dev("x2"));
    done();
    PrimSpec sp[3];
    assert_true(prim_parse_spec("vcell", PRIM_DECLARE, &sp[0]));
    assert_true(prim_parse_spec("ncell", PRIM_EXCLUDE, &sp[1]));
    assert_true(prim_parse_spec("nosuch*", PRIM_DECLARE, &sp[2]));
    NlPdkOptions po = {NULL, sp, 3, 0};
    assert_int_equal(load("decl2.sp", src, &po), ERR_OK);
    assert_non_null(dev("x1"));
    assert_non_null(dev("x2.mx"));
    assert_null(diag_with(DIAG_WARNING, "--primitive nosuch*: no cell the design uses has that name")->loc.file);
    done();
    /* declared but not a primitive's shape: said, and expanded */
    assert_true(prim_parse_spec("pair", PRIM_DECLARE, &sp[0]));
    NlPdkOptions po1 = {NULL, sp, 1, 0};
    assert_int_equal(load("decl3.sp", "* pair\n" LIB ".subckt pair d s\nm1 d d s s nx\nm2 d d s s nx\n.ends\nx1 a 0 pair\n", &po1),
                     ERR_OK);
    assert_int_equal(ds.ndevs, 2);
    const Diag *g = diag_with(DIAG_WARNING, "subcircuit 'pair' is declared a primitive (--primitive) but holds 2 M cards");
    assert_int_equal(g->loc.line, 6);
    done();
}

/* Cells the netlist does not define (the PDK library is not read): transistor cells are read from
 * their X cards, with a warning naming the cell; others are listed as not checked. Without any
 * transistor cell among them, an undefined cell stays an error, as ngspice stops on it. */
static void test_undefined_cells(void **state)
{
    (void)state;
    const char *net = "* design only\n.option scale=1u\n"
                      "XM1 d g s b lp_nch_18 W=2 L=0.15 nf=2 mult=4\n"
                      "XM2 d g vdd vdd lp_pch_18 W=3 L=0.15 m=2\n"
                      "XM3 d g s b core_dev W=1 L=1\n"
                      "XR1 d s lp_rpoly w=1 l=10\n"
                      "XM4 d g s lp_nch_18 W=1 L=1\n"; /* three nodes: not a transistor's X card */
    assert_int_equal(load("bare.sp", net, NULL), ERR_OK);
    assert_int_equal(ds.ndevs, 2);
    const Device *m1 = dev("xm1"), *m2 = dev("xm2");
    assert_int_equal(m1->prim, DEV_BARE);
    assert_null(m1->simname); /* found in the dump (opbind) */
    assert_null(m1->mdl);
    assert_string_equal(m1->model, "lp_nch_18");
    assert_int_equal(m1->type, MOS_NMOS);
    assert_int_equal(m2->type, MOS_PMOS);
    assert_close(m1->w, 2e-6, 1e-12); /* times .option scale */
    assert_close(m1->l, 0.15e-6, 1e-12);
    assert_close(m1->nf, 2, 0);
    assert_close(m1->m, 4, 0); /* mult, without m= */
    assert_close(m2->m, 2, 0);
    assert_string_equal(nl_nets(&ds, m2)[2], "vdd");
    const Diag *g = diag_with(DIAG_WARNING, "cell 'lp_nch_18' is not defined (the netlist reads no library that defines it)");
    assert_int_equal(g->loc.line, 3);
    assert_int_equal(g->loc.col, 13);
    diag_with(DIAG_WARNING, "cell 'lp_pch_18' is not defined");
    g = diag_with(DIAG_WARNING, "3 instances of cells that are not defined are not checked");
    assert_non_null(strstr(g->msg, "(xm3 of cell core_dev, xr1 of cell lp_rpoly, xm4 of cell lp_nch_18)"));
    assert_int_equal(g->loc.line, 5);
    assert_int_equal(d.nerrors, 0);
    done();

    /* declared: core_dev is a p-type transistor; a type stated for a named cell wins over its name */
    PrimSpec sp[1];
    assert_true(prim_parse_spec("core_dev=pmos", PRIM_DECLARE, &sp[0]));
    NlPdkOptions po = {NULL, sp, 1, 0};
    assert_int_equal(load("bare2.sp", net, &po), ERR_OK);
    assert_int_equal(ds.ndevs, 3);
    assert_int_equal(dev("xm3")->type, MOS_PMOS);
    done();

    /* no transistor cell among the undefined ones: an error, as before */
    assert_int_equal(load("undef.sp", "* t\n" LIB "m1 a b 0 0 nx\nx1 a b nosuch\n", NULL), ERR_INPUT);
    g = diag_with(DIAG_ERROR, "undefined subcircuit 'nosuch'");
    assert_int_equal(g->loc.line, 7);
    assert_int_equal(g->loc.col, 8);
    done();

    /* without .option scale, X-card values in micrometres are implausible: said once for all */
    assert_int_equal(load("noscale.sp", "* t\nXM1 d g s b lp_nch_18 W=2 L=0.15\nXM2 d g s b lp_nch_18 W=2 L=0.15\n", NULL),
                     ERR_OK);
    g = diag_with(DIAG_WARNING, "W and L of 2 transistors read from X cards are not plausible in metres (first: xm1, W=2 L=0.15");
    assert_non_null(strstr(g->msg, "(the netlist sets no .option scale)"));
    assert_int_equal(g->loc.line, 2);
    done();
}

/* A missing library file is an error that says how to go on; with --allow-missing-lib it is a
 * warning, and the cells it would define are read from their X cards or listed. */
static void test_missing_library(void **state)
{
    (void)state;
    const char *net = "* deck\n.lib '/nonexistent/pdk/lp18.lib' tt\n.option scale=1u\n"
                      "XM1 d g 0 0 lp_nch_18 W=2 L=0.15\nXR1 d 0 lp_rpoly w=1 l=10\nvd d 0 1\n";
    assert_int_equal(load("miss1.sp", net, NULL), ERR_INPUT);
    const Diag *g = diag_with(DIAG_ERROR, "cannot open '/nonexistent/pdk/lp18.lib': no such file (--allow-missing-lib checks");
    assert_int_equal(g->loc.line, 2);
    assert_int_equal(g->loc.col, 7);
    done();
    NlPdkOptions po = {NULL, NULL, 0, 1};
    assert_int_equal(load("miss2.sp", net, &po), ERR_OK);
    assert_int_equal(ds.ndevs, 1);
    assert_int_equal(dev("xm1")->prim, DEV_BARE);
    diag_with(DIAG_WARNING, "cannot open '/nonexistent/pdk/lp18.lib': no such file; going on without it");
    diag_with(DIAG_WARNING, "cell 'lp_nch_18' is not defined (its library is not read ('/nonexistent/pdk/lp18.lib' was not found))");
    g = diag_with(DIAG_WARNING, "1 instance of a cell that is not defined is not checked: their definitions are not read "
                                "('/nonexistent/pdk/lp18.lib' was not found)");
    assert_int_equal(g->loc.line, 5);
    done();
}

/* --top: a netlist of subcircuits only, the cell checked as the design; names and nets as inside it. */
static void test_top(void **state)
{
    (void)state;
    const char *net = "* extracted\n" LIB
                      ".subckt ncell d g s b w=1u l=1u\nmx d g s b nx w={w} l={l}\n.ends\n"
                      ".subckt buf in out vdd vss\n"
                      "X0 out in vss vss ncell w=2u\n"
                      "m1 out in vdd vdd px w=3u l=1u\n"
                      "Xsub in mid vdd vss inv\n"
                      ".ends\n"
                      ".subckt inv a y vdd vss\nm1 y a vss vss nx w=1u l=1u\nm2 y a vdd vdd px w=2u l=1u\n.ends\n";
    assert_int_equal(load("top0.sp", net, NULL), ERR_OK); /* no device: run.c says so, with this note */
    assert_int_equal(ds.ndevs, 0);
    const Diag *g = diag_with(DIAG_NOTE, "the netlist only defines subcircuits: check one with --top CELL");
    assert_non_null(strstr(g->msg, "cells no other cell uses: buf"));
    done();
    NlPdkOptions po = {"BUF", NULL, 0, 0};
    assert_int_equal(load("top1.sp", net, &po), ERR_OK);
    assert_int_equal(ds.ndevs, 4);
    const Device *x0 = dev("x0"), *m1 = dev("m1"), *s1 = dev("xsub.m1");
    assert_string_equal(x0->simname, "x0.mx");
    assert_string_equal(nl_nets(&ds, x0)[0], "out"); /* the cell's ports as written */
    assert_string_equal(nl_nets(&ds, m1)[2], "vdd");
    assert_string_equal(nl_nets(&ds, s1)[0], "mid");
    assert_string_equal(nl_nets(&ds, s1)[2], "vss");
    assert_string_equal(m1->cell, "buf");
    assert_close(x0->w, 2e-6, 1e-12);
    assert_int_equal(d.nwarnings, 0);
    done();
    /* a name the netlist does not define: an error listing the cells */
    NlPdkOptions bad = {"nosuch", NULL, 0, 0};
    assert_int_equal(load("top2.sp", net, &bad), ERR_INPUT);
    g = diag_with(DIAG_ERROR, "--top nosuch: the netlist defines no subcircuit of that name (it defines buf)");
    assert_int_equal(g->loc.line, 0);
    done();
    /* the top level of a netlist checked with --top is left out, with a word */
    NlPdkOptions tb = {"inv", NULL, 0, 0};
    assert_int_equal(load("top3.sp", "* tb\n" LIB ".subckt inv a y vdd vss\nm1 y a vss vss nx\n.ends\nx1 a b vdd 0 inv\nm9 a a 0 0 nx\n", &tb),
                     ERR_OK);
    assert_int_equal(ds.ndevs, 1);
    assert_non_null(dev("m1"));
    diag_with(DIAG_WARNING, "--top inv: the 1 M card and 1 X card at the top level of the netlist are not checked");
    done();
}

/* Transistor-like devices biaslint does not check are listed, per kind, never dropped silently. */
static void test_other_devices(void **state)
{
    (void)state;
    assert_int_equal(load("kinds.sp",
                          "* kinds\n" LIB ".model jx njf\n"
                          ".subckt vnpn c b e\nq0 c b e qx\n.ends\n"
                          ".subckt blk a b\nq1 a b 0 qx\nj1 a b 0 jx\nm1 a b 0 0 nx\n.ends\n"
                          "xq1 a b 0 vnpn\nxq2 a b 0 vnpn\n"
                          "x1 a b blk\n"
                          "q5 a b 0 qx\n"
                          "n1 a b 0 0 psp_model w=1u l=1u\n"
                          "z1 a b 0 zx\n",
                          NULL),
                     ERR_OK);
    assert_int_equal(ds.ndevs, 1); /* x1.m1 */
    const Diag *g = diag_with(DIAG_WARNING, "4 bipolar transistors (Q cards) are not checked");
    assert_non_null(strstr(g->msg, "(q5, xq1 of cell vnpn, xq2 of cell vnpn, x1.q1)"));
    assert_int_equal(g->loc.line, 18); /* the first listed: q5 at the top level */
    g = diag_with(DIAG_WARNING, "1 JFET (J card) is not checked: biaslint reads MOSFET operating points only (x1.j1)");
    assert_int_equal(g->loc.line, 12);
    g = diag_with(DIAG_WARNING, "1 N element (a compact model such as an OSDI device) is not checked");
    assert_int_equal(g->loc.line, 19);
    diag_with(DIAG_WARNING, "1 MESFET (Z card) is not checked");
    done();
}

/* Dialect: .macro/.eom, .parameters, .incl as ngspice 39 reads them; cards ngspice 39 does not
 * know are named with their line (checked: ngspice stops with "unimplemented control card"). */
static void test_dialect(void **state)
{
    (void)state;
    char *inc = TU_TMPFILE("dial.inc", ".model nx nmos level=14 version=4.8\n");
    assert_non_null(inc);
    free(inc);
    assert_int_equal(load("dial.sp",
                          "* dialect\n"
                          ".incl dial.inc\n"
                          ".parameters wq=3u\n"
                          ".params wr=2u\n"
                          ".macro cell a\nmq a a 0 0 nx w=wq l=1u\n.eom\n"
                          "x1 d cell\n"
                          "m2 d d 0 0 nx w=wr l=1u\n"
                          ".step param wq 1u 2u 1u\n"
                          ".hdl 'psp.va'\n"
                          ".protect\n"
                          "m3 d d 0 0 nx w=1u l=1u\n"
                          ".unprotect\n"
                          ".step param wr 1u 2u 1u\n"
                          ".prot\n.unprot\n.op\n.endif\n",
                          NULL),
                     ERR_OK);
    assert_int_equal(ds.ndevs, 3);
    assert_close(dev("x1")->w, 3e-6, 1e-12);
    assert_close(dev("m2")->w, 2e-6, 1e-12);
    const Diag *g = diag_with(DIAG_WARNING, "'.step' is not a card ngspice 39 knows (it stops with 'unimplemented control card'); biaslint ignores it");
    assert_int_equal(g->loc.line, 10);
    assert_int_equal(g->loc.col, 1);
    g = diag_with(DIAG_WARNING, "'.hdl' (Verilog-A models) is not supported");
    assert_int_equal(g->loc.line, 11);
    g = diag_with(DIAG_WARNING, "'.protect' is not a card ngspice 39 knows");
    assert_non_null(strstr(g->msg, "reads the cards up to .unprotect as written"));
    assert_int_equal(d.nwarnings, 4); /* .step once, .hdl, .protect, .unprotect; .prot .unprot .op .endif quiet */
    done();
}

/* ---- the lp18 process against ngspice ----------------------------------------------------------- */

typedef struct {
    char name[64];
    double w, l, m, nf;
} ShowDev;

/* `show m : w l m nf` tables of ngspice's output: device name (ngspice's spelling) -> values. */
static size_t parse_show(const char *out, ShowDev *v, size_t cap)
{
    size_t n = 0, first = 0, cols = 0;
    for (const char *p = out; *p;) {
        const char *e = strchr(p, '\n');
        size_t len = e ? (size_t)(e - p) : strlen(p);
        char line[2048];
        if (len >= sizeof line)
            len = sizeof line - 1;
        memcpy(line, p, len);
        line[len] = '\0';
        p += len + (e ? 1 : 0);
        char *save, *tok = strtok_r(line, " \t\r", &save);
        if (!tok)
            continue;
        if (strcmp(tok, "device") == 0) {
            first = n;
            cols = 0;
            while ((tok = strtok_r(NULL, " \t\r", &save)) && n < cap) {
                snprintf(v[n].name, sizeof v[n].name, "%s", tok);
                v[n].w = v[n].l = v[n].m = v[n].nf = NAN;
                n++;
                cols++;
            }
            continue;
        }
        double *dst = NULL;
        for (size_t c = 0; c < cols; c++) {
            char *t = strtok_r(NULL, " \t\r", &save);
            if (!t)
                break;
            ShowDev *s = &v[first + c];
            dst = !strcmp(tok, "w") ? &s->w : !strcmp(tok, "l") ? &s->l : !strcmp(tok, "m") ? &s->m
                : !strcmp(tok, "nf") ? &s->nf : NULL;
            if (dst)
                *dst = strtod(t, NULL);
        }
    }
    return n;
}

/* Value of `NAME = value` in ngspice print output, NAN when absent. */
static double printed(const char *log, const char *vec)
{
    size_t n = strlen(vec);
    for (const char *p = log; (p = strstr(p, vec)); p += n)
        if ((p == log || p[-1] == '\n') && strncmp(p + n, " = ", 3) == 0)
            return strtod(p + n + 3, NULL);
    return NAN;
}

#define MAXDEV 32

/* Simulate testbench tb (in circuits-pdk) with ngspice: the show log with w l m nf and the op
 * quantities, and `print` of id gm gds vdsat vth with 15 digits for the inner devices named in
 * inner[] (ngspice spelling without "m."). Returns the log text (malloc'd); *logpath its path. */
static char *simulate(const char *tb, const char *const *inner, size_t ninner, char *logpath, size_t lsize, char *work)
{
    char here[PATH_MAX], deck[PATH_MAX + 32], cmd[3 * PATH_MAX];
    assert_non_null(realpath("circuits-pdk", here));
    strcpy(work, "/tmp/biaslint-pdk-XXXXXX");
    assert_non_null(mkdtemp(work));
    snprintf(deck, sizeof deck, "%s/deck.cir", work);
    FILE *fp = fopen(deck, "w");
    assert_non_null(fp);
    fprintf(fp, "* wrapper for %s\n.include %s/%s\n.control\nop\nset width=400\n", tb, here, tb);
    fprintf(fp, "show m : w l m nf id gm gds gmbs vgs vds vbs vth vdsat cgg cgs cgd cgb\nset numdgt=15\n");
    for (size_t i = 0; i < ninner; i++)
        fprintf(fp, "print @m.%s[id] @m.%s[gm] @m.%s[gds] @m.%s[vdsat] @m.%s[vth]\n", inner[i], inner[i], inner[i],
                inner[i], inner[i]);
    fprintf(fp, "quit\n.endc\n.end\n");
    fclose(fp);
    snprintf(logpath, lsize, "%s/show.log", work);
    /* from the circuit's folder: ngspice 39 looks for .lib and .include files from the working folder */
    snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b '%s' >'%s' 2>'%s.err'", here, deck, logpath, logpath);
    assert_int_equal(system(cmd), 0);
    char *text = tu_slurp(logpath, NULL);
    assert_non_null(text);
    return text;
}

typedef struct {
    const char *netlist;    /* in circuits-pdk */
    const char *top;        /* --top, or NULL */
    const char *tb;         /* the testbench simulated */
    const char *prefix;     /* expected prefix found in the dump ("" for none) */
    int bare;               /* devices read from their X cards (no library) */
    size_t ndev;
    const char *names[8];   /* biaslint's names, in netlist order */
} PdkCase;

static void check_case(const PdkCase *pc)
{
    char path[PATH_MAX + 64];
    snprintf(path, sizeof path, "circuits-pdk/%s", pc->netlist);
    NlPdkOptions po = {pc->top, NULL, 0, 0};
    NlOptions o = {0, 0, 0};
    diag_init(&d);
    int rc = nl_load_pdk(path, &o, &po, &ds, &d);
    if (rc != ERR_OK)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    assert_int_equal(ds.ndevs, pc->ndev);
    for (size_t i = 0; i < pc->ndev; i++) {
        assert_string_equal(ds.devs[i].name, pc->names[i]); /* one row per placed transistor, the X names */
        assert_int_equal(ds.devs[i].prim, pc->bare ? DEV_BARE : DEV_PRIM);
    }
    /* the inner devices as ngspice names them: the testbench path, the X name, the inner card */
    static const char *const inner_letter[8] = {"mn", "mn", "mp", "mp", "mn", "mn", "mh", ""};
    const char *inner[MAXDEV];
    char innerbuf[MAXDEV][64];
    for (size_t i = 0; i < pc->ndev; i++) {
        snprintf(innerbuf[i], sizeof innerbuf[i], "%s%s.%s", pc->top ? "xtop.x1." : "", pc->names[i], inner_letter[i]);
        inner[i] = innerbuf[i];
    }
    char logpath[PATH_MAX], work[64];
    char *text = simulate(pc->tb, inner, pc->ndev, logpath, sizeof logpath, work);
    ShowDev sv[MAXDEV];
    size_t nsv = parse_show(text, sv, MAXDEV);
    assert_int_equal(nsv, pc->ndev); /* ngspice has as many MOSFETs as biaslint has rows */

    OpTable *t = NULL;
    rc = op_read(logpath, OPFMT_AUTO, &t, &d);
    assert_int_equal(rc, ERR_OK);
    BindOptions bo = {NULL, pc->top != NULL};
    const char *found = NULL;
    assert_int_equal(bind_run(&ds, t, &bo, &found, &d), ERR_OK);
    assert_string_equal(found, pc->prefix);
    RuleSet *rs = rule_new_defaults(&d);
    assert_non_null(rs);
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    rc = join_run(&ds, t, rs, &jo, &j, &d);
    if (rc != ERR_OK)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    assert_int_equal(j.nmatched, pc->ndev);
    assert_int_equal(j.norphans, 0);
    for (size_t i = 0; i < j.n; i++) {
        const Row *r = &j.rows[i];
        const Device *v = r->dev;
        char ng[80];
        snprintf(ng, sizeof ng, "m.%s", inner[i]);
        assert_string_equal(v->simname, inner[i]); /* the record: the inner device's ngspice name */
        const ShowDev *s = NULL;
        for (size_t k = 0; k < nsv; k++)
            if (!strcmp(sv[k].name, ng))
                s = &sv[k];
        if (!s) {
            print_error("%s: %s is not in ngspice's show table\n", pc->netlist, ng);
            fail();
        }
        /* W, L, m, nf as ngspice sees them (show prints 6 digits) */
        assert_close(v->w, s->w, 1e-5);
        assert_close(v->l, s->l, 1e-5);
        assert_close(v->m, s->m, 1e-5);
        assert_close(v->nf, s->nf, 1e-5);
        /* the figures' inputs equal ngspice's own numbers (print, 15 digits; the show log has 6) */
        static const char *const q[5] = {"id", "gm", "gds", "vdsat", "vth"};
        const double got[5] = {r->fig.id, r->fig.gm, r->fig.gds, r->fig.vdsat, r->fig.vth};
        double ref[5];
        for (int k = 0; k < 5; k++) {
            char vec[128];
            snprintf(vec, sizeof vec, "@m.%s[%s]", inner[i], q[k]);
            ref[k] = printed(text, vec);
            assert_false(isnan(ref[k]));
            /* BSIM4 prints id, vth, vdsat positive for both types (ngspice-op-data.md, section 4) */
            assert_close(got[k], ref[k], 6e-6);
        }
        /* gm/ID and gm/gds are ngspice's numbers divided (the definitions) */
        assert_close(r->fig.gm_id, ref[1] / ref[0], 1.2e-5);
        assert_close(r->fig.gain, ref[1] / ref[2], 1.2e-5);
        assert_int_equal(v->type, i == 2 || i == 3 ? MOS_PMOS : MOS_NMOS);
    }
    fprintf(stderr, "  %-18s %s%-7s %zu devices agree with ngspice (prefix '%s')\n", pc->netlist, pc->top ? "--top " : "",
            pc->top ? pc->top : "", pc->ndev, found);
    join_free(&j);
    rule_free(rs);
    op_free(t);
    free(text);
    done();
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", work);
    assert_int_equal(system(cmd), 0);
}

static void test_lp18_against_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    static const PdkCase cases[] = {
        /* the testbench itself, the library read: primitives named by their X cards */
        {"tb_ota.spice", NULL, "tb_ota.spice", "", 0, 7,
         {"xtop.x1.xm1", "xtop.x1.xm2", "xtop.x1.xm3", "xtop.x1.xm4", "xtop.x1.xm5", "xtop.x1.xm6", "xtop.x1.xm7"}},
        /* the exported cell alone, no library: read from the X cards, the prefix found in the dump */
        {"lp_ota.spice", "lp_ota", "tb_ota.spice", "xtop.x1", 1, 7, {"xm1", "xm2", "xm3", "xm4", "xm5", "xm6", "xm7"}},
        /* the extracted cell alone, and its testbench */
        {"lp_ota_ext.spice", "lp_ota", "tb_ota_ext.spice", "xtop.x1", 1, 7, {"x0", "x1", "x2", "x3", "x4", "x5", "x6"}},
        {"tb_ota_ext.spice", NULL, "tb_ota_ext.spice", "", 0, 7,
         {"xtop.x1.x0", "xtop.x1.x1", "xtop.x1.x2", "xtop.x1.x3", "xtop.x1.x4", "xtop.x1.x5", "xtop.x1.x6"}},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++)
        check_case(&cases[i]);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_type_from_name),  cmocka_unit_test(test_glob_and_specs), cmocka_unit_test(test_classify),
        cmocka_unit_test(test_unchecked_text),  cmocka_unit_test(test_primitive_cells), cmocka_unit_test(test_undefined_cells),
        cmocka_unit_test(test_missing_library), cmocka_unit_test(test_top),            cmocka_unit_test(test_other_devices),
        cmocka_unit_test(test_dialect),         cmocka_unit_test(test_lp18_against_ngspice),
    };
    return cmocka_run_group_tests_name("primitive", tests, NULL, NULL);
}
