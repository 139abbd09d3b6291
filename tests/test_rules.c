/* test_rules: the rule language: the compiled-in defaults, numbers with suffixes and units, region
 * boundaries per type and model with per-setting precedence, check settings, origins, the
 * statements of intent (sized, matched, waive) with every requirement and selector kind, the
 * PCRE2 match limit, inline statements, and every error with its line and column. */
#include "testutil.h"

#include <time.h>

#include "defaults_rules.h"
#include "rules.h"

static Device dev(MosType t, const char *model)
{
    Device d;
    memset(&d, 0, sizeof d);
    d.name = "m1";
    d.model = model;
    d.type = t;
    d.w = d.l = 1e-6;
    d.m = d.nf = 1;
    return d;
}

/* Line of the compiled-in defaults that starts with `start` (the file may be edited; the test
   follows it). */
static unsigned defaults_line(const char *start)
{
    unsigned line = 1;
    size_t n = strlen(start);
    for (const char *p = rule_defaults_text; *p; p++) {
        if ((p == rule_defaults_text || p[-1] == '\n') && strncmp(p, start, n) == 0)
            return line;
        if (*p == '\n')
            line++;
    }
    return 0;
}

static RuleSet *fresh(DiagList *d)
{
    diag_init(d);
    RuleSet *rs = rule_new_defaults(d);
    assert_non_null(rs);
    assert_int_equal(d->nerrors, 0);
    return rs;
}

static void test_defaults(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    /* the values the brief gives for the defaults; the limits themselves are common practice, no source */
    const CheckRule *c = rule_check(rs, CHECK_MARGIN);
    assert_close(c->limit, 0.05, 1e-15);
    assert_int_equal(c->sev, SEV_ERROR);
    assert_true(c->enabled);
    assert_string_equal(c->from.file, "<defaults>");
    assert_int_equal(c->from.line, defaults_line("check sat-margin"));
    assert_true(c->from.line > 0);
    c = rule_check(rs, CHECK_TRIODE);
    assert_int_equal(c->sev, SEV_ERROR);
    assert_true(c->enabled);
    c = rule_check(rs, CHECK_OFF);
    assert_int_equal(c->sev, SEV_WARNING);
    assert_true(c->enabled);
    c = rule_check(rs, CHECK_GAIN);
    assert_close(c->limit, 10.0, 1e-15);
    assert_int_equal(c->sev, SEV_WARNING);
    assert_true(c->enabled);
    assert_int_equal(c->from.line, defaults_line("check gain"));
    c = rule_check(rs, CHECK_NODATA);
    assert_int_equal(c->sev, SEV_WARNING);
    assert_true(c->enabled);
    /* bands for every kind of device: 12 /V, 20 /V, 1e-10 A per square (common practice, no source) */
    const MosType types[] = {MOS_NMOS, MOS_PMOS, MOS_UNKNOWN};
    for (int i = 0; i < 3; i++) {
        Device dv = dev(types[i], i == 2 ? NULL : "nch");
        RuleOrigin o;
        const Bands *b = rule_bands(rs, &dv, &o);
        assert_non_null(b);
        assert_close(b->strong_below, 12.0, 1e-15);
        assert_close(b->weak_above, 20.0, 1e-15);
        assert_close(b->off_below, 1e-10, 1e-15);
        assert_string_equal(o.file, "<defaults>");
        assert_int_equal(o.line, defaults_line("regions all"));
    }
    /* names used in reports, ORDER CHECK */
    assert_string_equal(rule_check_name[CHECK_MARGIN], "sat-margin");
    assert_string_equal(rule_check_name[CHECK_NODATA], "no-data");
    rule_free(rs);
    diag_free(&d);
}

/* ---- numbers ---- */

typedef struct {
    const char *text;  /* a value for `check sat-margin min`, `check gain min` or `regions ... X` */
    const char *slot;  /* "margin", "gain", "strong", "off" */
    double want;
} NumRow;

static const NumRow num_rows[] = {
    {"50mV", "margin", 50e-3},   {"50 mV", "margin", 50e-3}, {"0.05", "margin", 0.05},
    {"5e-2V", "margin", 0.05},   {"50m", "margin", 0.05},    {".1", "margin", 0.1},
    {"100uV", "margin", 1e-4},   {"100\xc2\xb5V", "margin", 1e-4}, {"100\xce\xbcV", "margin", 1e-4},
    {"0V", "margin", 0.0},       {"+20mv", "margin", 0.02},  {"1E-1V", "margin", 0.1},
    {"10", "gain", 10.0},        {"20V/V", "gain", 20.0},    {"20 V/V", "gain", 20.0},
    {"1k", "gain", 1000.0},      {"1meg", "gain", 1e6},      {"1MEG", "gain", 1e6},
    {"12/V", "strong", 12.0},    {"12 /V", "strong", 12.0},  {"12 1/V", "strong", 12.0},
    {"12S/A", "strong", 12.0},   {"12", "strong", 12.0},     {"12e0/v", "strong", 12.0},
    {"100pA", "off", 1e-10},     {"100p", "off", 1e-10},     {"1e-10", "off", 1e-10},
    {"1e-10A", "off", 1e-10},    {"100pA/sq", "off", 1e-10}, {"0.1nA", "off", 1e-10},
    {"100 pA", "off", 1e-10},    {"1A", "off", 1.0},         {"1fA", "off", 1e-15},
    {"1F", "off", 1e-15}, /* F alone is femto, as in SPICE; farad is no unit of this slot */
};

static void test_numbers(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof num_rows / sizeof num_rows[0]; i++) {
        const NumRow *t = &num_rows[i];
        DiagList d;
        RuleSet *rs = fresh(&d);
        char text[128];
        if (!strcmp(t->slot, "margin"))
            snprintf(text, sizeof text, "check sat-margin min %s\n", t->text);
        else if (!strcmp(t->slot, "gain"))
            snprintf(text, sizeof text, "check gain min %s\n", t->text);
        else if (!strcmp(t->slot, "strong"))
            snprintf(text, sizeof text, "regions all strong-below %s\n", t->text);
        else
            snprintf(text, sizeof text, "regions all off-below %s\n", t->text);
        print_message("  %s", text);
        assert_int_equal(rule_load_text(rs, "t.rules", text, strlen(text), &d), ERR_OK);
        assert_int_equal(d.nerrors, 0);
        Device dv = dev(MOS_NMOS, "nch");
        double got;
        if (!strcmp(t->slot, "margin"))
            got = rule_check(rs, CHECK_MARGIN)->limit;
        else if (!strcmp(t->slot, "gain"))
            got = rule_check(rs, CHECK_GAIN)->limit;
        else if (!strcmp(t->slot, "strong"))
            got = rule_bands(rs, &dv, NULL)->strong_below;
        else
            got = rule_bands(rs, &dv, NULL)->off_below;
        assert_close(got, t->want, 1e-12);
        rule_free(rs);
        diag_free(&d);
    }
}

/* ---- errors: code, line, column, message ---- */

typedef struct {
    const char *text;
    unsigned line, col;
    const char *msg;  /* a part of the message */
} ErrRow;

static const ErrRow err_rows[] = {
    {"bogus nmos\n", 1, 1, "unknown keyword 'bogus'"},
    {"\n  # comment\n   limits nmos\n", 3, 4, "unknown keyword 'limits'"},
    {"regions nmso strong-below 12/V\n", 1, 9, "unknown word 'nmso' in a regions statement"},
    {"regions nmos strong-below 12x/V\n", 1, 29, "'x/V' is neither an SI suffix"},
    {"regions nmos strong-below abc\n", 1, 27, "bad number 'abc' for strong-below"},
    {"regions nmos strong-below\n", 1, 14, "strong-below needs a value"},
    {"regions nmos\n", 1, 1, "sets nothing"},
    {"regions nmos pmos weak-above 30/V\n", 1, 14, "'pmos' is a second one"},
    {"regions model\n", 1, 9, "'model' needs a model name"},
    {"regions model a model b weak-above 30/V\n", 1, 17, "one model"},
    {"regions nmos strong-below 12/V strong-below 13/V\n", 1, 32, "strong-below is given twice"},
    {"regions nmos strong-below 25/V weak-above 20/V\n", 1, 27, "strong-below (25/V) is above weak-above (20/V)"},
    {"regions all off-below -1pA\n", 1, 23, "off-below must be zero or positive"},
    {"regions all weak-above 0/V\n", 1, 24, "weak-above must be positive"},
    {"regions all off-below 100pV\n", 1, 27, "'V' is neither an SI suffix (f p n u m k meg g t) nor the unit A"},
    {"check sat-margin min 50mA\n", 1, 25, "'A' is neither an SI suffix"},
    {"check sat-margin min 50Hz\n", 1, 24, "'Hz' is neither an SI suffix"},
    {"check sat-margin min 5M\n", 1, 23, "'M' in '5M' is ambiguous"},
    {"check sat-margin min 5MV\n", 1, 23, "ambiguous"},
    {"check sat-margin min 1e999\n", 1, 22, "out of range"},
    {"check sat-margin min -10mV\n", 1, 22, "must be zero or positive"},
    {"check sat-margin min\n", 1, 18, "min needs a value"},
    {"check sat-margin min 50mV min 60mV\n", 1, 27, "min is given twice"},
    {"check triode min 1\n", 1, 14, "check triode has no limit"},
    {"check gain min 10 warnig\n", 1, 19, "unknown word 'warnig' in a check statement"},
    {"check gain error ignore\n", 1, 18, "already says how to report"},
    {"check gain\n", 1, 7, "sets nothing"},
    {"check gain min 10x\n", 1, 18, "'x' is not an SI suffix"},
    {"check foo error\n", 1, 7, "unknown check 'foo'"},
    {"check\n", 1, 1, "'check' needs the name of a check"},
    {"check gain\x01 error\n", 1, 11, "control character 0x01"},
    {"check gain error\nbad\r\n", 2, 1, "unknown keyword 'bad'"},
    {"\xef\xbb\xbfoops\n", 1, 1, "unknown keyword 'oops'"},
    {"check gain error\nlast", 2, 1, "unknown keyword 'last'"},
    /* a conflict between statements: 10 /V is below the defaults' strong-below of 12 /V */
    {"regions pmos weak-above 10/V\n", 1, 25, "pmos devices would have strong-below 12/V above weak-above 10/V"},
};

static void test_errors(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof err_rows / sizeof err_rows[0]; i++) {
        const ErrRow *t = &err_rows[i];
        DiagList d;
        RuleSet *rs = fresh(&d);
        print_message("  %s", t->text);
        assert_int_equal(rule_load_text(rs, "t.rules", t->text, strlen(t->text), &d), ERR_INPUT);
        assert_int_equal(d.nerrors, 1);
        assert_int_equal(d.items[0].sev, DIAG_ERROR);
        assert_string_equal(d.items[0].loc.file, "t.rules");
        if (d.items[0].loc.line != t->line || d.items[0].loc.col != t->col || !strstr(d.items[0].msg, t->msg)) {
            print_error("got %u:%u: %s\n", d.items[0].loc.line, d.items[0].loc.col, d.items[0].msg);
            fail();
        }
        rule_free(rs);
        diag_free(&d);
    }
}

static void test_error_text(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char text[] = "check sat-margin  min 50mA  error\n";
    assert_int_equal(rule_load_text(rs, "mine.rules", text, sizeof text - 1, &d), ERR_INPUT);
    assert_int_equal(d.n, 1);
    assert_string_equal(d.items[0].msg,
                        "bad number '50mA' for sat-margin: 'A' is neither an SI suffix (f p n u m k meg g t) nor the unit V");
    assert_int_equal(d.items[0].loc.col, 26);
    assert_string_equal(d.items[0].excerpt, "check sat-margin  min 50mA  error");
    assert_int_equal(d.items[0].span, 1);
    rule_free(rs);
    diag_free(&d);
}

/* Every bad line is reported, not only the first; and a file with an error changes nothing. */
static void test_recovery_and_atomicity(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char text[] = "check gain min 40 error\n"
                        "check gian error\n"
                        "regions nmos strong-below 8/V\n"
                        "regions nmos weak-above lots\n"
                        "check off ignore\n"
                        "bogus\n";
    assert_int_equal(rule_load_text(rs, "bad.rules", text, sizeof text - 1, &d), ERR_INPUT);
    assert_int_equal(d.nerrors, 3);
    assert_int_equal(d.items[0].loc.line, 2);
    assert_int_equal(d.items[1].loc.line, 4);
    assert_int_equal(d.items[2].loc.line, 6);
    assert_close(rule_check(rs, CHECK_GAIN)->limit, 10.0, 1e-15);
    assert_int_equal(rule_check(rs, CHECK_GAIN)->sev, SEV_WARNING);
    assert_true(rule_check(rs, CHECK_OFF)->enabled);
    Device dv = dev(MOS_NMOS, "nch");
    assert_close(rule_bands(rs, &dv, NULL)->strong_below, 12.0, 1e-15);
    /* a conflict found only when resolving leaves the set as it was too */
    diag_free(&d);
    diag_init(&d);
    const char conflict[] = "check gain min 40\nregions model nch weak-above 9/V\n";
    assert_int_equal(rule_load_text(rs, "c.rules", conflict, sizeof conflict - 1, &d), ERR_INPUT);
    assert_close(rule_check(rs, CHECK_GAIN)->limit, 10.0, 1e-15);
    assert_close(rule_bands(rs, &dv, NULL)->weak_above, 20.0, 1e-15);
    /* and the set still works afterwards */
    diag_free(&d);
    diag_init(&d);
    const char good[] = "regions model nch weak-above 30/V\n";
    assert_int_equal(rule_load_text(rs, "g.rules", good, sizeof good - 1, &d), ERR_OK);
    assert_close(rule_bands(rs, &dv, NULL)->weak_above, 30.0, 1e-15);
    rule_free(rs);
    diag_free(&d);
}

/* ---- precedence: per type, per model, per setting, across files ---- */

static void test_bands_precedence(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char a[] = "# technology A\n"
                     "regions pmos  strong-below 10/V  weak-above 18/V\n"
                     "regions pmos  model PCH_LVT  weak-above 24/V  off-below 1nA\n"
                     "regions model nch_hv  strong-below 8/V\n"
                     "regions nmos  weak-above 22/V\n";
    assert_int_equal(rule_load_text(rs, "a.rules", a, sizeof a - 1, &d), ERR_OK);
    Device n = dev(MOS_NMOS, "nch"), p = dev(MOS_PMOS, "pch"), lvt = dev(MOS_PMOS, "pch_lvt"),
           hv = dev(MOS_NMOS, "nch_hv"), hvp = dev(MOS_PMOS, "nch_hv"), u = dev(MOS_UNKNOWN, NULL),
           lvt_as_n = dev(MOS_NMOS, "pch_lvt");
    const BandRule *b;
    b = rule_band_rule(rs, &n);
    assert_close(b->bands.strong_below, 12.0, 0);
    assert_close(b->bands.weak_above, 22.0, 0);
    assert_int_equal(b->field_from[BAND_WEAK_ABOVE].line, 5);
    assert_string_equal(b->field_from[BAND_STRONG_BELOW].file, "<defaults>");
    assert_int_equal(b->from.line, 5);
    b = rule_band_rule(rs, &p);
    assert_close(b->bands.strong_below, 10.0, 0);
    assert_close(b->bands.weak_above, 18.0, 0);
    assert_close(b->bands.off_below, 1e-10, 1e-15);
    assert_string_equal(b->from.file, "a.rules");
    assert_int_equal(b->from.line, 2);
    /* model names are not case-sensitive; unset settings come from the pmos line */
    b = rule_band_rule(rs, &lvt);
    assert_close(b->bands.strong_below, 10.0, 0);
    assert_close(b->bands.weak_above, 24.0, 0);
    assert_close(b->bands.off_below, 1e-9, 1e-15);
    assert_int_equal(b->field_from[BAND_STRONG_BELOW].line, 2);
    assert_int_equal(b->field_from[BAND_WEAK_ABOVE].line, 3);
    assert_int_equal(b->from.line, 3);
    /* a model line without a type applies to both types; the later nmos line still sets weak-above */
    b = rule_band_rule(rs, &hv);
    assert_close(b->bands.strong_below, 8.0, 0);
    assert_close(b->bands.weak_above, 22.0, 0);
    b = rule_band_rule(rs, &hvp);
    assert_close(b->bands.strong_below, 8.0, 0);
    assert_close(b->bands.weak_above, 18.0, 0);
    /* a pmos-only model line does not touch an nmos of that name */
    b = rule_band_rule(rs, &lvt_as_n);
    assert_close(b->bands.weak_above, 22.0, 0);
    assert_close(b->bands.off_below, 1e-10, 1e-15);
    /* a device of unknown type gets only what is said for all types */
    b = rule_band_rule(rs, &u);
    assert_close(b->bands.strong_below, 12.0, 0);
    assert_close(b->bands.weak_above, 20.0, 0);
    /* a later file overrides one setting; the rest stays (per setting, not per statement) */
    const char b2[] = "regions pmos strong-below 11/V\n";
    assert_int_equal(rule_load_text(rs, "b.rules", b2, sizeof b2 - 1, &d), ERR_OK);
    b = rule_band_rule(rs, &lvt);
    assert_close(b->bands.strong_below, 11.0, 0);
    assert_close(b->bands.weak_above, 24.0, 0);
    assert_string_equal(b->field_from[BAND_STRONG_BELOW].file, "b.rules");
    assert_string_equal(b->field_from[BAND_WEAK_ABOVE].file, "a.rules");
    assert_string_equal(b->from.file, "b.rules");
    /* rule_bands gives the same numbers */
    RuleOrigin o;
    const Bands *bb = rule_bands(rs, &lvt, &o);
    assert_close(bb->weak_above, 24.0, 0);
    assert_string_equal(o.file, "b.rules");
    /* a later general line overrides an earlier model line for the settings it gives */
    const char c[] = "regions all weak-above 26/V\n";
    assert_int_equal(rule_load_text(rs, "c.rules", c, sizeof c - 1, &d), ERR_OK);
    assert_close(rule_band_rule(rs, &lvt)->bands.weak_above, 26.0, 0);
    assert_close(rule_band_rule(rs, &lvt)->bands.off_below, 1e-9, 1e-15);
    assert_int_equal(d.nerrors, 0);
    rule_free(rs);
    diag_free(&d);
}

static void test_checks(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char a[] = "check sat-margin min 100mV\n"
                     "check gain ignore\n"
                     "check off info   # off devices are expected here\n"
                     "CHECK TRIODE WARNING\n"
                     "check no-data error\n";
    assert_int_equal(rule_load_text(rs, "a.rules", a, sizeof a - 1, &d), ERR_OK);
    const CheckRule *c = rule_check(rs, CHECK_MARGIN);
    assert_close(c->limit, 0.1, 1e-15);
    assert_int_equal(c->sev, SEV_ERROR); /* a limit alone keeps the severity */
    assert_true(c->enabled);
    assert_string_equal(c->from.file, "a.rules");
    assert_int_equal(c->from.line, 1);
    c = rule_check(rs, CHECK_GAIN);
    assert_false(c->enabled);
    assert_close(c->limit, 10.0, 0);
    assert_int_equal(c->from.line, 2);
    assert_int_equal(rule_check(rs, CHECK_OFF)->sev, SEV_INFO);
    assert_int_equal(rule_check(rs, CHECK_TRIODE)->sev, SEV_WARNING);
    assert_int_equal(rule_check(rs, CHECK_NODATA)->sev, SEV_ERROR);
    /* naming a severity switches the check on again; later lines win */
    const char b[] = "check gain min 30 error\ncheck gain min 20\n";
    assert_int_equal(rule_load_text(rs, "b.rules", b, sizeof b - 1, &d), ERR_OK);
    c = rule_check(rs, CHECK_GAIN);
    assert_true(c->enabled);
    assert_close(c->limit, 20.0, 0);
    assert_int_equal(c->sev, SEV_ERROR);
    assert_int_equal(c->from.line, 2);
    /* command-line overrides */
    rule_set_limit(rs, CHECK_GAIN, 5.0);
    assert_close(rule_check(rs, CHECK_GAIN)->limit, 5.0, 0);
    assert_string_equal(rule_check(rs, CHECK_GAIN)->from.file, "<command line>");
    rule_set_severity(rs, CHECK_OFF, SEV_ERROR);
    assert_int_equal(rule_check(rs, CHECK_OFF)->sev, SEV_ERROR);
    assert_string_equal(rule_check(rs, CHECK_OFF)->from.file, "<command line>");
    assert_int_equal(d.nerrors, 0);
    rule_free(rs);
    diag_free(&d);
}

static void test_files(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    /* fixtures/rules/tech.rules: comments, blank lines, CRLF line endings, no final newline */
    assert_int_equal(rule_load_file(rs, "fixtures/rules/tech.rules", &d), ERR_OK);
    assert_int_equal(d.nerrors, 0);
    const CheckRule *c = rule_check(rs, CHECK_MARGIN);
    assert_close(c->limit, 0.08, 1e-15);
    assert_string_equal(c->from.file, "fixtures/rules/tech.rules");
    assert_int_equal(c->from.line, 9);
    assert_false(rule_check(rs, CHECK_OFF)->enabled);
    Device p = dev(MOS_PMOS, "pch");
    const BandRule *b = rule_band_rule(rs, &p);
    assert_close(b->bands.weak_above, 18.0, 0);
    assert_int_equal(b->field_from[BAND_WEAK_ABOVE].line, 6);
    /* an error in a file: file:line:column */
    assert_int_equal(rule_load_file(rs, "fixtures/rules/bad.rules", &d), ERR_INPUT);
    assert_int_equal(d.nerrors, 2);
    assert_string_equal(d.items[0].loc.file, "fixtures/rules/bad.rules");
    assert_int_equal(d.items[0].loc.line, 4);
    assert_int_equal(d.items[0].loc.col, 25);
    assert_int_equal(d.items[1].loc.line, 5);
    assert_int_equal(d.items[1].loc.col, 12);
    /* no such file */
    diag_free(&d);
    diag_init(&d);
    assert_int_equal(rule_load_file(rs, "fixtures/rules/no-such.rules", &d), ERR_IO);
    assert_int_equal(d.nerrors, 1);
    /* an empty file is fine */
    assert_int_equal(rule_load_text(rs, "empty", "", 0, &d), ERR_OK);
    rule_free(rs);
    diag_free(&d);
}

static void test_nul_byte(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char text[] = "check gain min 10\0 error\n";
    assert_int_equal(rule_load_text(rs, "nul", text, sizeof text - 1, &d), ERR_INPUT);
    assert_int_equal(d.items[0].loc.col, 18);
    assert_non_null(strstr(d.items[0].msg, "0x00"));
    rule_free(rs);
    diag_free(&d);
}

static void test_long_line(void **state)
{
    (void)state;
    /* a 1 MB comment line and a statement after it: no fixed line buffer */
    size_t n = 1u << 20;
    char *text = malloc(n + 64);
    assert_non_null(text);
    text[0] = '#';
    memset(text + 1, 'x', n - 1);
    strcpy(text + n, "\ncheck gain min 33\n");
    DiagList d;
    RuleSet *rs = fresh(&d);
    assert_int_equal(rule_load_text(rs, "long", text, strlen(text), &d), ERR_OK);
    assert_close(rule_check(rs, CHECK_GAIN)->limit, 33.0, 0);
    assert_int_equal(rule_check(rs, CHECK_GAIN)->from.line, 2);
    rule_free(rs);
    diag_free(&d);
    free(text);
}

static void test_severity_lookup(void **state)
{
    (void)state;
    assert_int_equal(rule_severity_lookup("error", 5), SEV_ERROR);
    assert_int_equal(rule_severity_lookup("Warning", 7), SEV_WARNING);
    assert_int_equal(rule_severity_lookup("info", 4), SEV_INFO);
    assert_int_equal(rule_severity_lookup("inf", 3), -1);
    assert_int_equal(rule_severity_lookup("ignore", 6), -1);
    assert_int_equal(rule_severity_lookup("", 0), -1);
    rule_free(NULL);
}

/* ---- the statements of intent (issue 3) ---- */

static void test_defaults_intent(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    /* every check has a default setting from rules/defaults.rules (common practice, no source) */
    static const struct {
        CheckId id;
        Severity sev;
        double limit; /* NaN: none */
        const char *line;
    } want[] = {
        {CHECK_GMID, SEV_WARNING, NAN, "check gm/id"},         {CHECK_REGION, SEV_ERROR, NAN, "check region"},
        {CHECK_FT, SEV_WARNING, NAN, "check ft"},              {CHECK_IC, SEV_WARNING, NAN, "check ic"},
        {CHECK_ID, SEV_WARNING, NAN, "check id "},             {CHECK_VOV, SEV_WARNING, NAN, "check vov"},
        {CHECK_MATCH_VGS, SEV_WARNING, 5e-3, "check match-vgs"}, {CHECK_MATCH_GMID, SEV_WARNING, 0.05, "check match-gmid"},
        {CHECK_MATCH_RATIO, SEV_ERROR, 0.05, "check match-ratio"}, {CHECK_MATCH_VDS, SEV_WARNING, 0.1, "check match-vds"},
        {CHECK_WAIVER, SEV_WARNING, NAN, "check waiver"},
    };
    for (size_t k = 0; k < sizeof want / sizeof want[0]; k++) {
        const CheckRule *c = rule_check(rs, want[k].id);
        assert_true(c->enabled);
        assert_int_equal(c->sev, want[k].sev);
        if (isnan(want[k].limit))
            assert_true(isnan(c->limit));
        else
            assert_close(c->limit, want[k].limit, 1e-12);
        assert_int_equal(c->from.line, defaults_line(want[k].line));
        assert_true(c->from.line > 0);
    }
    assert_int_equal(rule_check_lookup("GM/ID", 5), CHECK_GMID);
    assert_int_equal(rule_check_lookup("match-ratio", 11), CHECK_MATCH_RATIO);
    assert_int_equal(rule_check_lookup("gmid", 4), -1);
    /* slope factor 1.3 for every device (common practice for bulk CMOS, no source) */
    Device dv = dev(MOS_PMOS, "pch");
    const BandRule *b = rule_band_rule(rs, &dv);
    assert_close(b->slope, 1.3, 1e-15);
    assert_int_equal(b->field_from[BAND_SLOPE].line, defaults_line("regions all"));
    const RuleStatements *st = rule_statements(rs);
    assert_int_equal(st->nsized + st->ngroups + st->nwaivers, 0);
    /* a per-model slope factor, later files on top */
    const char t[] = "regions pmos model pch slope-factor 1.45\n";
    assert_int_equal(rule_load_text(rs, "n.rules", t, sizeof t - 1, &d), ERR_OK);
    assert_close(rule_band_rule(rs, &dv)->slope, 1.45, 1e-15);
    Device dn = dev(MOS_NMOS, "pch");
    assert_close(rule_band_rule(rs, &dn)->slope, 1.3, 1e-15);
    rule_free(rs);
    diag_free(&d);
}

static void test_glob(void **state)
{
    (void)state;
    static const struct {
        const char *pat, *s;
        int want;
    } rows[] = {
        {"xamp.m1", "xamp.m1", 1}, {"XAMP.M1", "xamp.m1", 1}, {"xamp.m1", "xamp.m10", 0},
        {"*", "", 1},              {"*", "x.y.z", 1},          {"x*.m?", "xamp.m1", 1},
        {"x*.m?", "xamp.m12", 0},  {"*.m1", "xa.xb.m1", 1},   {"*.m[12]", "x.m2", 1},
        {"*.m[12]", "x.m3", 0},    {"*.m[!12]", "x.m3", 1},   {"*.m[!12]", "x.m1", 0},
        {"m[a-c]?", "mb7", 1},     {"m[a-c]?", "md7", 0},     {"a*b*c", "axxbyyc", 1},
        {"a*b*c", "axxbyy", 0},    {"*mi*", "xpga.mi1", 1},   {"m[", "m[", 1},
        {"?", "", 0},              {"**", "abc", 1},
    };
    for (size_t k = 0; k < sizeof rows / sizeof rows[0]; k++)
        if (rule_glob(rows[k].pat, rows[k].s) != rows[k].want) {
            print_error("glob '%s' on '%s' should be %d\n", rows[k].pat, rows[k].s, rows[k].want);
            fail();
        }
}

/* One requirement as written, and what it must read as. */
typedef struct {
    const char *text;
    CheckId check;
    ReqForm form;
    double lo, hi;      /* NaN: open */
    double target, tol; /* REQ_TARGET */
    int pct;
    int sev;            /* -1: the check's */
    unsigned regions;
} ReqRow;

#define R(x) (1u << REGION_##x)
static const ReqRow req_rows[] = {
    {"gm/ID 15/V +-10%", CHECK_GMID, REQ_TARGET, 13.5, 16.5, 15, 10, 1, -1, 0},
    {"gm/ID 15 +- 10 %", CHECK_GMID, REQ_TARGET, 13.5, 16.5, 15, 10, 1, -1, 0},
    {"gm/id 15+-1.5/V", CHECK_GMID, REQ_TARGET, 13.5, 16.5, 15, 1.5, 0, -1, 0},
    {"gm/ID 15 \xc2\xb1" "10%", CHECK_GMID, REQ_TARGET, 13.5, 16.5, 15, 10, 1, -1, 0},
    {"gm/ID 15 +/- 10%", CHECK_GMID, REQ_TARGET, 13.5, 16.5, 15, 10, 1, -1, 0},
    {"gm/ID 12..18", CHECK_GMID, REQ_RANGE, 12, 18, NAN, NAN, 0, -1, 0},
    {"gm/ID 12/V .. 18/V", CHECK_GMID, REQ_RANGE, 12, 18, NAN, NAN, 0, -1, 0},
    {"gm/ID 12 to 18 /V", CHECK_GMID, REQ_RANGE, 12, 18, NAN, NAN, 0, -1, 0},
    {"gm/ID >= 12", CHECK_GMID, REQ_MIN, 12, NAN, NAN, NAN, 0, -1, 0},
    {"gmid min 12/V", CHECK_GMID, REQ_MIN, 12, NAN, NAN, NAN, 0, -1, 0},
    {"gm/ID <= 25 S/A", CHECK_GMID, REQ_MAX, NAN, 25, NAN, NAN, 0, -1, 0},
    {"gm/ID 20 +-15% error", CHECK_GMID, REQ_TARGET, 17, 23, 20, 15, 1, SEV_ERROR, 0},
    {"moderate", CHECK_REGION, REQ_REGIONS, NAN, NAN, NAN, NAN, 0, -1, R(MODERATE)},
    {"moderate or weak", CHECK_REGION, REQ_REGIONS, NAN, NAN, NAN, NAN, 0, -1, R(MODERATE) | R(WEAK)},
    {"weak/moderate info", CHECK_REGION, REQ_REGIONS, NAN, NAN, NAN, NAN, 0, SEV_INFO, R(MODERATE) | R(WEAK)},
    {"region STRONG", CHECK_REGION, REQ_REGIONS, NAN, NAN, NAN, NAN, 0, -1, R(STRONG)},
    {"saturated", CHECK_REGION, REQ_REGIONS, NAN, NAN, NAN, NAN, 0, -1, R(WEAK) | R(MODERATE) | R(STRONG)},
    {"triode or off warning", CHECK_REGION, REQ_REGIONS, NAN, NAN, NAN, NAN, 0, SEV_WARNING, R(TRIODE) | R(OFF)},
    {"margin >= 80 mV", CHECK_MARGIN, REQ_MIN, 0.08, NAN, NAN, NAN, 0, -1, 0},
    {"margin \xe2\x89\xa5 80mV", CHECK_MARGIN, REQ_MIN, 0.08, NAN, NAN, NAN, 0, -1, 0},
    {"sat-margin>=0.08", CHECK_MARGIN, REQ_MIN, 0.08, NAN, NAN, NAN, 0, -1, 0},
    {"vds-vdsat min 80m warning", CHECK_MARGIN, REQ_MIN, 0.08, NAN, NAN, NAN, 0, SEV_WARNING, 0},
    {"gain >= 40", CHECK_GAIN, REQ_MIN, 40, NAN, NAN, NAN, 0, -1, 0},
    {"gm/gds > 40 V/V", CHECK_GAIN, REQ_MIN, 40, NAN, NAN, NAN, 0, -1, 0},
    {"fT >= 500MHz", CHECK_FT, REQ_MIN, 500e6, NAN, NAN, NAN, 0, -1, 0},
    {"ft >= 1.2GHz", CHECK_FT, REQ_MIN, 1.2e9, NAN, NAN, NAN, 0, -1, 0},
    {"fT >= 2 GHz", CHECK_FT, REQ_MIN, 2e9, NAN, NAN, NAN, 0, -1, 0},
    {"fT >= 300megHz", CHECK_FT, REQ_MIN, 300e6, NAN, NAN, NAN, 0, -1, 0},
    {"IC 0.1..10", CHECK_IC, REQ_RANGE, 0.1, 10, NAN, NAN, 0, -1, 0},
    {"ic >= 10", CHECK_IC, REQ_MIN, 10, NAN, NAN, NAN, 0, -1, 0},
    {"ID 6.6uA +-10%", CHECK_ID, REQ_TARGET, 5.94e-6, 7.26e-6, 6.6e-6, 10, 1, -1, 0},
    {"id 5u..8uA", CHECK_ID, REQ_RANGE, 5e-6, 8e-6, NAN, NAN, 0, -1, 0},
    {"ID >= 1 uA", CHECK_ID, REQ_MIN, 1e-6, NAN, NAN, NAN, 0, -1, 0},
    {"VOV 100mV..200mV", CHECK_VOV, REQ_RANGE, 0.1, 0.2, NAN, NAN, 0, -1, 0},
    {"vov <= 0.2", CHECK_VOV, REQ_MAX, NAN, 0.2, NAN, NAN, 0, -1, 0},
    {"VOV -50mV..50mV", CHECK_VOV, REQ_RANGE, -0.05, 0.05, NAN, NAN, 0, -1, 0},
    {"no margin", CHECK_MARGIN, REQ_DROP, NAN, NAN, NAN, NAN, 0, -1, 0},
    {"no region", CHECK_REGION, REQ_DROP, NAN, NAN, NAN, NAN, 0, -1, 0},
};
#undef R

static void close_or_nan(double got, double want)
{
    if (isnan(want))
        assert_true(isnan(got));
    else
        assert_close(got, want, 1e-12);
}

static void test_requirements(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof req_rows / sizeof req_rows[0]; k++) {
        const ReqRow *t = &req_rows[k];
        DiagList d;
        RuleSet *rs = fresh(&d);
        char text[160];
        snprintf(text, sizeof text, "sized all for: %s\n", t->text);
        print_message("  %s", text);
        int rc = rule_load_text(rs, "r.rules", text, strlen(text), &d);
        if (rc != ERR_OK)
            diag_print(&d, stderr, 0, DIAG_NOTE);
        assert_int_equal(rc, ERR_OK);
        const RuleStatements *st = rule_statements(rs);
        assert_int_equal(st->nsized, 1);
        assert_int_equal(st->sized[0].nreqs, 1);
        const Req *r = &st->sized[0].reqs[0];
        assert_int_equal(r->check, t->check);
        assert_int_equal(r->form, t->form);
        close_or_nan(r->lo, t->lo);
        close_or_nan(r->hi, t->hi);
        if (t->form == REQ_TARGET) {
            assert_close(r->target, t->target, 1e-12);
            assert_close(r->tol, t->tol, 1e-12);
            assert_int_equal(r->tol_pct, t->pct);
        }
        assert_int_equal(r->sev, t->sev);
        assert_int_equal(r->regions, t->regions);
        assert_int_equal(r->col, 16);
        assert_string_equal(r->from.file, "r.rules");
        assert_int_equal(r->from.line, 1);
        rule_free(rs);
        diag_free(&d);
    }
    /* several requirements in one statement, each with its column */
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char t[] = "sized xamp.m1 xamp.m2 for: gm/ID 15/V +-10%, moderate, margin >= 80mV error\n";
    assert_int_equal(rule_load_text(rs, "r.rules", t, sizeof t - 1, &d), ERR_OK);
    const RuleSized *sz = &rule_statements(rs)->sized[0];
    assert_int_equal(sz->nreqs, 3);
    assert_int_equal(sz->reqs[0].col, 28);
    assert_int_equal(sz->reqs[1].col, 46);
    assert_int_equal(sz->reqs[2].col, 56);
    assert_int_equal(sz->reqs[2].sev, SEV_ERROR);
    rule_free(rs);
    diag_free(&d);
}

static Device devx(const char *name, MosType t, const char *model, const char *cell)
{
    Device d = dev(t, model);
    d.name = name;
    d.cell = cell;
    return d;
}

/* Every kind of selector against a table of devices. */
static void test_selectors(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char t[] = "sized xamp.m1 for: gain >= 1\n"                /* 0 literal (case folded) */
                     "sized x*.m? for: gain >= 1\n"                  /* 1 glob */
                     "sized /^x[ab]\\.m[12]$/ for: gain >= 1\n"      /* 2 PCRE2 */
                     "sized model nch* for: gain >= 1\n"             /* 3 model glob */
                     "sized cell amp for: gain >= 1\n"               /* 4 cell */
                     "sized pmos for: gain >= 1\n"                   /* 5 type */
                     "sized cell amp pmos /m[12]$/ for: gain >= 1\n" /* 6 combined: AND across kinds */
                     "sized name model, xb.m9 for: gain >= 1\n"      /* 7 names: OR; `name` escapes a keyword */
                     "sized all for: gain >= 1\n"                    /* 8 everything */
                     "sized /M1$/ for: gain >= 1\n";                 /* 9 regex: case-insensitive */
    assert_int_equal(rule_load_text(rs, "s.rules", t, sizeof t - 1, &d), ERR_OK);
    const RuleStatements *st = rule_statements(rs);
    assert_int_equal(st->nsized, 10);
    Device devs[] = {
        devx("xamp.m1", MOS_NMOS, "nch", "amp"),   devx("xa.m2", MOS_PMOS, "pch", "amp"),
        devx("xb.m1", MOS_PMOS, "nch_lvt", NULL), devx("xb.m9", MOS_NMOS, "pch", "bias"),
        devx("model", MOS_NMOS, "other", NULL),    devx("top", MOS_UNKNOWN, NULL, NULL),
    };
    static const char want[6][11] = {
        /* stmt: 0 1 2 3 4 5 6 7 8 9 */
        {"1101100011"}, /* xamp.m1 */
        {"0110111010"}, /* xa.m2 */
        {"0111010011"}, /* xb.m1 */
        {"0100000110"}, /* xb.m9 */
        {"0000000110"}, /* model */
        {"0000000010"}, /* top */
    };
    RuleMatcher *m = rule_matcher_new();
    assert_non_null(m);
    for (size_t i = 0; i < 6; i++)
        for (size_t k = 0; k < 10; k++) {
            int which;
            int hit = rule_sel_match(st->sized[k].sel, &devs[i], m, &which, &d);
            if (hit != want[i][k] - '0') {
                print_error("statement %zu on %s: %d\n", k, devs[i].name, hit);
                fail();
            }
            if (hit && k == 7)
                assert_int_equal(which, strcmp(devs[i].name, "model") == 0 ? 0 : 1);
            if (k == 8)
                assert_int_equal(which, -1);
        }
    /* where each is written, for "matches no device" */
    SrcLoc l = rule_sel_loc(st->sized[2].sel);
    assert_string_equal(l.file, "s.rules");
    assert_int_equal(l.line, 3);
    assert_int_equal(l.col, 7);
    const char *text;
    l = rule_sel_pattern_loc(st->sized[7].sel, 1, &text);
    assert_string_equal(text, "xb.m9");
    assert_int_equal(l.col, 19);
    assert_int_equal(rule_sel_npatterns(st->sized[6].sel), 1);
    /* names written out in full form a listed group; patterns do not */
    const char *const *names;
    size_t n;
    assert_true(rule_sel_listed(st->sized[7].sel, &names, &n));
    assert_int_equal(n, 2);
    assert_string_equal(names[1], "xb.m9");
    assert_false(rule_sel_listed(st->sized[1].sel, &names, &n));
    assert_false(rule_sel_listed(st->sized[2].sel, &names, &n));
    assert_false(rule_sel_listed(st->sized[8].sel, &names, &n));
    assert_int_equal(d.nerrors, 0);
    rule_matcher_free(m);
    rule_free(rs);
    diag_free(&d);
}

/* A pathological pattern stops at the match limit with an error at the pattern, not a hang. */
static void test_regex_limit(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char t[] = "# nested quantifiers backtrack exponentially on a near miss\nsized /(a+)+$/ for: gain >= 1\n";
    assert_int_equal(rule_load_text(rs, "p.rules", t, sizeof t - 1, &d), ERR_OK);
    char name[64];
    memset(name, 'a', 40);
    strcpy(name + 40, "!");
    Device dv = devx(name, MOS_NMOS, "nch", NULL);
    RuleMatcher *m = rule_matcher_new();
    time_t t0 = time(NULL);
    assert_int_equal(rule_sel_match(rule_statements(rs)->sized[0].sel, &dv, m, NULL, &d), ERR_LIMIT);
    assert_true(time(NULL) - t0 < 5);
    assert_int_equal(d.nerrors, 1);
    assert_string_equal(d.items[0].loc.file, "p.rules");
    assert_int_equal(d.items[0].loc.line, 2);
    assert_int_equal(d.items[0].loc.col, 7);
    assert_non_null(strstr(d.items[0].msg, "could not be matched"));
    /* an ordinary name still matches */
    Device ok = devx("aaa", MOS_NMOS, "nch", NULL);
    assert_int_equal(rule_sel_match(rule_statements(rs)->sized[0].sel, &ok, m, NULL, &d), 1);
    rule_matcher_free(m);
    rule_free(rs);
    diag_free(&d);
}

static void test_matched_and_waive(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char t[] = "matched xb.mn0 xb.mn1 : ratio 1:2 +-3%, VGS spread <= 4mV error, gm/ID spread <= 6%, VDS spread <= 50mV info\n"
                     "matched cell ota *.mi1 *.mi2\n"
                     "matched x.a x.b x.c: ratio sizes, vds <= 0.2\n"
                     "waive xbuf.msk, xbuf.msf : triode sat-margin, gain until 2027-06-30 because rev B: own bias, see LC-214\n"
                     "waive all : all because everything, for this test\n";
    assert_int_equal(rule_load_text(rs, "g.rules", t, sizeof t - 1, &d), ERR_OK);
    const RuleStatements *st = rule_statements(rs);
    assert_int_equal(st->ngroups, 3);
    const RuleGroup *g = &st->groups[0];
    assert_int_equal(g->nratio, 2);
    assert_close(g->ratio[0], 1, 0);
    assert_close(g->ratio[1], 2, 0);
    assert_close(g->limit[MATCH_RATIO], 0.03, 1e-15);
    assert_close(g->limit[MATCH_VGS], 0.004, 1e-15);
    assert_int_equal(g->sev[MATCH_VGS], SEV_ERROR);
    assert_close(g->limit[MATCH_GMID], 0.06, 1e-15);
    assert_int_equal(g->sev[MATCH_GMID], -1);
    assert_close(g->limit[MATCH_VDS], 0.05, 1e-15);
    assert_int_equal(g->sev[MATCH_VDS], SEV_INFO);
    assert_int_equal(g->from.line, 1);
    g = &st->groups[1];
    assert_null(g->ratio);
    for (int k = 0; k < MATCH_NLIMITS; k++) {
        assert_true(isnan(g->limit[k]));
        assert_int_equal(g->sev[k], -1);
    }
    g = &st->groups[2];
    assert_null(g->ratio);
    assert_close(g->limit[MATCH_VDS], 0.2, 1e-15);
    assert_int_equal(st->nwaivers, 2);
    const RuleWaiver *w = &st->waivers[0];
    assert_int_equal(w->checks, (1u << CHECK_TRIODE) | (1u << CHECK_MARGIN) | (1u << CHECK_GAIN));
    assert_int_equal(w->until, 20270630);
    assert_string_equal(w->reason, "rev B: own bias, see LC-214");
    assert_int_equal(w->from.line, 4);
    w = &st->waivers[1];
    assert_int_equal(w->until, 0);
    assert_false(w->checks & (1u << CHECK_WAIVER)); /* a waiver cannot waive waivers */
    assert_true(w->checks & (1u << CHECK_MATCH_VDS));
    assert_true(w->checks & (1u << CHECK_NODATA));
    assert_string_equal(w->reason, "everything, for this test");
    /* later files append; the order is the load order */
    const char t2[] = "sized all for: gain >= 2\nsized all for: gain >= 3\n";
    assert_int_equal(rule_load_text(rs, "h.rules", t2, sizeof t2 - 1, &d), ERR_OK);
    st = rule_statements(rs);
    assert_int_equal(st->nsized, 2);
    assert_close(st->sized[1].reqs[0].lo, 3, 0);
    assert_string_equal(st->sized[1].from.file, "h.rules");
    /* a file with an error adds none of its statements (and frees its patterns: ASan checks) */
    const char bad[] = "sized /^x/ for: gain >= 4\nmatched /y/\nwaive /z/ : gain because q\nsized all for: gain >= q\n";
    assert_int_equal(rule_load_text(rs, "bad.rules", bad, sizeof bad - 1, &d), ERR_INPUT);
    st = rule_statements(rs);
    assert_int_equal(st->nsized, 2);
    assert_int_equal(st->ngroups, 3);
    assert_int_equal(st->nwaivers, 2);
    rule_free(rs);
    diag_free(&d);
}

static const ErrRow intent_err_rows[] = {
    {"sized xamp.m1 gm/ID 15\n", 1, 23, "a sized statement needs 'for:' between the devices"},
    {"sized for: gm/ID 15\n", 1, 7, "a sized statement must say which devices"},
    {"sized all for: gm/ID 15\n", 1, 22, "'15' alone is not a requirement"},
    {"sized all for: gm/ID 15 +-10%, modrate\n", 1, 32, "unknown requirement 'modrate'"},
    {"sized all for: region modrate\n", 1, 23, "unknown region 'modrate'"},
    {"sized all for: moderate or\n", 1, 25, "needs a region after 'or'"},
    {"sized all for: strong weak\n", 1, 23, "join regions with 'or'"},
    {"sized all for: gm/ID 18..12\n", 1, 26, "runs backwards"},
    {"sized all for: margin >= 80mA\n", 1, 29, "'A' is neither an SI suffix (f p n u m k meg g t) nor the unit V"},
    {"sized all for: fT >= 5M\n", 1, 23, "'M' in '5M' is ambiguous"},
    {"sized all for: gm/ID 15 +-10%, gm/ID 12..18\n", 1, 32, "gm/ID is required twice"},
    {"sized all for: gm/ID 15 +-10%,\n", 1, 30, "empty requirement"},
    {"sized all for: gm/ID 15 +-10%,, moderate\n", 1, 31, "empty requirement"},
    {"sized all for: gm/ID -5..10\n", 1, 22, "gm/ID must be positive"},
    {"sized all for: IC 0 .. 3\n", 1, 19, "IC must be positive"},
    {"sized all for: no\n", 1, 16, "'no' needs the requirement"},
    {"sized all for: no margin now\n", 1, 26, "unexpected 'now' after 'no margin'"},
    {"sized all for: gm/ID 15 +- -3%\n", 1, 28, "tolerance must be zero or positive"},
    {"sized all for: gm/ID 15 +-10% extra\n", 1, 31, "unexpected 'extra' after the gm/ID requirement"},
    {"sized all for:\n", 1, 15, "no requirement after the ':'"},
    {"sized /x(/ for: gain >= 10\n", 1, 10, "bad regular expression '/x(/': missing closing parenthesis"},
    {"sized cell a cell b for: gain >= 1\n", 1, 14, "names one cell"},
    {"sized nmos pmos for: gain >= 1\n", 1, 12, "'pmos' is a second one"},
    {"sized model for:\n", 1, 7, "'model' needs a model name"},
    {"matched a b ratio 1:2\n", 1, 13, "'ratio' is a limit, not a device"},
    {"matched a b : ratio 1:2:3\n", 1, 9, "the ratio has 3 parts but the statement names 2 devices"},
    {"matched a b : ratio 1:0\n", 1, 23, "a ratio's parts must be positive"},
    {"matched a b : ratio 2\n", 1, 21, "a ratio needs two or more parts"},
    {"matched a b : VGS <= 5%\n", 1, 23, "unexpected '%' after the limit"},
    {"matched a b : gm/ID spread <= 5\n", 1, 31, "is a percentage: write it with %"},
    {"matched a b : VDS 5mV\n", 1, 19, "write the largest allowed spread"},
    {"matched a b : skew <= 1mV\n", 1, 15, "unknown limit 'skew'"},
    {"matched a b : VGS <= 1mV, VGS <= 2mV\n", 1, 27, "VGS is given twice"},
    {"matched a b :\n", 1, 13, "nothing after the ':'"},
    {"waive a : triode\n", 1, 17, "a waiver needs a reason"},
    {"waive a : triode because\n", 1, 18, "'because' needs the reason"},
    {"waive a : triod because x\n", 1, 11, "unknown check 'triod' to waive"},
    {"waive a : waiver because x\n", 1, 11, "unknown check 'waiver' to waive"},
    {"waive a : triode until 2026-02-30 because x\n", 1, 24, "'until' needs a date written YYYY-MM-DD"},
    {"waive a : triode until tomorrow because x\n", 1, 24, "'until' needs a date"},
    {"waive a triode because x\n", 1, 25, "a waive statement needs ':'"},
    {"waive a : because x\n", 1, 11, "say which checks are waived"},
    {"check match-vgs min 5mV\n", 1, 17, "check match-vgs takes max, not min"},
    {"check sat-margin max 5mV\n", 1, 18, "check sat-margin takes min, not max"},
    {"check match-gmid max 5\n", 1, 22, "is a percentage"},
    {"check gm/id min 3\n", 1, 13, "check gm/id has no limit"},
    {"check match-ratio max\n", 1, 19, "max needs a value"},
    {"regions all slope-factor 0.9\n", 1, 26, "slope-factor must be at least 1"},
    {"regions all slope-factor 1.3V\n", 1, 29, "'V' is not an SI suffix"},
    {"frobnicate all\n", 1, 1, "a statement starts with regions, check, sized, matched or waive"},
};

static void test_intent_errors(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof intent_err_rows / sizeof intent_err_rows[0]; i++) {
        const ErrRow *t = &intent_err_rows[i];
        DiagList d;
        RuleSet *rs = fresh(&d);
        print_message("  %s", t->text);
        assert_int_equal(rule_load_text(rs, "t.rules", t->text, strlen(t->text), &d), ERR_INPUT);
        assert_int_equal(d.nerrors, 1);
        assert_int_equal(d.items[0].sev, DIAG_ERROR);
        assert_string_equal(d.items[0].loc.file, "t.rules");
        assert_non_null(d.items[0].excerpt);
        if (d.items[0].loc.line != t->line || d.items[0].loc.col != t->col || !strstr(d.items[0].msg, t->msg)) {
            print_error("got %u:%u: %s\n", d.items[0].loc.line, d.items[0].loc.col, d.items[0].msg);
            fail();
        }
        /* nothing was added */
        const RuleStatements *st = rule_statements(rs);
        assert_int_equal(st->nsized + st->ngroups + st->nwaivers, 0);
        rule_free(rs);
        diag_free(&d);
    }
}

/* The bad-regex message carries PCRE2's own words and points into the pattern. */
static void test_regex_error_text(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    const char t[] = "waive /a[b/ : triode because x\n";
    assert_int_equal(rule_load_text(rs, "t.rules", t, sizeof t - 1, &d), ERR_INPUT);
    assert_int_equal(d.n, 1);
    assert_string_equal(d.items[0].msg,
                        "bad regular expression '/a[b/': missing terminating ] for character class (at offset 3)");
    assert_int_equal(d.items[0].loc.col, 11);
    rule_free(rs);
    diag_free(&d);
}

static void test_local_and_inline(void **state)
{
    (void)state;
    DiagList d;
    RuleSet *rs = fresh(&d);
    int found = 7;
    char *net = TU_TMPFILE("amp.cir", "* amp\n.end\n");
    assert_non_null(net);
    assert_int_equal(rule_load_local(rs, net, &found, &d), ERR_OK);
    assert_int_equal(found, 0);
    char *loc = TU_TMPFILE("amp.cir.rules", "sized all for: gain >= 7\n");
    assert_non_null(loc);
    assert_int_equal(rule_load_local(rs, net, &found, &d), ERR_OK);
    assert_int_equal(found, 1);
    assert_int_equal(rule_statements(rs)->nsized, 1);
    assert_string_equal(rule_statements(rs)->sized[0].from.file, loc);
    free(net);
    free(loc);
    /* inline statements: columns in the netlist line, the file and line given */
    Arena a;
    arena_init(&a);
    RuleSized sz;
    RuleWaiver wv;
    const char line[] = "m1 d g s b nch w=1u l=1u $ sized for: gm/ID 15/V +-10%, strong\r";
    assert_int_equal(rule_parse_inline(&a, RULE_INLINE_SIZED, "amp.cir", 42, line, sizeof line - 1, 38, &sz, &wv, &d),
                     ERR_OK);
    assert_null(sz.sel);
    assert_int_equal(sz.nreqs, 2);
    assert_int_equal(sz.reqs[0].col, 39);
    assert_int_equal(sz.reqs[1].col, 57);
    assert_string_equal(sz.reqs[1].from.file, "amp.cir");
    assert_int_equal(sz.from.line, 42);
    const char wline[] = "* waive: gain because it is a cascode";
    assert_int_equal(rule_parse_inline(&a, RULE_INLINE_WAIVE, "amp.cir", 3, wline, sizeof wline - 1, 8, &sz, &wv, &d),
                     ERR_OK);
    assert_null(wv.sel);
    assert_int_equal(wv.checks, 1u << CHECK_GAIN);
    assert_string_equal(wv.reason, "it is a cascode");
    const char empty[] = "* sized for:   ";
    assert_int_equal(rule_parse_inline(&a, RULE_INLINE_SIZED, "amp.cir", 9, empty, sizeof empty - 1, 12, &sz, &wv, &d),
                     ERR_INPUT);
    assert_int_equal(d.items[d.n - 1].loc.line, 9);
    assert_int_equal(d.items[d.n - 1].loc.col, 13);
    arena_free(&a);
    rule_free(rs);
    diag_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_defaults),
        cmocka_unit_test(test_numbers),
        cmocka_unit_test(test_errors),
        cmocka_unit_test(test_error_text),
        cmocka_unit_test(test_recovery_and_atomicity),
        cmocka_unit_test(test_bands_precedence),
        cmocka_unit_test(test_checks),
        cmocka_unit_test(test_files),
        cmocka_unit_test(test_nul_byte),
        cmocka_unit_test(test_long_line),
        cmocka_unit_test(test_severity_lookup),
        cmocka_unit_test(test_defaults_intent),
        cmocka_unit_test(test_glob),
        cmocka_unit_test(test_requirements),
        cmocka_unit_test(test_selectors),
        cmocka_unit_test(test_regex_limit),
        cmocka_unit_test(test_matched_and_waive),
        cmocka_unit_test(test_intent_errors),
        cmocka_unit_test(test_regex_error_text),
        cmocka_unit_test(test_local_and_inline),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
