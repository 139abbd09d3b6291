/* rules: the biaslint rule language (documented in rules/defaults.rules and the README) read into a
 * RuleSet: region boundaries and slope factor per device type and model, the setting of each check,
 * and the statements of intent (`sized`, `matched`, `waive`) with their compiled selectors. The CLI
 * loads the compiled-in defaults, then the rule file beside the netlist, then the user's files; join
 * asks for a device's bands, check for a check's setting and the statements. intent.c parses the
 * intents written in netlist comments with rule_parse_inline, in the same requirement syntax.
 *
 * A file is read line by line; a line is split into words at blanks, `,` is a word of its own, a
 * `:` that ends a word is one too, `/.../` is a regular expression, `#` starts a comment. Each
 * statement is parsed whole before anything is applied, and a file with any error changes nothing. */
#include "rules.h"

#define PCRE2_CODE_UNIT_WIDTH 8
#include <ctype.h>
#include <math.h>
#include <pcre2.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>

#include "buf.h"
#include "defaults_rules.h"
#include "source.h"

const char *const rule_severity_name[SEV_COUNT] = {"info", "warning", "error"};

/* ORDER CHECK */
const char *const rule_check_name[CHECK_COUNT] = {
    "sat-margin", "triode", "off", "gain", "no-data", "gm/id", "region", "ft", "ic", "id", "vov",
    "match-vgs", "match-gmid", "match-ratio", "match-vds", "waiver"};

typedef enum { U_NONE_ALLOWED, U_VOLT, U_PER_VOLT, U_AMP_SQ, U_RATIO, U_AMP, U_HZ, U_PLAIN, U_PERCENT } UnitKind;

/* What a `check` statement's limit is: none, a minimum or a maximum, and its unit. ORDER CHECK */
enum { LIM_NONE, LIM_MIN, LIM_MAX };
static const int check_limit[CHECK_COUNT] = {LIM_MIN, LIM_NONE, LIM_NONE, LIM_MIN, LIM_NONE, LIM_NONE,
                                             LIM_NONE, LIM_NONE, LIM_NONE, LIM_NONE, LIM_NONE, LIM_MAX,
                                             LIM_MAX, LIM_MAX, LIM_MAX, LIM_NONE};
static const UnitKind check_unit[CHECK_COUNT] = {U_VOLT, U_NONE_ALLOWED, U_NONE_ALLOWED, U_RATIO, U_NONE_ALLOWED,
                                                 U_NONE_ALLOWED, U_NONE_ALLOWED, U_NONE_ALLOWED, U_NONE_ALLOWED,
                                                 U_NONE_ALLOWED, U_NONE_ALLOWED, U_VOLT, U_PERCENT, U_PERCENT,
                                                 U_VOLT, U_NONE_ALLOWED};

/* Keywords of a `regions` statement, ORDER BANDFIELD. */
static const char *const band_word[BAND_NFIELDS] = {"strong-below", "weak-above", "off-below", "slope-factor"};
static const UnitKind band_unit[BAND_NFIELDS] = {U_PER_VOLT, U_PER_VOLT, U_AMP_SQ, U_PLAIN};

/* One `regions` statement as written. */
typedef struct {
    MosType type;                /* MOS_UNKNOWN: every type */
    const char *model;           /* NULL: every model; arena copy, lower case */
    double v[BAND_NFIELDS];
    unsigned set;                /* bit f: field f given */
    uint32_t col[BAND_NFIELDS];  /* column of each value, for diagnostics */
    RuleOrigin from;
    int reported;                /* a conflict was already reported against it */
} BandStmt;

/* One `check` statement as written. */
enum { CS_LIMIT = 1, CS_SEV = 2, CS_IGNORE = 4 };
typedef struct {
    CheckId id;
    unsigned set;                /* CS_* bits */
    double limit;
    Severity sev;
    RuleOrigin from;
} CheckStmt;

#define NTYPES 3 /* MOS_UNKNOWN, MOS_NMOS, MOS_PMOS as table columns */

/* A name pattern of a selector. */
enum { PAT_LITERAL, PAT_GLOB, PAT_REGEX };
typedef struct {
    const char *text;            /* lower-case name or glob; the regex source for PAT_REGEX */
    int kind;
    pcre2_code *re;              /* PAT_REGEX: compiled once, JIT when available */
    uint32_t col;
} Pattern;

struct RuleSel {
    int has_type;
    MosType type;
    const char *model;           /* glob, lower case; NULL: any */
    const char *cell;            /* glob, lower case; NULL: any */
    Pattern *pats;               /* OR; none: any name */
    size_t npats;
    const char **listed;         /* the names when all are written out in full */
    SrcLoc loc;                  /* the first selector word */
};

struct RuleMatcher {
    pcre2_match_data *md;
    pcre2_match_context *mc;
};

struct RuleSet {
    Arena arena;                 /* file names, model names, selectors, requirements, reasons */
    CheckRule checks[CHECK_COUNT];
    BandStmt *stmts;             /* every regions statement, in load order; malloc'd */
    size_t nstmts, stmts_cap;
    const char **models;         /* distinct models named by statements, sorted; malloc'd */
    size_t nmodels;
    BandRule *table;             /* (nmodels+1) x NTYPES resolved bands; row 0: any other model */
    RuleSized *sized;            /* statements of intent in load order; malloc'd */
    size_t nsized, sized_cap;
    RuleGroup *groups;
    size_t ngroups, groups_cap;
    RuleWaiver *waivers;
    size_t nwaivers, waivers_cap;
    pcre2_code **codes;          /* every compiled pattern, freed with the set */
    size_t ncodes, codes_cap;
    RuleStatements view;
};

/* ---- lines and words ---- */

enum { TK_WORD, TK_COMMA, TK_COLON, TK_REGEX, TK_GE, TK_LE, TK_PM, TK_RANGE };

typedef struct {
    const char *s;
    size_t n;
    uint32_t col;
    int kind;
} Tok;

typedef struct {
    RuleSet *rs;                 /* NULL when parsing an inline statement */
    Arena *arena;                /* where statements are allocated */
    DiagList *d;
    const char *name;            /* origin file name */
    const char *line;            /* current physical line, without its line ending */
    size_t line_len;
    uint32_t lineno;
    Tok *toks;                   /* the words of the line */
    size_t ntoks, toks_cap;
    Tok *ft;                     /* the finer words of one requirement */
    size_t nft, ft_cap;
    Req *reqs;                   /* requirements of the statement being read */
    size_t nreqs, reqs_cap;
    Buf scratch;                 /* number text for strtod; message text */
    BandStmt *nb;                /* statements of this file, applied only when it has no error */
    size_t nnb, nb_cap;
    CheckStmt *nc;
    size_t nnc, nc_cap;
    RuleSized *nsz;
    size_t nnsz, nsz_cap;
    RuleGroup *ngr;
    size_t nngr, ngr_cap;
    RuleWaiver *nwv;
    size_t nnwv, nwv_cap;
    pcre2_code **codes;          /* patterns compiled while reading this file */
    size_t ncodes, codes_cap;
    int nerr;
    int oom;
} Parser;

static void perr(Parser *p, uint32_t col, uint32_t span, const char *fmt, ...) PRINTF_LIKE(4, 5);

static void perr(Parser *p, uint32_t col, uint32_t span, const char *fmt, ...)
{
    p->nerr++;
    buf_clear(&p->scratch);
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&p->scratch, fmt, ap);
    va_end(ap);
    if (rc != ERR_OK) {
        p->oom = 1;
        diag_nomem(p->d);
        return;
    }
    SrcLoc loc = {p->name, p->lineno, col};
    if (diag_add_excerpt(p->d, DIAG_ERROR, loc, p->line, p->line_len, span ? span : 1, "%s",
                         p->scratch.data) == ERR_NOMEM)
        p->oom = 1;
}

static void nomem(Parser *p)
{
    if (!p->oom) {
        p->oom = 1;
        diag_nomem(p->d);
    }
}

static uint32_t span_of(const Tok *t)
{
    return t->n > UINT32_MAX ? UINT32_MAX : (uint32_t)t->n;
}

static int same_ci(const char *s, size_t n, const char *w)
{
    size_t wn = strlen(w);
    return n == wn && strncasecmp(s, w, n) == 0;
}

static int is_word(const Tok *t, const char *kw)
{
    return t->kind == TK_WORD && same_ci(t->s, t->n, kw);
}

static int is_blank(unsigned char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v';
}

static int push_tok(Parser *p, Tok **arr, size_t *n, size_t *cap, Tok t)
{
    if (BUF_PUSH(*arr, *n, *cap, t) != ERR_OK) {
        nomem(p);
        return -1;
    }
    return 0;
}

/* Splits the current line from byte `from` into p->toks. 0 on success; -1 after reporting a
 * control character. A word that starts with '/' and, up to the next blank, ends with an unescaped
 * '/' (before any ',' or ':' closing it) is a regular expression and may hold '#' and ','. */
static int split(Parser *p, size_t from)
{
    p->ntoks = 0;
    size_t i = from, n = p->line_len;
    const char *l = p->line;
    while (i < n) {
        unsigned char c = (unsigned char)l[i];
        if (is_blank(c)) {
            i++;
            continue;
        }
        if (c == '#')
            break;
        if (c == ',') {
            if (push_tok(p, &p->toks, &p->ntoks, &p->toks_cap, (Tok){l + i, 1, (uint32_t)(i + 1), TK_COMMA}))
                return -1;
            i++;
            continue;
        }
        size_t start = i;
        if (c == '/') {
            size_t e = i;
            while (e < n && !is_blank((unsigned char)l[e]))
                e++;
            size_t close = e;
            while (close > i + 1 && (l[close - 1] == ',' || l[close - 1] == ':'))
                close--;
            if (close - i >= 3 && l[close - 1] == '/' && l[close - 2] != '\\') {
                for (size_t k = i; k < close; k++)
                    if ((unsigned char)l[k] < 0x20 || l[k] == 0x7f) {
                        perr(p, (uint32_t)(k + 1), 1, "unexpected control character 0x%02x", (unsigned char)l[k]);
                        return -1;
                    }
                if (push_tok(p, &p->toks, &p->ntoks, &p->toks_cap,
                             (Tok){l + i, close - i, (uint32_t)(i + 1), TK_REGEX}))
                    return -1;
                i = close;
                continue;
            }
        }
        while (i < n) {
            c = (unsigned char)l[i];
            if (is_blank(c) || c == '#' || c == ',')
                break;
            if (c < 0x20 || c == 0x7f) {
                perr(p, (uint32_t)(i + 1), 1, "unexpected control character 0x%02x", c);
                return -1;
            }
            i++;
        }
        size_t len = i - start;
        int colon = len > 0 && l[start + len - 1] == ':';
        if (colon && len > 1 &&
            push_tok(p, &p->toks, &p->ntoks, &p->toks_cap, (Tok){l + start, len - 1, (uint32_t)(start + 1), TK_WORD}))
            return -1;
        Tok t = colon ? (Tok){l + start + len - 1, 1, (uint32_t)(start + len), TK_COLON}
                      : (Tok){l + start, len, (uint32_t)(start + 1), TK_WORD};
        if (push_tok(p, &p->toks, &p->ntoks, &p->toks_cap, t))
            return -1;
    }
    return 0;
}

/* The operator at l[i..n), if any: its kind and length (0 when none). */
static size_t op_at(const char *l, size_t i, size_t n, int *kind)
{
    const unsigned char *u = (const unsigned char *)l;
    size_t left = n - i;
    if (left >= 2 && ((l[i] == '>' && l[i + 1] == '=') || (l[i] == '=' && l[i + 1] == '>'))) {
        *kind = TK_GE;
        return 2;
    }
    if (left >= 2 && ((l[i] == '<' && l[i + 1] == '=') || (l[i] == '=' && l[i + 1] == '<'))) {
        *kind = TK_LE;
        return 2;
    }
    if (l[i] == '>' || l[i] == '<') {
        *kind = l[i] == '>' ? TK_GE : TK_LE;
        return 1;
    }
    if (left >= 3 && u[i] == 0xe2 && u[i + 1] == 0x89 && (u[i + 2] == 0xa5 || u[i + 2] == 0xa4)) { /* U+2265/4 */
        *kind = u[i + 2] == 0xa5 ? TK_GE : TK_LE;
        return 3;
    }
    if (left >= 3 && l[i] == '+' && l[i + 1] == '/' && l[i + 2] == '-') {
        *kind = TK_PM;
        return 3;
    }
    if (left >= 2 && l[i] == '+' && l[i + 1] == '-') {
        *kind = TK_PM;
        return 2;
    }
    if (left >= 2 && u[i] == 0xc2 && u[i + 1] == 0xb1) { /* U+00B1 plus-minus */
        *kind = TK_PM;
        return 2;
    }
    if (left >= 2 && l[i] == '.' && l[i + 1] == '.') {
        *kind = TK_RANGE;
        return 2;
    }
    if (l[i] == '%') {
        *kind = TK_WORD;
        return 1;
    }
    return 0;
}

/* The finer words of line[a..b) into p->ft: operators (>= <= +- ..) and '%' apart from numbers. */
static int split_fine(Parser *p, size_t a, size_t b)
{
    p->nft = 0;
    const char *l = p->line;
    size_t i = a;
    while (i < b) {
        if (is_blank((unsigned char)l[i])) {
            i++;
            continue;
        }
        int kind;
        size_t k = op_at(l, i, b, &kind);
        if (k) {
            if (push_tok(p, &p->ft, &p->nft, &p->ft_cap, (Tok){l + i, k, (uint32_t)(i + 1), kind}))
                return -1;
            i += k;
            continue;
        }
        size_t s = i;
        while (i < b && !is_blank((unsigned char)l[i]) && !op_at(l, i, b, &kind))
            i++;
        if (push_tok(p, &p->ft, &p->nft, &p->ft_cap, (Tok){l + s, i - s, (uint32_t)(s + 1), TK_WORD}))
            return -1;
    }
    return 0;
}

/* ---- numbers: 50mV, 12/V, 100pA, 1e-10, 10, 5%, 1.2GHz ---- */

static const char *unit_words(UnitKind k)
{
    switch (k) {
    case U_VOLT: return "V";
    case U_PER_VOLT: return "/V";
    case U_AMP_SQ: return "A";
    case U_AMP: return "A";
    case U_HZ: return "Hz";
    case U_RATIO: return "V/V";
    case U_PERCENT: return "%";
    default: return "";
    }
}

static const char *unit_example(UnitKind k)
{
    switch (k) {
    case U_VOLT: return "50mV";
    case U_PER_VOLT: return "12/V";
    case U_AMP_SQ: return "100pA";
    case U_AMP: return "10uA";
    case U_HZ: return "1GHz";
    case U_PERCENT: return "5%";
    case U_PLAIN: return "1.3";
    default: return "10";
    }
}

/* s[0..n) is a unit accepted for kind k. */
static int is_unit(UnitKind k, const char *s, size_t n)
{
    switch (k) {
    case U_VOLT: return same_ci(s, n, "V");
    case U_PER_VOLT: return same_ci(s, n, "/V") || same_ci(s, n, "1/V") || same_ci(s, n, "S/A");
    case U_AMP_SQ: return same_ci(s, n, "A") || same_ci(s, n, "A/sq");
    case U_AMP: return same_ci(s, n, "A");
    case U_HZ: return same_ci(s, n, "Hz");
    case U_RATIO: return same_ci(s, n, "V/V");
    case U_PERCENT: return n == 1 && s[0] == '%';
    default: return 0;
    }
}

/* An SI scale suffix at the start of s[0..n): its length and *scale, 0 when none. Sets *ambiguous
 * for a bare upper-case M, which SPICE reads as milli and SI as mega. */
static size_t suffix(const char *s, size_t n, double *scale, int *ambiguous)
{
    *ambiguous = 0;
    if (n == 0)
        return 0;
    if (n >= 3 && strncasecmp(s, "meg", 3) == 0) {
        *scale = 1e6;
        return 3;
    }
    if (n >= 2 && (unsigned char)s[0] == 0xc2 && (unsigned char)s[1] == 0xb5) { /* U+00B5 micro */
        *scale = 1e-6;
        return 2;
    }
    if (n >= 2 && (unsigned char)s[0] == 0xce && (unsigned char)s[1] == 0xbc) { /* U+03BC mu */
        *scale = 1e-6;
        return 2;
    }
    switch (s[0]) {
    case 'f': case 'F': *scale = 1e-15; return 1;
    case 'p': case 'P': *scale = 1e-12; return 1;
    case 'n': case 'N': *scale = 1e-9; return 1;
    case 'u': case 'U': *scale = 1e-6; return 1;
    case 'm': *scale = 1e-3; return 1;
    case 'M': *ambiguous = 1; return 1;
    case 'k': case 'K': *scale = 1e3; return 1;
    case 'g': case 'G': *scale = 1e9; return 1;
    case 't': case 'T': *scale = 1e12; return 1;
    default: return 0;
    }
}

/* Reads "[suffix][unit]" in s[0..n) for kind k; need_unit: a unit must be there. 0 and *scale on
 * success (*had_unit: a unit was written); else the offset of the bad part plus one, negated (for
 * the column of the error). Percent takes no scale suffix. */
static long read_tail(UnitKind k, const char *s, size_t n, int need_unit, double *scale, int *ambiguous, int *had_unit)
{
    *scale = 1.0;
    *ambiguous = 0;
    *had_unit = 0;
    if (n == 0)
        return need_unit ? -1 : 0;
    if (is_unit(k, s, n)) { /* the unit alone comes first: "1A" is one ampere */
        *had_unit = 1;
        return 0;
    }
    if (k == U_PERCENT)
        return -1;
    /* a transit frequency is never in millihertz: MHz is megahertz */
    if (k == U_HZ && n == 3 && s[0] == 'M' && same_ci(s + 1, 2, "Hz")) {
        *scale = 1e6;
        *had_unit = 1;
        return 0;
    }
    size_t sl = suffix(s, n, scale, ambiguous);
    if (*ambiguous)
        return -1;
    if (sl == 0)
        return -1;
    if (sl == n)
        return need_unit ? -1 : 0;
    if (is_unit(k, s + sl, n - sl)) {
        *had_unit = 1;
        return 0;
    }
    return -(long)(sl + 1);
}

/* Parses the quantity at toks[*i] (and a unit written as the next word, as in "50 mV"), for a slot
 * of kind k; advances *i past what it used. A percentage is returned as a fraction (5% -> 0.05).
 * 0 on success, -1 after reporting. */
static int read_qty(Parser *p, const Tok *toks, size_t ntoks, size_t *i, UnitKind k, const char *what, double *out)
{
    const Tok *t = &toks[*i];
    size_t j = 0, n = t->n;
    const char *s = t->s;
    if (t->kind == TK_WORD && j < n && (s[j] == '+' || s[j] == '-'))
        j++;
    size_t digits = 0;
    while (j < n && s[j] >= '0' && s[j] <= '9')
        j++, digits++;
    if (j < n && s[j] == '.') {
        j++;
        while (j < n && s[j] >= '0' && s[j] <= '9')
            j++, digits++;
    }
    if (t->kind != TK_WORD || digits == 0) {
        perr(p, t->col, span_of(t), "bad number '%.*s' for %s: write a number such as %s", (int)t->n, t->s, what,
             unit_example(k));
        return -1;
    }
    if (j < n && (s[j] == 'e' || s[j] == 'E')) {
        size_t e = j + 1;
        if (e < n && (s[e] == '+' || s[e] == '-'))
            e++;
        size_t ed = e;
        while (e < n && s[e] >= '0' && s[e] <= '9')
            e++;
        if (e > ed)
            j = e; /* else the 'e' is not an exponent: read_tail rejects it */
    }
    buf_clear(&p->scratch);
    if (buf_append(&p->scratch, s, j) != ERR_OK) {
        nomem(p);
        return -1;
    }
    double v = strtod(p->scratch.data, NULL);
    double scale;
    int ambiguous, had_unit;
    long bad = read_tail(k, s + j, n - j, 0, &scale, &ambiguous, &had_unit);
    if (bad < 0) {
        size_t at = j + (size_t)(-bad) - 1;
        uint32_t col = t->col + (uint32_t)at;
        uint32_t sp = (uint32_t)(n - at);
        if (ambiguous)
            perr(p, col, 1, "'M' in '%.*s' is ambiguous (SPICE reads milli, SI reads mega): write 'm' or 'meg'",
                 (int)t->n, t->s);
        else if (k == U_PERCENT)
            perr(p, col, sp, "bad number '%.*s' for %s: write a percentage such as 5%%", (int)t->n, t->s, what);
        else if (k == U_RATIO || k == U_NONE_ALLOWED || k == U_PLAIN)
            perr(p, col, sp, "bad number '%.*s' for %s: '%.*s' is not an SI suffix (f p n u m k meg g t)",
                 (int)t->n, t->s, what, (int)(n - at), s + at);
        else
            perr(p, col, sp,
                 "bad number '%.*s' for %s: '%.*s' is neither an SI suffix (f p n u m k meg g t) nor the "
                 "unit %s",
                 (int)t->n, t->s, what, (int)(n - at), s + at, unit_words(k));
        return -1;
    }
    (*i)++;
    /* "50 mV", "5 %": a unit (with or without a suffix) written as its own word */
    if (!had_unit && *i < ntoks && toks[*i].kind == TK_WORD) {
        const Tok *u = &toks[*i];
        double us;
        int amb, hu;
        if ((j == n || is_unit(k, u->s, u->n)) && read_tail(k, u->s, u->n, 1, &us, &amb, &hu) == 0 &&
            (j == n || us == 1.0)) {
            if (j == n)
                scale = us;
            had_unit = 1;
            (*i)++;
        }
    }
    if (k == U_PERCENT && !had_unit) {
        perr(p, t->col, span_of(t), "%s is a percentage: write it with %%, such as %s", what, unit_example(k));
        return -1;
    }
    v *= scale;
    if (k == U_PERCENT)
        v /= 100.0;
    if (!isfinite(v)) {
        perr(p, t->col, span_of(t), "number '%.*s' is out of range", (int)t->n, t->s);
        return -1;
    }
    *out = v;
    return 0;
}

static int read_quantity(Parser *p, size_t *i, UnitKind k, const char *what, double *out)
{
    return read_qty(p, p->toks, p->ntoks, i, k, what, out);
}

/* ---- selectors ---- */

int rule_glob(const char *pat, const char *s)
{
    const char *star = NULL, *resume = NULL;
    while (*s) {
        if (*pat == '*') {
            star = ++pat;
            resume = s;
            continue;
        }
        int ok = 0;
        const char *next = pat + 1;
        if (*pat == '?') {
            ok = 1;
        } else if (*pat == '[') {
            const char *q = pat + 1;
            int neg = *q == '!' || *q == '^';
            if (neg)
                q++;
            int hit = 0;
            const char *first = q;
            while (*q && (*q != ']' || q == first)) {
                unsigned char lo = (unsigned char)tolower((unsigned char)*q), hi = lo;
                if (q[1] == '-' && q[2] && q[2] != ']') {
                    hi = (unsigned char)tolower((unsigned char)q[2]);
                    q += 2;
                }
                unsigned char c = (unsigned char)tolower((unsigned char)*s);
                if (c >= lo && c <= hi)
                    hit = 1;
                q++;
            }
            if (*q == ']') {
                ok = hit != neg;
                next = q + 1;
            } else {
                ok = *s == '['; /* an unclosed '[' is itself */
            }
        } else if (*pat) {
            ok = tolower((unsigned char)*pat) == tolower((unsigned char)*s);
        }
        if (ok) {
            pat = next;
            s++;
        } else if (star) {
            pat = star;
            s = ++resume;
        } else {
            return 0;
        }
    }
    while (*pat == '*')
        pat++;
    return *pat == '\0';
}

static char *lower_dup(Parser *p, const char *s, size_t n)
{
    char *c = arena_strndup(p->arena, s, n);
    if (!c) {
        nomem(p);
        return NULL;
    }
    for (char *q = c; *q; q++)
        *q = (char)tolower((unsigned char)*q);
    return c;
}

static int has_wild(const char *s)
{
    return strpbrk(s, "*?[") != NULL;
}

static int compile_regex(Parser *p, const Tok *t, Pattern *pat)
{
    const char *src = t->s + 1;
    size_t n = t->n - 2;
    int err;
    PCRE2_SIZE off;
    pcre2_code *re = pcre2_compile((PCRE2_SPTR)src, n, PCRE2_CASELESS, &err, &off, NULL);
    if (!re) {
        PCRE2_UCHAR msg[256];
        if (pcre2_get_error_message(err, msg, sizeof msg) < 0)
            snprintf((char *)msg, sizeof msg, "error %d", err);
        perr(p, t->col + 1 + (uint32_t)(off < n ? off : n), 1, "bad regular expression '%.*s': %s (at offset %zu)",
             (int)t->n, t->s, (const char *)msg, (size_t)off);
        return -1;
    }
    (void)pcre2_jit_compile(re, PCRE2_JIT_COMPLETE); /* without JIT the interpreter runs it */
    if (BUF_PUSH(p->codes, p->ncodes, p->codes_cap, re) != ERR_OK) {
        pcre2_code_free(re);
        nomem(p);
        return -1;
    }
    char *text = arena_strndup(p->arena, src, n);
    if (!text) {
        nomem(p);
        return -1;
    }
    *pat = (Pattern){text, PAT_REGEX, re, t->col};
    return 0;
}

static int limit_word(const Tok *t)
{
    return is_word(t, "ratio") || is_word(t, "vgs") || is_word(t, "vds") || is_word(t, "gm/id");
}

/* SELECTOR := (NAME | /REGEX/ | name NAME | model NAME | cell NAME | nmos | pmos | all)...
 * read from p->toks[*i] up to the separator (a ':' word, or `for:` when for_sep). need_sep: a
 * statement without one is an error. On success *sel is arena-allocated and *i is past the
 * separator (or at the end of the line). */
static int parse_selector(Parser *p, size_t *i, int for_sep, int need_sep, const char *stmt, const RuleSel **out)
{
    RuleSel *s = arena_zalloc(p->arena, sizeof *s);
    Pattern *pats = NULL;
    size_t np = 0, pcap = 0;
    if (!s) {
        nomem(p);
        return -1;
    }
    const Tok *kw = &p->toks[0];
    int any = 0, sep = 0, rc = -1;
    size_t k = *i;
    for (; k < p->ntoks; k++) {
        const Tok *t = &p->toks[k];
        if (t->kind == TK_COLON) {
            sep = 1;
            k++;
            break;
        }
        if (for_sep && is_word(t, "for") && k + 1 < p->ntoks && p->toks[k + 1].kind == TK_COLON) {
            sep = 1;
            k += 2;
            break;
        }
        if (t->kind == TK_COMMA)
            continue;
        if (!any)
            s->loc = (SrcLoc){p->name, p->lineno, t->col};
        any = 1;
        if (t->kind == TK_REGEX) {
            Pattern pt;
            if (compile_regex(p, t, &pt) || BUF_PUSH(pats, np, pcap, pt) != ERR_OK)
                goto out;
            continue;
        }
        if (t->kind != TK_WORD) {
            perr(p, t->col, span_of(t), "unexpected '%.*s' among the devices of a %s statement", (int)t->n, t->s,
                 stmt);
            goto out;
        }
        MosType ty = MOS_UNKNOWN;
        int is_type = 1;
        if (is_word(t, "nmos"))
            ty = MOS_NMOS;
        else if (is_word(t, "pmos"))
            ty = MOS_PMOS;
        else if (!is_word(t, "all"))
            is_type = 0;
        if (is_type) {
            if (s->has_type || (ty == MOS_UNKNOWN && s->type != MOS_UNKNOWN)) {
                perr(p, t->col, span_of(t), "a %s statement names one device type; '%.*s' is a second one", stmt,
                     (int)t->n, t->s);
                goto out;
            }
            s->has_type = ty != MOS_UNKNOWN;
            s->type = ty;
            continue;
        }
        int which = is_word(t, "model") ? 1 : is_word(t, "cell") ? 2 : is_word(t, "name") ? 3 : 0;
        const Tok *v = t;
        if (which) {
            int sep_next = for_sep && k + 2 < p->ntoks && is_word(&p->toks[k + 1], "for") &&
                           p->toks[k + 2].kind == TK_COLON; /* `model for:` names no model */
            if (k + 1 >= p->ntoks || p->toks[k + 1].kind != TK_WORD || sep_next) {
                perr(p, t->col, span_of(t), "'%.*s' needs a %s after it", (int)t->n, t->s,
                     which == 1 ? "model name" : which == 2 ? "subcircuit name" : "device name");
                goto out;
            }
            v = &p->toks[++k];
            if ((which == 1 && s->model) || (which == 2 && s->cell)) {
                perr(p, t->col, span_of(t), "a %s statement names one %s; this is a second '%.*s'", stmt,
                     which == 1 ? "model" : "cell", (int)t->n, t->s);
                goto out;
            }
        } else if (!need_sep && !for_sep && limit_word(t)) {
            perr(p, t->col, span_of(t),
                 "'%.*s' is a limit, not a device: put ':' between the devices and the limits of a %s statement",
                 (int)t->n, t->s, stmt);
            goto out;
        }
        char *text = lower_dup(p, v->s, v->n);
        if (!text)
            goto out;
        if (which == 1) {
            s->model = text;
        } else if (which == 2) {
            s->cell = text;
        } else {
            Pattern pt = {text, has_wild(text) ? PAT_GLOB : PAT_LITERAL, NULL, v->col};
            if (BUF_PUSH(pats, np, pcap, pt) != ERR_OK) {
                nomem(p);
                goto out;
            }
        }
    }
    if (!any) {
        const Tok *at = *i < p->ntoks ? &p->toks[*i] : kw;
        perr(p, at->col, span_of(at),
             "a %s statement must say which devices: a name or glob (xamp.m*), /regex/, model NAME, cell NAME, "
             "nmos, pmos or all",
             stmt);
        goto out;
    }
    if (need_sep && !sep) {
        const Tok *last = &p->toks[p->ntoks - 1];
        perr(p, last->col + span_of(last), 1, "a %s statement needs %s between the devices and what it says", stmt,
             for_sep ? "'for:'" : "':'");
        goto out;
    }
    if (np) {
        s->pats = arena_array(p->arena, np, sizeof *s->pats);
        if (!s->pats) {
            nomem(p);
            goto out;
        }
        memcpy(s->pats, pats, np * sizeof *pats);
        s->npats = np;
        int listed = 1;
        for (size_t q = 0; q < np; q++)
            listed &= pats[q].kind == PAT_LITERAL;
        if (listed) {
            s->listed = arena_array(p->arena, np, sizeof *s->listed);
            if (!s->listed) {
                nomem(p);
                goto out;
            }
            for (size_t q = 0; q < np; q++)
                s->listed[q] = pats[q].text;
        }
    }
    *out = s;
    *i = k;
    rc = 0;
out:
    free(pats);
    return rc;
}

RuleMatcher *rule_matcher_new(void)
{
    RuleMatcher *m = calloc(1, sizeof *m);
    if (!m)
        return NULL;
    m->md = pcre2_match_data_create(1, NULL);
    m->mc = pcre2_match_context_create(NULL);
    if (!m->md || !m->mc) {
        rule_matcher_free(m);
        return NULL;
    }
    pcre2_set_match_limit(m->mc, RULE_MATCH_LIMIT);
    pcre2_set_depth_limit(m->mc, RULE_DEPTH_LIMIT);
    pcre2_set_heap_limit(m->mc, RULE_HEAP_LIMIT);
    return m;
}

void rule_matcher_free(RuleMatcher *m)
{
    if (!m)
        return;
    pcre2_match_data_free(m->md);
    pcre2_match_context_free(m->mc);
    free(m);
}

int rule_sel_match(const RuleSel *s, const Device *dv, RuleMatcher *m, int *which, DiagList *d)
{
    if (which)
        *which = -1;
    if (s->has_type && dv->type != s->type)
        return 0;
    if (s->model && !(dv->model && rule_glob(s->model, dv->model)))
        return 0;
    if (s->cell && !(dv->cell && rule_glob(s->cell, dv->cell)))
        return 0;
    if (!s->npats)
        return 1;
    const char *name = dv->name ? dv->name : "";
    for (size_t k = 0; k < s->npats; k++) {
        const Pattern *pt = &s->pats[k];
        int hit;
        if (pt->kind == PAT_LITERAL) {
            hit = strcasecmp(pt->text, name) == 0;
        } else if (pt->kind == PAT_GLOB) {
            hit = rule_glob(pt->text, name);
        } else {
            int rc = pcre2_match(pt->re, (PCRE2_SPTR)name, strlen(name), 0, 0, m->md, m->mc);
            if (rc == PCRE2_ERROR_NOMATCH) {
                hit = 0;
            } else if (rc < 0) {
                PCRE2_UCHAR msg[256];
                if (pcre2_get_error_message(rc, msg, sizeof msg) < 0)
                    snprintf((char *)msg, sizeof msg, "error %d", rc);
                diag_add(d, DIAG_ERROR, (SrcLoc){s->loc.file, s->loc.line, pt->col},
                         "regular expression /%s/ could not be matched against device '%s': %s (limits: %u steps, "
                         "depth %u, %u KiB); simplify the pattern",
                         pt->text, name, (const char *)msg, RULE_MATCH_LIMIT, RULE_DEPTH_LIMIT, RULE_HEAP_LIMIT);
                return ERR_LIMIT;
            } else {
                hit = 1;
            }
        }
        if (hit) {
            if (which)
                *which = (int)k;
            return 1;
        }
    }
    return 0;
}

SrcLoc rule_sel_loc(const RuleSel *s)
{
    return s->loc;
}

size_t rule_sel_npatterns(const RuleSel *s)
{
    return s->npats;
}

SrcLoc rule_sel_pattern_loc(const RuleSel *s, size_t k, const char **text)
{
    if (k >= s->npats) {
        *text = NULL;
        return s->loc;
    }
    *text = s->pats[k].text;
    return (SrcLoc){s->loc.file, s->loc.line, s->pats[k].col};
}

int rule_sel_listed(const RuleSel *s, const char *const **names, size_t *n)
{
    if (!s->listed)
        return 0;
    *names = s->listed;
    *n = s->npats;
    return 1;
}

/* ---- statements ---- */

static const char *type_word(MosType t)
{
    return t == MOS_NMOS ? "nmos" : t == MOS_PMOS ? "pmos" : "all";
}

/* regions [nmos|pmos|all] [model NAME] (strong-below N | weak-above N | off-below N | slope-factor N)... */
static int parse_regions(Parser *p)
{
    BandStmt st;
    memset(&st, 0, sizeof st);
    st.from = (RuleOrigin){p->name, p->lineno};
    int have_type = 0;
    for (size_t i = 1; i < p->ntoks;) {
        const Tok *t = &p->toks[i];
        MosType ty = MOS_UNKNOWN;
        int is_type = 1;
        if (is_word(t, "nmos"))
            ty = MOS_NMOS;
        else if (is_word(t, "pmos"))
            ty = MOS_PMOS;
        else if (!is_word(t, "all"))
            is_type = 0;
        if (is_type) {
            if (have_type) {
                perr(p, t->col, span_of(t), "a regions statement names one device type; '%.*s' is a second one",
                     (int)t->n, t->s);
                return -1;
            }
            have_type = 1;
            st.type = ty;
            i++;
            continue;
        }
        if (is_word(t, "model")) {
            if (st.model) {
                perr(p, t->col, span_of(t), "a regions statement names one model; this is a second 'model'");
                return -1;
            }
            if (i + 1 >= p->ntoks || p->toks[i + 1].kind != TK_WORD) {
                perr(p, t->col, span_of(t), "'model' needs a model name after it");
                return -1;
            }
            const Tok *m = &p->toks[i + 1];
            if (!(st.model = lower_dup(p, m->s, m->n))) /* SPICE names ignore case */
                return -1;
            i += 2;
            continue;
        }
        int f = -1;
        for (int k = 0; k < BAND_NFIELDS; k++)
            if (is_word(t, band_word[k]))
                f = k;
        if (f < 0) {
            perr(p, t->col, span_of(t),
                 "unknown word '%.*s' in a regions statement (expected nmos, pmos, all, model NAME, "
                 "strong-below, weak-above, off-below or slope-factor)",
                 (int)t->n, t->s);
            return -1;
        }
        if (st.set & (1u << f)) {
            perr(p, t->col, span_of(t), "%s is given twice in one statement", band_word[f]);
            return -1;
        }
        if (i + 1 >= p->ntoks) {
            perr(p, t->col, span_of(t), "%s needs a value after it, such as %s", band_word[f],
                 unit_example(band_unit[f]));
            return -1;
        }
        i++;
        const Tok *vt = &p->toks[i];
        uint32_t vcol = vt->col, vspan = span_of(vt);
        double v;
        if (read_quantity(p, &i, band_unit[f], band_word[f], &v) != 0)
            return -1;
        if (f == BAND_SLOPE ? v < 1.0 : f == BAND_OFF_BELOW ? v < 0.0 : v <= 0.0) {
            perr(p, vcol, vspan, "%s must be %s, not %g", band_word[f],
                 f == BAND_SLOPE       ? "at least 1 (n = 1 + Cdep/Cox)"
                 : f == BAND_OFF_BELOW ? "zero or positive"
                                       : "positive",
                 v);
            return -1;
        }
        st.v[f] = v;
        st.col[f] = vcol;
        st.set |= 1u << f;
    }
    if (!st.set) {
        perr(p, p->toks[0].col, span_of(&p->toks[0]),
             "this regions statement sets nothing: give strong-below, weak-above, off-below or slope-factor");
        return -1;
    }
    if ((st.set & 3u) == 3u && st.v[BAND_STRONG_BELOW] > st.v[BAND_WEAK_ABOVE]) {
        perr(p, st.col[BAND_STRONG_BELOW], 1,
             "strong-below (%g/V) is above weak-above (%g/V): the boundaries overlap", st.v[BAND_STRONG_BELOW],
             st.v[BAND_WEAK_ABOVE]);
        return -1;
    }
    if (BUF_PUSH(p->nb, p->nnb, p->nb_cap, st) != ERR_OK) {
        nomem(p);
        return -1;
    }
    return 0;
}

int rule_check_lookup(const char *s, size_t n)
{
    for (int k = 0; k < CHECK_COUNT; k++)
        if (same_ci(s, n, rule_check_name[k]))
            return k;
    return -1;
}

#define CHECK_NAMES                                                                                        \
    "sat-margin, triode, off, gain, no-data, gm/id, region, ft, ic, id, vov, match-vgs, match-gmid, "     \
    "match-ratio, match-vds, waiver"

/* check NAME [min VALUE | max VALUE] [error|warning|info|ignore] */
static int parse_check(Parser *p)
{
    const Tok *kw = &p->toks[0];
    if (p->ntoks < 2) {
        perr(p, kw->col, span_of(kw), "'check' needs the name of a check: " CHECK_NAMES);
        return -1;
    }
    const Tok *nt = &p->toks[1];
    int id = nt->kind == TK_WORD ? rule_check_lookup(nt->s, nt->n) : -1;
    if (id < 0) {
        perr(p, nt->col, span_of(nt), "unknown check '%.*s' (known: " CHECK_NAMES ")", (int)nt->n, nt->s);
        return -1;
    }
    CheckStmt st;
    memset(&st, 0, sizeof st);
    st.id = (CheckId)id;
    st.from = (RuleOrigin){p->name, p->lineno};
    const char *lw = check_limit[id] == LIM_MIN ? "min" : "max";
    for (size_t i = 2; i < p->ntoks;) {
        const Tok *t = &p->toks[i];
        int sev = t->kind == TK_WORD ? rule_severity_lookup(t->s, t->n) : -1;
        if (sev >= 0 || is_word(t, "ignore")) {
            if (st.set & (CS_SEV | CS_IGNORE)) {
                perr(p, t->col, span_of(t), "'%.*s': this statement already says how to report the check",
                     (int)t->n, t->s);
                return -1;
            }
            if (sev >= 0) {
                st.sev = (Severity)sev;
                st.set |= CS_SEV;
            } else {
                st.set |= CS_IGNORE;
            }
            i++;
            continue;
        }
        if (is_word(t, "min") || is_word(t, "max")) {
            if (check_limit[id] == LIM_NONE) {
                perr(p, t->col, span_of(t), "check %s has no limit: it takes only error, warning, info or ignore",
                     rule_check_name[id]);
                return -1;
            }
            if (!is_word(t, lw)) {
                perr(p, t->col, span_of(t), "check %s takes %s, not %.*s", rule_check_name[id], lw, (int)t->n, t->s);
                return -1;
            }
            if (st.set & CS_LIMIT) {
                perr(p, t->col, span_of(t), "%s is given twice in one statement", lw);
                return -1;
            }
            if (i + 1 >= p->ntoks) {
                perr(p, t->col, span_of(t), "%s needs a value after it, such as %s", lw, unit_example(check_unit[id]));
                return -1;
            }
            i++;
            uint32_t vcol = p->toks[i].col, vspan = span_of(&p->toks[i]);
            double v;
            if (read_quantity(p, &i, check_unit[id], rule_check_name[id], &v) != 0)
                return -1;
            if (v < 0.0) {
                perr(p, vcol, vspan, "%s for %s must be zero or positive, not %g", lw, rule_check_name[id], v);
                return -1;
            }
            st.limit = v;
            st.set |= CS_LIMIT;
            continue;
        }
        perr(p, t->col, span_of(t),
             "unknown word '%.*s' in a check statement (expected %s%serror, warning, info or ignore)", (int)t->n,
             t->s, check_limit[id] == LIM_NONE ? "" : lw, check_limit[id] == LIM_NONE ? "" : " VALUE, ");
        return -1;
    }
    if (!st.set) {
        perr(p, nt->col, span_of(nt), "this check statement sets nothing: give %s%serror, warning, info or ignore",
             check_limit[id] == LIM_NONE ? "" : lw, check_limit[id] == LIM_NONE ? "" : " VALUE, ");
        return -1;
    }
    if (BUF_PUSH(p->nc, p->nnc, p->nc_cap, st) != ERR_OK) {
        nomem(p);
        return -1;
    }
    return 0;
}

/* ---- requirements: `gm/ID 15/V +-10%`, `moderate or weak`, `margin >= 80mV`, `no gain` ---- */

typedef struct {
    const char *word;
    CheckId check;
    UnitKind unit;
} ReqWord;

static const ReqWord req_words[] = {
    {"gm/id", CHECK_GMID, U_PER_VOLT}, {"gmid", CHECK_GMID, U_PER_VOLT},  {"margin", CHECK_MARGIN, U_VOLT},
    {"sat-margin", CHECK_MARGIN, U_VOLT}, {"vds-vdsat", CHECK_MARGIN, U_VOLT}, {"gain", CHECK_GAIN, U_RATIO},
    {"gm/gds", CHECK_GAIN, U_RATIO},   {"ft", CHECK_FT, U_HZ},           {"ic", CHECK_IC, U_PLAIN},
    {"id", CHECK_ID, U_AMP},           {"vov", CHECK_VOV, U_VOLT},       {"region", CHECK_REGION, U_NONE_ALLOWED},
};

static const ReqWord *req_word(const Tok *t)
{
    for (size_t k = 0; k < sizeof req_words / sizeof req_words[0]; k++)
        if (is_word(t, req_words[k].word))
            return &req_words[k];
    return NULL;
}

/* The way a requirement kind is written in messages. */
static const char *req_label(CheckId c)
{
    switch (c) {
    case CHECK_GMID: return "gm/ID";
    case CHECK_MARGIN: return "margin";
    case CHECK_GAIN: return "gain";
    case CHECK_FT: return "fT";
    case CHECK_IC: return "IC";
    case CHECK_ID: return "ID";
    case CHECK_VOV: return "VOV";
    case CHECK_REGION: return "region";
    default: return rule_check_name[c];
    }
}

/* One region word (or a saturated set); 0 when unknown. */
static unsigned region_bits(const char *s, size_t n)
{
    for (int r = REGION_OFF; r < REGION_COUNT; r++)
        if (same_ci(s, n, fig_region_name[r]))
            return 1u << r;
    if (same_ci(s, n, "saturated") || same_ci(s, n, "saturation"))
        return (1u << REGION_WEAK) | (1u << REGION_MODERATE) | (1u << REGION_STRONG);
    return 0;
}

/* Region words joined by `or` or `/`: "moderate or weak", "weak/moderate". */
static int parse_regions_req(Parser *p, const Tok *ft, size_t nft, size_t i, Req *r)
{
    unsigned bits = 0;
    int want_word = 1;
    for (; i < nft; i++) {
        const Tok *t = &ft[i];
        if (t->kind == TK_WORD && is_word(t, "or") && !want_word) {
            want_word = 1;
            continue;
        }
        if (t->kind != TK_WORD || !want_word) {
            perr(p, t->col, span_of(t), "unexpected '%.*s' in a region requirement (join regions with 'or')",
                 (int)t->n, t->s);
            return -1;
        }
        /* "weak/moderate" */
        size_t a = 0;
        while (a <= t->n) {
            size_t b = a;
            while (b < t->n && t->s[b] != '/')
                b++;
            unsigned rb = region_bits(t->s + a, b - a);
            if (!rb) {
                perr(p, t->col + (uint32_t)a, (uint32_t)(b - a ? b - a : 1),
                     "unknown region '%.*s' (off, weak, moderate, strong, triode or saturated)", (int)(b - a),
                     t->s + a);
                return -1;
            }
            bits |= rb;
            a = b + 1;
        }
        want_word = 0;
    }
    if (want_word) {
        const Tok *t = &ft[nft - 1];
        perr(p, t->col, span_of(t), "a region requirement needs a region after '%.*s'", (int)t->n, t->s);
        return -1;
    }
    r->form = REQ_REGIONS;
    r->regions = bits;
    return 0;
}

/* The value part of a numeric requirement, ft[i..nft): `>= X`, `<= X`, `min X`, `max X`, `A..B`,
 * `A to B`, `T +- tol`, `T +- tol%`. */
static int parse_value(Parser *p, const Tok *ft, size_t nft, size_t i, const ReqWord *w, Req *r)
{
    const char *what = req_label(w->check);
    const Tok *first = i < nft ? &ft[i] : &ft[nft - 1];
    if (i >= nft) {
        perr(p, first->col + span_of(first), 1,
             "%s needs a value: a bound (>= %s), a range (A..B) or a target with a tolerance (T +-10%%)", what,
             unit_example(w->unit));
        return -1;
    }
    double a, b;
    if (ft[i].kind == TK_GE || ft[i].kind == TK_LE || is_word(&ft[i], "min") || is_word(&ft[i], "max")) {
        int ge = ft[i].kind == TK_GE || is_word(&ft[i], "min");
        const Tok *op = &ft[i++];
        if (i >= nft) {
            perr(p, op->col, span_of(op), "'%.*s' needs a value after it, such as %s", (int)op->n, op->s,
                 unit_example(w->unit));
            return -1;
        }
        if (read_qty(p, ft, nft, &i, w->unit, what, &a))
            return -1;
        r->form = ge ? REQ_MIN : REQ_MAX;
        r->lo = ge ? a : NAN;
        r->hi = ge ? NAN : a;
    } else {
        const Tok *at = &ft[i];
        if (read_qty(p, ft, nft, &i, w->unit, what, &a))
            return -1;
        if (i < nft && (ft[i].kind == TK_RANGE || is_word(&ft[i], "to"))) {
            const Tok *op = &ft[i++];
            if (i >= nft) {
                perr(p, op->col, span_of(op), "the range needs an upper end after '%.*s'", (int)op->n, op->s);
                return -1;
            }
            const Tok *bt = &ft[i];
            if (read_qty(p, ft, nft, &i, w->unit, what, &b))
                return -1;
            if (b < a) {
                perr(p, bt->col, span_of(bt), "the range of %s runs backwards: %g to %g", what, a, b);
                return -1;
            }
            r->form = REQ_RANGE;
            r->lo = a;
            r->hi = b;
        } else if (i < nft && ft[i].kind == TK_PM) {
            const Tok *op = &ft[i++];
            if (i >= nft) {
                perr(p, op->col, span_of(op), "'%.*s' needs a tolerance after it, such as 10%%", (int)op->n, op->s);
                return -1;
            }
            const Tok *tt = &ft[i];
            int pct = i + 1 < nft && ft[i + 1].kind == TK_WORD && ft[i + 1].n == 1 && ft[i + 1].s[0] == '%';
            double tol;
            if (read_qty(p, ft, nft, &i, pct ? U_PERCENT : w->unit, what, &tol))
                return -1;
            if (tol < 0.0) {
                perr(p, tt->col, span_of(tt), "a tolerance must be zero or positive, not %.*s", (int)tt->n, tt->s);
                return -1;
            }
            r->form = REQ_TARGET;
            r->target = a;
            r->tol_pct = pct;
            r->tol = pct ? tol * 100.0 : tol;
            double abs_tol = pct ? tol * fabs(a) : tol;
            r->lo = a - abs_tol;
            r->hi = a + abs_tol;
        } else {
            perr(p, at->col, span_of(at),
                 "'%.*s' alone is not a requirement: give a tolerance (%.*s +-10%%), a range (A..B) or a "
                 "bound (>= %.*s)",
                 (int)at->n, at->s, (int)at->n, at->s, (int)at->n, at->s);
            return -1;
        }
    }
    if (i < nft) {
        perr(p, ft[i].col, span_of(&ft[i]), "unexpected '%.*s' after the %s requirement", (int)ft[i].n, ft[i].s,
             what);
        return -1;
    }
    /* values that cannot be meant */
    int positive = w->check == CHECK_GMID || w->check == CHECK_FT || w->check == CHECK_IC;
    double low = r->form == REQ_MAX ? r->hi : r->form == REQ_TARGET ? r->target : r->lo;
    if ((positive && !(low > 0.0)) || ((w->check == CHECK_GAIN || w->check == CHECK_ID) && low < 0.0)) {
        perr(p, first->col, span_of(first), "%s must be %s", what, positive ? "positive" : "zero or positive");
        return -1;
    }
    return 0;
}

/* One requirement: the finer words of line[a..b). */
static int parse_req(Parser *p, size_t a, size_t b, uint32_t comma_col, Req *r)
{
    if (split_fine(p, a, b))
        return -1;
    const Tok *ft = p->ft;
    size_t nft = p->nft;
    if (nft == 0) {
        perr(p, comma_col, 1, "empty requirement: a ',' with nothing after it");
        return -1;
    }
    memset(r, 0, sizeof *r);
    r->sev = -1;
    r->lo = r->hi = r->target = r->tol = NAN;
    r->col = ft[0].col;
    r->from = (RuleOrigin){p->name, p->lineno};
    /* a severity at the end belongs to the whole requirement */
    if (nft > 1 && ft[nft - 1].kind == TK_WORD) {
        int sev = rule_severity_lookup(ft[nft - 1].s, ft[nft - 1].n);
        if (sev >= 0) {
            r->sev = sev;
            nft--;
        }
    }
    const Tok *t = &ft[0];
    if (is_word(t, "no")) {
        const ReqWord *w = nft > 1 ? req_word(&ft[1]) : NULL;
        if (!w) {
            const Tok *at = nft > 1 ? &ft[1] : t;
            perr(p, at->col, span_of(at), "'no' needs the requirement it takes away: no gm/ID, no region, no margin, "
                                          "no gain, no fT, no IC, no ID or no VOV");
            return -1;
        }
        if (nft > 2) {
            perr(p, ft[2].col, span_of(&ft[2]), "unexpected '%.*s' after 'no %s'", (int)ft[2].n, ft[2].s,
                 req_label(w->check));
            return -1;
        }
        r->check = w->check;
        r->form = REQ_DROP;
        return 0;
    }
    size_t head = 0; /* "weak/moderate": the part before a '/' */
    while (head < t->n && t->s[head] != '/')
        head++;
    if (t->kind == TK_WORD && region_bits(t->s, head)) {
        r->check = CHECK_REGION;
        return parse_regions_req(p, ft, nft, 0, r);
    }
    const ReqWord *w = req_word(t);
    if (!w) {
        perr(p, t->col, span_of(t),
             "unknown requirement '%.*s' (expected gm/ID, a region (off, weak, moderate, strong, triode, saturated), "
             "margin, gain, fT, IC, ID, VOV, or 'no' and one of them)",
             (int)t->n, t->s);
        return -1;
    }
    r->check = w->check;
    if (w->check == CHECK_REGION) {
        if (nft < 2) {
            perr(p, t->col, span_of(t), "'region' needs a region after it, such as moderate or weak");
            return -1;
        }
        return parse_regions_req(p, ft, nft, 1, r);
    }
    return parse_value(p, ft, nft, 1, w, r);
}

/* REQUIREMENT (, REQUIREMENT)* from p->toks[i..]; into p->reqs. */
static int parse_reqs(Parser *p, size_t i)
{
    p->nreqs = 0;
    if (i >= p->ntoks) {
        const Tok *last = &p->toks[p->ntoks - 1];
        perr(p, last->col + span_of(last), 1,
             "no requirement after the ':': write for example gm/ID 15/V +-10%%, moderate, margin >= 80mV");
        return -1;
    }
    for (;;) {
        size_t j = i;
        while (j < p->ntoks && p->toks[j].kind != TK_COMMA)
            j++;
        if (j == i) { /* ",," or a ',' first or last */
            perr(p, i < p->ntoks ? p->toks[i].col : p->toks[i - 1].col, 1,
                 "empty requirement: a ',' with nothing %s it", i < p->ntoks ? "before" : "after");
            return -1;
        }
        uint32_t comma_col = i > 0 ? p->toks[i - 1].col : 1;
        size_t a = (size_t)(p->toks[i].s - p->line);
        size_t b = (size_t)(p->toks[j - 1].s + p->toks[j - 1].n - p->line);
        Req r;
        if (parse_req(p, a, b, comma_col, &r))
            return -1;
        for (size_t k = 0; k < p->nreqs; k++)
            if (p->reqs[k].check == r.check) {
                perr(p, r.col, 1, "%s is required twice in one statement", req_label(r.check));
                return -1;
            }
        if (BUF_PUSH(p->reqs, p->nreqs, p->reqs_cap, r) != ERR_OK) {
            nomem(p);
            return -1;
        }
        if (j >= p->ntoks)
            break;
        i = j + 1;
    }
    return 0;
}

static int finish_sized(Parser *p, const RuleSel *sel, RuleSized *out)
{
    Req *reqs = arena_array(p->arena, p->nreqs, sizeof *reqs);
    if (!reqs) {
        nomem(p);
        return -1;
    }
    memcpy(reqs, p->reqs, p->nreqs * sizeof *reqs);
    *out = (RuleSized){sel, reqs, p->nreqs, {p->name, p->lineno}};
    return 0;
}

/* sized SELECTOR... for: REQUIREMENT, ... */
static int parse_sized(Parser *p)
{
    size_t i = 1;
    const RuleSel *sel;
    if (parse_selector(p, &i, 1, 1, "sized", &sel) || parse_reqs(p, i))
        return -1;
    RuleSized st;
    if (finish_sized(p, sel, &st))
        return -1;
    if (BUF_PUSH(p->nsz, p->nnsz, p->nsz_cap, st) != ERR_OK) {
        nomem(p);
        return -1;
    }
    return 0;
}

/* ratio 1:2[:4] [+- 3%] | ratio sizes [+- 3%] | ratio +- 3%  (ft[1..nft)) */
static int parse_ratio(Parser *p, const Tok *ft, size_t nft, RuleGroup *g, double **ratio, size_t *nratio)
{
    size_t i = 1;
    if (i < nft && is_word(&ft[i], "sizes")) {
        i++;
    } else if (i < nft && ft[i].kind == TK_WORD) {
        const Tok *t = &ft[i];
        size_t count = 1;
        for (size_t k = 0; k < t->n; k++)
            count += t->s[k] == ':';
        double *r = arena_array(p->arena, count, sizeof *r);
        if (!r) {
            nomem(p);
            return -1;
        }
        size_t a = 0, q = 0;
        while (a <= t->n) {
            size_t b = a;
            while (b < t->n && t->s[b] != ':')
                b++;
            Tok part = {t->s + a, b - a, t->col + (uint32_t)a, TK_WORD};
            size_t z = 0;
            if (b == a) {
                perr(p, part.col, 1, "a ratio is written as numbers joined by ':', such as 1:2");
                return -1;
            }
            if (read_qty(p, &part, 1, &z, U_PLAIN, "ratio", &r[q]))
                return -1;
            if (!(r[q] > 0.0)) {
                perr(p, part.col, span_of(&part), "a ratio's parts must be positive, not %.*s", (int)part.n, part.s);
                return -1;
            }
            q++;
            a = b + 1;
        }
        if (count < 2) {
            perr(p, t->col, span_of(t), "a ratio needs two or more parts, such as 1:2 (or 'sizes' for W*m/L)");
            return -1;
        }
        *ratio = r;
        *nratio = count;
        i++;
    }
    if (i < nft && ft[i].kind == TK_PM) {
        const Tok *op = &ft[i++];
        if (i >= nft) {
            perr(p, op->col, span_of(op), "'%.*s' needs the allowed ratio error after it, such as 3%%", (int)op->n,
                 op->s);
            return -1;
        }
        g->limit_col[MATCH_RATIO] = ft[i].col;
        if (read_qty(p, ft, nft, &i, U_PERCENT, "the ratio error", &g->limit[MATCH_RATIO]))
            return -1;
    }
    if (i < nft) {
        perr(p, ft[i].col, span_of(&ft[i]), "unexpected '%.*s' in a ratio (write ratio 1:2 +-3%%)", (int)ft[i].n,
             ft[i].s);
        return -1;
    }
    return 0;
}

/* matched SELECTOR... [: ratio 1:2 +-3%, VGS spread <= 5mV, gm/ID spread <= 5%, VDS spread <= 50mV] */
static int parse_matched(Parser *p)
{
    size_t i = 1;
    const RuleSel *sel;
    if (parse_selector(p, &i, 0, 0, "matched", &sel))
        return -1;
    RuleGroup g;
    memset(&g, 0, sizeof g);
    g.sel = sel;
    g.from = (RuleOrigin){p->name, p->lineno};
    for (int k = 0; k < MATCH_NLIMITS; k++) {
        g.limit[k] = NAN;
        g.sev[k] = -1;
    }
    double *ratio = NULL;
    size_t nratio = 0;
    unsigned seen = 0;
    if (i > 1 && p->toks[i - 1].kind == TK_COLON && i >= p->ntoks) {
        const Tok *c = &p->toks[i - 1];
        perr(p, c->col, 1, "nothing after the ':': give the limits (ratio 1:2 +-3%%, VGS spread <= 5mV, ...) or "
                           "leave out the ':'");
        return -1;
    }
    while (i < p->ntoks) {
        size_t j = i;
        while (j < p->ntoks && p->toks[j].kind != TK_COMMA)
            j++;
        if (j == i) {
            perr(p, p->toks[i].col, 1, "empty limit: a ',' with nothing before it");
            return -1;
        }
        size_t a = (size_t)(p->toks[i].s - p->line), b = (size_t)(p->toks[j - 1].s + p->toks[j - 1].n - p->line);
        if (split_fine(p, a, b))
            return -1;
        const Tok *ft = p->ft;
        size_t nft = p->nft;
        int sev = -1;
        if (nft > 1 && ft[nft - 1].kind == TK_WORD && (sev = rule_severity_lookup(ft[nft - 1].s, ft[nft - 1].n)) >= 0)
            nft--;
        const Tok *t = &ft[0];
        int k = is_word(t, "ratio") ? MATCH_RATIO
                : is_word(t, "vgs") ? MATCH_VGS
                : is_word(t, "gm/id") || is_word(t, "gmid") ? MATCH_GMID
                : is_word(t, "vds") ? MATCH_VDS
                                    : -1;
        if (k < 0) {
            perr(p, t->col, span_of(t),
                 "unknown limit '%.*s' in a matched statement (expected ratio, VGS spread, gm/ID spread or VDS "
                 "spread)",
                 (int)t->n, t->s);
            return -1;
        }
        if (seen & (1u << k)) {
            perr(p, t->col, span_of(t), "%.*s is given twice in one statement", (int)t->n, t->s);
            return -1;
        }
        seen |= 1u << k;
        if (k == MATCH_RATIO) {
            if (parse_ratio(p, ft, nft, &g, &ratio, &nratio))
                return -1;
        } else {
            size_t q = 1;
            if (q < nft && is_word(&ft[q], "spread"))
                q++;
            if (q >= nft || !(ft[q].kind == TK_LE || is_word(&ft[q], "max"))) {
                const Tok *at = q < nft ? &ft[q] : &ft[nft - 1];
                perr(p, at->col, span_of(at), "write the largest allowed spread: %.*s spread <= %s", (int)t->n, t->s,
                     k == MATCH_GMID ? "5%" : "5mV");
                return -1;
            }
            q++;
            if (q >= nft) {
                perr(p, ft[q - 1].col, 1, "'<=' needs a value after it");
                return -1;
            }
            g.limit_col[k] = ft[q].col;
            if (read_qty(p, ft, nft, &q, k == MATCH_GMID ? U_PERCENT : U_VOLT, rule_check_name[CHECK_MATCH_VGS + k],
                         &g.limit[k]))
                return -1;
            if (q < nft) {
                perr(p, ft[q].col, span_of(&ft[q]), "unexpected '%.*s' after the limit", (int)ft[q].n, ft[q].s);
                return -1;
            }
            if (g.limit[k] < 0.0) {
                perr(p, g.limit_col[k], 1, "a spread limit must be zero or positive");
                return -1;
            }
        }
        g.sev[k] = sev;
        i = j + 1;
        if (j + 1 == p->ntoks) {
            perr(p, p->toks[j].col, 1, "empty limit: a ',' with nothing after it");
            return -1;
        }
    }
    g.ratio = ratio;
    g.nratio = nratio;
    const char *const *names;
    size_t nn;
    if (ratio && rule_sel_listed(sel, &names, &nn) && nn != nratio) {
        perr(p, sel->loc.col, 1, "the ratio has %zu parts but the statement names %zu devices", nratio, nn);
        return -1;
    }
    if (BUF_PUSH(p->ngr, p->nngr, p->ngr_cap, g) != ERR_OK) {
        nomem(p);
        return -1;
    }
    return 0;
}

static int days_in(int y, int m)
{
    static const int dm[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    int leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    return m == 2 && leap ? 29 : dm[m - 1];
}

/* YYYY-MM-DD into YYYYMMDD; -1 when it is not a date. */
static int32_t parse_date(const Tok *t)
{
    if (t->kind != TK_WORD || t->n != 10 || t->s[4] != '-' || t->s[7] != '-')
        return -1;
    int v[3] = {0, 0, 0};
    const int at[3] = {0, 5, 8}, len[3] = {4, 2, 2};
    for (int k = 0; k < 3; k++)
        for (int q = 0; q < len[k]; q++) {
            char c = t->s[at[k] + q];
            if (c < '0' || c > '9')
                return -1;
            v[k] = v[k] * 10 + (c - '0');
        }
    if (v[0] < 1900 || v[1] < 1 || v[1] > 12 || v[2] < 1 || v[2] > days_in(v[0], v[1]))
        return -1;
    return v[0] * 10000 + v[1] * 100 + v[2];
}

/* CHECK... [until YYYY-MM-DD] because REASON, from p->toks[i..]. */
static int parse_waiver_body(Parser *p, size_t i, RuleWaiver *w)
{
    const Tok *start = i < p->ntoks ? &p->toks[i] : &p->toks[p->ntoks - 1];
    for (; i < p->ntoks; i++) {
        const Tok *t = &p->toks[i];
        if (t->kind == TK_COMMA)
            continue;
        if (is_word(t, "until") || is_word(t, "because"))
            break;
        if (is_word(t, "all")) {
            w->checks |= ((1u << CHECK_COUNT) - 1u) & ~(1u << CHECK_WAIVER);
            continue;
        }
        int id = t->kind == TK_WORD ? rule_check_lookup(t->s, t->n) : -1;
        if (id < 0 || id == CHECK_WAIVER) {
            perr(p, t->col, span_of(t), "unknown check '%.*s' to waive (known: %s or all)", (int)t->n, t->s,
                 "sat-margin, triode, off, gain, no-data, gm/id, region, ft, ic, id, vov, match-vgs, match-gmid, "
                 "match-ratio, match-vds");
            return -1;
        }
        w->checks |= 1u << id;
    }
    if (!w->checks) {
        perr(p, start->col, span_of(start), "say which checks are waived (sat-margin, triode, gm/id, ... or all)");
        return -1;
    }
    if (i < p->ntoks && is_word(&p->toks[i], "until")) {
        const Tok *u = &p->toks[i];
        if (i + 1 >= p->ntoks || (w->until = parse_date(&p->toks[i + 1])) < 0) {
            const Tok *at = i + 1 < p->ntoks ? &p->toks[i + 1] : u;
            perr(p, at->col, span_of(at), "'until' needs a date written YYYY-MM-DD, such as 2027-03-31");
            return -1;
        }
        i += 2;
    }
    if (i >= p->ntoks || !is_word(&p->toks[i], "because")) {
        const Tok *at = i < p->ntoks ? &p->toks[i] : &p->toks[p->ntoks - 1];
        uint32_t col = i < p->ntoks ? at->col : at->col + span_of(at);
        perr(p, col, i < p->ntoks ? span_of(at) : 1,
             "a waiver needs a reason: end it with 'because ...' (and an optional 'until YYYY-MM-DD' before)");
        return -1;
    }
    const Tok *b = &p->toks[i];
    if (i + 1 >= p->ntoks) {
        perr(p, b->col, span_of(b), "'because' needs the reason after it");
        return -1;
    }
    const char *rs = p->toks[i + 1].s;
    const char *re = p->toks[p->ntoks - 1].s + p->toks[p->ntoks - 1].n;
    char *reason = arena_strndup(p->arena, rs, (size_t)(re - rs));
    if (!reason) {
        nomem(p);
        return -1;
    }
    w->reason = reason;
    w->from = (RuleOrigin){p->name, p->lineno};
    return 0;
}

/* waive SELECTOR... : CHECK... [until YYYY-MM-DD] because REASON */
static int parse_waive(Parser *p)
{
    size_t i = 1;
    RuleWaiver w;
    memset(&w, 0, sizeof w);
    if (parse_selector(p, &i, 0, 1, "waive", &w.sel) || parse_waiver_body(p, i, &w))
        return -1;
    if (BUF_PUSH(p->nwv, p->nnwv, p->nwv_cap, w) != ERR_OK) {
        nomem(p);
        return -1;
    }
    return 0;
}

static void parse_line(Parser *p)
{
    if (split(p, 0) != 0 || p->ntoks == 0)
        return;
    const Tok *t = &p->toks[0];
    if (is_word(t, "regions"))
        parse_regions(p);
    else if (is_word(t, "check"))
        parse_check(p);
    else if (is_word(t, "sized"))
        parse_sized(p);
    else if (is_word(t, "matched"))
        parse_matched(p);
    else if (is_word(t, "waive"))
        parse_waive(p);
    else
        perr(p, t->col, span_of(t),
             "unknown keyword '%.*s' (a statement starts with regions, check, sized, matched or waive)", (int)t->n,
             t->s);
}

/* ---- resolving the regions statements into one table ---- */

static int cmp_str(const void *a, const void *b)
{
    return strcmp(*(const char *const *)a, *(const char *const *)b);
}

static int stmt_matches(const BandStmt *s, MosType type, const char *model)
{
    if (s->type != MOS_UNKNOWN && s->type != type)
        return 0;
    if (s->model && (!model || strcmp(s->model, model) != 0))
        return 0;
    return 1;
}

/* Builds the table for stmts[0..n): one entry per (named model or any other, type). Reports an entry
 * whose strong-below exceeds its weak-above against the later statement of the two. ERR_OK,
 * ERR_INPUT, ERR_NOMEM; on failure nothing is returned. */
static int compile(BandStmt *stmts, size_t n, DiagList *d, const char ***models_out, size_t *nmodels_out,
                   BandRule **table_out)
{
    const char **models = NULL;
    size_t nm = 0;
    BandRule *table = NULL;
    if (n) {
        models = malloc(n * sizeof *models);
        if (!models)
            return diag_nomem(d);
    }
    for (size_t i = 0; i < n; i++)
        if (stmts[i].model)
            models[nm++] = stmts[i].model;
    if (nm)
        qsort(models, nm, sizeof *models, cmp_str);
    size_t u = 0;
    for (size_t i = 0; i < nm; i++)
        if (u == 0 || strcmp(models[u - 1], models[i]) != 0)
            models[u++] = models[i];
    nm = u;
    table = calloc((nm + 1) * NTYPES, sizeof *table);
    if (!table) {
        free(models);
        return diag_nomem(d);
    }
    int rc = ERR_OK;
    for (size_t mi = 0; mi <= nm; mi++) {
        for (int ty = 0; ty < NTYPES; ty++) {
            BandRule *e = &table[mi * NTYPES + (size_t)ty];
            e->type = (MosType)ty;
            e->model = mi ? models[mi - 1] : NULL;
            size_t who[BAND_NFIELDS];
            size_t latest = 0;
            int any = 0;
            for (int f = 0; f < BAND_NFIELDS; f++) {
                double v = NAN;
                RuleOrigin o = {NULL, 0};
                who[f] = SIZE_MAX;
                for (size_t k = n; k-- > 0;) {
                    if ((stmts[k].set & (1u << f)) && stmt_matches(&stmts[k], e->type, e->model)) {
                        v = stmts[k].v[f];
                        o = stmts[k].from;
                        who[f] = k;
                        if (!any || k > latest)
                            latest = k;
                        any = 1;
                        break;
                    }
                }
                e->field_from[f] = o;
                if (f == BAND_STRONG_BELOW)
                    e->bands.strong_below = v;
                else if (f == BAND_WEAK_ABOVE)
                    e->bands.weak_above = v;
                else if (f == BAND_OFF_BELOW)
                    e->bands.off_below = v;
                else
                    e->slope = v;
            }
            if (any)
                e->from = stmts[latest].from;
            if (who[0] != SIZE_MAX && who[1] != SIZE_MAX && e->bands.strong_below > e->bands.weak_above) {
                size_t late = who[0] > who[1] ? who[0] : who[1];
                size_t early = late == who[0] ? who[1] : who[0];
                int lf = late == who[0] ? BAND_STRONG_BELOW : BAND_WEAK_ABOVE;
                rc = ERR_INPUT;
                if (!stmts[late].reported) {
                    stmts[late].reported = 1;
                    diag_add(d, DIAG_ERROR, (SrcLoc){stmts[late].from.file, stmts[late].from.line, stmts[late].col[lf]},
                             "%s devices%s%s would have strong-below %g/V above weak-above %g/V (the other "
                             "boundary is set at %s:%u)",
                             type_word(e->type), e->model ? " of model " : "", e->model ? e->model : "",
                             e->bands.strong_below, e->bands.weak_above, stmts[early].from.file,
                             stmts[early].from.line);
                }
            }
        }
    }
    if (rc != ERR_OK) {
        free(models);
        free(table);
        return rc;
    }
    *models_out = models;
    *nmodels_out = nm;
    *table_out = table;
    return ERR_OK;
}

/* ---- public ---- */

static void apply_check(CheckRule *c, const CheckStmt *st)
{
    if (st->set & CS_LIMIT)
        c->limit = st->limit;
    if (st->set & CS_SEV) {
        c->sev = st->sev;
        c->enabled = 1;
    }
    if (st->set & CS_IGNORE)
        c->enabled = 0;
    c->from = st->from;
}

static void parser_free(Parser *p, int keep_codes)
{
    if (!keep_codes)
        for (size_t i = 0; i < p->ncodes; i++)
            pcre2_code_free(p->codes[i]);
    free(p->codes);
    free(p->toks);
    free(p->ft);
    free(p->reqs);
    free(p->nb);
    free(p->nc);
    free(p->nsz);
    free(p->ngr);
    free(p->nwv);
    buf_free(&p->scratch);
}

/* Appends n elements of size sz at src to the malloc'd array *arr (length *len, capacity *cap). */
static int append(void **arr, size_t *len, size_t *cap, const void *src, size_t n, size_t sz)
{
    if (!n)
        return ERR_OK;
    if (buf_grow_array(arr, cap, *len + n, sz) != ERR_OK)
        return ERR_NOMEM;
    memcpy((char *)*arr + *len * sz, src, n * sz);
    *len += n;
    return ERR_OK;
}

static void refresh_view(RuleSet *rs)
{
    rs->view = (RuleStatements){rs->sized, rs->nsized, rs->groups, rs->ngroups, rs->waivers, rs->nwaivers};
}

int rule_load_text(RuleSet *rs, const char *name, const char *text, size_t len, DiagList *d)
{
    Parser p;
    memset(&p, 0, sizeof p);
    p.rs = rs;
    p.arena = &rs->arena;
    p.d = d;
    p.name = arena_strndup(&rs->arena, name, strlen(name));
    if (!p.name)
        return diag_nomem(d);
    size_t pos = 0;
    if (len >= 3 && memcmp(text, "\xef\xbb\xbf", 3) == 0)
        pos = 3; /* a UTF-8 byte-order mark is not part of line 1 */
    for (uint32_t lineno = 1; pos < len && !p.oom; lineno++) {
        const char *nl = memchr(text + pos, '\n', len - pos);
        size_t end = nl ? (size_t)(nl - text) : len;
        p.line = text + pos;
        p.line_len = end - pos;
        if (p.line_len && p.line[p.line_len - 1] == '\r')
            p.line_len--;
        p.lineno = lineno;
        parse_line(&p);
        pos = nl ? end + 1 : len;
    }
    int rc = p.oom ? ERR_NOMEM : p.nerr ? ERR_INPUT : ERR_OK;
    /* room for everything first, so that applying cannot fail half-way */
    if (rc == ERR_OK &&
        (buf_grow_array((void **)&rs->sized, &rs->sized_cap, rs->nsized + p.nnsz, sizeof *rs->sized) != ERR_OK ||
         buf_grow_array((void **)&rs->groups, &rs->groups_cap, rs->ngroups + p.nngr, sizeof *rs->groups) != ERR_OK ||
         buf_grow_array((void **)&rs->waivers, &rs->waivers_cap, rs->nwaivers + p.nnwv, sizeof *rs->waivers) != ERR_OK ||
         buf_grow_array((void **)&rs->codes, &rs->codes_cap, rs->ncodes + p.ncodes, sizeof *rs->codes) != ERR_OK))
        rc = diag_nomem(d);
    if (rc == ERR_OK && p.nnb) {
        size_t total = rs->nstmts + p.nnb;
        if (buf_grow_array((void **)&rs->stmts, &rs->stmts_cap, total, sizeof *rs->stmts) != ERR_OK) {
            rc = diag_nomem(d);
        } else {
            memcpy(rs->stmts + rs->nstmts, p.nb, p.nnb * sizeof *p.nb);
            const char **models = NULL;
            size_t nm = 0;
            BandRule *table = NULL;
            rc = compile(rs->stmts, total, d, &models, &nm, &table);
            if (rc == ERR_OK) {
                free(rs->models);
                free(rs->table);
                rs->models = models;
                rs->nmodels = nm;
                rs->table = table;
                rs->nstmts = total;
            }
        }
    }
    if (rc == ERR_OK) {
        for (size_t i = 0; i < p.nnc; i++)
            apply_check(&rs->checks[p.nc[i].id], &p.nc[i]);
        /* capacity is there: these cannot fail */
        (void)append((void **)&rs->sized, &rs->nsized, &rs->sized_cap, p.nsz, p.nnsz, sizeof *p.nsz);
        (void)append((void **)&rs->groups, &rs->ngroups, &rs->groups_cap, p.ngr, p.nngr, sizeof *p.ngr);
        (void)append((void **)&rs->waivers, &rs->nwaivers, &rs->waivers_cap, p.nwv, p.nnwv, sizeof *p.nwv);
        (void)append((void **)&rs->codes, &rs->ncodes, &rs->codes_cap, p.codes, p.ncodes, sizeof *p.codes);
        refresh_view(rs);
    }
    parser_free(&p, rc == ERR_OK);
    return rc;
}

int rule_load_file(RuleSet *rs, const char *path, DiagList *d)
{
    SrcFile f;
    int rc = src_load(&f, path, (SrcLoc){NULL, 0, 0}, d);
    if (rc != ERR_OK)
        return rc;
    rc = rule_load_text(rs, path, f.text, f.len, d);
    src_free(&f);
    return rc;
}

int rule_load_local(RuleSet *rs, const char *netlist_path, int *found, DiagList *d)
{
    *found = 0;
    size_t n = strlen(netlist_path);
    char *path = malloc(n + sizeof ".rules");
    if (!path)
        return diag_nomem(d);
    memcpy(path, netlist_path, n);
    memcpy(path + n, ".rules", sizeof ".rules");
    struct stat st;
    int rc = ERR_OK;
    if (stat(path, &st) == 0) {
        *found = 1;
        rc = rule_load_file(rs, path, d);
    }
    free(path);
    return rc;
}

#define DEFAULTS_NAME "<defaults>"

RuleSet *rule_new_defaults(DiagList *d)
{
    RuleSet *rs = calloc(1, sizeof *rs);
    if (!rs) {
        diag_nomem(d);
        return NULL;
    }
    arena_init(&rs->arena);
    refresh_view(rs);
    for (int k = 0; k < CHECK_COUNT; k++) {
        rs->checks[k].limit = NAN;
        rs->checks[k].sev = SEV_WARNING;
        rs->checks[k].enabled = 0;
    }
    if (rule_load_text(rs, DEFAULTS_NAME, rule_defaults_text, strlen(rule_defaults_text), d) != ERR_OK)
        goto fail;
    /* The defaults must give every setting: thresholds are data, C holds none of them. */
    for (int k = 0; k < CHECK_COUNT; k++) {
        const CheckRule *c = &rs->checks[k];
        if (!c->from.file || (check_limit[k] != LIM_NONE && isnan(c->limit))) {
            diag_add(d, DIAG_ERROR, (SrcLoc){DEFAULTS_NAME, 0, 0},
                     "the built-in rules do not fully set check %s (a build bug)", rule_check_name[k]);
            goto fail;
        }
    }
    if (!rs->table || isnan(rs->table[0].bands.strong_below) || isnan(rs->table[0].bands.weak_above) ||
        isnan(rs->table[0].bands.off_below) || isnan(rs->table[0].slope)) {
        diag_add(d, DIAG_ERROR, (SrcLoc){DEFAULTS_NAME, 0, 0},
                 "the built-in rules do not give every region boundary for all devices (a build bug)");
        goto fail;
    }
    return rs;
fail:
    rule_free(rs);
    return NULL;
}

void rule_free(RuleSet *rs)
{
    if (!rs)
        return;
    for (size_t i = 0; i < rs->ncodes; i++)
        pcre2_code_free(rs->codes[i]);
    free(rs->codes);
    free(rs->stmts);
    free(rs->models);
    free(rs->table);
    free(rs->sized);
    free(rs->groups);
    free(rs->waivers);
    arena_free(&rs->arena);
    free(rs);
}

const CheckRule *rule_check(const RuleSet *rs, CheckId id)
{
    return &rs->checks[(unsigned)id < CHECK_COUNT ? id : 0];
}

void rule_set_limit(RuleSet *rs, CheckId id, double limit)
{
    if ((unsigned)id >= CHECK_COUNT)
        return;
    rs->checks[id].limit = limit;
    rs->checks[id].from = (RuleOrigin){"<command line>", 0};
}

void rule_set_severity(RuleSet *rs, CheckId id, Severity sev)
{
    if ((unsigned)id >= CHECK_COUNT || (unsigned)sev >= SEV_COUNT)
        return;
    rs->checks[id].sev = sev;
    rs->checks[id].enabled = 1;
    rs->checks[id].from = (RuleOrigin){"<command line>", 0};
}

const BandRule *rule_band_rule(const RuleSet *rs, const Device *dv)
{
    size_t mi = 0;
    if (dv->model && rs->nmodels) {
        const char *key = dv->model;
        const char **hit = bsearch(&key, rs->models, rs->nmodels, sizeof *rs->models, cmp_str);
        if (hit)
            mi = (size_t)(hit - rs->models) + 1;
    }
    unsigned ty = (unsigned)dv->type < NTYPES ? (unsigned)dv->type : 0;
    return &rs->table[mi * NTYPES + ty];
}

const Bands *rule_bands(const RuleSet *rs, const Device *dv, RuleOrigin *from)
{
    const BandRule *e = rule_band_rule(rs, dv);
    if (from)
        *from = e->from;
    return &e->bands;
}

const RuleStatements *rule_statements(const RuleSet *rs)
{
    return &rs->view;
}

int rule_severity_lookup(const char *s, size_t n)
{
    for (int k = 0; k < SEV_COUNT; k++)
        if (same_ci(s, n, rule_severity_name[k]))
            return k;
    return -1;
}

/* ---- inline statements ---- */

int rule_parse_inline(Arena *a, RuleInlineKind kind, const char *file, uint32_t lineno, const char *line,
                      size_t len, size_t body, RuleSized *sized, RuleWaiver *waiver, DiagList *d)
{
    Parser p;
    memset(&p, 0, sizeof p);
    p.arena = a;
    p.d = d;
    p.name = file;
    p.line = line;
    p.line_len = len && line[len - 1] == '\r' ? len - 1 : len;
    p.lineno = lineno;
    int rc = ERR_INPUT;
    if (split(&p, body) != 0)
        goto out;
    if (p.ntoks == 0) {
        perr(&p, (uint32_t)(body + 1), 1,
             "%s", kind == RULE_INLINE_SIZED ? "nothing after 'sized for:': write for example gm/ID 15/V +-10%, moderate"
                                             : "nothing after 'waive:': write the checks and 'because ...'");
        goto out;
    }
    if (kind == RULE_INLINE_SIZED) {
        if (parse_reqs(&p, 0) == 0 && finish_sized(&p, NULL, sized) == 0)
            rc = ERR_OK;
    } else {
        memset(waiver, 0, sizeof *waiver);
        if (parse_waiver_body(&p, 0, waiver) == 0)
            rc = ERR_OK;
    }
out:
    if (p.oom)
        rc = ERR_NOMEM;
    parser_free(&p, 0);
    return rc;
}
