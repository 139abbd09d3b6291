/* test_expr: parameter expressions. The expected values of the first table were printed by ngspice 39
 * for `v0 n0 0 {EXPR}` and `print v(n0)` with numdgt=10 (so they are ngspice's own answers,
 * including its precedence of unary minus and ^, its |a|^b, left-to-right ^ and natural log). */
#include "testutil.h"

#include "expr.h"

typedef struct {
    const char *in;
    double want;
} ValRow;

static const ValRow ngspice_rows[] = {
    {"-2^2", -4}, {"-2**2", -4}, {"2^3^2", 64}, {"-2^3", -8}, {"2^-1", 0.5}, {"(-2)^2", 4}, {"(-2)^3", 8},
    {"(-2)^0.5", 1.4142135624}, {"(-8)^(1/3)", 2}, {"pwr(-2,2)", 4}, {"pwr(-2,3)", 8}, {"pwr(-8,1/3)", 2},
    {"pow(-2,2)", 4}, {"pow(-2,3)", -8}, {"pow(2,0.5)", 1.4142135624}, {"2**0.5", 1.4142135624},
    {"-3^0.5", -1.732050808}, {"2-3-4", -5}, {"8/2/2", 2}, {"1 +2 * 3", 7}, {"2*-3", -6}, {"- -2", 2},
    {"7%3", 1}, {"3 % 2", 1}, {"1?2:3", 2}, {"0?2:3", 3}, {"1<2", 1}, {"1==1", 1}, {"1!=1", 0}, {"!0", 1},
    {"1&&0", 0}, {"0||1", 1}, {"1||0&&0", 1}, {"!1+1", 1}, {"1+1==2", 1}, {"1<2==1", 1}, {"2>1&&0", 0},
    {"int(-2.7)", -2}, {"int(2.7)", 2}, {"floor(-2.7)", -3}, {"ceil(-2.2)", -2}, {"nint(2.5)", 2},
    {"nint(-2.5)", -2}, {"nint(3.5)", 4}, {"min(3,2)", 2}, {"max(3,2)", 3}, {"abs(-3)", 3},
    {"atan(1)", 0.7853981634}, {"exp(1)", 2.7182818285}, {"ln(10)", 2.302585093}, {"log(100)", 4.605170186},
    {"log10(100)", 2}, {"sqrt(2)", 1.4142135624}, {"sgn(-2)", -1}, {"sinh(1)", 1.1752011936},
    {"cosh(1)", 1.5430806348}, {"tanh(1)", 0.76159415596}, {"asin(1)", 1.5707963268}, {"acos(0)", 1.5707963268},
    {"asinh(1)", 0.88137358702}, {"acosh(2)", 1.3169578969}, {"atanh(0.5)", 0.54930614433},
    {"ternary_fcn(1,2,3)", 2}, {"1m", 1e-3}, {"1M", 1e-3}, {"1meg", 1e6}, {"2MEGohm", 2e6}, {"10uA", 1e-5},
    {"1mil", 1e-3}, {"1e3k", 1e6}, {"1F", 1e-15}, {"3a", 3}, {"1milli", 1e-3}, {"1mega", 1e6}, {"1e", 1},
    {"1.2e-6u", 1.2e-12}, {".5", 0.5}, {"5.", 5}, {"1E+3", 1e3},
};

static ExprParser parser(Arena *a, StrTab **t)
{
    *t = str_new(a);
    assert_non_null(*t);
    ExprParser p;
    memset(&p, 0, sizeof p);
    p.arena = a;
    p.names = *t;
    return p;
}

static void test_ngspice_values(void **state)
{
    (void)state;
    Arena a;
    arena_init(&a);
    StrTab *t;
    ExprParser p = parser(&a, &t);
    int bad = 0;
    for (size_t i = 0; i < sizeof ngspice_rows / sizeof ngspice_rows[0]; i++) {
        const ValRow *r = &ngspice_rows[i];
        Expr *e = expr_parse_str(&p, r->in, strlen(r->in));
        double v = NAN;
        ExprErr err;
        if (!e || expr_eval(e, NULL, &v, &err) != EXPR_OK || fabs(v - r->want) > 1e-9 * fmax(1.0, fabs(r->want))) {
            print_error("'%s': got %.12g (%s), ngspice 39 gives %.12g\n", r->in, v, e ? "" : p.err, r->want);
            bad++;
        }
    }
    assert_int_equal(bad, 0);
    str_free(t);
    arena_free(&a);
}

/* ---- scopes: a lookup over a small table ---- */

typedef struct {
    const char *names[4]; /* interned */
    double vals[4];
    int n;
    int calls;
    const Expr *fbody;
    const char *fname;
    unsigned fparams;
} Scope;

static int lookup(void *ctx, ExprEnv *env, const Expr *at, const char *name, double *out, ExprErr *err)
{
    (void)env;
    (void)at;
    (void)err;
    Scope *s = ctx;
    s->calls++;
    for (int i = 0; i < s->n; i++)
        if (s->names[i] == name) {
            *out = s->vals[i];
            return EXPR_OK;
        }
    return EXPR_E_UNDEF;
}

static const Expr *func(void *ctx, const char *name, unsigned *np)
{
    Scope *s = ctx;
    if (s->fname && name == s->fname) {
        *np = s->fparams;
        return s->fbody;
    }
    return NULL;
}

static void test_scope(void **state)
{
    (void)state;
    Arena a;
    arena_init(&a);
    StrTab *t;
    ExprParser p = parser(&a, &t);
    Scope s = {{str_intern(t, "wp", 2), str_intern(t, "k", 1)}, {2e-6, 3}, 2, 0, NULL, NULL, 0};
    ExprEnv env = {lookup, func, &s, 0, 0};
    ExprErr err;
    double v;

    Expr *e = expr_parse_str(&p, "WP*k + 1u", 9); /* names fold case */
    assert_non_null(e);
    assert_false(expr_const(e, &v));
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_OK);
    assert_close(v, 7e-6, 1e-12);

    /* an undefined name: the error names it and points at it */
    e = expr_parse_str(&p, "wp + foo*2", 10);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_UNDEF);
    assert_string_equal(err.name, "foo");
    assert_int_equal(expr_offset(err.at), 5);
    char buf[100];
    assert_string_equal(expr_strerror(&err, buf, sizeof buf), "undefined parameter 'foo'");
    assert_true(expr_mark_once(err.at));
    assert_false(expr_mark_once(err.at));

    /* ?: evaluates only the branch it takes */
    e = expr_parse_str(&p, "k > 2 ? wp : nosuch", 19);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_OK);
    assert_close(v, 2e-6, 1e-12);
    e = expr_parse_str(&p, "0 && nosuch", 11);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_OK);
    assert_true(v == 0);

    /* constants are folded at parse time: no lookup needed */
    e = expr_parse_str(&p, "2*3u + max(1, 2)*0", 18);
    assert_true(expr_const(e, &v));
    assert_close(v, 6e-6, 1e-12);

    /* non-finite results are errors at the operator */
    e = expr_parse_str(&p, "1/(k-3)", 7);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_NONFINITE);
    assert_int_equal(expr_offset(err.at), 1);
    e = expr_parse_str(&p, "sqrt(-1)", 8);
    assert_false(expr_const(e, &v)); /* not folded: the error comes with its place when used */
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_NONFINITE);
    e = expr_parse_str(&p, "log(0)", 6);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_NONFINITE);

    /* statistical functions give their nominal value (ngspice draws a random number) */
    e = expr_parse_str(&p, "agauss(1u, 0.1u, 3) + unif(2, 0.5)", 34);
    assert_true(expr_const(e, &v));
    assert_close(v, 2.000001, 1e-12);

    /* user functions: a body with its parameters, called with the right number of arguments */
    const char *args[1] = {str_intern(t, "x", 1)};
    p.args = args;
    p.nargs = 1;
    Expr *body = expr_parse_str(&p, "2*x + k", 7);
    p.args = NULL;
    p.nargs = 0;
    assert_non_null(body);
    s.fbody = body;
    s.fname = str_intern(t, "dbl", 3);
    s.fparams = 1;
    e = expr_parse_str(&p, "dbl(wp) * 1", 11);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_OK);
    assert_close(v, 3 + 4e-6, 1e-12);
    e = expr_parse_str(&p, "dbl(1, 2)", 9);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_ARGS);
    e = expr_parse_str(&p, "nofunc(1)", 9);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_UNDEF);
    assert_string_equal(expr_strerror(&err, buf, sizeof buf), "unknown function 'nofunc'");
    /* a function that calls itself runs into the depth limit */
    args[0] = str_intern(t, "x", 1);
    p.args = args;
    p.nargs = 1;
    s.fbody = expr_parse_str(&p, "dbl(x)+1", 8);
    p.args = NULL;
    p.nargs = 0;
    e = expr_parse_str(&p, "dbl(1)", 6);
    assert_int_equal(expr_eval(e, &env, &v, &err), EXPR_E_DEPTH);
    assert_int_equal(env.depth, 0);

    str_free(t);
    arena_free(&a);
}

typedef struct {
    const char *in;
    unsigned col; /* 1-based column of the token at fault */
    const char *msg;
} ErrRow;

static const ErrRow err_rows[] = {
    {"1+", 3, "the expression ends where a value is expected"},
    {"(1", 1, "this '(' is not closed"},
    {"(1 2)", 4, "expected ')' here, found '2'"},
    {"1)", 2, "this ')' has no matching '('"},
    {"2 3", 3, "unexpected '3' after the end of the expression"},
    {"1.2.3", 4, "unexpected '.' after the end of the expression"},
    {"sqrt()", 1, "sqrt() takes 1 argument, not 0"},
    {"abs(1,2)", 1, "abs() takes 1 argument, not 2"},
    {"min(1,2,3)", 1, "min() takes 2 arguments, not 3"},
    {"agauss()", 1, "agauss() takes 1 to 3 arguments, not 0"},
    {"sqrt(4", 5, "this '(' is not closed"},
    {"max(1;2)", 0, NULL}, /* ';' starts a comment: the '(' is not closed */
    {"1 # 2", 3, "unexpected '#' in the expression"},
    {"a ? b", 6, "expected ':' for the '?' of this condition"},
    {"a = b", 3, "unexpected '=' in the expression"},
    {"*2", 1, "unexpected '*' in the expression"},
    {"", 1, "a value is missing here"},
    {"2*1e999", 3, "this number is out of range"},
    {"1234567890123456789012345678901234567890123456789012345678901234567890123456789012345678901234567890"
     "1", 1, "this number is too long"},
};

static void test_errors(void **state)
{
    (void)state;
    Arena a;
    arena_init(&a);
    StrTab *t;
    ExprParser p = parser(&a, &t);
    int bad = 0;
    for (size_t i = 0; i < sizeof err_rows / sizeof err_rows[0]; i++) {
        const ErrRow *r = &err_rows[i];
        Expr *e = expr_parse_str(&p, r->in, strlen(r->in));
        if (e) {
            print_error("'%s' parsed, but it is not an expression\n", r->in);
            bad++;
            continue;
        }
        if (r->msg && (p.err_off + 1 != r->col || strcmp(p.err, r->msg) != 0)) {
            print_error("'%s': got col %zu '%s', want col %u '%s'\n", r->in, p.err_off + 1, p.err, r->col, r->msg);
            bad++;
        }
    }
    assert_int_equal(bad, 0);
    str_free(t);
    arena_free(&a);
}

/* The depth limit: nesting and long operator chains both count, and both fail with a message. */
static void test_depth(void **state)
{
    (void)state;
    Arena a;
    arena_init(&a);
    StrTab *t;
    ExprParser p = parser(&a, &t);
    size_t n = 300;
    char *s = malloc(4 * n + 8);
    assert_non_null(s);
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        s[k++] = '(';
    s[k++] = 'x';
    for (size_t i = 0; i < n; i++)
        s[k++] = ')';
    assert_null(expr_parse_str(&p, s, k));
    assert_non_null(strstr(p.err, "nested too deeply"));
    k = 0;
    for (size_t i = 0; i < n; i++) {
        s[k++] = 'x';
        s[k++] = '+';
    }
    s[k++] = 'x';
    assert_null(expr_parse_str(&p, s, k));
    assert_non_null(strstr(p.err, "nested too deeply"));
    k = 0;
    for (size_t i = 0; i < n; i++)
        s[k++] = '-';
    s[k++] = 'x';
    assert_null(expr_parse_str(&p, s, k));
    assert_non_null(strstr(p.err, "nested too deeply"));
    /* the same at 100 levels is fine, and folds to a constant when it can */
    k = 0;
    for (size_t i = 0; i < 100; i++)
        s[k++] = '(';
    s[k++] = '1';
    for (size_t i = 0; i < 100; i++)
        s[k++] = ')';
    double v;
    Expr *e = expr_parse_str(&p, s, k);
    assert_non_null(e);
    assert_true(expr_const(e, &v) && v == 1);
    p.max_height = 10; /* the limit can be lowered */
    assert_null(expr_parse_str(&p, "1+x+x+x+x+x+x+x+x+x+x+x", 23));
    free(s);
    str_free(t);
    arena_free(&a);
}

/* Values read through the cursor, as the netlist reader does: braces over continuation lines,
 * quotes, bare tokens, element-card numbers. */
static void test_cursor_values(void **state)
{
    (void)state;
    Arena a;
    arena_init(&a);
    StrTab *t;
    ExprParser p = parser(&a, &t);
    const char *text = "m1 {1u +\n* a comment\n+ 2u} '3u*2' 4mil wp*2 {1u\n";
    Lexer lx;
    lex_init(&lx, text, strlen(text), 0);
    LexLine ln;
    assert_true(lex_next(&lx, &ln));
    LexCur c;
    lex_cur_init(&c, text, &ln);
    LexTok w;
    lex_word(&c, &w, 0);
    double v;
    Expr *e = expr_parse(&p, &c, EXPR_BARE);
    assert_true(e && expr_const(e, &v));
    assert_close(v, 3e-6, 1e-12);
    e = expr_parse(&p, &c, EXPR_BARE);
    assert_true(e && expr_const(e, &v));
    assert_close(v, 6e-6, 1e-12);
    e = expr_parse(&p, &c, EXPR_BARE | EXPR_SPICE_NUM); /* element-card number: mil is 25.4u */
    assert_true(e && expr_const(e, &v));
    assert_close(v, 4 * 25.4e-6, 1e-12);
    e = expr_parse(&p, &c, EXPR_BARE);
    assert_non_null(e);
    assert_false(expr_const(e, &v));
    e = expr_parse(&p, &c, EXPR_BARE); /* `{1u` with nothing after it */
    assert_null(e);
    assert_string_equal(p.err, "this '{' is not closed");
    assert_int_equal(p.err_off, strlen("m1 {1u +\n* a comment\n+ 2u} '3u*2' 4mil wp*2 "));
    /* without EXPR_BARE a value must be braced or quoted */
    lex_cur_init_str(&c, "12", 2);
    assert_null(expr_parse(&p, &c, 0));
    lex_cur_init_str(&c, "{}", 2);
    assert_null(expr_parse(&p, &c, 0));
    assert_string_equal(p.err, "the expression is empty");
    /* EXPR_PARENS: a bare value ends at ')' (model cards) */
    lex_cur_init_str(&c, "-0.5)", 5);
    e = expr_parse(&p, &c, EXPR_BARE | EXPR_PARENS);
    assert_true(e && expr_const(e, &v) && v == -0.5);
    assert_int_equal(c.pos, 4);
    str_free(t);
    arena_free(&a);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ngspice_values), cmocka_unit_test(test_scope), cmocka_unit_test(test_errors),
        cmocka_unit_test(test_depth), cmocka_unit_test(test_cursor_values),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
