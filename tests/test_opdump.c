/* test_opdump: the shared part of the dump readers: quantity names, canonical names, number
 * conversion (checked bit for bit against the C library's strtod), records, format detection and
 * op_read's contract (empty, unreadable and unrecognised files; nothing left allocated on failure). */
#include "testutil.h"

#include <stdbool.h>
#include <stdint.h>

#include "opdump.h"

static const Diag *first_sev(const DiagList *d, DiagSeverity sev)
{
    for (size_t i = 0; i < d->n; i++)
        if (d->items[i].sev == sev)
            return &d->items[i];
    return NULL;
}

/* ---- quantity names ---- */

static void test_qty_lookup(void **state)
{
    (void)state;
    static const struct {
        const char *s;
        int all, ngspice;
    } rows[] = {
        {"id", OPQ_ID, OPQ_ID},       {"GM", OPQ_GM, OPQ_GM},         {"gds", OPQ_GDS, OPQ_GDS},
        {"gmbs", OPQ_GMBS, OPQ_GMBS}, {"gmb", OPQ_GMBS, OPQ_GMBS},     {"Vth", OPQ_VTH, OPQ_VTH},
        {"von", OPQ_VON, OPQ_VON},    {"vdsat", OPQ_VDSAT, OPQ_VDSAT}, {"cgg", OPQ_CGG, OPQ_CGG},
        {"nf", OPQ_NF, OPQ_NF},       {"ids", OPQ_ID, -1},             {"VT", OPQ_VTH, -1},
        {"width", OPQ_W, -1},         {"length", OPQ_L, -1},           {"mult", OPQ_M, -1},
        {"vsb", -1, -1}, /* negated alias: the CSV reader's own */
        {"vov", -1, -1},              {"", -1, -1},                    {"gmx", -1, -1},
        {"i", -1, -1},                {"idd", -1, -1},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        assert_int_equal(op_qty_lookup(rows[i].s, strlen(rows[i].s)), rows[i].all);
        assert_int_equal(op_qty_lookup_ngspice(rows[i].s, strlen(rows[i].s)), rows[i].ngspice);
    }
    /* every name of the table finds itself (ORDER OPQ) */
    for (int q = 0; q < OPQ_COUNT; q++)
        assert_int_equal(op_qty_lookup(op_qty_name[q], strlen(op_qty_name[q])), q);
    /* length is honoured: "gmbs" cut to 2 is "gm" */
    assert_int_equal(op_qty_lookup("gmbs", 2), OPQ_GM);
}

static void test_canonical(void **state)
{
    (void)state;
    static const struct {
        const char *in, *out;
    } rows[] = {
        {"m.x1.m3", "x1.m3"},     {"mn1", "mn1"},           {"@m.x1.m3", "x1.m3"}, {"@mn1", "mn1"},
        {"M.X1.M3", "X1.M3"},     {"m.xb.x1.mn1", "xb.x1.mn1"}, {"x1.m3", "x1.m3"}, {"m.", "m."},
        {"m.x", "x"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        const char *cs;
        size_t cn;
        op_canonical(rows[i].in, strlen(rows[i].in), &cs, &cn);
        assert_int_equal(cn, strlen(rows[i].out));
        assert_memory_equal(cs, rows[i].out, cn);
    }
}

/* ---- numbers ---- */

static void test_number_grammar(void **state)
{
    (void)state;
    static const struct {
        const char *s;
        int st;
        double v;
    } rows[] = {
        {"1", OPNUM_OK, 1.0},
        {"+1.5e-3", OPNUM_OK, 1.5e-3},
        {".5", OPNUM_OK, 0.5},
        {"5.", OPNUM_OK, 5.0},
        {"6.76595e-06", OPNUM_OK, 6.76595e-06},
        {"0.00016138", OPNUM_OK, 0.00016138},
        {"5.371256882220387e-01", OPNUM_OK, 5.371256882220387e-01},
        {"-8.170074291776479e-05", OPNUM_OK, -8.170074291776479e-05},
        {"1E3", OPNUM_OK, 1000.0},
        {"1e-400", OPNUM_OK, 0.0}, /* underflow: the nearest double */
        {"1e400", OPNUM_RANGE, 0},
        {"-1e309", OPNUM_RANGE, 0},
        {"nan", OPNUM_NONFINITE, 0},
        {"-nan", OPNUM_NONFINITE, 0},
        {"Inf", OPNUM_NONFINITE, 0},
        {"-Infinity", OPNUM_NONFINITE, 0},
        {"", OPNUM_SYNTAX, 0},
        {"-", OPNUM_SYNTAX, 0},
        {".", OPNUM_SYNTAX, 0},
        {"e5", OPNUM_SYNTAX, 0},
        {"1e", OPNUM_SYNTAX, 0},
        {"1e+", OPNUM_SYNTAX, 0},
        {"--1", OPNUM_SYNTAX, 0},
        {"1.2u", OPNUM_SYNTAX, 0}, /* no SI suffixes in dumps */
        {"1meg", OPNUM_SYNTAX, 0},
        {"0x1p3", OPNUM_SYNTAX, 0}, /* strtod would take it */
        {" 1", OPNUM_SYNTAX, 0},
        {"1 ", OPNUM_SYNTAX, 0},
        {"1.0.0", OPNUM_SYNTAX, 0},
        {"?????????", OPNUM_SYNTAX, 0},
        {"nanx", OPNUM_SYNTAX, 0},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        double v = -12345.0;
        int st = op_parse_number(rows[i].s, strlen(rows[i].s), &v);
        if (st != rows[i].st)
            print_error("row '%s': status %d, expected %d\n", rows[i].s, st, rows[i].st);
        assert_int_equal(st, rows[i].st);
        if (st == OPNUM_OK)
            assert_true(v == rows[i].v);
    }
    double z;
    assert_int_equal(op_parse_number("-0", 2, &z), OPNUM_OK);
    assert_true(z == 0.0 && signbit(z)); /* ngspice prints PMOS vbs as -0 */
    /* the length bounds the text: "12" of "123" */
    assert_int_equal(op_parse_number("123", 2, &z), OPNUM_OK);
    assert_true(z == 12.0);
}

static uint64_t rng_state = 0x9e3779b97f4a7c15ull;
static uint64_t rnd(void) /* xorshift64*: Vigna, "An experimental exploration of Marsaglia's xorshift generators" */
{
    rng_state ^= rng_state >> 12;
    rng_state ^= rng_state << 25;
    rng_state ^= rng_state >> 27;
    return rng_state * 2685821657736338717ull;
}

static void same_as_strtod(const char *s)
{
    double a, b = strtod(s, NULL);
    int st = op_parse_number(s, strlen(s), &a);
    if (isinf(b)) {
        assert_int_equal(st, OPNUM_RANGE);
        return;
    }
    if (st != OPNUM_OK || memcmp(&a, &b, sizeof a) != 0) {
        print_error("'%s': got %.17g (status %d), strtod %.17g\n", s, a, st, b);
        fail();
    }
}

/* The fast path must give exactly what a correctly rounding strtod gives (glibc's is; the exactness
 * argument is Clinger's, "How to Read Floating Point Numbers Accurately", PLDI 1990). Checked bit for
 * bit on the forms the dumps use and on random digit strings. */
static void test_number_exact(void **state)
{
    (void)state;
    char s[64];
    static const char *const fmts[] = {"%.15e", "%g", "%.6g", "%.17g", "%.3e", "%.16e", "%.9g"};
    for (int i = 0; i < 300000; i++) {
        uint64_t bits = rnd();
        double v;
        if (i % 3 == 0) {
            memcpy(&v, &bits, sizeof v); /* any double */
            if (!isfinite(v))
                continue;
        } else { /* a spread of magnitudes like device values: 1e-20 .. 1e5 */
            v = ldexp((double)(bits >> 11) / 9007199254740992.0 + 0.5, (int)(rnd() % 83) - 66);
            if (bits & 1)
                v = -v;
        }
        for (size_t f = 0; f < sizeof fmts / sizeof fmts[0]; f++) {
            snprintf(s, sizeof s, fmts[f], v);
            same_as_strtod(s);
        }
    }
    for (int i = 0; i < 300000; i++) { /* random digits and exponents, including > 19 digits */
        int nd = 1 + (int)(rnd() % 24), dot = (int)(rnd() % (uint64_t)(nd + 1)), k = 0;
        if (rnd() & 1)
            s[k++] = '-';
        for (int j = 0; j < nd; j++) {
            if (j == dot)
                s[k++] = '.';
            s[k++] = (char)('0' + rnd() % 10);
        }
        snprintf(s + k, sizeof s - (size_t)k, "e%d", (int)(rnd() % 80) - 45);
        same_as_strtod(s);
    }
    /* edges of the fast path: 2^53, 10^22, 10^23 */
    static const char *const edge[] = {"9007199254740992", "9007199254740993", "9007199254740991e22",
                                       "1e22", "1e23", "1e-22", "1e-23", "4503599627370497.5",
                                       "123456789012345678901234567890", "0.000000000000000000000000001"};
    for (size_t i = 0; i < sizeof edge / sizeof edge[0]; i++)
        same_as_strtod(edge[i]);
}

/* ---- records ---- */

static OpTable *bare_table(void)
{
    OpTable *t = calloc(1, sizeof *t);
    assert_non_null(t);
    arena_init(&t->arena);
    t->names = str_new(&t->arena);
    assert_non_null(t->names);
    t->temp_c = NAN;
    return t;
}

static void test_records(void **state)
{
    (void)state;
    OpTable *t = bare_table();
    DiagList d;
    diag_init(&d);
    SrcLoc l5 = {"dump", 5, 3}, l9 = {"dump", 9, 7};
    OpRecord *a = op_add(t, "X1.M3", 5, l5, false, &d);
    assert_non_null(a);
    assert_string_equal(a->name, "x1.m3"); /* interned case-folded */
    for (int q = 0; q < OPQ_COUNT; q++)
        assert_true(isnan(a->q[q]));
    assert_int_equal(a->family, OPFAM_UNKNOWN);
    assert_null(a->model);
    assert_false(a->truncated);

    assert_int_equal(op_set(t, a, OPQ_GM, 1e-4, l5, &d), ERR_OK);
    assert_int_equal(op_set(t, a, OPQ_GM, 1e-4, l9, &d), ERR_OK); /* the same value again: fine */
    assert_int_equal(op_set(t, a, OPQ_GM, NAN, l9, &d), ERR_OK);  /* NaN: absent stays as it was */
    assert_true(a->q[OPQ_GM] == 1e-4);
    assert_int_equal(d.n, 0);
    assert_int_equal(op_set(t, a, OPQ_GM, 2e-4, l9, &d), ERR_INPUT);
    assert_int_equal(d.n, 1);
    assert_int_equal(d.items[0].loc.line, 9);
    assert_int_equal(d.items[0].loc.col, 7);
    assert_non_null(strstr(d.items[0].msg, "conflicting values for gm"));

    /* merge finds the record; no merge reports the duplicate where the second one is */
    OpRecord *b = op_add(t, "x1.m3", 5, l9, true, &d);
    assert_ptr_equal(b, &t->recs[0]);
    assert_null(op_add(t, "x1.m3", 5, l9, false, &d));
    assert_int_equal(d.n, 2);
    assert_int_equal(d.items[1].loc.line, 9);
    assert_non_null(strstr(d.items[1].msg, "listed twice (first on line 5)"));

    /* many records: the array moves, the index follows */
    char nm[32];
    for (int i = 0; i < 5000; i++) {
        int n = snprintf(nm, sizeof nm, "x%d.mn", i);
        OpRecord *r = op_add(t, nm, (size_t)n, l5, false, &d);
        assert_non_null(r);
        r->q[OPQ_ID] = i;
    }
    assert_int_equal(t->n, 5001);
    const OpRecord *f = op_find(t, "x4321.mn");
    assert_non_null(f);
    assert_true(f->q[OPQ_ID] == 4321.0);
    assert_null(op_find(t, "x5000.mn"));
    assert_null(op_find(t, "nosuch"));
    assert_non_null(op_find(t, "X1.M3"));

    assert_int_equal(op_add_node(t, "x1.tail", 7, 0.25), ERR_OK);
    assert_int_equal(op_add_node(t, "OUT", 3, 1.0), ERR_OK);
    assert_int_equal(t->nnodes, 2);
    assert_string_equal(t->node_name[1], "out");
    assert_true(t->node_v[0] == 0.25);
    diag_free(&d);
    op_free(t);
    op_free(NULL);
}

/* A table that keeps only some quantities: what it keeps reads back, the rest is absent and cannot be
 * set, and records across several blocks keep their own values. */
static void test_layout(void **state)
{
    (void)state;
    OpTable *t = bare_table();
    DiagList d;
    diag_init(&d);
    bool present[OPQ_COUNT] = {false};
    present[OPQ_GM] = present[OPQ_VDS] = present[OPQ_NF] = true;
    op_layout(t, present);
    assert_int_equal(t->nq, 3);
    SrcLoc l2 = {"dump", 2, 1};
    char nm[32];
    for (int i = 0; i < 2 * OP_VBLOCK + 5; i++) {
        int n = snprintf(nm, sizeof nm, "m%d", i);
        OpRecord *r = op_add(t, nm, (size_t)n, l2, false, &d);
        assert_non_null(r);
        assert_int_equal(op_set(t, r, OPQ_GM, 1e-6 * i, l2, &d), ERR_OK);
        assert_int_equal(op_set(t, r, OPQ_NF, (double)(i % 4 + 1), l2, &d), ERR_OK);
    }
    const OpRecord *f = op_find(t, "m8195");
    assert_non_null(f);
    assert_true(op_q(t, f, OPQ_GM) == 1e-6 * 8195 && op_q(t, f, OPQ_NF) == 4.0);
    assert_true(isnan(op_q(t, f, OPQ_VDS)) && isnan(op_q(t, f, OPQ_ID)) && isnan(op_q(t, f, OPQ_W)));
    double all[OPQ_COUNT];
    op_values(t, f, all);
    for (int q = 0; q < OPQ_COUNT; q++)
        assert_true(q == OPQ_GM ? all[q] == 1e-6 * 8195 : q == OPQ_NF ? all[q] == 4.0 : isnan(all[q]));
    assert_int_equal(d.n, 0);
    assert_int_equal(op_set(t, (OpRecord *)f, OPQ_ID, 1e-3, l2, &d), ERR_INPUT); /* no place for it */
    assert_int_equal(d.n, 1);
    present[OPQ_ID] = true; /* too late: the records have their layout */
    op_layout(t, present);
    assert_int_equal(t->nq, 3);
    op_release_values(t);
    assert_null(t->recs[0].q);
    diag_free(&d);
    op_free(t);
}

/* ---- op_read ---- */

static void test_read_empty(void **state)
{
    (void)state;
    static const struct {
        const char *name, *text;
        size_t len;
        const char *msg;
    } rows[] = {
        {"empty.txt", "", 0, "is empty"},
        {"blank.txt", "  \n\t\r\n\n", 7, "is blank"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++)
        for (int fmt = OPFMT_AUTO; fmt <= OPFMT_CSV; fmt++) {
            char *path = tu_tmpfile(rows[i].name, rows[i].text, rows[i].len);
            DiagList d;
            diag_init(&d);
            OpTable *t = (OpTable *)1;
            assert_int_equal(op_read(path, (OpFormat)fmt, &t, &d), ERR_INPUT);
            assert_null(t);
            const Diag *e = first_sev(&d, DIAG_ERROR);
            assert_non_null(e);
            assert_non_null(strstr(e->msg, rows[i].msg));
            assert_string_equal(e->loc.file, path); /* still readable: the table is gone */
            diag_free(&d);
            free(path);
        }
}

static void test_read_missing(void **state)
{
    (void)state;
    DiagList d;
    diag_init(&d);
    OpTable *t;
    assert_int_equal(op_read("fixtures/op/no-such-file.raw", OPFMT_AUTO, &t, &d), ERR_IO);
    assert_null(t);
    assert_int_equal(d.nerrors, 1);
    assert_non_null(strstr(d.items[0].msg, "cannot open"));
    diag_free(&d);
}

static void test_read_garbage(void **state)
{
    (void)state;
    /* bytes with no line structure: no format claims them */
    unsigned char junk[4096];
    for (size_t i = 0; i < sizeof junk; i++)
        junk[i] = (unsigned char)(rnd() >> 56);
    junk[0] = 0x7f; /* not "Title:", not '#' */
    for (size_t i = 0; i < sizeof junk; i++)
        if (junk[i] == ',' || junk[i] == '\n')
            junk[i] = 0; /* no CSV header line, no log lines */
    char *path = tu_tmpfile("junk.bin", (const char *)junk, sizeof junk);
    DiagList d;
    diag_init(&d);
    OpTable *t;
    assert_int_equal(op_read(path, OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_null(t);
    const Diag *e = first_sev(&d, DIAG_ERROR);
    assert_non_null(e);
    assert_string_equal(e->loc.file, path);
    assert_non_null(strstr(e->msg, "show"));
    assert_non_null(strstr(e->msg, "raw file"));
    assert_non_null(strstr(e->msg, "CSV"));
    assert_non_null(strstr(e->msg, "--op-format"));
    diag_free(&d);
    free(path);

    /* a netlist is text, but none of the three */
    diag_init(&d);
    assert_int_equal(op_read("fixtures/op/gen/mix.cir", OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_non_null(strstr(d.items[0].msg, "in no format biaslint reads"));
    diag_free(&d);
}

/* Every fixture is recognised as what it is. */
static void test_detect(void **state)
{
    (void)state;
    static const struct {
        const char *path;
        OpFormat fmt;
    } rows[] = {
        {"fixtures/op/mix.out", OPFMT_SHOW},       {"fixtures/op/batch.out", OPFMT_SHOW},
        {"fixtures/op/mix_bin.raw", OPFMT_RAW},    {"fixtures/op/mix_asc.raw", OPFMT_RAW},
        {"fixtures/op/multi_bin.raw", OPFMT_RAW},  {"fixtures/op/ac1_asc.raw", OPFMT_RAW},
        {"fixtures/op/mix.csv", OPFMT_CSV},        {"fixtures/op/mix_alias.csv", OPFMT_CSV},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        DiagList d;
        diag_init(&d);
        OpTable *t;
        int rc = op_read(rows[i].path, OPFMT_AUTO, &t, &d);
        if (rc != ERR_OK)
            diag_print(&d, stderr, 0, DIAG_NOTE);
        assert_int_equal(rc, ERR_OK);
        assert_int_equal(t->format, rows[i].fmt);
        assert_true(t->n > 0);
        op_free(t);
        diag_free(&d);
    }
    /* a failed-simulation log without tables still goes to the show reader, which says why */
    DiagList d;
    diag_init(&d);
    OpTable *t;
    assert_int_equal(op_read("fixtures/op/fail_batch.out", OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_non_null(strstr(d.items[0].msg, "simulation failed"));
    diag_free(&d);
    /* forcing the wrong reader gives that reader's located error */
    diag_init(&d);
    assert_int_equal(op_read("fixtures/op/mix.csv", OPFMT_RAW, &t, &d), ERR_INPUT);
    assert_int_equal(d.items[0].loc.line, 1);
    assert_int_equal(d.items[0].loc.col, 1);
    assert_non_null(strstr(d.items[0].msg, "not an ngspice raw file"));
    diag_free(&d);
}

/* ---- allocation failures ----
 * malloc, calloc, realloc and free are replaced for this program (glibc lets a program do that and
 * routes its own and libcsv's allocations through the replacement). Allocation number N fails; N
 * rises until the read succeeds; each failure must be a clean ERR_NOMEM with nothing left allocated.
 * Under AddressSanitizer, which owns malloc, the test is skipped. */
#if !defined(__SANITIZE_ADDRESS__)
extern void *__libc_malloc(size_t);
extern void *__libc_calloc(size_t, size_t);
extern void *__libc_realloc(void *, size_t);
extern void __libc_free(void *);
static long fail_at_n = -1; /* -1: off */
static long nalloc, live;

static bool should_fail(void)
{
    return fail_at_n >= 0 && nalloc++ == fail_at_n;
}
void *malloc(size_t n)
{
    if (should_fail())
        return NULL;
    void *p = __libc_malloc(n);
    if (p && fail_at_n >= 0)
        live++;
    return p;
}
void *calloc(size_t a, size_t b)
{
    if (should_fail())
        return NULL;
    void *p = __libc_calloc(a, b);
    if (p && fail_at_n >= 0)
        live++;
    return p;
}
void *realloc(void *p, size_t n)
{
    if (should_fail())
        return NULL;
    void *q = __libc_realloc(p, n);
    if (q && !p && fail_at_n >= 0)
        live++;
    return q;
}
void free(void *p)
{
    if (p && fail_at_n >= 0)
        live--;
    __libc_free(p);
}

static void test_nomem(void **state)
{
    (void)state;
    static const char *const files[] = {"fixtures/op/mix.out", "fixtures/op/mix_bin.raw", "fixtures/op/mix_asc.raw",
                                        "fixtures/op/mix_alias.csv", "fixtures/op/cut2.out"};
    for (size_t f = 0; f < sizeof files / sizeof files[0]; f++) {
        size_t nrec = 0;
        {
            DiagList d;
            OpTable *t;
            diag_init(&d);
            if (op_read(files[f], OPFMT_AUTO, &t, &d) == ERR_OK)
                nrec = t->n;
            op_free(t);
            diag_free(&d);
        }
        for (long n = 0;; n++) {
            DiagList d;
            OpTable *t;
            nalloc = live = 0;
            fail_at_n = n;
            diag_init(&d);
            int rc = op_read(files[f], OPFMT_AUTO, &t, &d);
            bool done = nalloc <= n; /* the Nth allocation was never reached */
            int oom = d.oom;
            size_t n_ok = rc == ERR_OK ? t->n : 0;
            op_free(t);
            diag_free(&d);
            long left = live;
            fail_at_n = -1;
            if (left != 0)
                print_error("%s: allocation %ld failed: %ld blocks left allocated (rc %d)\n", files[f], n, left, rc);
            assert_int_equal(left, 0);
            if (done) {
                assert_true(rc == ERR_OK || rc == ERR_INPUT);
                break;
            }
            if (rc == ERR_OK && n_ok == nrec)
                continue; /* the failure was absorbed (libcsv retries a smaller buffer) */
            if (rc != ERR_NOMEM || !oom)
                print_error("%s: allocation %ld failed: rc %d, oom %d\n", files[f], n, rc, oom);
            assert_int_equal(rc, ERR_NOMEM);
            assert_true(oom);
        }
    }
}
#else
static void test_nomem(void **state)
{
    (void)state;
    skip();
}
#endif

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_qty_lookup),   cmocka_unit_test(test_canonical),  cmocka_unit_test(test_number_grammar),
        cmocka_unit_test(test_number_exact), cmocka_unit_test(test_records),    cmocka_unit_test(test_layout),
        cmocka_unit_test(test_read_empty),
        cmocka_unit_test(test_read_missing), cmocka_unit_test(test_read_garbage), cmocka_unit_test(test_detect),
        cmocka_unit_test(test_nomem),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
