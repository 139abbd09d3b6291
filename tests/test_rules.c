/* test_rules: the rule language: the compiled-in defaults, numbers with suffixes and units, region
 * boundaries per type and model with per-setting precedence, check settings, origins, and every
 * error with its line and column. */
#include "testutil.h"

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
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
