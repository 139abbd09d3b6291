/* test_report: engineering notation, the writer table, rep_prepare (findings grouped across corners,
 * the worst corner named), the text report against golden files (one corner and three), the JSON
 * report (schema 2) through the strict validator of jsoncheck.h (keys, nulls for absent values,
 * escapes, numbers that read back exactly, the per-corner shape), write errors, unprepared contexts,
 * and linear time on many rows. The scene (reportscene.h) is built by hand; findings come from
 * chk_run. */
#include "testutil.h"

#include "check.h"
#include "jsoncheck.h"
#include "report.h"
#include "reportscene.h"

/* ---- rep_eng ---- */

static const struct {
    double v;
    const char *unit, *want;
} eng_rows[] = {
    {1.23e-5, "A", "12.3uA"}, {NAN, "A", "-"},        {0.0, "V", "0V"},          {999.7, "V", "1kV"},
    {0.0012, "", "1.2m"},     {-0.012, "V", "-12mV"}, {1e-15, "F", "1fF"},       {2.2814e9, "Hz", "2.28GHz"},
    {1e30, "", "1e+30"},      {6.6667, "/V", "6.67/V"}, {73.333, "", "73.3"},    {100.0, "", "100"},
    {0.9995, "", "1"},        {1e-3, "", "1m"},       {1.0, "V", "1V"},          {12e-6, "A", "12uA"},
    {INFINITY, "", "inf"},    {-2.5e-12, "A", "-2.5pA"}, {4.60419e-15, "F", "4.6fF"}, {999.4999, "", "999"},
    {1e-24, "", "1y"},        {123456.0, "", "123k"}, {0.3, "V", "300mV"},       {9.996e-7, "A", "1uA"}, {9.994e-7, "A", "999nA"},
    {1.5e-4, "S", "150uS"},   {-0.0, "V", "0V"},      {5e-300, "", "5e-300"},
    /* each end of the table of powers of 1000 */
    {1e3, "", "1k"},          {1e6, "V", "1MV"},      {1e24, "", "1Y"},          {1e-21, "", "1z"},
    {9.99e-25, "", "9.99e-25"}, {999.96e-9, "A", "1uA"},
};

static void test_eng(void **state)
{
    (void)state;
    char buf[32];
    for (size_t i = 0; i < sizeof eng_rows / sizeof eng_rows[0]; i++) {
        rep_eng(eng_rows[i].v, eng_rows[i].unit, buf, sizeof buf);
        if (strcmp(buf, eng_rows[i].want) != 0) {
            print_error("rep_eng(%.17g, \"%s\") = \"%s\", expected \"%s\"\n", eng_rows[i].v, eng_rows[i].unit, buf,
                        eng_rows[i].want);
            fail();
        }
    }
    /* a short buffer is cut, never overrun */
    char small[5];
    memset(small, 'z', sizeof small);
    rep_eng(1.23e-5, "A", small, 4);
    assert_int_equal(small[4], 'z');
    assert_int_equal(strlen(small), 3);
    assert_ptr_equal(rep_eng(1.0, NULL, buf, sizeof buf), buf);
    assert_string_equal(buf, "1");
}

static void test_lookup(void **state)
{
    (void)state;
    static const struct {
        const char *name;
        const ReportWriter *w;
    } rows[] = {{"text", &rep_text_writer}, {"json", &rep_json_writer},   {"csv", &rep_csv_writer},
                {"junit", &rep_junit_writer}, {"sarif", &rep_sarif_writer}, {"html", &rep_html_writer}};
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        assert_ptr_equal(rep_lookup(rows[i].name), rows[i].w);
        assert_string_equal(rows[i].w->name, rows[i].name);
        assert_non_null(strstr(rep_format_names, rows[i].name));
    }
    assert_null(rep_lookup("xml"));
    assert_null(rep_lookup("JSON"));
    assert_null(rep_lookup(""));
    assert_null(rep_lookup(NULL));
}

/* ---- rep_prepare: groups across corners, worst corner ---- */

typedef struct {
    int corner;
    size_t row;
    CheckId check;
    Severity sev;
    double value, limit;
    int waived;
} FRow;

typedef struct {
    size_t row;
    CheckId check;
    int worst;     /* corner */
    size_t n;      /* corners in the group */
    int waived;
} GRow;

/* Findings given per corner (each corner's list in chk_run's order: severity, then device), the
 * groups expected in order. The worst corner: not waived, then higher severity, then farther from
 * the limit relative to it, then the first corner. */
static const struct {
    const char *name;
    FRow f[12];
    size_t nf;
    GRow g[8];
    size_t ng;
} prep_rows[] = {
    {"one corner keeps chk_run's order",
     {{0, 2, CHECK_MARGIN, SEV_ERROR, 0.012, 0.05, 0}, {0, 2, CHECK_GAIN, SEV_WARNING, 8, 10, 0},
      {0, 3, CHECK_NODATA, SEV_WARNING, NAN, NAN, 0}},
     3, {{2, CHECK_MARGIN, 0, 1, 0}, {2, CHECK_GAIN, 0, 1, 0}, {3, CHECK_NODATA, 0, 1, 0}}, 3},
    {"the corner farthest past the limit is the worst",
     {{0, 2, CHECK_MARGIN, SEV_ERROR, 0.040, 0.05, 0}, {1, 2, CHECK_MARGIN, SEV_ERROR, 0.005, 0.05, 0},
      {2, 2, CHECK_MARGIN, SEV_ERROR, 0.030, 0.05, 0}},
     3, {{2, CHECK_MARGIN, 1, 3, 0}}, 1},
    {"severity before distance",
     {{0, 1, CHECK_GAIN, SEV_WARNING, 1.0, 10, 0}, {2, 1, CHECK_GAIN, SEV_ERROR, 9.0, 10, 0}},
     2, {{1, CHECK_GAIN, 2, 2, 0}}, 1},
    {"a tie goes to the first corner; absent values rank lowest",
     {{0, 4, CHECK_NODATA, SEV_WARNING, NAN, NAN, 0}, {1, 4, CHECK_NODATA, SEV_WARNING, NAN, NAN, 0},
      {1, 0, CHECK_GAIN, SEV_WARNING, NAN, 10, 0}, {2, 0, CHECK_GAIN, SEV_WARNING, 9.9, 10, 0}},
     4, {{0, CHECK_GAIN, 2, 2, 0}, {4, CHECK_NODATA, 0, 2, 0}}, 2},
    {"errors first over all corners, then devices in netlist order",
     {{0, 5, CHECK_OFF, SEV_WARNING, 3e-14, 1e-10, 0}, {1, 0, CHECK_TRIODE, SEV_ERROR, -0.01, 0, 0},
      {1, 5, CHECK_OFF, SEV_WARNING, 2e-14, 1e-10, 0}, {2, 3, CHECK_MARGIN, SEV_ERROR, 0.01, 0.05, 0}},
     4, {{0, CHECK_TRIODE, 1, 1, 0}, {3, CHECK_MARGIN, 2, 1, 0}, {5, CHECK_OFF, 1, 2, 0}}, 3},
    {"a waived corner is never the worst; all waived goes last",
     {{0, 2, CHECK_GAIN, SEV_WARNING, 1, 10, 1}, {1, 2, CHECK_GAIN, SEV_WARNING, 9, 10, 0},
      {0, 1, CHECK_OFF, SEV_WARNING, 1e-14, 1e-10, 1}, {0, 4, CHECK_GAIN, SEV_INFO, NAN, 10, 0}},
     4, {{2, CHECK_GAIN, 1, 2, 0}, {4, CHECK_GAIN, 0, 1, 0}, {1, CHECK_OFF, 0, 1, 1}}, 3},
    {"two findings of one check on one device pair up by order",
     {{0, 2, CHECK_MARGIN, SEV_ERROR, 0.01, 0.05, 0}, {0, 2, CHECK_MARGIN, SEV_WARNING, 0.04, 0.05, 0},
      {1, 2, CHECK_MARGIN, SEV_ERROR, 0.02, 0.05, 0}},
     3, {{2, CHECK_MARGIN, 0, 2, 0}, {2, CHECK_MARGIN, 0, 1, 0}}, 2},
    {"no findings at all", {{0}}, 0, {{0}}, 0},
};

static void test_prepare(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    for (size_t t = 0; t < sizeof prep_rows / sizeof prep_rows[0]; t++) {
        Findings fs[MAXC];
        RepCorner rc[MAXC];
        memset(fs, 0, sizeof fs);
        for (int k = 0; k < MAXC; k++) {
            fs[k].items = calloc(prep_rows[t].nf + 1, sizeof *fs[k].items);
            assert_non_null(fs[k].items);
            rc[k] = (RepCorner){scene_label[k], "x.log", &s.op[0], &s.j[0], &fs[k]};
        }
        for (size_t i = 0; i < prep_rows[t].nf; i++) {
            const FRow *r = &prep_rows[t].f[i];
            Finding f;
            memset(&f, 0, sizeof f);
            f.row = r->row, f.check = r->check, f.sev = r->sev, f.value = r->value, f.limit = r->limit;
            f.waived = r->waived;
            f.message = "m";
            fs[r->corner].items[fs[r->corner].n++] = f;
            if (!r->waived)
                fs[r->corner].count[r->sev]++;
        }
        ReportCtx c = s.ctx;
        c.corners = rc;
        c.ncorners = MAXC;
        RepPrep p;
        assert_int_equal(rep_prepare(&c, &p), ERR_OK);
        if (p.ngroups != prep_rows[t].ng) {
            print_error("%s: %zu groups, expected %zu\n", prep_rows[t].name, p.ngroups, prep_rows[t].ng);
            fail();
        }
        size_t refs = 0;
        for (size_t g = 0; g < p.ngroups; g++) {
            const RepGroup *gr = &p.groups[g];
            const GRow *w = &prep_rows[t].g[g];
            if (gr->row != w->row || gr->check != (int)w->check || (int)gr->worst.corner != w->worst || gr->n != w->n ||
                gr->waived != w->waived) {
                print_error("%s: group %zu is row %zu check %d worst %u n %zu waived %d; expected %zu %d %d %zu %d\n",
                            prep_rows[t].name, g, gr->row, gr->check, gr->worst.corner, gr->n, gr->waived, w->row,
                            (int)w->check, w->worst, w->n, w->waived);
                fail();
            }
            /* every member points back at its group, members in corner order */
            for (size_t q = gr->first; q < gr->first + gr->n; q++) {
                assert_int_equal(p.group_of[p.base[p.refs[q].corner] + p.refs[q].index], g);
                assert_int_equal(rep_finding(&c, p.refs[q])->row, gr->row);
                if (q > gr->first)
                    assert_true(p.refs[q].corner > p.refs[q - 1].corner);
            }
            refs += gr->n;
        }
        assert_int_equal(refs, prep_rows[t].nf);
        assert_int_equal(p.nrefs, prep_rows[t].nf);
        /* row_start lists each device's findings */
        size_t total = 0;
        for (size_t r = 0; r < NDEV; r++)
            for (size_t q = p.row_start[r]; q < p.row_start[r + 1]; q++, total++)
                assert_int_equal(rep_finding(&c, p.refs[q])->row, r);
        assert_int_equal(total, prep_rows[t].nf);
        rep_prep_free(&p);
        for (int k = 0; k < MAXC; k++)
            free(fs[k].items);
    }
    scene_free(&s);
}

/* ---- the text report ---- */

static void test_text_golden(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    int rc;
    size_t n;
    char *text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    golden("fixtures/report/amp.txt", text);
    assert_null(strchr(text, '\033')); /* no colour unless asked */
    assert_null(strstr(text, "corner"));  /* one corner: no corner column, no corner notes */
    free(text);
    scene_free(&s);
}

static void test_text_corners(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    int rc;
    size_t n;
    char *text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    golden("fixtures/report/amp3.txt", text);
    /* x1.m3: its margin is worst in hot (5 mV of 50), it is in triode in cold only, its low gain is
       reported in typ and hot (the same 8 there: the first corner given is the worst), not in cold,
       where the triode finding stands for it */
    assert_non_null(strstr(text, "sat-margin  VDS-VDSAT is 5 mV, below the 50 mV minimum"));
    assert_non_null(strstr(text, "[worst hot; also typ]"));
    assert_non_null(strstr(text, "gm/gds is 8, below the minimum of 10: the device gives little voltage gain  [worst typ; also hot]"));
    assert_non_null(strstr(text, "[cold only]"));
    assert_null(strstr(text, "gm/gds is 6, below the minimum of 10"));
    /* one table row per device per corner */
    assert_non_null(strstr(text, "x1.m3                   nch    2u/500n m=2   cold"));
    free(text);
    scene_free(&s);
}

static void test_text_details(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    int rc;
    size_t n;
    s.ctx.color = 1;
    char *text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    assert_non_null(strstr(text, "\033[1;31mErrors (1)\033[0m"));
    free(text);
    /* fail level error: one finding at or above it */
    s.ctx.color = 0;
    s.ctx.fail_level = SEV_ERROR;
    text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_non_null(strstr(text, "fail level error: 1 at or above it, FAIL\n"));
    free(text);
    /* no findings at all */
    Findings none;
    memset(&none, 0, sizeof none);
    ReportCtx c = s.ctx;
    c.corners = NULL;
    c.ncorners = 0;
    c.findings = &none;
    RepPrep p;
    assert_int_equal(rep_prepare(&c, &p), ERR_OK);
    text = render(&rep_text_writer, &c, &rc, &n);
    assert_non_null(strstr(text, "No findings."));
    assert_non_null(strstr(text, "none at or above it, pass\n"));
    free(text);
    rep_prep_free(&p);
    scene_free(&s);
}

/* ---- JSON ---- */

static void test_validator(void **state)
{
    (void)state;
    /* the validator itself must refuse what is not JSON */
    static const char *const bad[] = {
        "", "{", "{\"a\":1,}", "[1,]", "{\"a\" 1}", "{'a':1}", "01", "1.", ".5", "-", "1e", "+1",
        "\"\x01\"", "\"\\x\"", "\"\\ud800\"", "\"\xff\"", "\"\xc0\xaf\"", "nul", "NaN", "{\"a\":1,\"a\":2}", "[1] 2",
        "\"abc", "{\"a\":inf}",
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        JVal *v = jparse(bad[i], strlen(bad[i]));
        if (v) {
            print_error("accepted: %s\n", bad[i]);
            jfree(v);
            fail();
        }
    }
    static const char *const good[] = {
        "0", "-0", "1e-05", "[]", "{}", "\"\\u00b5\\ud83d\\ude00\"", "{\"a\":[null,true,false,1.5E+3]}", " \"\xc2\xb5\" ",
    };
    for (size_t i = 0; i < sizeof good / sizeof good[0]; i++) {
        JVal *v = jparse(good[i], strlen(good[i]));
        assert_non_null(v);
        jfree(v);
    }
}

/* Schema 3 leaves out the keys whose value is absent: these are the ones every device has, and
 * figure_keys the ones a device with a complete record has besides. */
static const char *const device_keys[] = {"name",     "model",  "type",        "w",       "l",
                                          "m",        "nf",     "file",        "line",    "has_data",
                                          "region",   "swapped", "cgg_overlap", NULL};
static const char *const figure_keys[] = {"id",    "gm",   "gds",  "vgs", "vds", "vsb",    "vth", "vdsat",
                                          "cgg",   "gm_id", "id_w", "gain", "ft", "vov", "margin", NULL};
static const char *const corner_device_keys[] = {"name", "model", "type", "w", "l", "m", "nf", "file", "line",
                                                 "corners", NULL};
static const char *const per_corner_keys[] = {"corner", "has_data", "region", "swapped", NULL};
static const char *const finding_keys[] = {"device", "check",        "severity",   "message", "file",
                                           "line",   "rule",         "corner",     "worst_corner",
                                           "in_corners", "waived",   "fails",      NULL};

/* A key left out (schema 3) or null. */
static int absent(const JVal *o, const char *k)
{
    const JVal *v = jget(o, k);
    return !v || v->t == J_NULL;
}
static const char *const summary_keys[] = {"devices", "corners", "errors", "warnings", "infos", "waived", "matched",
                                           "without_data", "orphans", "fail_level", "failing", "failed", NULL};
static const char *const top_keys[] = {"tool", "version", "schema", "netlist", "op", "corners", "devices",
                                       "findings", "orphan_records", "loose_findings", "summary", NULL};

static JVal *render_json(const ReportCtx *c, char **text)
{
    int rc;
    size_t n;
    *text = render(&rep_json_writer, c, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    JVal *root = jparse(*text, n);
    if (!root) {
        print_error("not valid JSON:\n%s\n", *text);
        fail();
    }
    return root;
}

static void test_json(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    char *text;
    JVal *root = render_json(&s.ctx, &text);
    has_keys(root, top_keys);
    assert_string_equal(jget(root, "tool")->str, "biaslint");
    assert_string_equal(jget(root, "version")->str, BIASLINT_VERSION);
    assert_int_equal(jget(root, "schema")->num, 3);
    assert_string_equal(jget(root, "netlist")->str, "amp.cir");
    assert_string_equal(jget(root, "op")->str, "amp.log");
    const JVal *cs = jget(root, "corners");
    assert_int_equal(cs->n, 1);
    assert_string_equal(jget(cs->items[0], "label")->str, "");
    assert_string_equal(jget(cs->items[0], "op_format")->str, "show");

    const JVal *devs = jget(root, "devices");
    assert_int_equal(devs->t, J_ARR);
    assert_int_equal(devs->n, NDEV);
    for (size_t i = 0; i < devs->n; i++) {
        has_keys(devs->items[i], device_keys);
        if (i != 3 && i != 5) /* without data; off, without vdsat */
            has_keys(devs->items[i], figure_keys);
        assert_null(jget(devs->items[i], "corners")); /* one corner: the flat layout of schema 1 */
    }
    const JVal *m1 = devs->items[0];
    assert_string_equal(jget(m1, "name")->str, "x1.m1");
    assert_string_equal(jget(m1, "type")->str, "nmos");
    assert_string_equal(jget(m1, "file")->str, "lib/stage.inc");
    assert_int_equal(jget(m1, "line")->num, 4);
    /* numbers as read and as given read back to the very same double, computed figures to six digits */
    assert_true(jget(m1, "id")->num == s.rows[0][0].fig.id);
    assert_true(jget(m1, "gm_id")->num == tu_six(s.rows[0][0].fig.gm_id));
    assert_true(jget(m1, "ft")->num == tu_six(s.rows[0][0].fig.ft));
    assert_true(jget(m1, "w")->num == 2e-6);
    assert_string_equal(jget(m1, "region")->str, "moderate");
    assert_int_equal(jget(m1, "swapped")->t, J_BOOL);
    assert_false(jget(m1, "swapped")->b);
    /* the swapped PMOS */
    const JVal *m2 = devs->items[1];
    assert_true(jget(m2, "swapped")->b);
    assert_string_equal(jget(m2, "type")->str, "pmos");
    assert_true(jget(m2, "vds")->num == 0.6);
    assert_true(jget(m2, "nf")->num == 2);
    /* the device without data: every figure null, region unknown */
    const JVal *m4 = devs->items[3];
    static const char *const figs[] = {"id", "gm", "gds", "vgs", "vds", "vsb", "vth", "vdsat", "cgg",
                                       "gm_id", "id_w", "gain", "ft", "vov", "margin", NULL};
    for (size_t k = 0; figs[k]; k++)
        if (!absent(m4, figs[k])) {
            print_error("x1.m4 %s is not null\n", figs[k]);
            fail();
        }
    assert_string_equal(jget(m4, "region")->str, "unknown");
    assert_true(jget(m4, "w")->num == 8e-6);
    /* the off device has no vdsat: vdsat and margin null, the rest present */
    const JVal *mt = devs->items[5];
    assert_true(absent(mt, "vdsat"));
    assert_true(absent(mt, "margin"));
    assert_int_equal(jget(mt, "id")->t, J_NUM);
    assert_string_equal(jget(mt, "region")->str, "off");
    assert_int_equal(jget(mt, "model")->t, J_STR);
    assert_true(absent(mt, "cell"));

    const JVal *fs = jget(root, "findings");
    assert_int_equal(fs->t, J_ARR);
    assert_int_equal(fs->n, s.f[0].n);
    for (size_t i = 0; i < fs->n; i++) {
        has_keys(fs->items[i], finding_keys);
        assert_string_equal(jget(fs->items[i], "message")->str, s.f[0].items[i].message);
        assert_string_equal(jget(fs->items[i], "corner")->str, "");
        assert_null(jget(fs->items[i], "status")); /* no baseline */
    }
    const JVal *f0 = fs->items[0];
    assert_string_equal(jget(f0, "severity")->str, "error");
    assert_string_equal(jget(f0, "check")->str, "sat-margin");
    assert_string_equal(jget(f0, "device")->str, "x1.m3");
    assert_true(jget(f0, "limit")->num == 0.05);
    assert_int_equal(jget(f0, "line")->num, 6);
    assert_non_null(strstr(jget(f0, "rule")->str, "<defaults>:"));
    assert_true(jget(f0, "fails")->b);
    assert_false(jget(f0, "waived")->b);
    /* the no-data finding: value and limit null */
    int saw_nodata = 0;
    for (size_t i = 0; i < fs->n; i++)
        if (!strcmp(jget(fs->items[i], "check")->str, "no-data")) {
            saw_nodata = 1;
            assert_true(absent(fs->items[i], "value"));
            assert_true(absent(fs->items[i], "limit"));
        }
    assert_true(saw_nodata);
    assert_int_equal(jget(root, "orphan_records")->n, 1);
    assert_string_equal(jget(jget(root, "orphan_records")->items[0], "name")->str, "x9.m1");

    const JVal *sum = jget(root, "summary");
    has_keys(sum, summary_keys);
    assert_int_equal(jget(sum, "devices")->num, NDEV);
    assert_int_equal(jget(sum, "corners")->num, 1);
    assert_int_equal(jget(sum, "errors")->num, s.f[0].count[SEV_ERROR]);
    assert_int_equal(jget(sum, "warnings")->num, s.f[0].count[SEV_WARNING]);
    assert_int_equal(jget(sum, "infos")->num, s.f[0].count[SEV_INFO]);
    assert_int_equal(jget(sum, "matched")->num, 5);
    assert_int_equal(jget(sum, "without_data")->num, 1);
    assert_int_equal(jget(sum, "orphans")->num, 1);
    assert_string_equal(jget(sum, "fail_level")->str, "warning");
    assert_int_equal(jget(sum, "failing")->num, 4);
    assert_true(jget(sum, "failed")->b);
    jfree(root);
    free(text);
    scene_free(&s);
}

static const JVal *finding_of(const JVal *fs, const char *dev, const char *check, const char *corner)
{
    for (size_t i = 0; i < fs->n; i++)
        if (!strcmp(jget(fs->items[i], "device")->str, dev) && !strcmp(jget(fs->items[i], "check")->str, check) &&
            !strcmp(jget(fs->items[i], "corner")->str, corner))
            return fs->items[i];
    return NULL;
}

static void test_json_corners(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    char *text;
    JVal *root = render_json(&s.ctx, &text);
    has_keys(root, top_keys);
    const JVal *cs = jget(root, "corners");
    assert_int_equal(cs->n, 3);
    for (int k = 0; k < 3; k++)
        assert_string_equal(jget(cs->items[k], "label")->str, scene_label[k]);
    assert_string_equal(jget(cs->items[2], "op_format")->str, "raw");
    assert_string_equal(jget(root, "op")->str, "amp.log"); /* the first corner's, for schema-1 readers */
    const JVal *devs = jget(root, "devices");
    assert_int_equal(devs->n, NDEV);
    for (size_t i = 0; i < NDEV; i++) {
        has_keys(devs->items[i], corner_device_keys);
        assert_null(jget(devs->items[i], "gm_id")); /* figures only per corner */
        const JVal *pc = jget(devs->items[i], "corners");
        assert_int_equal(pc->n, 3);
        for (int k = 0; k < 3; k++) {
            has_keys(pc->items[k], per_corner_keys);
            assert_string_equal(jget(pc->items[k], "corner")->str, scene_label[k]);
            if (i != 3)
                assert_true(jget(pc->items[k], "vds")->num == s.rows[k][i].fig.vds);
        }
    }
    /* x1.m3 is in triode in cold */
    assert_string_equal(jget(jget(devs->items[2], "corners")->items[1], "region")->str, "triode");
    const JVal *fs = jget(root, "findings");
    size_t total = 0;
    for (int k = 0; k < 3; k++)
        total += s.f[k].n;
    assert_int_equal(fs->n, total);
    for (size_t i = 0; i < fs->n; i++)
        has_keys(fs->items[i], finding_keys);
    /* the worst corner of each device and check, named on every corner's finding */
    const JVal *m = finding_of(fs, "x1.m3", "sat-margin", "typ");
    assert_non_null(m);
    assert_string_equal(jget(m, "worst_corner")->str, "hot");
    assert_int_equal(jget(m, "in_corners")->num, 2);
    assert_null(finding_of(fs, "x1.m3", "sat-margin", "cold")); /* triode there instead */
    const JVal *t = finding_of(fs, "x1.m3", "triode", "cold");
    assert_non_null(t);
    assert_string_equal(jget(t, "worst_corner")->str, "cold");
    assert_int_equal(jget(t, "in_corners")->num, 1);
    assert_string_equal(jget(finding_of(fs, "x1.m3", "gain", "hot"), "worst_corner")->str, "typ");
    assert_null(finding_of(fs, "x1.m3", "gain", "cold")); /* in triode there: the triode finding says it */
    assert_string_equal(jget(finding_of(fs, "x1.m1", "sat-margin", "hot"), "worst_corner")->str, "hot");
    /* a device and check's findings stand together, corner order within */
    size_t at = 0;
    for (; at < fs->n; at++)
        if (jget(fs->items[at], "device")->str == jget(m, "device")->str)
            break;
    const JVal *sum = jget(root, "summary");
    assert_int_equal(jget(sum, "corners")->num, 3);
    size_t errors = 0;
    for (int k = 0; k < 3; k++)
        errors += s.f[k].count[SEV_ERROR];
    assert_int_equal(jget(sum, "errors")->num, errors);
    assert_int_equal(jget(sum, "orphans")->num, 3);
    assert_int_equal(jget(root, "orphan_records")->n, 3);
    assert_string_equal(jget(jget(root, "orphan_records")->items[2], "corner")->str, "hot");
    jfree(root);
    free(text);
    scene_free(&s);
}

/* Names with quotes, backslashes, control characters, UTF-8 and a byte that is not UTF-8. */
static void test_json_escapes(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    s.devs[0].name = "x\"q\\b\t\x01\xc2\xb5\xff/z";
    s.ctx.netlist_path = NULL; /* absent: null */
    char *text;
    JVal *root = render_json(&s.ctx, &text);
    assert_non_null(strstr(text, "\"x\\\"q\\\\b\\t\\u0001\xc2\xb5\\ufffd/z\""));
    assert_string_equal(jget(jget(root, "devices")->items[0], "name")->str, "x\"q\\b\t\x01\xc2\xb5\xef\xbf\xbd/z");
    assert_int_equal(jget(root, "netlist")->t, J_NULL);
    jfree(root);
    free(text);
    scene_free(&s);
}

static const ReportWriter *const all_writers[] = {&rep_text_writer,  &rep_json_writer,  &rep_csv_writer,
                                                  &rep_junit_writer, &rep_sarif_writer, &rep_html_writer};
#define NWRITERS (sizeof all_writers / sizeof all_writers[0])

static void test_write_errors(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    for (size_t w = 0; w < NWRITERS; w++) {
        FILE *fp = fopen("/dev/full", "w");
        if (!fp)
            skip();
        setvbuf(fp, NULL, _IOFBF, 512); /* so the failure shows before the last flush */
        int rc = all_writers[w]->write(&s.ctx, fp);
        if (rc != ERR_IO) {
            print_error("%s writer on a full disk: %d, expected ERR_IO\n", all_writers[w]->name, rc);
            fail();
        }
        fclose(fp);
    }
    scene_free(&s);
}

/* Without rep_prepare a writer has nothing to group by: it refuses, it does not crash. */
static void test_unprepared(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    ReportCtx c = s.ctx;
    c.prep = NULL;
    for (size_t w = 0; w < NWRITERS; w++) {
        int rc;
        size_t n;
        char *text = render(all_writers[w], &c, &rc, &n);
        assert_int_equal(rc, ERR_INPUT);
        free(text);
    }
    scene_free(&s);
}

/* 200 000 rows in one corner and 3 x 40 000 in three through every writer: linear (a quadratic step
   would not finish); 20 000 of them validated and the table columns checked. */
typedef struct {
    Row *rows[MAXC];
    Joined j[MAXC];
    Findings f[MAXC];
    RepCorner rc[MAXC];
    ReportCtx c;
    RepPrep p;
    size_t nc;
} Many;

static void many(Sc *s, size_t n, size_t nc, Many *m)
{
    memset(m, 0, sizeof *m);
    m->nc = nc;
    for (size_t k = 0; k < nc; k++) {
        m->rows[k] = malloc(n * sizeof *m->rows[k]);
        assert_non_null(m->rows[k]);
        for (size_t i = 0; i < n; i++)
            m->rows[k][i] = s->rows[k][i % NDEV];
        m->j[k] = s->j[k];
        m->j[k].rows = m->rows[k];
        m->j[k].n = n;
        assert_int_equal(chk_run(s->rs, &s->ds, &m->j[k], &m->f[k]), ERR_OK);
        m->rc[k] = (RepCorner){nc > 1 ? scene_label[k] : "", "amp.log", &s->op[k], &m->j[k], &m->f[k]};
    }
    m->c = s->ctx;
    m->c.corners = m->rc;
    m->c.ncorners = nc;
    assert_int_equal(rep_prepare(&m->c, &m->p), ERR_OK);
}

static void many_free(Many *m)
{
    for (size_t k = 0; k < m->nc; k++) {
        chk_free(&m->f[k]);
        free(m->rows[k]);
    }
    rep_prep_free(&m->p);
}

static void test_many_rows(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    Many m;
    for (size_t nc = 1; nc <= 3; nc += 2) {
        many(&s, nc == 1 ? 200000 : 40000, nc, &m);
        FILE *fp = fopen("/dev/null", "w");
        assert_non_null(fp);
        for (size_t w = 0; w < NWRITERS; w++)
            assert_int_equal(all_writers[w]->write(&m.c, fp), ERR_OK);
        fclose(fp);
        many_free(&m);
    }

    many(&s, 20000, 1, &m);
    int rc;
    size_t len;
    char *text = render(&rep_json_writer, &m.c, &rc, &len);
    assert_int_equal(rc, ERR_OK);
    JVal *root = jparse(text, len);
    assert_non_null(root);
    assert_int_equal(jget(root, "devices")->n, 20000);
    assert_int_equal(jget(root, "findings")->n, m.f[0].n);
    jfree(root);
    free(text);
    char *table = render(&rep_text_writer, &m.c, &rc, &len);
    assert_int_equal(rc, ERR_OK);
    /* every table row puts its region where the header says */
    const char *head = strstr(table, "\ndevice ");
    assert_non_null(head);
    head++;
    size_t regcol = (size_t)(strstr(head, "region") - head), rowsseen = 0;
    for (const char *line = strchr(head, '\n') + 1; *line != '\n'; line = strchr(line, '\n') + 1) {
        assert_int_equal(line[regcol - 1], ' ');
        assert_true(line[regcol] != ' ' && line[regcol] != '\n');
        rowsseen++;
    }
    assert_int_equal(rowsseen, 20000);
    free(table);
    many_free(&m);
    scene_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_eng),          cmocka_unit_test(test_lookup),       cmocka_unit_test(test_prepare),
        cmocka_unit_test(test_text_golden),  cmocka_unit_test(test_text_corners), cmocka_unit_test(test_text_details),
        cmocka_unit_test(test_validator),    cmocka_unit_test(test_json),         cmocka_unit_test(test_json_corners),
        cmocka_unit_test(test_json_escapes), cmocka_unit_test(test_write_errors), cmocka_unit_test(test_unprepared),
        cmocka_unit_test(test_many_rows),
    };
    return cmocka_run_group_tests_name("report", tests, NULL, NULL);
}
