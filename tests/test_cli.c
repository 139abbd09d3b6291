/* test_cli: options into the Options struct, and every usage error as a status, never an exit. */
#include "testutil.h"

#include "cli.h"

static int parse(Options *o, Buf *msg, int argc, const char *const *argv)
{
    buf_clear(msg);
    return cli_parse(argc, (char **)argv, o, msg);
}

static void test_check_options(void **state)
{
    (void)state;
    Options o;
    Buf msg = BUF_INIT;
    const char *argv[] = {"biaslint", "check", "amp.cir", "--op", "amp.log", "--annotate=a.cir", "-o", "r.json",
                          "--format", "json", "--rules", "a.rules", "--rules", "b.rules", "--min-margin", "80mV",
                          "--min-gain=25", "--fail-on", "warning", "--op-format", "raw", "--add-overlap"};
    assert_int_equal(parse(&o, &msg, 22, argv), ERR_OK);
    assert_int_equal(o.cmd, CMD_CHECK);
    assert_string_equal(o.netlist, "amp.cir");
    assert_string_equal(o.op, "amp.log");
    assert_string_equal(o.annotate, "a.cir");
    assert_string_equal(o.output, "r.json");
    assert_string_equal(o.format, "json");
    assert_int_equal(o.nrules, 2);
    assert_string_equal(o.rules[1], "b.rules");
    assert_close(o.min_margin, 0.080, 1e-12);
    assert_close(o.min_gain, 25, 1e-12);
    assert_int_equal(o.fail_level, SEV_WARNING);
    assert_int_equal(o.op_format, OPFMT_RAW);
    assert_true(o.add_overlap);
    cli_free(&o);
    buf_free(&msg);
}

static void test_usage_errors(void **state)
{
    (void)state;
    static const struct {
        int argc;
        const char *argv[6];
        int want;
        const char *says;
    } rows[] = {
        {1, {"biaslint"}, CLI_USAGE, "usage: biaslint COMMAND"},
        {2, {"biaslint", "lint"}, CLI_USAGE, "unknown command 'lint'"},
        {3, {"biaslint", "check", "a.cir"}, CLI_USAGE, "--op DUMP"},
        {4, {"biaslint", "check", "a.cir", "--op"}, CLI_USAGE, "'--op' needs a value"},
        {5, {"biaslint", "check", "a.cir", "--op", "x", }, ERR_OK, ""},
        {6, {"biaslint", "check", "a.cir", "--op", "x", "--bogus"}, CLI_USAGE, "unknown option '--bogus'"},
        {6, {"biaslint", "check", "a.cir", "--op", "x", "--format=xml"}, CLI_USAGE, "unknown --format 'xml'"},
        {6, {"biaslint", "check", "a.cir", "--op", "x", "--min-margin=lots"}, CLI_USAGE, "voltage such as 80mV"},
        {6, {"biaslint", "check", "a.cir", "--op", "x", "--fail-on=fatal"}, CLI_USAGE, "unknown --fail-on level"},
        {3, {"biaslint", "strip", "a.cir"}, CLI_USAGE, "-o OUT"},
        {2, {"biaslint", "--help"}, CLI_HELP, "commands:"},
        {3, {"biaslint", "check", "--help"}, CLI_HELP, "--annotate FILE"},
        {2, {"biaslint", "--version"}, CLI_VERSION, "biaslint " BIASLINT_VERSION},
    };
    Buf msg = BUF_INIT;
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        Options o;
        int rc = parse(&o, &msg, rows[i].argc, rows[i].argv);
        if (rc != rows[i].want)
            print_error("row %zu: status %d, expected %d\n", i, rc, rows[i].want);
        assert_int_equal(rc, rows[i].want);
        if (rows[i].says[0])
            assert_non_null(strstr(msg.data, rows[i].says));
        cli_free(&o);
    }
    buf_free(&msg);
}

static void test_numbers(void **state)
{
    (void)state;
    static const struct {
        const char *s;
        int ok;
        double v;
    } rows[] = {
        {"50mV", 1, 0.05}, {"1.5k", 1, 1500}, {"2meg", 1, 2e6}, {"12/V", 1, 12}, {"3u", 1, 3e-6},
        {"1e-3", 1, 1e-3}, {"x", 0, 0},       {"", 0, 0},       {"5 V", 0, 0},  {"nan", 0, 0},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        double v = 0;
        assert_int_equal(cli_number(rows[i].s, &v), rows[i].ok);
        if (rows[i].ok)
            assert_close(v, rows[i].v, 1e-12);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_check_options),
        cmocka_unit_test(test_usage_errors),
        cmocka_unit_test(test_numbers),
    };
    return cmocka_run_group_tests_name("cli", tests, NULL, NULL);
}
