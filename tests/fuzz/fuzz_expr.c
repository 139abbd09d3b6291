/* fuzz_expr: the expression parser and evaluator (expr.c) in a small parameter scope. The input is
 * lines of text:
 *   name = EXPR            a parameter (evaluated on demand, cycles reported as flatten does)
 *   name(a, b, ...) = EXPR a user function with parameters
 *   @F TEXT                a value parsed at a cursor with expr_parse flags F (a digit 0-7:
 *                          EXPR_BARE, EXPR_SPICE_NUM, EXPR_PARENS), then evaluated
 *   EXPR                   an expression, parsed whole and evaluated
 * Promises checked: a failed parse gives a message and an offset inside the text; a successful
 * evaluation is finite; a failed one names the node at fault; the evaluation depth returns to 0. */
#include "fuzz.h"

#include "arena.h"
#include "expr.h"
#include "lex.h"
#include "strtab.h"

#define MAXDEF 64
#define MAXARGS 16

typedef struct {
    const char *name; /* interned */
    Expr *val;
    unsigned nargs;   /* functions */
    int busy;
} Def;

typedef struct {
    Def par[MAXDEF], fun[MAXDEF];
    int npar, nfun;
} Scope;

static int lookup(void *ctx, ExprEnv *env, const Expr *at, const char *name, double *out, ExprErr *err)
{
    Scope *s = ctx;
    for (int i = s->npar - 1; i >= 0; i--) {
        Def *p = &s->par[i];
        if (p->name != name)
            continue;
        if (!p->val) {
            err->code = EXPR_E_FAILED;
            err->at = at;
            err->name = name;
            return EXPR_E_FAILED;
        }
        if (p->busy) {
            err->code = EXPR_E_CYCLE;
            err->at = at;
            err->name = name;
            return EXPR_E_CYCLE;
        }
        p->busy = 1;
        int rc = expr_eval(p->val, env, out, err);
        p->busy = 0;
        return rc;
    }
    return EXPR_E_UNDEF;
}

static const Expr *func(void *ctx, const char *name, unsigned *nparams)
{
    Scope *s = ctx;
    for (int i = s->nfun - 1; i >= 0; i--)
        if (s->fun[i].name == name) {
            *nparams = s->fun[i].nargs;
            return s->fun[i].val;
        }
    return NULL;
}

static int is_name_start(int c)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_';
}

static int is_name_char(int c)
{
    return is_name_start(c) || (c >= '0' && c <= '9');
}

static size_t name_len(const char *s, size_t n)
{
    if (n == 0 || !is_name_start((unsigned char)s[0]))
        return 0;
    size_t i = 1;
    while (i < n && is_name_char((unsigned char)s[i]))
        i++;
    return i;
}

static size_t skip_blanks(const char *s, size_t n, size_t i)
{
    while (i < n && (s[i] == ' ' || s[i] == '\t'))
        i++;
    return i;
}

static void check_parse(const ExprParser *p, const Expr *e, size_t n)
{
    if (e)
        return;
    if (!p->nomem && (!p->err[0] || p->err_off > n))
        fuzz_fail("failed parse with message '%s' at offset %zu of %zu", p->err, p->err_off, n);
}

static void check_eval(const Expr *e, ExprEnv *env)
{
    double v = 0;
    ExprErr err;
    memset(&err, 0, sizeof err);
    int rc = expr_eval(e, env, &v, &err);
    if (env->depth != 0)
        fuzz_fail("evaluation depth %u left behind", env->depth);
    if (rc == EXPR_OK) {
        if (!isfinite(v))
            fuzz_fail("evaluation succeeded with a non-finite value");
        return;
    }
    if (!err.at)
        fuzz_fail("evaluation error %d without a node", rc);
    if ((rc == EXPR_E_UNDEF || rc == EXPR_E_CYCLE) && !err.name)
        fuzz_fail("evaluation error %d without a name", rc);
    char buf[200];
    const char *msg = expr_strerror(&err, buf, sizeof buf);
    if (!msg || !msg[0])
        fuzz_fail("evaluation error %d without a message", rc);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    /* a private copy that ends in a NUL, as every text biaslint parses does */
    char *text = malloc(n + 1);
    if (!text)
        abort();
    memcpy(text, data, n);
    text[n] = '\0';
    Arena a;
    arena_init(&a);
    StrTab *names = str_new(&a);
    Scope *s = calloc(1, sizeof *s);
    if (!names || !s)
        abort();
    ExprParser p;
    memset(&p, 0, sizeof p);
    p.arena = &a;
    p.names = names;
    ExprEnv env = {lookup, func, s, 0, 0};
    Expr *exprs[MAXDEF];
    int nexprs = 0;

    for (size_t ls = 0; ls < n;) {
        const char *nl = memchr(text + ls, '\n', n - ls);
        size_t le = nl ? (size_t)(nl - text) : n;
        const char *line = text + ls;
        size_t len = le - ls;
        ls = le + 1;
        size_t k = name_len(line, len), i = skip_blanks(line, len, k);
        const char *args[MAXARGS];
        unsigned nargs = 0;
        int is_func = 0;
        if (k && i < len && line[i] == '(') {
            /* name(a, b) = body ? */
            size_t j = i + 1;
            for (;;) {
                j = skip_blanks(line, len, j);
                size_t an = name_len(line + j, len - j);
                if (!an || nargs == MAXARGS)
                    break;
                args[nargs++] = str_intern(names, line + j, an);
                j = skip_blanks(line, len, j + an);
                if (j < len && line[j] == ',') {
                    j++;
                    continue;
                }
                break;
            }
            j = skip_blanks(line, len, j);
            if (j < len && line[j] == ')') {
                j = skip_blanks(line, len, j + 1);
                if (j < len && line[j] == '=' && (j + 1 >= len || line[j + 1] != '=')) {
                    is_func = 1;
                    i = j;
                }
            }
        }
        if (k && i < len && line[i] == '=' && (i + 1 >= len || line[i + 1] != '=')) {
            const char *body = line + i + 1;
            size_t bn = len - i - 1;
            p.args = is_func ? args : NULL;
            p.nargs = is_func ? nargs : 0;
            Expr *e = expr_parse_str(&p, body, bn);
            p.args = NULL;
            p.nargs = 0;
            check_parse(&p, e, bn);
            if (p.nomem)
                break;
            Def *dst = is_func ? (s->nfun < MAXDEF ? &s->fun[s->nfun++] : NULL)
                               : (s->npar < MAXDEF ? &s->par[s->npar++] : NULL);
            if (dst) {
                dst->name = str_intern(names, line, k);
                dst->val = e;
                dst->nargs = nargs;
            }
            continue;
        }
        Expr *e;
        if (len >= 2 && line[0] == '@' && line[1] >= '0' && line[1] <= '7') {
            LexCur c;
            lex_cur_init_str(&c, line + 2, len - 2);
            e = expr_parse(&p, &c, (unsigned)(line[1] - '0'));
            check_parse(&p, e, len - 2);
            if (c.pos > len - 2)
                fuzz_fail("cursor left past the text: %zu > %zu", c.pos, len - 2);
        } else {
            e = expr_parse_str(&p, line, len);
            check_parse(&p, e, len);
        }
        if (p.nomem)
            break;
        if (e && nexprs < MAXDEF)
            exprs[nexprs++] = e;
    }
    for (int i = 0; i < s->npar; i++)
        if (s->par[i].val) {
            s->par[i].busy = 1;
            check_eval(s->par[i].val, &env);
            s->par[i].busy = 0;
        }
    for (int i = 0; i < nexprs; i++)
        check_eval(exprs[i], &env);

    free(s);
    str_free(names);
    arena_free(&a);
    free(text);
    return 0;
}
