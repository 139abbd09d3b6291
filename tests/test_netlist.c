/* test_netlist: the netlist reader from files to the Design: includes, .lib sections, control blocks,
 * models, options, card spans and anchors, and every error it reports, with line and column; and a
 * fault-injection run that fails each allocation of a load in turn.
 * ngspice behaviour quoted here was seen with ngspice 39 on this machine (decks in the comments);
 * card syntax otherwise is SPICE3's (common practice, no source). */
#include "testutil.h"

#include "netlist.h"

static Design ds;
static DiagList d;

static int load(const char *path, const NlOptions *o)
{
    memset(&ds, 0, sizeof ds);
    diag_init(&d);
    NlOptions z = {0, 0, 0};
    return nl_load(path, o ? o : &z, &ds, &d);
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

/* The diagnostic of severity sev whose message holds msg; fails when there is none. */
static const Diag *find_diag(DiagSeverity sev, const char *msg)
{
    for (size_t i = 0; i < d.n; i++)
        if (d.items[i].sev == sev && strstr(d.items[i].msg, msg))
            return &d.items[i];
    print_error("no %s containing '%s'; got:\n", sev == DIAG_ERROR ? "error" : "warning", msg);
    diag_print(&d, stderr, 0, DIAG_NOTE);
    fail();
    return NULL;
}

static const char *basename_of(const char *p)
{
    const char *s = strrchr(p, '/');
    return s ? s + 1 : p;
}

/* ---- reading ---- */

static void test_includes_and_lib(void **state)
{
    (void)state;
    assert_int_equal(load("fixtures/netlist/top.sp", NULL), ERR_OK);
    assert_string_equal(ds.title, "* top.sp: a netlist with includes, a .lib section and a subcircuit (invented values)");
    /* files: the top netlist first, then in reading order */
    assert_int_equal(ds.files.n, 4);
    assert_string_equal(basename_of(ds.files.files[1]->path), "part.inc");
    assert_string_equal(basename_of(ds.files.files[2]->path), "common.inc");
    assert_string_equal(basename_of(ds.files.files[3]->path), "corners.lib");
    /* `.end` ends the top file, not an included one (ngspice 39 reads on after .end in an include) */
    assert_int_equal(ds.ndevs, 4);
    const Device *t = dev("mtop"), *n = dev("xa.mn"), *p = dev("xa.mp"), *i = dev("minc");
    /* .lib tt sets wtt=2u and calls section common for ltt=0.25u */
    assert_close(t->w, 4e-6, 1e-12);
    assert_close(t->l, 0.25e-6, 1e-12);
    assert_close(n->nf, 2, 0);
    assert_int_equal(n->type, MOS_NMOS);
    assert_int_equal(p->type, MOS_PMOS);
    assert_string_equal(n->cell, "inv");
    assert_null(t->cell);
    /* cards: one per M and X card in the text (X cards for primitives), spans and anchors */
    assert_int_equal(ds.ncards, 5);
    const char *top = ds.files.files[0]->text;
    const Card *ct = &ds.cards[t->card], *cn = &ds.cards[n->card];
    assert_int_equal(ct->file, 0);
    assert_int_equal(ct->line, 6);
    assert_int_equal(ct->col, 1);
    assert_memory_equal(top + ct->start, "mtop", 4);
    assert_int_equal(top[ct->end - 1], '\n');
    assert_int_equal(ct->anchor_end, ct->end);
    const char *part = ds.files.files[1]->text;
    assert_int_equal(cn->file, 1);
    assert_int_equal(cn->line, 4);
    assert_memory_equal(part + cn->start, "mn z a", 6);
    assert_memory_equal(part + cn->end - 7, "+ nf=2\n", 7); /* the span covers the continuation */
    /* a card in an included file is anchored after the top-level .include line */
    const char *inc_line = strstr(top, ".include sub/part.inc\n");
    assert_non_null(inc_line);
    assert_int_equal(cn->anchor_end, (size_t)(inc_line - top) + strlen(".include sub/part.inc\n"));
    assert_int_equal(ds.cards[i->card].anchor_end, cn->anchor_end);
    /* models: nmos/pmos kept with their level and overlap capacitances, the diode skipped */
    assert_int_equal(ds.nmodels, 2);
    assert_string_equal(n->mdl->name, "nfix");
    assert_int_equal(n->mdl->level, 14);
    assert_close(n->mdl->cgso, 1.5e-10, 1e-12);
    assert_true(isnan(n->mdl->cgbo));
    assert_int_equal(p->mdl->level, 1);
    /* nets */
    assert_string_equal(nl_nets(&ds, n)[0], "g"); /* mn z a 0 0 in inv a z vdd, called as xa d g vdd inv */
    assert_string_equal(nl_nets(&ds, n)[1], "d");
    assert_string_equal(nl_nets(&ds, n)[2], "0");
    assert_string_equal(nl_nets(&ds, p)[3], "vdd");
    assert_int_equal(d.nerrors, 0);
    done();
}

static void test_cards_and_options(void **state)
{
    (void)state;
    char *path = TU_TMPFILE("cards.sp",
                            "\xEF\xBB\xBF" "Title line\r\n"
                            ".model N NMOS level=1\r\n"
                            ".options temp=50 scale=1e-6\r\n"
                            ".temp 40\r\n"
                            "* comment\r\n"
                            "   M1 D G S B n W=2 L=0.5 ; inline\r\n"
                            "* between\r\n"
                            "+ M=2\r\n"
                            "* after\r\n"
                            "R1 D 0 1k\r\n"
                            ".control\r\n"
                            "m9 d g s b n\r\n"
                            "show m\r\n"
                            ".endc\r\n"
                            "m2 d g s b n w=1 l=1 nf=2\r\n"
                            ".global vdd\r\n"
                            ".end\r\n"
                            "m3 d g s b n\r\n");
    assert_non_null(path);
    assert_int_equal(load(path, NULL), ERR_OK);
    assert_string_equal(ds.title, "Title line");
    /* .temp wins over .options temp whatever the order (ngspice 39: TEMP = 40 in both orders) */
    assert_close(ds.temp_c, 40, 0);
    /* the card in .control is never read, the one after .end neither */
    assert_int_equal(ds.ndevs, 2);
    const Device *m1 = dev("m1");
    /* .options scale multiplies W and L as written (ngspice 39: w=2 scale=1e-6 shows 2e-06) */
    assert_close(m1->w, 2e-6, 1e-12);
    assert_close(m1->l, 0.5e-6, 1e-12);
    assert_close(m1->m, 2, 0);
    assert_string_equal(m1->model, "n");
    assert_string_equal(nl_nets(&ds, m1)[0], "d");
    const Card *c = &ds.cards[m1->card];
    assert_int_equal(c->line, 6);
    assert_int_equal(c->col, 4);
    const char *text = ds.files.files[0]->text;
    assert_memory_equal(text + c->start, "   M1", 5);
    assert_memory_equal(text + c->end - 7, "+ M=2\r\n", 7);
    assert_close(dev("m2")->nf, 2, 0);
    done();
    free(path);
}

static void test_models(void **state)
{
    (void)state;
    char *path = TU_TMPFILE("models.sp", "* models\n"
                                         ".model a nmos(level=54 cgso=2e-10,cgdo=3e-10 cgbo=1e-12)\n"
                                         ".model b pmos ( level = 8 )\n"
                                         ".model c npn bf=100\n"
                                         ".model d.1 nmos level=14 lmin=0 lmax=1 wmin=0 wmax=1\n"
                                         ".model e NMOS\n"
                                         ".model a nmos level=1\n");
    assert_non_null(path);
    assert_int_equal(load(path, NULL), ERR_OK);
    assert_int_equal(ds.nmodels, 4);
    assert_string_equal(ds.models[0].name, "a");
    assert_int_equal(ds.models[0].level, 54);
    assert_close(ds.models[0].cgso, 2e-10, 1e-12);
    assert_close(ds.models[0].cgdo, 3e-10, 1e-12);
    assert_close(ds.models[0].cgbo, 1e-12, 1e-12);
    assert_int_equal(ds.models[1].type, MOS_PMOS);
    assert_int_equal(ds.models[1].level, 8);
    assert_string_equal(ds.models[2].name, "d.1");
    assert_int_equal(ds.models[3].level, 1); /* level 1 when not given */
    assert_int_equal(ds.models[3].card_line, 6);
    const Diag *w = find_diag(DIAG_WARNING, "model 'a' is defined again");
    assert_int_equal(w->loc.line, 7);
    assert_int_equal(w->loc.col, 8);
    done();
    free(path);
}

static void test_warnings(void **state)
{
    (void)state;
    char *path = TU_TMPFILE("warn.sp", "* warnings\n"
                                       "+ orphan\n"
                                       "m1 d g s b nomodel\n"
                                       ".subckt s a params: p=1\n"
                                       ".ends t\n"
                                       "x1 n s q=2\n"
                                       "@ what\n"
                                       ".model dd d\n"
                                       "m2 d g s b dd\n"
                                       ".param a = 1 + 2\n"
                                       ".endc\n");
    assert_non_null(path);
    assert_int_equal(load(path, NULL), ERR_OK);
    assert_int_equal(d.nerrors, 0);
    const Diag *g;
    g = find_diag(DIAG_WARNING, "continuation line with no card before it");
    assert_int_equal(g->loc.line, 2);
    g = find_diag(DIAG_WARNING, "model 'nomodel' is not defined: m1 is kept with an unknown type");
    assert_int_equal(g->loc.line, 3);
    assert_int_equal(g->loc.col, 12);
    assert_int_equal(dev("m1")->type, MOS_UNKNOWN);
    assert_null(dev("m1")->mdl);
    g = find_diag(DIAG_WARNING, "this .ends names 't' but closes subcircuit 's'");
    assert_int_equal(g->loc.col, 7);
    g = find_diag(DIAG_WARNING, "'q' is not a parameter of subcircuit 's' and is ignored");
    assert_int_equal(g->loc.line, 6);
    assert_int_equal(g->loc.col, 8);
    g = find_diag(DIAG_WARNING, "not a SPICE card");
    assert_int_equal(g->loc.line, 7);
    g = find_diag(DIAG_WARNING, "model 'dd' is a d model, not nmos or pmos");
    assert_int_equal(g->loc.line, 9);
    g = find_diag(DIAG_WARNING, "'+' is not part of any value and is ignored");
    assert_int_equal(g->loc.line, 10);
    assert_int_equal(g->loc.col, 14);
    find_diag(DIAG_WARNING, ".endc without .control");
    done();
    free(path);
}

/* A .lib call of the top file itself: its cards stay anchored after themselves; a file included from
 * inside the section is anchored after that .include line of the top file. */
static void test_self_lib(void **state)
{
    (void)state;
    char *inc = TU_TMPFILE("selfinc.inc", "m2 d g s b n\n");
    char *path = TU_TMPFILE("selflib.sp", "* self lib\n"
                                          ".model n nmos\n"
                                          ".lib 'selflib.sp' sec\n"
                                          ".lib sec\n"
                                          "m1 d g s b n\n"
                                          ".include selfinc.inc\n"
                                          ".endl\n");
    assert_non_null(inc);
    assert_non_null(path);
    assert_int_equal(load(path, NULL), ERR_OK);
    assert_int_equal(ds.ncards, 2);
    assert_int_equal(ds.cards[0].file, 0);
    assert_int_equal(ds.cards[0].line, 5);
    assert_int_equal(ds.cards[0].anchor_end, ds.cards[0].end);
    assert_int_equal(ds.cards[1].file, 1);
    const char *top = ds.files.files[0]->text;
    assert_int_equal(ds.cards[1].anchor_end, (size_t)(strstr(top, ".endl") - top));
    assert_int_equal(ds.ndevs, 2);
    done();
    free(inc);
    free(path);
}

/* ---- errors: status, line, column, message ---- */

typedef struct {
    const char *name;
    const char *text;
    unsigned line, col;
    const char *msg;
} ErrRow;

static const ErrRow err_rows[] = {
    {"undefined subcircuit", "* t\nx1 a b nosuch\n", 2, 8, "undefined subcircuit 'nosuch'"},
    {"undefined parameter", "* t\n.model n nmos level=1\nm1 d g s b n w={2*wx}\n", 3, 19, "undefined parameter 'wx'"},
    {"undefined parameter in .param", "* t\n.param a={b+1}\n", 2, 11, "undefined parameter 'b'"},
    {"undefined parameter in a subcircuit default", "* t\n.subckt s a params: p={q}\n.ends\nx1 n s\n", 2, 24,
     "undefined parameter 'q'"},
    {"M with 3 nodes", "* t\n.model n nmos\nm1 d g s n\n", 3, 1, "m1: a MOSFET needs 4 nodes"},
    {"M without a model", "* t\nm1 d g s b w=1u\n", 2, 1, "found 4 names"},
    {"M with 5 nodes", "* t\n.model n nmos\nm1 d g s b e n w=1u\n", 3, 14, "unexpected 'n' after the model name"},
    {"X node count", "* t\n.subckt s a b\n.ends\nx1 n1 s\n", 4, 1, "x1 has 1 node but subcircuit 's' has 2 ports"},
    {"X without a subcircuit name", "* t\nx1 w=1\n", 2, 1, "x1: the subcircuit name is missing"},
    {"subcircuit instantiating itself", "* t\n.subckt s a\nx1 a s\n.ends\nx0 n s\n", 3, 6,
     "subcircuit 's' instantiates itself: s -> s"},
    {"recursion through another", "* t\n.subckt a p\nxb p b\n.ends\n.subckt b p\nxa p a\n.ends\nx0 n a\n", 6, 6,
     "subcircuit 'a' instantiates itself: a -> b -> a"},
    {".subckt without .ends", "* t\n.subckt s a\nr1 a 0 1\n", 2, 1, ".subckt s has no .ends"},
    {".ends without .subckt", "* t\nr1 a 0 1\n.ends\n", 3, 1, ".ends without .subckt"},
    {"bad number", "* t\n.model n nmos\nm1 d g s b n w=1..2u\n", 3, 18, "unexpected '.' after the end of the expression"},
    {"bad expression", "* t\n.model n nmos\nm1 d g s b n w={1+}\n", 3, 19, "the expression ends where a value is expected"},
    {"number out of range", "* t\n.model n nmos\nm1 d g s b n w=1e999\n", 3, 16, "this number is out of range"},
    {"unclosed brace", "* t\n.param a={1+2\n", 2, 10, "this '{' is not closed"},
    {"value missing", "* t\n.model n nmos\nm1 d g s b n w= \n", 3, 17, "a value is missing here"},
    {"unterminated .control", "* t\n.control\nop\n", 2, 1, ".control has no .endc"},
    {"unterminated .lib section", "* t\n.lib tt\n.param a=1\n", 2, 1, "section 'tt' has no .endl"},
    {".endl without .lib", "* t\n.endl\n", 2, 1, ".endl without .lib"},
    {"missing include", "* t\n.include 'nothere.inc'\n", 2, 11, "cannot open"},
    {"unclosed quote", "* t\n.include 'nothere.inc\n", 2, 10, "this quote is not closed"},
    {"parameter cycle", "* t\n.param a={b*2} b={a+1}\n", 2, 19, "parameter 'a' depends on itself"},
    {"duplicate instance name", "* t\n.model n nmos\nm1 d g s b n\nM1 d g s b n\n", 4, 1,
     "instance name 'm1' is used twice (first on line 3)"},
    {"duplicate X name in a subcircuit", "* t\n.subckt s a\nx1 a t\n  X1 a t\n.ends\n.subckt t a\n.ends\nx0 n s\n", 4, 3,
     "instance name 'x1' is used twice (first on line 3) in subcircuit s"},
    {"division by zero", "* t\n.model n nmos\nm1 d g s b n w={1u/0}\n", 3, 19, "not a finite number"},
    {"function in .param", "* t\n.param f(x)=x*2\n", 2, 8, "write it as .func"},
    {".func without parameters", "* t\n.func f {1}\n", 2, 7, ".func needs a name and a parameter list"},
    {"wrong argument count of a .func", "* t\n.func f(x) {x*2}\n.param a={f(1,2)}\n", 3, 11,
     "function 'f' is called with the wrong number of arguments"},
    {"'=' without a name", "* t\n.param =3\n", 2, 8, "'=' without a parameter name"},
    {"subcircuit default without a value", "* t\n.subckt s a p\n.ends\n", 0, 0, NULL}, /* p is a port: fine */
};

static void test_errors(void **state)
{
    (void)state;
    int bad = 0;
    for (size_t i = 0; i < sizeof err_rows / sizeof err_rows[0]; i++) {
        const ErrRow *r = &err_rows[i];
        char name[32];
        snprintf(name, sizeof name, "err%zu.sp", i);
        char *path = tu_tmpfile(name, r->text, strlen(r->text));
        assert_non_null(path);
        int rc = load(path, NULL);
        if (!r->msg) {
            if (rc != ERR_OK) {
                print_error("row '%s': unexpected failure\n", r->name);
                diag_print(&d, stderr, 0, DIAG_NOTE);
                bad++;
            }
            done();
            free(path);
            continue;
        }
        const Diag *hit = NULL;
        for (size_t k = 0; k < d.n && !hit; k++)
            if (d.items[k].sev == DIAG_ERROR && strstr(d.items[k].msg, r->msg))
                hit = &d.items[k];
        if (rc != ERR_INPUT || ds.ndevs || ds.files.n || !hit || hit->loc.line != r->line || hit->loc.col != r->col ||
            strcmp(basename_of(hit->loc.file), name) != 0) {
            print_error("row '%s': rc %d, want %u:%u '%s'; got:\n", r->name, rc, r->line, r->col, r->msg);
            diag_print(&d, stderr, 0, DIAG_NOTE);
            bad++;
        }
        done();
        free(path);
    }
    assert_int_equal(bad, 0);
}

/* One run lists every error, in reading order, and goes on past each. */
static void test_recovery(void **state)
{
    (void)state;
    char *path = TU_TMPFILE("many.sp", "* many errors\n"
                                       ".model n nmos\n"
                                       "m1 d g s n\n"
                                       "m2 d g s b n w={1+}\n"
                                       "x1 a b nosuch\n"
                                       "m3 d g s b n w={zz}\n"
                                       "m4 d g s b n w=1u l=1u\n");
    assert_non_null(path);
    assert_int_equal(load(path, NULL), ERR_INPUT);
    assert_int_equal(d.nerrors, 4);
    assert_int_equal(d.items[0].loc.line, 3);
    assert_int_equal(d.items[1].loc.line, 4);
    assert_int_equal(d.items[2].loc.line, 5);
    assert_int_equal(d.items[3].loc.line, 6);
    assert_non_null(d.items[0].excerpt);
    assert_string_equal(d.items[1].excerpt, "m2 d g s b n w={1+}");
    assert_int_equal(ds.ndevs, 0); /* the Design is freed on error */
    assert_null(ds.devs);
    done();
    free(path);
}

static void test_file_errors(void **state)
{
    (void)state;
    /* include cycle: reported at the line that closes it */
    assert_int_equal(load("fixtures/netlist/cycle_top.sp", NULL), ERR_INPUT);
    const Diag *g = find_diag(DIAG_ERROR, "includes itself (an include cycle)");
    assert_string_equal(basename_of(g->loc.file), "cycle_b.inc");
    assert_int_equal(g->loc.line, 2);
    assert_int_equal(g->loc.col, 10);
    done();
    /* include depth */
    NlOptions o = {0, 2, 0};
    assert_int_equal(load("fixtures/netlist/deep_top.sp", &o), ERR_INPUT);
    g = find_diag(DIAG_ERROR, "files are included more than 2 levels deep");
    assert_string_equal(basename_of(g->loc.file), "deep2.inc");
    assert_int_equal(g->loc.line, 2);
    done();
    assert_int_equal(load("fixtures/netlist/deep_top.sp", NULL), ERR_OK);
    done();
    /* .lib: a missing section, a missing file, a section without .endl */
    assert_int_equal(load("fixtures/netlist/libcall_errors.sp", NULL), ERR_INPUT);
    g = find_diag(DIAG_ERROR, "there is no section 'ss' in");
    assert_int_equal(g->loc.line, 2);
    assert_int_equal(g->loc.col, 24);
    g = find_diag(DIAG_ERROR, "cannot open");
    assert_int_equal(g->loc.line, 3);
    assert_int_equal(g->loc.col, 7);
    g = find_diag(DIAG_ERROR, "section 'tt' has no .endl");
    assert_string_equal(basename_of(g->loc.file), "open.lib");
    assert_int_equal(g->loc.line, 2);
    assert_int_equal(d.nerrors, 3);
    done();
    /* the top file missing */
    assert_int_equal(load("fixtures/netlist/nothere.sp", NULL), ERR_IO);
    find_diag(DIAG_ERROR, "cannot open");
    done();
}

static void test_binary(void **state)
{
    (void)state;
    /* a NUL byte in the top file: it looks binary; the location is the NUL's */
    static const char nul[] = "* t\nm1 d g s b n\nm2 d\0g s b n\n";
    char *path = tu_tmpfile("nul.sp", nul, sizeof nul - 1);
    assert_non_null(path);
    assert_int_equal(load(path, NULL), ERR_INPUT);
    const Diag *g = find_diag(DIAG_ERROR, "looks like a binary file");
    assert_int_equal(g->loc.line, 3);
    assert_int_equal(g->loc.col, 5);
    done();
    free(path);
    /* an included file full of control bytes: the error is at the .include line */
    char junk[300];
    for (size_t i = 0; i < sizeof junk; i++)
        junk[i] = (char)(i % 31 + 1);
    char *bin = tu_tmpfile("junk.bin", junk, sizeof junk);
    assert_non_null(bin);
    path = TU_TMPFILE("incbin.sp", "* t\n.include junk.bin\n");
    assert_int_equal(load(path, NULL), ERR_INPUT);
    g = find_diag(DIAG_ERROR, "looks like a binary file");
    assert_string_equal(basename_of(g->loc.file), "incbin.sp");
    assert_int_equal(g->loc.line, 2);
    assert_int_equal(g->loc.col, 10);
    done();
    free(bin);
    free(path);
}

static void test_limits(void **state)
{
    (void)state;
    char *path = TU_TMPFILE("limits.sp", "* limits\n"
                                         ".model n nmos\n"
                                         ".subckt c1 a\nm1 a a 0 0 n\nm2 a a 0 0 n\n.ends\n"
                                         ".subckt c2 a\nx1 a c1\nx2 a c1\nx3 a c1\n.ends\n"
                                         ".subckt c3 a\nxa a c2\nxb a c2\n.ends\n"
                                         "xtop n c3\n");
    assert_non_null(path);
    /* 2 * 3 * 2 = 12 MOSFETs, counted before anything is expanded */
    NlOptions o = {11, 0, 0};
    assert_int_equal(load(path, &o), ERR_INPUT);
    find_diag(DIAG_ERROR, "the design has 12 MOSFETs once flattened, more than the limit of 11");
    done();
    o.max_devices = 12;
    assert_int_equal(load(path, &o), ERR_OK);
    assert_int_equal(ds.ndevs, 12);
    done();
    /* nesting: top -> xtop (1) -> xa (2) -> x1 (3) */
    NlOptions o2 = {0, 0, 2};
    assert_int_equal(load(path, &o2), ERR_INPUT);
    const Diag *g = find_diag(DIAG_ERROR, "subcircuits are nested more than 2 levels deep here");
    assert_int_equal(g->loc.line, 8);
    done();
    o2.max_subckt_depth = 3;
    assert_int_equal(load(path, &o2), ERR_OK);
    done();
    free(path);
}

/* ---- allocation failures ----
 * malloc, calloc, realloc and free are replaced in this program by versions that call glibc's
 * (__libc_malloc ...) and fail the Nth allocation when asked to, and count live blocks so a leak
 * shows. Not under AddressSanitizer, which has its own allocator. */
#if !defined(__SANITIZE_ADDRESS__)
extern void *__libc_malloc(size_t);
extern void *__libc_calloc(size_t, size_t);
extern void *__libc_realloc(void *, size_t);
extern void __libc_free(void *);

static long fail_at = -1, nalloc;
static long live;

static int failing(void)
{
    return nalloc++ == fail_at;
}

void *malloc(size_t n)
{
    void *p = failing() ? NULL : __libc_malloc(n);
    live += p != NULL;
    return p;
}

void *calloc(size_t a, size_t b)
{
    void *p = failing() ? NULL : __libc_calloc(a, b);
    live += p != NULL;
    return p;
}

void *realloc(void *q, size_t n)
{
    if (failing())
        return NULL;
    void *p = __libc_realloc(q, n);
    if (!q && p)
        live++;
    return p;
}

void free(void *p)
{
    live -= p != NULL;
    __libc_free(p);
}

/* Fail each allocation of a load in turn: a clean ERR_NOMEM (or the normal result when the allocation
 * was optional), the Design empty, nothing leaked. */
static void fail_each(const char *path, int want_rc, size_t want_devs)
{
    /* a clean load, to count its allocations */
    long before = live;
    nalloc = 0;
    memset(&ds, 0, sizeof ds);
    diag_init(&d);
    NlOptions o = {0, 0, 0};
    assert_int_equal(nl_load(path, &o, &ds, &d), want_rc);
    long total = nalloc;
    done();
    assert_int_equal(live, before);
    if (total == 0)
        skip(); /* a tool (valgrind) replaced malloc: these counters see nothing */
    fprintf(stderr, "  %s: failing each of its %ld allocations in turn\n", path, total);
    for (long n = 0; n < total; n++) {
        before = live;
        memset(&ds, 0, sizeof ds);
        diag_init(&d);
        nalloc = 0;
        fail_at = n;
        int rc = nl_load(path, &o, &ds, &d);
        fail_at = -1;
        if (rc == want_rc && !d.oom) {
            assert_int_equal(ds.ndevs, want_devs);
        } else {
            if (rc != ERR_NOMEM || !d.oom) {
                print_error("allocation %ld failed: rc %d, oom %d\n", n, rc, d.oom);
                diag_print(&d, stderr, 0, DIAG_NOTE);
                fail();
            }
            assert_int_equal(ds.ndevs, 0);
            assert_null(ds.names);
        }
        nl_free(&ds);
        diag_free(&d);
        if (live != before) {
            print_error("allocation %ld failed: %ld blocks leaked\n", n, live - before);
            fail();
        }
    }
}

static void test_out_of_memory(void **state)
{
    (void)state;
    fail_each("fixtures/netlist/top.sp", ERR_OK, 4);
    fail_each("fixtures/netlist/libcall_errors.sp", ERR_INPUT, 0);
    fail_each("fixtures/netlist/cycle_top.sp", ERR_INPUT, 0);
    fail_each("circuits-nl/params.sp", ERR_OK, 13);
    fail_each("circuits-nl/bins.sp", ERR_OK, 6);
}
#endif

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_includes_and_lib),
        cmocka_unit_test(test_cards_and_options),
        cmocka_unit_test(test_models),
        cmocka_unit_test(test_warnings),
        cmocka_unit_test(test_self_lib),
        cmocka_unit_test(test_errors),
        cmocka_unit_test(test_recovery),
        cmocka_unit_test(test_file_errors),
        cmocka_unit_test(test_binary),
        cmocka_unit_test(test_limits),
#if !defined(__SANITIZE_ADDRESS__)
        cmocka_unit_test(test_out_of_memory),
#endif
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
