/* test_join: devices meet their records by name, cut names by unique prefix, and a dump from
 * another netlist is refused. Designs and tables are built by hand. */
#include "testutil.h"

#include "join.h"

typedef struct {
    Design ds;
    Device devs[8];
    OpTable t;
    RuleSet *rs;
    DiagList d;
} Fixture;

static void setup(Fixture *x, const char *const *names, size_t n)
{
    memset(x, 0, sizeof *x);
    arena_init(&x->ds.arena);
    x->ds.names = str_new(&x->ds.arena);
    for (size_t i = 0; i < n; i++)
        x->devs[i] = (Device){.name = str_intern(x->ds.names, names[i], strlen(names[i])), .model = "nch",
                              .type = MOS_NMOS, .w = 2e-6, .l = 1e-6, .m = 1, .nf = 1};
    x->ds.devs = x->devs;
    x->ds.ndevs = n;
    arena_init(&x->t.arena);
    x->t.names = str_new(&x->t.arena);
    x->t.file.path = (char *)"dump.log";
    diag_init(&x->d);
    x->rs = rule_new_defaults(&x->d);
    assert_non_null(x->rs);
}

static void teardown(Fixture *x)
{
    rule_free(x->rs);
    op_release_values(&x->t);
    free(x->t.recs);
    str_free(x->t.names);
    arena_free(&x->t.arena);
    str_free(x->ds.names);
    arena_free(&x->ds.arena);
    diag_free(&x->d);
}

/* A saturated BSIM-style record: id 10 uA, gm 150 uS, gds 2 uS, vds 0.6, vdsat 0.1. */
static OpRecord *rec(Fixture *x, const char *name, int truncated)
{
    OpRecord *r = op_add(&x->t, name, strlen(name), (SrcLoc){"dump.log", 3, 1}, false, &x->d);
    assert_non_null(r);
    r->truncated = truncated;
    r->family = OPFAM_BSIM;
    r->q[OPQ_ID] = 1e-5;
    r->q[OPQ_GM] = 1.5e-4;
    r->q[OPQ_GDS] = 2e-6;
    r->q[OPQ_VGS] = 0.5;
    r->q[OPQ_VDS] = 0.6;
    r->q[OPQ_VBS] = 0;
    r->q[OPQ_VTH] = 0.4;
    r->q[OPQ_VDSAT] = 0.1;
    return r;
}

static void test_exact_names(void **state)
{
    (void)state;
    Fixture x;
    setup(&x, (const char *[]){"m1", "x1.m2", "x1.x2.m3"}, 3);
    rec(&x, "x1.x2.m3", 0);
    rec(&x, "m1", 0);
    rec(&x, "x1.m2", 0);
    rec(&x, "x9.m1", 0); /* no such device */
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_OK);
    assert_int_equal(j.nmatched, 3);
    assert_int_equal(j.norphans, 1);
    assert_string_equal(j.orphans[0]->name, "x9.m1");
    assert_string_equal(j.rows[2].op->name, "x1.x2.m3");
    /* gm/ID = gm/ID: 150 uS / 10 uA = 15 /V; margin 0.6 - 0.1 (definitions) */
    assert_close(j.rows[0].fig.gm_id, 15.0, 1e-12);
    assert_close(j.rows[0].fig.margin, 0.5, 1e-12);
    assert_int_equal(x.d.nwarnings, 1); /* the orphan record */
    join_free(&j);
    teardown(&x);
}

/* A join that consumes the dump gives the same rows and orphans, and leaves the records their names
 * and locations only: the reports read the rows, never the dump's values again. */
static void test_consuming_join(void **state)
{
    (void)state;
    Fixture x;
    setup(&x, (const char *[]){"m1", "x1.m2"}, 2);
    rec(&x, "x1.m2", 0);
    rec(&x, "m1", 0)->q[OPQ_M] = 2; /* the dump's m differs: its value is quoted after the release */
    rec(&x, "x9.m1", 0);
    Joined j;
    JoinOptions jo = {0, 0.5, 1};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_OK);
    assert_int_equal(j.nmatched, 2);
    assert_int_equal(j.norphans, 1);
    assert_string_equal(j.orphans[0]->name, "x9.m1");
    assert_int_equal(j.orphans[0]->loc.line, 3);
    assert_string_equal(j.rows[0].op->name, "m1");
    /* gm/ID 150 uS / 10 uA = 15 /V (definition); ID/(W*m) with the dump's m = 2: 10 uA / 4 um */
    assert_close(j.rows[0].fig.gm_id, 15.0, 1e-12);
    assert_close(j.rows[0].fig.id_w, 1e-5 / (2e-6 * 2), 1e-12);
    assert_close(j.rows[1].fig.margin, 0.5, 1e-12);
    for (size_t i = 0; i < x.t.n; i++)
        assert_null(x.t.recs[i].q);
    assert_null(op_find(&x.t, "m1"));
    int quoted = 0;
    for (size_t i = 0; i < x.d.n; i++)
        quoted |= strstr(x.d.items[i].msg, "dump m=2") != NULL;
    assert_true(quoted);
    join_free(&j);
    teardown(&x);
}

/* A design large enough for join to split its work between two threads: every row as one thread
 * alone would make it, the counts and the first device whose dump m differs taken across the halves. */
static void test_large_design(void **state)
{
    (void)state;
    enum { N = 70000 };
    Fixture x;
    setup(&x, (const char *[]){"m0"}, 0);
    Device *devs = calloc(N, sizeof *devs);
    assert_non_null(devs);
    char nm[32];
    for (size_t i = 0; i < N; i++) {
        int n = snprintf(nm, sizeof nm, "x%zu.m1", i);
        devs[i] = (Device){.name = str_intern(x.ds.names, nm, (size_t)n), .model = "nch", .type = MOS_NMOS,
                           .w = 2e-6, .l = 1e-6, .m = 1, .nf = 1};
    }
    x.ds.devs = devs;
    x.ds.ndevs = N;
    for (size_t k = 0; k < N; k++) { /* the dump lists them backwards, and leaves some out */
        size_t i = N - 1 - k;
        if (i % 1000 == 7)
            continue;
        snprintf(nm, sizeof nm, "x%zu.m1", i);
        OpRecord *r = rec(&x, nm, 0);
        if (i >= N / 4 + 5 && i % 2)
            r->q[OPQ_M] = 3; /* the dump's m differs, in both halves */
    }
    rec(&x, "x99.m9", 0); /* no such device */
    Joined j;
    JoinOptions jo = {0, 0.5, 1};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_OK);
    assert_int_equal(j.nmatched, N - N / 1000);
    assert_int_equal(j.norphans, 1);
    for (size_t i = 0; i < N; i++) {
        const Row *r = &j.rows[i];
        assert_ptr_equal(r->dev, &devs[i]);
        if (i % 1000 == 7) {
            assert_null(r->op);
            continue;
        }
        double m = i >= N / 4 + 5 && i % 2 ? 3 : 1;
        /* gm/ID 150 uS / 10 uA (definition); ID/(W*m) with the dump's m */
        assert_close(r->fig.gm_id, 15.0, 1e-12);
        assert_close(r->fig.id_w, 1e-5 / (2e-6 * m), 1e-12);
    }
    int first = 0;
    snprintf(nm, sizeof nm, "first: x%d.m1,", N / 4 + 5);
    for (size_t i = 0; i < x.d.n; i++)
        first |= strstr(x.d.items[i].msg, nm) != NULL;
    assert_true(first);
    join_free(&j);
    free(devs);
    teardown(&x);
}

static void test_cut_names(void **state)
{
    (void)state;
    Fixture x;
    /* ngspice's show tables keep 21 characters of "m.<path>": here the dump holds the cut forms */
    setup(&x, (const char *[]){"xbuffer_stage_one.xa.m1", "xbuffer_stage_one.xb.m1", "xlonger_unique_name.m5"}, 3);
    rec(&x, "xlonger_unique_name.", 1);
    rec(&x, "xbuffer_stage_one.xa.m1", 0);
    rec(&x, "xbuffer_stage_one.x", 1); /* fits xa.m1 (which has its own record) and xb.m1 */
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_OK);
    assert_int_equal(j.nmatched, 3);
    assert_ptr_equal(j.rows[1].op, &x.t.recs[2]);
    assert_ptr_equal(j.rows[2].op, &x.t.recs[0]);
    join_free(&j);
    teardown(&x);
}

static void test_ambiguous_cut_name(void **state)
{
    (void)state;
    Fixture x;
    setup(&x, (const char *[]){"xbuffer_stage_one.xa.m1", "xbuffer_stage_one.xb.m1"}, 2);
    rec(&x, "xbuffer_stage_one.x", 1);
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_INPUT);
    assert_int_equal(x.d.items[0].loc.line, 3);
    assert_non_null(strstr(x.d.items[0].msg, "fits 2 devices"));
    assert_non_null(strstr(x.d.items[0].msg, "raw file"));
    teardown(&x);
}

static void test_dump_of_another_netlist(void **state)
{
    (void)state;
    Fixture x;
    setup(&x, (const char *[]){"m1", "m2", "m3", "m4", "m5"}, 5);
    rec(&x, "m1", 0);
    rec(&x, "m2", 0);
    rec(&x, "q7", 0);
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_INPUT);
    assert_non_null(strstr(x.d.items[x.d.n - 1].msg, "only 2 of the netlist's 5 MOSFETs"));
    assert_string_equal(x.d.items[x.d.n - 1].loc.file, "dump.log");
    teardown(&x);
}

static void test_devices_without_data(void **state)
{
    (void)state;
    Fixture x;
    setup(&x, (const char *[]){"m1", "m2", "m3"}, 3);
    rec(&x, "m1", 0);
    rec(&x, "m3", 0);
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_OK);
    assert_null(j.rows[1].op);
    assert_true(isnan(j.rows[1].fig.gm_id)); /* absent, never zero */
    assert_int_equal(x.d.nwarnings, 1);
    assert_non_null(strstr(x.d.items[0].msg, "1 of 3 MOSFETs have no operating-point data in this dump: m2"));
    join_free(&j);
    teardown(&x);
}

static void test_dump_multiplier_wins(void **state)
{
    (void)state;
    Fixture x;
    setup(&x, (const char *[]){"x1.m1", "m2"}, 2);
    x.devs[0].m = 6; /* the netlist's product of m over the hierarchy */
    rec(&x, "x1.m1", 0)->q[OPQ_M] = 3; /* what ngspice 39 simulated */
    rec(&x, "m2", 0)->q[OPQ_M] = 1;
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&x.ds, &x.t, x.rs, &jo, &j, &x.d), ERR_OK);
    /* ID/(W*m) = 10 uA / (2 um * 3) with the simulator's m */
    assert_close(j.rows[0].fig.id_w, 1e-5 / (2e-6 * 3), 1e-12);
    assert_close(j.rows[1].fig.id_w, 1e-5 / 2e-6, 1e-12);
    assert_int_equal(x.d.nwarnings, 1);
    assert_non_null(strstr(x.d.items[0].msg, "first: x1.m1, netlist m=6, dump m=3"));
    join_free(&j);
    teardown(&x);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_exact_names),
        cmocka_unit_test(test_consuming_join),
        cmocka_unit_test(test_large_design),
        cmocka_unit_test(test_cut_names),
        cmocka_unit_test(test_ambiguous_cut_name),
        cmocka_unit_test(test_dump_of_another_netlist),
        cmocka_unit_test(test_devices_without_data),
        cmocka_unit_test(test_dump_multiplier_wins),
    };
    return cmocka_run_group_tests_name("join", tests, NULL, NULL);
}
