/* test_groups: the figures of matched groups. Arithmetic rows are checked against values worked out
 * by hand beside each row; the mirror and pair circuits of tests/circuits-intent/ are simulated with
 * ngspice and the group figures compared with what ngspice printed and with the Shichman-Hodges
 * level-1 equations (skipped without ngspice). */
#define _DEFAULT_SOURCE /* realpath */
#include "testutil.h"

#include <limits.h>

#include "check.h"
#include "groups.h"
#include "netlist.h"
#include "opdump.h"

/* ---- sizes and partitions ---- */

static void test_size(void **state)
{
    (void)state;
    Device d;
    memset(&d, 0, sizeof d);
    d.w = 4e-6;
    d.l = 0.5e-6;
    d.m = 2;
    d.nf = 4; /* W is the total over fingers (ngspice BSIM4): nf does not enter */
    assert_close(grp_size(&d), 4e-6 * 2 / 0.5e-6, 1e-15);
    d.m = 0;
    assert_true(isnan(grp_size(&d)));
    d.m = 1;
    d.l = NAN;
    assert_true(isnan(grp_size(&d)));
    d.l = 1e-6;
    d.w = -1e-6;
    assert_true(isnan(grp_size(&d)));
}

static void test_parent(void **state)
{
    (void)state;
    assert_int_equal(grp_parent_len("xamp.xbias.m3"), 10);
    assert_int_equal(grp_parent_len("m3"), 0);
    assert_int_equal(grp_parent_len("x1.m1"), 2);
    /* two instances interleaved in netlist order, plus a top-level device */
    const char *names[] = {"x2.m1", "x1.m1", "m9", "x2.m2", "x1.m2", "x10.m1"};
    size_t idx[6] = {0, 1, 2, 3, 4, 5}, starts[7], nruns;
    assert_int_equal(grp_by_parent(names, idx, 6, starts, &nruns), ERR_OK);
    assert_int_equal(nruns, 4);
    /* runs by parent name ("" < "x1" < "x10" < "x2"), netlist order kept inside each run */
    const size_t want[6] = {2, 1, 4, 5, 0, 3};
    for (int k = 0; k < 6; k++)
        assert_int_equal(idx[k], want[k]);
    const size_t want_starts[5] = {0, 1, 3, 4, 6};
    for (int k = 0; k < 5; k++)
        assert_int_equal(starts[k], want_starts[k]);
    assert_int_equal(grp_by_parent(names, idx, 0, starts, &nruns), ERR_OK);
    assert_int_equal(nruns, 0);
}

/* ---- the figures, by hand ---- */

static Figures fig(double id, double vgs, double vds, double gm_id)
{
    Figures f;
    memset(&f, 0, sizeof f);
    f.id = id;
    f.vgs = vgs;
    f.vds = vds;
    f.gm_id = gm_id;
    return f;
}

static void test_stats(void **state)
{
    (void)state;
    /* a 1:2:4 group; member 2 carries 10% too much, member 1 5% too little */
    Figures a = fig(10e-6, 0.600, 0.50, 15.0), b = fig(19e-6, 0.603, 0.90, 14.0), c = fig(44e-6, 0.598, 1.20, 16.0);
    const Figures *f[3] = {&a, &b, &c};
    const double want[3] = {1, 2, 4};
    GrpStats s;
    grp_stats(f, want, 3, &s);
    assert_int_equal(s.n, 3);
    assert_close(s.vgs_spread, 0.005, 1e-9); /* 0.603 - 0.598 */
    assert_int_equal(s.vgs_lo, 2);
    assert_int_equal(s.vgs_hi, 1);
    assert_close(s.vds_spread, 0.70, 1e-12); /* 1.20 - 0.50 */
    assert_int_equal(s.vds_lo, 0);
    assert_int_equal(s.vds_hi, 2);
    assert_close(s.gmid_spread, 2.0 / 15.0, 1e-12); /* (16 - 14) / mean 15 */
    assert_int_equal(s.ratio_worst, 2);
    assert_close(s.ratio_err, 44.0 / 40.0 - 1.0, 1e-12); /* 4.4 measured against 4 */
    assert_close(s.ratio_meas, 4.4, 1e-12);
    assert_close(s.ratio_want, 4.0, 1e-12);
    /* the reference scale does not matter: sizes in m, or a written ratio */
    const double sizes[3] = {2e0, 4e0, 8e0};
    grp_stats(f, sizes, 3, &s);
    assert_close(s.ratio_err, 0.1, 1e-12);
    /* a missing value leaves its figure NaN, not zero */
    b.vgs = NAN;
    b.gm_id = NAN;
    grp_stats(f, want, 3, &s);
    assert_true(isnan(s.vgs_spread));
    assert_true(isnan(s.gmid_spread));
    assert_false(isnan(s.ratio_err));
    a.id = 0.0; /* no current in the reference: no ratio */
    grp_stats(f, want, 3, &s);
    assert_true(isnan(s.ratio_err));
    a.id = 10e-6;
    const double bad[3] = {1, NAN, 4};
    grp_stats(f, bad, 3, &s);
    assert_true(isnan(s.ratio_err));
}

/* ---- against ngspice ---- */

typedef struct {
    Design ds;
    OpTable *op;
    Joined j;
    RuleSet *rs;
    DiagList d;
    char work[64];
    char *log;      /* the show output */
} Sim;

/* Simulates circuits-intent/<cir> (op, `show m` tables) and reads it back with biaslint's readers. */
static void simulate(Sim *s, const char *cir)
{
    memset(s, 0, sizeof *s);
    diag_init(&s->d);
    char path[PATH_MAX], abs[PATH_MAX], deck[PATH_MAX + 16], logp[PATH_MAX + 16], cmd[3 * PATH_MAX];
    snprintf(path, sizeof path, "circuits-intent/%s", cir);
    assert_non_null(realpath(path, abs));
    snprintf(s->work, sizeof s->work, "/tmp/biaslint-grp-XXXXXX");
    assert_non_null(mkdtemp(s->work));
    snprintf(deck, sizeof deck, "%s/deck.cir", s->work);
    snprintf(logp, sizeof logp, "%s/show.log", s->work);
    FILE *fp = fopen(deck, "w");
    assert_non_null(fp);
    fprintf(fp, "* wrapper for %s\n.include %s\n.control\nop\nset width=300\n"
                "show m : id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb\nquit\n.endc\n.end\n",
            cir, abs);
    fclose(fp);
    snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b deck.cir >show.log 2>ngspice.err", s->work);
    assert_int_equal(system(cmd), 0);
    s->log = tu_slurp(logp, NULL);
    assert_non_null(s->log);
    NlOptions nlo = {0, 0, 0};
    assert_int_equal(nl_load(path, &nlo, &s->ds, &s->d), ERR_OK);
    assert_int_equal(op_read(logp, OPFMT_AUTO, &s->op, &s->d), ERR_OK);
    s->rs = rule_new_defaults(&s->d);
    assert_non_null(s->rs);
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&s->ds, s->op, s->rs, &jo, &s->j, &s->d), ERR_OK);
    assert_int_equal(s->j.nmatched, s->ds.ndevs);
}

static void sim_free(Sim *s)
{
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", s->work);
    assert_int_equal(system(cmd), 0);
    free(s->log);
    join_free(&s->j);
    op_free(s->op);
    nl_free(&s->ds);
    rule_free(s->rs);
    diag_free(&s->d);
}

static const Row *row_of(const Sim *s, const char *name)
{
    for (size_t i = 0; i < s->j.n; i++)
        if (strcmp(s->j.rows[i].dev->name, name) == 0)
            return &s->j.rows[i];
    print_error("no device %s\n", name);
    fail();
    return NULL;
}

/* The value ngspice printed for quantity q of device dev in the show table ("id", "mref"). */
static double shown(const Sim *s, const char *dev, const char *q)
{
    /* find the block whose "device" line names dev, then the line of q in it */
    const char *p = s->log;
    while ((p = strstr(p, "device"))) {
        const char *eol = strchr(p, '\n');
        if (!eol)
            break;
        /* column of dev on the device line */
        int col = -1, k = 0;
        const char *w = p + 6;
        while (w < eol) {
            while (w < eol && *w == ' ')
                w++;
            const char *e = w;
            while (e < eol && *e != ' ')
                e++;
            if (e > w) {
                if ((size_t)(e - w) == strlen(dev) && strncmp(w, dev, (size_t)(e - w)) == 0)
                    col = k;
                k++;
            }
            w = e;
        }
        if (col >= 0) {
            const char *l = eol + 1;
            while (*l) {
                const char *le = strchr(l, '\n');
                if (!le)
                    le = l + strlen(l);
                const char *t = l;
                while (*t == ' ')
                    t++;
                size_t qn = strlen(q);
                if (strncmp(t, q, qn) == 0 && t[qn] == ' ') {
                    const char *v = t + qn;
                    for (int c = 0; c <= col; c++) {
                        while (*v == ' ')
                            v++;
                        if (c < col)
                            while (*v && *v != ' ' && *v != '\n')
                                v++;
                    }
                    return strtod(v, NULL);
                }
                if (strstr(t, "device") == t)
                    break;
                l = *le ? le + 1 : le;
            }
        }
        p = eol;
    }
    print_error("ngspice printed no %s for %s\n", q, dev);
    fail();
    return NAN;
}

static void test_mirror_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    Sim s;
    simulate(&s, "mirror.cir");
    const Row *ref = row_of(&s, "mref"), *copy = row_of(&s, "mcopy"), *twin = row_of(&s, "mtwin");
    /* 1:2 by m, the copy at VDS 1.5 V: level 1 gives exactly
       ID2/ID1 = 2 (1 + lambda VDS2) / (1 + lambda VDS1)   (Shichman & Hodges, IEEE JSSC SC-3(3), 1968) */
    const double lambda = 0.1; /* models.inc, ln1 */
    double vds1 = shown(&s, "mref", "vds"), vds2 = shown(&s, "mcopy", "vds");
    assert_close(vds2, 1.5, 1e-12);
    double formula = 2.0 * (1.0 + lambda * vds2) / (1.0 + lambda * vds1);
    double printed = shown(&s, "mcopy", "id") / shown(&s, "mref", "id");
    assert_close(printed, formula, 1e-5); /* ngspice agrees with the equation (6 printed digits) */
    const Figures *f[2] = {&ref->fig, &copy->fig};
    double want[2] = {grp_size(ref->dev), grp_size(copy->dev)};
    assert_close(want[1] / want[0], 2.0, 1e-12);
    GrpStats st;
    grp_stats(f, want, 2, &st);
    assert_close(st.ratio_meas, printed, 1e-9);
    /* the show table prints 6 digits: the ratio is good to about 1e-5, its 7 % error to about 3e-4 */
    assert_close(st.ratio_err, formula / 2.0 - 1.0, 3e-4);
    assert_true(st.ratio_err > 0.07); /* about +7.3 % from 0.78 V of VDS difference */
    assert_close(st.vds_spread, vds2 - vds1, 1e-9);
    assert_close(st.vgs_spread, 0.0, 1e-9); /* one gate, one source: VGS equal by construction */
    /* the twin at the diode's own VDS (VCVS): no error */
    const Figures *g[2] = {&ref->fig, &twin->fig};
    double w1[2] = {1, 1};
    grp_stats(g, w1, 2, &st);
    assert_true(fabs(st.ratio_err) < 1e-5);
    assert_true(fabs(st.vds_spread) < 1e-6);
    /* BSIM4 1:4 (by m): ngspice's own currents give the ratio */
    const Row *br = row_of(&s, "mbref"), *bc = row_of(&s, "mbcopy");
    const Figures *h[2] = {&br->fig, &bc->fig};
    double w2[2] = {grp_size(br->dev), grp_size(bc->dev)};
    grp_stats(h, w2, 2, &st);
    assert_close(st.ratio_want, 4.0, 1e-12);
    assert_close(st.ratio_err, shown(&s, "mbcopy", "id") / shown(&s, "mbref", "id") / 4.0 - 1.0, 1e-9);

    /* the same through the checker: a finding with that number, the VDS difference in words */
    const char rules[] = "matched mref mcopy\nmatched mref mtwin\nmatched mbref mbcopy : ratio 1:4 +-2%\n";
    assert_int_equal(rule_load_text(s.rs, "m.rules", rules, sizeof rules - 1, &s.d), ERR_OK);
    Findings fs;
    assert_int_equal(chk_evaluate(s.rs, NULL, &s.ds, &s.j, NULL, &fs, &s.d), ERR_OK);
    int saw = 0, saw_b = 0;
    for (size_t k = 0; k < fs.n; k++) {
        const Finding *fd = &fs.items[k];
        print_message("  %s %s: %s\n", rule_check_name[fd->check], fd->group ? fd->group : "", fd->message);
        if (fd->check == CHECK_MATCH_RATIO && !strcmp(fd->group, "mref, mcopy")) {
            saw = 1;
            assert_close(fd->value, formula / 2.0 - 1.0, 3e-4);
            assert_close(fd->limit, 0.05, 1e-12); /* check match-ratio max 5% (defaults) */
            assert_int_equal(fd->sev, SEV_ERROR);
            assert_non_null(strstr(fd->message, "their VDS differ by 784 mV"));
            assert_non_null(strstr(fd->message, "ID ratio mcopy/mref is 2.15, expected 2 (from W*m/L)"));
            assert_string_equal(fd->rule.file, "m.rules");
            assert_int_equal(fd->rule.line, 1);
            assert_string_equal(s.j.rows[fd->row].dev->name, "mref");
        }
        if (fd->check == CHECK_MATCH_RATIO && !strcmp(fd->group, "mbref, mbcopy")) {
            saw_b = 1;
            assert_close(fd->limit, 0.02, 1e-12);
            assert_int_equal(fd->rule.line, 3);
        }
        /* the twin is not reported */
        assert_true(strcmp(fd->group ? fd->group : "", "mref, mtwin") != 0);
    }
    assert_true(saw);
    assert_true(saw_b);
    chk_free(&fs);
    sim_free(&s);
}

static void test_pair_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    Sim s;
    simulate(&s, "pair.cir");
    const Row *m1 = row_of(&s, "m1"), *m2 = row_of(&s, "m2");
    const Figures *f[2] = {&m1->fig, &m2->fig};
    double want[2] = {1, 1};
    GrpStats st;
    grp_stats(f, want, 2, &st);
    /* tied sources: VGS1 - VGS2 = VIN1 - VIN2 = 3 mV (Kirchhoff's voltage law) */
    assert_close(st.vgs_spread, 0.003, 1e-3);
    assert_int_equal(st.vgs_hi, 0);
    /* level 1, equal VOV... not equal: the 3 mV offset splits the tail current; gm/ID = 2/VOV for each
       (square law, Razavi, Design of Analog CMOS Integrated Circuits, ch. 2): the spread follows */
    double vov1 = shown(&s, "m1", "vgs") - 0.5, vov2 = shown(&s, "m2", "vgs") - 0.5;
    double g1 = 2.0 / vov1, g2 = 2.0 / vov2;
    assert_close(st.gmid_spread, fabs(g1 - g2) / ((g1 + g2) / 2.0), 1e-4);
    const char rules[] = "matched m1 m2 : VGS spread <= 2mV error, gm/ID spread <= 5%\n";
    assert_int_equal(rule_load_text(s.rs, "p.rules", rules, sizeof rules - 1, &s.d), ERR_OK);
    Findings fs;
    assert_int_equal(chk_evaluate(s.rs, NULL, &s.ds, &s.j, NULL, &fs, &s.d), ERR_OK);
    int saw = 0;
    for (size_t k = 0; k < fs.n; k++) {
        const Finding *fd = &fs.items[k];
        print_message("  %s: %s\n", rule_check_name[fd->check], fd->message);
        assert_true(fd->check != CHECK_MATCH_GMID); /* about 2.2 %: within 5 % */
        if (fd->check == CHECK_MATCH_VGS) {
            saw = 1;
            assert_int_equal(fd->sev, SEV_ERROR);
            assert_close(fd->value, 0.003, 1e-3);
            assert_close(fd->limit, 0.002, 1e-12);
            assert_non_null(strstr(fd->message, "VGS differs by 3 mV across the group (m2 633 mV, m1 636 mV)"));
        }
    }
    assert_true(saw);
    chk_free(&fs);
    sim_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_size),        cmocka_unit_test(test_parent),       cmocka_unit_test(test_stats),
        cmocka_unit_test(test_mirror_ngspice), cmocka_unit_test(test_pair_ngspice),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
