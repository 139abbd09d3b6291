/* expr: a recursive-descent parser over the lex cursor that builds trees in an arena (constant
 * subtrees folded), and a tree-walking evaluator whose parameter lookup is the caller's. */
#include "expr.h"

#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

enum {
    EX_NUM, EX_NAME, EX_ARG, EX_NEG, EX_NOT,
    EX_ADD, EX_SUB, EX_MUL, EX_DIV, EX_MOD, EX_POW,
    EX_EQ, EX_NE, EX_LT, EX_LE, EX_GT, EX_GE, EX_AND, EX_OR,
    EX_COND, EX_CALL, EX_UCALL,
};

#define F_REPORTED 1u
#define MAX_ARGS 16

struct Expr {
    uint8_t op;
    uint8_t fn;      /* built-in function (EX_CALL), argument index (EX_ARG) */
    uint8_t flags;   /* F_REPORTED; written through expr_mark_once */
    uint8_t nargs;   /* EX_CALL, EX_UCALL */
    uint32_t height; /* levels of the subtree, 1 for a leaf */
    size_t off;
    union {
        double num;       /* EX_NUM */
        const char *name; /* EX_NAME, EX_UCALL */
    } v;
    Expr *a, *b, *c;  /* operands */
    Expr **args;      /* EX_CALL, EX_UCALL */
};

/* ORDER FUNCS: the ids index this table. */
enum {
    FN_SQRT, FN_EXP, FN_LOG, FN_LN, FN_LOG10, FN_ABS, FN_SIN, FN_COS, FN_TAN, FN_ASIN, FN_ACOS,
    FN_ATAN, FN_SINH, FN_COSH, FN_TANH, FN_ASINH, FN_ACOSH, FN_ATANH, FN_FLOOR, FN_CEIL, FN_INT,
    FN_NINT, FN_SGN, FN_MIN, FN_MAX, FN_POW, FN_PWR, FN_TERNARY, FN_AGAUSS, FN_GAUSS, FN_AUNIF,
    FN_UNIF, FN_LIMIT,
};

static const struct {
    const char *name;
    uint8_t min, max;
} funcs[] = {
    /* ORDER FUNCS */
    {"sqrt", 1, 1}, {"exp", 1, 1}, {"log", 1, 1}, {"ln", 1, 1}, {"log10", 1, 1}, {"abs", 1, 1},
    {"sin", 1, 1}, {"cos", 1, 1}, {"tan", 1, 1}, {"asin", 1, 1}, {"acos", 1, 1}, {"atan", 1, 1},
    {"sinh", 1, 1}, {"cosh", 1, 1}, {"tanh", 1, 1}, {"asinh", 1, 1}, {"acosh", 1, 1},
    {"atanh", 1, 1}, {"floor", 1, 1}, {"ceil", 1, 1}, {"int", 1, 1}, {"nint", 1, 1}, {"sgn", 1, 1},
    {"min", 2, 2}, {"max", 2, 2}, {"pow", 2, 2}, {"pwr", 2, 2}, {"ternary_fcn", 3, 3},
    {"agauss", 1, 3}, {"gauss", 1, 3}, {"aunif", 1, 2}, {"unif", 1, 2}, {"limit", 1, 2},
};

/* ---- parser ------------------------------------------------------------------------------- */

enum { TK_END = 256, TK_NUM, TK_NAME, TK_POW, TK_EQ, TK_NE, TK_LE, TK_GE, TK_AND, TK_OR, TK_BAD };

typedef struct {
    ExprParser *p;
    LexCur *c;
    unsigned flags;
    int closer;     /* byte that ends the expression ('}', a quote), 0: the end of the cursor */
    int tk;         /* current token */
    size_t off;     /* its offset */
    double num;     /* TK_NUM */
    LexTok name;    /* TK_NAME */
    unsigned depth; /* recursion of cond() */
    unsigned maxh;
    int failed;
} P;

static void fail(P *s, size_t off, const char *fmt, ...) PRINTF_LIKE(3, 4);

static void fail(P *s, size_t off, const char *fmt, ...)
{
    if (s->failed)
        return;
    s->failed = 1;
    s->p->err_off = off;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(s->p->err, sizeof s->p->err, fmt, ap);
    va_end(ap);
}

static inline int name_start(int ch)
{
    return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || ch == '_';
}

static inline int name_char(int ch)
{
    return name_start(ch) || (ch >= '0' && ch <= '9');
}

static inline int digit(int ch)
{
    return ch >= '0' && ch <= '9';
}

/* A printable form of the byte at off, for messages. */
static const char *show(P *s, size_t off, char *buf, size_t n)
{
    unsigned char ch = (unsigned char)s->c->text[off];
    if (ch >= 0x21 && ch < 0x7f)
        snprintf(buf, n, "'%c'", ch);
    else
        snprintf(buf, n, "byte 0x%02x", ch);
    return buf;
}

static void next(P *s)
{
    LexCur *c = s->c;
    int ch = lex_cur_skip(c);
    s->off = c->pos;
    if (!ch) {
        s->tk = TK_END;
        return;
    }
    if (s->closer && ch == s->closer) {
        s->tk = TK_END;
        return;
    }
    if (digit(ch) || (ch == '.' && digit(lex_cur_peek2(c)))) {
        size_t n = lex_number(c->text + c->pos, c->eol - c->pos,
                              (s->flags & EXPR_SPICE_NUM) ? LEX_NUM_SPICE : 0, &s->num);
        if (!n || !isfinite(s->num)) {
            fail(s, c->pos, n ? "this number is out of range" : "this number is too long");
            s->tk = TK_BAD;
            return;
        }
        c->pos += n;
        s->tk = TK_NUM;
        return;
    }
    if (name_start(ch)) {
        size_t st = c->pos;
        while (c->pos < c->eol && name_char((unsigned char)c->text[c->pos]))
            c->pos++;
        s->name = (LexTok){st, c->pos - st};
        s->tk = TK_NAME;
        return;
    }
    int c2 = lex_cur_peek2(c);
    lex_cur_adv(c);
    switch (ch) {
    case '*':
        if (c2 == '*') {
            lex_cur_adv(c);
            s->tk = TK_POW;
            return;
        }
        s->tk = '*';
        return;
    case '^': s->tk = TK_POW; return;
    case '=':
        if (c2 == '=') {
            lex_cur_adv(c);
            s->tk = TK_EQ;
            return;
        }
        break;
    case '!':
        if (c2 == '=') {
            lex_cur_adv(c);
            s->tk = TK_NE;
            return;
        }
        s->tk = '!';
        return;
    case '<':
        if (c2 == '=') {
            lex_cur_adv(c);
            s->tk = TK_LE;
            return;
        }
        s->tk = '<';
        return;
    case '>':
        if (c2 == '=') {
            lex_cur_adv(c);
            s->tk = TK_GE;
            return;
        }
        s->tk = '>';
        return;
    case '&':
        if (c2 == '&') {
            lex_cur_adv(c);
            s->tk = TK_AND;
            return;
        }
        break;
    case '|':
        if (c2 == '|') {
            lex_cur_adv(c);
            s->tk = TK_OR;
            return;
        }
        break;
    case '+': case '-': case '/': case '%': case '(': case ')': case ',': case '?': case ':':
        s->tk = ch;
        return;
    default: break;
    }
    char b[16];
    fail(s, s->off, "unexpected %s in the expression", show(s, s->off, b, sizeof b));
    s->tk = TK_BAD;
}

static Expr *node(P *s, int op, size_t off)
{
    Expr *e = arena_zalloc(s->p->arena, sizeof *e);
    if (!e) {
        s->p->nomem = 1;
        fail(s, off, "out of memory");
        return NULL;
    }
    e->op = (uint8_t)op;
    e->off = off;
    e->height = 1;
    return e;
}

static int check_height(P *s, Expr *e)
{
    if (e->height > s->maxh) {
        fail(s, e->off, "the expression is nested too deeply (more than %u levels)", s->maxh);
        return 0;
    }
    return 1;
}

static double eval_fn(int fn, const double *a);
static int fold(Expr *e);

static Expr *unop(P *s, int op, size_t off, Expr *a)
{
    if (!a)
        return NULL;
    Expr *e = node(s, op, off);
    if (!e)
        return NULL;
    e->a = a;
    e->height = a->height + 1;
    if (!check_height(s, e))
        return NULL;
    fold(e);
    return e;
}

static Expr *binop(P *s, int op, size_t off, Expr *a, Expr *b)
{
    if (!a || !b)
        return NULL;
    Expr *e = node(s, op, off);
    if (!e)
        return NULL;
    e->a = a;
    e->b = b;
    e->height = (a->height > b->height ? a->height : b->height) + 1;
    if (!check_height(s, e))
        return NULL;
    fold(e);
    return e;
}

static Expr *cond(P *s);

static Expr *prim(P *s)
{
    if (s->failed)
        return NULL;
    size_t off = s->off;
    switch (s->tk) {
    case TK_NUM: {
        Expr *e = node(s, EX_NUM, off);
        if (e)
            e->v.num = s->num;
        next(s);
        return e;
    }
    case '(': {
        next(s);
        Expr *e = cond(s);
        if (!e)
            return NULL;
        if (s->tk != ')') {
            char b[16];
            if (s->tk == TK_END)
                fail(s, off, "this '(' is not closed");
            else
                fail(s, s->off, "expected ')' here, found %s", show(s, s->off, b, sizeof b));
            return NULL;
        }
        next(s);
        return e;
    }
    case TK_NAME: {
        LexTok nm = s->name;
        const char *text = s->c->text;
        next(s);
        if (s->tk != '(') {
            for (unsigned i = 0; i < s->p->nargs; i++)
                if (lex_is(text, nm, s->p->args[i])) {
                    Expr *e = node(s, EX_ARG, off);
                    if (e)
                        e->fn = (uint8_t)i;
                    return e;
                }
            Expr *e = node(s, EX_NAME, off);
            if (e && !(e->v.name = str_intern(s->p->names, text + nm.off, nm.len))) {
                s->p->nomem = 1;
                fail(s, off, "out of memory");
                return NULL;
            }
            return e;
        }
        /* a call */
        int fn = -1;
        for (size_t i = 0; i < sizeof funcs / sizeof funcs[0]; i++)
            if (lex_is(text, nm, funcs[i].name)) {
                fn = (int)i;
                break;
            }
        size_t lp = s->off;
        next(s);
        Expr *args[MAX_ARGS];
        unsigned n = 0;
        uint32_t h = 0;
        if (s->tk != ')') {
            for (;;) {
                Expr *a = cond(s);
                if (!a)
                    return NULL;
                if (n == MAX_ARGS) {
                    fail(s, a->off, "a function takes at most %d arguments", MAX_ARGS);
                    return NULL;
                }
                args[n++] = a;
                if (a->height > h)
                    h = a->height;
                if (s->tk != ',')
                    break;
                next(s);
            }
        }
        if (s->tk != ')') {
            char b[16];
            if (s->tk == TK_END)
                fail(s, lp, "this '(' is not closed");
            else
                fail(s, s->off, "expected ',' or ')' here, found %s", show(s, s->off, b, sizeof b));
            return NULL;
        }
        next(s);
        if (fn >= 0 && (n < funcs[fn].min || n > funcs[fn].max)) {
            if (funcs[fn].min == funcs[fn].max)
                fail(s, off, "%s() takes %u argument%s, not %u", funcs[fn].name, funcs[fn].min,
                     funcs[fn].min == 1 ? "" : "s", n);
            else
                fail(s, off, "%s() takes %u to %u arguments, not %u", funcs[fn].name, funcs[fn].min,
                     funcs[fn].max, n);
            return NULL;
        }
        Expr *e = node(s, fn >= 0 ? EX_CALL : EX_UCALL, off);
        if (!e)
            return NULL;
        e->fn = (uint8_t)(fn >= 0 ? fn : 0);
        e->nargs = (uint8_t)n;
        e->height = h + 1;
        if (!check_height(s, e))
            return NULL;
        if (n && !(e->args = arena_array(s->p->arena, n, sizeof *e->args))) {
            s->p->nomem = 1;
            fail(s, off, "out of memory");
            return NULL;
        }
        if (n)
            memcpy(e->args, args, n * sizeof *args);
        if (fn < 0 && !(e->v.name = str_intern(s->p->names, text + nm.off, nm.len))) {
            s->p->nomem = 1;
            fail(s, off, "out of memory");
            return NULL;
        }
        if (fn >= 0)
            fold(e);
        return e;
    }
    case TK_END:
        fail(s, off, "the expression ends where a value is expected");
        return NULL;
    case TK_BAD:
        return NULL;
    default: {
        char b[16];
        fail(s, off, "unexpected %s in the expression", show(s, off, b, sizeof b));
        return NULL;
    }
    }
}

/* The right operand of ^: prefix operators bind to it, the chain stays left to right. */
static Expr *pow_rhs(P *s)
{
    if (s->tk == '-' || s->tk == '+' || s->tk == '!') {
        int t = s->tk;
        size_t off = s->off;
        next(s);
        Expr *a = pow_rhs(s);
        return t == '+' ? a : unop(s, t == '-' ? EX_NEG : EX_NOT, off, a);
    }
    return prim(s);
}

static Expr *power(P *s)
{
    Expr *e = prim(s);
    while (e && s->tk == TK_POW) {
        size_t off = s->off;
        next(s);
        e = binop(s, EX_POW, off, e, pow_rhs(s));
    }
    return e;
}

static Expr *unary(P *s)
{
    if (s->tk == '-' || s->tk == '+' || s->tk == '!') {
        int t = s->tk;
        size_t off = s->off;
        if (++s->depth > s->maxh) {
            fail(s, off, "the expression is nested too deeply (more than %u levels)", s->maxh);
            return NULL;
        }
        next(s);
        Expr *a = unary(s);
        s->depth--;
        return t == '+' ? a : unop(s, t == '-' ? EX_NEG : EX_NOT, off, a);
    }
    return power(s);
}

static Expr *mul(P *s)
{
    Expr *e = unary(s);
    while (e && (s->tk == '*' || s->tk == '/' || s->tk == '%')) {
        int op = s->tk == '*' ? EX_MUL : s->tk == '/' ? EX_DIV : EX_MOD;
        size_t off = s->off;
        next(s);
        e = binop(s, op, off, e, unary(s));
    }
    return e;
}

static Expr *add(P *s)
{
    Expr *e = mul(s);
    while (e && (s->tk == '+' || s->tk == '-')) {
        int op = s->tk == '+' ? EX_ADD : EX_SUB;
        size_t off = s->off;
        next(s);
        e = binop(s, op, off, e, mul(s));
    }
    return e;
}

static Expr *rel(P *s)
{
    Expr *e = add(s);
    while (e && (s->tk == '<' || s->tk == '>' || s->tk == TK_LE || s->tk == TK_GE)) {
        int op = s->tk == '<' ? EX_LT : s->tk == '>' ? EX_GT : s->tk == TK_LE ? EX_LE : EX_GE;
        size_t off = s->off;
        next(s);
        e = binop(s, op, off, e, add(s));
    }
    return e;
}

static Expr *eq(P *s)
{
    Expr *e = rel(s);
    while (e && (s->tk == TK_EQ || s->tk == TK_NE)) {
        int op = s->tk == TK_EQ ? EX_EQ : EX_NE;
        size_t off = s->off;
        next(s);
        e = binop(s, op, off, e, rel(s));
    }
    return e;
}

static Expr *and_(P *s)
{
    Expr *e = eq(s);
    while (e && s->tk == TK_AND) {
        size_t off = s->off;
        next(s);
        e = binop(s, EX_AND, off, e, eq(s));
    }
    return e;
}

static Expr *or_(P *s)
{
    Expr *e = and_(s);
    while (e && s->tk == TK_OR) {
        size_t off = s->off;
        next(s);
        e = binop(s, EX_OR, off, e, and_(s));
    }
    return e;
}

static Expr *cond(P *s)
{
    if (++s->depth > s->maxh) {
        fail(s, s->off, "the expression is nested too deeply (more than %u levels)", s->maxh);
        return NULL;
    }
    Expr *e = or_(s);
    if (e && s->tk == '?') {
        size_t off = s->off;
        next(s);
        Expr *a = cond(s);
        if (a && s->tk != ':') {
            fail(s, s->off, "expected ':' for the '?' of this condition");
            a = NULL;
        }
        Expr *b = NULL;
        if (a) {
            next(s);
            b = cond(s);
        }
        if (!a || !b) {
            s->depth--;
            return NULL;
        }
        Expr *t = node(s, EX_COND, off);
        if (t) {
            t->a = e;
            t->b = a;
            t->c = b;
            uint32_t h = e->height > a->height ? e->height : a->height;
            t->height = (h > b->height ? h : b->height) + 1;
            if (!check_height(s, t))
                t = NULL;
            else
                fold(t);
        }
        e = t;
    }
    s->depth--;
    return e;
}

/* Parse a whole expression up to s->closer (or the end of the cursor). */
static Expr *whole(P *s, size_t open_off)
{
    next(s);
    if (s->tk == TK_END) {
        if (s->closer && lex_cur_skip(s->c) == s->closer)
            fail(s, open_off, "the expression is empty");
        else if (s->closer)
            fail(s, open_off, "this '%c' is not closed", s->closer == '}' ? '{' : s->closer);
        else
            fail(s, open_off, "a value is missing here");
        return NULL;
    }
    Expr *e = cond(s);
    if (!e)
        return NULL;
    if (s->tk != TK_END) {
        if (s->tk == ')')
            fail(s, s->off, "this ')' has no matching '('");
        else {
            char b[16];
            fail(s, s->off, "unexpected %s after the end of the expression", show(s, s->off, b, sizeof b));
        }
        return NULL;
    }
    if (s->closer) {
        if (lex_cur_skip(s->c) != s->closer) {
            fail(s, open_off, "this '%c' is not closed", s->closer == '}' ? '{' : s->closer);
            return NULL;
        }
        lex_cur_adv(s->c);
    }
    return e;
}

static void init(P *s, ExprParser *p, LexCur *c, unsigned flags)
{
    memset(s, 0, sizeof *s);
    s->p = p;
    s->c = c;
    s->flags = flags;
    s->maxh = p->max_height ? p->max_height : EXPR_MAX_HEIGHT;
    p->err[0] = '\0';
    p->err_off = 0;
    p->nomem = 0;
}

Expr *expr_parse(ExprParser *p, LexCur *c, unsigned flags)
{
    P s;
    init(&s, p, c, flags);
    int ch = lex_cur_skip(c);
    size_t open = c->pos;
    if (!ch) {
        s.failed = 0;
        fail(&s, c->pos, "a value is missing here");
        return NULL;
    }
    if (ch == '{' || ch == '\'' || ch == '"') {
        lex_cur_adv(c);
        s.closer = ch == '{' ? '}' : ch;
        s.flags &= ~(unsigned)EXPR_SPICE_NUM;
        return whole(&s, open);
    }
    if (!(flags & EXPR_BARE)) {
        char b[16];
        fail(&s, c->pos, "expected an expression in braces or quotes, found %s", show(&s, c->pos, b, sizeof b));
        return NULL;
    }
    /* A bare value: the run of non-blank bytes on this physical line. */
    size_t e = c->pos;
    while (e < c->eol && c->text[e] != ' ' && c->text[e] != '\t' &&
           !((flags & EXPR_PARENS) && (c->text[e] == ')' || c->text[e] == ',')))
        e++;
    LexCur sub = {c->text, c->pos, e, e};
    s.c = &sub;
    Expr *r = whole(&s, open);
    c->pos = e;
    return r;
}

Expr *expr_parse_str(ExprParser *p, const char *str, size_t n)
{
    LexCur c;
    lex_cur_init_str(&c, str, n);
    P s;
    init(&s, p, &c, 0);
    return whole(&s, 0);
}

int expr_const(const Expr *e, double *v)
{
    if (e && e->op == EX_NUM) {
        *v = e->v.num;
        return 1;
    }
    return 0;
}

size_t expr_offset(const Expr *e)
{
    return e ? e->off : 0;
}

const char *expr_name(const Expr *e)
{
    return e && (e->op == EX_NAME || e->op == EX_UCALL) ? e->v.name : NULL;
}

int expr_mark_once(const Expr *e)
{
    if (!e || (e->flags & F_REPORTED))
        return 0;
    ((Expr *)e)->flags |= F_REPORTED; /* nodes are arena memory, never const objects */
    return 1;
}

/* ---- evaluation --------------------------------------------------------------------------- */

/* |a|^b, as ngspice's expression evaluator does for ^, ** and pwr. */
static double pwr(double a, double b)
{
    return pow(fabs(a), b);
}

static double eval_fn(int fn, const double *a)
{
    switch (fn) {
    case FN_SQRT: return sqrt(a[0]);
    case FN_EXP: return exp(a[0]);
    case FN_LOG:
    case FN_LN: return log(a[0]);
    case FN_LOG10: return log10(a[0]);
    case FN_ABS: return fabs(a[0]);
    case FN_SIN: return sin(a[0]);
    case FN_COS: return cos(a[0]);
    case FN_TAN: return tan(a[0]);
    case FN_ASIN: return asin(a[0]);
    case FN_ACOS: return acos(a[0]);
    case FN_ATAN: return atan(a[0]);
    case FN_SINH: return sinh(a[0]);
    case FN_COSH: return cosh(a[0]);
    case FN_TANH: return tanh(a[0]);
    case FN_ASINH: return asinh(a[0]);
    case FN_ACOSH: return acosh(a[0]);
    case FN_ATANH: return atanh(a[0]);
    case FN_FLOOR: return floor(a[0]);
    case FN_CEIL: return ceil(a[0]);
    case FN_INT: return trunc(a[0]);
    case FN_NINT: return nearbyint(a[0]);
    case FN_SGN: return a[0] > 0 ? 1.0 : a[0] < 0 ? -1.0 : 0.0;
    case FN_MIN: return a[0] < a[1] ? a[0] : a[1];
    case FN_MAX: return a[0] > a[1] ? a[0] : a[1];
    case FN_POW: return pow(a[0], a[1]);
    case FN_PWR: return pwr(a[0], a[1]);
    case FN_TERNARY: return a[0] != 0.0 ? a[1] : a[2];
    default: return a[0]; /* agauss gauss aunif unif limit: the nominal value */
    }
}

static double apply(int op, double a, double b)
{
    switch (op) {
    case EX_NEG: return -a;
    case EX_NOT: return a == 0.0;
    case EX_ADD: return a + b;
    case EX_SUB: return a - b;
    case EX_MUL: return a * b;
    case EX_DIV: return a / b;
    case EX_MOD: return fmod(a, b);
    case EX_POW: return pwr(a, b);
    case EX_EQ: return a == b;
    case EX_NE: return a != b;
    case EX_LT: return a < b;
    case EX_LE: return a <= b;
    case EX_GT: return a > b;
    case EX_GE: return a >= b;
    case EX_AND: return a != 0.0 && b != 0.0;
    case EX_OR: return a != 0.0 || b != 0.0;
    default: return NAN;
    }
}

/* Replace e by a literal when its operands are literals and the value is finite (a non-finite value
 * is left to the evaluator, which reports it where it is used). Returns 1 when folded. */
static int fold(Expr *e)
{
    double v;
    switch (e->op) {
    case EX_NEG:
    case EX_NOT:
        if (e->a->op != EX_NUM)
            return 0;
        v = apply(e->op, e->a->v.num, 0);
        break;
    case EX_COND:
        if (e->a->op != EX_NUM || e->b->op != EX_NUM || e->c->op != EX_NUM)
            return 0;
        v = e->a->v.num != 0.0 ? e->b->v.num : e->c->v.num;
        break;
    case EX_CALL: {
        double a[3] = {0, 0, 0};
        for (unsigned i = 0; i < e->nargs; i++) {
            if (e->args[i]->op != EX_NUM)
                return 0;
            if (i < 3)
                a[i] = e->args[i]->v.num;
        }
        v = eval_fn(e->fn, a);
        break;
    }
    default:
        if (e->op < EX_ADD || e->op > EX_OR || e->a->op != EX_NUM || e->b->op != EX_NUM)
            return 0;
        v = apply(e->op, e->a->v.num, e->b->v.num);
        break;
    }
    if (!isfinite(v))
        return 0;
    e->op = EX_NUM;
    e->v.num = v;
    e->height = 1;
    e->a = e->b = e->c = NULL;
    e->args = NULL;
    e->nargs = 0;
    return 1;
}

static int ev(const Expr *e, ExprEnv *env, const double *args, double *out, ExprErr *err);

static int bad(ExprErr *err, int code, const Expr *at, const char *name)
{
    err->code = code;
    err->at = at;
    err->name = name;
    return code;
}

static int finite_or_fail(double v, const Expr *e, double *out, ExprErr *err)
{
    if (!isfinite(v))
        return bad(err, EXPR_E_NONFINITE, e, NULL);
    *out = v;
    return EXPR_OK;
}

/* Evaluation recurses once per tree level (at most the parser's height limit, 200) within each
 * user-function call or parameter lookup (at most env->max_depth, 100, nested): about 20 000 nested
 * ev frames in the worst case. The calls keep their argument arrays in frames of their own
 * (NOINLINE), so that ev's frame stays small (64 bytes with gcc -O2) and that worst case takes about
 * 1.6 MB of the 8 MB stack; with the arrays in every frame fuzz_expr overflowed 8 MB under ASan. */
#if defined(__GNUC__)
#define NOINLINE __attribute__((noinline))
#else
#define NOINLINE
#endif
static int ev(const Expr *e, ExprEnv *env, const double *args, double *out, ExprErr *err);

static NOINLINE int ev_call(const Expr *e, ExprEnv *env, const double *args, double *out, ExprErr *err)
{
    double v[3] = {0, 0, 0};
    int rc;
    for (unsigned i = 0; i < e->nargs && i < 3; i++)
        if ((rc = ev(e->args[i], env, args, &v[i], err)) != EXPR_OK)
            return rc;
    return finite_or_fail(eval_fn(e->fn, v), e, out, err);
}

static NOINLINE int ev_ucall(const Expr *e, ExprEnv *env, const double *args, double *out, ExprErr *err)
{
    unsigned np = 0;
    const Expr *body = env && env->func ? env->func(env->ctx, e->v.name, &np) : NULL;
    if (!body)
        return bad(err, EXPR_E_UNDEF, e, e->v.name);
    if (np != e->nargs)
        return bad(err, EXPR_E_ARGS, e, e->v.name);
    double v[MAX_ARGS];
    int rc;
    for (unsigned i = 0; i < e->nargs; i++)
        if ((rc = ev(e->args[i], env, args, &v[i], err)) != EXPR_OK)
            return rc;
    unsigned max = env->max_depth ? env->max_depth : 100;
    if (++env->depth > max) {
        env->depth--;
        return bad(err, EXPR_E_DEPTH, e, e->v.name);
    }
    rc = ev(body, env, v, out, err);
    env->depth--;
    return rc;
}

static int ev(const Expr *e, ExprEnv *env, const double *args, double *out, ExprErr *err)
{
    double a, b;
    int rc;
    switch (e->op) {
    case EX_NUM:
        *out = e->v.num;
        return EXPR_OK;
    case EX_ARG:
        *out = args ? args[e->fn] : NAN;
        return EXPR_OK;
    case EX_NAME:
        if (!env || !env->lookup)
            return bad(err, EXPR_E_UNDEF, e, e->v.name);
        rc = env->lookup(env->ctx, env, e, e->v.name, out, err);
        if (rc == EXPR_E_UNDEF)
            return bad(err, EXPR_E_UNDEF, e, e->v.name);
        return rc;
    case EX_NEG:
    case EX_NOT:
        if ((rc = ev(e->a, env, args, &a, err)) != EXPR_OK)
            return rc;
        *out = apply(e->op, a, 0);
        return EXPR_OK;
    case EX_AND:
    case EX_OR:
        if ((rc = ev(e->a, env, args, &a, err)) != EXPR_OK)
            return rc;
        if ((e->op == EX_AND) == (a == 0.0)) {
            *out = e->op == EX_OR; /* decided by the left operand */
            return EXPR_OK;
        }
        if ((rc = ev(e->b, env, args, &b, err)) != EXPR_OK)
            return rc;
        *out = b != 0.0;
        return EXPR_OK;
    case EX_COND:
        if ((rc = ev(e->a, env, args, &a, err)) != EXPR_OK)
            return rc;
        return ev(a != 0.0 ? e->b : e->c, env, args, out, err);
    case EX_CALL:
        return ev_call(e, env, args, out, err);
    case EX_UCALL:
        return ev_ucall(e, env, args, out, err);
    default:
        if ((rc = ev(e->a, env, args, &a, err)) != EXPR_OK || (rc = ev(e->b, env, args, &b, err)) != EXPR_OK)
            return rc;
        return finite_or_fail(apply(e->op, a, b), e, out, err);
    }
}

int expr_eval(const Expr *e, ExprEnv *env, double *out, ExprErr *err)
{
    if (e->op == EX_NUM) {
        *out = e->v.num;
        return EXPR_OK;
    }
    unsigned max = env && env->max_depth ? env->max_depth : 100;
    if (env && ++env->depth > max) {
        env->depth--;
        return bad(err, EXPR_E_DEPTH, e, NULL);
    }
    int rc = ev(e, env, NULL, out, err);
    if (env)
        env->depth--;
    return rc;
}

const char *expr_strerror(const ExprErr *err, char *buf, size_t n)
{
    switch (err->code) {
    case EXPR_E_UNDEF:
        if (err->at && err->at->op == EX_UCALL)
            snprintf(buf, n, "unknown function '%s'", err->name ? err->name : "?");
        else
            snprintf(buf, n, "undefined parameter '%s'", err->name ? err->name : "?");
        return buf;
    case EXPR_E_NONFINITE:
        return "the value is not a finite number (division by zero, or outside the domain of a function)";
    case EXPR_E_ARGS:
        snprintf(buf, n, "function '%s' is called with the wrong number of arguments", err->name ? err->name : "?");
        return buf;
    case EXPR_E_DEPTH:
        return "evaluation nested too deeply (a recursive .func or a parameter chain of more than 100 levels)";
    case EXPR_E_CYCLE:
        snprintf(buf, n, "parameter '%s' depends on itself", err->name ? err->name : "?");
        return buf;
    case EXPR_E_FAILED:
        return "a parameter it uses could not be evaluated";
    default:
        return "no error";
    }
}
