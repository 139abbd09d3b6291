/* test_op_csv: the CSV device-table reader. mix.csv and mix_alias.csv are the `print` lines of an
 * ngspice 39 run (fixtures/op/mix.out) pivoted into rows by fixtures/op/gen/regen.sh, so the
 * expected values are ngspice's text; the small tables below are written here to test the format. */
#include "testutil.h"

#include <stdbool.h>

#include "buf.h"
#include "opdump.h"

static OpTable *read_ok(const char *path, OpFormat fmt, DiagList *d)
{
    OpTable *t = NULL;
    diag_init(d);
    int rc = op_read(path, fmt, &t, d);
    if (rc != ERR_OK)
        diag_print(d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    assert_int_equal(t->format, OPFMT_CSV);
    return t;
}

static const Diag *first_sev(const DiagList *d, DiagSeverity sev)
{
    for (size_t i = 0; i < d->n; i++)
        if (d->items[i].sev == sev)
            return &d->items[i];
    return NULL;
}

static size_t count_sev(const DiagList *d, DiagSeverity sev)
{
    size_t n = 0;
    for (size_t i = 0; i < d->n; i++)
        n += d->items[i].sev == sev;
    return n;
}

/* The same decimal text gives the same double: the CSV holds ngspice's print text unchanged. */
static void test_mix(void **state)
{
    (void)state;
    char *log = tu_slurp("fixtures/op/mix.out", NULL);
    char *csv = tu_slurp("fixtures/op/mix.csv", NULL);
    DiagList d;
    OpTable *t = read_ok("fixtures/op/mix.csv", OPFMT_AUTO, &d);
    assert_int_equal(d.n, 0);
    assert_int_equal(t->n, 9);
    assert_int_equal(t->nextra, 0);
    size_t checked = 0;
    for (const char *p = log; p && *p; p = strchr(p, '\n'), p = p ? p + 1 : NULL) {
        char dev[128], q[16];
        double v;
        if (*p != '@' || sscanf(p, "@%127[^[][%15[^]]] = %lf", dev, q, &v) != 3)
            continue;
        const char *cs;
        size_t cn;
        op_canonical(dev, strlen(dev), &cs, &cn);
        char name[128];
        snprintf(name, sizeof name, "%.*s", (int)cn, cs);
        const OpRecord *r = op_find(t, name);
        assert_non_null(r);
        int qi = op_qty_lookup_ngspice(q, strlen(q));
        assert_true(qi >= 0);
        if (op_q(t, r, qi) != v)
            print_error("%s[%s]: %.17g, print says %.17g\n", dev, q, op_q(t, r, qi), v);
        assert_true(op_q(t, r, qi) == v);
        checked++;
    }
    assert_int_equal(checked, 49); /* every print line of mix.cir */
    /* ngspice spelling in the file ("m.xm1.mref"), canonical in the table; empty fields absent */
    assert_non_null(strstr(csv, "\nm.xm1.mref,"));
    const OpRecord *mref = op_find(t, "xm1.mref");
    assert_non_null(mref);
    assert_true(isnan(op_q(t, mref, OPQ_VGS)) && isnan(op_q(t, mref, OPQ_VON)));
    assert_int_equal(mref->loc.line, 2);
    assert_int_equal(mref->loc.col, 1);
    assert_true(op_q(t, op_find(t, "mnsw"), OPQ_ID) < 0); /* as printed */
    op_free(t);
    diag_free(&d);
    free(log);
    free(csv);
}

/* CRLF, comments, other names and order, vsb negated into vbs, extra columns. */
static void test_alias(void **state)
{
    (void)state;
    char *text = tu_slurp("fixtures/op/mix_alias.csv", NULL);
    assert_non_null(strstr(text, "\r\n"));
    assert_non_null(strstr(text, "Vt,Device,IDS,gm,rout_ohm,vsb,spare,"));
    free(text);
    DiagList d1, d2;
    OpTable *a = read_ok("fixtures/op/mix_alias.csv", OPFMT_AUTO, &d1), *m = read_ok("fixtures/op/mix.csv", OPFMT_AUTO, &d2);
    assert_int_equal(a->n, m->n);
    assert_int_equal(d1.nerrors + d1.nwarnings, 0);
    assert_int_equal(count_sev(&d1, DIAG_NOTE), 1); /* rout_ohm and spare: not quantities, kept */
    const Diag *note = first_sev(&d1, DIAG_NOTE);
    assert_non_null(strstr(note->msg, "2 columns are not quantities biaslint reads"));
    assert_non_null(strstr(note->msg, "'rout_ohm', 'spare'"));
    assert_int_equal(note->loc.line, 3);
    assert_int_equal(a->nextra, 2);
    assert_string_equal(a->extra_name[0], "rout_ohm");
    assert_string_equal(a->extra_name[1], "spare");
    static const OpQty same[] = {OPQ_ID, OPQ_GM, OPQ_VTH, OPQ_VDSAT, OPQ_VGS, OPQ_VDS, OPQ_VON, OPQ_VBS};
    for (size_t i = 0; i < m->n; i++) {
        const OpRecord *rm = &m->recs[i], *ra = op_find(a, rm->name);
        assert_non_null(ra);
        for (size_t k = 0; k < sizeof same / sizeof same[0]; k++) {
            double x = op_q(m, rm, same[k]), y = op_q(a, ra, same[k]);
            assert_int_equal(isnan(x), isnan(y));
            if (!isnan(x))
                assert_true(x == y); /* vbs: -(vsb) restores the text's value exactly */
        }
        double rout = a->extra_vals[ra->extra], spare = a->extra_vals[ra->extra + 1];
        assert_true(isnan(spare));
        if (isnan(op_q(m, rm, OPQ_GDS)))
            assert_true(isnan(rout));
        else
            assert_close(rout, 1.0 / op_q(m, rm, OPQ_GDS), 1e-15);
        assert_int_equal(ra->loc.line, rm->loc.line + 2); /* two comment lines */
    }
    assert_true(op_q(a, op_find(a, "mpsw"), OPQ_VBS) == -1.2);
    op_free(a);
    op_free(m);
    diag_free(&d1);
    diag_free(&d2);
}

/* Small tables: what the format allows. */
static void test_forms(void **state)
{
    (void)state;
    static const char text[] = "\xEF\xBB\xBF" /* a BOM */
                               "# written by hand\n"
                               "Instance , GMB,Width,VSB,model,\"corner\",,Length\n"
                               "\"m.x1.m3\",1e-5,2e-6,0.3,nch,ss,,1e-7\n"
                               "   \n"
                               "@mn1,\" 2.5e-5 \",,-0,\"pch\",42,ignored,2.5e-7\n"
                               "# a comment between rows\n"
                               "\"x2.m\"\"q\",,,,,,,"; /* a quote in a name, no final newline */
    char *path = TU_TMPFILE("forms.csv", text);
    DiagList d;
    OpTable *t = read_ok(path, OPFMT_AUTO, &d);
    assert_int_equal(t->n, 3);
    const OpRecord *a = op_find(t, "x1.m3"), *b = op_find(t, "mn1"), *c = op_find(t, "x2.m\"q");
    assert_non_null(a);
    assert_non_null(b);
    assert_non_null(c);
    assert_true(op_q(t, a, OPQ_GMBS) == 1e-5 && op_q(t, a, OPQ_W) == 2e-6 && op_q(t, a, OPQ_L) == 1e-7);
    assert_true(op_q(t, a, OPQ_VBS) == -0.3); /* vsb negated */
    assert_true(op_q(t, b, OPQ_VBS) == 0.0 && !signbit(op_q(t, b, OPQ_VBS))); /* -(-0) */
    assert_true(op_q(t, b, OPQ_GMBS) == 2.5e-5 && isnan(op_q(t, b, OPQ_W)));
    assert_string_equal(a->model, "nch");
    assert_string_equal(b->model, "pch");
    assert_null(c->model);
    assert_int_equal(a->loc.line, 3);
    assert_int_equal(b->loc.line, 5);
    assert_int_equal(c->loc.line, 7);
    /* the extra column "corner": text in row 1 (a warning, absent), a number in row 2 */
    assert_int_equal(t->nextra, 1);
    assert_string_equal(t->extra_name[0], "corner");
    assert_true(isnan(t->extra_vals[a->extra]) && t->extra_vals[b->extra] == 42.0 && isnan(t->extra_vals[c->extra]));
    assert_int_equal(d.nwarnings, 1);
    const Diag *w = first_sev(&d, DIAG_WARNING);
    assert_int_equal(w->loc.line, 3);
    assert_int_equal(w->loc.col, 29);
    assert_non_null(strstr(w->msg, "extra column 'corner' holds text ('ss')"));
    op_free(t);
    diag_free(&d);
    free(path);
}

static void test_errors(void **state)
{
    (void)state;
    static const struct {
        const char *name, *text;
        OpFormat fmt;
        uint32_t line, col;
        const char *msg;
    } rows[] = {
        {"nonnum.csv", "name,gm,id\nmn1,1e-4,abc\n", OPFMT_AUTO, 2, 10, "column 'id': 'abc' is not a number"},
        {"suffix.csv", "name,gm,id\nmn1,1.2u,3\n", OPFMT_AUTO, 2, 5, "'1.2u' is not a number (plain decimal in SI units"},
        {"nan.csv", "name,gm,id\nmn1,nan,3\n", OPFMT_AUTO, 2, 5, "'nan' is not a finite number"},
        {"inf.csv", "name,gm,id\nmn1,1,-inf\n", OPFMT_AUTO, 2, 7, "'-inf' is not a finite number"},
        {"range.csv", "name,gm,id\nmn1,1,1e999\n", OPFMT_AUTO, 2, 7, "out of range"},
        {"crlf.csv", "name,gm\r\nmn0,1\r\nmn1,abc\r\n", OPFMT_AUTO, 3, 5, "'abc' is not a number"},
        {"quoted.csv", "name,gm\n\"m\nn1\",abc\n", OPFMT_AUTO, 3, 5, "'abc' is not a number"},
        {"more.csv", "name,gm,id\nmn1,1,2,3\n", OPFMT_AUTO, 2, 9, "this row has 4 fields, the header (line 1) has 3"},
        {"fewer.csv", "name,gm,id\nmn1,1\n", OPFMT_AUTO, 2, 6, "this row has 2 fields, the header (line 1) has 3"},
        {"noname.csv", "gm,id\n1,2\n", OPFMT_AUTO, 1, 1, "names no device column"},
        {"noname2.csv", "# c\nnodename,gm\nmn1,1\n", OPFMT_AUTO, 2, 1, "names no device column"},
        {"dup.csv", "name,gm\nmn1,1\nmn2,2\nMN1,3\n", OPFMT_AUTO, 4, 1, "device 'mn1' is listed twice (first on line 2)"},
        {"dup2.csv", "id,name\n1,m.x1.m3\n2, x1.m3\n", OPFMT_AUTO, 3, 4, "device 'x1.m3' is listed twice (first on line 2)"},
        {"dupcol.csv", "name,gm,GM\nmn1,1,2\n", OPFMT_AUTO, 1, 9, "column 'GM' repeats column 2 ('gm')"},
        {"dupalias.csv", "name,vth,vt\nmn1,1,2\n", OPFMT_AUTO, 1, 10, "column 'vt' repeats column 2 ('vth')"},
        {"dupname.csv", "device,name,gm\na,b,1\n", OPFMT_AUTO, 1, 8, "column 'name' repeats column 1"},
        {"emptyname.csv", "name,gm\n,1\n", OPFMT_AUTO, 2, 1, "this row has no device name"},
        {"open.csv", "name,gm\n\"mn1,1\n", OPFMT_AUTO, 2, 1, "never closed"},
        {"quote.csv", "name,gm\nm\"n1,1\n", OPFMT_AUTO, 2, 2, "CSV syntax"},
        {"norows.csv", "name,gm\n", OPFMT_AUTO, 1, 1, "has a header but no device rows"},
        {"comments.csv", "# only\n# comments\n", OPFMT_CSV, 0, 0, "no header line"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        char *path = tu_tmpfile(rows[i].name, rows[i].text, strlen(rows[i].text));
        DiagList d;
        diag_init(&d);
        OpTable *t = (OpTable *)1;
        int rc = op_read(path, rows[i].fmt, &t, &d);
        const Diag *e = first_sev(&d, DIAG_ERROR);
        if (rc != ERR_INPUT || !e || e->loc.line != rows[i].line || e->loc.col != rows[i].col ||
            !strstr(e->msg, rows[i].msg)) {
            print_error("%s: rc %d\n", rows[i].name, rc);
            diag_print(&d, stderr, 0, DIAG_NOTE);
        }
        assert_int_equal(rc, ERR_INPUT);
        assert_null(t);
        assert_non_null(e);
        assert_int_equal(e->loc.line, rows[i].line);
        assert_int_equal(e->loc.col, rows[i].col);
        assert_non_null(strstr(e->msg, rows[i].msg));
        diag_free(&d);
        free(path);
    }
}

/* Every bad row is reported, not only the first. */
static void test_all_errors(void **state)
{
    (void)state;
    static const char text[] = "name,gm,id\nmn1,x,1\nmn2,1,y\nmn3,1,2\nmn1,1,2\nmn4,1,z"; /* no final newline */
    char *path = TU_TMPFILE("many.csv", text);
    DiagList d;
    diag_init(&d);
    OpTable *t;
    assert_int_equal(op_read(path, OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_int_equal(d.nerrors, 4);
    assert_int_equal(d.items[0].loc.line, 2);
    assert_int_equal(d.items[1].loc.line, 3);
    assert_int_equal(d.items[2].loc.line, 5); /* mn1 again: the first mn1 row was bad, but named */
    assert_int_equal(d.items[3].loc.line, 6);
    assert_int_equal(d.items[3].loc.col, 7);
    diag_free(&d);
    free(path);
}

/* Plain rows (no quote, one line) are split by the reader itself, the others by libcsv: the same
 * rows with their name quoted (which forces libcsv and changes no value) must give the same records
 * and the same diagnostics, blanks, tabs, empty fields and CRLF included. */
static void test_plain_rows_as_libcsv(void **state)
{
    (void)state;
    static const char *const rows[] = {
        "mn1, 1e-3 ,\t2e-4\t,,0.5",
        "mn2,,, \t ,",
        "mn3,1,2,3,4\r",
        "mn4,  -0 ,+5e-1,1e+2,",
        "mn5, 1x ,2,3,4", /* a bad value: the same line and column either way */
        "  mn6  ,7,,8,",
    };
    Buf plain = BUF_INIT, quoted = BUF_INIT;
    assert_int_equal(buf_puts(&plain, "name,gm,id,gds,vth\n"), ERR_OK);
    assert_int_equal(buf_puts(&quoted, "name,gm,id,gds,vth\n"), ERR_OK);
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        const char *r = rows[i], *comma = strchr(r, ',');
        const char *ns = r, *ne = comma;
        while (*ns == ' ')
            ns++;
        while (ne > ns && ne[-1] == ' ')
            ne--;
        assert_int_equal(buf_printf(&plain, "%s\n", r), ERR_OK);
        assert_int_equal(buf_printf(&quoted, "\"%.*s\"%s\n", (int)(ne - ns), ns, comma), ERR_OK);
    }
    char *pa = tu_tmpfile("plain.csv", plain.data, plain.len), *pb = tu_tmpfile("quoted.csv", quoted.data, quoted.len);
    DiagList da, db;
    diag_init(&da);
    diag_init(&db);
    OpTable *ta = NULL, *tb = NULL;
    assert_int_equal(op_read(pa, OPFMT_AUTO, &ta, &da), ERR_INPUT); /* mn5's value */
    assert_int_equal(op_read(pb, OPFMT_AUTO, &tb, &db), ERR_INPUT);
    assert_int_equal(da.n, db.n);
    for (size_t i = 0; i < da.n; i++) {
        assert_int_equal(da.items[i].sev, db.items[i].sev);
        assert_int_equal(da.items[i].loc.line, db.items[i].loc.line);
        assert_string_equal(da.items[i].msg, db.items[i].msg);
    }
    diag_free(&da);
    diag_free(&db);
    /* without the bad row both read: every value the same, bit for bit */
    static const char bad[] = "mn5, 1x ,2,3,4\n";
    char *at = strstr(plain.data, bad);
    memmove(at, at + strlen(bad), strlen(at + strlen(bad)) + 1);
    at = strstr(quoted.data, "\"mn5\", 1x ,2,3,4\n");
    memmove(at, at + strlen(bad) + 2, strlen(at + strlen(bad) + 2) + 1);
    free(pa);
    free(pb);
    pa = tu_tmpfile("plain2.csv", plain.data, strlen(plain.data));
    pb = tu_tmpfile("quoted2.csv", quoted.data, strlen(quoted.data));
    ta = read_ok(pa, OPFMT_AUTO, &da);
    tb = read_ok(pb, OPFMT_AUTO, &db);
    assert_int_equal(ta->n, 5);
    assert_int_equal(tb->n, 5);
    for (size_t i = 0; i < ta->n; i++) {
        assert_string_equal(ta->recs[i].name, tb->recs[i].name);
        assert_int_equal(ta->recs[i].loc.line, tb->recs[i].loc.line);
        double qa[OPQ_COUNT], qb[OPQ_COUNT];
        op_values(ta, &ta->recs[i], qa);
        op_values(tb, &tb->recs[i], qb);
        assert_memory_equal(qa, qb, sizeof qa);
    }
    const OpRecord *r = op_find(ta, "mn1");
    assert_true(r && op_q(ta, r, OPQ_GM) == 1e-3 && op_q(ta, r, OPQ_ID) == 2e-4 && isnan(op_q(ta, r, OPQ_GDS)) &&
                op_q(ta, r, OPQ_VTH) == 0.5);
    r = op_find(ta, "mn2");
    assert_true(r && isnan(op_q(ta, r, OPQ_GM)) && isnan(op_q(ta, r, OPQ_ID)) && isnan(op_q(ta, r, OPQ_GDS)) &&
                isnan(op_q(ta, r, OPQ_VTH)));
    r = op_find(ta, "mn4");
    assert_true(r && op_q(ta, r, OPQ_GM) == 0.0 && signbit(op_q(ta, r, OPQ_GM)) && op_q(ta, r, OPQ_ID) == 0.5 &&
                op_q(ta, r, OPQ_GDS) == 100.0);
    assert_non_null(op_find(ta, "mn6"));
    op_free(ta);
    op_free(tb);
    diag_free(&da);
    diag_free(&db);
    buf_free(&plain);
    buf_free(&quoted);
    free(pa);
    free(pb);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_mix),    cmocka_unit_test(test_alias),      cmocka_unit_test(test_forms),
        cmocka_unit_test(test_errors), cmocka_unit_test(test_all_errors), cmocka_unit_test(test_plain_rows_as_libcsv),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
