/* op_show: ngspice batch output holding `show` device tables (ngspice-op-data.md, section 1), read
 * into the OpTable. Used through op_show_reader by op_read.
 *
 * The log is read line by line, once. A device table is a block:
 *
 *     block  := header device-row [model-row] row* blank-line
 *     header := " " TYPE ":" description        e.g. " BSIM4: Berkeley Short Channel IGFET Model-4"
 *     device-row := "device" NAME+              the next line, one name per column
 *     row    := LABEL VALUE{ndevices}           VALUE is a number or ?????????
 *
 * Rows are split at blanks rather than cut at the fixed columns (label in 11, 22 per device), so any
 * `set width` reads the same; names never hold blanks. A row counts only when its label is a
 * quantity (op_qty_lookup_ngspice) or "model"; any other line inside a table (a warning that
 * landed there) is passed over, and after a blank line a table goes on if a row of its width
 * follows before another table starts. Blocks of other device types (Vsource, Resistor...) and
 * model tables (" BSIM4 models (...)", no device row) are skipped; the node table of a plain batch
 * .op run is read into the node voltages.
 *
 * Names: "m.x1.m4" becomes "x1.m4"; a name printed with 21 characters may have been cut and is
 * marked truncated; the same cut name twice in one table is an error. A device in several tables is
 * one record; a quantity printed twice with two values is a conflict.
 * A value printed as nan/inf (or ngspice's "<<NAN, error = N>>") is read as absent, with one warning
 * for the file.
 * Failure: "DC solution failed" or "simulation(s) aborted" before a table means its values are left
 * over from the failed iterations (an error); a log without tables says why when it can. */
#include "opdump.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"

#define SHOW_NAME_CUT 21 /* ngspice prints at most 21 characters of a name */
#define NO_RECORD UINT32_MAX /* a column whose values are not read */

typedef struct {
    const char *s;
    size_t n;
    size_t off; /* byte offset in the file */
} Tok;

typedef enum {
    ST_SCAN,  /* outside any table */
    ST_BLOCK, /* in a MOSFET table */
    ST_AFTER, /* a blank line after a MOSFET table: it may go on (text landed inside it) */
    ST_SKIP,  /* in a table of another device type */
    ST_NODES, /* in the node voltage table */
} State;

typedef struct {
    OpTable *t;
    DiagList *d;
    const char *text;
    size_t len, pos;       /* pos: start of the next line */
    uint32_t line;         /* number of the current line */
    const char *ls;        /* the current line, without its line end */
    size_t ll, loff;
    Tok *tok;              /* its blank-separated tokens (reused for every line) */
    size_t ntok, tokcap;
    uint32_t *cols;        /* record index of each device column of the current block */
    size_t ncols, colcap;
    uint32_t *stamp;       /* per record: number of the last block naming it (a cut name twice) */
    size_t nstamp, stampcap;
    uint32_t block;
    const char *type;      /* type name of the pending header / current block */
    size_t ntype;
    uint32_t type_line;
    const char *noted[16]; /* unknown MOSFET types already noted */
    size_t nnoted;
    size_t nonfinite;      /* values printed as nan/inf, read as absent */
    SrcLoc nonfinite_at;
    SrcLoc hard_at;        /* first "DC solution failed" / "simulation(s) aborted" */
    const char *hard_text;
    size_t hard_n;
    SrcLoc soft_at;        /* first "Simulation interrupted" / "no simulations run" */
    const char *soft_text;
    size_t soft_n;
    bool stale_reported;
    size_t nerr;
} Show;

static bool next_line(Show *s)
{
    if (s->pos >= s->len)
        return false;
    const char *p = s->text + s->pos;
    const char *nl = memchr(p, '\n', s->len - s->pos);
    size_t n = nl ? (size_t)(nl - p) : s->len - s->pos;
    s->ls = p;
    s->loff = s->pos;
    s->ll = n && p[n - 1] == '\r' ? n - 1 : n;
    s->pos += n + (nl != NULL);
    s->line++;
    return true;
}

static inline bool is_blank(char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v';
}

/* Split the current line at blanks. ngspice's "<<NAN, error = 7>>" stays one token. */
static int tokenize(Show *s)
{
    s->ntok = 0;
    size_t i = 0;
    while (i < s->ll) {
        while (i < s->ll && is_blank(s->ls[i]))
            i++;
        if (i >= s->ll)
            break;
        size_t b = i;
        if (s->ll - i >= 2 && s->ls[i] == '<' && s->ls[i + 1] == '<') {
            const char *e = NULL;
            for (size_t k = i + 2; k + 1 < s->ll; k++)
                if (s->ls[k] == '>' && s->ls[k + 1] == '>') {
                    e = s->ls + k + 2;
                    break;
                }
            i = e ? (size_t)(e - s->ls) : s->ll;
        } else {
            while (i < s->ll && !is_blank(s->ls[i]))
                i++;
        }
        Tok tk = {s->ls + b, i - b, s->loff + b};
        if (BUF_PUSH(s->tok, s->ntok, s->tokcap, tk) != ERR_OK)
            return ERR_NOMEM;
    }
    return ERR_OK;
}

static SrcLoc tok_loc(const Show *s, const Tok *tk)
{
    return (SrcLoc){s->t->file.path, s->line, (uint32_t)(tk->off - s->loff + 1)};
}

static SrcLoc line_loc(const Show *s)
{
    return (SrcLoc){s->t->file.path, s->line, 1};
}

static bool tok_is(const Tok *tk, const char *w)
{
    size_t n = strlen(w);
    return tk->n == n && memcmp(tk->s, w, n) == 0;
}

static bool starts(const char *s, size_t n, const char *w)
{
    size_t k = strlen(w);
    return n >= k && memcmp(s, w, k) == 0;
}

static bool ends(const char *s, size_t n, const char *w)
{
    size_t k = strlen(w);
    return n >= k && memcmp(s + n - k, w, k) == 0;
}

static void trim(const char **p, size_t *n)
{
    while (*n && is_blank(**p)) {
        (*p)++;
        (*n)--;
    }
    while (*n && is_blank((*p)[*n - 1]))
        (*n)--;
}

/* 2: a failure that invalidates the tables after it; 1: the run never got to the analysis. */
static int failure_marker(const char *p, size_t n)
{
    trim(&p, &n);
    if (starts(p, n, "DC solution failed") || ends(p, n, "simulation(s) aborted"))
        return 2;
    if (starts(p, n, "Simulation interrupted due to error") || ends(p, n, "no simulations run"))
        return 1;
    return 0;
}

/* " TYPE: description": one leading space, a word, a colon. The type is returned in *ty. */
static bool header_line(const char *p, size_t n, const char **ty, size_t *nty)
{
    if (n < 3 || p[0] != ' ')
        return false;
    size_t i = 1;
    if (!((p[i] >= 'A' && p[i] <= 'Z') || (p[i] >= 'a' && p[i] <= 'z')))
        return false;
    while (i < n && ((p[i] >= 'A' && p[i] <= 'Z') || (p[i] >= 'a' && p[i] <= 'z') || (p[i] >= '0' && p[i] <= '9') ||
                     p[i] == '_'))
        i++;
    if (i >= n || p[i] != ':' || (i + 1 < n && p[i + 1] != ' '))
        return false;
    *ty = p + 1;
    *nty = i - 1;
    return true;
}

static bool fold_eq(const char *a, size_t n, const char *lower)
{
    for (size_t i = 0; i < n; i++) {
        char c = a[i] >= 'A' && a[i] <= 'Z' ? (char)(a[i] + 32) : a[i];
        if (c != lower[i])
            return false;
    }
    return lower[n] == '\0';
}

/* BSIM3, BSIM3v32, BSIM4, BSIM4v5...: the BSIM conventions; Mos1: level 1. Others: unknown. */
static OpFamily family_of(const char *ty, size_t n)
{
    if (n >= 5 && (fold_eq(ty, 5, "bsim3") || fold_eq(ty, 5, "bsim4"))) {
        if (n == 5)
            return OPFAM_BSIM;
        if ((ty[5] == 'v' || ty[5] == 'V') && n > 6) {
            for (size_t i = 6; i < n; i++)
                if (ty[i] < '0' || ty[i] > '9')
                    return OPFAM_UNKNOWN;
            return OPFAM_BSIM;
        }
        return OPFAM_UNKNOWN;
    }
    return n == 4 && fold_eq(ty, 4, "mos1") ? OPFAM_MOS1 : OPFAM_UNKNOWN;
}

/* An error at loc, with the current line quoted and span columns underlined. */
static void PRINTF_LIKE(4, 5) fail_at(Show *s, SrcLoc loc, uint32_t span, const char *fmt, ...)
{
    s->nerr++;
    Buf b = BUF_INIT;
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&b, fmt, ap);
    va_end(ap);
    if (rc != ERR_OK) {
        diag_nomem(s->d);
        return;
    }
    diag_add_excerpt(s->d, DIAG_ERROR, loc, s->ls, s->ll, span, "%s", b.data);
    buf_free(&b);
}

static const char *const family_name[] = {"unknown", "BSIM", "Mos1"};

/* The device row of a block: one record per column (merged with earlier tables). */
static int start_block(Show *s)
{
    OpTable *t = s->t;
    s->block++;
    s->ncols = 0;
    size_t ndev = s->ntok - 1;
    if (ndev == 0)
        return 1; /* no columns: nothing to read */
    /* MOSFET instance names start with m (top level "mn1", in a subcircuit "m.x1.mn1") */
    if (s->tok[1].s[0] != 'm' && s->tok[1].s[0] != 'M')
        return 1; /* not a MOSFET block: skip it */
    if (s->hard_at.line && !s->stale_reported) {
        s->stale_reported = true;
        s->nerr++;
        diag_add(s->d, DIAG_ERROR, s->hard_at,
                 "the operating point failed here ('%.*s'): the device tables after this line (from line %u) "
                 "hold values left from the failed iterations, not a solution; fix the simulation first",
                 (int)s->hard_n, s->hard_text, s->line);
    }
    OpFamily fam = family_of(s->type, s->ntype);
    if (fam == OPFAM_UNKNOWN) {
        bool seen = false;
        for (size_t i = 0; i < s->nnoted; i++)
            if (strlen(s->noted[i]) == s->ntype && memcmp(s->noted[i], s->type, s->ntype) == 0)
                seen = true;
        if (!seen) {
            const char *ty = arena_strndup(&t->arena, s->type, s->ntype);
            if (!ty)
                return ERR_NOMEM;
            if (s->nnoted < sizeof s->noted / sizeof s->noted[0])
                s->noted[s->nnoted++] = ty;
            diag_add(s->d, DIAG_NOTE, (SrcLoc){t->file.path, s->type_line, 2},
                     "device type '%s': values kept as printed; biaslint knows the sign conventions of "
                     "BSIM3, BSIM4 and Mos1 only",
                     ty);
        }
    }
    for (size_t j = 0; j < ndev; j++) {
        const Tok *tk = &s->tok[j + 1];
        const char *cn;
        size_t cl;
        op_canonical(tk->s, tk->n, &cn, &cl);
        SrcLoc loc = tok_loc(s, tk);
        if (memchr(cn, '\0', cl)) { /* a name biaslint could not print nor match */
            fail_at(s, loc, (uint32_t)tk->n, "a NUL byte in this device name: the file is damaged");
            if (BUF_PUSH(s->cols, s->ncols, s->colcap, NO_RECORD) != ERR_OK)
                return ERR_NOMEM;
            continue;
        }
        OpRecord *r = op_add(t, cn, cl, loc, true, s->d);
        if (!r)
            return ERR_NOMEM; /* merge never fails otherwise */
        uint32_t idx = (uint32_t)(r - t->recs);
        if (tk->n == SHOW_NAME_CUT)
            r->truncated = true;
        if (r->family == OPFAM_UNKNOWN)
            r->family = fam;
        else if (fam != OPFAM_UNKNOWN && r->family != fam)
            fail_at(s, loc, (uint32_t)tk->n, "device '%.*s' is a %s device here but a %s device in an earlier table",
                    (int)tk->n, tk->s, family_name[fam], family_name[r->family]);
        if (t->n > s->nstamp) { /* stamps of new records start at 0: no block yet */
            if (buf_grow_array((void **)&s->stamp, &s->stampcap, t->n, sizeof *s->stamp) != ERR_OK)
                return ERR_NOMEM;
            memset(s->stamp + s->nstamp, 0, (t->n - s->nstamp) * sizeof *s->stamp);
            s->nstamp = t->n;
        }
        if (s->stamp[idx] == s->block) {
            fail_at(s, loc, (uint32_t)tk->n,
                    "two devices of this table print as '%.*s': ngspice cuts names to 21 characters, so they "
                    "cannot be told apart; dump a raw file or a CSV table instead",
                    (int)tk->n, tk->s);
            idx = NO_RECORD; /* its values would only add conflicts */
        } else {
            s->stamp[idx] = s->block;
        }
        if (BUF_PUSH(s->cols, s->ncols, s->colcap, idx) != ERR_OK)
            return ERR_NOMEM;
    }
    return ERR_OK;
}

static int model_row(Show *s)
{
    OpTable *t = s->t;
    if (s->ntok - 1 != s->ncols) {
        fail_at(s, line_loc(s), 0, "the model row has %zu names for %zu devices", s->ntok - 1, s->ncols);
        return ERR_OK;
    }
    for (size_t j = 0; j < s->ncols; j++) {
        const Tok *tk = &s->tok[j + 1];
        if (s->cols[j] == NO_RECORD)
            continue;
        const char *m = str_intern(t->names, tk->s, tk->n);
        if (!m)
            return ERR_NOMEM;
        OpRecord *r = &t->recs[s->cols[j]];
        if (!r->model)
            r->model = m;
        else if (r->model != m)
            fail_at(s, tok_loc(s, tk), (uint32_t)tk->n, "device '%s' has model '%.*s' here but '%s' in an earlier table",
                    r->name, (int)tk->n, tk->s, r->model);
    }
    return ERR_OK;
}

static bool all_question(const Tok *tk)
{
    for (size_t i = 0; i < tk->n; i++)
        if (tk->s[i] != '?')
            return false;
    return tk->n > 0;
}

static int value_row(Show *s, OpQty q)
{
    OpTable *t = s->t;
    const Tok *lab = &s->tok[0];
    if (s->ntok - 1 != s->ncols) {
        fail_at(s, tok_loc(s, lab), (uint32_t)lab->n,
                "the '%.*s' row has %zu values for %zu devices (other text mixed into the table? capture "
                "ngspice's stdout apart from stderr)",
                (int)lab->n, lab->s, s->ntok - 1, s->ncols);
        return ERR_OK;
    }
    for (size_t j = 0; j < s->ncols; j++) {
        const Tok *tk = &s->tok[j + 1];
        if (all_question(tk) || s->cols[j] == NO_RECORD)
            continue; /* the device has no such parameter */
        double v;
        int st = tk->n >= 2 && tk->s[0] == '<' ? OPNUM_NONFINITE : op_parse_number(tk->s, tk->n, &v);
        SrcLoc loc = tok_loc(s, tk);
        if (st == OPNUM_NONFINITE) {
            if (!s->nonfinite++)
                s->nonfinite_at = loc;
            continue;
        }
        if (st != OPNUM_OK) {
            fail_at(s, loc, (uint32_t)tk->n, "%s of device '%s': '%.*s' is %s", op_qty_name[q], t->recs[s->cols[j]].name,
                    (int)tk->n, tk->s, st == OPNUM_RANGE ? "out of range for a double" : "not a number");
            continue;
        }
        OpRecord *r = &t->recs[s->cols[j]];
        if (op_set(s->t, r, q, v, loc, s->d) != ERR_OK) {
            s->nerr++;
            if (r->truncated)
                diag_add(s->d, DIAG_NOTE, loc,
                         "'%s' is a name ngspice may have cut to 21 characters: two devices can print the same; "
                         "dump a raw file or a CSV table instead",
                         r->name);
        }
    }
    return ERR_OK;
}

/* A node table line: "<TAB>name   value". Returns false when the line is not one. */
static bool node_row(Show *s, int *rc)
{
    *rc = ERR_OK;
    if (s->ntok != 2)
        return false;
    double v;
    if (op_parse_number(s->tok[1].s, s->tok[1].n, &v) != OPNUM_OK)
        return false;
    *rc = op_add_node(s->t, s->tok[0].s, s->tok[0].n, v);
    return true;
}

static bool dashes(const Show *s)
{
    for (size_t i = 0; i < s->ntok; i++)
        for (size_t k = 0; k < s->tok[i].n; k++)
            if (s->tok[i].s[k] != '-')
                return false;
    return s->ntok > 0;
}

static void temperature(Show *s)
{
    static const char key[] = "Doing analysis at TEMP = ";
    if (!isnan(s->t->temp_c) || !starts(s->ls, s->ll, key))
        return;
    const char *p = s->ls + sizeof key - 1;
    size_t n = 0;
    while (p + n < s->ls + s->ll && !is_blank(p[n]))
        n++;
    double v;
    if (op_parse_number(p, n, &v) == OPNUM_OK)
        s->t->temp_c = v;
}

/* After a blank line inside a table: does this line continue it? Only a quantity row of the table's
 * width whose values are all numbers or ?????????, so that no other text is misread. */
static bool resumes_block(const Show *s)
{
    if (s->ncols == 0 || s->ntok != s->ncols + 1 || op_qty_lookup_ngspice(s->tok[0].s, s->tok[0].n) < 0)
        return false;
    for (size_t j = 1; j < s->ntok; j++) {
        double v;
        int st = op_parse_number(s->tok[j].s, s->tok[j].n, &v);
        if (!all_question(&s->tok[j]) && st != OPNUM_OK && st != OPNUM_NONFINITE)
            return false;
    }
    return true;
}

/* A line outside any table: the node table's start, the temperature, a failure. */
static void scan_line(Show *s, State *st)
{
    OpTable *t = s->t;
    if (s->ntok == 2 && tok_is(&s->tok[0], "Node") && tok_is(&s->tok[1], "Voltage")) {
        *st = ST_NODES;
        return;
    }
    temperature(s);
    int f = failure_marker(s->ls, s->ll);
    if (f == 2 && !s->hard_at.line) {
        s->hard_at = (SrcLoc){t->file.path, s->line, 1};
        s->hard_text = s->ls;
        s->hard_n = s->ll;
        trim(&s->hard_text, &s->hard_n);
    } else if (f == 1 && !s->soft_at.line) {
        s->soft_at = (SrcLoc){t->file.path, s->line, 1};
        s->soft_text = s->ls;
        s->soft_n = s->ll;
        trim(&s->soft_text, &s->soft_n);
    }
}

static int show_parse(OpTable *t, DiagList *d)
{
    Show s;
    memset(&s, 0, sizeof s);
    s.t = t;
    s.d = d;
    s.text = t->file.text;
    s.len = t->file.len;
    State st = ST_SCAN;
    bool pending = false; /* the previous line was a header */
    int rc = ERR_OK;
    while (next_line(&s)) {
        if ((rc = tokenize(&s)) != ERR_OK)
            goto fail;
        const char *ty;
        size_t nty;
        bool is_header = header_line(s.ls, s.ll, &ty, &nty);
        bool was_pending = pending;
        pending = false;
        if (s.ntok == 0) { /* a blank line ends a table, unless the table goes on after it */
            st = st == ST_BLOCK || st == ST_AFTER ? ST_AFTER : ST_SCAN;
            continue;
        }
        if (is_header) { /* a header only if a device row follows; inside a table it may be other text */
            pending = true;
            s.type = ty;
            s.ntype = nty;
            s.type_line = s.line;
            if (st != ST_BLOCK)
                st = ST_SCAN;
            continue;
        }
        if (was_pending && tok_is(&s.tok[0], "device")) {
            rc = start_block(&s);
            if (rc < 0)
                goto fail;
            st = rc == 1 ? ST_SKIP : ST_BLOCK;
            rc = ERR_OK;
            continue;
        }
        if (st == ST_AFTER) { /* text (stderr, with 2>&1) may have landed inside the table */
            if (resumes_block(&s)) {
                st = ST_BLOCK;
            } else {
                scan_line(&s, &st); /* the table may still go on, until another one starts */
                continue;
            }
        }
        if (st == ST_NODES) {
            if (dashes(&s))
                continue;
            if (node_row(&s, &rc)) {
                if (rc != ERR_OK)
                    goto fail;
                continue;
            }
            st = ST_SCAN; /* the table ended: this line is read as any other */
        }
        switch (st) {
        case ST_BLOCK: {
            if (tok_is(&s.tok[0], "model")) {
                if ((rc = model_row(&s)) != ERR_OK)
                    goto fail;
                break;
            }
            int q = op_qty_lookup_ngspice(s.tok[0].s, s.tok[0].n);
            if (q >= 0 && (rc = value_row(&s, (OpQty)q)) != ERR_OK)
                goto fail;
            break;
        }
        case ST_SCAN:
            scan_line(&s, &st);
            break;
        default:
            break;
        }
    }
    if (s.nonfinite)
        diag_add(d, DIAG_WARNING, s.nonfinite_at, "%zu value%s printed as NaN or infinity, read as absent (the first here)",
                 s.nonfinite, s.nonfinite == 1 ? "" : "s");
    if (t->n == 0) {
        s.nerr++;
        if (s.hard_at.line || s.soft_at.line) {
            SrcLoc at = s.hard_at.line ? s.hard_at : s.soft_at;
            const char *txt = s.hard_at.line ? s.hard_text : s.soft_text;
            size_t n = s.hard_at.line ? s.hard_n : s.soft_n;
            diag_add(d, DIAG_ERROR, at,
                     "the simulation failed ('%.*s'): the log holds no device table; fix the simulation, "
                     "then dump the operating point again",
                     (int)n, txt);
        } else {
            diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, 0, 0},
                     "no MOSFET table from ngspice's `show` command in this log: run `op` then `show m` in a "
                     ".control block (or a plain batch .op deck) and capture stdout");
        }
    } else if (s.hard_at.line && !s.stale_reported) {
        diag_add(d, DIAG_WARNING, s.hard_at,
                 "the log reports a failed analysis after its device tables ('%.*s'); the tables were read",
                 (int)s.hard_n, s.hard_text);
    }
    rc = s.nerr ? ERR_INPUT : ERR_OK;
fail:
    if (rc == ERR_NOMEM)
        diag_nomem(d);
    free(s.tok);
    free(s.cols);
    free(s.stamp);
    return rc;
}

/* 90: a device table; 60: ngspice's own lines (banner, a failure) without one; else 0. */
static int show_sniff(const char *buf, size_t len)
{
    int score = 0;
    bool pending = false;
    for (size_t pos = 0; pos < len;) {
        const char *p = buf + pos;
        const char *nl = memchr(p, '\n', len - pos);
        size_t n = nl ? (size_t)(nl - p) : len - pos;
        pos += n + (nl != NULL);
        if (n && p[n - 1] == '\r')
            n--;
        const char *ty;
        size_t nty;
        if (pending) {
            const char *q = p;
            size_t k = n;
            trim(&q, &k);
            if (starts(q, k, "device") && (k == 6 || is_blank(q[6])))
                return 90;
        }
        pending = header_line(p, n, &ty, &nty);
        if (starts(p, n, "Circuit: ") || starts(p, n, "ngspice-") || starts(p, n, "Doing analysis at TEMP") ||
            failure_marker(p, n))
            score = 60;
    }
    return score;
}

const OpReader op_show_reader = {"show", show_sniff, show_parse};
