/* expr: parameter expressions as ngspice reads them: `{...}` and '...' expressions and bare values,
 * parsed once into a tree in an arena and evaluated many times (once per subcircuit instance) against
 * a caller-supplied parameter scope. Called by netlist.c (parsing) and flatten.c (evaluation).
 *
 * Grammar, lowest precedence first (checked against ngspice 39 where marked):
 *   cond   := or [ '?' cond ':' cond ]
 *   or     := and { '||' and }
 *   and    := eq { '&&' eq }
 *   eq     := rel { ('==' | '!=') rel }
 *   rel    := add { ('<' | '<=' | '>' | '>=') add }
 *   add    := mul { ('+' | '-') mul }
 *   mul    := unary { ('*' | '/' | '%') unary }
 *   unary  := ('-' | '+' | '!') unary | pow
 *   pow    := prim { ('^' | '**') {'-' | '+' | '!'} prim }   left to right: 2^3^2 = 64 (ngspice)
 *   prim   := number | name | name '(' [cond {',' cond}] ')' | '(' cond ')'
 * `-2^2` is -4 and `2^-1` is 0.5 (ngspice). `a^b` and pwr(a,b) are |a|^b, pow(a,b) is C pow
 * (ngspice: (-2)^3 = 8, pwr(-2,3) = 8, pow(-2,3) = -8). log and ln are natural logarithms, log10 is
 * base 10 (ngspice: log(100) = 4.60517). nint rounds half to even (nint(2.5) = 2). There are no
 * built-in constants: ngspice 39 has no `pi` or `e` in .param expressions either.
 * The statistical functions agauss, gauss, aunif, unif and limit give their nominal value (the first
 * argument); ngspice draws a random number. */
#ifndef EXPR_H
#define EXPR_H

#include <stddef.h>

#include "arena.h"
#include "lex.h"
#include "strtab.h"

typedef struct Expr Expr; /* a node; the tree lives in the parser's arena */

#define EXPR_MAX_HEIGHT 200 /* deepest tree a parse accepts (nesting and chained operators) */

typedef struct {
    Arena *arena;            /* nodes (borrowed) */
    StrTab *names;           /* parameter and function names are interned here (borrowed) */
    const char *const *args; /* interned parameter names of the .func body being parsed, or NULL */
    unsigned nargs;
    unsigned max_height;     /* 0: EXPR_MAX_HEIGHT */
    /* after a failed parse: */
    size_t err_off;          /* byte offset (in the cursor's text) of the token at fault */
    char err[160];           /* what is wrong, one sentence without location */
    int nomem;               /* the arena ran out of memory */
} ExprParser;

#define EXPR_BARE 1u       /* a value that is not in braces or quotes runs to the next blank */
#define EXPR_SPICE_NUM 2u  /* bare numbers follow element-card rules (LEX_NUM_SPICE: mil = 25.4u) */
#define EXPR_PARENS 4u     /* a bare value also ends at ')' or ',' (.model cards) */

/* Parse one value at the cursor (after blanks): `{expr}` (may continue over `+` lines), 'expr',
 * "expr", or with EXPR_BARE a bare token such as 1.2u, wp*2 or -w. Constant subtrees are folded.
 * Returns the tree, or NULL with p->err and p->err_off set (or p->nomem). The cursor is left after
 * the value. */
Expr *expr_parse(ExprParser *p, LexCur *c, unsigned flags);

/* Parse the whole of s[0..n) as an expression (no braces needed); for tests and command lines. */
Expr *expr_parse_str(ExprParser *p, const char *s, size_t n);

/* A literal number: 1 with *v set when e is a constant (a literal or folded), else 0. */
int expr_const(const Expr *e, double *v);

/* Byte offset of the token e stands for (its operator, name or number). */
size_t expr_offset(const Expr *e);

/* The name of a parameter reference or user function call node, else NULL. */
const char *expr_name(const Expr *e);

/* Marks e as reported; 1 the first time, 0 after. Lets a caller report an error at a node once, however
 * many instances evaluate it. */
int expr_mark_once(const Expr *e);

enum {
    EXPR_OK = 0,
    EXPR_E_UNDEF,     /* a parameter or function name is not defined (err->name) */
    EXPR_E_NONFINITE, /* the value is infinite or not a number (division by 0, sqrt(-1), log(0)) */
    EXPR_E_ARGS,      /* a user function called with the wrong number of arguments */
    EXPR_E_DEPTH,     /* evaluation nested too deeply (recursive .func or a parameter chain) */
    EXPR_E_FAILED,    /* a parameter failed and was reported already; no new diagnostic */
    EXPR_E_CYCLE,     /* a parameter depends on itself (err->name) */
};

typedef struct {
    int code;
    const Expr *at;   /* node at fault */
    const char *name; /* interned name for EXPR_E_UNDEF, EXPR_E_CYCLE */
} ExprErr;

typedef struct ExprEnv ExprEnv;
struct ExprEnv {
    /* The value of parameter `name` (interned): EXPR_OK with *out set, EXPR_E_UNDEF when there is no
     * such parameter, or another code with *err filled. `at` is the referring node. */
    int (*lookup)(void *ctx, ExprEnv *env, const Expr *at, const char *name, double *out, ExprErr *err);
    /* The body of user function `name` and its parameter count, or NULL when there is none. */
    const Expr *(*func)(void *ctx, const char *name, unsigned *nparams);
    void *ctx;
    unsigned depth;     /* current nesting of evaluations (kept by expr_eval) */
    unsigned max_depth; /* 0: 100 */
};

/* Evaluate e. EXPR_OK with *out set, else a code with *err filled (err->at non-NULL). */
int expr_eval(const Expr *e, ExprEnv *env, double *out, ExprErr *err);

/* A sentence for an evaluation error (static text, or written into buf). */
const char *expr_strerror(const ExprErr *err, char *buf, size_t n);

#endif
