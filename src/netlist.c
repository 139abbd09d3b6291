/* netlist: cards into the circuit model. One pass over each file in reading order: .include and
 * .lib calls recurse into the included text at the point of the call, so the card stream is the
 * one ngspice sees. Errors are recorded and the reader goes on with the next card. */
#include "netlist.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "buf.h"
#include "flatten.h"
#include "lex.h"
#include "memhint.h"
#include "source.h"

#define DEFAULT_MAX_DEVICES 50000000u
#define DEFAULT_INCLUDE_DEPTH 32u
#define DEFAULT_SUBCKT_DEPTH 64u
#define HARD_INCLUDE_DEPTH 1000u /* the reader recurses per include level: keep the C stack safe */

/* ---- diagnostics ----------------------------------------------------------------------------- */

static int vreport(Netlist *nl, DiagSeverity sev, uint32_t file, size_t off, uint32_t span, const char *fmt,
                   va_list ap)
{
    if (sev == DIAG_ERROR)
        nl->nerrors++;
    /* past the list's limit a diagnostic is only counted: skip the scans for its line, which on a long
       line with an error in every word would take time quadratic in the line's length */
    if (nl->d->dropped)
        return diag_add(nl->d, sev, (SrcLoc){0}, "%s", "");
    Buf msg = BUF_INIT;
    if (buf_vprintf(&msg, fmt, ap) != ERR_OK)
        return diag_nomem(nl->d);
    SrcFile *f = file < nl->ds->files.n ? nl->ds->files.files[file] : NULL;
    int rc;
    if (!f) {
        rc = diag_add(nl->d, sev, (SrcLoc){0}, "%s", msg.data);
    } else {
        SrcLoc l = src_loc(f, off);
        size_t ls, ll = src_line_at(f, off, &ls);
        size_t bom = lex_bom(f->text, f->len);
        if (ls == 0 && bom && ll >= bom) {
            ls += bom;
            ll -= bom;
            if (l.col > bom)
                l.col -= (uint32_t)bom;
        }
        rc = diag_add_excerpt(nl->d, sev, l, f->text + ls, ll, span, "%s", msg.data);
    }
    buf_free(&msg);
    return rc;
}

int nl_error(Netlist *nl, uint32_t file, size_t off, uint32_t span, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int rc = vreport(nl, DIAG_ERROR, file, off, span, fmt, ap);
    va_end(ap);
    return rc;
}

int nl_warn(Netlist *nl, uint32_t file, size_t off, uint32_t span, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int rc = vreport(nl, DIAG_WARNING, file, off, span, fmt, ap);
    va_end(ap);
    return rc;
}

static uint32_t span_of(size_t n)
{
    return n > 200 ? 200u : (uint32_t)n;
}

/* ---- the reader's state ---------------------------------------------------------------------- */

typedef struct {
    uint32_t file;
    const char *sec; /* section name for a .lib call, NULL for .include and the top file */
} Active;

typedef struct {
    const char *name;
    size_t start, end; /* the lines between `.lib name` and `.endl` */
    uint32_t line;     /* number of the first of them */
} LibSec;

typedef struct {
    int indexed, binary, unterminated;
    LibSec *secs;
    size_t nsecs, cap;
    StrMap map; /* section name -> index in secs */
} FileInfo;

/* A direct-mapped cache in front of the name table for names of up to 8 bytes (nodes, models,
 * instance names): most names of a big netlist repeat, and this saves a probe of a large table. */
#ifndef ICACHE_BITS /* the fuzz build (make fuzz) sets 8: a 2.5 MB calloc per load is most of its time */
#define ICACHE_BITS 16
#endif
typedef struct {
    uint64_t key;            /* the case-folded bytes */
    size_t len;
    const char *s;
    const NlSubckt *node_of; /* the subcircuit whose node table holds s at node_idx, or NULL */
    uint32_t node_idx;
} ICache;

typedef struct {
    Netlist *nl;
    ICache *icache;  /* 1 << ICACHE_BITS entries */
    NlSubckt **open; /* open .subckt definitions; open[0] is the top level */
    size_t nopen, capopen;
    Active *act;
    size_t nact, capact;
    StrMap filemap;  /* interned "dev:ino" -> file index */
    FileInfo *finfo; /* per file index */
    size_t capfinfo;
    ExprParser ep;
    int stop;        /* `.end` was read in the top file */
    int nomem;
    int warned_if;
    StrMap warned_dot; /* dot cards not supported that were named in a warning already */
} Parser;

static int nomem(Parser *ps)
{
    ps->nomem = 1;
    return diag_nomem(ps->nl->d);
}

/* An element's own name (M1, X3, R7): unique, so copied rather than interned (strtab.h). */
static const char *own_name(Parser *ps, const char *text, LexTok t)
{
    const char *s = str_copy(&ps->nl->ds->arena, text + t.off, t.len); /* top-level devices keep it */
    if (!s)
        nomem(ps);
    return s;
}

/* The cache entry for a name of up to 8 bytes (NULL for longer names or without a cache); *hit when
 * it holds that name. */
static ICache *icache_slot(Parser *ps, const char *text, LexTok t, int *hit)
{
    *hit = 0;
    if (t.len > 8 || !ps->icache)
        return NULL;
    uint64_t k = 0;
    for (size_t i = 0; i < t.len; i++) {
        unsigned char ch = (unsigned char)text[t.off + i];
        k = k << 8 | (ch >= 'A' && ch <= 'Z' ? ch + 32u : ch);
    }
    ICache *e = &ps->icache[(k * 0x9E3779B97F4A7C15ull) >> (64 - ICACHE_BITS)];
    if (e->s && e->key == k && e->len == t.len) {
        *hit = 1;
    } else {
        e->key = k;
        e->len = t.len;
        e->s = NULL;
        e->node_of = NULL;
    }
    return e;
}

static const char *intern(Parser *ps, const char *text, LexTok t)
{
    int hit;
    ICache *e = icache_slot(ps, text, t, &hit);
    if (hit)
        return e->s;
    const char *s = str_intern(ps->nl->ds->names, text + t.off, t.len);
    if (!s) {
        nomem(ps);
        return NULL;
    }
    if (e)
        e->s = s;
    return s;
}

static inline const char *file_text(Parser *ps, uint32_t file)
{
    return ps->nl->ds->files.files[file]->text;
}

static NlSubckt *cur_def(Parser *ps)
{
    return ps->open[ps->nopen - 1];
}

static NlSubckt *new_subckt(Parser *ps, const char *name, NlSubckt *parent, uint32_t file, size_t off)
{
    Netlist *nl = ps->nl;
    NlSubckt *s = calloc(1, sizeof *s);
    if (!s || BUF_PUSH(nl->subs, nl->nsubs, nl->capsubs, s) != ERR_OK) {
        free(s);
        nomem(ps);
        return NULL;
    }
    s->name = name;
    s->parent = parent;
    s->index = (uint32_t)(nl->nsubs - 1);
    s->file = file;
    s->off = off;
    return s;
}

static int node_index(Parser *ps, NlSubckt *s, const char *text, LexTok t, uint32_t *idx)
{
    int hit;
    ICache *e = icache_slot(ps, text, t, &hit);
    if (hit && e->node_of == s) {
        *idx = e->node_idx;
        return ERR_OK;
    }
    if (s == ps->open[0]) {
        /* the top level, which holds every net of a flat netlist: a name's value in the design's
           table is its node index there, so one probe finds both (no node map). (Not "s->name is
           NULL": a .subckt card without a name makes a nameless subcircuit too; found by
           fuzz_netlist.) */
        uint32_t *v;
        const char *nm = str_intern_val(ps->nl->ds->names, text + t.off, t.len, &v);
        if (!nm)
            return nomem(ps);
        if (*v == STR_NOVAL) {
            if (s->nnodes >= UINT32_MAX - 1)
                return nomem(ps);
            *v = (uint32_t)s->nnodes; /* the push below leaves the table (and v) as it is */
            if (BUF_PUSH(s->nodes, s->nnodes, s->capnodes, nm) != ERR_OK)
                return nomem(ps);
        }
        *idx = *v;
        if (e) {
            e->s = nm;
            e->node_of = s;
            e->node_idx = *idx;
        }
        return ERR_OK;
    }
    const char *nm = hit ? e->s : str_intern(ps->nl->ds->names, text + t.off, t.len);
    if (!nm)
        return nomem(ps);
    if (e) {
        e->s = nm;
        e->node_of = s;
    }
    if (strmap_get(&s->nodemap, nm, idx)) {
        if (e)
            e->node_idx = *idx;
        return ERR_OK;
    }
    if (s->nnodes == UINT32_MAX - 1)
        return nomem(ps);
    if (BUF_PUSH(s->nodes, s->nnodes, s->capnodes, nm) != ERR_OK ||
        strmap_put(&s->nodemap, nm, s->nnodes - 1) != ERR_OK)
        return nomem(ps);
    *idx = s->nnodes - 1;
    if (e)
        e->node_idx = *idx;
    return ERR_OK;
}

static int add_param(Parser *ps, NlSubckt *s, const char *name, Expr *val, uint32_t file, size_t off)
{
    NlParam p = {name, val, file, off};
    if (BUF_PUSH(s->params, s->nparams, s->capparams, p) != ERR_OK ||
        strmap_put(&s->parammap, name, s->nparams - 1) != ERR_OK)
        return nomem(ps);
    return ERR_OK;
}

/* ---- values ---------------------------------------------------------------------------------- */

static inline int is_blank(int ch)
{
    return ch == ' ' || ch == '\t' || ch == '\r' || ch == '\f' || ch == '\v';
}

/* Skip one value (braces, quotes or a bare word) without reading it. */
static void skip_value(LexCur *c, unsigned flags)
{
    int ch = lex_cur_skip(c);
    if (ch == '{' || ch == '\'' || ch == '"') {
        int close = ch == '{' ? '}' : ch, depth = 0;
        for (;;) {
            int k = lex_cur_peek(c);
            if (!k) {
                if (!lex_cur_skip(c))
                    return;
                continue;
            }
            lex_cur_adv(c);
            if (ch == '{' && k == '{')
                depth++;
            else if (k == close && (ch != '{' || --depth == 0))
                return;
        }
    }
    while (c->pos < c->eol && !is_blank((unsigned char)c->text[c->pos]) &&
           !((flags & EXPR_PARENS) && (c->text[c->pos] == ')' || c->text[c->pos] == ',')))
        c->pos++;
}

/* Parse one value into an expression; on a syntax error records it, skips the value and returns
 * NULL (ps->nomem set when memory ran out). */
static Expr *parse_expr(Parser *ps, uint32_t file, LexCur *c, unsigned flags)
{
    LexCur save = *c;
    Expr *e = expr_parse(&ps->ep, c, flags);
    if (e)
        return e;
    if (ps->ep.nomem) {
        nomem(ps);
        return NULL;
    }
    nl_error(ps->nl, file, ps->ep.err_off, 1, "%s", ps->ep.err);
    *c = save;
    skip_value(c, flags);
    return NULL;
}

/* A value into *v: a plain number is kept without an expression tree (the common case: w=1u). */
static int parse_val(Parser *ps, uint32_t file, LexCur *c, unsigned flags, NlVal *v)
{
    v->e = NULL;
    v->v = NAN;
    int ch = lex_cur_skip(c);
    if (ch && ch != '{' && ch != '\'' && ch != '"') {
        size_t e = c->pos;
        while (e < c->eol && !is_blank((unsigned char)c->text[e]) &&
               !((flags & EXPR_PARENS) && (c->text[e] == ')' || c->text[e] == ',')))
            e++;
        double x;
        size_t n = lex_number(c->text + c->pos, e - c->pos, (flags & EXPR_SPICE_NUM) ? LEX_NUM_SPICE : 0, &x);
        if (n && n == e - c->pos && isfinite(x)) {
            v->v = x;
            c->pos = e;
            return ERR_OK;
        }
    }
    Expr *x = parse_expr(ps, file, c, flags);
    if (!x)
        return ps->nomem ? ERR_NOMEM : ERR_INPUT;
    double k;
    if (expr_const(x, &k))
        v->v = k;
    else
        v->e = x;
    return ERR_OK;
}

/* 1 when the next thing on the line is '=' (consumed). */
static int take_eq(LexCur *c)
{
    if (lex_cur_skip(c) != '=')
        return 0;
    lex_cur_adv(c);
    return 1;
}

/* ---- files ----------------------------------------------------------------------------------- */

static FileInfo *finfo(Parser *ps, uint32_t file)
{
    if (file >= ps->capfinfo) {
        size_t old = ps->capfinfo;
        if (buf_grow_array((void **)&ps->finfo, &ps->capfinfo, (size_t)file + 1, sizeof *ps->finfo) != ERR_OK) {
            nomem(ps);
            return NULL;
        }
        memset(ps->finfo + old, 0, (ps->capfinfo - old) * sizeof *ps->finfo);
    }
    return &ps->finfo[file];
}

static int is_file(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && !S_ISDIR(st.st_mode);
}

/* The path of the file a card names: next to the including file first, then (for .lib) next to the
 * top netlist, then as written (from the working folder, where ngspice looks first). NULL on out of
 * memory; *found is 0 when none exists (the result is then the first candidate, for the message). */
static char *find_file(Parser *ps, uint32_t from, const char *name, int lib, int *found)
{
    char *tilde = NULL;
    const char *home = getenv("HOME");
    if (name[0] == '~' && name[1] == '/' && home) {
        size_t hl = strlen(home), nl = strlen(name);
        if (!(tilde = malloc(hl + nl)))
            return NULL;
        memcpy(tilde, home, hl);
        memcpy(tilde + hl, name + 1, nl);
        name = tilde;
    }
    const SrcSet *fs = &ps->nl->ds->files;
    char *cand[3] = {NULL, NULL, NULL};
    int n = 0;
    cand[n++] = src_resolve(fs->files[from]->path, name);
    if (lib && from != 0)
        cand[n++] = src_resolve(fs->files[0]->path, name);
    if (name[0] != '/')
        cand[n++] = strdup(name);
    char *pick = NULL;
    *found = 0;
    int oom = 0;
    for (int i = 0; i < n; i++) {
        if (!cand[i])
            oom = 1;
        else if (!pick && is_file(cand[i])) {
            pick = cand[i];
            cand[i] = NULL;
            *found = 1;
        }
    }
    if (!pick && !oom) {
        pick = cand[0];
        cand[0] = NULL;
    }
    if (oom) {
        free(pick);
        pick = NULL;
    }
    for (int i = 0; i < n; i++)
        free(cand[i]);
    free(tilde);
    return pick;
}

/* Load (or find already loaded) the file at path; *idx its index. An error at (from, off) when it
 * cannot be read or looks binary. */
static int open_file(Parser *ps, const char *path, uint32_t from, size_t off, size_t span, uint32_t *idx)
{
    Netlist *nl = ps->nl;
    struct stat st;
    if (stat(path, &st) == 0) {
        char key[64];
        snprintf(key, sizeof key, "%llx:%llx", (unsigned long long)st.st_dev, (unsigned long long)st.st_ino);
        const char *k = str_intern(nl->ds->names, key, strlen(key));
        if (!k)
            return nomem(ps);
        if (strmap_get(&ps->filemap, k, idx))
            return ps->finfo[*idx].binary ? ERR_INPUT : ERR_OK;
        SrcLoc from_loc = src_loc(nl->ds->files.files[from], off);
        int rc = src_set_load(&nl->ds->files, path, from_loc, nl->d, idx);
        if (rc != ERR_OK) {
            if (rc != ERR_NOMEM)
                nl->nerrors++;
            else
                ps->nomem = 1;
            return rc;
        }
        FileInfo *fi = finfo(ps, *idx);
        if (!fi || strmap_put(&ps->filemap, k, *idx) != ERR_OK)
            return nomem(ps);
        SrcFile *f = nl->ds->files.files[*idx];
        size_t bad;
        if (lex_binary(f->text, f->len, &bad)) {
            fi->binary = 1;
            nl_error(nl, from, off, span_of(span), "'%s' looks like a binary file, not a netlist (%s at offset %zu)",
                     path, f->text[bad] ? "control byte" : "NUL byte", bad);
            return ERR_INPUT;
        }
        return ERR_OK;
    }
    nl_error(nl, from, off, span_of(span), "cannot open '%s': no such file", path);
    return ERR_IO;
}

/* ---- .lib sections --------------------------------------------------------------------------- */

static int word_is(const char *text, LexTok t, const char *kw)
{
    return lex_is(text, t, kw);
}

/* Find the `.lib name` ... `.endl` sections of a file, once. */
static int index_sections(Parser *ps, uint32_t file)
{
    FileInfo *fi = finfo(ps, file);
    if (!fi)
        return ERR_NOMEM;
    if (fi->indexed)
        return ERR_OK;
    fi->indexed = 1;
    SrcFile *f = ps->nl->ds->files.files[file];
    Lexer lx;
    lex_init(&lx, f->text, f->len, 0);
    LexLine ln;
    LibSec cur = {0};
    size_t cur_off = 0;
    int open = 0, in_control = 0;
    while (lex_next(&lx, &ln)) {
        if (ln.kind != LEX_CARD || f->text[ln.body] != '.')
            continue;
        LexCur c;
        lex_cur_init(&c, f->text, &ln);
        LexTok kw;
        lex_word(&c, &kw, 0);
        if (in_control) {
            in_control = !word_is(f->text, kw, ".endc");
            continue;
        }
        if (word_is(f->text, kw, ".control")) {
            in_control = 1;
        } else if (word_is(f->text, kw, ".lib")) {
            LexTok a, b;
            int na = lex_name(&c, &a);
            int nb = na == 1 ? lex_name(&c, &b) : 0;
            if (na != 1 || nb != 0)
                continue; /* a call, or broken: the linear reader reports it */
            if (open) {
                nl_error(ps->nl, file, ln.body, 4, "section '%s' starts before section '%s' ends with .endl",
                         intern(ps, f->text, a) ? intern(ps, f->text, a) : "?", cur.name);
                continue;
            }
            if (!(cur.name = intern(ps, f->text, a)))
                return ERR_NOMEM;
            cur.start = ln.end;
            cur.line = ln.last + 1;
            cur_off = ln.body;
            open = 1;
        } else if (word_is(f->text, kw, ".endl") && open) {
            cur.end = ln.start;
            open = 0;
            if (BUF_PUSH(fi->secs, fi->nsecs, fi->cap, cur) != ERR_OK)
                return nomem(ps);
            if (!strmap_get(&fi->map, cur.name, NULL) && strmap_put(&fi->map, cur.name, (uint32_t)(fi->nsecs - 1)) != ERR_OK)
                return nomem(ps);
        }
    }
    if (open) {
        if (!fi->unterminated)
            nl_error(ps->nl, file, cur_off, 4, "section '%s' has no .endl", cur.name);
        fi->unterminated = 1;
        cur.end = f->len;
        if (BUF_PUSH(fi->secs, fi->nsecs, fi->cap, cur) != ERR_OK)
            return nomem(ps);
        if (!strmap_get(&fi->map, cur.name, NULL) && strmap_put(&fi->map, cur.name, (uint32_t)(fi->nsecs - 1)) != ERR_OK)
            return nomem(ps);
    }
    return ERR_OK;
}

/* ---- cards ----------------------------------------------------------------------------------- */

static int read_range(Parser *ps, uint32_t file, size_t start, size_t end, uint32_t line, int title, size_t anchor);

static int add_card(Parser *ps, uint32_t file, const LexLine *ln, size_t anchor, uint32_t *idx)
{
    Design *ds = ps->nl->ds;
    SrcFile *f = ds->files.files[file];
    size_t ls = ln->start;
    uint32_t col = (uint32_t)(ln->body - ls + 1);
    if (ls == 0 && lex_bom(f->text, f->len) && col > 3)
        col -= 3;
    /* a card of the top file is annotated after itself, even when a .lib call of the top file read it */
    Card card = {file, ln->line, col, ln->start, ln->end, anchor == SIZE_MAX || file == 0 ? ln->end : anchor};
    if (ds->ncards >= UINT32_MAX - 1 || BUF_PUSH(ds->cards, ds->ncards, ps->nl->capcards, card) != ERR_OK)
        return nomem(ps);
    *idx = (uint32_t)(ds->ncards - 1);
    return ERR_OK;
}

/* M<name> d g s b model [off] [name=value ...] */
static int card_mos(Parser *ps, uint32_t file, const LexLine *ln, size_t anchor)
{
    const char *text = file_text(ps, file);
    NlSubckt *s = cur_def(ps);
    LexCur c;
    lex_cur_init(&c, text, ln);
    LexTok name, t[5];
    lex_word(&c, &name, 0);
    NlMos m;
    memset(&m, 0, sizeof m);
    m.fam = NL_NONE;
    m.w.v = m.l.v = m.m.v = m.nf.v = NAN;
    if (!(m.name = own_name(ps, text, name)) || add_card(ps, file, ln, anchor, &m.card) != ERR_OK)
        return ERR_NOMEM;
    int rc, bad = 0;
    unsigned nbare = 0;
    LexTok w;
    int have_param = 0;
    while (lex_word(&c, &w, 0)) {
        if (lex_cur_skip(&c) == '=' && !(w.len == 1 && text[w.off] == '=')) {
            have_param = 1;
            break;
        }
        if (w.len == 1 && text[w.off] == '=') {
            nl_error(ps->nl, file, w.off, 1, "'=' without a parameter name before it");
            return ERR_INPUT;
        }
        if (nbare < 5)
            t[nbare] = w;
        else if (!word_is(text, w, "off")) {
            nl_error(ps->nl, file, w.off, span_of(w.len),
                     "%s: unexpected '%.*s' after the model name (biaslint reads MOSFETs with 4 nodes: d g s b model)",
                     m.name, (int)(w.len > 60 ? 60 : w.len), text + w.off);
            return ERR_INPUT;
        }
        nbare++;
    }
    if (nbare < 5) {
        nl_error(ps->nl, file, name.off, span_of(name.len),
                 "%s: a MOSFET needs 4 nodes (drain gate source bulk) and a model name; found %u name%s", m.name, nbare,
                 nbare == 1 ? "" : "s");
        return ERR_INPUT;
    }
    for (int k = 0; k < 4; k++)
        if (node_index(ps, s, text, t[k], &m.node[k]) != ERR_OK)
            return ERR_NOMEM;
    if (!(m.model = intern(ps, text, t[4])))
        return ERR_NOMEM;
    m.model_off = (uint32_t)(t[4].off - ln->start);
    /* parameters: w l m nf are read, the others skipped */
    while (have_param) {
        lex_cur_adv(&c); /* the '=' */
        NlVal *v = NULL;
        if (word_is(text, w, "w"))
            v = &m.w;
        else if (word_is(text, w, "l"))
            v = &m.l;
        else if (word_is(text, w, "m"))
            v = &m.m;
        else if (word_is(text, w, "nf"))
            v = &m.nf;
        if (v) {
            rc = parse_val(ps, file, &c, EXPR_BARE | EXPR_SPICE_NUM, v);
            if (rc == ERR_NOMEM)
                return rc;
            if (rc != ERR_OK)
                bad = 1;
        } else {
            if (!lex_cur_skip(&c)) {
                nl_error(ps->nl, file, c.pos > 0 ? c.pos - 1 : 0, 1, "the value of '%.*s' is missing",
                         (int)(w.len > 60 ? 60 : w.len), text + w.off);
                bad = 1;
                break;
            }
            skip_value(&c, 0);
        }
        have_param = 0;
        while (lex_word(&c, &w, 0)) {
            if (w.len == 1 && text[w.off] == '=') {
                nl_error(ps->nl, file, w.off, 1, "'=' without a parameter name before it");
                bad = 1;
                skip_value(&c, 0);
                continue;
            }
            if (lex_cur_skip(&c) == '=') {
                have_param = 1;
                break;
            }
            if (!word_is(text, w, "off")) {
                nl_error(ps->nl, file, w.off, span_of(w.len), "unexpected '%.*s' among the parameters (name=value expected)",
                         (int)(w.len > 60 ? 60 : w.len), text + w.off);
                bad = 1;
            }
        }
    }
    if (bad)
        return ERR_INPUT;
    if (nl_mos_push(s, &m) != ERR_OK)
        return nomem(ps);
    return ERR_OK;
}

/* X<name> node... subckt [params:] [name=value ...] */
static int card_inst(Parser *ps, uint32_t file, const LexLine *ln, size_t anchor)
{
    Netlist *nl = ps->nl;
    const char *text = file_text(ps, file);
    NlSubckt *s = cur_def(ps);
    LexCur c;
    lex_cur_init(&c, text, ln);
    LexTok name, w;
    lex_word(&c, &name, 0);
    NlInst x;
    memset(&x, 0, sizeof x);
    x.m.v = NAN;
    x.file = file;
    x.off = ln->body;
    if (!(x.name = own_name(ps, text, name)) || add_card(ps, file, ln, anchor, &x.card) != ERR_OK)
        return ERR_NOMEM;
    int rc, bad = 0;
    /* the bare words: nodes, then the subcircuit name */
    Buf words = BUF_INIT; /* LexTok array */
    size_t nw = 0;
    int have_param = 0;
    while (lex_word(&c, &w, 0)) {
        if (w.len == 1 && text[w.off] == '=') {
            nl_error(nl, file, w.off, 1, "'=' without a parameter name before it");
            buf_free(&words);
            return ERR_INPUT;
        }
        if (word_is(text, w, "params:"))
            continue;
        if (lex_cur_skip(&c) == '=') {
            have_param = 1;
            break;
        }
        if (buf_append(&words, &w, sizeof w) != ERR_OK) {
            buf_free(&words);
            return nomem(ps);
        }
        nw++;
    }
    if (nw == 0) {
        nl_error(nl, file, name.off, span_of(name.len), "%s: the subcircuit name is missing", x.name);
        buf_free(&words);
        return ERR_INPUT;
    }
    LexTok *tw = (LexTok *)(void *)words.data;
    x.nnodes = (uint32_t)(nw - 1);
    x.sub_off = tw[nw - 1].off;
    if (!(x.subname = intern(ps, text, tw[nw - 1])))
        goto oom;
    if (x.nnodes && !(x.nodes = arena_array(&nl->parse, x.nnodes, sizeof *x.nodes)))
        goto oom;
    for (uint32_t k = 0; k < x.nnodes; k++)
        if (node_index(ps, s, text, tw[k], &x.nodes[k]) != ERR_OK)
            goto oom;
    buf_free(&words);
    /* parameters */
    Buf params = BUF_INIT;
    while (have_param) {
        lex_cur_adv(&c);
        const char *pn = intern(ps, text, w);
        if (!pn)
            goto oom2;
        if (word_is(text, w, "m")) {
            rc = parse_val(ps, file, &c, EXPR_BARE, &x.m);
        } else {
            NlParam p = {pn, NULL, file, w.off};
            p.val = parse_expr(ps, file, &c, EXPR_BARE);
            rc = p.val ? ERR_OK : ps->nomem ? ERR_NOMEM : ERR_INPUT;
            if (rc == ERR_OK && buf_append(&params, &p, sizeof p) != ERR_OK)
                goto oom2;
        }
        if (rc == ERR_NOMEM)
            goto oom2;
        if (rc != ERR_OK)
            bad = 1;
        have_param = 0;
        while (lex_word(&c, &w, 0)) {
            if (lex_cur_skip(&c) == '=' && !(w.len == 1 && text[w.off] == '=')) {
                have_param = 1;
                break;
            }
            nl_error(nl, file, w.off, span_of(w.len), "unexpected '%.*s' among the parameters (name=value expected)",
                     (int)(w.len > 60 ? 60 : w.len), text + w.off);
            bad = 1;
        }
    }
    x.nparams = (uint32_t)(params.len / sizeof(NlParam));
    if (x.nparams) {
        if (!(x.params = arena_alloc(&nl->parse, params.len)) ||
            !(x.slot = arena_array(&nl->parse, x.nparams, sizeof *x.slot)))
            goto oom2;
        memcpy(x.params, params.data, params.len);
    }
    buf_free(&params);
    if (bad)
        return ERR_INPUT;
    NlXRef xr = {s->index, (uint32_t)s->ninst};
    if (BUF_PUSH(s->inst, s->ninst, s->capinst, x) != ERR_OK ||
        BUF_PUSH(nl->xorder, nl->nxorder, nl->capxorder, xr) != ERR_OK)
        return nomem(ps);
    return ERR_OK;
oom:
    buf_free(&words);
    return nomem(ps);
oom2:
    buf_free(&params);
    return nomem(ps);
}

/* name=value pairs into subcircuit s (.param, the defaults of .subckt). In .param, words after a
 * bare value up to the next name= are ignored, as ngspice ignores them, with a warning. */
static int param_list(Parser *ps, uint32_t file, LexCur *c, NlSubckt *s, int dot_param)
{
    Netlist *nl = ps->nl;
    const char *text = c->text;
    LexTok w;
    int warned = 0, rc = ERR_OK;
    while (lex_word(c, &w, 0)) {
        if (w.len == 1 && text[w.off] == '=') {
            nl_error(nl, file, w.off, 1, "'=' without a parameter name before it");
            skip_value(c, 0);
            rc = ERR_INPUT;
            continue;
        }
        if (word_is(text, w, "params:"))
            continue;
        if (dot_param && memchr(text + w.off, '(', w.len)) {
            nl_error(nl, file, w.off, span_of(w.len), "a function in .param: write it as .func %.*s",
                     (int)(w.len > 60 ? 60 : w.len), text + w.off);
            return ERR_INPUT;
        }
        if (!take_eq(c)) {
            if (dot_param) {
                if (!warned)
                    nl_warn(nl, file, w.off, span_of(w.len),
                            "'%.*s' is not part of any value and is ignored (ngspice ignores it too): "
                            "write an expression with blanks in braces or quotes",
                            (int)(w.len > 60 ? 60 : w.len), text + w.off);
                warned = 1;
                continue;
            }
            nl_error(nl, file, w.off, span_of(w.len), "'%.*s' has no value (name=value expected)",
                     (int)(w.len > 60 ? 60 : w.len), text + w.off);
            rc = ERR_INPUT;
            continue;
        }
        const char *pn = intern(ps, text, w);
        if (!pn)
            return ERR_NOMEM;
        Expr *e = parse_expr(ps, file, c, EXPR_BARE);
        if (!e) {
            if (ps->nomem)
                return ERR_NOMEM;
            rc = ERR_INPUT;
            continue;
        }
        if (add_param(ps, s, pn, e, file, w.off) != ERR_OK)
            return ERR_NOMEM;
    }
    return rc;
}

/* .subckt name port... [params:] [name=value ...] */
static int card_subckt(Parser *ps, uint32_t file, const LexLine *ln, LexCur *c)
{
    Netlist *nl = ps->nl;
    const char *text = c->text;
    NlSubckt *parent = cur_def(ps);
    LexTok name, w;
    if (!lex_word(c, &name, 0) || (name.len == 1 && text[name.off] == '=')) {
        nl_error(nl, file, ln->body, 7, ".subckt without a name");
        name.len = 0;
    }
    const char *nm = name.len ? intern(ps, text, name) : NULL;
    if (name.len && !nm)
        return ERR_NOMEM;
    NlSubckt *s = new_subckt(ps, nm, parent, file, ln->body);
    if (!s || BUF_PUSH(ps->open, ps->nopen, ps->capopen, s) != ERR_OK)
        return nomem(ps);
    int rc = ERR_OK;
    uint32_t first;
    if (nm && strmap_get(&parent->subs, nm, &first)) {
        NlSubckt *f = nl->subs[first];
        nl_warn(nl, file, name.off, span_of(name.len),
                "subcircuit '%s' is defined again and this definition is ignored, as ngspice does "
                "(the first is in %s line %u)",
                nm, nl->ds->files.files[f->file]->path, src_loc(nl->ds->files.files[f->file], f->off).line);
    } else if (nm && strmap_put(&parent->subs, nm, s->index) != ERR_OK) {
        return nomem(ps);
    }
    /* ports: words up to the first name= or params: */
    LexCur save = *c;
    while (lex_word(c, &w, 0)) {
        if (word_is(text, w, "params:") || (w.len == 1 && text[w.off] == '=') || lex_cur_skip(c) == '=') {
            *c = save;
            break;
        }
        uint32_t idx;
        const char *pname = intern(ps, text, w);
        if (!pname)
            return ERR_NOMEM;
        if (strmap_get(&s->nodemap, pname, NULL)) {
            nl_error(nl, file, w.off, span_of(w.len), "port '%s' is listed twice", pname);
            rc = ERR_INPUT;
        } else if (node_index(ps, s, text, w, &idx) != ERR_OK) {
            return ERR_NOMEM;
        }
        save = *c;
    }
    s->nports = s->nnodes;
    int prc = param_list(ps, file, c, s, 0);
    if (prc == ERR_NOMEM)
        return prc;
    s->ndefaults = s->nparams;
    return prc != ERR_OK ? prc : rc;
}

/* .model name type [(] name=value ... [)] */
static int card_model(Parser *ps, uint32_t file, const LexLine *ln, LexCur *c)
{
    Netlist *nl = ps->nl;
    Design *ds = nl->ds;
    const char *text = c->text;
    NlSubckt *s = cur_def(ps);
    LexTok name, type, w;
    if (!lex_word(c, &name, LEX_W_PARENS) || !lex_word(c, &type, LEX_W_PARENS)) {
        nl_error(nl, file, ln->body, 6, ".model needs a name and a type");
        return ERR_INPUT;
    }
    const char *nm = intern(ps, text, name);
    if (!nm)
        return ERR_NOMEM;
    MosType mt = word_is(text, type, "nmos") ? MOS_NMOS : word_is(text, type, "pmos") ? MOS_PMOS : MOS_UNKNOWN;
    /* the family of the exact name */
    uint32_t fi;
    if (!strmap_get(&s->models, nm, &fi)) {
        NlFamily f = {-1, NULL, 0, 0, NULL};
        if (BUF_PUSH(nl->fams, nl->nfams, nl->capfams, f) != ERR_OK ||
            strmap_put(&s->models, nm, (uint32_t)(nl->nfams - 1)) != ERR_OK)
            return nomem(ps);
        fi = (uint32_t)(nl->nfams - 1);
    }
    if (mt == MOS_UNKNOWN) {
        if (!nl->fams[fi].other && nl->fams[fi].exact < 0 && !(nl->fams[fi].other = intern(ps, text, type)))
            return ERR_NOMEM;
        return ERR_OK;
    }
    if (nl->fams[fi].exact >= 0 || nl->fams[fi].other) {
        nl_warn(nl, file, name.off, span_of(name.len), "model '%s' is defined again; the first definition is used", nm);
        return ERR_OK;
    }
    Model md = {nm, mt, 1, NAN, NAN, NAN, file, ln->line};
    NlModel x;
    memset(&x, 0, sizeof x);
    x.file = file;
    x.off = ln->body;
    for (int k = 0; k < 4; k++)
        x.bin[k] = NAN;
    NlVal *vals[] = {&x.level, &x.lmin, &x.lmax, &x.wmin, &x.wmax, &x.cgso, &x.cgdo, &x.cgbo};
    static const char *const keys[] = {"level", "lmin", "lmax", "wmin", "wmax", "cgso", "cgdo", "cgbo"};
    for (int k = 0; k < 8; k++)
        vals[k]->v = NAN;
    int rc = ERR_OK;
    while (lex_word(c, &w, LEX_W_PARENS)) {
        if (!take_eq(c))
            continue; /* a flag, or stray text: ngspice warns about such parameters, they do not matter here */
        NlVal *v = NULL;
        for (int k = 0; k < 8 && !v; k++)
            if (word_is(text, w, keys[k]))
                v = vals[k];
        if (!v) {
            skip_value(c, EXPR_PARENS);
            continue;
        }
        int r = parse_val(ps, file, c, EXPR_BARE | EXPR_SPICE_NUM | EXPR_PARENS, v);
        if (r == ERR_NOMEM)
            return r;
        if (r != ERR_OK)
            rc = r;
    }
    if (ds->nmodels >= INT32_MAX - 1 || BUF_PUSH(ds->models, ds->nmodels, nl->capmodels, md) != ERR_OK)
        return nomem(ps);
    size_t cap = nl->capmodels;
    NlModel *mods = realloc(nl->mods, cap * sizeof *mods);
    if (!mods)
        return nomem(ps);
    nl->mods = mods;
    nl->mods[ds->nmodels - 1] = x;
    nl->fams[fi].exact = (int32_t)(ds->nmodels - 1);
    /* a bin: nch.1 is also a candidate for nch */
    const char *dot = strrchr(nm, '.');
    if (dot && dot != nm && dot[1]) {
        const char *base = str_intern(ds->names, nm, (size_t)(dot - nm));
        if (!base)
            return nomem(ps);
        uint32_t bi;
        if (!strmap_get(&s->models, base, &bi)) {
            NlFamily f = {-1, NULL, 0, 0, NULL};
            if (BUF_PUSH(nl->fams, nl->nfams, nl->capfams, f) != ERR_OK ||
                strmap_put(&s->models, base, (uint32_t)(nl->nfams - 1)) != ERR_OK)
                return nomem(ps);
            bi = (uint32_t)(nl->nfams - 1);
        }
        NlFamily *bf = &nl->fams[bi];
        uint32_t mi = (uint32_t)(ds->nmodels - 1);
        if (BUF_PUSH(bf->bins, bf->nbins, bf->capbins, mi) != ERR_OK)
            return nomem(ps);
    }
    return rc;
}

/* .func name(a, b) {body} (also `= body`) */
static int card_func(Parser *ps, uint32_t file, const LexLine *ln, LexCur *c)
{
    Netlist *nl = ps->nl;
    const char *text = c->text;
    NlSubckt *s = cur_def(ps);
    LexTok name, a;
    if (!lex_word(c, &name, LEX_W_PARENS) || lex_cur_skip(c) != '(') {
        nl_error(nl, file, name.len ? name.off : ln->body, 5, ".func needs a name and a parameter list: .func f(x) {x*2}");
        return ERR_INPUT;
    }
    lex_cur_adv(c);
    const char *args[16];
    unsigned n = 0;
    for (;;) {
        int ch = lex_cur_skip(c);
        if (ch == ')') {
            lex_cur_adv(c);
            break;
        }
        if (ch == ',') {
            lex_cur_adv(c);
            continue;
        }
        if (!lex_word(c, &a, LEX_W_PARENS) || (a.len == 1 && text[a.off] == '=')) {
            nl_error(nl, file, a.off, 1, "the parameter list of .func is not closed with ')'");
            return ERR_INPUT;
        }
        if (n == 16) {
            nl_error(nl, file, a.off, span_of(a.len), "a .func takes at most 16 parameters");
            return ERR_INPUT;
        }
        if (!(args[n++] = intern(ps, text, a)))
            return ERR_NOMEM;
    }
    take_eq(c);
    ps->ep.args = args;
    ps->ep.nargs = n;
    Expr *body = parse_expr(ps, file, c, EXPR_BARE);
    ps->ep.args = NULL;
    ps->ep.nargs = 0;
    if (!body)
        return ps->nomem ? ERR_NOMEM : ERR_INPUT;
    NlFunc f = {intern(ps, text, name), n, body};
    if (!f.name || BUF_PUSH(nl->funcs, nl->nfuncs, nl->capfuncs, f) != ERR_OK ||
        strmap_put(&s->funcs, f.name, (uint32_t)(nl->nfuncs - 1)) != ERR_OK)
        return nomem(ps);
    return ERR_OK;
}

/* .options name[=value] ...: temp, scale, defw, defl are kept */
static int card_options(Parser *ps, uint32_t file, LexCur *c)
{
    Netlist *nl = ps->nl;
    const char *text = c->text;
    LexTok w;
    int rc = ERR_OK;
    while (lex_word(c, &w, 0)) {
        if (!take_eq(c))
            continue;
        NlOpt *o = word_is(text, w, "temp") ? &nl->opt_temp
                   : word_is(text, w, "scale") ? &nl->opt_scale
                   : word_is(text, w, "defw") ? &nl->opt_defw
                   : word_is(text, w, "defl") ? &nl->opt_defl
                                             : NULL;
        if (o == &nl->opt_scale && (o->v.e || !isnan(o->v.v))) {
            /* ngspice 39 keeps the first scale (and the last temp, defw, defl): checked with show m : w */
            nl_warn(nl, file, w.off, (uint32_t)w.len, "a second .option scale is ignored, as ngspice 39 uses the first");
            o = NULL;
        }
        if (!o) {
            skip_value(c, 0);
            continue;
        }
        o->file = file;
        int r = parse_val(ps, file, c, EXPR_BARE | EXPR_SPICE_NUM, &o->v);
        if (r == ERR_NOMEM)
            return r;
        if (r != ERR_OK)
            rc = r;
    }
    return rc;
}

static int card_temp(Parser *ps, uint32_t file, const LexLine *ln, LexCur *c)
{
    Netlist *nl = ps->nl;
    NlVal v;
    if (!lex_cur_skip(c)) {
        nl_error(nl, file, ln->body, 5, ".temp needs a temperature");
        return ERR_INPUT;
    }
    int rc = parse_val(ps, file, c, EXPR_BARE | EXPR_SPICE_NUM, &v);
    if (rc != ERR_OK)
        return rc;
    if (!lex_cur_done(c)) {
        nl_warn(nl, file, ln->body, 5, ".temp with several temperatures is ignored, as ngspice ignores it");
        return ERR_OK;
    }
    nl->dot_temp.v = v;
    nl->dot_temp.file = file;
    return ERR_OK;
}

static int card_global(Parser *ps, LexCur *c)
{
    LexTok w;
    while (lex_word(c, &w, 0)) {
        const char *nm = intern(ps, c->text, w);
        if (!nm || strmap_put(&ps->nl->globals, nm, 1) != ERR_OK)
            return nomem(ps);
    }
    return ERR_OK;
}

static int active_has(Parser *ps, uint32_t file, const char *sec)
{
    for (size_t i = 0; i < ps->nact; i++)
        if (ps->act[i].file == file && ps->act[i].sec == sec)
            return 1;
    return 0;
}

/* .include file | .lib file section: read the file (or its section) here. */
static int card_include(Parser *ps, uint32_t file, const LexLine *ln, LexCur *c, size_t anchor, int lib)
{
    Netlist *nl = ps->nl;
    const char *text = c->text;
    LexTok ft, st = {0, 0};
    int r = lex_name(c, &ft);
    if (r <= 0) {
        nl_error(nl, file, r < 0 ? ft.off : ln->body, r < 0 ? 1 : 8,
                 r < 0 ? "this quote is not closed" : "%s needs a file name", lib ? ".lib" : ".include");
        return ERR_INPUT;
    }
    const char *sec = NULL;
    if (lib) {
        int r2 = lex_name(c, &st);
        if (r2 < 0) {
            nl_error(nl, file, st.off, 1, "this quote is not closed");
            return ERR_INPUT;
        }
        if (!(sec = intern(ps, text, st)))
            return ERR_NOMEM;
    }
    if ((unsigned)ps->nact > nl->opt.max_include_depth) {
        nl_error(nl, file, ft.off, span_of(ft.len), "files are included more than %u levels deep",
                 nl->opt.max_include_depth);
        return ERR_INPUT;
    }
    char *name = malloc(ft.len + 1);
    if (!name)
        return nomem(ps);
    memcpy(name, text + ft.off, ft.len);
    name[ft.len] = '\0';
    int found;
    char *path = find_file(ps, file, name, lib, &found);
    free(name);
    if (!path)
        return nomem(ps);
    uint32_t idx;
    int rc = found ? open_file(ps, path, file, ft.off, ft.len, &idx) : ERR_IO;
    if (!found && nl->pdk.allow_missing_lib) {
        /* a PDK library that is not installed here: go on, its cells are checked from their X cards */
        if (!nl->nmissing++ && !(nl->missing = arena_strndup(&nl->ds->arena, text + ft.off, ft.len))) {
            free(path);
            return nomem(ps);
        }
        nl_warn(nl, file, ft.off, span_of(ft.len),
                "cannot open '%s': no such file; going on without it (--allow-missing-lib): the models and "
                "cells it defines are missing", path);
        free(path);
        return ERR_OK;
    }
    if (!found)
        nl_error(nl, file, ft.off, span_of(ft.len),
                 "cannot open '%s': no such file (--allow-missing-lib checks the netlist without it)", path);
    if (rc != ERR_OK) {
        free(path);
        return rc == ERR_NOMEM ? rc : ERR_INPUT;
    }
    /* anchors of what this file holds: the top file's line through which it was reached */
    size_t a = anchor == SIZE_MAX || file == 0 ? ln->end : anchor;
    if (active_has(ps, idx, sec)) {
        if (sec)
            nl_error(nl, file, st.off, span_of(st.len), "section '%s' of '%s' includes itself", sec, path);
        else
            nl_error(nl, file, ft.off, span_of(ft.len), "'%s' includes itself (an include cycle)", path);
        free(path);
        return ERR_INPUT;
    }
    SrcFile *f = nl->ds->files.files[idx];
    if (lib) {
        if ((rc = index_sections(ps, idx)) != ERR_OK) {
            free(path);
            return rc;
        }
        FileInfo *fi = &ps->finfo[idx];
        uint32_t si;
        if (!strmap_get(&fi->map, sec, &si)) {
            nl_error(nl, file, st.off, span_of(st.len), "there is no section '%s' in '%s'", sec, path);
            free(path);
            return ERR_INPUT;
        }
        LibSec ls = fi->secs[si];
        free(path);
        Active ac = {idx, sec};
        if (BUF_PUSH(ps->act, ps->nact, ps->capact, ac) != ERR_OK)
            return nomem(ps);
        rc = read_range(ps, idx, ls.start, ls.end, ls.line, 0, a);
        ps->nact--;
        return rc;
    }
    free(path);
    Active ac = {idx, NULL};
    if (BUF_PUSH(ps->act, ps->nact, ps->capact, ac) != ERR_OK)
        return nomem(ps);
    rc = read_range(ps, idx, lex_bom(f->text, f->len), f->len, 1, 0, a);
    ps->nact--;
    return rc;
}

/* Any element card but M and X: R, C and D are counted as the passives of the enclosing definition
 * (a primitive cell may hold them), every other card as foreign; the transistor-like ones (Q J Z N)
 * are kept by name, so that the devices biaslint does not check can be listed. */
static int card_element(Parser *ps, uint32_t file, const LexLine *ln)
{
    NlSubckt *s = cur_def(ps);
    const char *text = file_text(ps, file);
    int ch = (unsigned char)text[ln->body] | 0x20;
    if (ch == 'r' || ch == 'c' || ch == 'd') {
        if (s->npassive < UINT32_MAX)
            s->npassive++;
        return ERR_OK;
    }
    if (s->nforeign < UINT32_MAX)
        s->nforeign++;
    if (prim_unchecked_kind(ch) < 0)
        return ERR_OK;
    LexCur c;
    lex_cur_init(&c, text, ln);
    LexTok name;
    lex_word(&c, &name, 0);
    NlOther o = {own_name(ps, text, name), file, ln->body};
    if (!o.name)
        return ERR_NOMEM;
    if (BUF_PUSH(s->other, s->nother, s->capother, o) != ERR_OK)
        return nomem(ps);
    return ERR_OK;
}

/* A dot card the reader has no use for. Analyses and output cards that ngspice 39 accepts are
 * skipped; any other is named in a warning (once per card name), since ngspice 39 stops on it. */
static int card_dot_other(Parser *ps, uint32_t file, LexTok kw)
{
    static const char *const quiet[] = {
        ".op",    ".dc",      ".ac",    ".tran",    ".noise", ".pz",   ".tf",           ".sens",  ".disto",
        ".four",  ".fourier", ".pss",   ".sp",      ".print", ".plot", ".probe",        ".save",  ".savecurrents",
        ".meas",  ".measure", ".ic",    ".nodeset", ".width", ".title", ".csparam",     ".prot",  ".unprot",
        ".endif",
    };
    const char *text = file_text(ps, file);
    for (size_t i = 0; i < sizeof quiet / sizeof quiet[0]; i++)
        if (word_is(text, kw, quiet[i]))
            return ERR_OK;
    const char *nm = intern(ps, text, kw);
    if (!nm)
        return ERR_NOMEM;
    if (strmap_get(&ps->warned_dot, nm, NULL))
        return ERR_OK;
    if (strmap_put(&ps->warned_dot, nm, 1) != ERR_OK)
        return nomem(ps);
    uint32_t span = span_of(kw.len);
    if (word_is(text, kw, ".hdl"))
        return nl_warn(ps->nl, file, kw.off, span,
                       "'.hdl' (Verilog-A models) is not supported: ngspice 39 stops on it and biaslint does not "
                       "read it, so devices that use its models are not checked");
    return nl_warn(ps->nl, file, kw.off, span,
                   "'%s' is not a card ngspice 39 knows (it stops with 'unimplemented control card'); biaslint "
                   "ignores it%s",
                   nm,
                   word_is(text, kw, ".protect") ? " and reads the cards up to .unprotect as written"
                   : word_is(text, kw, ".alter") ? " and reads the cards after it as part of the one circuit"
                                                 : "");
}

/* States of read_range between cards. */
enum { RS_CARDS, RS_CONTROL, RS_LIBDEF };

static int read_range(Parser *ps, uint32_t file, size_t start, size_t end, uint32_t line, int title, size_t anchor)
{
    Netlist *nl = ps->nl;
    SrcFile *f = nl->ds->files.files[file];
    const char *text = f->text;
    Lexer lx;
    if (title)
        lex_init(&lx, text, end, 1);
    else
        lex_init_range(&lx, text, start, end, line);
    LexLine ln;
    int state = RS_CARDS;
    size_t state_off = 0;
    const char *state_name = NULL;
    int top_main = file == 0 && ps->nact == 1 && ps->act[0].sec == NULL;
    size_t dropped = start; /* what lies behind the cursor is not read again soon (source.h) */
    while (!ps->stop && lex_next(&lx, &ln)) {
        src_drop_behind(f, &dropped, ln.start);
        if (ln.kind == LEX_TITLE) {
            size_t e = ln.end;
            while (e > ln.start && (text[e - 1] == '\n' || text[e - 1] == '\r'))
                e--;
            if (!(nl->ds->title = arena_strndup(&nl->ds->arena, text + ln.start, e - ln.start)))
                return nomem(ps);
            continue;
        }
        if (ln.kind == LEX_ORPHAN) {
            if (state == RS_CARDS)
                nl_warn(nl, file, ln.body, 1, "a continuation line with no card before it is ignored");
            continue;
        }
        LexCur c;
        lex_cur_init(&c, text, &ln);
        int ch = (unsigned char)text[ln.body];
        LexTok kw = {ln.body, 0};
        if (ch == '.')
            lex_word(&c, &kw, 0);
        if (state == RS_CONTROL) {
            if (ch == '.' && word_is(text, kw, ".endc"))
                state = RS_CARDS;
            continue;
        }
        if (state == RS_LIBDEF) {
            if (ch == '.' && word_is(text, kw, ".endl"))
                state = RS_CARDS;
            continue;
        }
        int rc = ERR_OK;
        switch (ch) {
        case 'm':
        case 'M':
            rc = card_mos(ps, file, &ln, anchor);
            break;
        case 'x':
        case 'X':
            rc = card_inst(ps, file, &ln, anchor);
            break;
        case '.':
            if (word_is(text, kw, ".subckt") || word_is(text, kw, ".macro")) { /* ngspice 39: .macro/.eom too */
                rc = card_subckt(ps, file, &ln, &c);
            } else if (word_is(text, kw, ".ends") || word_is(text, kw, ".eom")) {
                if (ps->nopen <= 1) {
                    nl_error(nl, file, ln.body, 5, ".ends without .subckt");
                } else {
                    NlSubckt *s = cur_def(ps);
                    LexTok en;
                    if (lex_word(&c, &en, 0) && s->name && !lex_is(text, en, s->name))
                        nl_warn(nl, file, en.off, span_of(en.len), "this .ends names '%.*s' but closes subcircuit '%s'",
                                (int)(en.len > 60 ? 60 : en.len), text + en.off, s->name);
                    ps->nopen--;
                }
            } else if (word_is(text, kw, ".param") || word_is(text, kw, ".params") ||
                       word_is(text, kw, ".parameter") || word_is(text, kw, ".parameters")) { /* as ngspice 39 */
                rc = param_list(ps, file, &c, cur_def(ps), 1);
            } else if (word_is(text, kw, ".model")) {
                rc = card_model(ps, file, &ln, &c);
            } else if (word_is(text, kw, ".include") || word_is(text, kw, ".inc") || word_is(text, kw, ".incl")) {
                rc = card_include(ps, file, &ln, &c, anchor, 0);
            } else if (word_is(text, kw, ".lib")) {
                LexCur probe = c;
                LexTok a, b;
                int na = lex_name(&probe, &a);
                int nb = na == 1 ? lex_name(&probe, &b) : 0;
                if (na == 1 && nb == 0) {
                    state = RS_LIBDEF;
                    state_off = ln.body;
                    if (!(state_name = intern(ps, text, a)))
                        return ERR_NOMEM;
                } else if (na == 0) {
                    nl_error(nl, file, ln.body, 4, ".lib needs a file and a section name, or a section name");
                } else {
                    rc = card_include(ps, file, &ln, &c, anchor, 1);
                }
            } else if (word_is(text, kw, ".endl")) {
                nl_error(nl, file, ln.body, 5, ".endl without .lib");
            } else if (word_is(text, kw, ".global")) {
                rc = card_global(ps, &c);
            } else if (word_is(text, kw, ".option") || word_is(text, kw, ".options") || word_is(text, kw, ".opt")) {
                rc = card_options(ps, file, &c);
            } else if (word_is(text, kw, ".temp")) {
                rc = card_temp(ps, file, &ln, &c);
            } else if (word_is(text, kw, ".func")) {
                rc = card_func(ps, file, &ln, &c);
            } else if (word_is(text, kw, ".control")) {
                state = RS_CONTROL;
                state_off = ln.body;
            } else if (word_is(text, kw, ".endc")) {
                nl_warn(nl, file, ln.body, 5, ".endc without .control is ignored");
            } else if (word_is(text, kw, ".end")) {
                if (top_main)
                    ps->stop = 1; /* in included files ngspice ignores .end, and so do we */
            } else if (word_is(text, kw, ".if") || word_is(text, kw, ".elseif") || word_is(text, kw, ".else")) {
                if (!ps->warned_if)
                    nl_warn(nl, file, ln.body, (uint32_t)kw.len,
                            "conditional blocks are not evaluated by biaslint: the cards of every branch are read");
                ps->warned_if = 1;
            } else {
                rc = card_dot_other(ps, file, kw); /* analyses and output cards are skipped; others named */
            }
            break;
        default:
            if (!((ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z')))
                nl_warn(nl, file, ln.body, 1, "a card starting with '%c' is not a SPICE card and is ignored",
                        ch >= 0x21 && ch < 0x7f ? ch : '?');
            else
                rc = card_element(ps, file, &ln); /* counted (primitives), Q J Z N kept for the summary */
            break;
        }
        if (rc == ERR_NOMEM || ps->nomem)
            return ERR_NOMEM;
    }
    if (state == RS_CONTROL)
        nl_error(nl, file, state_off, 8, ".control has no .endc");
    else if (state == RS_LIBDEF && !(file < ps->capfinfo && ps->finfo[file].unterminated)) {
        nl_error(nl, file, state_off, 4, "section '%s' has no .endl", state_name);
        FileInfo *fi = finfo(ps, file);
        if (fi)
            fi->unterminated = 1;
    }
    return ERR_OK;
}

/* ---- instance names used twice ---------------------------------------------------------------- */

typedef struct {
    uintptr_t key; /* the name's hash (instance names are copied, not interned: strtab.h) */
    uint32_t idx;  /* card order */
} NameRef;

/* Sort by key, stably: insertion sort for a handful, else LSD radix sort on the part of the keys
 * that differs, with digits as wide as log2(n) (8 to 16 bits), so that a pass costs O(n) and a
 * small subcircuit no small fortune in counters. Linear, unlike a comparison sort. */
static int radix_sort(NameRef *a, size_t n)
{
    if (n < 32) {
        for (size_t i = 1; i < n; i++) {
            NameRef x = a[i];
            size_t j = i;
            for (; j > 0 && a[j - 1].key > x.key; j--)
                a[j] = a[j - 1];
            a[j] = x;
        }
        return ERR_OK;
    }
    uintptr_t lo = a[0].key, hi = a[0].key;
    for (size_t i = 1; i < n; i++) {
        if (a[i].key < lo)
            lo = a[i].key;
        if (a[i].key > hi)
            hi = a[i].key;
    }
    unsigned bits = 8;
    while (bits < 16 && ((size_t)1 << bits) < n)
        bits++;
    size_t radix = (size_t)1 << bits, mask = radix - 1;
    NameRef *b = malloc(n * sizeof *b);
    size_t *cnt = malloc(radix * sizeof *cnt);
    if (!b || !cnt) {
        free(b);
        free(cnt);
        return ERR_NOMEM;
    }
    uintptr_t span = hi - lo;
    for (unsigned sh = 0; sh < sizeof(uintptr_t) * 8 && (span >> sh); sh += bits) {
        memset(cnt, 0, radix * sizeof *cnt);
        for (size_t i = 0; i < n; i++)
            cnt[((a[i].key - lo) >> sh) & mask]++;
        size_t sum = 0;
        for (size_t k = 0; k < radix; k++) {
            size_t c = cnt[k];
            cnt[k] = sum;
            sum += c;
        }
        for (size_t i = 0; i < n; i++)
            b[cnt[((a[i].key - lo) >> sh) & mask]++] = a[i];
        memcpy(a, b, n * sizeof *a);
    }
    free(b);
    free(cnt);
    return ERR_OK;
}

/* Where a card's name stands: its first non-blank byte. */
static size_t card_body(const Design *ds, const Card *c)
{
    const char *t = ds->files.files[c->file]->text;
    size_t o = c->start;
    while (o < c->end && is_blank((unsigned char)t[o]))
        o++;
    return o;
}

/* ngspice refuses two instances of one name in one subcircuit ("device already exists"); so does
 * biaslint, after reading, by sorting each subcircuit's instance names. */
static int check_duplicates(Parser *ps)
{
    Netlist *nl = ps->nl;
    Design *ds = nl->ds;
    for (size_t si = 0; si < nl->nsubs; si++) {
        NlSubckt *s = nl->subs[si];
        for (int kind = 0; kind < 2; kind++) {
            size_t n = kind == 0 ? s->nmos : s->ninst;
            if (n < 2)
                continue;
            NameRef *a = malloc(n * sizeof *a);
            if (!a)
                return nomem(ps);
#define NAME_OF(r) (kind == 0 ? nl_mos(s, (r).idx)->name : s->inst[(r).idx].name)
            for (size_t i = 0; i < n; i++) {
                const char *nm = kind == 0 ? nl_mos(s, i)->name : s->inst[i].name;
                a[i] = (NameRef){(uintptr_t)str_hash(nm, strlen(nm)), (uint32_t)i};
            }
            if (radix_sort(a, n) != ERR_OK) {
                free(a);
                return nomem(ps);
            }
            for (size_t i = 1, run = 0; i < n; i++) {
                if (a[i].key != a[run].key) {
                    run = i;
                    continue;
                }
                /* the first card of the run with this very name (two names may share a hash) */
                const char *name = NAME_OF(a[i]);
                size_t first = run;
                while (first < i && strcmp(NAME_OF(a[first]), name) != 0)
                    first++;
                if (first == i)
                    continue;
                uint32_t file, line;
                size_t off;
                if (kind == 0) {
                    const Card *c = &ds->cards[nl_mos(s, a[i].idx)->card];
                    file = c->file;
                    off = card_body(ds, c);
                    line = ds->cards[nl_mos(s, a[first].idx)->card].line;
                } else {
                    const NlInst *x = &s->inst[a[i].idx], *x0 = &s->inst[a[first].idx];
                    file = x->file;
                    off = x->off;
                    line = src_loc(ds->files.files[x0->file], x0->off).line;
                }
                nl_error(nl, file, off, span_of(strlen(name)), "instance name '%s' is used twice (first on line %u)%s%s",
                         name, line, s->name ? " in subcircuit " : "", s->name ? s->name : "");
            }
#undef NAME_OF
            free(a);
        }
    }
    return ERR_OK;
}

/* ---- load and free --------------------------------------------------------------------------- */

#define MOSBLK_BYTES ((size_t)NLMOS_BLOCK * sizeof(NlMos))

int nl_mos_push(NlSubckt *s, const NlMos *m)
{
    size_t b = s->nmos / NLMOS_BLOCK, k = s->nmos % NLMOS_BLOCK;
    if (b == 0) { /* the first block grows, so that a small subcircuit costs little */
        if (!s->nmosblk) {
            if (buf_grow_array((void **)&s->mos, &s->capmosblk, 1, sizeof *s->mos) != ERR_OK)
                return ERR_NOMEM;
            s->mos[0] = NULL;
            s->nmosblk = 1;
        }
        if (buf_grow_array((void **)&s->mos[0], &s->capmos0, k + 1, sizeof **s->mos) != ERR_OK)
            return ERR_NOMEM;
    } else if (b >= s->nmosblk) { /* the others are whole blocks of pages, handed back whole */
        NlMos *blk = mem_pages(MOSBLK_BYTES);
        if (!blk || buf_grow_array((void **)&s->mos, &s->capmosblk, b + 1, sizeof *s->mos) != ERR_OK) {
            mem_pages_free(blk, MOSBLK_BYTES);
            return ERR_NOMEM;
        }
        s->mos[s->nmosblk++] = blk;
    }
    s->mos[b][k] = *m;
    s->nmos++;
    return ERR_OK;
}

void nl_mos_release(NlSubckt *s, size_t upto)
{
    for (size_t b = 1; b < s->nmosblk && (b + 1) * NLMOS_BLOCK <= upto; b++) {
        mem_pages_free(s->mos[b], MOSBLK_BYTES);
        s->mos[b] = NULL;
    }
}

void nl_mos_free(NlSubckt *s)
{
    if (s->nmosblk)
        free(s->mos[0]);
    for (size_t b = 1; b < s->nmosblk; b++)
        mem_pages_free(s->mos[b], MOSBLK_BYTES);
    free(s->mos);
    s->mos = NULL;
    s->nmos = s->capmos0 = s->nmosblk = s->capmosblk = 0;
}

static void free_subckt(NlSubckt *s)
{
    if (!s)
        return;
    free(s->nodes);
    strmap_free(&s->nodemap);
    free(s->params);
    strmap_free(&s->parammap);
    nl_mos_free(s);
    free(s->inst);
    strmap_free(&s->subs);
    strmap_free(&s->models);
    strmap_free(&s->funcs);
    free(s->global);
    free(s->other);
    free(s);
}

static void free_netlist(Netlist *nl)
{
    for (size_t i = 0; i < nl->nsubs; i++)
        free_subckt(nl->subs[i]);
    free(nl->subs);
    free(nl->mods);
    for (size_t i = 0; i < nl->nfams; i++)
        free(nl->fams[i].bins);
    free(nl->fams);
    free(nl->funcs);
    strmap_free(&nl->globals);
    free(nl->xorder);
    arena_free(&nl->parse);
}

static void free_parser(Parser *ps)
{
    free(ps->icache);
    strmap_free(&ps->warned_dot);
    free(ps->open);
    free(ps->act);
    strmap_free(&ps->filemap);
    for (size_t i = 0; i < ps->capfinfo; i++) {
        free(ps->finfo[i].secs);
        strmap_free(&ps->finfo[i].map);
    }
    free(ps->finfo);
}

void nl_free(Design *ds)
{
    if (!ds)
        return;
    src_set_free(&ds->files);
    str_free(ds->names);
    free(ds->cards);
    free(ds->models);
    free(ds->devs);
    free(ds->nets);
    arena_free(&ds->arena);
    memset(ds, 0, sizeof *ds);
}

void nl_release_index(Design *ds)
{
    str_free(ds->names);
    ds->names = NULL;
    free(ds->nets);
    ds->nets = NULL;
}

int nl_load(const char *path, const NlOptions *opt, Design *ds, DiagList *d)
{
    return nl_load_pdk(path, opt, NULL, ds, d);
}

int nl_load_pdk(const char *path, const NlOptions *opt, const NlPdkOptions *pdk, Design *ds, DiagList *d)
{
    int oom_before = d->oom;
    memset(ds, 0, sizeof *ds);
    arena_init(&ds->arena);
    ds->temp_c = 27.0;
    Netlist nl;
    memset(&nl, 0, sizeof nl);
    nl.ds = ds;
    nl.d = d;
    arena_init(&nl.parse);
    if (opt)
        nl.opt = *opt;
    if (pdk)
        nl.pdk = *pdk;
    if (!nl.opt.max_devices)
        nl.opt.max_devices = DEFAULT_MAX_DEVICES;
    if (!nl.opt.max_include_depth)
        nl.opt.max_include_depth = DEFAULT_INCLUDE_DEPTH;
    if (nl.opt.max_include_depth > HARD_INCLUDE_DEPTH)
        nl.opt.max_include_depth = HARD_INCLUDE_DEPTH;
    if (!nl.opt.max_subckt_depth)
        nl.opt.max_subckt_depth = DEFAULT_SUBCKT_DEPTH;
    nl.opt_temp.v.v = nl.opt_scale.v.v = nl.opt_defw.v.v = nl.opt_defl.v.v = nl.dot_temp.v.v = NAN;
    Parser ps;
    memset(&ps, 0, sizeof ps);
    ps.nl = &nl;
    /* optional: NULL only slows names down; read before it is written (memhint.h) */
    ps.icache = mem_zeroed((size_t)1 << ICACHE_BITS, sizeof *ps.icache);
    int rc = ERR_OK;
    if (!(ds->names = str_new(&ds->arena)) || !(nl.nm_zero = str_intern(ds->names, "0", 1)) ||
        !(nl.nm_gnd = str_intern(ds->names, "gnd", 3))) {
        rc = diag_nomem(d);
        goto done;
    }
    ps.ep.arena = &nl.parse;
    ps.ep.names = ds->names;
    uint32_t top;
    if ((rc = src_set_load(&ds->files, path, (SrcLoc){0}, d, &top)) != ERR_OK)
        goto done;
    SrcFile *f = ds->files.files[top];
    size_t bad;
    if (lex_binary(f->text, f->len, &bad)) {
        SrcLoc l = src_loc(f, bad);
        diag_add(d, DIAG_ERROR, l, "'%s' looks like a binary file, not a netlist (%s at offset %zu)", path,
                 f->text[bad] ? "a control byte" : "a NUL byte", bad);
        rc = ERR_INPUT;
        goto done;
    }
    struct stat st;
    if (stat(path, &st) == 0) {
        char key[64];
        snprintf(key, sizeof key, "%llx:%llx", (unsigned long long)st.st_dev, (unsigned long long)st.st_ino);
        const char *k = str_intern(ds->names, key, strlen(key));
        if (!k || !finfo(&ps, top) || strmap_put(&ps.filemap, k, top) != ERR_OK) {
            rc = diag_nomem(d);
            goto done;
        }
    }
    NlSubckt *root = new_subckt(&ps, NULL, NULL, top, 0);
    Active ac = {top, NULL};
    if (!root || BUF_PUSH(ps.open, ps.nopen, ps.capopen, root) != ERR_OK ||
        BUF_PUSH(ps.act, ps.nact, ps.capact, ac) != ERR_OK) {
        rc = diag_nomem(d);
        goto done;
    }
    ps.ep.arena = &nl.parse;
    if ((rc = read_range(&ps, top, 0, f->len, 1, 1, SIZE_MAX)) != ERR_OK)
        goto done;
    for (size_t i = ps.nopen; i-- > 1;) {
        NlSubckt *s = ps.open[i];
        nl_error(&nl, s->file, s->off, 7, ".subckt %s has no .ends", s->name ? s->name : "");
    }
    if ((rc = check_duplicates(&ps)) != ERR_OK)
        goto done;
    if ((rc = flat_run(&nl)) != ERR_OK)
        goto done;
    rc = nl.nerrors ? ERR_INPUT : ERR_OK;
done:
    if (ps.nomem || (d->oom && !oom_before))
        rc = ERR_NOMEM; /* memory ran out, if only for a diagnostic: that is the failure to report */
    free_parser(&ps);
    free_netlist(&nl);
    if (rc != ERR_OK)
        nl_free(ds);
    return rc;
}
