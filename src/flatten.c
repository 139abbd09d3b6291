/* flatten: the hierarchy walked depth first with an explicit stack of frames, one per subcircuit
 * instance on the current path.
 *
 * Parameter scoping is ngspice's, checked by running ngspice 39 (`show m : w l`):
 * - a name is looked up in the instance's own parameters (the .subckt defaults, replaced by the X
 *   card's values, and the .param cards of the body), then in the caller's, and so on up to the
 *   global .param cards: the scope is dynamic, the subcircuit sees its caller's parameters;
 * - X-card values are evaluated in the caller's scope; an X-card value may also replace a .param of
 *   the body; a name the subcircuit does not have is ignored (ngspice: silently; we warn);
 * - within a scope the last definition of a name wins and order does not matter (forward references
 *   work, as ngspice sorts .param cards by dependency);
 * - every parameter of an instance is evaluated, used or not (ngspice stops on an undefined one).
 * Each frame's parameter values are computed lazily on first use and cached in slots; a slot being
 * computed that is asked for again is a cycle. */
#include "flatten.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "primitive.h"

#define NONE UINT32_MAX
#define NDEV_CAP (UINT64_MAX / 4)

enum { SL_TODO, SL_BUSY, SL_DONE, SL_FAILED };

typedef struct {
    double v;
    uint8_t st;
} Slot;

typedef struct {
    NlSubckt *def;
    uint32_t parent; /* the caller's frame, NONE for the top level */
    size_t slot0;    /* first parameter slot */
    size_t net0;     /* first net (one per node of def) */
    size_t plen;     /* length of this instance's path in Flat.path */
    double mult;     /* the m ngspice 39 gives this instance: its X card's m, itself replaced by the
                        caller's when the caller's subcircuit is one ngspice gives a parameter m */
    size_t next;     /* next X card of def to expand */
    const NlInst *x; /* the X card that made this frame; NULL for the top level and the --top cell */
} Frame;

typedef struct {
    Netlist *nl;
    Design *ds;
    Frame *fr;
    size_t nfr, capfr;
    Slot *slots;
    size_t nslots, capslots;
    const char **nets;
    size_t nnets, capnets;
    char *path;       /* hierarchical path of the deepest frame, "x1.xamp" */
    size_t cappath;
    uint32_t cur;     /* the frame expressions are evaluated in */
    int quiet;        /* do not report evaluation errors (models no device uses) */
    size_t capdevs;
    ExprEnv env;
    int nomem;
    /* PDK netlists */
    NlSubckt *root;   /* the top level, or the --top cell */
    const char *nm_m, *nm_w, *nm_l, *nm_nf, *nm_mult; /* interned parameter names */
    const NlInst **undef; /* X cards of undefined subcircuits, in resolution order */
    size_t nundef, capundef;
    int missing_mode; /* the netlist uses cells it does not define: see resolve_undefined */
    uint8_t *spec_used; /* per NlOptions.cells: it matched a cell */
    PrimUnchecked unchk;
    size_t nimplausible;  /* DEV_BARE devices with W or L over 1 cm: the first is named */
    const Device *implausible;
    uint32_t implausible_file;
    size_t implausible_off;
} Flat;

/* ---- evaluation ------------------------------------------------------------------------------ */

static void report(Flat *f, uint32_t file, const ExprErr *err)
{
    if (f->quiet || err->code == EXPR_E_FAILED || !err->at || !expr_mark_once(err->at))
        return;
    char buf[200];
    const char *msg = expr_strerror(err, buf, sizeof buf);
    size_t span = err->name && (err->code == EXPR_E_UNDEF || err->code == EXPR_E_CYCLE) ? strlen(err->name) : 1;
    nl_error(f->nl, file, expr_offset(err->at), (uint32_t)(span > 200 ? 200 : span), "%s", msg);
}

static int slot_eval(Flat *f, ExprEnv *env, uint32_t fi, uint32_t idx, double *out, ExprErr *err);

static int lookup(void *ctx, ExprEnv *env, const Expr *at, const char *name, double *out, ExprErr *err)
{
    Flat *f = ctx;
    for (uint32_t fi = f->cur; fi != NONE; fi = f->fr[fi].parent) {
        uint32_t idx;
        if (!strmap_get(&f->fr[fi].def->parammap, name, &idx))
            continue;
        Slot *s = &f->slots[f->fr[fi].slot0 + idx];
        switch (s->st) {
        case SL_DONE:
            *out = s->v;
            return EXPR_OK;
        case SL_BUSY:
            err->code = EXPR_E_CYCLE;
            err->at = at;
            err->name = name;
            return EXPR_E_CYCLE;
        case SL_FAILED:
            err->code = EXPR_E_FAILED;
            err->at = at;
            err->name = name;
            return EXPR_E_FAILED;
        default: {
            int rc = slot_eval(f, env, fi, idx, out, err);
            if (rc != EXPR_OK) {
                err->code = EXPR_E_FAILED;
                err->at = at;
                err->name = name;
            }
            return rc == EXPR_OK ? EXPR_OK : EXPR_E_FAILED;
        }
        }
    }
    return EXPR_E_UNDEF;
}

/* Compute parameter idx of frame fi (state TODO) in its own frame; a failure is reported here,
 * where the parameter is written. */
static int slot_eval(Flat *f, ExprEnv *env, uint32_t fi, uint32_t idx, double *out, ExprErr *err)
{
    const NlParam *p = &f->fr[fi].def->params[idx];
    size_t si = f->fr[fi].slot0 + idx;
    if (!p->val) {
        f->slots[si].st = SL_FAILED;
        return EXPR_E_FAILED;
    }
    f->slots[si].st = SL_BUSY;
    uint32_t saved = f->cur;
    f->cur = fi;
    double v;
    int rc = expr_eval(p->val, env, &v, err);
    f->cur = saved;
    if (rc == EXPR_OK) {
        f->slots[si].st = SL_DONE;
        f->slots[si].v = v;
        *out = v;
        return EXPR_OK;
    }
    f->slots[si].st = SL_FAILED;
    report(f, p->file, err);
    return rc;
}

static const Expr *func(void *ctx, const char *name, unsigned *nparams)
{
    Flat *f = ctx;
    for (uint32_t fi = f->cur; fi != NONE; fi = f->fr[fi].parent) {
        /* the functions of this instance's definition and of the definitions around it */
        for (const NlSubckt *s = f->fr[fi].def; s; s = s->parent) {
            uint32_t idx;
            if (strmap_get(&s->funcs, name, &idx)) {
                *nparams = f->nl->funcs[idx].nparams;
                return f->nl->funcs[idx].body;
            }
        }
    }
    return NULL;
}

/* A card value (written in file) in frame fi: 1 with *out set, 0 when absent, -1 when its evaluation
 * failed (reported). */
static int value(Flat *f, uint32_t fi, const NlVal *v, uint32_t file, double *out)
{
    if (!v->e) {
        if (isnan(v->v))
            return 0;
        *out = v->v;
        return 1;
    }
    uint32_t saved = f->cur;
    f->cur = fi;
    ExprErr err = {0, NULL, NULL};
    int rc = expr_eval(v->e, &f->env, out, &err);
    f->cur = saved;
    if (rc == EXPR_OK)
        return 1;
    report(f, file, &err);
    *out = NAN;
    return -1;
}

/* ---- resolving names ------------------------------------------------------------------------- */

static NlSubckt *find_sub(Netlist *nl, const NlSubckt *s, const char *name)
{
    for (; s; s = s->parent) {
        uint32_t i;
        if (strmap_get(&s->subs, name, &i))
            return nl->subs[i];
    }
    return NULL;
}

static uint32_t find_model(const NlSubckt *s, const char *name)
{
    for (; s; s = s->parent) {
        uint32_t i;
        if (strmap_get(&s->models, name, &i))
            return i;
    }
    return NONE;
}

/* ---- PDK netlists: primitives, undefined cells, ngspice's m= rule ---------------------------- */

/* The --primitive/--not-primitive declaration for a cell, marked as used. */
static const PrimSpec *spec_for(Flat *f, const char *cell)
{
    const NlPdkOptions *o = &f->nl->pdk;
    const PrimSpec *sp = prim_find_spec(o->cells, o->ncells, cell);
    if (sp && f->spec_used)
        f->spec_used[sp - o->cells] = 1;
    return sp;
}

/* An X card names a subcircuit nobody defines: remember it for resolve_undefined, and mark it
 * `bare` (a transistor read from the X card alone) when it has drain, gate, source and bulk and its
 * cell is declared a primitive or its name says MOSFET. */
static int undefined(Flat *f, NlInst *x)
{
    const PrimSpec *sp = spec_for(f, x->subname);
    int declared = sp && sp->decl == PRIM_DECLARE, excluded = sp && sp->decl == PRIM_EXCLUDE;
    if (x->nnodes >= 4 && !excluded && (declared || prim_type_from_name(x->subname) != MOS_UNKNOWN))
        x->bare = 1;
    if (BUF_PUSH(f->undef, f->nundef, f->capundef, x) != ERR_OK) {
        f->nomem = 1;
        return diag_nomem(f->nl->d);
    }
    return ERR_OK;
}

/* The type of the devices of a cell read without its definition: declared, else from its name. */
static MosType bare_type(Flat *f, const char *cell)
{
    const PrimSpec *sp = spec_for(f, cell);
    if (sp && sp->decl == PRIM_DECLARE && sp->type != MOS_UNKNOWN)
        return sp->type;
    return prim_type_from_name(cell);
}

/* X cards of undefined subcircuits. When the netlist visibly uses a library it does not read (one
 * of those cells is a transistor cell, or --allow-missing-lib let a missing file go), they are not
 * errors: the transistor cells' instances become DEV_BARE devices (one warning per cell) and the
 * others are listed as not checked. Otherwise each is an error, as ngspice stops on it. */
static int resolve_undefined(Flat *f)
{
    Netlist *nl = f->nl;
    f->missing_mode = nl->nmissing > 0;
    for (size_t i = 0; i < f->nundef; i++)
        f->missing_mode |= f->undef[i]->bare;
    StrMap seen = STRMAP_INIT;
    int scaled = nl->opt_scale.v.e || !isnan(nl->opt_scale.v.v);
    for (size_t i = 0; i < f->nundef; i++) {
        const NlInst *x = f->undef[i];
        uint32_t span = (uint32_t)strlen(x->subname);
        if (!f->missing_mode) {
            nl_error(nl, x->file, x->sub_off, span, "undefined subcircuit '%s'", x->subname);
            continue;
        }
        if (!x->bare || strmap_get(&seen, x->subname, NULL))
            continue;
        if (strmap_put(&seen, x->subname, 1) != ERR_OK) {
            strmap_free(&seen);
            return diag_nomem(nl->d);
        }
        MosType t = bare_type(f, x->subname);
        const PrimSpec *sp = spec_for(f, x->subname);
        int declared = sp && sp->decl == PRIM_DECLARE && sp->type != MOS_UNKNOWN;
        Buf lib = BUF_INIT;
        int brc = nl->missing ? buf_printf(&lib, "its library is not read ('%s' was not found)", nl->missing)
                              : buf_puts(&lib, "the netlist reads no library that defines it");
        if (brc != ERR_OK) {
            strmap_free(&seen);
            return diag_nomem(nl->d);
        }
        nl_warn(nl, x->file, x->sub_off, span,
                "cell '%s' is not defined (%s): its instances are checked as %s transistors from their X cards "
                "(w, l, nf and m or mult as written there%s; the dump's values where it gives them)%s",
                x->subname, lib.data, t == MOS_NMOS ? "n-type" : t == MOS_PMOS ? "p-type" : "MOS",
                scaled ? ", w and l times .option scale" : "",
                t == MOS_UNKNOWN ? "; its type is unknown: declare it with --primitive CELL=nmos|pmos"
                : declared       ? ""
                                 : "; the type comes from the cell name");
        buf_free(&lib);
    }
    strmap_free(&seen);
    return ERR_OK;
}

/* Whether ngspice 39 gives subcircuit s a parameter m: some X card calls it with m= (see mult_flags). */
static inline int m_flagged(const NlSubckt *s)
{
    return s->mflag != NONE;
}

static inline int has_m(const NlInst *x)
{
    return x->m.e || !isnan(x->m.v);
}

/* ngspice 39 (inpcom.c, inp_fix_subckt_multiplier, checked with `show m : m`): reading the deck in
 * order, an X card with m= names subcircuit T; unless T's .subckt line declares a parameter m, T
 * gets one (default 1) and every card in T's body gets " m={m}" appended, which replaces the card's
 * own m. An X card inside a subcircuit that got m before the reader reached it counts as having m=.
 * So the m of a device is its calling X card's m (not a product), and a card's own m (m={mult}) is
 * lost in such a cell. Set mflag (reading order of the X card that did it) and mdecl; also
 * `called`. Cells are looked up from the X card's definition outwards. */
static void mult_flags(Flat *f)
{
    Netlist *nl = f->nl;
    for (size_t i = 0; i < nl->nsubs; i++) {
        NlSubckt *t = nl->subs[i];
        t->mflag = NONE;
        t->called = 0;
        t->mdecl = 0;
        for (uint32_t j = 0; j < t->ndefaults; j++)
            if (t->params[j].name == f->nm_m)
                t->mdecl = 1;
    }
    for (size_t k = 0; k < nl->nxorder; k++) {
        NlSubckt *e = nl->subs[nl->xorder[k].sub];
        const NlInst *x = &e->inst[nl->xorder[k].inst];
        NlSubckt *t = find_sub(nl, e, x->subname);
        if (!t)
            continue;
        t->called = 1;
        if (t->mflag == NONE && !t->mdecl && (has_m(x) || (e->mflag != NONE && e->mflag < k)))
            t->mflag = (uint32_t)k;
    }
}

/* Where the X card that gave s its parameter m stands, for messages. */
static void mflag_place(Flat *f, const NlSubckt *s, const char **name, const char **path, uint32_t *line)
{
    const NlXRef *r = &f->nl->xorder[s->mflag];
    const NlInst *x = &f->nl->subs[r->sub]->inst[r->inst];
    SrcFile *sf = f->ds->files.files[x->file];
    *name = x->name;
    *path = sf->path;
    *line = src_loc(sf, x->off).line;
}

static void classify(Flat *f, NlSubckt *s)
{
    const PrimSpec *sp = spec_for(f, s->name);
    s->prim = (uint8_t)prim_classify(s->nmos, s->ninst, s->nforeign, s->nother, sp);
    s->primtype = sp && sp->decl == PRIM_DECLARE ? sp->type : MOS_UNKNOWN;
    if (sp && sp->decl == PRIM_DECLARE && s->prim != PRIM_MOS)
        nl_warn(f->nl, s->file, s->off, 7,
                "subcircuit '%s' is declared a primitive (--primitive) but holds %zu M card%s and %zu X card%s "
                "(a primitive holds one M card and no X card): it is expanded as usual",
                s->name, s->nmos, s->nmos == 1 ? "" : "s", s->ninst, s->ninst == 1 ? "" : "s");
}

static int resolve_inst(Flat *f, NlSubckt *s, NlInst *x)
{
    Netlist *nl = f->nl;
    x->sub = find_sub(nl, s, x->subname);
    if (!x->sub) {
        x->bad = 1;
        return undefined(f, x); /* an error, or in a PDK netlist a transistor read from its X card */
    }
    if (x->nnodes != x->sub->nports) {
        nl_error(nl, x->file, x->off, (uint32_t)strlen(x->name), "%s has %u node%s but subcircuit '%s' has %u port%s",
                 x->name, x->nnodes, x->nnodes == 1 ? "" : "s", x->sub->name, x->sub->nports,
                 x->sub->nports == 1 ? "" : "s");
        x->bad = 1;
        return ERR_OK;
    }
    for (uint32_t i = 0; i < x->nparams; i++) {
        uint32_t idx;
        if (strmap_get(&x->sub->parammap, x->params[i].name, &idx)) {
            x->slot[i] = (int32_t)idx;
        } else {
            x->slot[i] = -1;
            nl_warn(nl, x->file, x->params[i].off, (uint32_t)strlen(x->params[i].name),
                    "'%s' is not a parameter of subcircuit '%s' and is ignored", x->params[i].name, x->sub->name);
        }
    }
    return ERR_OK;
}

static void resolve_models(Flat *f, NlSubckt *s)
{
    Netlist *nl = f->nl;
    for (size_t i = 0; i < s->nmos; i++) {
        NlMos *m = nl_mos(s, i);
        m->fam = find_model(s, m->model);
        const Card *c = &nl->ds->cards[m->card];
        size_t off = c->start + m->model_off;
        uint32_t span = (uint32_t)strlen(m->model);
        if (m->fam == NONE) {
            nl_warn(nl, c->file, off, span, "model '%s' is not defined: %s is kept with an unknown type", m->model,
                    m->name);
        } else {
            const NlFamily *fm = &nl->fams[m->fam];
            if (fm->exact < 0 && !fm->nbins) {
                nl_warn(nl, c->file, off, span, "model '%s' is a %s model, not nmos or pmos: %s is kept with an unknown type",
                        m->model, fm->other ? fm->other : "non-MOS", m->name);
                m->fam = NONE;
            }
        }
    }
}

/* The chain of definitions on the counting stack from the one at position k, for a message. */
static void chain(Buf *b, NlSubckt **stk, size_t n, size_t k, const char *last)
{
    for (size_t i = k; i < n; i++)
        if (buf_printf(b, "%s -> ", stk[i]->name ? stk[i]->name : "(top)") != ERR_OK)
            return;
    if (buf_puts(b, last) != ERR_OK)
        return;
}

/* Resolve what the top level reaches, count its MOSFETs bottom-up and find recursion, with an explicit
 * stack (the call graph can be deep). */
static int count(Flat *f)
{
    Netlist *nl = f->nl;
    NlSubckt **stk = NULL;
    size_t *pos = NULL, n = 0, cap = 0, cap2 = 0;
    NlSubckt *top = f->root; /* the top level, or the --top cell */
    if (buf_grow_array((void **)&stk, &cap, 16, sizeof *stk) != ERR_OK ||
        buf_grow_array((void **)&pos, &cap2, 16, sizeof *pos) != ERR_OK)
        goto oom;
    stk[n] = top;
    pos[n++] = 0;
    top->state = 1;
    resolve_models(f, top);
    while (n) {
        NlSubckt *s = stk[n - 1];
        if (pos[n - 1] < s->ninst) {
            NlInst *x = &s->inst[pos[n - 1]++];
            resolve_inst(f, s, x);
            if (x->bad)
                continue;
            NlSubckt *c = x->sub;
            if (c->state == 1) {
                size_t k = 0;
                while (k < n && stk[k] != c)
                    k++;
                Buf b = BUF_INIT;
                chain(&b, stk, n, k, c->name);
                nl_error(nl, x->file, x->sub_off, (uint32_t)strlen(x->subname),
                         "subcircuit '%s' instantiates itself: %s", c->name, b.data ? b.data : "");
                buf_free(&b);
                x->bad = 1;
                continue;
            }
            if (c->state == 0) {
                if (n == cap && (buf_grow_array((void **)&stk, &cap, n + 1, sizeof *stk) != ERR_OK))
                    goto oom;
                if (n == cap2 && (buf_grow_array((void **)&pos, &cap2, n + 1, sizeof *pos) != ERR_OK))
                    goto oom;
                c->state = 1;
                resolve_models(f, c);
                classify(f, c);
                stk[n] = c;
                pos[n++] = 0;
            }
            continue;
        }
        uint64_t nd = s->nmos, ns = 0;
        uint32_t h = 0;
        for (size_t i = 0; i < s->ninst; i++) {
            const NlInst *x = &s->inst[i];
            if (x->bad) {
                if (x->bare && nd < NDEV_CAP)
                    nd++; /* a transistor read from its X card */
                continue;
            }
            nd = nd + x->sub->ndev > NDEV_CAP ? NDEV_CAP : nd + x->sub->ndev;
            ns = ns + 1 + x->sub->nsub > NDEV_CAP ? NDEV_CAP : ns + 1 + x->sub->nsub;
            if (x->sub->height > h)
                h = x->sub->height;
        }
        s->ndev = nd;
        s->nsub = ns;
        s->height = h + 1;
        s->state = 2;
        n--;
    }
    free(stk);
    free(pos);
    return ERR_OK;
oom:
    free(stk);
    free(pos);
    f->nomem = 1;
    return diag_nomem(nl->d);
}

/* Report the X card at nesting level max+1 on a deepest path. */
static void depth_error(Flat *f, unsigned max)
{
    NlSubckt *s = f->root;
    for (unsigned level = 1;; level++) {
        const NlInst *deep = NULL;
        for (size_t i = 0; i < s->ninst; i++)
            if (!s->inst[i].bad && s->inst[i].sub->height + 1 == s->height) {
                deep = &s->inst[i];
                break;
            }
        if (!deep)
            return;
        if (level > max) {
            nl_error(f->nl, deep->file, deep->off, (uint32_t)strlen(deep->name),
                     "subcircuits are nested more than %u levels deep here", max);
            return;
        }
        s = deep->sub;
    }
}

/* ---- frames ---------------------------------------------------------------------------------- */

static int set_globals(Flat *f, NlSubckt *s)
{
    if (s->global || !s->nnodes)
        return ERR_OK;
    if (!(s->global = malloc(s->nnodes)))
        return ERR_NOMEM;
    for (uint32_t k = 0; k < s->nnodes; k++) {
        const char *nm = s->nodes[k];
        s->global[k] = nm == f->nl->nm_zero || nm == f->nl->nm_gnd || strmap_get(&f->nl->globals, nm, NULL);
    }
    return ERR_OK;
}

static int path_room(Flat *f, size_t need)
{
    return buf_grow_array((void **)&f->path, &f->cappath, need, 1);
}

/* The name "<path of frame fi>.<local>", interned (a net) or only copied (own: a device's name,
 * unique anyway; strtab.h); the path buffer must hold fi's path. */
static const char *qualify_as(Flat *f, uint32_t fi, const char *local, int own)
{
    size_t pl = f->fr[fi].plen, ll = strlen(local);
    if (path_room(f, pl + ll + 2) != ERR_OK)
        return NULL;
    f->path[pl] = '.';
    memcpy(f->path + pl + 1, local, ll);
    return own ? str_copy(&f->ds->arena, f->path, pl + 1 + ll) : str_intern(f->ds->names, f->path, pl + 1 + ll);
}

static const char *qualify(Flat *f, uint32_t fi, const char *local)
{
    return qualify_as(f, fi, local, 0);
}

/* The hierarchical name of node k of frame fi: top-level and global nets as written, the others
 * prefixed with the instance path. NULL on out of memory. */
static const char *net(Flat *f, uint32_t fi, uint32_t k)
{
    const char **slot = &f->nets[f->fr[fi].net0 + k];
    if (*slot)
        return *slot;
    const NlSubckt *s = f->fr[fi].def;
    if (f->fr[fi].parent == NONE || !f->fr[fi].x || s->global[k]) /* a root (top, --top cell): as written */
        *slot = s->nodes[k];
    else
        *slot = qualify(f, fi, s->nodes[k]);
    return *slot;
}

/* Push a frame for def (x: the X card from frame parent, NULL for the top level). */
static int push(Flat *f, uint32_t parent, const NlInst *x, NlSubckt *def, double mult)
{
    if (set_globals(f, def) != ERR_OK ||
        buf_grow_array((void **)&f->fr, &f->capfr, f->nfr + 1, sizeof *f->fr) != ERR_OK ||
        buf_grow_array((void **)&f->slots, &f->capslots, f->nslots + def->nparams, sizeof *f->slots) != ERR_OK ||
        buf_grow_array((void **)&f->nets, &f->capnets, f->nnets + def->nnodes, sizeof *f->nets) != ERR_OK)
        return ERR_NOMEM;
    uint32_t fi = (uint32_t)f->nfr;
    Frame *fr = &f->fr[f->nfr++];
    fr->def = def;
    fr->parent = parent;
    fr->slot0 = f->nslots;
    fr->net0 = f->nnets;
    fr->mult = mult;
    fr->next = 0;
    fr->plen = 0;
    fr->x = x;
    for (uint32_t i = 0; i < def->nparams; i++)
        f->slots[f->nslots + i].st = SL_TODO;
    f->nslots += def->nparams;
    for (uint32_t k = 0; k < def->nnodes; k++)
        f->nets[f->nnets + k] = NULL;
    f->nnets += def->nnodes;
    if (x) {
        /* ports take the caller's nets (resolved while the path is still the caller's) */
        for (uint32_t k = 0; k < def->nports; k++) {
            const char *n = net(f, parent, x->nodes[k]);
            if (!n)
                return ERR_NOMEM;
            f->nets[f->fr[fi].net0 + k] = n;
        }
        /* X-card values, evaluated in the caller's scope */
        for (uint32_t i = 0; i < x->nparams; i++) {
            if (x->slot[i] < 0)
                continue;
            Slot *s = &f->slots[f->fr[fi].slot0 + (uint32_t)x->slot[i]];
            NlVal v = {NAN, x->params[i].val};
            double d = NAN;
            int r = value(f, parent, &v, x->params[i].file, &d);
            s = &f->slots[f->fr[fi].slot0 + (uint32_t)x->slot[i]];
            s->st = r > 0 ? SL_DONE : SL_FAILED;
            s->v = d;
        }
        /* a subcircuit that declares m takes the X card's m= (or the one ngspice put there) as a value */
        uint32_t mi;
        if (def->mdecl > 0 && (has_m(x) || m_flagged(f->fr[parent].def)) && strmap_get(&def->parammap, f->nm_m, &mi)) {
            f->slots[f->fr[fi].slot0 + mi].st = isnan(mult) ? SL_FAILED : SL_DONE;
            f->slots[f->fr[fi].slot0 + mi].v = mult;
        }
        size_t pl = f->fr[parent].plen, xl = strlen(x->name);
        if (path_room(f, pl + xl + 2) != ERR_OK)
            return ERR_NOMEM;
        if (pl)
            f->path[pl++] = '.';
        memcpy(f->path + pl, x->name, xl);
        f->fr[fi].plen = pl + xl;
    }
    /* every parameter of the instance is evaluated, as ngspice does */
    for (uint32_t i = 0; i < def->nparams; i++) {
        if (f->slots[f->fr[fi].slot0 + i].st != SL_TODO)
            continue;
        double d;
        ExprErr err = {0, NULL, NULL};
        slot_eval(f, &f->env, fi, i, &d, &err);
    }
    return ERR_OK;
}

static void pop(Flat *f)
{
    Frame *fr = &f->fr[--f->nfr];
    f->nslots = fr->slot0;
    f->nnets = fr->net0;
}

/* ---- models ---------------------------------------------------------------------------------- */

/* Evaluate the fields of model mi once, in frame fi (the first instance that uses it). */
static void eval_model(Flat *f, uint32_t fi, uint32_t mi)
{
    NlModel *x = &f->nl->mods[mi];
    if (x->evaluated)
        return;
    x->evaluated = 1;
    Model *md = &f->ds->models[mi];
    double v;
    if (value(f, fi, &x->level, x->file, &v) > 0)
        md->level = (int)lround(v);
    if (value(f, fi, &x->cgso, x->file, &v) > 0)
        md->cgso = v;
    if (value(f, fi, &x->cgdo, x->file, &v) > 0)
        md->cgdo = v;
    if (value(f, fi, &x->cgbo, x->file, &v) > 0)
        md->cgbo = v;
    const NlVal *b[4] = {&x->lmin, &x->lmax, &x->wmin, &x->wmax};
    for (int k = 0; k < 4; k++)
        if (value(f, fi, b[k], x->file, &v) > 0)
            x->bin[k] = v;
}

/* ngspice 39 (inpgmod.c): a bin covers v when lo < v < hi or v is within 1e-15 of either bound; the
 * first bin in card order that covers both L and W is used. */
static int covers(double v, double lo, double hi)
{
    return fabs(v - lo) < 1e-15 || fabs(v - hi) < 1e-15 || (lo < v && v < hi);
}

/* W and L that ngspice 39 uses when the card has none: level 1, 2, 3, 6 and 9 (and an unknown model)
 * take .options defw/defl (100u); HiSIM_HV (73) 5u and 2u; the BSIM and other models 5u. */
static void default_wl(const Netlist *nl, const Model *md, double *w, double *l)
{
    int lv = md ? md->level : 1;
    if (!md || lv == 1 || lv == 2 || lv == 3 || lv == 6 || lv == 9) {
        *w = nl->defw;
        *l = nl->defl;
    } else {
        *w = 5e-6;
        *l = lv == 73 ? 2e-6 : 5e-6;
    }
}

/* ---- devices --------------------------------------------------------------------------------- */

#define W_BINS 1u
#define W_VALUES 2u
#define W_MREPL 4u  /* NlMos.warned: ngspice replaced the card's m */
#define X_MREPL 1u  /* NlInst.warned: ngspice replaced the X card's m */
#define X_SIZE 2u   /* NlInst.warned: implausible W or L on an X card read without its cell */

/* The m of an M card in frame fi whose own m (1 when absent) is m: ngspice's, see mult_flags. */
static double card_mult(Flat *f, uint32_t fi, NlMos *mm, const char *dname, double m)
{
    const NlSubckt *def = f->fr[fi].def;
    if (!m_flagged(def))
        return m;
    double pm = f->fr[fi].mult;
    if ((mm->m.e || !isnan(mm->m.v)) && !(mm->warned & W_MREPL) && m != pm && !(isnan(m) && isnan(pm))) {
        mm->warned |= W_MREPL;
        const Card *c = &f->ds->cards[mm->card];
        const char *xn, *path;
        uint32_t line;
        mflag_place(f, def, &xn, &path, &line);
        nl_warn(f->nl, c->file, c->start + c->col - 1, (uint32_t)strlen(mm->name),
                "ngspice gives %s m=%g, not the m=%g its card asks for: subcircuit '%s' is called with m= (first "
                "by %s, %s line %u), so ngspice replaces the m of every card in it by the calling X card's m; "
                "biaslint does the same",
                dname, pm, m, def->name, xn, path, line);
    }
    return pm;
}

/* The m an X card of frame fi passes to its instance (its own m is m, 1 when absent). */
static double x_mult(Flat *f, uint32_t fi, NlInst *x, double m)
{
    const NlSubckt *def = f->fr[fi].def;
    if (!m_flagged(def))
        return m;
    double pm = f->fr[fi].mult;
    if (has_m(x) && !(x->warned & X_MREPL) && m != pm && !(isnan(m) && isnan(pm))) {
        x->warned |= X_MREPL;
        const char *xn, *path;
        uint32_t line;
        mflag_place(f, def, &xn, &path, &line);
        nl_warn(f->nl, x->file, x->off, (uint32_t)strlen(x->name),
                "ngspice gives %s m=%g, not the m=%g written on it: subcircuit '%s' is called with m= (first by "
                "%s, %s line %u), so ngspice replaces the m of every card in it by the calling X card's m; "
                "biaslint does the same",
                x->name, pm, m, def->name, xn, path, line);
    }
    return pm;
}

/* The device just made from the one M card of a primitive cell's instance (frame fi) becomes the
 * X card's device: named by the instance, annotated at the X card, its record the inner card's. */
static int as_primitive(Flat *f, uint32_t fi, Device *dv)
{
    const Frame *fr = &f->fr[fi];
    const NlSubckt *def = fr->def;
    dv->simname = dv->name;
    if (!(dv->name = str_copy(&f->ds->arena, f->path, fr->plen)))
        return ERR_NOMEM;
    dv->card = fr->x->card;
    dv->cell = f->fr[fr->parent].def->name;
    dv->model = def->name;
    dv->prim = DEV_PRIM;
    if (dv->type == MOS_UNKNOWN)
        dv->type = def->primtype != MOS_UNKNOWN ? def->primtype : prim_type_from_name(def->name);
    return ERR_OK;
}

/* X card x of frame fi, whose cell is not defined, as a transistor (DEV_BARE): W, L, nf and m (or
 * mult) from the card, W and L times .option scale, the type declared or from the cell name. */
static int emit_bare(Flat *f, uint32_t fi, NlInst *x)
{
    Netlist *nl = f->nl;
    Design *ds = f->ds;
    if (ds->ndevs >= f->capdevs)
        return ERR_OK; /* not reached: the count was made beforehand */
    Device *dv = &ds->devs[ds->ndevs++];
    dv->name = f->fr[fi].plen ? qualify_as(f, fi, x->name, 1) : x->name;
    if (!dv->name)
        return ERR_NOMEM;
    for (int k = 0; k < 4; k++)
        if (!(ds->nets[dv - ds->devs][k] = net(f, fi, x->nodes[k])))
            return ERR_NOMEM;
    dv->model = x->subname;
    dv->mdl = NULL;
    dv->cell = f->fr[fi].def->name;
    dv->card = x->card;
    dv->prim = DEV_BARE;
    dv->simname = NULL;
    double w = NAN, l = NAN, nf = 1, mult = NAN, m = 1;
    for (uint32_t i = 0; i < x->nparams; i++) {
        const NlParam *p = &x->params[i];
        double *to = p->name == f->nm_w ? &w : p->name == f->nm_l ? &l : p->name == f->nm_nf ? &nf
                   : p->name == f->nm_mult ? &mult : NULL;
        NlVal v = {NAN, p->val};
        if (to && value(f, fi, &v, p->file, to) < 0)
            *to = NAN;
    }
    int hm = value(f, fi, &x->m, x->file, &m);
    if (hm < 0)
        m = NAN;
    if (hm == 0 && !m_flagged(f->fr[fi].def) && !isnan(mult))
        m = mult; /* no m=: the cell's own multiplier parameter, as PDK cells pass it to their M card */
    dv->m = x_mult(f, fi, x, m);
    dv->w = w * nl->scale;
    dv->l = l * nl->scale;
    dv->nf = nf;
    dv->type = bare_type(f, x->subname);
    if (!(x->warned & X_SIZE) && (dv->w > 1e-2 || dv->l > 1e-2)) {
        x->warned |= X_SIZE; /* said once for all, in pdk_report */
        if (!f->nimplausible++) {
            f->implausible = dv;
            f->implausible_file = x->file;
            f->implausible_off = x->off;
        }
    }
    return ERR_OK;
}

/* The transistor-like elements of frame fi that biaslint does not check, for the summary. */
static int list_other(Flat *f, uint32_t fi)
{
    const Frame *fr = &f->fr[fi];
    const NlSubckt *def = fr->def;
    if (def->prim == PRIM_OTHER && fr->x) {
        int k = prim_unchecked_kind(def->other[0].name[0]);
        const char *nm = NULL;
        if (prim_unchecked_wants_name(&f->unchk, (UncheckedKind)k) &&
            !(nm = str_intern(f->ds->names, f->path, fr->plen)))
            return ERR_NOMEM;
        prim_unchecked_add(&f->unchk, (UncheckedKind)k, nm, def->name, fr->x->file, fr->x->off);
        return ERR_OK;
    }
    for (size_t i = 0; i < def->nother; i++) {
        const NlOther *o = &def->other[i];
        int k = prim_unchecked_kind(o->name[0]);
        const char *nm = NULL;
        if (prim_unchecked_wants_name(&f->unchk, (UncheckedKind)k) &&
            !(nm = fr->plen ? qualify(f, fi, o->name) : o->name))
            return ERR_NOMEM;
        prim_unchecked_add(&f->unchk, (UncheckedKind)k, nm, NULL, o->file, o->off);
    }
    return ERR_OK;
}

/* An X card of frame fi whose cell is not defined, in a netlist that uses a library it does not
 * read: a transistor read from the card, or a device listed as not checked. */
static int undefined_instance(Flat *f, uint32_t fi, NlInst *x)
{
    if (x->bare)
        return emit_bare(f, fi, x);
    const char *nm = NULL;
    if (prim_unchecked_wants_name(&f->unchk, UNCHK_UNDEFINED) && !(nm = f->fr[fi].plen ? qualify(f, fi, x->name) : x->name))
        return ERR_NOMEM;
    prim_unchecked_add(&f->unchk, UNCHK_UNDEFINED, nm, x->subname, x->file, x->off);
    return ERR_OK;
}

static int emit(Flat *f, uint32_t fi)
{
    Netlist *nl = f->nl;
    Design *ds = f->ds;
    NlSubckt *def = f->fr[fi].def;
    for (size_t i = 0; i < def->nmos; i++) {
        if (fi == 0 && i % NLMOS_BLOCK == 0)
            nl_mos_release(def, i); /* the top level is emitted once: its cards behind are devices now */
        NlMos *mm = nl_mos(def, i);
        if (ds->ndevs >= f->capdevs)
            return ERR_OK; /* not reached: the count was made beforehand */
        Device *dv = &ds->devs[ds->ndevs++];
        const Card *card = &ds->cards[mm->card];
        dv->name = f->fr[fi].plen ? qualify_as(f, fi, mm->name, 1) : mm->name;
        if (!dv->name)
            return ERR_NOMEM;
        dv->model = mm->model;
        dv->cell = def->name;
        dv->card = mm->card;
        for (int k = 0; k < 4; k++)
            if (!(ds->nets[dv - ds->devs][k] = net(f, fi, mm->node[k])))
                return ERR_NOMEM;
        double w = NAN, l = NAN, m = 1, nf = 1;
        uint32_t file = card->file;
        int hw = value(f, fi, &mm->w, file, &w), hl = value(f, fi, &mm->l, file, &l);
        if (value(f, fi, &mm->m, file, &m) < 0)
            m = NAN;
        if (value(f, fi, &mm->nf, file, &nf) < 0)
            nf = NAN;
        if (hw > 0)
            w *= nl->scale;
        if (hl > 0)
            l *= nl->scale;
        const Model *mdl = NULL;
        if (mm->fam != NONE) {
            const NlFamily *fm = &nl->fams[mm->fam];
            if (fm->exact >= 0) {
                eval_model(f, fi, (uint32_t)fm->exact);
                mdl = &ds->models[fm->exact];
            } else {
                eval_model(f, fi, fm->bins[0]);
                double bw = w, bl = l;
                default_wl(nl, &ds->models[fm->bins[0]], &bw, &bl);
                if (hw > 0)
                    bw = w;
                if (hl > 0)
                    bl = l;
                for (uint32_t b = 0; b < fm->nbins && !mdl; b++) {
                    eval_model(f, fi, fm->bins[b]);
                    const double *r = nl->mods[fm->bins[b]].bin;
                    if (!isnan(r[0]) && !isnan(r[1]) && !isnan(r[2]) && !isnan(r[3]) && covers(bl, r[0], r[1]) &&
                        covers(bw, r[2], r[3]))
                        mdl = &ds->models[fm->bins[b]];
                }
                if (!mdl && !(mm->warned & W_BINS)) {
                    mm->warned |= W_BINS;
                    nl_warn(nl, card->file, card->start + mm->model_off, (uint32_t)strlen(mm->model),
                            "no bin of model '%s' covers W=%g L=%g (%s): the type is unknown", mm->model, bw, bl,
                            dv->name);
                }
            }
        }
        double dw, dl;
        default_wl(nl, mdl, &dw, &dl);
        if (hw == 0)
            w = dw;
        if (hl == 0)
            l = dl;
        dv->mdl = mdl;
        dv->type = mdl ? mdl->type : MOS_UNKNOWN;
        dv->w = w;
        dv->l = l;
        dv->m = card_mult(f, fi, mm, dv->name, m);
        dv->nf = nf;
        dv->simname = NULL;
        dv->prim = DEV_MCARD;
        if (def->prim == PRIM_MOS && f->fr[fi].x && as_primitive(f, fi, dv) != ERR_OK)
            return ERR_NOMEM;
        if (!(mm->warned & W_VALUES) && (w <= 0 || l <= 0 || m <= 0 || nf <= 0)) {
            mm->warned |= W_VALUES;
            const char *what = w <= 0 ? "W" : l <= 0 ? "L" : m <= 0 ? "m" : "nf";
            double v = w <= 0 ? w : l <= 0 ? l : m <= 0 ? m : nf;
            nl_warn(nl, card->file, card->start + card->col - 1, (uint32_t)strlen(mm->name),
                    "%s of %s is %g, not a positive number: taken as unknown", what, dv->name, v);
        }
        /* a size that is not positive is no size: kept, it would give negative densities and
           widths (found by fuzz_netlist) */
        double *size[] = {&dv->w, &dv->l, &dv->m, &dv->nf};
        for (size_t k = 0; k < 4; k++)
            if (*size[k] <= 0)
                *size[k] = NAN;
    }
    if (def->nother && list_other(f, fi) != ERR_OK)
        return ERR_NOMEM;
    return ERR_OK;
}

/* Global options, in the top frame. */
static void options(Flat *f)
{
    Netlist *nl = f->nl;
    double v;
    nl->scale = 1.0;
    nl->defw = nl->defl = 100e-6;
    if (value(f, 0, &nl->opt_scale.v, nl->opt_scale.file, &v) > 0) {
        if (v > 0)
            nl->scale = v;
        else
            nl_warn(nl, nl->opt_scale.file, 0, 0, ".options scale=%g is not positive and is ignored", v);
    }
    if (value(f, 0, &nl->opt_defw.v, nl->opt_defw.file, &v) > 0)
        nl->defw = v;
    if (value(f, 0, &nl->opt_defl.v, nl->opt_defl.file, &v) > 0)
        nl->defl = v;
    /* .temp wins over .options temp, whatever their order (ngspice 39) */
    if (value(f, 0, &nl->dot_temp.v, nl->dot_temp.file, &v) > 0 ||
        value(f, 0, &nl->opt_temp.v, nl->opt_temp.file, &v) > 0)
        f->ds->temp_c = v;
}

/* ---- PDK netlists: set-up and summary ------------------------------------------------------- */

/* --top CELL: the cell checked as the design, looked up among the top level's definitions. */
static int find_root(Flat *f)
{
    Netlist *nl = f->nl;
    NlSubckt *top = nl->subs[0];
    const char *want = nl->pdk.top, *path = f->ds->files.files[0]->path;
    const char *nm = str_lookup(f->ds->names, want, strlen(want));
    NlSubckt *c = nm ? find_sub(nl, top, nm) : NULL;
    if (c) {
        if (top->nmos || top->ninst)
            diag_add(nl->d, DIAG_WARNING, (SrcLoc){path, 0, 0},
                     "--top %s: the %zu M card%s and %zu X card%s at the top level of the netlist are not checked",
                     c->name, top->nmos, top->nmos == 1 ? "" : "s", top->ninst, top->ninst == 1 ? "" : "s");
        f->root = c;
        return ERR_OK;
    }
    Buf b = BUF_INIT;
    int rc = ERR_OK;
    size_t shown = 0;
    for (int pass = 0; pass < 2 && !shown; pass++) /* first the cells no other cell uses */
        for (size_t i = 1; i < nl->nsubs && shown < 8; i++) {
            const NlSubckt *s = nl->subs[i];
            if (s->parent != top || !s->name || (pass == 0 && s->called))
                continue;
            rc |= buf_printf(&b, "%s%s", shown++ ? ", " : "", s->name);
        }
    f->root = NULL;
    nl->nerrors++;
    if (rc == ERR_OK)
        rc = diag_add(nl->d, DIAG_ERROR, (SrcLoc){path, 0, 0}, "--top %s: the netlist defines no subcircuit of that name%s%s%s",
                      want, shown ? " (it defines " : " (it defines no subcircuit at all)", shown ? b.data : "",
                      shown ? ")" : "");
    buf_free(&b);
    return rc == ERR_NOMEM ? ERR_NOMEM : ERR_OK;
}

static int pdk_setup(Flat *f)
{
    Netlist *nl = f->nl;
    StrTab *nt = f->ds->names;
    if (!(f->nm_m = str_intern(nt, "m", 1)) || !(f->nm_w = str_intern(nt, "w", 1)) ||
        !(f->nm_l = str_intern(nt, "l", 1)) || !(f->nm_nf = str_intern(nt, "nf", 2)) ||
        !(f->nm_mult = str_intern(nt, "mult", 4)) || (nl->pdk.ncells && !(f->spec_used = calloc(nl->pdk.ncells, 1))))
        return diag_nomem(nl->d);
    mult_flags(f);
    f->root = nl->subs[0];
    return nl->pdk.top ? find_root(f) : ERR_OK;
}

/* A netlist that only defines subcircuits (an extracted or exported cell): say how to check it. */
static void hint_top(Flat *f)
{
    Netlist *nl = f->nl;
    NlSubckt *top = nl->subs[0];
    if (f->root != top || top->ndev || top->nmos || top->ninst)
        return;
    Buf b = BUF_INIT;
    size_t shown = 0;
    int rc = ERR_OK;
    for (size_t i = 1; i < nl->nsubs && shown < 8; i++) {
        const NlSubckt *s = nl->subs[i];
        if (s->parent == top && s->name && !s->called && (s->nmos || s->ninst))
            rc |= buf_printf(&b, "%s%s", shown++ ? ", " : "", s->name);
    }
    if (shown && rc == ERR_OK)
        diag_add(nl->d, DIAG_NOTE, (SrcLoc){f->ds->files.files[0]->path, 0, 0},
                 "the netlist only defines subcircuits: check one with --top CELL (and --prefix PATH, its "
                 "instance in the simulated testbench, unless the dump shows it); cells no other cell uses: %s",
                 b.data);
    buf_free(&b);
}

/* The summary of devices not checked (one warning per kind) and declarations that matched nothing. */
static int pdk_report(Flat *f)
{
    Netlist *nl = f->nl;
    for (int k = 0; k < UNCHK_COUNT; k++) {
        if (!f->unchk.count[k])
            continue;
        Buf b = BUF_INIT;
        if (prim_unchecked_text(&f->unchk, (UncheckedKind)k, nl->missing, &b) != ERR_OK) {
            buf_free(&b);
            return diag_nomem(nl->d);
        }
        nl_warn(nl, f->unchk.file[k], f->unchk.off[k], 1, "%s", b.data);
        buf_free(&b);
    }
    if (f->nimplausible) {
        const Device *v = f->implausible;
        nl_warn(nl, f->implausible_file, f->implausible_off, (uint32_t)strlen(v->name),
                "W and L of %zu transistor%s read from X cards %s not plausible in metres (first: %s, W=%g L=%g, "
                "cell %s): without the cells' definitions biaslint cannot tell how they scale w and l%s; the "
                "dump's W and L are used where it gives them",
                f->nimplausible, f->nimplausible == 1 ? "" : "s", f->nimplausible == 1 ? "is" : "are", v->name, v->w,
                v->l, v->model, nl->opt_scale.v.e || !isnan(nl->opt_scale.v.v) ? "" : " (the netlist sets no .option scale)");
    }
    for (size_t i = 0; i < nl->pdk.ncells; i++) {
        const PrimSpec *sp = &nl->pdk.cells[i];
        if (!f->spec_used[i])
            diag_add(nl->d, DIAG_WARNING, (SrcLoc){0}, "%s %.*s: no cell the design uses has that name",
                     sp->decl == PRIM_DECLARE ? "--primitive" : "--not-primitive", (int)(sp->len > 200 ? 200 : sp->len),
                     sp->pattern);
    }
    return ERR_OK;
}

int flat_run(Netlist *nl)
{
    Flat f;
    memset(&f, 0, sizeof f);
    f.nl = nl;
    f.ds = nl->ds;
    f.env.lookup = lookup;
    f.env.func = func;
    f.env.ctx = &f;
    f.cur = NONE;
    Design *ds = nl->ds;
    int rc = ERR_OK;
    NlSubckt *top0 = nl->subs[0], *top = top0; /* top: the root, top0 the top level even with --top */
    if ((rc = pdk_setup(&f)) != ERR_OK)
        goto done;
    if (!f.root)
        goto done; /* --top names no cell: reported */
    top = f.root;
    if (count(&f) != ERR_OK || f.nomem)
        goto oom;
    if ((rc = resolve_undefined(&f)) != ERR_OK)
        goto done;
    hint_top(&f);
    if (top->height - 1 > nl->opt.max_subckt_depth) {
        depth_error(&f, nl->opt.max_subckt_depth);
        goto done;
    }
    if (top->ndev > nl->opt.max_devices) {
        /* located at the top-level X card that brings in the most, so the message has a line */
        const NlInst *big = NULL;
        for (size_t i = 0; i < top->ninst; i++)
            if (!top->inst[i].bad && top->inst[i].sub && (!big || top->inst[i].sub->ndev > big->sub->ndev))
                big = &top->inst[i];
        if (big) {
            nl_error(nl, big->file, big->off, (uint32_t)strlen(big->name),
                     "the design has %s%llu MOSFETs once flattened, more than the limit of %zu (%s%llu in one %s); "
                     "--max-devices sets the limit",
                     top->ndev >= NDEV_CAP ? "over " : "", (unsigned long long)top->ndev, nl->opt.max_devices,
                     big->sub->ndev >= NDEV_CAP ? "over " : "", (unsigned long long)big->sub->ndev, big->sub->name);
            goto done;
        }
        nl->nerrors++;
        diag_add(nl->d, DIAG_ERROR, (SrcLoc){ds->files.files[0]->path, 0, 0},
                 "the design has %s%llu MOSFETs once flattened, more than the limit of %zu", top->ndev >= NDEV_CAP ? "over " : "",
                 (unsigned long long)top->ndev, nl->opt.max_devices);
        goto done;
    }
    /* Instances are expanded one by one whether or not MOSFETs lie beneath (a cell of resistors still
       has its parameters evaluated and its other devices listed), so they need a bound of their own:
       ten levels of ten resistor cells would be 10^10 frames (found by fuzz_netlist). Each instance
       with a MOSFET beneath is an ancestor of one, so a design within the device limit has at most
       that limit times its depth of them; the same number bounds all instances. */
    uint64_t max_inst = (uint64_t)nl->opt.max_devices > UINT64_MAX / 128 ? UINT64_MAX
                                                                         : (uint64_t)nl->opt.max_devices * top->height;
    if (top->nsub > max_inst) {
        const NlInst *big = NULL;
        for (size_t i = 0; i < top->ninst; i++)
            if (!top->inst[i].bad && top->inst[i].sub && (!big || top->inst[i].sub->nsub > big->sub->nsub))
                big = &top->inst[i];
        nl_error(nl, big->file, big->off, (uint32_t)strlen(big->name),
                 "the design has %s%llu subcircuit instances once flattened, more than the limit of %llu (%s%llu in "
                 "one %s): the device limit times the hierarchy's depth of %u, which bounds the instances that hold "
                 "MOSFETs; --max-devices sets it",
                 top->nsub >= NDEV_CAP ? "over " : "", (unsigned long long)top->nsub, (unsigned long long)max_inst,
                 big->sub->nsub >= NDEV_CAP ? "over " : "", (unsigned long long)big->sub->nsub, big->sub->name,
                 top->height);
        goto done;
    }
    if (top->ndev && (!(ds->devs = calloc((size_t)top->ndev, sizeof *ds->devs)) ||
                      !(ds->nets = calloc((size_t)top->ndev, sizeof *ds->nets))))
        goto oom;
    f.capdevs = (size_t)top->ndev;
    if (push(&f, NONE, NULL, top0, 1.0) != ERR_OK)
        goto oom;
    options(&f);
    if (top != top0) {
        f.fr[0].next = top0->ninst; /* with --top the top level's own cards are left out */
        if (push(&f, 0, NULL, top, 1.0) != ERR_OK || emit(&f, 1) != ERR_OK)
            goto oom;
    } else if (emit(&f, 0) != ERR_OK) {
        goto oom;
    }
    while (f.nfr > 1 || (f.nfr == 1 && f.fr[0].next < top0->ninst)) {
        uint32_t fi = (uint32_t)f.nfr - 1;
        Frame *fr = &f.fr[fi];
        if (fr->next >= fr->def->ninst) {
            pop(&f);
            continue;
        }
        NlInst *x = &fr->def->inst[fr->next++];
        if (x->bad) {
            if (!x->sub && f.missing_mode && undefined_instance(&f, fi, x) != ERR_OK)
                goto oom;
            continue;
        }
        double m = 1;
        if (value(&f, fi, &x->m, x->file, &m) < 0)
            m = NAN;
        double mult = x_mult(&f, fi, x, m); /* ngspice 39's rule, not a product: see mult_flags */
        if (push(&f, fi, x, x->sub, mult) != ERR_OK || emit(&f, (uint32_t)f.nfr - 1) != ERR_OK)
            goto oom;
    }
    /* models no device used still get their fields, quietly, from the global scope */
    f.quiet = 1;
    for (size_t i = 0; i < ds->nmodels; i++)
        eval_model(&f, 0, (uint32_t)i);
    rc = pdk_report(&f);
    goto done;
oom:
    rc = diag_nomem(nl->d);
done:
    free(f.fr);
    free(f.slots);
    free(f.nets);
    free(f.path);
    free(f.undef);
    free(f.spec_used);
    return rc;
}
