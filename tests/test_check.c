/* test_check: findings for each default check, their sentences, locations and rule origins, the
 * info findings for checks that lack data, the order (errors first, then netlist order) and the
 * counts. Designs, records and joined rows are built by hand. */
#include "testutil.h"

#include "check.h"

#define MAXDEV 16

typedef struct {
    const char *name;
    MosType type;
    double w, l, m;
    int nodata;         /* no record in the dump */
    double id, gm, gds, vgs, vds, vth, vdsat, cgg;
    uint32_t file, line; /* card place: file 0 is "amp.cir", 1 is "lib/stage.inc" */
} Spec;

typedef struct {
    Design ds;
    SrcFile files[2];
    SrcFile *filep[2];
    Card cards[MAXDEV];
    Device devs[MAXDEV];
    OpRecord recs[MAXDEV];
    Row rows[MAXDEV];
    Joined j;
    RuleSet *rs;
    DiagList d;
} Fx;

static void build(Fx *x, const Spec *s, size_t n, const char *rules)
{
    memset(x, 0, sizeof *x);
    diag_init(&x->d);
    x->rs = rule_new_defaults(&x->d);
    assert_non_null(x->rs);
    if (rules)
        assert_int_equal(rule_load_text(x->rs, "user.rules", rules, strlen(rules), &x->d), ERR_OK);
    x->files[0].path = (char *)"amp.cir";
    x->files[1].path = (char *)"lib/stage.inc";
    x->filep[0] = &x->files[0];
    x->filep[1] = &x->files[1];
    x->ds.files.files = x->filep;
    x->ds.files.n = 2;
    x->ds.cards = x->cards;
    x->ds.ncards = n;
    x->ds.devs = x->devs;
    x->ds.ndevs = n;
    x->ds.temp_c = 27;
    for (size_t i = 0; i < n; i++) {
        x->cards[i] = (Card){.file = s[i].file, .line = s[i].line ? s[i].line : (uint32_t)(10 + i), .col = 1};
        x->devs[i] = (Device){.name = s[i].name, .model = "nch", .type = s[i].type ? s[i].type : MOS_NMOS,
                              .w = s[i].w ? s[i].w : 1e-6, .l = s[i].l ? s[i].l : 1e-6, .m = s[i].m ? s[i].m : 1,
                              .nf = 1, .card = (uint32_t)i};
        OpRecord *r = &x->recs[i];
        memset(r, 0, sizeof *r);
        r->name = s[i].name;
        r->family = OPFAM_BSIM;
        for (int q = 0; q < OPQ_COUNT; q++)
            r->q[q] = NAN;
        r->q[OPQ_ID] = s[i].id;
        r->q[OPQ_GM] = s[i].gm;
        r->q[OPQ_GDS] = s[i].gds;
        r->q[OPQ_VGS] = s[i].vgs;
        r->q[OPQ_VDS] = s[i].vds;
        r->q[OPQ_VTH] = s[i].vth;
        r->q[OPQ_VDSAT] = s[i].vdsat;
        r->q[OPQ_CGG] = s[i].cgg;
        Row *row = &x->rows[i];
        row->dev = &x->devs[i];
        row->op = s[i].nodata ? NULL : r;
        fig_normalize(row->op, x->devs[i].type, &row->fig);
        if (row->op)
            fig_derive(&row->fig, row->dev, rule_bands(x->rs, row->dev, NULL));
        x->j.nmatched += row->op != NULL;
    }
    x->j.rows = x->rows;
    x->j.n = n;
}

static void done(Fx *x, Findings *f)
{
    chk_free(f);
    rule_free(x->rs);
    diag_free(&x->d);
}

/* A healthy saturated device: 15 /V (moderate), gain 50, margin 200 mV. */
#define GOOD 1e-5, 1.5e-4, 3e-6, 0.6, 0.5, 0.45, 0.3, 2e-15

static void test_clean(void **state)
{
    (void)state;
    Spec s[] = {{"m1", 0, 0, 0, 0, 0, GOOD, 0, 0}};
    Fx x;
    build(&x, s, 1, NULL);
    Findings f;
    assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
    assert_int_equal(f.n, 0);
    assert_int_equal(f.count[SEV_ERROR] + f.count[SEV_WARNING] + f.count[SEV_INFO], 0);
    done(&x, &f);
}

/* One device, the findings it must give, and the sentence of the first. */
typedef struct {
    const char *what;
    Spec spec;
    const char *rules;  /* user rules on top of the defaults, or NULL */
    size_t n;
    CheckId check[3];
    Severity sev[3];
    double value, limit; /* of the first finding; NaN: absent */
    const char *message;
} Case;

static const Case cases[] = {
    {"margin below 50 mV", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.312, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     1, {CHECK_MARGIN}, {SEV_ERROR}, 0.012, 0.05,
     "VDS-VDSAT is 12 mV, below the 50 mV minimum: the device is close to leaving saturation"},
    {"triode, not also margin", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.18, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     1, {CHECK_TRIODE}, {SEV_ERROR}, -0.12, 0.0,
     "VDS is 180 mV but VDSAT is 300 mV (VDS-VDSAT = -120 mV): the device is in triode"},
    {"triode check off: the margin check still sees it",
     {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.18, 0.45, 0.3, 2e-15, 0, 0}, "check triode ignore\n",
     1, {CHECK_MARGIN}, {SEV_ERROR}, -0.12, 0.05,
     "VDS-VDSAT is -120 mV, below the 50 mV minimum: the device is in triode"},
    {"low gain", {"m1", 0, 0, 0, 0, 0, 1e-5, 1e-4, 1.22e-5, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     1, {CHECK_GAIN}, {SEV_WARNING}, 1e-4 / 1.22e-5, 10.0,
     "gm/gds is 8.2, below the minimum of 10: the device gives little voltage gain"},
    {"low gain and triode both", {"m1", 0, 0, 0, 0, 0, 1e-5, 1e-4, 5e-5, 0.6, 0.1, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     2, {CHECK_TRIODE, CHECK_GAIN}, {SEV_ERROR, SEV_WARNING}, -0.2, 0.0, NULL},
    {"off: nothing else, even in triode and with low gain",
     {"m1", 0, 0, 0, 0, 0, 1e-12, 3e-11, 1e-11, 0.0, 0.01, 0.45, 0.05, 2e-15, 0, 0}, NULL,
     1, {CHECK_OFF}, {SEV_WARNING}, 1e-12, 1e-10,
     "ID is 1 pA, 1 pA per square (ID*L/(W*m)), below the 100 pA off limit: the device is off"},
    {"off at zero current", {"m1", 0, 0, 0, 0, 0, 0.0, 0.0, 0.0, 0.0, 1.0, 0.45, 0.05, 2e-15, 0, 0}, NULL,
     1, {CHECK_OFF}, {SEV_WARNING}, 0.0, 1e-10, "ID is 0: the device is off"},
    {"off by density with W*m", {"m1", 0, 10e-6, 0.5e-6, 4, 0, 5e-9, 1e-7, 1e-9, 0.3, 1.0, 0.45, 0.05, 2e-15, 0, 0},
     NULL, 1, {CHECK_OFF}, {SEV_WARNING}, 5e-9 * 0.5e-6 / 40e-6, 1e-10,
     "ID is 5 nA, 62.5 pA per square (ID*L/(W*m)), below the 100 pA off limit: the device is off"},
    {"off check ignored: still no other finding",
     {"m1", 0, 0, 0, 0, 0, 1e-12, 3e-11, 1e-11, 0.0, 0.01, 0.45, 0.05, 2e-15, 0, 0}, "check off ignore\n",
     0, {0}, {0}, NAN, NAN, NULL},
    {"no data", {"m1", 0, 0, 0, 0, 1, GOOD, 0, 0}, NULL,
     1, {CHECK_NODATA}, {SEV_WARNING}, NAN, NAN,
     "no operating-point data: the dump has no record for this device, so nothing was checked"},
    {"no vdsat: neither triode nor margin passes silently",
     {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.5, 0.45, NAN, 2e-15, 0, 0}, NULL,
     2, {CHECK_TRIODE, CHECK_MARGIN}, {SEV_INFO, SEV_INFO}, NAN, 0.0, "cannot check for triode: the dump has no vdsat"},
    {"no vds and no vdsat", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, NAN, 0.45, NAN, 2e-15, 0, 0},
     "check triode ignore\n", 1, {CHECK_MARGIN}, {SEV_INFO}, NAN, 0.05,
     "cannot check the VDS-VDSAT margin: the dump has no vds and no vdsat"},
    {"gds 0", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 0.0, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     1, {CHECK_GAIN}, {SEV_INFO}, NAN, 10.0, "cannot check gm/gds: gds is 0, so the gain is undefined"},
    {"no gds", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, NAN, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     1, {CHECK_GAIN}, {SEV_INFO}, NAN, 10.0, "cannot check gm/gds: the dump has no gds"},
    {"no id: off cannot be told", {"m1", 0, 0, 0, 0, 0, NAN, 1.5e-4, 3e-6, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 0}, NULL,
     1, {CHECK_OFF}, {SEV_INFO}, NAN, 1e-10, "cannot check whether the device is off: the dump has no id"},
    {"user limits and severities", {"m1", 0, 0, 0, 0, 0, GOOD, 0, 0},
     "check sat-margin min 250mV warning\ncheck gain min 60 error\n",
     2, {CHECK_GAIN, CHECK_MARGIN}, {SEV_ERROR, SEV_WARNING}, 50.0, 60.0,
     "gm/gds is 50, below the minimum of 60: the device gives little voltage gain"},
    {"everything ignored", {"m1", 0, 0, 0, 0, 1, GOOD, 0, 0},
     "check no-data ignore\n", 0, {0}, {0}, NAN, NAN, NULL},
};

static void test_cases(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        const Case *t = &cases[i];
        print_message("  %s\n", t->what);
        Fx x;
        build(&x, &t->spec, 1, t->rules);
        Findings f;
        assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
        assert_int_equal(f.n, t->n);
        for (size_t k = 0; k < t->n; k++) {
            assert_string_equal(rule_check_name[f.items[k].check], rule_check_name[t->check[k]]);
            assert_string_equal(rule_severity_name[f.items[k].sev], rule_severity_name[t->sev[k]]);
            assert_int_equal(f.items[k].row, 0);
        }
        if (t->n) {
            if (isnan(t->value))
                assert_true(isnan(f.items[0].value));
            else
                assert_close(f.items[0].value, t->value, 1e-9);
            if (isnan(t->limit))
                assert_true(isnan(f.items[0].limit));
            else
                assert_close(f.items[0].limit, t->limit, 1e-12);
        }
        if (t->message)
            assert_string_equal(f.items[0].message, t->message);
        done(&x, &f);
    }
}

static void test_order_counts_locations(void **state)
{
    (void)state;
    Spec s[] = {
        {"m1", 0, 0, 0, 0, 0, GOOD, 0, 3},                                                         /* clean */
        {"x1.m2", 0, 0, 0, 0, 0, 1e-5, 1e-4, 1.22e-5, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 4},            /* gain W */
        {"x1.m3", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.312, 0.45, 0.3, 2e-15, 1, 7},          /* margin E */
        {"x1.m4", 0, 0, 0, 0, 1, GOOD, 0, 5},                                                      /* nodata W */
        {"x1.m5", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 0.0, 0.6, 0.5, 0.45, NAN, 2e-15, 0, 6},             /* 3 infos */
        {"m6", MOS_PMOS, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.18, 0.45, 0.3, 2e-15, 0, 8},       /* triode E */
    };
    Fx x;
    build(&x, s, 6, NULL);
    Findings f;
    assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
    assert_int_equal(f.count[SEV_ERROR], 2);
    assert_int_equal(f.count[SEV_WARNING], 2);
    assert_int_equal(f.count[SEV_INFO], 3);
    assert_int_equal(f.n, 7);
    static const struct {
        size_t row;
        CheckId check;
        Severity sev;
        const char *file;
        unsigned line;
    } want[] = {
        {2, CHECK_MARGIN, SEV_ERROR, "lib/stage.inc", 7}, {5, CHECK_TRIODE, SEV_ERROR, "amp.cir", 8},
        {1, CHECK_GAIN, SEV_WARNING, "amp.cir", 4},       {3, CHECK_NODATA, SEV_WARNING, "amp.cir", 5},
        {4, CHECK_TRIODE, SEV_INFO, "amp.cir", 6},        {4, CHECK_MARGIN, SEV_INFO, "amp.cir", 6},
        {4, CHECK_GAIN, SEV_INFO, "amp.cir", 6},
    };
    for (size_t k = 0; k < 7; k++) {
        assert_int_equal(f.items[k].row, want[k].row);
        assert_int_equal(f.items[k].check, want[k].check);
        assert_int_equal(f.items[k].sev, want[k].sev);
        assert_string_equal(f.items[k].loc.file, want[k].file);
        assert_int_equal(f.items[k].loc.line, want[k].line);
        assert_int_equal(f.items[k].loc.col, 1);
        /* the rule that asked for the check: the compiled-in defaults */
        assert_string_equal(f.items[k].rule.file, "<defaults>");
        assert_true(f.items[k].rule.line > 0);
        assert_int_equal(f.items[k].rule.line, rule_check(x.rs, f.items[k].check)->from.line);
    }
    done(&x, &f);
}

static void test_origin_from_user_rules(void **state)
{
    (void)state;
    Spec s[] = {{"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.312, 0.45, 0.3, 2e-15, 0, 0}};
    Fx x;
    build(&x, s, 1, "# mine\ncheck sat-margin min 20mV\n");
    Findings f;
    assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
    assert_int_equal(f.n, 1);
    assert_string_equal(f.items[0].message, "VDS-VDSAT is 12 mV, below the 20 mV minimum: the device is close to leaving saturation");
    assert_string_equal(f.items[0].rule.file, "user.rules");
    assert_int_equal(f.items[0].rule.line, 2);
    done(&x, &f);
}

/* A card index out of range or a missing file gives an empty location, not a crash. */
static void test_bad_card(void **state)
{
    (void)state;
    Spec s[] = {{"m1", 0, 0, 0, 0, 1, GOOD, 5, 1}};
    Fx x;
    build(&x, s, 1, NULL);
    Findings f;
    assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
    assert_int_equal(f.n, 1);
    assert_null(f.items[0].loc.file);
    x.devs[0].card = 99;
    chk_free(&f);
    assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
    assert_null(f.items[0].loc.file);
    assert_int_equal(f.items[0].loc.line, 0);
    done(&x, &f);
    chk_free(NULL);
}

/* 300 000 rows: linear work (a quadratic step would not finish), and the order holds. */
static void test_many(void **state)
{
    (void)state;
    size_t n = 300000;
    Fx x;
    Spec s[] = {{"m", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.312, 0.45, 0.3, 2e-15, 0, 1}};
    build(&x, s, 1, NULL);
    Row *rows = malloc(n * sizeof *rows);
    assert_non_null(rows);
    for (size_t i = 0; i < n; i++) {
        rows[i] = x.rows[0];
        if (i % 3 == 1)
            rows[i].op = NULL; /* no-data warnings between the margin errors */
    }
    Joined j = x.j;
    j.rows = rows;
    j.n = n;
    Findings f;
    assert_int_equal(chk_run(x.rs, &x.ds, &j, &f), ERR_OK);
    assert_int_equal(f.count[SEV_WARNING], n / 3);
    assert_int_equal(f.count[SEV_ERROR], n - n / 3);
    for (size_t k = 1; k < f.n; k++) {
        assert_true(f.items[k - 1].sev >= f.items[k].sev);
        if (f.items[k - 1].sev == f.items[k].sev)
            assert_true(f.items[k - 1].row < f.items[k].row);
    }
    free(rows);
    done(&x, &f);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_clean),
        cmocka_unit_test(test_cases),
        cmocka_unit_test(test_order_counts_locations),
        cmocka_unit_test(test_origin_from_user_rules),
        cmocka_unit_test(test_bad_card),
        cmocka_unit_test(test_many),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
