/* rules: the biaslint rule language (documented in rules/defaults.rules and the README) read into a
 * RuleSet: region boundaries per device type and model, and the limit, severity and on/off state of
 * each default check. The CLI loads the compiled-in defaults, then the user's files on top; join and
 * check ask it for a device's bands and a check's setting.
 *
 * A file is read line by line; a line is split into words at blanks, `#` starts a comment. Each
 * statement is parsed whole before anything is applied, and a file with any error changes nothing. */
#include "rules.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "buf.h"
#include "defaults_rules.h"
#include "source.h"

const char *const rule_severity_name[SEV_COUNT] = {"info", "warning", "error"};

/* ORDER CHECK */
const char *const rule_check_name[CHECK_COUNT] = {"sat-margin", "triode", "off", "gain", "no-data"};

/* Checks that take a `min` limit, and the unit of that limit. ORDER CHECK */
typedef enum { U_NONE_ALLOWED, U_VOLT, U_PER_VOLT, U_AMP_SQ, U_RATIO } UnitKind;
static const UnitKind check_unit[CHECK_COUNT] = {U_VOLT, U_NONE_ALLOWED, U_NONE_ALLOWED, U_RATIO,
                                                 U_NONE_ALLOWED};

/* Keywords of a `regions` statement, ORDER BANDFIELD. */
static const char *const band_word[BAND_NFIELDS] = {"strong-below", "weak-above", "off-below"};
static const UnitKind band_unit[BAND_NFIELDS] = {U_PER_VOLT, U_PER_VOLT, U_AMP_SQ};

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

struct RuleSet {
    Arena arena;                 /* file names and model names */
    CheckRule checks[CHECK_COUNT];
    BandStmt *stmts;             /* every regions statement, in load order; malloc'd */
    size_t nstmts, stmts_cap;
    const char **models;         /* distinct models named by statements, sorted; malloc'd */
    size_t nmodels;
    BandRule *table;             /* (nmodels+1) x NTYPES resolved bands; row 0: any other model */
};

/* ---- lines and words ---- */

typedef struct {
    const char *s;
    size_t n;
    uint32_t col;
} Tok;

typedef struct {
    RuleSet *rs;
    DiagList *d;
    const char *name;            /* origin file name, arena copy */
    const char *line;            /* current physical line, without its line ending */
    size_t line_len;
    uint32_t lineno;
    Tok *toks;
    size_t ntoks, toks_cap;
    Buf scratch;                 /* number text for strtod; message text */
    BandStmt *nb;                /* statements of this file, applied only when it has no error */
    size_t nnb, nb_cap;
    CheckStmt *nc;
    size_t nnc, nc_cap;
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

static uint32_t span_of(const Tok *t)
{
    return t->n > UINT32_MAX ? UINT32_MAX : (uint32_t)t->n;
}

static int is_word(const Tok *t, const char *kw)
{
    size_t n = strlen(kw);
    return t->n == n && strncasecmp(t->s, kw, n) == 0;
}

/* Splits the current line into p->toks. 0 on success; -1 after reporting a control character. */
static int split(Parser *p)
{
    p->ntoks = 0;
    size_t i = 0, n = p->line_len;
    while (i < n) {
        unsigned char c = (unsigned char)p->line[i];
        if (c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v') {
            i++;
            continue;
        }
        if (c == '#')
            break;
        size_t start = i;
        while (i < n) {
            c = (unsigned char)p->line[i];
            if (c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v' || c == '#')
                break;
            if (c < 0x20 || c == 0x7f) {
                perr(p, (uint32_t)(i + 1), 1, "unexpected control character 0x%02x", c);
                return -1;
            }
            i++;
        }
        Tok t = {p->line + start, i - start, (uint32_t)(start + 1)};
        if (BUF_PUSH(p->toks, p->ntoks, p->toks_cap, t) != ERR_OK) {
            p->oom = 1;
            diag_nomem(p->d);
            return -1;
        }
    }
    return 0;
}

/* ---- numbers: 50mV, 12/V, 100pA, 1e-10, 10 ---- */

static const char *unit_words(UnitKind k)
{
    switch (k) {
    case U_VOLT: return "V";
    case U_PER_VOLT: return "/V";
    case U_AMP_SQ: return "A";
    case U_RATIO: return "V/V";
    default: return "";
    }
}

static const char *unit_example(UnitKind k)
{
    switch (k) {
    case U_VOLT: return "50mV";
    case U_PER_VOLT: return "12/V";
    case U_AMP_SQ: return "100pA";
    default: return "10";
    }
}

static int same_ci(const char *s, size_t n, const char *w)
{
    size_t wn = strlen(w);
    return n == wn && strncasecmp(s, w, n) == 0;
}

/* s[0..n) is a unit accepted for kind k. */
static int is_unit(UnitKind k, const char *s, size_t n)
{
    switch (k) {
    case U_VOLT: return same_ci(s, n, "V");
    case U_PER_VOLT: return same_ci(s, n, "/V") || same_ci(s, n, "1/V") || same_ci(s, n, "S/A");
    case U_AMP_SQ: return same_ci(s, n, "A") || same_ci(s, n, "A/sq");
    case U_RATIO: return same_ci(s, n, "V/V");
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
 * success; else the offset of the bad part plus one, negated (for the column of the error). */
static long read_tail(UnitKind k, const char *s, size_t n, int need_unit, double *scale, int *ambiguous)
{
    *scale = 1.0;
    *ambiguous = 0;
    if (n == 0)
        return need_unit ? -1 : 0;
    if (is_unit(k, s, n)) /* the unit alone comes first: "1A" is one ampere */
        return 0;
    size_t sl = suffix(s, n, scale, ambiguous);
    if (*ambiguous)
        return -1;
    if (sl == 0)
        return -1;
    if (sl == n)
        return need_unit ? -1 : 0;
    if (is_unit(k, s + sl, n - sl))
        return 0;
    return -(long)(sl + 1);
}

/* Parses the quantity at p->toks[*i] (and a unit written as the next word, as in "50 mV"), for a
 * slot of kind k; advances *i past what it used. 0 on success, -1 after reporting. */
static int read_quantity(Parser *p, size_t *i, UnitKind k, const char *what, double *out)
{
    const Tok *t = &p->toks[*i];
    size_t j = 0, n = t->n;
    const char *s = t->s;
    if (j < n && (s[j] == '+' || s[j] == '-'))
        j++;
    size_t digits = 0;
    while (j < n && s[j] >= '0' && s[j] <= '9')
        j++, digits++;
    if (j < n && s[j] == '.') {
        j++;
        while (j < n && s[j] >= '0' && s[j] <= '9')
            j++, digits++;
    }
    if (digits == 0) {
        perr(p, t->col, span_of(t), "bad number '%.*s' for %s: write a number such as %s", (int)t->n, t->s,
             what, unit_example(k));
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
        p->oom = 1;
        diag_nomem(p->d);
        return -1;
    }
    double v = strtod(p->scratch.data, NULL);
    double scale;
    int ambiguous;
    long bad = read_tail(k, s + j, n - j, 0, &scale, &ambiguous);
    if (bad < 0) {
        size_t at = j + (size_t)(-bad) - 1;
        uint32_t col = t->col + (uint32_t)at;
        uint32_t sp = (uint32_t)(n - at);
        if (ambiguous)
            perr(p, col, 1, "'M' in '%.*s' is ambiguous (SPICE reads milli, SI reads mega): write 'm' or 'meg'",
                 (int)t->n, t->s);
        else if (k == U_RATIO || k == U_NONE_ALLOWED)
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
    /* "50 mV": a unit (with or without a suffix) written as its own word */
    if (j == n && *i < p->ntoks) {
        const Tok *u = &p->toks[*i];
        double us;
        int amb;
        if (read_tail(k, u->s, u->n, 1, &us, &amb) == 0) {
            scale = us;
            (*i)++;
        }
    }
    v *= scale;
    if (!isfinite(v)) {
        perr(p, t->col, span_of(t), "number '%.*s' is out of range", (int)t->n, t->s);
        return -1;
    }
    *out = v;
    return 0;
}

/* ---- statements ---- */

static const char *type_word(MosType t)
{
    return t == MOS_NMOS ? "nmos" : t == MOS_PMOS ? "pmos" : "all";
}

/* regions [nmos|pmos|all] [model NAME] (strong-below N | weak-above N | off-below N)... */
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
            if (i + 1 >= p->ntoks) {
                perr(p, t->col, span_of(t), "'model' needs a model name after it");
                return -1;
            }
            const Tok *m = &p->toks[i + 1];
            char *name = arena_strndup(&p->rs->arena, m->s, m->n);
            if (!name) {
                p->oom = 1;
                diag_nomem(p->d);
                return -1;
            }
            for (char *c = name; *c; c++)
                if (*c >= 'A' && *c <= 'Z')
                    *c = (char)(*c - 'A' + 'a'); /* SPICE names ignore case */
            st.model = name;
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
                 "strong-below, weak-above or off-below)",
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
        if (f == BAND_OFF_BELOW ? v < 0.0 : v <= 0.0) {
            perr(p, vcol, vspan, "%s must be %s, not %g", band_word[f],
                 f == BAND_OFF_BELOW ? "zero or positive" : "positive", v);
            return -1;
        }
        st.v[f] = v;
        st.col[f] = vcol;
        st.set |= 1u << f;
    }
    if (!st.set) {
        perr(p, p->toks[0].col, span_of(&p->toks[0]),
             "this regions statement sets nothing: give strong-below, weak-above or off-below");
        return -1;
    }
    if ((st.set & 3u) == 3u && st.v[BAND_STRONG_BELOW] > st.v[BAND_WEAK_ABOVE]) {
        perr(p, st.col[BAND_STRONG_BELOW], 1,
             "strong-below (%g/V) is above weak-above (%g/V): the boundaries overlap", st.v[BAND_STRONG_BELOW],
             st.v[BAND_WEAK_ABOVE]);
        return -1;
    }
    if (BUF_PUSH(p->nb, p->nnb, p->nb_cap, st) != ERR_OK) {
        p->oom = 1;
        diag_nomem(p->d);
        return -1;
    }
    return 0;
}

static int lookup_check(const Tok *t)
{
    for (int k = 0; k < CHECK_COUNT; k++)
        if (is_word(t, rule_check_name[k]))
            return k;
    return -1;
}

/* check NAME [min VALUE] [error|warning|info|ignore] */
static int parse_check(Parser *p)
{
    const Tok *kw = &p->toks[0];
    if (p->ntoks < 2) {
        perr(p, kw->col, span_of(kw),
             "'check' needs the name of a check: sat-margin, triode, off, gain or no-data");
        return -1;
    }
    const Tok *nt = &p->toks[1];
    int id = lookup_check(nt);
    if (id < 0) {
        perr(p, nt->col, span_of(nt), "unknown check '%.*s' (known: sat-margin, triode, off, gain, no-data)",
             (int)nt->n, nt->s);
        return -1;
    }
    CheckStmt st;
    memset(&st, 0, sizeof st);
    st.id = (CheckId)id;
    st.from = (RuleOrigin){p->name, p->lineno};
    for (size_t i = 2; i < p->ntoks;) {
        const Tok *t = &p->toks[i];
        int sev = rule_severity_lookup(t->s, t->n);
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
        if (is_word(t, "min")) {
            if (check_unit[id] == U_NONE_ALLOWED) {
                perr(p, t->col, span_of(t), "check %s has no limit: it takes only error, warning, info or ignore",
                     rule_check_name[id]);
                return -1;
            }
            if (st.set & CS_LIMIT) {
                perr(p, t->col, span_of(t), "min is given twice in one statement");
                return -1;
            }
            if (i + 1 >= p->ntoks) {
                perr(p, t->col, span_of(t), "min needs a value after it, such as %s", unit_example(check_unit[id]));
                return -1;
            }
            i++;
            uint32_t vcol = p->toks[i].col, vspan = span_of(&p->toks[i]);
            double v;
            if (read_quantity(p, &i, check_unit[id], rule_check_name[id], &v) != 0)
                return -1;
            if (v < 0.0) {
                perr(p, vcol, vspan, "min for %s must be zero or positive, not %g", rule_check_name[id], v);
                return -1;
            }
            st.limit = v;
            st.set |= CS_LIMIT;
            continue;
        }
        perr(p, t->col, span_of(t),
             "unknown word '%.*s' in a check statement (expected %serror, warning, info or ignore)", (int)t->n,
             t->s, check_unit[id] == U_NONE_ALLOWED ? "" : "min VALUE, ");
        return -1;
    }
    if (!st.set) {
        perr(p, nt->col, span_of(nt), "this check statement sets nothing: give %serror, warning, info or ignore",
             check_unit[id] == U_NONE_ALLOWED ? "" : "min VALUE, ");
        return -1;
    }
    if (BUF_PUSH(p->nc, p->nnc, p->nc_cap, st) != ERR_OK) {
        p->oom = 1;
        diag_nomem(p->d);
        return -1;
    }
    return 0;
}

static void parse_line(Parser *p)
{
    if (split(p) != 0 || p->ntoks == 0)
        return;
    const Tok *t = &p->toks[0];
    if (is_word(t, "regions"))
        parse_regions(p);
    else if (is_word(t, "check"))
        parse_check(p);
    else
        perr(p, t->col, span_of(t), "unknown keyword '%.*s' (a statement starts with 'regions' or 'check')",
             (int)t->n, t->s);
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
                else
                    e->bands.off_below = v;
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

int rule_load_text(RuleSet *rs, const char *name, const char *text, size_t len, DiagList *d)
{
    Parser p;
    memset(&p, 0, sizeof p);
    p.rs = rs;
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
    if (rc == ERR_OK)
        for (size_t i = 0; i < p.nnc; i++)
            apply_check(&rs->checks[p.nc[i].id], &p.nc[i]);
    free(p.toks);
    free(p.nb);
    free(p.nc);
    buf_free(&p.scratch);
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

#define DEFAULTS_NAME "<defaults>"

RuleSet *rule_new_defaults(DiagList *d)
{
    RuleSet *rs = calloc(1, sizeof *rs);
    if (!rs) {
        diag_nomem(d);
        return NULL;
    }
    arena_init(&rs->arena);
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
        if (!c->from.file || (check_unit[k] != U_NONE_ALLOWED && isnan(c->limit))) {
            diag_add(d, DIAG_ERROR, (SrcLoc){DEFAULTS_NAME, 0, 0},
                     "the built-in rules do not fully set check %s (a build bug)", rule_check_name[k]);
            goto fail;
        }
    }
    if (!rs->table || isnan(rs->table[0].bands.strong_below) || isnan(rs->table[0].bands.weak_above) ||
        isnan(rs->table[0].bands.off_below)) {
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
    free(rs->stmts);
    free(rs->models);
    free(rs->table);
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

int rule_severity_lookup(const char *s, size_t n)
{
    for (int k = 0; k < SEV_COUNT; k++)
        if (same_ci(s, n, rule_severity_name[k]))
            return k;
    return -1;
}
