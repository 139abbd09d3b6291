/* test_flatten: the flat MOSFET list: hierarchical names and nets, parameter scoping, m and nf, model
 * bins, default W and L, errors reported once however many instances share them, and, for every
 * netlist in tests/circuits-nl/, a comparison with ngspice itself: ngspice -b runs a deck that
 * includes the circuit, does `op` and `show m : w l m nf`, and the flattened list must hold the same
 * devices with the same W, L, m, nf (and bin model names), its nets must be nodes ngspice has.
 * Expected values in the tables below were printed by ngspice 39 for the same decks with
 * `show m : w l m nf` unless a row says otherwise. */
#include "testutil.h"

#include <dirent.h>
#include <time.h>

#include "buf.h"
#include "netlist.h"

static Design ds;
static DiagList d;
static int quiet; /* the caller expects errors: do not print them */

static int load_text(const char *name, const char *text, const NlOptions *o)
{
    char *path = tu_tmpfile(name, text, strlen(text));
    assert_non_null(path);
    memset(&ds, 0, sizeof ds);
    diag_init(&d);
    NlOptions z = {0, 0, 0};
    int rc = nl_load(path, o ? o : &z, &ds, &d);
    free(path);
    if (rc != ERR_OK && !quiet)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    return rc;
}

static void done(void)
{
    nl_free(&ds);
    diag_free(&d);
}

/* The device of this name, or of this record name (a primitive's inner M card: "x1.xa.m1" for the
 * device "x1.xa"). */
static const Device *dev(const char *name)
{
    for (size_t i = 0; i < ds.ndevs; i++)
        if (strcmp(ds.devs[i].name, name) == 0 || (ds.devs[i].simname && strcmp(ds.devs[i].simname, name) == 0))
            return &ds.devs[i];
    print_error("no device '%s'\n", name);
    fail();
    return NULL;
}

typedef struct {
    const char *name;
    double w, l, m, nf;
} Want;

/* ds holds exactly the devices of want (n of them), with these values (relative 1e-9). */
static void expect(const Want *want, size_t n)
{
    assert_int_equal(ds.ndevs, n);
    for (size_t i = 0; i < n; i++) {
        const Device *v = dev(want[i].name);
        assert_close(v->w, want[i].w, 1e-9);
        assert_close(v->l, want[i].l, 1e-9);
        if (want[i].m)
            assert_close(v->m, want[i].m, 1e-12);
        if (want[i].nf)
            assert_close(v->nf, want[i].nf, 1e-12);
    }
}

#define MODELS ".model nch nmos level=14 version=4.8\n"

/* Dynamic scoping: a subcircuit sees its caller's parameters before the global ones (leaf's q is
 * outer's 3u, not the global 9u); X-card values are evaluated in the caller. */
static void test_scoping(void **state)
{
    (void)state;
    assert_int_equal(load_text("s1.sp",
                               "* scoping\n" MODELS ".param g=1u q=9u\n"
                               ".subckt inner d s params: wi=1u\n"
                               "m1 d d s s nch w={wi} l={q}\n"
                               ".ends\n"
                               ".subckt outer d s params: wo=2u q=3u\n"
                               ".param wo2={wo*2}\n"
                               "xa d s inner wi={wo2}\n"
                               "xb d s inner\n"
                               "m2 d d s s nch w={wo} l={g}\n"
                               ".ends\n"
                               "vd d 0 1\n"
                               "x1 d 0 outer\n"
                               "x2 d 0 outer wo=5u\n",
                               NULL),
                     ERR_OK);
    const Want s1[] = {
        {"x1.xa.m1", 4e-6, 3e-6, 1, 1}, {"x1.xb.m1", 1e-6, 3e-6, 1, 1}, {"x1.m2", 2e-6, 1e-6, 1, 1},
        {"x2.xa.m1", 10e-6, 3e-6, 1, 1}, {"x2.xb.m1", 1e-6, 3e-6, 1, 1}, {"x2.m2", 5e-6, 1e-6, 1, 1},
    };
    expect(s1, 6);
    done();

    /* a .param in the body shadows the global one; the last definition of a name wins; a default
       may use another default; an X-card value replaces a .param of the body (ngspice 39: lp=4u) */
    assert_int_equal(load_text("s2.sp",
                               "* shadowing\n" MODELS ".param g=1u\n.param dup=1u\n.param dup=2u\n"
                               ".subckt inner d s wi=1u li={wi*2}\n"
                               "m1 d d s s nch w={wi} l={li}\n"
                               ".ends\n"
                               ".subckt outer d s params: wo=2u\n"
                               ".param g=7u\n"
                               "xa d s inner wi={wo}\n"
                               "m2 d d s s nch w={g} l={dup}\n"
                               ".ends\n"
                               ".subckt body d s wi=1u\n"
                               ".param lp=2u\n"
                               "m1 d d s s nch w={wi} l={lp}\n"
                               ".ends\n"
                               "vd d 0 1\n"
                               "x1 d 0 outer\n"
                               "x2 d 0 inner li=4u\n"
                               "x3 d 0 body lp=4u\n"
                               "x4 d 0 body\n",
                               NULL),
                     ERR_OK);
    const Want s2[] = {
        {"x1.xa.m1", 2e-6, 4e-6, 1, 1}, {"x1.m2", 7e-6, 2e-6, 1, 1}, {"x2.m1", 1e-6, 4e-6, 1, 1},
        {"x3.m1", 1e-6, 4e-6, 1, 1}, {"x4.m1", 1e-6, 2e-6, 1, 1},
    };
    expect(s2, 5);
    done();

    /* forward references among .param cards work (ngspice sorts them); bare names on M cards are
       parameters (ngspice 39: w=wp, w = 1u and w=wq all accepted) */
    assert_int_equal(load_text("s3.sp",
                               "* forward\n" MODELS ".param wp=2u lp = 3u\n"
                               ".param wq='wp*2' wr={wp*3}\n"
                               ".param fwd={later*2}\n"
                               ".param later=1u\n"
                               "m1 d d 0 0 nch w=wp l=lp\n"
                               "m2 d d 0 0 nch w = 1u l = {lp}\n"
                               "m3 d d 0 0 nch w=wq l=wr\n"
                               "m4 d d 0 0 nch w=fwd l='-2^2*(-1u)'\n"
                               "m5 d d 0 0 nch w={log(100)*1u} l={log10(100)*1u}\n"
                               "m6 d d 0 0 nch w={2**3*1u} l={pwr(-2,2)*1u}\n"
                               "m7 d d 0 0 nch w=-wp*-1 l=1mil\n",
                               NULL),
                     ERR_OK);
    const Want s3[] = {
        {"m1", 2e-6, 3e-6, 1, 1},         {"m2", 1e-6, 3e-6, 1, 1}, {"m3", 4e-6, 6e-6, 1, 1},
        {"m4", 2e-6, 4e-6, 1, 1},         {"m5", 4.60517e-6, 2e-6, 1, 1},
        {"m6", 8e-6, 4e-6, 1, 1},
        {"m7", 2e-6, 25.4e-6, 1, 1}, /* w=1mil on an M card is 2.54e-05 in ngspice 39 */
    };
    assert_int_equal(ds.ndevs, 7); /* compared to 1e-5: ngspice prints 6 digits (m5: 4.60517e-06) */
    for (size_t i = 0; i < 7; i++) {
        const Device *v = dev(s3[i].name);
        assert_close(v->w, s3[i].w, 1e-5);
        assert_close(v->l, s3[i].l, 1e-9);
    }
    done();
}

static void test_nets(void **state)
{
    (void)state;
    assert_int_equal(load_text("nets.sp",
                               "* nets\n" MODELS ".global vdd\n"
                               ".subckt leaf a b\n"
                               "m1 a b int 0 nch\n"
                               "m2 int gnd vdd Mixed nch\n"
                               ".ends\n"
                               ".subckt mid p\n"
                               "xl p inner leaf\n"
                               "m3 inner p 0 vdd nch\n"
                               ".ends\n"
                               "XTOP Top mid\n"
                               "mz Top Top gnd 0 nch\n",
                               NULL),
                     ERR_OK);
    /* names: case-folded, '.'-separated, instance letters kept */
    const Device *m1 = dev("xtop.xl.m1"), *m2 = dev("xtop.xl.m2"), *m3 = dev("xtop.m3"), *mz = dev("mz");
    /* ports take the outer net; internal nets get the instance path; 0, gnd and .global nets stay
       as they are (ngspice 39: `print all` shows x1.tail and x1.mixed, and a subcircuit's gnd is
       the ground node) */
    assert_string_equal(nl_nets(&ds, m1)[0], "top");
    assert_string_equal(nl_nets(&ds, m1)[1], "xtop.inner");
    assert_string_equal(nl_nets(&ds, m1)[2], "xtop.xl.int");
    assert_string_equal(nl_nets(&ds, m1)[3], "0");
    assert_string_equal(nl_nets(&ds, m2)[0], "xtop.xl.int");
    assert_string_equal(nl_nets(&ds, m2)[1], "gnd");
    assert_string_equal(nl_nets(&ds, m2)[2], "vdd");
    assert_string_equal(nl_nets(&ds, m2)[3], "xtop.xl.mixed");
    assert_string_equal(nl_nets(&ds, m3)[0], "xtop.inner");
    assert_string_equal(nl_nets(&ds, mz)[2], "gnd");
    /* interned: equal names are equal pointers */
    assert_ptr_equal(nl_nets(&ds, m1)[2], nl_nets(&ds, m2)[0]);
    assert_ptr_equal(nl_nets(&ds, m1)[1], nl_nets(&ds, m3)[0]);
    assert_string_equal(m1->cell, "leaf");
    assert_string_equal(m3->cell, "mid");
    assert_null(mz->cell);
    /* one card per M and X card in the text, shared by every instance */
    assert_int_equal(ds.ncards, 6);
    done();
}

/* m follows ngspice 39, not a product through the levels (DEVELOPERS.md, "Decisions"): an X card
 * with m= gives its subcircuit a parameter m, and every card of that subcircuit then takes the m of
 * the X card that calls it, its own m being replaced; an X card inside such a subcircuit passes its
 * caller's m on. Values printed by ngspice 39 (`show m : m nf`) for this deck; test_against_ngspice
 * runs more cases (circuits-nl/mnest.sp). */
static void test_multiplier(void **state)
{
    (void)state;
    assert_int_equal(load_text("mult.sp",
                               "* m\n" MODELS ".param k=2\n"
                               ".subckt np d s\n"
                               "m1 d d s s nch w=1u l=1u m=2\n"
                               "m0 d d s s nch w=1u l=1u\n"
                               ".ends\n"
                               ".subckt nest d s\n"
                               "xa d s np m={k+1}\n"
                               ".ends\n"
                               "xa d 0 np\n"
                               "xb d 0 np m=3\n"
                               "xe d 0 nest m=5\n"
                               "mt d d 0 0 nch w=1u l=1u m=4 nf=3\n",
                               NULL),
                     ERR_OK);
    const Want w[] = {
        {"xa.m1", 1e-6, 1e-6, 1, 1},  {"xa.m0", 1e-6, 1e-6, 1, 1},  {"xb.m1", 1e-6, 1e-6, 3, 1},
        {"xb.m0", 1e-6, 1e-6, 3, 1},  {"xe.xa.m1", 1e-6, 1e-6, 5, 1}, {"xe.xa.m0", 1e-6, 1e-6, 5, 1},
        {"mt", 1e-6, 1e-6, 4, 3},
    };
    expect(w, 7);
    /* m1's own m=2 is lost (ngspice gives 1 for xa, 3 for xb): said once, at m1's card; xa inside nest
       has m={k+1} and gets xe's 5 instead: said at xa's card */
    assert_int_equal(d.nwarnings, 2);
    int seen_card = 0, seen_x = 0;
    for (size_t i = 0; i < d.n; i++) {
        if (strstr(d.items[i].msg, "ngspice gives xa.m1 m=1, not the m=2 its card asks for") && d.items[i].loc.line == 5)
            seen_card = 1;
        if (strstr(d.items[i].msg, "ngspice gives xa m=5, not the m=3 written on it") && d.items[i].loc.line == 9)
            seen_x = 1;
    }
    assert_true(seen_card && seen_x);
    done();
}

/* Bins: nch.1 .. nch.3 by L and W, a boundary belongs to the first bin (in card order) that covers it,
 * W is the total width (not per finger), m does not matter (ngspice 39 chose the bins named here). */
static void test_bins(void **state)
{
    (void)state;
    assert_int_equal(load_text("bins.sp",
                               "* bins\n"
                               ".model nch.1 nmos level=14 version=4.8 lmin=0.1u lmax=1u wmin=0.1u wmax=10u\n"
                               ".model nch.2 nmos level=14 version=4.8 lmin=1u lmax=10u wmin=0.1u wmax=10u\n"
                               ".model nch.3 nmos level=14 version=4.8 lmin=0.1u lmax=10u wmin=10u wmax=100u\n"
                               "m1 d d 0 0 nch w=1u l=0.5u\n"
                               "m2 d d 0 0 nch w=1u l=1u\n"
                               "m3 d d 0 0 nch w=1u l=2u\n"
                               "m4 d d 0 0 nch w=20u l=2u nf=4\n"
                               "m5 d d 0 0 nch w=10u l=2u\n"
                               "m6 d d 0 0 nch w=10u l=2u nf=2\n"
                               "m7 d d 0 0 nch w=20u l=2u m=4\n"
                               "m8 d d 0 0 nch.2 w=1u l=0.5u\n"
                               "m9 d d 0 0 nch w=200u l=1u\n",
                               NULL),
                     ERR_OK);
    const char *want[][2] = {{"m1", "nch.1"}, {"m2", "nch.1"}, {"m3", "nch.2"}, {"m4", "nch.3"}, {"m5", "nch.2"},
                             {"m6", "nch.2"}, {"m7", "nch.3"}, {"m8", "nch.2"}};
    for (size_t i = 0; i < sizeof want / sizeof want[0]; i++) {
        const Device *v = dev(want[i][0]);
        assert_non_null(v->mdl);
        assert_string_equal(v->mdl->name, want[i][1]);
        assert_int_equal(v->type, MOS_NMOS);
    }
    assert_string_equal(dev("m1")->model, "nch"); /* the name as written */
    /* no bin covers W=200u: the type is unknown, with a warning at the model name */
    assert_null(dev("m9")->mdl);
    assert_int_equal(dev("m9")->type, MOS_UNKNOWN);
    assert_int_equal(d.nwarnings, 1);
    assert_non_null(strstr(d.items[0].msg, "no bin of model 'nch' covers W=0.0002 L=1e-06"));
    assert_int_equal(d.items[0].loc.line, 13);
    assert_int_equal(d.items[0].loc.col, 12);
    done();

    /* bounds are compared within 1e-15 (ngspice 39: l=0.9999999999u still picks a bin with lmin=1u) */
    assert_int_equal(load_text("bins2.sp",
                               "* bins, other order\n"
                               ".model nch.2 nmos level=14 lmin=1u lmax=10u wmin=0.1u wmax=10u\n"
                               ".model nch.1 nmos level=14 lmin=0.1u lmax=1u wmin=0.1u wmax=10u\n"
                               "m2 d d 0 0 nch w=1u l=1u\n"
                               "m3 d d 0 0 nch w=1u l=1.0000000001u\n"
                               "m4 d d 0 0 nch w=1u l=0.9999999999u\n",
                               NULL),
                     ERR_OK);
    assert_string_equal(dev("m2")->mdl->name, "nch.2");
    assert_string_equal(dev("m3")->mdl->name, "nch.2");
    assert_string_equal(dev("m4")->mdl->name, "nch.2");
    done();
}

/* W and L absent: BSIM3/BSIM4 (and the other levels ngspice 39 has) use 5u, HiSIM_HV 5u and 2u,
 * levels 1 2 3 6 9 use .options defw/defl (100u when not given). .options scale applies to the
 * values written on the card only. */
static void test_defaults(void **state)
{
    (void)state;
    assert_int_equal(load_text("def.sp",
                               "* defaults\n"
                               ".model b4 nmos level=14 version=4.8\n"
                               ".model b3 nmos level=49\n"
                               ".model l1 nmos level=1\n"
                               ".model l3 nmos level=3\n"
                               ".model hv nmos level=73\n"
                               ".model none nmos\n"
                               "m1 d d 0 0 b4\n"
                               "m2 d d 0 0 b3\n"
                               "m3 d d 0 0 l1\n"
                               "m4 d d 0 0 l3 l=1u\n"
                               "m5 d d 0 0 hv\n"
                               "m6 d d 0 0 none\n"
                               "m7 d d 0 0 b4 l=1u\n",
                               NULL),
                     ERR_OK);
    const Want w[] = {
        {"m1", 5e-6, 5e-6, 1, 1}, {"m2", 5e-6, 5e-6, 1, 1}, {"m3", 100e-6, 100e-6, 1, 1}, {"m4", 100e-6, 1e-6, 1, 1},
        {"m5", 5e-6, 2e-6, 1, 1}, {"m6", 100e-6, 100e-6, 1, 1}, {"m7", 5e-6, 1e-6, 1, 1},
    };
    expect(w, 7);
    done();
    assert_int_equal(load_text("def2.sp",
                               "* defaults with options\n"
                               ".options scale=0.5 defw=8u\n"
                               ".model b4 nmos level=14 version=4.8\n"
                               ".model l1 nmos level=1\n"
                               "m1 d d 0 0 b4\n"
                               "m2 d d 0 0 l1\n"
                               "m3 d d 0 0 l1 w=2u l=2u\n",
                               NULL),
                     ERR_OK);
    const Want w2[] = {{"m1", 5e-6, 5e-6, 1, 1}, {"m2", 8e-6, 100e-6, 1, 1}, {"m3", 1e-6, 1e-6, 1, 1}};
    expect(w2, 3);
    done();
    /* two .option scale cards: ngspice 39 keeps the first (w=2u shows as 4e-06 with scale=2 then
       scale=0.5, 1e-06 the other way round), while the last temp, defw and defl win */
    assert_int_equal(load_text("def3.sp",
                               "* two scales\n"
                               ".model l1 nmos level=1\n"
                               ".option scale=2 defw=3u\n"
                               "m1 d d 0 0 l1 w=2u l=1u\n"
                               "m2 d d 0 0 l1\n"
                               ".options scale=0.5 defw=7u\n",
                               NULL),
                     ERR_OK);
    const Want w3[] = {{"m1", 4e-6, 2e-6, 1, 1}, {"m2", 7e-6, 100e-6, 1, 1}};
    expect(w3, 2);
    assert_int_equal(d.nwarnings, 1);
    assert_non_null(strstr(d.items[0].msg, "a second .option scale is ignored, as ngspice 39 uses the first"));
    assert_int_equal(d.items[0].loc.line, 6);
    assert_int_equal(d.items[0].loc.col, 10);
    done();
}

/* An error in a subcircuit instantiated a thousand times is reported once, at its place. */
static void test_error_once(void **state)
{
    (void)state;
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "* once\n.model n nmos\n.subckt c a\nm1 a a 0 0 n w={nosuch*2}\n.ends\n"), ERR_OK);
    for (int i = 0; i < 1000; i++)
        assert_int_equal(buf_printf(&b, "x%d n%d c\n", i, i), ERR_OK);
    quiet = 1;
    assert_int_equal(load_text("once.sp", b.data, NULL), ERR_INPUT);
    quiet = 0;
    assert_int_equal(d.nerrors, 1);
    assert_int_equal(d.items[0].loc.line, 4);
    assert_int_equal(d.items[0].loc.col, 17);
    assert_string_equal(d.items[0].msg, "undefined parameter 'nosuch'");
    done();
    buf_free(&b);
}

/* A bigger hierarchy: 300 instances of a cell of 300 MOSFETs whose width depends on an instance
 * parameter, flattened in order with the right names, nets and values. */
static void test_big_hierarchy(void **state)
{
    (void)state;
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "* big\n.model n nmos level=14\n.param wn=1u\n.subckt cell a vdd params: k=1\n"), ERR_OK);
    for (int i = 0; i < 300; i++)
        assert_int_equal(buf_printf(&b, "m%d n%d n%d a vdd n w={wn*k} l=0.1u nf=2\n", i, i, (i + 1) % 300), ERR_OK);
    assert_int_equal(buf_puts(&b, ".ends\n"), ERR_OK);
    for (int j = 0; j < 300; j++)
        assert_int_equal(buf_printf(&b, "x%d a%d vdd cell k=%d\n", j, j, 1 + j % 4), ERR_OK);
    struct timespec t0, t1;
    clock_gettime(CLOCK_MONOTONIC, &t0);
    assert_int_equal(load_text("big.sp", b.data, NULL), ERR_OK);
    clock_gettime(CLOCK_MONOTONIC, &t1);
    fprintf(stderr, "  90000 MOSFETs in %.3f s\n", (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec));
    assert_int_equal(ds.ndevs, 90000);
    assert_int_equal(ds.ncards, 600); /* 300 M cards, 300 X cards */
    const Device *v = &ds.devs[300 * 17 + 42];
    assert_string_equal(v->name, "x17.m42");
    assert_string_equal(nl_nets(&ds, v)[0], "x17.n42");
    assert_string_equal(nl_nets(&ds, v)[1], "x17.n43");
    assert_string_equal(nl_nets(&ds, v)[2], "a17");
    assert_string_equal(nl_nets(&ds, v)[3], "vdd");
    assert_close(v->w, 2e-6, 1e-12); /* k = 1 + 17 % 4 = 2 */
    assert_close(v->nf, 2, 0);
    assert_int_equal(v->card, 42);
    done();
    buf_free(&b);
}

/* ---- against ngspice ---------------------------------------------------------------------------- */

typedef struct {
    char name[32];   /* as ngspice prints it, cut to 21 characters */
    char model[32];
    double w, l, m, nf;
} NgDev;

typedef struct {
    NgDev *v;
    size_t n, cap;
} NgList;

static NgDev *ng_find(NgList *g, const char *name)
{
    for (size_t i = 0; i < g->n; i++)
        if (strcmp(g->v[i].name, name) == 0)
            return &g->v[i];
    return NULL;
}

/* Parse the `show m : w l m nf` tables of ngspice's stdout: per block a `device` row, a `model` row,
 * then one row per parameter; `?????????` (a parameter the model lacks, nf of level 1) reads as NaN. */
static void parse_show(const char *out, NgList *g)
{
    char names[16][32];
    int nnames = 0;
    for (const char *p = out; *p;) {
        const char *e = strchr(p, '\n');
        size_t len = e ? (size_t)(e - p) : strlen(p);
        char line[1024];
        if (len >= sizeof line)
            len = sizeof line - 1;
        memcpy(line, p, len);
        line[len] = '\0';
        p += len + (e ? 1 : 0);
        char *save, *tok = strtok_r(line, " \t\r", &save);
        if (!tok)
            continue;
        if (strcmp(tok, "device") == 0) {
            nnames = 0;
            while ((tok = strtok_r(NULL, " \t\r", &save)) && nnames < 16) {
                snprintf(names[nnames++], 32, "%s", tok);
                if (!ng_find(g, tok)) {
                    if (g->n == g->cap) {
                        g->cap = g->cap ? 2 * g->cap : 16;
                        g->v = realloc(g->v, g->cap * sizeof *g->v);
                        assert_non_null(g->v);
                    }
                    NgDev *v = &g->v[g->n++];
                    memset(v, 0, sizeof *v);
                    snprintf(v->name, sizeof v->name, "%s", tok);
                    v->w = v->l = v->m = v->nf = NAN;
                }
            }
            continue;
        }
        int col = 0;
        const char *label = tok;
        if (strcmp(label, "model") && strcmp(label, "w") && strcmp(label, "l") && strcmp(label, "m") &&
            strcmp(label, "nf"))
            continue;
        while ((tok = strtok_r(NULL, " \t\r", &save)) && col < nnames) {
            NgDev *v = ng_find(g, names[col++]);
            if (!strcmp(label, "model")) {
                snprintf(v->model, sizeof v->model, "%s", tok);
                continue;
            }
            double x = tok[0] == '?' ? NAN : strtod(tok, NULL);
            if (!strcmp(label, "w"))
                v->w = x;
            else if (!strcmp(label, "l"))
                v->l = x;
            else if (!strcmp(label, "m"))
                v->m = x;
            else
                v->nf = x;
        }
    }
}

/* 1 when ngspice printed a vector of this name in `print all` ("name = value"). */
static int has_node(const char *out, const char *name)
{
    size_t n = strlen(name);
    for (const char *p = out; (p = strstr(p, name)); p += n)
        if ((p == out || p[-1] == '\n') && strncmp(p + n, " = ", 3) == 0)
            return 1;
    return 0;
}

static void compare_with_ngspice(const char *dir, const char *file)
{
    char path[600], cwd[512];
    assert_non_null(getcwd(cwd, sizeof cwd));
    snprintf(path, sizeof path, "%s/%s/%s", cwd, dir, file);
    NlOptions o = {0, 0, 0};
    memset(&ds, 0, sizeof ds);
    diag_init(&d);
    int rc = nl_load(path, &o, &ds, &d);
    if (rc != ERR_OK)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    /* no warnings but those saying that ngspice replaced an m (circuits-nl/mnest.sp) */
    for (size_t i = 0; i < d.n; i++)
        if (d.items[i].sev == DIAG_WARNING && strncmp(d.items[i].msg, "ngspice gives ", 14) != 0) {
            print_error("%s: unexpected warning: %s\n", file, d.items[i].msg);
            fail();
        }

    char work[] = "/tmp/biaslint-flat-XXXXXX";
    assert_non_null(mkdtemp(work));
    char deck[600], out[600], err[600], cmd[2400];
    snprintf(deck, sizeof deck, "%s/deck.cir", work);
    snprintf(out, sizeof out, "%s/out.txt", work);
    snprintf(err, sizeof err, "%s/err.txt", work);
    FILE *fp = fopen(deck, "w");
    assert_non_null(fp);
    fprintf(fp, "* wrapper for %s\n.include %s\n.control\nset width=200\nop\nshow m : w l m nf\nprint all\nquit\n.endc\n.end\n",
            file, path);
    fclose(fp);
    /* run from the circuit's folder: ngspice 39 looks for .lib files from the working folder */
    snprintf(cmd, sizeof cmd, "cd '%s/%s' && ngspice -b '%s' >'%s' 2>'%s'", cwd, dir, deck, out, err);
    assert_int_equal(system(cmd), 0);
    char *text = tu_slurp(out, NULL);
    assert_non_null(text);
    NgList g = {NULL, 0, 0};
    parse_show(text, &g);
    if (g.n != ds.ndevs) {
        print_error("%s: ngspice shows %zu MOSFETs, biaslint has %zu\n", file, g.n, ds.ndevs);
        fail();
    }
    for (size_t i = 0; i < ds.ndevs; i++) {
        const Device *v = &ds.devs[i];
        const char *sn = v->simname ? v->simname : v->name; /* a primitive's record: its inner M card */
        char ng[80];
        snprintf(ng, sizeof ng, strchr(sn, '.') ? "m.%s" : "%s", sn);
        ng[21] = '\0'; /* show cuts names to 21 characters */
        NgDev *r = ng_find(&g, ng);
        if (!r) {
            print_error("%s: %s is not in ngspice's table\n", file, ng);
            fail();
        }
        assert_close(v->w, r->w, 1e-5);
        assert_close(v->l, r->l, 1e-5);
        assert_close(v->m, r->m, 1e-5);
        assert_close(v->nf, isnan(r->nf) ? 1.0 : r->nf, 1e-5); /* level 1 has no nf: biaslint says 1 */
        assert_non_null(v->mdl);
        assert_string_equal(v->mdl->name, r->model);
        /* every net biaslint names is a node ngspice has (ground aside) */
        for (int k = 0; k < 4; k++)
            if (strcmp(nl_nets(&ds, v)[k], "0") && strcmp(nl_nets(&ds, v)[k], "gnd") && !has_node(text, nl_nets(&ds, v)[k])) {
                print_error("%s: net %s of %s is not a node in ngspice\n", file, nl_nets(&ds, v)[k], v->name);
                fail();
            }
    }
    fprintf(stderr, "  %-14s %3zu MOSFETs agree with ngspice\n", file, ds.ndevs);
    free(g.v);
    free(text);
    done();
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", work);
    assert_int_equal(system(cmd), 0);
}

static void test_against_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    DIR *dir = opendir("circuits-nl");
    assert_non_null(dir);
    struct dirent *e;
    int n = 0;
    while ((e = readdir(dir))) {
        size_t len = strlen(e->d_name);
        if (len > 3 && strcmp(e->d_name + len - 3, ".sp") == 0) {
            compare_with_ngspice("circuits-nl", e->d_name);
            n++;
        }
    }
    closedir(dir);
    assert_true(n >= 8);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_scoping),     cmocka_unit_test(test_nets),        cmocka_unit_test(test_multiplier),
        cmocka_unit_test(test_bins),        cmocka_unit_test(test_defaults),    cmocka_unit_test(test_error_once),
        cmocka_unit_test(test_big_hierarchy), cmocka_unit_test(test_against_ngspice),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
