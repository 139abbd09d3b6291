/* test_op_raw: the reader of ngspice raw files, binary and ASCII. The fixtures were written by
 * ngspice 39 from the decks in fixtures/op/gen (regen.sh); expected values come from the `print`
 * lines of the same runs. The damaged files are those fixtures with one thing changed here. */
#include "testutil.h"

#include <stdbool.h>

#include "opdump.h"

/* memmem for texts that hold NUL bytes (binary raw data) */
static const char *find(const char *text, size_t len, const char *needle)
{
    size_t n = strlen(needle);
    for (size_t i = 0; i + n <= len; i++)
        if (memcmp(text + i, needle, n) == 0)
            return text + i;
    return NULL;
}

static uint32_t line_of(const char *text, const char *needle)
{
    const char *p = strstr(text, needle);
    assert_non_null(p);
    uint32_t l, c;
    tu_line_col(text, p, &l, &c);
    return l;
}

/* A copy of text[0..len) with the first `from` replaced by `to`; *nlen is the new length. */
static char *replace(const char *text, size_t len, const char *from, const char *to, size_t *nlen)
{
    const char *p = strstr(text, from);
    assert_non_null(p);
    size_t a = (size_t)(p - text), fl = strlen(from), tl = strlen(to);
    char *s = malloc(len - fl + tl + 1);
    assert_non_null(s);
    memcpy(s, text, a);
    memcpy(s + a, to, tl);
    memcpy(s + a + tl, p + fl, len - a - fl);
    *nlen = len - fl + tl;
    s[*nlen] = '\0';
    return s;
}

static OpTable *read_ok(const char *path, DiagList *d)
{
    OpTable *t = NULL;
    diag_init(d);
    int rc = op_read(path, OPFMT_AUTO, &t, d);
    if (rc != ERR_OK)
        diag_print(d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    assert_int_equal(t->format, OPFMT_RAW);
    return t;
}

static const Diag *first_sev(const DiagList *d, DiagSeverity sev)
{
    for (size_t i = 0; i < d->n; i++)
        if (d->items[i].sev == sev)
            return &d->items[i];
    return NULL;
}

static const OpRecord *find_dev(const OpTable *t, const char *ngname)
{
    const char *cs;
    size_t cn;
    op_canonical(ngname, strlen(ngname), &cs, &cn);
    char buf[256];
    memcpy(buf, cs, cn);
    buf[cn] = '\0';
    return op_find(t, buf);
}

static double node(const OpTable *t, const char *name)
{
    for (size_t i = 0; i < t->nnodes; i++)
        if (strcmp(t->node_name[i], name) == 0)
            return t->node_v[i];
    return NAN;
}

/* `print` lines "@<dev>[<qty>] = <value>" and "v(<node>) = <value>" of an ngspice log. */
typedef struct {
    char dev[128];
    int q; /* -1: a node voltage */
    double v;
} PrintVal;

static size_t print_lines(const char *text, PrintVal *out, size_t max)
{
    size_t n = 0;
    for (const char *p = text; p && *p; p = strchr(p, '\n'), p = p ? p + 1 : NULL) {
        char dev[128], q[16];
        double v;
        if (n == max)
            break;
        if (*p == '@' && sscanf(p, "@%127[^[][%15[^]]] = %lf", dev, q, &v) == 3) {
            int qi = op_qty_lookup_ngspice(q, strlen(q));
            if (qi < 0)
                continue;
            out[n].q = qi;
        } else if (p[0] == 'v' && p[1] == '(' && sscanf(p, "v(%127[^)]) = %lf", dev, &v) == 2) {
            out[n].q = -1;
        } else {
            continue;
        }
        snprintf(out[n].dev, sizeof out[n].dev, "%s", dev);
        out[n].v = v;
        n++;
    }
    return n;
}

/* print with numdgt=15 writes 16 significant digits (15 for negative numbers, section 3 of the
 * reference): the stored double and the printed text differ by less than 5e-15 relative. */
#define PRINT15_REL 5e-15

static size_t check_against_print(const OpTable *t, const char *log, double rel)
{
    static PrintVal pv[512];
    size_t n = print_lines(log, pv, 512), checked = 0;
    for (size_t i = 0; i < n; i++) {
        double v;
        if (pv[i].q < 0) {
            v = node(t, pv[i].dev);
        } else {
            const OpRecord *r = find_dev(t, pv[i].dev);
            if (!r)
                print_error("no record for %s\n", pv[i].dev);
            assert_non_null(r);
            v = r->q[pv[i].q];
        }
        if (isnan(v))
            print_error("%s: quantity %d absent\n", pv[i].dev, pv[i].q);
        assert_false(isnan(v)); /* mix.cir saves everything it prints */
        assert_close(v, pv[i].v, rel);
        checked++;
    }
    return checked;
}

static void test_mix(void **state)
{
    (void)state;
    char *log = tu_slurp("fixtures/op/mix.out", NULL);
    size_t alen;
    char *asc = tu_slurp("fixtures/op/mix_asc.raw", &alen);
    DiagList d1, d2;
    OpTable *b = read_ok("fixtures/op/mix_bin.raw", &d1), *a = read_ok("fixtures/op/mix_asc.raw", &d2);
    assert_int_equal(d1.n, 0);
    assert_int_equal(d2.n, 0);
    OpTable *both[2] = {b, a};
    for (int k = 0; k < 2; k++) {
        OpTable *t = both[k];
        assert_true(check_against_print(t, log, PRINT15_REL) >= 50);
        assert_int_equal(t->n, 9);
        /* dims=0: Mos1 has no vth, and there is no device mnone; ngspice wrote 0 in both slots */
        assert_non_null(strstr(asc, "v(@mpl[vth])\tvoltage dims=0"));
        assert_true(isnan(find_dev(t, "mpl")->q[OPQ_VTH]));
        assert_null(find_dev(t, "m.xm1.mnone"));
        /* wrapped names: i(@m.xm1.mref[id]), v(@m.xm1.mref[vth]) */
        assert_non_null(strstr(asc, "i(@m.xm1.mref[id])"));
        const OpRecord *mref = find_dev(t, "m.xm1.mref");
        assert_false(isnan(mref->q[OPQ_ID]) || isnan(mref->q[OPQ_VTH]) || isnan(mref->q[OPQ_GMBS]));
        assert_true(mref->q[OPQ_W] == 3e-6 && mref->q[OPQ_NF] == 1.0);
        /* Mos1's gmb is read as gmbs */
        assert_false(isnan(find_dev(t, "mpl")->q[OPQ_GMBS]));
        /* signs as written: swapped devices have vds < 0; Mos1 swapped NMOS id < 0; PMOS von < 0 */
        assert_true(find_dev(t, "mpsw")->q[OPQ_VDS] < 0 && find_dev(t, "mpsw")->q[OPQ_ID] > 0);
        assert_true(find_dev(t, "mnsw")->q[OPQ_ID] < 0);
        assert_true(find_dev(t, "mpl")->q[OPQ_VON] < 0 && find_dev(t, "mpl")->q[OPQ_VDSAT] < 0);
        /* the full name, not cut as show cuts it */
        assert_false(find_dev(t, "m.xlong_instance_path.mdevice_far_down")->truncated);
        /* nodes: one per v(name) variable; source currents i(v...) are not nodes */
        size_t nv = 0;
        for (const char *p = asc; (p = strstr(p, "\tv(")); p++)
            nv += p[3] != '@';
        assert_int_equal(t->nnodes, nv);
        assert_close(node(t, "vdd"), 1.5, 1e-15); /* the deck's sources */
        assert_close(node(t, "pd"), 1.5, 1e-15);
        assert_false(isnan(node(t, "xm1.tap")));
        /* the record starts at its first variable */
        const OpRecord *mb3 = find_dev(t, "mb3");
        assert_int_equal(mb3->loc.line, line_of(asc, "@mb3["));
    }
    /* binary (exact) and ASCII (16 digits) agree */
    for (size_t i = 0; i < b->n; i++) {
        const OpRecord *rb = &b->recs[i], *ra = op_find(a, rb->name);
        assert_non_null(ra);
        for (int q = 0; q < OPQ_COUNT; q++) {
            assert_int_equal(isnan(rb->q[q]), isnan(ra->q[q]));
            if (!isnan(rb->q[q]))
                assert_close(ra->q[q], rb->q[q], 1e-15);
        }
    }
    op_free(a);
    op_free(b);
    diag_free(&d1);
    diag_free(&d2);
    free(log);
    free(asc);
}

/* `ngspice -b -r` with .op, .dc and .ac: three plots (ac, dc, op), "No. Points: 1" padded with
 * blanks. The operating point is the third plot. ac1.cir is the same circuit; its print lines are the
 * expected values (7 digits: 5e-7 relative). */
static void test_multi_plot(void **state)
{
    (void)state;
    char *ac1 = tu_slurp("fixtures/op/ac1.out", NULL);
    static const char *const files[] = {"fixtures/op/multi_bin.raw", "fixtures/op/multi_asc.raw"};
    for (int k = 0; k < 2; k++) {
        size_t len;
        char *text = tu_slurp(files[k], &len);
        assert_non_null(find(text, len, "No. Points: 1   ")); /* the padding is there to be trimmed */
        assert_non_null(find(text, len, "Plotname: AC Analysis"));
        assert_non_null(find(text, len, "Plotname: DC transfer characteristic"));
        free(text);
        DiagList d;
        OpTable *t = read_ok(files[k], &d);
        assert_int_equal(t->n, 1);
        assert_true(check_against_print(t, ac1, 5.000001e-7) == 3);
        assert_false(isnan(find_dev(t, "mamp")->q[OPQ_VTH]));
        assert_close(node(t, "vdd"), 1.2, 1e-15); /* the deck's sources */
        assert_close(node(t, "g"), 0.75, 1e-15);
        assert_int_equal(t->nnodes, 3);
        op_free(t);
        diag_free(&d);
    }
    free(ac1);
}

/* A one-point AC plot: Flags complex, two doubles per value. Device quantities are the real parts;
 * node voltages there are small-signal phasors and are not read. */
static void test_complex(void **state)
{
    (void)state;
    char *ac1 = tu_slurp("fixtures/op/ac1.out", NULL);
    static const char *const files[] = {"fixtures/op/ac1_bin.raw", "fixtures/op/ac1_asc.raw"};
    for (int k = 0; k < 2; k++) {
        char *text = tu_slurp(files[k], NULL);
        assert_non_null(strstr(text, "Flags: complex"));
        free(text);
        DiagList d;
        OpTable *t = read_ok(files[k], &d);
        assert_int_equal(check_against_print(t, ac1, 5.000001e-7), 3);
        assert_int_equal(t->nnodes, 0);
        const Diag *n = first_sev(&d, DIAG_NOTE);
        assert_non_null(n);
        assert_non_null(strstr(n->msg, "complex"));
        op_free(t);
        diag_free(&d);
    }
    free(ac1);
}

/* Index of the variable named var in a raw text's list. */
static size_t var_index(const char *text, const char *var)
{
    char pat[160];
    snprintf(pat, sizeof pat, "\t%s\t", var);
    const char *p = strstr(text, pat);
    assert_non_null(p);
    while (p > text && p[-1] != '\n')
        p--;
    return (size_t)strtoul(p + 1, NULL, 10);
}

/* A NaN double in binary data: that value is absent, with one warning for the file. */
static void test_binary_nan(void **state)
{
    (void)state;
    size_t len;
    char *text = tu_slurp("fixtures/op/mix_bin.raw", &len);
    char *data = strstr(text, "Binary:\n") + 8;
    double nan = NAN, inf = -INFINITY;
    memcpy(data + 8 * var_index(text, "@m.xm1.mref[gm]"), &nan, 8);
    memcpy(data + 8 * var_index(text, "@mb3[gds]"), &inf, 8);
    char *path = tu_tmpfile("nan.raw", text, len);
    DiagList d;
    OpTable *t = read_ok(path, &d);
    assert_true(isnan(find_dev(t, "m.xm1.mref")->q[OPQ_GM]));
    assert_true(isnan(find_dev(t, "mb3")->q[OPQ_GDS]));
    assert_false(isnan(find_dev(t, "mb3")->q[OPQ_GM]));
    assert_int_equal(d.nwarnings, 1);
    const Diag *w = first_sev(&d, DIAG_WARNING);
    assert_non_null(strstr(w->msg, "2 values are NaN or infinite"));
    assert_int_equal(w->loc.line, line_of(text, "@m.xm1.mref[gm]"));
    op_free(t);
    diag_free(&d);
    free(text);
    free(path);
}

static void expect_error(const char *name, const char *text, size_t len, uint32_t line, uint32_t col, const char *msg)
{
    char *path = tu_tmpfile(name, text, len);
    DiagList d;
    diag_init(&d);
    OpTable *t = (OpTable *)1;
    int rc = op_read(path, OPFMT_RAW, &t, &d);
    assert_int_equal(rc, ERR_INPUT);
    assert_null(t);
    const Diag *e = first_sev(&d, DIAG_ERROR);
    assert_non_null(e);
    if (e->loc.line != line || e->loc.col != col || !strstr(e->msg, msg))
        print_error("%s: got %u:%u '%s', expected %u:%u '%s'\n", name, e->loc.line, e->loc.col, e->msg, line, col, msg);
    assert_int_equal(e->loc.line, line);
    assert_int_equal(e->loc.col, col);
    assert_non_null(strstr(e->msg, msg));
    diag_free(&d);
    free(path);
}

static uint32_t nlines(const char *text, size_t len)
{
    uint32_t n = 0;
    for (size_t i = 0; i < len; i++)
        n += text[i] == '\n';
    return n;
}

static void test_damaged_binary(void **state)
{
    (void)state;
    size_t len, n;
    char *bin = tu_slurp("fixtures/op/mix_bin.raw", &len);
    uint32_t bline = line_of(bin, "Binary:");
    /* cut short: 5 bytes missing */
    expect_error("cut.raw", bin, len - 5, bline, 1, "binary data truncated");
    char *s;
    {
        DiagList d;
        char *path = tu_tmpfile("cut2.raw", bin, len - 5);
        OpTable *t;
        diag_init(&d);
        assert_int_equal(op_read(path, OPFMT_AUTO, &t, &d), ERR_INPUT);
        char want[64];
        snprintf(want, sizeof want, "ends at byte %zu", len - 5);
        assert_non_null(strstr(d.items[0].msg, want));
        diag_free(&d);
        free(path);
    }
    /* No. Points says 2: the data holds one */
    s = replace(bin, len, "No. Points: 1", "No. Points: 2", &n);
    expect_error("pts2.raw", s, n, bline, 1, "binary data truncated: 2 points");
    free(s);
    /* one point too many (8 more bytes than the header says) */
    s = malloc(len + 8);
    memcpy(s, bin, len);
    memset(s + len, 0, 8);
    expect_error("extra.raw", s, len + 8, bline, 1, "8 bytes follow the binary data");
    free(s);
    /* the header cut inside the variable list */
    const char *v = strstr(bin, "\t20\t");
    expect_error("hdr.raw", bin, (size_t)(v - bin), nlines(bin, (size_t)(v - bin)), 0, "ends in the variable list");
    free(bin);
}

static void test_damaged_ascii(void **state)
{
    (void)state;
    size_t len, n;
    char *asc = tu_slurp("fixtures/op/mix_asc.raw", &len);
    uint32_t vline = line_of(asc, "Values:");
    char *s;
    uint32_t l, c;
    /* cut after the tenth value line */
    const char *p = strstr(asc, "Values:\n");
    for (int k = 0; k < 11; k++)
        p = strchr(p, '\n') + 1;
    expect_error("cut.raw", asc, (size_t)(p - asc), vline + 11, 0, "the data ends at variable 10 of point 0");
    /* No. Points says 2 */
    s = replace(asc, len, "No. Points: 1", "No. Points: 2", &n);
    expect_error("pts2.raw", s, n, nlines(s, n) + 1, 0, "the data ends before point 1");
    free(s);
    /* a second point after the one declared */
    s = malloc(len + 64);
    memcpy(s, asc, len);
    n = len + (size_t)sprintf(s + len, " 1\t1.000000000000000e+00\n");
    expect_error("more.raw", s, n, nlines(asc, len) + 1, 2, "more data than No. Points (1)");
    free(s);
    /* No. Variables one too many */
    char from[40], to[40];
    const char *nv = strstr(asc, "No. Variables: ");
    unsigned nvars = (unsigned)strtoul(nv + 15, NULL, 10);
    snprintf(from, sizeof from, "No. Variables: %u", nvars);
    snprintf(to, sizeof to, "No. Variables: %u", nvars + 1);
    s = replace(asc, len, from, to, &n);
    char want[80];
    snprintf(want, sizeof want, "No. Variables says %u, but %u variable lines", nvars + 1, nvars);
    expect_error("nvars.raw", s, n, vline, 1, want);
    free(s);
    /* a count no file could hold: reported, not allocated */
    s = replace(asc, len, from, "No. Variables: 99999999999999999", &n);
    expect_error("huge.raw", s, n, line_of(s, "Variables:\n"), 1, "more variable lines than the rest of the file");
    free(s);
    /* a variable index out of order */
    s = replace(asc, len, "\n\t5\t", "\n\t7\t", &n);
    tu_line_col(s, strstr(s, "\n\t7\t") + 2, &l, &c);
    expect_error("index.raw", s, n, l, c, "bad variable index '7': expected 5");
    free(s);
    /* a value that is not a number: the third value line */
    p = strstr(asc, "Values:\n");
    for (int k = 0; k < 3; k++)
        p = strchr(p, '\n') + 1;
    size_t off = (size_t)(p - asc) + 1; /* after the TAB */
    s = malloc(len + 1);
    memcpy(s, asc, len + 1);
    memcpy(s + off, "4.5x", 4);
    const char *e = strchr(s + off, '\n');
    size_t tok = (size_t)(e - (s + off));
    char bad[40];
    snprintf(bad, sizeof bad, "'%.*s' is not a number", (int)tok, s + off);
    expect_error("nonnum.raw", s, len, vline + 3, 2, bad);
    /* nan text in ASCII data, as ngspice prints a NaN: absent with a warning, like binary */
    memcpy(s + off, "-nan", 4);
    memset(s + off + 4, ' ', tok - 4);
    char *path = tu_tmpfile("nan.raw", s, len);
    DiagList d;
    OpTable *t = read_ok(path, &d);
    assert_int_equal(d.nwarnings, 1);
    op_free(t);
    diag_free(&d);
    free(path);
    free(s);
    /* a complex value in a real plot */
    s = replace(asc, len, "\n\t1.500000000000000e+00", "\n\t1.5e+00,0.0e+00", &n);
    tu_line_col(s, strstr(s, "\t1.5e+00,0.0e+00") + 1, &l, &c);
    expect_error("cplx.raw", s, n, l, c, "is a complex value in a real plot");
    free(s);
    /* counts and flags that are not */
    s = replace(asc, len, "No. Points: 1", "No. Points: one", &n);
    expect_error("count.raw", s, n, line_of(s, "No. Points"), 13, "No. Points: 'one' is not a count");
    free(s);
    s = replace(asc, len, "Flags: real", "Flags: double", &n);
    expect_error("flags.raw", s, n, line_of(s, "Flags:"), 7, "neither 'real' nor 'complex'");
    free(s);
    s = replace(asc, len, "No. Points: 1", "No. Points: 0", &n);
    expect_error("zero.raw", s, n, line_of(s, "No. Points"), 1, "holds no point");
    free(s);
    free(asc);
}

static void test_not_op(void **state)
{
    (void)state;
    size_t len;
    /* a DC sweep alone: three points */
    char *dc = tu_slurp("fixtures/op/dc3_asc.raw", &len);
    expect_error("dc3.raw", dc, len, line_of(dc, "No. Points"), 1, "has 3 points: biaslint reads one operating point");
    free(dc);
    /* two plots, neither an operating point: the multi file without its op plot */
    char *m = tu_slurp("fixtures/op/multi_asc.raw", &len);
    const char *op = strstr(m, "Plotname: Operating Point");
    assert_non_null(op);
    while (op > m && strncmp(op, "\nTitle:", 7) != 0)
        op--; /* back to its Title: line */
    op++;
    assert_true(strncmp(op, "Title:", 6) == 0);
    expect_error("two.raw", m, (size_t)(op - m), 1, 1, "holds 2 plots and none is an operating point");
    free(m);
    /* not a raw file at all */
    static const char junk[] = "\x7f\x01\x02garbage\n\xff\xfe";
    expect_error("junk.raw", junk, sizeof junk - 1, 1, 1, "not an ngspice raw file");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_mix),          cmocka_unit_test(test_multi_plot),    cmocka_unit_test(test_complex),
        cmocka_unit_test(test_binary_nan),   cmocka_unit_test(test_damaged_binary), cmocka_unit_test(test_damaged_ascii),
        cmocka_unit_test(test_not_op),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
