/* test_merge: 100 runs of the hand-built scene (reportscene.h), each varied by a seeded generator of
 * our own and written by rep_json_writer, merged; the statistics are checked against the two-pass
 * textbook formulas (mean = sum/n, sample variance = sum((x - mean)^2)/(n - 1)), which the merge's
 * one-pass update (Welford, Technometrics 4, 1962, from memory) must reproduce to rounding; the
 * fraction of runs failing each check, the worst run and the region changes are counted here from
 * the runs themselves. Also corners, bad inputs (located, and leaving the summary as it was) and
 * every writer read back. */
#include "testutil.h"

#include <csv.h>

#include "jsoncheck.h"
#include "merge.h"
#include "reportscene.h"

#define NRUNS 100

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

/* A deterministic uniform number in [0, 1) (a 64-bit linear congruential step, constants of
   Knuth's MMIX; the low bits are dropped). */
static double uniform(uint64_t *state)
{
    *state = *state * 6364136223846793005ull + 1442695040888963407ull;
    return (double)(*state >> 11) / 9007199254740992.0;
}

typedef struct {
    double gm_id[NRUNS], margin[NRUNS];
    int margin_fails[NRUNS];
    int region[NRUNS];
} Truth;

static int has_finding(const Sc *s, size_t k, const char *dev, CheckId check)
{
    for (size_t i = 0; i < s->f[k].n; i++)
        if (s->f[k].items[i].check == check && !strcmp(s->j[k].rows[s->f[k].items[i].row].dev->name, dev))
            return 1;
    return 0;
}

static const MrgEntry *entry_of(const MrgResult *m, const char *dev, const char *corner)
{
    for (size_t i = 0; i < m->n; i++)
        if (!strcmp(m->e[i].device, dev) && !strcmp(m->e[i].corner, corner))
            return &m->e[i];
    return NULL;
}

static void test_hundred_runs(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    uint64_t seed = 20240611;
    Truth t;
    char *paths[NRUNS];
    for (int r = 0; r < NRUNS; r++) {
        /* x1.m1: gm and VDS vary (its margin sometimes below 50 mV); x1.m2 moves between strong and
           moderate inversion */
        s.recs[0][0].q[OPQ_GM] = 1.5e-4 * (0.9 + 0.2 * uniform(&seed));
        s.recs[0][0].q[OPQ_VDS] = 0.14 + 0.3 * uniform(&seed);
        s.recs[0][1].q[OPQ_GM] = r % 3 == 0 ? 7e-4 : 4e-4;
        rescan(&s);
        t.gm_id[r] = tu_six(s.rows[0][0].fig.gm_id);
        t.margin[r] = tu_six(s.rows[0][0].fig.margin);
        t.margin_fails[r] = has_finding(&s, 0, "x1.m1", CHECK_MARGIN);
        t.region[r] = s.rows[0][1].fig.region;
        char name[32];
        snprintf(name, sizeof name, "run%03d.json", r);
        paths[r] = save(&s, name);
    }
    MrgResult m;
    mrg_init(&m);
    DiagList d;
    diag_init(&d);
    for (int r = 0; r < NRUNS; r++)
        assert_int_equal(mrg_add(&m, paths[r], &d), ERR_OK);
    mrg_finish(&m);
    assert_int_equal(m.nruns, NRUNS);
    assert_int_equal(m.n, NDEV);
    const MrgEntry *e = entry_of(&m, "x1.m1", "");
    assert_non_null(e);
    assert_int_equal(e->nruns, NRUNS);
    /* the two-pass statistics */
    double sum = 0, mn = INFINITY, mx = -INFINITY;
    int imin = 0;
    for (int r = 0; r < NRUNS; r++) {
        sum += t.gm_id[r];
        mx = fmax(mx, t.gm_id[r]);
        if (t.gm_id[r] < mn) {
            mn = t.gm_id[r];
            imin = r;
        }
    }
    double mean = sum / NRUNS, ss = 0;
    for (int r = 0; r < NRUNS; r++)
        ss += (t.gm_id[r] - mean) * (t.gm_id[r] - mean);
    const MrgStat *g = &e->stat[MRG_GMID];
    assert_int_equal(g->n, NRUNS);
    assert_true(g->min == mn); /* the extremes are the values themselves, read back exactly */
    assert_true(g->max == mx);
    assert_close(g->mean, mean, 1e-12);
    assert_close(mrg_std(g), sqrt(ss / (NRUNS - 1)), 1e-9);
    assert_string_equal(m.runs[g->min_run].path, paths[imin]);
    /* the fraction of runs failing sat-margin, and the worst run: an error with the least margin */
    unsigned fails = 0;
    int worst = -1;
    for (int r = 0; r < NRUNS; r++)
        if (t.margin_fails[r]) {
            fails++;
            if (worst < 0 || t.margin[r] < t.margin[worst])
                worst = r;
        }
    assert_true(fails > 5 && fails < 95); /* the scene varies enough to test something */
    assert_non_null(e->fail);
    assert_int_equal(e->fail[CHECK_MARGIN], fails);
    assert_int_equal(e->worst_sev, SEV_ERROR);
    assert_string_equal(m.runs[e->worst_run].path, paths[worst]);
    /* x1.m3 fails sat-margin in every run; x1.m2 changed region */
    assert_int_equal(entry_of(&m, "x1.m3", "")->fail[CHECK_MARGIN], NRUNS);
    const MrgEntry *m2 = entry_of(&m, "x1.m2", "");
    assert_true(mrg_region_changed(m2));
    unsigned strong = 0;
    for (int r = 0; r < NRUNS; r++)
        strong += t.region[r] == REGION_STRONG;
    assert_int_equal(m2->region_n[REGION_STRONG], strong);
    assert_int_equal(m2->region_n[REGION_MODERATE], NRUNS - strong);
    assert_false(mrg_region_changed(entry_of(&m, "mb5", "")));
    assert_int_equal(m.region_changes, 1);
    assert_int_equal(m.check_runs[CHECK_MARGIN], NRUNS);
    assert_int_equal(m.runs_failing, NRUNS);
    /* a device without data: no statistics, not a crash */
    const MrgEntry *m4 = entry_of(&m, "x1.m4", "");
    assert_int_equal(m4->stat[MRG_GMID].n, 0);
    assert_true(isnan(mrg_std(&m4->stat[MRG_GMID])));
    assert_int_equal(m4->fail[CHECK_NODATA], NRUNS);

    /* every writer; the JSON read back, the CSV through libcsv, the HTML self-contained */
    static const char *const names[] = {"text", "json", "csv", "html"};
    for (size_t w = 0; w < 4; w++) {
        const MrgWriter *wr = mrg_lookup(names[w]);
        assert_non_null(wr);
        char *text = NULL;
        size_t n = 0;
        FILE *fp = open_memstream(&text, &n);
        assert_int_equal(wr->write(&m, fp, 0), ERR_OK);
        fclose(fp);
        if (w == 1) {
            JVal *root = jparse(text, n);
            assert_non_null(root);
            assert_string_equal(jget(root, "kind")->str, "merge");
            assert_int_equal(jget(root, "runs")->n, NRUNS);
            const JVal *dj = jget(root, "devices")->items[0];
            assert_string_equal(jget(dj, "device")->str, "x1.m1");
            assert_true(jget(jget(dj, "gm_id"), "min")->num == mn);
            assert_close(jget(jget(dj, "gm_id"), "std")->num, sqrt(ss / (NRUNS - 1)), 1e-9);
            assert_close(jget(jget(dj, "fail_fraction"), "sat-margin")->num, fails / 100.0, 1e-12);
            assert_string_equal(jget(dj, "worst_run")->str, paths[worst]);
            jfree(root);
        } else if (w == 2) {
            struct csv_parser p;
            assert_int_equal(csv_init(&p, CSV_STRICT | CSV_STRICT_FINI), 0);
            assert_int_equal(csv_parse(&p, text, n, NULL, NULL, NULL), n);
            assert_int_equal(csv_fini(&p, NULL, NULL, NULL), 0);
            csv_free(&p);
            size_t lines = 0;
            for (size_t i = 0; i < n; i++)
                lines += text[i] == '\n';
            assert_int_equal(lines, 1 + NDEV);
        } else if (w == 3) {
            assert_null(strstr(text, "http"));
            assert_null(strstr(text, "src="));
            assert_non_null(strstr(text, "gm/ID over the runs"));
        } else {
            assert_non_null(strstr(text, "summary of 100 runs"));
        }
        free(text);
    }
    assert_null(mrg_lookup("sarif"));
    mrg_free(&m);
    diag_free(&d);
    for (int r = 0; r < NRUNS; r++)
        free(paths[r]);
    scene_free(&s);
}

static void test_corners(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 3);
    char *a = save(&s, "c1.json");
    s.recs[1][2].q[OPQ_VDS] = 0.5; /* cold recovers x1.m3 */
    rescan(&s);
    char *b = save(&s, "c2.json");
    MrgResult m;
    mrg_init(&m);
    DiagList d;
    diag_init(&d);
    assert_int_equal(mrg_add(&m, a, &d), ERR_OK);
    assert_int_equal(mrg_add(&m, b, &d), ERR_OK);
    mrg_finish(&m);
    assert_int_equal(m.n, NDEV * 3);
    const MrgEntry *cold = entry_of(&m, "x1.m3", "cold");
    assert_non_null(cold);
    assert_int_equal(cold->nruns, 2);
    assert_int_equal(cold->fail[CHECK_TRIODE], 1);
    assert_int_equal(cold->region_n[REGION_TRIODE], 1);
    assert_true(mrg_region_changed(cold));
    assert_string_equal(m.runs[cold->worst_run].path, a);
    assert_int_equal(entry_of(&m, "x1.m3", "hot")->fail[CHECK_MARGIN], 2);
    mrg_free(&m);
    diag_free(&d);
    free(a);
    free(b);
    scene_free(&s);
}

static void test_bad_inputs(void **state)
{
    (void)state;
    Sc s;
    scene(&s, 1);
    char *good = save(&s, "good.json");
    static const struct {
        const char *text;
        uint32_t line, col;
        const char *says;
    } bad[] = {
        {"{\"tool\": \"biaslint\", \"schema\": 2,\n\"devices\": [{\"name\": \"m1\"},]}", 2, 28, "trailing comma"},
        {"{\"tool\": \"biaslint\", \"kind\": \"merge\", \"schema\": 1, \"devices\": []}", 1, 30, "merge summary"},
        {"{\"tool\": \"x\", \"schema\": 2, \"devices\": []}", 1, 10, "not a biaslint JSON report"},
        {"{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [{\"model\": \"n\"}], \"findings\": []}", 1, 47,
         "devices[0] needs a \"name\""},
        {"{\"tool\": \"biaslint\", \"schema\": 2, \"devices\": [], \"findings\": [{\"device\": \"m\", \"check\": 1}]}", 1, 88,
         "needs \"check\""},
    };
    MrgResult m;
    mrg_init(&m);
    DiagList d;
    diag_init(&d);
    assert_int_equal(mrg_add(&m, good, &d), ERR_OK);
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        char *p = tu_tmpfile("bad.json", bad[i].text, strlen(bad[i].text));
        size_t before = d.n;
        int rc = mrg_add(&m, p, &d);
        const Diag *g = d.n > before ? &d.items[before] : NULL;
        if (rc != ERR_INPUT || !g || g->loc.line != bad[i].line || g->loc.col != bad[i].col || !strstr(g->msg, bad[i].says)) {
            print_error("row %zu: status %d, %u:%u '%s'; expected %u:%u '...%s...'\n", i, rc, g ? g->loc.line : 0,
                        g ? g->loc.col : 0, g ? g->msg : "", bad[i].line, bad[i].col, bad[i].says);
            fail();
        }
        free(p);
        /* the summary is as it was */
        assert_int_equal(m.nruns, 1);
        assert_int_equal(entry_of(&m, "x1.m1", "")->nruns, 1);
    }
    assert_int_equal(mrg_add(&m, "fixtures/merge/none.json", &d), ERR_IO);
    mrg_free(&m);
    mrg_free(&m);
    diag_free(&d);
    free(good);
    scene_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_hundred_runs),
        cmocka_unit_test(test_corners),
        cmocka_unit_test(test_bad_inputs),
    };
    return cmocka_run_group_tests_name("merge", tests, NULL, NULL);
}
