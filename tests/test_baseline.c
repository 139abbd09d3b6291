/* test_baseline: a JSON report written by rep_json_writer is read back as a baseline and a changed
 * run is compared with it: new, unchanged (and a severity that rose counting as new), resolved,
 * region changes; the exit rule of --fail-on new; corners matched by label (and a warning when none
 * match); a schema-1 report (the layout before corners) as a baseline; and every malformed baseline
 * refused with its line and column. The runs are the hand-built scene of reportscene.h. */
#include "testutil.h"

#include "baseline.h"
#include "jsoncheck.h"
#include "reportscene.h"

/* Re-derive every row of every corner and check again after records or rules were changed. */
static void rescan(Sc *s)
{
    for (size_t k = 0; k < s->ncorners; k++) {
        for (int i = 0; i < NDEV; i++) {
            Row *row = &s->rows[k][i];
            fig_normalize(row->op, row->dev->type, &row->fig);
            if (row->op) {
                fig_add_overlap(&row->fig, row->dev);
                fig_derive(&row->fig, row->dev, rule_bands(s->rs, row->dev, NULL));
            }
        }
        chk_free(&s->f[k]);
        assert_int_equal(chk_run(s->rs, &s->ds, &s->j[k], &s->f[k]), ERR_OK);
    }
    rep_prep_free(&s->prep);
    assert_int_equal(rep_prepare(&s->ctx, &s->prep), ERR_OK);
}

/* The run as a JSON file (the baseline of a later run). */
static char *save(const Sc *s, const char *name)
{
    int rc;
    size_t n;
    char *text = render(&rep_json_writer, &s->ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    char *path = tu_tmpfile(name, text, n);
    assert_non_null(path);
    free(text);
    return path;
}

static Baseline *load(const char *path, DiagList *d)
{
    Baseline *b = NULL;
    int rc = bl_load(path, &b, d);
    if (rc != ERR_OK) {
        diag_print(d, stderr, 0, DIAG_NOTE);
        fail();
    }
    return b;
}

/* The status of the finding of device/check in corner k of s, -1 when there is none. */
static int status_of(const Sc *s, const BlCompare *x, size_t k, const char *dev, CheckId check, int *was)
{
    const Findings *f = &s->f[k];
    for (size_t i = 0; i < f->n; i++)
        if (f->items[i].check == check && !strcmp(s->j[k].rows[f->items[i].row].dev->name, dev)) {
            size_t at = s->prep.base[k] + i;
            if (was)
                *was = x->was_sev[at];
            return x->status[at];
        }
    return -1;
}

static void test_marks(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    char *old = save(&s, "old.json");
    DiagList d;
    diag_init(&d);
    Baseline *b = load(old, &d);
    assert_int_equal(bl_ncorners(b), 1);
    assert_string_equal(bl_corner(b, 0), "");
    assert_int_equal(bl_nfindings(b), s.f[0].n);
    assert_string_equal(bl_finding(b, 0)->device, "x1.m3");
    assert_string_equal(bl_finding(b, 0)->check, "sat-margin");

    /* the next run: x1.m1 loses its headroom (new), x1.m3 gains gain (its gain warning resolved, its
       margin error unchanged), the off check becomes an error (a rise: new), x1.m2 moves from strong
       to moderate inversion (a region change) */
    s.recs[0][0].q[OPQ_VDS] = 0.16;
    s.recs[0][2].q[OPQ_GDS] = 2e-5;
    s.recs[0][1].q[OPQ_GM] = 7e-4;
    rule_set_severity(s.rs, CHECK_OFF, SEV_ERROR);
    rescan(&s);
    BlCompare x;
    assert_int_equal(bl_compare(b, &s.ctx, old, &x, &d), ERR_OK);
    assert_int_equal(d.nwarnings, 0);
    int was;
    assert_int_equal(status_of(&s, &x, 0, "x1.m1", CHECK_MARGIN, &was), BL_NEW);
    assert_int_equal(was, -1);
    assert_int_equal(status_of(&s, &x, 0, "x1.m3", CHECK_MARGIN, &was), BL_UNCHANGED);
    assert_int_equal(was, SEV_ERROR);
    assert_int_equal(status_of(&s, &x, 0, "x1.m4", CHECK_NODATA, NULL), BL_UNCHANGED);
    assert_int_equal(status_of(&s, &x, 0, "mtail_with_a_long_name", CHECK_OFF, &was), BL_NEW);
    assert_int_equal(was, SEV_WARNING);
    assert_int_equal(status_of(&s, &x, 0, "x1.m3", CHECK_GAIN, NULL), -1);
    assert_int_equal(x.nnew, 2);
    assert_int_equal(x.nnew_failing, 2);
    assert_int_equal(x.nunchanged, 2);
    assert_int_equal(x.nresolved, 1);
    assert_string_equal(x.resolved[0].device, "x1.m3");
    assert_string_equal(x.resolved[0].check, "gain");
    assert_int_equal(x.resolved[0].sev, SEV_WARNING);
    assert_true(x.resolved[0].value == 8.0);
    assert_string_equal(x.resolved[0].file, "lib/stage.inc");
    assert_int_equal(x.resolved[0].line, 6);
    assert_int_equal(x.nregions, 1);
    assert_int_equal(x.regions[0].row, 1);
    assert_string_equal(x.regions[0].was, "strong");
    assert_int_equal(s.rows[0][1].fig.region, REGION_MODERATE);
    assert_int_equal(x.ndevices_unmatched, 0);

    /* --fail-on new: only the new findings at warning or error fail; --fail-on error: all errors */
    s.ctx.baseline = &x;
    s.ctx.fail_new = 1;
    assert_int_equal(rep_failing(&s.ctx), 2);
    s.ctx.fail_new = 0;
    s.ctx.fail_level = SEV_ERROR;
    assert_int_equal(rep_failing(&s.ctx), 3); /* x1.m1, x1.m3 margins and the off error */

    /* the reports say so */
    int rc;
    size_t n;
    char *text = render(&rep_json_writer, &s.ctx, &rc, &n);
    JVal *root = jparse(text, n);
    assert_non_null(root);
    const JVal *bj = jget(root, "baseline");
    assert_non_null(bj);
    assert_int_equal(jget(bj, "new")->num, 2);
    assert_int_equal(jget(bj, "resolved")->num, 1);
    assert_string_equal(jget(jget(bj, "resolved_findings")->items[0], "status")->str, "resolved");
    assert_string_equal(jget(jget(bj, "region_changes")->items[0], "now")->str, "moderate");
    assert_string_equal(jget(jget(root, "findings")->items[0], "status")->str, "new"); /* x1.m1 first */
    jfree(root);
    free(text);
    text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_non_null(strstr(text, "Since the baseline "));
    assert_non_null(strstr(text, ": 2 new, 2 unchanged, 1 resolved."));
    assert_non_null(strstr(text, "  x1.m2: strong -> moderate\n"));
    assert_non_null(strstr(text, "  new  lib/stage.inc:4  x1.m1"));
    free(text);
    text = render(&rep_sarif_writer, &s.ctx, &rc, &n);
    assert_non_null(strstr(text, "\"baselineState\": \"new\""));
    assert_non_null(strstr(text, "\"baselineState\": \"updated\"")); /* the off check that rose */
    assert_non_null(strstr(text, "\"baselineState\": \"unchanged\""));
    assert_non_null(strstr(text, "\"baselineState\": \"absent\""));
    free(text);
    bl_compare_free(&x);

    /* against itself: nothing new, so --fail-on new passes although errors remain */
    char *now = save(&s, "now.json");
    Baseline *b2 = load(now, &d);
    assert_int_equal(bl_compare(b2, &s.ctx, now, &x, &d), ERR_OK);
    assert_int_equal(x.nnew, 0);
    assert_int_equal(x.nresolved, 0);
    assert_int_equal(x.nregions, 0);
    s.ctx.baseline = &x;
    s.ctx.fail_new = 1;
    assert_int_equal(rep_failing(&s.ctx), 0);
    bl_compare_free(&x);
    bl_free(b2);
    bl_free(b);
    free(old);
    free(now);
    diag_free(&d);
    scene_free(&s);
}

static void test_corners(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    char *old = save(&s, "old3.json");
    DiagList d;
    diag_init(&d);
    Baseline *b = load(old, &d);
    assert_int_equal(bl_ncorners(b), 3);
    assert_string_equal(bl_corner(b, 2), "hot");
    /* hot recovers its headroom on x1.m3: that finding resolves there only */
    s.recs[2][2].q[OPQ_VDS] = 0.4;
    rescan(&s);
    BlCompare x;
    assert_int_equal(bl_compare(b, &s.ctx, old, &x, &d), ERR_OK);
    assert_int_equal(x.nresolved, 1);
    assert_string_equal(x.resolved[0].corner, "hot");
    assert_string_equal(x.resolved[0].check, "sat-margin");
    assert_int_equal(status_of(&s, &x, 0, "x1.m3", CHECK_MARGIN, NULL), BL_UNCHANGED);
    assert_int_equal(status_of(&s, &x, 1, "x1.m3", CHECK_TRIODE, NULL), BL_UNCHANGED);
    assert_int_equal(x.nnew, 0);
    assert_int_equal(x.nregions, 0);
    bl_compare_free(&x);
    bl_free(b);

    /* a baseline of one unnamed dump has no corner of this run: all new, and a warning says why */
    Sc one;
    scene(&one, 1);
    char *single = save(&one, "single.json");
    b = load(single, &d);
    assert_int_equal(bl_compare(b, &s.ctx, single, &x, &d), ERR_OK);
    size_t total = s.f[0].n + s.f[1].n + s.f[2].n;
    assert_int_equal(x.nnew, total);
    assert_int_equal(x.nresolved, one.f[0].n);
    assert_int_equal(d.nwarnings, 1);
    assert_non_null(strstr(d.items[d.n - 1].msg, "('') are not this run's ('typ', 'cold', 'hot')"));
    bl_compare_free(&x);
    bl_free(b);
    free(single);
    free(old);
    diag_free(&d);
    scene_free(&one);
    scene_free(&s);
}

/* The JSON of schema 1 (one run, flat devices, findings without a corner) still serves as a
   baseline: its findings and regions belong to the corner "". */
static void test_schema1(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    DiagList d;
    diag_init(&d);
    Baseline *b = load("fixtures/baseline/schema1.json", &d);
    assert_int_equal(bl_ncorners(b), 1);
    assert_string_equal(bl_corner(b, 0), "");
    BlCompare x;
    assert_int_equal(bl_compare(b, &s.ctx, "schema1.json", &x, &d), ERR_OK);
    assert_int_equal(d.nwarnings, 0);
    assert_int_equal(status_of(&s, &x, 0, "x1.m3", CHECK_MARGIN, NULL), BL_UNCHANGED);
    assert_int_equal(status_of(&s, &x, 0, "x1.m3", CHECK_GAIN, NULL), BL_NEW);
    assert_int_equal(x.nresolved, 1);
    assert_string_equal(x.resolved[0].device, "x1.m2");
    assert_int_equal(x.nregions, 1); /* x1.m1 was weak in that run */
    assert_string_equal(x.regions[0].was, "weak");
    assert_int_equal(x.ndevices_unmatched, 3); /* the old file lists three of the six devices */
    bl_compare_free(&x);
    bl_free(b);
    diag_free(&d);
    scene_free(&s);
}

/* Malformed baselines: status, line, column, what the message says; nothing is returned. */
static const struct {
    const char *name, *text;
    int status;
    uint32_t line, col;
    const char *says;
} bad[] = {
    {"not JSON", "{\"tool\": \"biaslint\",\n \"schema\": 2,\n \"findings\": [,]}", ERR_INPUT, 3, 15, "expected a value"},
    {"another tool", "{\"tool\": \"other\", \"schema\": 2, \"devices\": [], \"findings\": []}", ERR_INPUT, 1, 10,
     "not a biaslint JSON report"},
    {"a SARIF file", "{\"version\": \"2.1.0\", \"runs\": []}", ERR_INPUT, 1, 1, "not a biaslint JSON report"},
    {"an array", "[1, 2]", ERR_INPUT, 1, 1, "not a biaslint JSON report"},
    {"a newer schema", "{\"tool\": \"biaslint\", \"schema\": 4, \"devices\": [], \"findings\": []}", ERR_INPUT, 1, 32,
     "schema 4"},
    {"no schema", "{\"tool\": \"biaslint\", \"devices\": [], \"findings\": []}", ERR_INPUT, 1, 1, "\"schema\""},
    {"no findings", "{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": []}", ERR_INPUT, 1, 1, "\"findings\" array"},
    {"a finding without a check",
     "{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [],\n\"findings\": [\n{\"device\": \"m1\", \"check\": \"off\", "
     "\"severity\": \"info\"},\n{\"device\": \"m1\", \"severity\": \"error\"}]}",
     ERR_INPUT, 4, 1, "findings[1] needs \"check\""},
    {"a severity word unknown",
     "{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [], \"findings\": [{\"device\": \"m1\", \"check\": \"off\", "
     "\"severity\": \"fatal\"}]}",
     ERR_INPUT, 1, 108, "error, warning or info"},
    {"a finding that is a number", "{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [], \"findings\": [7]}", ERR_INPUT,
     1, 63, "findings[0] must be an object, not a number"},
    {"a device name that is a number", "{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [{\"name\": 5}], \"findings\": []}",
     ERR_INPUT, 1, 56, "devices[0].name must be a string"},
    {"corners without labels",
     "{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [{\"name\": \"m1\", \"corners\": [{\"region\": \"off\"}]}], "
     "\"findings\": []}",
     ERR_INPUT, 1, 74, "needs a \"corner\" label"},
};

static void test_bad(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        char *p = tu_tmpfile("bad.json", bad[i].text, strlen(bad[i].text));
        DiagList d;
        diag_init(&d);
        Baseline *b = (Baseline *)1;
        int rc = bl_load(p, &b, &d);
        const Diag *g = d.n ? &d.items[0] : NULL;
        if (rc != bad[i].status || !g || g->loc.line != bad[i].line || g->loc.col != bad[i].col ||
            !strstr(g->msg, bad[i].says) || strcmp(g->loc.file, p) != 0) {
            print_error("%s: status %d, %u:%u '%s'; expected %d, %u:%u '...%s...'\n", bad[i].name, rc, g ? g->loc.line : 0,
                        g ? g->loc.col : 0, g ? g->msg : "", bad[i].status, bad[i].line, bad[i].col, bad[i].says);
            fail();
        }
        assert_null(b);
        diag_free(&d);
        free(p);
    }
    DiagList d;
    diag_init(&d);
    Baseline *b = NULL;
    assert_int_equal(bl_load("fixtures/baseline/missing.json", &b, &d), ERR_IO);
    assert_null(b);
    assert_int_equal(d.nerrors, 1);
    diag_free(&d);
    bl_free(NULL);
    bl_compare_free(NULL);
}

/* A large baseline: 100 000 devices in 3 corners is read (streamed) and compared in linear time. */
static void test_large(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    size_t N = 100000;
    Row *rows[MAXC];
    Joined j[MAXC];
    Findings f[MAXC];
    RepCorner rc[MAXC];
    char (*names)[16] = malloc(N * sizeof *names);
    Device *devs = malloc(N * sizeof *devs);
    assert_non_null(names);
    assert_non_null(devs);
    for (size_t i = 0; i < N; i++) {
        devs[i] = s.devs[i % NDEV];
        snprintf(names[i], sizeof names[i], "d%zu", i);
        devs[i].name = names[i];
    }
    for (int k = 0; k < MAXC; k++) {
        rows[k] = malloc(N * sizeof *rows[k]);
        assert_non_null(rows[k]);
        for (size_t i = 0; i < N; i++) {
            rows[k][i] = s.rows[k][i % NDEV];
            rows[k][i].dev = &devs[i];
        }
        j[k] = s.j[k];
        j[k].rows = rows[k];
        j[k].n = N;
        assert_int_equal(chk_run(s.rs, &s.ds, &j[k], &f[k]), ERR_OK);
        rc[k] = (RepCorner){scene_label[k], "x.log", &s.op[k], &j[k], &f[k]};
    }
    ReportCtx c = s.ctx;
    c.corners = rc;
    RepPrep p;
    assert_int_equal(rep_prepare(&c, &p), ERR_OK);
    int st;
    size_t n;
    char *text = render(&rep_json_writer, &c, &st, &n);
    char *path = tu_tmpfile("large.json", text, n);
    free(text);
    DiagList d;
    diag_init(&d);
    Baseline *b = load(path, &d);
    BlCompare x;
    assert_int_equal(bl_compare(b, &c, path, &x, &d), ERR_OK);
    assert_int_equal(x.nnew, 0);
    assert_int_equal(x.nresolved, 0);
    assert_int_equal(x.nunchanged, p.nrefs);
    bl_compare_free(&x);
    bl_free(b);
    diag_free(&d);
    rep_prep_free(&p);
    for (int k = 0; k < MAXC; k++) {
        chk_free(&f[k]);
        free(rows[k]);
    }
    free(devs);
    free(names);
    free(path);
    scene_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_marks), cmocka_unit_test(test_corners), cmocka_unit_test(test_schema1),
        cmocka_unit_test(test_bad),   cmocka_unit_test(test_large),
    };
    return cmocka_run_group_tests_name("baseline", tests, NULL, NULL);
}
