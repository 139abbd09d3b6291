/* test_lex: logical lines (title, continuations, comment lines, inline comments, CRLF, BOM, no final
 * newline, orphan continuations, a 1 MB line, NUL bytes), the token cursor and SPICE numbers.
 * What ngspice does with a construct was checked by running ngspice 39 on small decks with
 * `show m : w l` (the rows say which); the rest is SPICE card syntax (common practice, no source). */
#include "testutil.h"

#include "lex.h"

/* Every logical line as "K line-last start-end: tok|tok|..." (K: C card, T title, O orphan), lines
 * separated by ';'. */
static char *describe(const char *text, size_t len, int title)
{
    size_t cap = 4096 + len * 2, n = 0;
    char *out = malloc(cap);
    assert_non_null(out);
    out[0] = '\0';
    Lexer lx;
    lex_init(&lx, text, len, title);
    LexLine ln;
    while (lex_next(&lx, &ln)) {
        n += (size_t)snprintf(out + n, cap - n, "%s%c %u-%u %zu-%zu:", n ? ";" : "",
                              ln.kind == LEX_CARD ? 'C' : ln.kind == LEX_TITLE ? 'T' : 'O', ln.line, ln.last,
                              ln.start, ln.end);
        LexCur c;
        lex_cur_init(&c, text, &ln);
        LexTok t;
        int first = 1;
        if (ln.kind == LEX_TITLE) {
            n += (size_t)snprintf(out + n, cap - n, " %.*s", (int)(c.eol - c.pos), text + c.pos);
            continue;
        }
        while (lex_word(&c, &t, 0)) {
            n += (size_t)snprintf(out + n, cap - n, "%s%.*s", first ? " " : "|", (int)t.len, text + t.off);
            first = 0;
        }
    }
    return out;
}

typedef struct {
    const char *name;
    const char *text;
    size_t len; /* 0: strlen */
    int title;
    const char *want;
} LineRow;

static const LineRow line_rows[] = {
    {"title then card", "* t\nm1 a b c d n\n", 0, 1, "T 1-1 0-4: * t;C 2-2 4-17: m1|a|b|c|d|n"},
    {"title looks like a card", "m1 a b\nr1 x y 1\n", 0, 1, "T 1-1 0-7: m1 a b;C 2-2 7-16: r1|x|y|1"},
    {"no title in an included file", "m1 a b\n", 0, 0, "C 1-1 0-7: m1|a|b"},
    {"continuation", "t\nm1 a\n+ b c\n", 0, 1, "T 1-1 0-2: t;C 2-3 2-13: m1|a|b|c"},
    {"continuation with leading blanks (ngspice joins it)", "t\nm1 a\n   + b\n\t+c\n", 0, 1,
     "T 1-1 0-2: t;C 2-4 2-18: m1|a|b|c"},
    {"comment and blank lines between a card and its continuation (ngspice joins them)",
     "t\nm1 a\n* c1\n\n$ c2\n  ; c3\n// c4\n+ b\nr1 x y 2\n", 0, 1,
     "T 1-1 0-2: t;C 2-8 2-35: m1|a|b;C 9-9 35-44: r1|x|y|2"},
    {"comments after the last continuation are outside the span", "t\nm1 a\n+ b\n* after\nr1 x\n", 0, 1,
     "T 1-1 0-2: t;C 2-3 2-11: m1|a|b;C 5-5 19-24: r1|x"},
    {"inline comments: ; anywhere, $ after a blank, // anywhere (ngspice 39)",
     "t\nm1 a ; x y\n+ b $ z\n+ c // w\n+ d$e f\n+ g;h\n+ i//j\n", 0, 1,
     "T 1-1 0-2: t;C 2-7 2-51: m1|a|b|c|d$e|f|g|i"},
    {"$ at the start of a continuation's text", "t\nm1 a\n+$ b\n+ c\n", 0, 1, "T 1-1 0-2: t;C 2-4 2-16: m1|a|c"},
    {"CRLF line endings", "t\r\nm1 a\r\n+ b\r\nr1 x\r\n", 0, 1, "T 1-1 0-3: t;C 2-3 3-14: m1|a|b;C 4-4 14-20: r1|x"},
    {"UTF-8 byte order mark before the title", "\xEF\xBB\xBFtitle\nm1 a\n", 0, 1,
     "T 1-1 3-9: title;C 2-2 9-14: m1|a"},
    {"UTF-8 byte order mark in an included file", "\xEF\xBB\xBFm1 a\n", 0, 0, "C 1-1 3-8: m1|a"},
    {"no final newline", "t\nm1 a\n+ b", 0, 1, "T 1-1 0-2: t;C 2-3 2-10: m1|a|b"},
    {"no final newline, one line", "m1 a", 0, 0, "C 1-1 0-4: m1|a"},
    {"continuation on line 1 of an included file", "+ a\nm1 b\n", 0, 0, "O 1-1 0-4: +|a;C 2-2 4-9: m1|b"},
    {"continuation right after the title", "+ a\n+ b\nm1\n", 0, 1, "T 1-1 0-4: + a;O 2-2 4-8: +|b;C 3-3 8-11: m1"},
    {"blank and blank-only lines", "t\n\n   \n\t\r\nm1\n", 0, 1, "T 1-1 0-2: t;C 5-5 10-13: m1"},
    {"card with leading blanks", "t\n   m1 a\n", 0, 1, "T 1-1 0-2: t;C 2-2 2-10: m1|a"},
    {"'=' is its own token", "t\nm1 w = 1u l=2 m= 3\n", 0, 1, "T 1-1 0-2: t;C 2-2 2-21: m1|w|=|1u|l|=|2|m|=|3"},
    {"empty file", "", 0, 1, ""},
    {"empty title line", "\nm1\n", 0, 1, "T 1-1 0-1: ;C 2-2 1-4: m1"},
    {"title only, no newline", "a title", 0, 1, "T 1-1 0-7: a title"},
    {"only comments", "* a\n* b\n", 0, 0, ""},
    {"NUL ends the text of its line", "t\nm1 a\0b c\nr1 x\n", 16, 1, "T 1-1 0-2: t;C 2-2 2-11: m1|a;C 3-3 11-16: r1|x"},
    {"continuation lines only after comments at the end", "t\nm1 a\n* c\n", 0, 1, "T 1-1 0-2: t;C 2-2 2-7: m1|a"},
};

static void test_lines(void **state)
{
    (void)state;
    int bad = 0;
    for (size_t i = 0; i < sizeof line_rows / sizeof line_rows[0]; i++) {
        const LineRow *r = &line_rows[i];
        size_t len = r->len ? r->len : strlen(r->text);
        char *got = describe(r->text, len, r->title);
        if (strcmp(got, r->want) != 0) {
            print_error("row '%s':\n  got  %s\n  want %s\n", r->name, got, r->want);
            bad++;
        }
        free(got);
    }
    assert_int_equal(bad, 0);
}

/* A 1 MB token and a 1 MB comment line: no line-length limit anywhere. */
static void test_megabyte_line(void **state)
{
    (void)state;
    size_t big = 1u << 20;
    char *text = malloc(big * 2 + 64);
    assert_non_null(text);
    size_t n = 0;
    n += (size_t)sprintf(text + n, "t\nm1 ");
    memset(text + n, 'a', big);
    n += big;
    n += (size_t)sprintf(text + n, "\n* ");
    memset(text + n, 'c', big);
    n += big;
    n += (size_t)sprintf(text + n, "\n+ b\n");
    Lexer lx;
    lex_init(&lx, text, n, 1);
    LexLine ln;
    assert_true(lex_next(&lx, &ln));
    assert_int_equal(ln.kind, LEX_TITLE);
    assert_true(lex_next(&lx, &ln));
    assert_int_equal(ln.line, 2);
    assert_int_equal(ln.last, 4);
    assert_int_equal(ln.end, n);
    LexCur c;
    lex_cur_init(&c, text, &ln);
    LexTok t;
    assert_int_equal(lex_word(&c, &t, 0), 2);
    assert_int_equal(lex_word(&c, &t, 0), big);
    assert_int_equal(lex_word(&c, &t, 0), 1);
    assert_int_equal(text[t.off], 'b');
    assert_int_equal(lex_word(&c, &t, 0), 0);
    assert_false(lex_next(&lx, &ln));
    free(text);
}

static void test_binary(void **state)
{
    (void)state;
    size_t off = 99;
    const char nul[] = "* t\nm1 a b\0c\n";
    assert_true(lex_binary(nul, sizeof nul - 1, &off));
    assert_int_equal(off, 10);
    char junk[512];
    for (size_t i = 0; i < sizeof junk; i++)
        junk[i] = (char)(1 + i % 7); /* control bytes 1..7 */
    assert_true(lex_binary(junk, sizeof junk, &off));
    assert_int_equal(off, 0);
    const char text[] = "* t\r\n\tm1 a b c d n w=1u\f\n";
    assert_false(lex_binary(text, sizeof text - 1, &off));
    /* one stray control byte in a long text is not enough */
    char mostly[1000];
    memset(mostly, 'a', sizeof mostly);
    mostly[500] = 0x02;
    assert_false(lex_binary(mostly, sizeof mostly, &off));
    assert_int_equal(lex_bom("\xEF\xBB\xBFx", 4), 3);
    assert_int_equal(lex_bom("\xEF\xBB", 2), 0);
}

static void test_cursor(void **state)
{
    (void)state;
    /* words end at '=' and blanks; with LEX_W_PARENS also at ( ) , */
    const char *m = ".model nch nmos(level=14, version=4.8)";
    LexCur c;
    lex_cur_init_str(&c, m, strlen(m));
    LexTok t;
    const char *want[] = {".model", "nch", "nmos", "level", "=", "14", "version", "=", "4.8"};
    for (size_t i = 0; i < 9; i++) {
        assert_true(lex_word(&c, &t, LEX_W_PARENS) > 0);
        if (t.len != strlen(want[i]) || memcmp(m + t.off, want[i], t.len) != 0) {
            print_error("word %zu: got '%.*s', want '%s'\n", i, (int)t.len, m + t.off, want[i]);
            fail();
        }
    }
    assert_int_equal(lex_word(&c, &t, LEX_W_PARENS), 0);
    assert_true(lex_cur_done(&c));
    assert_true(lex_is(m, (LexTok){0, 6}, ".model"));
    assert_true(lex_is(".MODEL", (LexTok){0, 6}, ".model"));
    assert_false(lex_is(".mode", (LexTok){0, 5}, ".model"));
    assert_false(lex_is(".models", (LexTok){0, 7}, ".model"));

    /* file names: quoted (the quotes are not part of the name) or bare */
    const struct {
        const char *in;
        int rc;
        const char *name;
    } names[] = {
        {"'a b.sp' x", 1, "a b.sp"},
        {"\"dir/x.lib\" tt", 1, "dir/x.lib"},
        {"  plain.sp", 1, "plain.sp"},
        {"'open.sp", -1, "'"},
        {"   ", 0, ""},
    };
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
        lex_cur_init_str(&c, names[i].in, strlen(names[i].in));
        int rc = lex_name(&c, &t);
        assert_int_equal(rc, names[i].rc);
        if (t.len != strlen(names[i].name) || memcmp(names[i].in + t.off, names[i].name, t.len) != 0) {
            print_error("name row %zu: got '%.*s'\n", i, (int)t.len, names[i].in + t.off);
            fail();
        }
    }
}

typedef struct {
    const char *in;
    unsigned flags;
    size_t used;
    double want;
    const char *why;
} NumRow;

/* The values marked "ngspice 39" were printed by ngspice for `v0 n0 0 {X}` (numparam rules) or shown
 * for `w=X` on an M card (element-card rules). */
static const NumRow num_rows[] = {
    {"1", 0, 1, 1, "plain"},
    {"1.5k", 0, 4, 1500, "kilo"},
    {"10uA", 0, 4, 10e-6, "unit letters after the suffix are ignored (ngspice 39: 1e-05)"},
    {"1.2e-6", 0, 6, 1.2e-6, "exponent"},
    {"1E+3", 0, 4, 1e3, "exponent, upper case, sign"},
    {"5meg", 0, 4, 5e6, "mega"},
    {"2MEGohm", 0, 7, 2e6, "mega, then unit letters (ngspice 39: 2e+06)"},
    {"1m", 0, 2, 1e-3, "milli"},
    {"1M", 0, 2, 1e-3, "M is milli too, not mega (ngspice 39: 1e-03)"},
    {"1mil", 0, 4, 1e-3, "numparam reads mil as m(illi) + letters (ngspice 39: {1mil} = 1e-03)"},
    {"1mil", LEX_NUM_SPICE, 4, 25.4e-6, "on an element card mil is 25.4u (ngspice 39: w=1mil shows 2.54e-05)"},
    {"1milli", 0, 6, 1e-3, "ngspice 39: 1e-03"},
    {"1mega", 0, 5, 1e6, "ngspice 39: 1e+06"},
    {"1e3k", 0, 4, 1e6, "exponent and suffix (ngspice 39: 1e+06)"},
    {"1F", 0, 2, 1e-15, "F is femto, not farad (ngspice 39: 1e-15)"},
    {"3a", 0, 2, 3, "a is not atto (ngspice 39: 3, and r=3a is 3 ohm)"},
    {"1g", 0, 2, 1e9, "giga (ngspice 39)"},
    {"1t", 0, 2, 1e12, "tera (ngspice 39)"},
    {"1p", 0, 2, 1e-12, "pico"},
    {"1n", 0, 2, 1e-9, "nano"},
    {"1u", 0, 2, 1e-6, "micro"},
    {".5", 0, 2, 0.5, "leading dot (ngspice 39)"},
    {"5.", 0, 2, 5, "trailing dot (ngspice 39)"},
    {"1e", 0, 2, 1, "e without digits is a unit letter (ngspice 39: 1)"},
    {"1.2e-6u", 0, 7, 1.2e-12, "exponent then suffix (ngspice 39: 1.2e-12)"},
    {"1.5.3", 0, 3, 1.5, "stops at the second dot"},
    {"7*2", 0, 1, 7, "stops at an operator"},
    {"abc", 0, 0, 0, "not a number"},
    {".", 0, 0, 0, "a dot alone"},
    {"-1", 0, 0, 0, "no sign: unary minus belongs to the expression"},
    {"0.000000000000000000012345", 0, 26, 1.2345e-20, "many digits take the slow path"},
    {"123456789012345678", 0, 18, 123456789012345678.0, "more than 15 digits"},
};

static void test_numbers(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof num_rows / sizeof num_rows[0]; i++) {
        const NumRow *r = &num_rows[i];
        double v = -1;
        size_t used = lex_number(r->in, strlen(r->in), r->flags, &v);
        if (used != r->used || (used && fabs(v - r->want) > 1e-15 * fabs(r->want))) {
            print_error("'%s' (%s): used %zu value %.17g, want %zu %.17g\n", r->in, r->why, used, v, r->used, r->want);
            fail();
        }
    }
    /* 4.7u and 4.7e-6 are the same double, as strtod gives it */
    double a, b;
    lex_number("4.7u", 4, 0, &a);
    lex_number("4.7e-6", 6, 0, &b);
    assert_true(a == b && a == strtod("4.7e-6", NULL));
    lex_number("0.18u", 5, 0, &a);
    assert_true(a == strtod("0.18e-6", NULL));
    lex_number("33.3333333333333333333p", 23, 0, &a);
    assert_true(a == strtod("33.3333333333333333333e-12", NULL));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_lines),   cmocka_unit_test(test_megabyte_line), cmocka_unit_test(test_binary),
        cmocka_unit_test(test_cursor),  cmocka_unit_test(test_numbers),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
