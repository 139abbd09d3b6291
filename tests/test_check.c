/* test_check: findings for each default check, their sentences, locations and rule origins, the
 * info findings for checks that lack data, the order (errors first, then netlist order) and the
 * counts; then the statements of intent: every requirement kind with its drift sentence, the
 * findings for figures the dump lacks, the precedence of defaults, rule files and inline intents,
 * intended regions, waivers (used, stale, expired), matched groups per instance, selector warnings,
 * the regex limit and explain. Designs, records and joined rows are built by hand; the last test
 * simulates tests/circuits-intent/hier.cir with ngspice and checks every requirement kind against
 * the level-1 equations (skipped without ngspice). */
#define _DEFAULT_SOURCE /* realpath */
#include "testutil.h"

#include <limits.h>
#include <time.h>

#include "netlist.h"

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
    double vals[MAXDEV][OPQ_COUNT];
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
        r->q = x->vals[i];
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

/* A device outside its lookup table's grid (check --table) has no figures, like one without data,
 * and its no-data finding names the axes it falls outside of. */
static void test_outside_table(void **state)
{
    (void)state;
    Spec s[] = {{"m1", 0, 0, 0, 0, 1, GOOD, 0, 0}};
    Fx x;
    build(&x, s, 1, NULL);
    RowTable tab = {.lut_miss = (1u << 0) | (1u << 3)}; /* LutAxis: L and VGS */
    x.j.rows[0].tab = &tab;
    Findings f;
    assert_int_equal(chk_run(x.rs, &x.ds, &x.j, &f), ERR_OK);
    assert_int_equal(f.n, 1);
    assert_int_equal(f.items[0].check, CHECK_NODATA);
    assert_string_equal(f.items[0].message, "no figures: the dump has no record for this device and its L and VGS lie "
                                            "outside the grid of the lookup table for its model, which is never "
                                            "extrapolated; nothing was checked");
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
    {"low gain in triode: the triode finding alone", {"m1", 0, 0, 0, 0, 0, 1e-5, 1e-4, 5e-5, 0.6, 0.1, 0.45, 0.3, 2e-15, 0, 0},
     NULL, 1, {CHECK_TRIODE}, {SEV_ERROR}, -0.2, 0.0, NULL},
    {"low gain in triode with a gain intent: both",
     {"m1", 0, 0, 0, 0, 0, 1e-5, 1e-4, 5e-5, 0.6, 0.1, 0.45, 0.3, 2e-15, 0, 0}, "sized m1 for: gain >= 10\n",
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

/* ---- statements of intent (issue 3) ---- */

/* Inline intents built by hand: (card, kind, netlist line, line number), cards in order. */
typedef struct {
    uint32_t card;
    RuleInlineKind kind;
    const char *line;
    uint32_t lineno;
} Inl;

static void make_intents(IntentSet *in, size_t ncards, const Inl *v, size_t n, DiagList *d)
{
    memset(in, 0, sizeof *in);
    arena_init(&in->arena);
    in->items = calloc(n ? n : 1, sizeof *in->items);
    in->start = calloc(ncards + 1, sizeof *in->start);
    assert_non_null(in->items);
    assert_non_null(in->start);
    in->ncards = ncards;
    for (size_t k = 0; k < n; k++) {
        const char *mark = strstr(v[k].line, v[k].kind == RULE_INLINE_SIZED ? "sized for:" : "waive:");
        assert_non_null(mark);
        size_t body = (size_t)(strchr(mark, ':') - v[k].line) + 1;
        IntentEntry *e = &in->items[k];
        e->card = v[k].card;
        e->kind = v[k].kind;
        assert_int_equal(rule_parse_inline(&in->arena, v[k].kind, "amp.cir", v[k].lineno, v[k].line, strlen(v[k].line),
                                           body, &e->sized, &e->waiver, d),
                         ERR_OK);
        if (k)
            assert_true(v[k].card >= v[k - 1].card);
    }
    in->n = n;
    size_t at = 0;
    for (size_t c = 0; c <= ncards; c++) {
        in->start[c] = at;
        while (at < n && in->items[at].card == c)
            at++;
    }
}

static const Finding *find(const Findings *f, CheckId id, size_t row)
{
    for (size_t k = 0; k < f->n; k++)
        if (f->items[k].check == id && f->items[k].row == row)
            return &f->items[k];
    return NULL;
}

static int evaluate(Fx *x, const IntentSet *in, int32_t today, Findings *f)
{
    ChkOptions o = {today, 0};
    int rc = chk_evaluate(x->rs, in, &x->ds, &x->j, &o, f, &x->d);
    for (size_t k = 0; rc == ERR_OK && k < f->n; k++)
        print_message("    %s %s %s: %s%s\n", x->devs[f->items[k].row].name, rule_severity_name[f->items[k].sev],
                      rule_check_name[f->items[k].check], f->items[k].message, f->items[k].waived ? " (waived)" : "");
    return rc;
}

/* Enz-Vittoz charge-based model (C. C. Enz & E. A. Vittoz, Charge-based MOS Transistor Modeling,
   Wiley 2006, ch. 3, from memory; check-values.md sec. 4): gm/ID = 2/(n UT (1+sqrt(1+4 IC))), so
   IC = (1-g)/g^2 with g = gm/ID * n * UT; UT = kT/q with the exact SI constants (BIPM 2019). */
static double ic_of(double gm_id, double n, double temp_c)
{
    double ut = 1.380649e-23 * (temp_c + 273.15) / 1.602176634e-19;
    double g = gm_id * n * ut;
    return (1.0 - g) / (g * g);
}

/* One requirement on the GOOD device (gm/ID 15 /V moderate, gain 50, margin 200 mV, ID 10 uA,
 * VOV 150 mV, fT = 1.5e-4/(2 pi 2e-15) = 11.9 GHz) and the finding it must give. */
typedef struct {
    const char *req;     /* after "sized m1 for: " */
    CheckId check;       /* CHECK_COUNT: no finding */
    Severity sev;
    double value, limit;
    const char *message;
    const char *direction;
} ReqCase;

static const ReqCase req_cases[] = {
    {"gm/ID 20/V +-10%", CHECK_GMID, SEV_WARNING, 15, 18,
     "gm/ID is 15 /V, intended 20 /V +-10 % (18 /V to 22 /V): 25 % below the target, deeper in strong inversion than "
     "intended",
     "deeper in strong inversion than intended"},
    {"gm/ID 10..12 error", CHECK_GMID, SEV_ERROR, 15, 12,
     "gm/ID is 15 /V, intended 10 /V to 12 /V: 3 /V over, closer to weak inversion than intended",
     "closer to weak inversion than intended"},
    {"gm/ID 15 +-1.5/V", CHECK_COUNT, 0, 0, 0, NULL, NULL},
    {"gm/ID >= 14", CHECK_COUNT, 0, 0, 0, NULL, NULL},
    {"weak", CHECK_REGION, SEV_ERROR, NAN, NAN,
     "the device is in moderate inversion (gm/ID 15 /V), intended weak: deeper in strong inversion than intended",
     "deeper in strong inversion than intended"},
    {"strong or triode warning", CHECK_REGION, SEV_WARNING, NAN, NAN,
     "the device is in moderate inversion (gm/ID 15 /V), intended strong or triode: closer to weak inversion than "
     "intended",
     "closer to weak inversion than intended"},
    {"off", CHECK_REGION, SEV_ERROR, NAN, NAN,
     "the device is in moderate inversion (gm/ID 15 /V), intended off: the device conducts", "the device conducts"},
    {"saturated", CHECK_COUNT, 0, 0, 0, NULL, NULL},
    {"margin >= 300mV", CHECK_MARGIN, SEV_ERROR, 0.2, 0.3,
     "VDS-VDSAT is 200 mV, intended at least 300 mV: 100 mV short, closer to leaving saturation than intended",
     "closer to leaving saturation than intended"},
    {"gain >= 60", CHECK_GAIN, SEV_WARNING, 50, 60,
     "gm/gds is 50, intended at least 60: 10 short, less intrinsic gain than intended",
     "less intrinsic gain than intended"},
    {"gain 20..40 info", CHECK_GAIN, SEV_INFO, 50, 40,
     "gm/gds is 50, intended 20 to 40: 10 over, more intrinsic gain than intended", "more intrinsic gain than intended"},
    {"fT >= 20GHz", CHECK_FT, SEV_WARNING, 1.5e-4 / (2 * M_PI * 2e-15), 20e9,
     "fT is 11.9 GHz, intended at least 20 GHz: 8.06 GHz short, slower than intended", "slower than intended"},
    {"fT >= 500MHz", CHECK_COUNT, 0, 0, 0, NULL, NULL},
    {"IC 0.1..1", CHECK_IC, SEV_WARNING, -1 /* ic_of(15) */, 1,
     "IC is 1.95, intended 0.1 to 1: 0.948 over, deeper in strong inversion than intended",
     "deeper in strong inversion than intended"},
    {"IC 0.1..10", CHECK_COUNT, 0, 0, 0, NULL, NULL},
    {"ID 20uA +-10%", CHECK_ID, SEV_WARNING, 1e-5, 18e-6,
     "ID is 10 uA, intended 20 uA +-10 % (18 uA to 22 uA): 50 % below the target, less current than intended",
     "less current than intended"},
    {"ID <= 5uA error", CHECK_ID, SEV_ERROR, 1e-5, 5e-6,
     "ID is 10 uA, intended at most 5 uA: 5 uA over, more current than intended", "more current than intended"},
    {"VOV 200mV..300mV", CHECK_VOV, SEV_WARNING, 0.15, 0.2,
     "VOV is 150 mV, intended 200 mV to 300 mV: 50 mV short, less overdrive than intended, closer to weak inversion",
     "less overdrive than intended, closer to weak inversion"},
    {"VOV <= 100mV", CHECK_VOV, SEV_WARNING, 0.15, 0.1,
     "VOV is 150 mV, intended at most 100 mV: 50 mV over, more overdrive than intended, deeper in strong inversion",
     "more overdrive than intended, deeper in strong inversion"},
};

static void test_each_requirement(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof req_cases / sizeof req_cases[0]; i++) {
        const ReqCase *t = &req_cases[i];
        char rules[160];
        snprintf(rules, sizeof rules, "# intents\nsized m1 for: %s\n", t->req);
        print_message("  %s", rules + 10);
        Spec sp[] = {{"m1", 0, 0, 0, 0, 0, GOOD, 0, 0}};
        Fx x;
        build(&x, sp, 1, rules);
        Findings f;
        assert_int_equal(evaluate(&x, NULL, 0, &f), ERR_OK);
        if (t->check == CHECK_COUNT) {
            assert_int_equal(f.n, 0);
            done(&x, &f);
            continue;
        }
        assert_int_equal(f.n, 1);
        const Finding *fd = &f.items[0];
        assert_string_equal(rule_check_name[fd->check], rule_check_name[t->check]);
        assert_int_equal(fd->sev, t->sev);
        double want = t->value == -1 ? ic_of(15.0, 1.3, 27.0) : t->value;
        if (isnan(want))
            assert_true(isnan(fd->value));
        else
            assert_close(fd->value, want, 1e-9);
        if (isnan(t->limit))
            assert_true(isnan(fd->limit));
        else
            assert_close(fd->limit, t->limit, 1e-12);
        assert_string_equal(fd->message, t->message);
        assert_string_equal(fd->direction, t->direction);
        assert_non_null(fd->intended);
        /* the statement that asked for it: file:line of the sized line */
        assert_string_equal(fd->rule.file, "user.rules");
        assert_int_equal(fd->rule.line, 2);
        assert_string_equal(fd->loc.file, "amp.cir");
        done(&x, &f);
    }
}

/* A figure the dump cannot give is a finding of its own, never a pass. */
static void test_cannot_check(void **state)
{
    (void)state;
    static const struct {
        const char *req;
        Spec spec;
        CheckId check;
        const char *message;
    } rows[] = {
        {"fT >= 1GHz", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.5, 0.45, 0.3, NAN, 0, 0}, CHECK_FT,
         "cannot check fT (intended at least 1 GHz): the dump has no cgg (nor cgs, cgd and cgb to sum)"},
        {"VOV 0.1..0.2", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.5, NAN, 0.3, 2e-15, 0, 0},
         CHECK_VOV, "cannot check VOV (intended 100 mV to 200 mV): the dump has no vth (nor von)"},
        {"gm/ID 15 +-10%", {"m1", 0, 0, 0, 0, 0, 1e-5, NAN, 3e-6, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 0},
         CHECK_GMID, "cannot check gm/ID (intended 15 /V +-10 % (13.5 /V to 16.5 /V)): the dump has no gm"},
        /* gm/ID 35 /V is above 1/(n UT) = 29.7 /V for n 1.3 at 27 C: the relation gives no IC */
        {"IC 0.1..10", {"m1", 0, 0, 0, 0, 0, 1e-7, 3.5e-6, 3e-9, 0.3, 0.5, 0.45, 0.1, 2e-15, 0, 0},
         CHECK_IC,
         "cannot check IC (intended 0.1 to 10): gm/ID 35 /V is at or above 1/(n*UT) = 29.7 /V (n = 1.3, 27 C), where "
         "IC is not defined: lower the slope-factor for this device"},
        {"moderate", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.5, 0.45, NAN, 2e-15, 0, 0},
         CHECK_REGION, "cannot check the region (intended moderate): the dump has no vdsat"},
        {"margin >= 0.1", {"m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, NAN, 0.45, 0.3, 2e-15, 0, 0},
         CHECK_MARGIN, "cannot check VDS-VDSAT (intended at least 100 mV): the dump has no vds"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        char rules[96];
        snprintf(rules, sizeof rules, "sized m1 for: %s\ncheck triode ignore\ncheck off ignore\n", rows[i].req);
        print_message("  %s\n", rows[i].req);
        Fx x;
        build(&x, &rows[i].spec, 1, rules);
        Findings f;
        assert_int_equal(evaluate(&x, NULL, 0, &f), ERR_OK);
        const Finding *fd = find(&f, rows[i].check, 0);
        assert_non_null(fd);
        assert_int_equal(fd->sev, SEV_WARNING); /* a stated intent that cannot be checked: a warning */
        assert_true(isnan(fd->value));
        assert_string_equal(fd->message, rows[i].message);
        done(&x, &f);
    }
}

/* Defaults, then rule files in order, then the card's inline intents: for each requirement the
 * last statement that selects the device wins; `no KIND` takes one away; `check KIND ignore`
 * switches a kind off everywhere. */
static void test_precedence(void **state)
{
    (void)state;
    Spec sp[] = {
        {"x1.m1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.47, 0.45, 0.3, 2e-15, 0, 3}, /* 170 mV */
        {"x1.m2", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.33, 0.45, 0.3, 2e-15, 0, 5}, /* 30 mV */
        {"m3", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.39, 0.45, 0.3, 2e-15, 0, 7},     /* 90 mV */
    };
    const char rules[] = "sized all for: margin >= 100mV\n"        /* 1 */
                         "sized cell amp for: margin >= 150mV\n"   /* 2 */
                         "sized x1.m2 for: no margin, gain >= 60 info\n"; /* 3 */
    Fx x;
    build(&x, sp, 3, rules);
    x.devs[0].cell = x.devs[1].cell = "amp";
    IntentSet in;
    Inl v[] = {{0, RULE_INLINE_SIZED, "m1 d g s b nch $ sized for: margin >= 180mV warning", 3}};
    make_intents(&in, 3, v, 1, &x.d);
    Findings f;
    assert_int_equal(evaluate(&x, &in, 0, &f), ERR_OK);
    /* x1.m1: the inline 180 mV wins over the cell's 150 mV and all's 100 mV */
    const Finding *fd = find(&f, CHECK_MARGIN, 0);
    assert_non_null(fd);
    assert_int_equal(fd->sev, SEV_WARNING);
    assert_close(fd->limit, 0.18, 1e-12);
    assert_string_equal(fd->rule.file, "amp.cir");
    assert_int_equal(fd->rule.line, 3);
    /* x1.m2: margin taken away (not even the default 50 mV), gain >= 60 at info */
    assert_null(find(&f, CHECK_MARGIN, 1));
    fd = find(&f, CHECK_GAIN, 1);
    assert_non_null(fd);
    assert_int_equal(fd->sev, SEV_INFO);
    assert_int_equal(fd->rule.line, 3);
    /* m3: only the `all` line selects it */
    fd = find(&f, CHECK_MARGIN, 2);
    assert_non_null(fd);
    assert_close(fd->limit, 0.1, 1e-12);
    assert_int_equal(fd->sev, SEV_ERROR);
    assert_string_equal(fd->rule.file, "user.rules");
    assert_int_equal(fd->rule.line, 1);
    assert_int_equal(f.n, 3);
    chk_free(&f);

    /* the inline intent wins even over a rule file loaded later */
    const char later[] = "sized x1.m1 for: margin >= 20mV\n";
    assert_int_equal(rule_load_text(x.rs, "later.rules", later, sizeof later - 1, &x.d), ERR_OK);
    assert_int_equal(evaluate(&x, &in, 0, &f), ERR_OK);
    assert_close(find(&f, CHECK_MARGIN, 0)->limit, 0.18, 1e-12);
    chk_free(&f);
    /* without the inline intent the later file's 20 mV wins: no finding for x1.m1 */
    assert_int_equal(evaluate(&x, NULL, 0, &f), ERR_OK);
    assert_null(find(&f, CHECK_MARGIN, 0));
    chk_free(&f);

    /* explain names the winner and what it overrides */
    Buf b = BUF_INIT;
    assert_int_equal(chk_explain(x.rs, &in, &x.ds, &x.j, NULL, "x1.m1", &b, &x.d), ERR_OK);
    print_message("%s", b.data);
    assert_non_null(strstr(b.data, "x1.m1: nmos, model nch, in subcircuit amp, W/L 1u/1u\n"));
    assert_non_null(strstr(b.data, "  sat-margin  at least 180 mV, warning [amp.cir:3]; overrides <defaults>:"));
    assert_non_null(strstr(b.data, ", user.rules:1, user.rules:2, later.rules:1\n"));
    assert_non_null(strstr(b.data, "  gain        at least 10, warning [<defaults>:"));
    assert_non_null(strstr(b.data, "  measured    moderate, gm/ID 15/V, ID 10uA, VDS-VDSAT 170mV"));
    buf_clear(&b);
    assert_int_equal(chk_explain(x.rs, &in, &x.ds, NULL, NULL, "x1.m2", &b, &x.d), ERR_OK);
    assert_non_null(strstr(b.data, "  sat-margin  none: taken away by 'no margin' [user.rules:3]"));
    assert_non_null(strstr(b.data, "  gain        at least 60, info [user.rules:3]; overrides <defaults>:"));
    assert_null(strstr(b.data, "measured"));
    buf_clear(&b);
    assert_int_equal(chk_explain(x.rs, &in, &x.ds, NULL, NULL, "x1.*", &b, &x.d), ERR_OK);
    assert_non_null(strstr(b.data, "x1.m1:"));
    assert_non_null(strstr(b.data, "\nx1.m2:"));
    assert_null(strstr(b.data, "m3:"));
    size_t nerr = x.d.nerrors;
    assert_int_equal(chk_explain(x.rs, &in, &x.ds, NULL, NULL, "x9.*", &b, &x.d), ERR_INPUT);
    assert_int_equal(x.d.nerrors, nerr + 1);
    buf_free(&b);

    /* `check sat-margin ignore` switches every margin requirement off, the stated ones too */
    const char off[] = "check sat-margin ignore\n";
    assert_int_equal(rule_load_text(x.rs, "off.rules", off, sizeof off - 1, &x.d), ERR_OK);
    assert_int_equal(evaluate(&x, &in, 0, &f), ERR_OK);
    assert_null(find(&f, CHECK_MARGIN, 0));
    assert_null(find(&f, CHECK_MARGIN, 2));
    chk_free(&f);
    intent_free(&in);
    done(&x, &f);
}

/* An intended region replaces the triode and off checks, and a device meant for triode or off is
 * not checked for margin and gain. */
static void test_regions_intended(void **state)
{
    (void)state;
    Spec sp[] = {
        /* triode switch: VDS 10 mV, gain below 1 */
        {"msw", 0, 0, 0, 0, 0, 1e-5, 1e-5, 1e-3, 0.9, 0.01, 0.45, 0.3, 2e-15, 0, 3},
        /* off start-up device */
        {"moff", 0, 0, 0, 0, 0, 1e-12, 3e-11, 1e-11, 0.0, 0.5, 0.45, 0.05, 2e-15, 0, 5},
        /* meant to conduct, but off */
        {"mon", 0, 0, 0, 0, 0, 1e-12, 3e-11, 1e-11, 0.0, 0.5, 0.45, 0.05, 2e-15, 0, 7},
        /* meant for strong inversion, in triode */
        {"mtr", 0, 0, 0, 0, 0, 1e-5, 5e-5, 1e-4, 0.9, 0.1, 0.45, 0.3, 2e-15, 0, 9},
    };
    const char rules[] = "sized msw for: triode\nsized moff for: off\nsized mon for: moderate, gm/ID 15 +-10%\n"
                         "sized mtr for: strong\n";
    Fx x;
    build(&x, sp, 4, rules);
    Findings f;
    assert_int_equal(evaluate(&x, NULL, 0, &f), ERR_OK);
    /* msw and moff: nothing (no triode, off, margin or gain finding); mon: the region only; mtr: the
       region only, its low gain being that of any triode device (see "low gain in triode") */
    assert_int_equal(f.n, 2);
    assert_null(find(&f, CHECK_GAIN, 3));
    const Finding *fd = find(&f, CHECK_REGION, 2);
    assert_non_null(fd);
    assert_string_equal(fd->message, "the device is off (ID 1 pA), intended moderate: the device does not conduct");
    fd = find(&f, CHECK_REGION, 3);
    assert_non_null(fd);
    assert_string_equal(fd->message, "the device is in triode (VDS 100 mV, VDSAT 300 mV), intended strong: out of saturation");
    assert_int_equal(fd->sev, SEV_ERROR);
    assert_int_equal(fd->rule.line, 4);
    /* no triode finding, no margin finding for mtr: the region finding says it */
    assert_null(find(&f, CHECK_TRIODE, 3));
    assert_null(find(&f, CHECK_MARGIN, 3));
    done(&x, &f);
}

static void test_waivers(void **state)
{
    (void)state;
    Spec sp[] = {
        {"m1", 0, 0, 0, 0, 0, 1e-5, 1e-4, 1.22e-5, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 3}, /* gain 8.2 W */
        {"m2", 0, 0, 0, 0, 0, GOOD, 0, 5},                                           /* clean */
        {"m3", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.312, 0.45, 0.3, 2e-15, 0, 7}, /* margin E */
        {"m4", 0, 0, 0, 0, 0, 1e-5, 1e-4, 1.22e-5, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 9}, /* gain W */
    };
    const char rules[] = "waive m1 : gain because a cascode, its gain does not matter\n"      /* 1 used */
                         "waive m2 : triode because it used to be a switch\n"                /* 2 stale */
                         "waive nosuch : all because an old device\n"                        /* 3 stale, no device */
                         "waive m3 : sat-margin until 2026-06-30 because fixed in rev B\n"   /* 4 expired */
                         "waive m1 : gain, sat-margin because the later reason wins\n";     /* 5 used */
    Fx x;
    build(&x, sp, 4, rules);
    IntentSet in;
    Inl v[] = {{3, RULE_INLINE_WAIVE, "m4 d g s b nch ; waive: gain until 2030-01-01 because inline reason", 9}};
    make_intents(&in, 4, v, 1, &x.d);
    Findings f;
    assert_int_equal(evaluate(&x, &in, 20261201, &f), ERR_OK);
    /* waived: m1 gain (the last covering waiver, line 5) and m4 gain (inline, not yet expired) */
    assert_int_equal(f.nwaived, 2);
    const Finding *fd = find(&f, CHECK_GAIN, 0);
    assert_non_null(fd);
    assert_true(fd->waived);
    assert_string_equal(fd->waiver_reason, "the later reason wins");
    assert_int_equal(fd->waiver.line, 5);
    fd = find(&f, CHECK_GAIN, 3);
    assert_true(fd->waived);
    assert_string_equal(fd->waiver_reason, "inline reason");
    assert_string_equal(fd->waiver.file, "amp.cir");
    assert_int_equal(fd->waiver.line, 9);
    /* waived findings come last and are not counted */
    assert_true(f.items[f.n - 1].waived && f.items[f.n - 2].waived);
    assert_false(f.items[0].waived);
    /* m3's margin: its waiver expired on 2026-06-30, so it counts (error) */
    fd = find(&f, CHECK_MARGIN, 2);
    assert_non_null(fd);
    assert_false(fd->waived);
    /* the waiver findings: line 1 used? no: line 5 took both of m1's; so line 1 is stale too */
    size_t nw = 0;
    int saw_expired = 0, saw_stale_m2 = 0, saw_stale_m1 = 0;
    for (size_t k = 0; k < f.n; k++) {
        const Finding *w = &f.items[k];
        if (w->check != CHECK_WAIVER)
            continue;
        nw++;
        assert_int_equal(w->sev, SEV_WARNING);
        assert_string_equal(w->loc.file, "user.rules");
        assert_int_equal(w->loc.line, w->rule.line);
        if (w->rule.line == 4) {
            saw_expired = 1;
            assert_int_equal(w->row, 2);
            assert_string_equal(w->message, "this waiver expired on 2026-06-30 (reason: fixed in rev B): the 1 finding it "
                                            "covered counts again; renew it with a new date or fix the design");
        } else if (w->rule.line == 2) {
            saw_stale_m2 = 1;
            assert_int_equal(w->row, 1);
            assert_string_equal(w->message, "this waiver matched no finding (reason: it used to be a switch): the problem "
                                            "it waived is gone; remove it or correct its devices or checks");
        } else if (w->rule.line == 1) {
            saw_stale_m1 = 1;
        }
    }
    assert_int_equal(nw, 3);
    assert_true(saw_expired && saw_stale_m2 && saw_stale_m1);
    /* the waiver that selects no device: a finding of no device, and a warning at its selector */
    assert_int_equal(f.nloose, 1);
    assert_int_equal(f.loose[0].row, SIZE_MAX);
    assert_int_equal(f.loose[0].check, CHECK_WAIVER);
    assert_int_equal(f.loose[0].rule.line, 3);
    assert_non_null(strstr(f.loose[0].message, "it selects no device"));
    int warned = 0;
    for (size_t k = 0; k < x.d.n; k++)
        if (x.d.items[k].sev == DIAG_WARNING && x.d.items[k].loc.line == 3 && x.d.items[k].loc.col == 7 &&
            strstr(x.d.items[k].msg, "matches no device"))
            warned = 1;
    assert_true(warned);
    /* counts: m3 margin error; waiver warnings 4 (3 + the loose one); m1 and m4 gain waived */
    assert_int_equal(f.count[SEV_ERROR], 1);
    assert_int_equal(f.count[SEV_WARNING], 4);
    chk_free(&f);
    /* today unknown (0): nothing expires, m3's margin is waived */
    assert_int_equal(evaluate(&x, &in, 0, &f), ERR_OK);
    assert_true(find(&f, CHECK_MARGIN, 2)->waived);
    assert_int_equal(f.count[SEV_ERROR], 0);
    chk_free(&f);
    /* past the inline waiver's date too */
    assert_int_equal(evaluate(&x, &in, 20300102, &f), ERR_OK);
    assert_false(find(&f, CHECK_GAIN, 3)->waived);
    chk_free(&f);
    intent_free(&in);
    done(&x, &f);
}

/* Groups per instance (pattern), in the order written (list), ratios from W*m/L or written, the
 * waivers of any member. */
static void test_groups(void **state)
{
    (void)state;
    Spec sp[] = {
        /* x1: a 1:2 mirror (by m) that copies well; x2: the same mirror, its copy at a higher VDS */
        {"x1.ma", 0, 0, 0, 1, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.6, 0.45, 0.3, 2e-15, 0, 3},
        {"x1.mb", 0, 0, 0, 2, 0, 2e-5, 3e-4, 6e-6, 0.6, 0.62, 0.45, 0.3, 2e-15, 0, 4},
        {"x2.ma", 0, 0, 0, 1, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.6, 0.45, 0.3, 2e-15, 0, 3},
        {"x2.mb", 0, 0, 0, 2, 0, 2.3e-5, 3.2e-4, 6e-6, 0.6, 1.2, 0.45, 0.3, 2e-15, 0, 4},
        /* a pair written out in full, reference second */
        {"mp1", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.603, 0.5, 0.45, 0.3, 2e-15, 0, 8},
        {"mp2", 0, 0, 0, 0, 0, 1.1e-5, 1.6e-4, 3e-6, 0.600, 0.5, 0.45, 0.3, 2e-15, 0, 9},
        {"mq", 0, 0, 0, 0, 1, GOOD, 0, 10}, /* no data */
        {"mr", 0, 0, 0, 0, 0, GOOD, 0, 11},
    };
    const char rules[] = "matched cell mir *.ma *.mb : VDS spread <= 0.1\n"
                         "matched mp2 mp1 : ratio 1:1 +-5%, VGS spread <= 2mV error\n"
                         "matched mq mr\n"
                         "matched mr\n"
                         "waive x2.mb : match-vds because the copy drives a cascode later\n";
    Fx x;
    build(&x, sp, 8, rules);
    for (int k = 0; k < 4; k++)
        x.devs[k].cell = "mir";
    Findings f;
    assert_int_equal(evaluate(&x, NULL, 0, &f), ERR_OK);
    /* x1 is clean; x2's ratio: 2.3 against 2 (W*m/L) = +15 %, its VDS 600 mV apart */
    assert_null(find(&f, CHECK_MATCH_RATIO, 0));
    const Finding *fd = find(&f, CHECK_MATCH_RATIO, 2);
    assert_non_null(fd);
    assert_close(fd->value, 0.15, 1e-9);
    assert_close(fd->limit, 0.05, 1e-12);
    assert_string_equal(fd->group, "x2.ma, x2.mb");
    assert_string_equal(fd->message,
                        "ID ratio x2.mb/x2.ma is 2.3, expected 2 (from W*m/L): +15.0 %, beyond the 5 % limit; their VDS "
                        "differ by 600 mV (x2.ma 600 mV, x2.mb 1.2 V): unequal VDS is the likely cause, since "
                        "channel-length modulation copies the current exactly only at equal VDS");
    assert_int_equal(fd->rule.line, 1);
    /* x2's VDS spread is waived through its member x2.mb */
    fd = find(&f, CHECK_MATCH_VDS, 2);
    assert_non_null(fd);
    assert_true(fd->waived);
    /* gm/ID spread: x2 15 against 13.9 /V: 7.6 % */
    fd = find(&f, CHECK_MATCH_GMID, 2);
    assert_non_null(fd);
    assert_close(fd->value, (15.0 - 3.2e-4 / 2.3e-5) / ((15.0 + 3.2e-4 / 2.3e-5) / 2), 1e-9);
    /* the listed pair: mp2 first, so the ratio is mp1/mp2 = 10/11 */
    fd = find(&f, CHECK_MATCH_RATIO, 5);
    assert_non_null(fd);
    assert_string_equal(fd->group, "mp2, mp1");
    assert_close(fd->value, 10.0 / 11.0 - 1.0, 1e-9);
    assert_non_null(strstr(fd->message, "ID ratio mp1/mp2 is 0.909, expected 1 (as written)"));
    assert_non_null(strstr(fd->message, "their VDS agree within 0 V, but their VGS differ by 3 mV"));
    fd = find(&f, CHECK_MATCH_VGS, 5);
    assert_int_equal(fd->sev, SEV_ERROR);
    assert_close(fd->value, 0.003, 1e-9);
    /* a member without data */
    fd = find(&f, CHECK_MATCH_RATIO, 6);
    assert_non_null(fd);
    assert_string_equal(fd->message, "cannot check the matched group mq, mr: mq has no operating-point data");
    /* a group of one: a warning at its statement */
    int warned = 0;
    for (size_t k = 0; k < x.d.n; k++)
        if (x.d.items[k].loc.line == 4 && strstr(x.d.items[k].msg, "only 1 device"))
            warned = 1;
    assert_true(warned);
    done(&x, &f);
}

static void test_selector_warnings(void **state)
{
    (void)state;
    Spec sp[] = {{"xa.m1", 0, 0, 0, 0, 0, GOOD, 0, 3}, {"xa.m2", 0, 0, 0, 0, 0, GOOD, 0, 4}};
    const char rules[] = "sized cell nosuch for: gain >= 1\n"
                         "sized xa.m1 xa.m7 for: gain >= 1\n"
                         "matched /^xb\\./\n"
                         "sized xa.* xa.m2 for: gain >= 1\n";
    Fx x;
    build(&x, sp, 2, rules);
    x.devs[0].cell = x.devs[1].cell = "amp";
    Findings f;
    assert_int_equal(evaluate(&x, NULL, 0, &f), ERR_OK);
    static const struct {
        unsigned line, col;
        const char *msg;
    } want[] = {
        /* sized statements first, then matched, then waive (each in load order) */
        {1, 7, "this selector matches no device of the netlist"},
        {2, 13, "'xa.m7' selects no device that the names before it do not already select"},
        {4, 12, "'xa.m2' selects no device"},
        {3, 9, "this selector matches no device of the netlist"},
    };
    assert_int_equal(x.d.nwarnings, 4);
    for (size_t k = 0; k < 4; k++) {
        const Diag *g = &x.d.items[k];
        if (g->loc.line != want[k].line || g->loc.col != want[k].col || !strstr(g->msg, want[k].msg)) {
            print_error("got %u:%u: %s\n", g->loc.line, g->loc.col, g->msg);
            fail();
        }
        assert_string_equal(g->loc.file, "user.rules");
    }
    chk_free(&f);
    /* quiet: a second corner of the same design says nothing again */
    diag_free(&x.d);
    diag_init(&x.d);
    ChkOptions q = {0, 1};
    assert_int_equal(chk_evaluate(x.rs, NULL, &x.ds, &x.j, &q, &f, &x.d), ERR_OK);
    assert_int_equal(x.d.n, 0);
    done(&x, &f);
}

static void test_regex_limit_check(void **state)
{
    (void)state;
    Spec sp[] = {{"aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa!", 0, 0, 0, 0, 0, GOOD, 0, 3}};
    Fx x;
    build(&x, sp, 1, "sized /(a+)+$/ for: gain >= 1\n");
    Findings f;
    assert_int_equal(chk_evaluate(x.rs, NULL, &x.ds, &x.j, NULL, &f, &x.d), ERR_LIMIT);
    assert_int_equal(f.n, 0);
    assert_int_equal(x.d.nerrors, 1);
    assert_int_equal(x.d.items[0].loc.line, 1);
    assert_int_equal(x.d.items[0].loc.col, 7);
    done(&x, &f);
}

/* 200 000 rows under five statements of every selector kind: linear (a quadratic step would not
 * finish), the findings still ordered. */
static void test_many_statements(void **state)
{
    (void)state;
    size_t n = 200000;
    Spec sp[] = {{"x.m", 0, 0, 0, 0, 0, 1e-5, 1.5e-4, 3e-6, 0.6, 0.312, 0.45, 0.3, 2e-15, 0, 1}};
    Fx x;
    build(&x, sp, 1, "sized /^x\\.m/ for: gm/ID 20 +-10%\nsized cell amp for: margin >= 10mV\n"
                     "sized x*.m for: gain >= 20\nmatched cell amp\nwaive model nch : gm/id because many\n");
    x.devs[0].cell = "amp";
    Row *rows = malloc(n * sizeof *rows);
    assert_non_null(rows);
    for (size_t i = 0; i < n; i++)
        rows[i] = x.rows[0];
    Joined j = x.j;
    j.rows = rows;
    j.n = n;
    Findings f;
    ChkOptions q = {0, 1};
    time_t t0 = time(NULL);
    assert_int_equal(chk_evaluate(x.rs, NULL, &x.ds, &j, &q, &f, &x.d), ERR_OK);
    assert_true(time(NULL) - t0 < 30);
    assert_int_equal(f.nwaived, n); /* every gm/ID finding waived */
    for (size_t k = 1; k < f.n; k++)
        assert_true(f.items[k - 1].waived <= f.items[k].waived);
    free(rows);
    done(&x, &f);
}

/* 100 000 devices and 20 000 waivers that each name one device: the names are looked up, not
 * compared one statement at a time (that would be 2e9 comparisons). */
static void test_many_named(void **state)
{
    (void)state;
    size_t n = 100000, nw = 20000;
    Spec sp[] = {{"m", 0, 0, 0, 0, 0, 1e-5, 1e-4, 1.22e-5, 0.6, 0.5, 0.45, 0.3, 2e-15, 0, 1}}; /* gain 8.2 */
    Fx x;
    build(&x, sp, 1, NULL);
    Device *devs = malloc(n * sizeof *devs);
    Row *rows = malloc(n * sizeof *rows);
    char *names = malloc(n * 12);
    Buf text = BUF_INIT;
    assert_non_null(devs);
    assert_non_null(rows);
    assert_non_null(names);
    for (size_t i = 0; i < n; i++) {
        snprintf(names + 12 * i, 12, "m%zu", i);
        devs[i] = x.devs[0];
        devs[i].name = names + 12 * i;
        rows[i] = x.rows[0];
        rows[i].dev = &devs[i];
    }
    for (size_t k = 0; k < nw; k++)
        assert_int_equal(buf_printf(&text, "waive m%zu : gain because listed\n", 5 * k), ERR_OK);
    assert_int_equal(buf_printf(&text, "sized m3 m4 for: gain >= 1\n"), ERR_OK);
    assert_int_equal(rule_load_text(x.rs, "many.rules", text.data, text.len, &x.d), ERR_OK);
    Joined j = x.j;
    j.rows = rows;
    j.n = n;
    Findings f;
    ChkOptions q = {0, 1};
    time_t t0 = time(NULL);
    assert_int_equal(chk_evaluate(x.rs, NULL, &x.ds, &j, &q, &f, &x.d), ERR_OK);
    assert_true(time(NULL) - t0 < 10);
    assert_int_equal(f.nwaived, nw);
    assert_int_equal(f.count[SEV_WARNING], n - nw - 2); /* m3 and m4 need only gain >= 1 */
    assert_true(find(&f, CHECK_GAIN, 10)->waived);
    assert_false(find(&f, CHECK_GAIN, 11)->waived);
    assert_null(find(&f, CHECK_GAIN, 3));
    buf_free(&text);
    free(names);
    free(rows);
    free(devs);
    done(&x, &f);
}

/* hier.cir through ngspice: the inline intent of a subcircuit card applies to its three instances;
 * only the instance biased away from it drifts; and every requirement kind on xa.m1 gives the value
 * the level-1 equations give (Shichman & Hodges, IEEE JSSC SC-3(3), 1968; square law and
 * gm/ID = 2/VOV: Razavi, Design of Analog CMOS Integrated Circuits, ch. 2; fT = gm/(2 pi Cgs) with
 * Cgs = 2/3 Cox W L: check-values.md sec. 6; IC: Enz-Vittoz, above). */
static void test_hier_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    char abs[PATH_MAX], work[] = "/tmp/biaslint-chk-XXXXXX", deck[PATH_MAX + 16], cmd[2 * PATH_MAX + 64];
    assert_non_null(realpath("circuits-intent/hier.cir", abs));
    assert_non_null(mkdtemp(work));
    snprintf(deck, sizeof deck, "%s/deck.cir", work);
    FILE *fp = fopen(deck, "w");
    assert_non_null(fp);
    fprintf(fp, "* wrapper\n.include %s\n.control\nop\nset width=300\n"
                "show m : id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb\nquit\n.endc\n.end\n", abs);
    fclose(fp);
    snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b deck.cir >show.log 2>ngspice.err", work);
    assert_int_equal(system(cmd), 0);
    char logp[PATH_MAX + 16];
    snprintf(logp, sizeof logp, "%s/show.log", work);

    Design ds;
    memset(&ds, 0, sizeof ds);
    DiagList d;
    diag_init(&d);
    NlOptions nlo = {0, 0, 0};
    assert_int_equal(nl_load("circuits-intent/hier.cir", &nlo, &ds, &d), ERR_OK);
    IntentSet in;
    assert_int_equal(intent_scan(&ds, &in, &d), ERR_OK);
    OpTable *op = NULL;
    assert_int_equal(op_read(logp, OPFMT_AUTO, &op, &d), ERR_OK);
    RuleSet *rs = rule_new_defaults(&d);
    /* xa.m1 is sized for gm/ID 10: these bounds all fail on purpose, so each gives its number */
    const char rules[] = "sized xa.m1 for: fT >= 2GHz, IC 10..20, ID 10uA +-10%, VOV 250mV..300mV, gain >= 200\n"
                         "sized xb.m1 for: margin >= 1V\n"    /* the inline margin >= 100mV wins */
                         "sized xb.m2 for: margin >= 0.6V\n";
    assert_int_equal(rule_load_text(rs, "h.rules", rules, sizeof rules - 1, &d), ERR_OK);
    Joined j;
    JoinOptions jo = {0, 0.5, 0};
    assert_int_equal(join_run(&ds, op, rs, &jo, &j, &d), ERR_OK);
    Findings f;
    ChkOptions o = {0, 0};
    assert_int_equal(chk_evaluate(rs, &in, &ds, &j, &o, &f, &d), ERR_OK);
    size_t ra = SIZE_MAX, rb = SIZE_MAX, rc = SIZE_MAX;
    for (size_t i = 0; i < j.n; i++) {
        if (!strcmp(j.rows[i].dev->name, "xa.m1"))
            ra = i;
        if (!strcmp(j.rows[i].dev->name, "xb.m1"))
            rb = i;
        if (!strcmp(j.rows[i].dev->name, "xc.m1"))
            rc = i;
    }
    assert_true(ra != SIZE_MAX && rb != SIZE_MAX && rc != SIZE_MAX);
    for (size_t k = 0; k < f.n; k++)
        print_message("    %s %s: %s [%s:%u]\n", j.rows[f.items[k].row].dev->name, rule_check_name[f.items[k].check],
                      f.items[k].message, f.items[k].rule.file, f.items[k].rule.line);
    /* the inline "gm/ID 10/V +-10%" holds for xa and xb, not for xc: 2/VOV = 2/0.35 */
    assert_null(find(&f, CHECK_GMID, ra));
    assert_null(find(&f, CHECK_GMID, rb));
    const Finding *g = find(&f, CHECK_GMID, rc);
    assert_non_null(g);
    assert_close(g->value, 2.0 / 0.35, 1e-5);
    assert_string_equal(g->rule.file, "circuits-intent/hier.cir");
    assert_int_equal(g->rule.line, 7);
    assert_string_equal(g->message, "gm/ID is 5.71 /V, intended 10 /V +-10 % (9 /V to 11 /V): 43 % below the target, "
                                    "deeper in strong inversion than intended");
    /* level 1 (models.inc ln1: KP 200u, VTO 0.5, lambda 0.1, tox 5n; W/L 4u/1u), VOV 0.2 V at xa */
    const Row *a = &j.rows[ra];
    double vds = a->fig.vds, vov = 0.2, kp = 200e-6, wl = 4.0, lambda = 0.1;
    double id = kp / 2 * wl * vov * vov * (1 + lambda * vds);
    double gm = kp * wl * vov * (1 + lambda * vds);
    double gds = kp / 2 * wl * vov * vov * lambda;
    double cox = 3.9 * 8.8541878128e-12 / 5e-9, cgs = 2.0 / 3.0 * cox * 4e-6 * 1e-6;
    static const CheckId kinds[] = {CHECK_FT, CHECK_IC, CHECK_ID, CHECK_VOV, CHECK_GAIN};
    double want[] = {gm / (2 * M_PI * cgs), ic_of(gm / id, 1.3, 27.0), id, vov, gm / gds};
    for (size_t k = 0; k < 5; k++) {
        const Finding *fd = find(&f, kinds[k], ra);
        if (!fd) {
            print_error("no %s finding for xa.m1\n", rule_check_name[kinds[k]]);
            fail();
        }
        assert_close(fd->value, want[k], 2e-5); /* ngspice prints 6 digits */
        assert_string_equal(fd->rule.file, "h.rules");
    }
    /* xb.m1: the card's inline "margin >= 100mV" overrides the rule file's 1 V (inline intents
       come last), and holds: VDS - VDSAT = 1.02 V - 0.2 V */
    assert_null(find(&f, CHECK_MARGIN, rb));
    /* xb.m2, the PMOS diode load: VDS = VGS and VDSAT = VGS - |VTO| for level 1, so its margin is
       |VTO| = 0.55 V exactly, below the rule file's 0.6 V */
    size_t rb2 = SIZE_MAX;
    for (size_t i = 0; i < j.n; i++)
        if (!strcmp(j.rows[i].dev->name, "xb.m2"))
            rb2 = i;
    const Finding *m = find(&f, CHECK_MARGIN, rb2);
    assert_non_null(m);
    assert_close(m->value, 0.55, 1e-5);
    assert_int_equal(m->rule.line, 3);
    /* the PMOS loads' inline "strong" holds */
    assert_null(find(&f, CHECK_REGION, rb2));
    assert_int_equal(f.count[SEV_ERROR], 1); /* xb.m2's margin */
    chk_free(&f);
    join_free(&j);
    op_free(op);
    rule_free(rs);
    intent_free(&in);
    nl_free(&ds);
    diag_free(&d);
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", work);
    assert_int_equal(system(cmd), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_clean),
        cmocka_unit_test(test_outside_table),
        cmocka_unit_test(test_cases),
        cmocka_unit_test(test_order_counts_locations),
        cmocka_unit_test(test_origin_from_user_rules),
        cmocka_unit_test(test_bad_card),
        cmocka_unit_test(test_many),
        cmocka_unit_test(test_each_requirement),
        cmocka_unit_test(test_cannot_check),
        cmocka_unit_test(test_precedence),
        cmocka_unit_test(test_regions_intended),
        cmocka_unit_test(test_waivers),
        cmocka_unit_test(test_groups),
        cmocka_unit_test(test_selector_warnings),
        cmocka_unit_test(test_regex_limit_check),
        cmocka_unit_test(test_many_statements),
        cmocka_unit_test(test_many_named),
        cmocka_unit_test(test_hier_ngspice),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
