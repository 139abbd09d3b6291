/* netlist: the netlist reader. Reads the top file and what it includes (.include, .lib sections),
 * turns the cards into a circuit model (subcircuits, instances, parameters, models, options) and
 * hands it to flatten, which fills the Design. The CLI calls nl_load/nl_free; the circuit model
 * below is shared with flatten.c only.
 *
 * Dialect: SPICE3/ngspice, case-insensitive, with the HSPICE-style constructs of PDK decks.
 * - Read: M and X cards; .subckt/.ends and .macro/.eom (nested definitions are local to their
 *   parent), .param/.params/.parameters (global and in subcircuits, several per card), .func,
 *   .model nmos|pmos (bins "name.N" chosen by lmin/lmax/wmin/wmax), .include/.inc/.incl, .lib FILE
 *   SECTION and .lib NAME ... .endl, .global, .option(s) temp scale defw defl, .temp, .end (in the
 *   top file only: ngspice 39 ignores it in included files, and so do we). Other element cards are
 *   counted per subcircuit (R, C, D apart: primitive cells may hold them) and Q, J, Z, N cards kept
 *   by name for the summary of devices not checked. Analysis and output dot cards are skipped, any
 *   other dot card is named in a warning (ngspice 39 stops on it); .control blocks are skipped
 *   (their text stays in Design.files).
 * - PDK netlists (primitive.h, NlPdkOptions): primitive cells, --top, undefined transistor cells
 *   read from their X cards; see flatten.c and DEVELOPERS.md.
 * - File names are looked up next to the including file, then (for .lib) next to the top netlist,
 *   then from the working folder. ngspice 39 tries the working folder first, and for .lib the top
 *   deck's folder rather than the including file's.
 * - Bare values on M and .model cards follow SPICE number rules (1mil = 25.4u); values in braces or
 *   quotes, on X cards and in .param follow ngspice's expression rules (1mil = 1m), as ngspice 39.
 *   In .param a bare value ends at a blank; what follows up to the next name= is ignored with a
 *   warning (ngspice ignores it silently).
 * - m follows ngspice 39's rule (flatten.c, mult_flags). Known differences from ngspice 39: cards
 *   after a nested .subckt inside a subcircuit called with m= keep their m (ngspice fails on such
 *   decks); subcircuits are found from the X card's definition outwards for that rule (ngspice: the
 *   last definition of the name in the deck); nested ?: is C's (ngspice 39 gives 5 for 1?0?5:6:7); min and max
 *   take exactly two arguments (ngspice 39 accepts more and answers oddly); statistical functions
 *   give their nominal value; model bins are chosen for any level (ngspice: BSIM3/4 and HiSIM). */
#ifndef NETLIST_H
#define NETLIST_H

#include <stddef.h>
#include <stdint.h>

#include "design.h"
#include "diag.h"
#include "expr.h"
#include "primitive.h"
#include "strtab.h"

typedef struct {
    size_t max_devices;        /* flattening stops with an error, before expanding, past this (0: 50,000,000) */
    unsigned max_include_depth;/* 0: 32 */
    unsigned max_subckt_depth; /* 0: 64 */
} NlOptions;

/* Options for PDK netlists (primitive.h), apart from NlOptions so that its initializers stay valid. */
typedef struct {
    const char *top;           /* check this subcircuit as the design (--top), NULL: the top level */
    const PrimSpec *cells;     /* --primitive / --not-primitive declarations in order (borrowed) */
    size_t ncells;
    int allow_missing_lib;     /* a file named by .include/.lib that does not exist is a warning */
} NlPdkOptions;

/* Load the netlist at path (and what it includes), flatten it, fill *ds. On error returns ERR_INPUT/ERR_IO/
   ERR_NOMEM with located diagnostics in d; ds is then freed/empty. Warnings (e.g. missing model card) go to d too. */
int nl_load(const char *path, const NlOptions *opt, Design *ds, DiagList *d) MUST_CHECK;
/* The same with the options of PDK netlists (pdk may be NULL: none); nl_load passes NULL. */
int nl_load_pdk(const char *path, const NlOptions *opt, const NlPdkOptions *pdk, Design *ds, DiagList *d) MUST_CHECK;
void nl_free(Design *ds); /* accepts a zeroed Design */
/* Give back the design's name index and the devices' nets (Design.names and Design.nets become
 * NULL; the names stay): for a run that will look no name up again and read no net, which is every
 * check without lookup tables once the dumps are bound. */
void nl_release_index(Design *ds);

/* ---- The circuit model between netlist.c and flatten.c ---------------------------------------- */

#define NL_NONE UINT32_MAX

/* A numeric value on a card: a constant (e NULL, v finite), an expression (e set), or absent (e NULL,
 * v NaN; also when the value failed to parse and an error was recorded). */
typedef struct {
    double v;
    Expr *e;
} NlVal;

/* An option value and the file it is written in. */
typedef struct {
    NlVal v;
    uint32_t file;
} NlOpt;

/* name = value: a .param, a subcircuit default, an instance override. */
typedef struct {
    const char *name; /* interned */
    Expr *val;        /* NULL when the value failed to parse (an error was recorded) */
    uint32_t file;
    size_t off;       /* offset of the name */
} NlParam;

/* An M card. */
typedef struct {
    const char *name;   /* interned, with its letter: "m1" */
    const char *model;  /* interned model name as written */
    uint32_t node[4];   /* d g s b: indices into the subcircuit's node table */
    NlVal w, l, m, nf;
    uint32_t card;      /* index into Design.cards (file, line, column, span) */
    uint32_t model_off; /* offset of the model name from the card's start */
    uint32_t fam;       /* model family, set by flatten (NL_NONE: no such model) */
    uint8_t warned;     /* a per-card warning was given (bins, values) */
} NlMos;

typedef struct NlSubckt NlSubckt;

/* An element card of a transistor-like kind biaslint does not check (Q, J, Z, N). */
typedef struct {
    const char *name;    /* interned, with its letter */
    uint32_t file;
    size_t off;          /* the card's first byte */
} NlOther;

/* An X card by position: Netlist.subs[sub]->inst[inst]. */
typedef struct {
    uint32_t sub, inst;
} NlXRef;

/* An X card. */
typedef struct {
    const char *name;    /* interned: "x1" */
    const char *subname; /* interned subcircuit name as written */
    uint32_t *nodes;     /* indices into the enclosing subcircuit's node table (Netlist.parse) */
    uint32_t nnodes;
    uint32_t nparams;
    NlParam *params;     /* overrides, in card order, `m` excluded (Netlist.parse) */
    int32_t *slot;       /* per override: index in sub->params, -1 when it names none (flatten) */
    NlVal m;
    NlSubckt *sub;       /* resolved by flatten; NULL when undefined */
    uint32_t file;
    size_t off;          /* the card's first byte */
    size_t sub_off;      /* the subcircuit name */
    uint8_t bad;         /* skip when expanding: undefined, wrong node count, recursion */
    /* PDK netlists */
    uint8_t bare;        /* set by flatten: the subcircuit is undefined and the X card is checked as a
                            transistor from its own parameters (a DEV_BARE device) */
    uint8_t warned;      /* a per-card warning was given (m replaced) */
    uint32_t card;       /* index into Design.cards: the X card's span, for annotation */
} NlInst;

/* A .subckt definition; the top level is one too (name NULL, no ports). */
struct NlSubckt {
    const char *name;     /* interned, NULL for the top level */
    NlSubckt *parent;     /* lexically enclosing definition, NULL for the top level */
    uint32_t index;       /* in Netlist.subs */
    uint32_t file;
    size_t off;           /* the .subckt card */
    uint32_t nports;      /* the first nports nodes are the ports */
    const char **nodes;   /* node names as written, interned (malloc'd) */
    uint32_t nnodes;
    size_t capnodes;
    StrMap nodemap;       /* name -> node index (empty at the top level: there a name's value in
                             Design.names is its node index) */
    NlParam *params;      /* defaults from the .subckt line first, then the body's .param cards */
    uint32_t nparams;
    size_t capparams;
    uint32_t ndefaults;
    StrMap parammap;      /* name -> index of its last definition */
    NlMos **mos;          /* the M cards, in blocks that never move (nl_mos) */
    size_t nmos, capmos0, nmosblk, capmosblk;
    NlInst *inst;
    size_t ninst, capinst;
    StrMap subs;          /* subcircuits defined inside: name -> index in Netlist.subs */
    StrMap models;        /* models defined inside: name -> index in Netlist.fams */
    StrMap funcs;         /* .func defined inside: name -> index in Netlist.funcs */
    /* flatten's bookkeeping */
    uint64_t ndev;        /* MOSFETs in one instance, all levels (saturating) */
    uint64_t nsub;        /* subcircuit instances in one instance, all levels (saturating) */
    uint32_t height;      /* 1 + deepest nesting of X cards below */
    uint8_t state;        /* 0 unvisited, 1 being counted, 2 counted */
    uint8_t *global;      /* per node: 1 when the net is global (0, gnd, .global) (malloc'd) */
    /* PDK netlists: the other element cards, for primitives and the summary of unchecked devices */
    uint32_t npassive;    /* R, C and D cards */
    uint32_t nforeign;    /* every other element card but M and X (sources, L, K, B, Q, J, Z, N, ...) */
    NlOther *other;       /* the transistor-like ones among them: Q, J, Z, N (malloc'd) */
    size_t nother, capother;
    uint32_t mflag;       /* set by flatten: reading-order index of the X card whose m= makes ngspice
                             give this subcircuit a parameter m (NL_NONE: none) */
    uint8_t mdecl;        /* flatten: 1 when m is among the .subckt line's parameters */
    uint8_t prim;         /* flatten: PrimClass */
    MosType primtype;     /* flatten: a declared type (--primitive CELL=nmos), MOS_UNKNOWN otherwise */
    uint8_t called;       /* flatten: some X card of the netlist names this subcircuit */
};

/* A .model card; Design.models holds its public part at the same index. */
typedef struct {
    NlVal level, lmin, lmax, wmin, wmax, cgso, cgdo, cgbo;
    uint32_t file;
    size_t off;
    uint8_t evaluated;    /* the values above have been evaluated into Design.models / this */
    double bin[4];        /* lmin lmax wmin wmax, evaluated (NaN when absent) */
} NlModel;

/* The models one name can mean: the one of that exact name, or bins "<name>.<suffix>". */
typedef struct {
    int32_t exact;        /* index into Design.models, -1 when none */
    uint32_t *bins;       /* indices into Design.models, in card order (malloc'd) */
    uint32_t nbins;
    size_t capbins;
    const char *other;    /* a model of another type (d, npn, ...) has this name: its type, else NULL */
} NlFamily;

typedef struct {
    const char *name;
    unsigned nparams;
    Expr *body;
} NlFunc;

typedef struct {
    Design *ds;
    DiagList *d;
    Arena parse;            /* what only reading and flattening use, freed after them: parsed
                               expressions, X cards' nodes and overrides */
    NlOptions opt;          /* with the defaults filled in */
    size_t nerrors;         /* errors recorded by this load */
    NlSubckt **subs;        /* [0] is the top level (malloc'd) */
    size_t nsubs, capsubs;
    NlModel *mods;          /* parallel to ds->models */
    size_t capmodels;
    NlFamily *fams;
    size_t nfams, capfams;
    NlFunc *funcs;
    size_t nfuncs, capfuncs;
    size_t capcards;
    StrMap globals;         /* .global nets */
    NlOpt opt_temp, opt_scale, opt_defw, opt_defl, dot_temp; /* .options temp scale defw defl, .temp */
    double scale, defw, defl; /* evaluated by flatten */
    const char *nm_zero, *nm_gnd; /* interned "0" and "gnd" */
    /* PDK netlists */
    NlPdkOptions pdk;       /* a copy (zero when none were given) */
    NlXRef *xorder;         /* every X card in reading order (ngspice's m= rule depends on it) (malloc'd) */
    size_t nxorder, capxorder;
    uint32_t nmissing;      /* files named by .include/.lib that were not found (allow_missing_lib) */
    const char *missing;    /* the first of them, as written (arena) */
} Netlist;

/* A located error or warning at byte off of file (span: columns to underline). Errors are counted in
 * nl->nerrors. Return the diag_add status. */
/* A definition's M cards sit in blocks of NLMOS_BLOCK (the first grows up to that size), so that
 * flattening can hand back the top level's blocks as their cards become devices: at a million cards
 * they and the devices made of them are not both held whole. */
#define NLMOS_BLOCK 4096

static inline NlMos *nl_mos(const NlSubckt *s, size_t i)
{
    return &s->mos[i / NLMOS_BLOCK][i % NLMOS_BLOCK];
}

/* Append a copy of m to s's M cards: ERR_OK or ERR_NOMEM. */
int nl_mos_push(NlSubckt *s, const NlMos *m);
/* Give back the blocks holding only cards before index upto (never the first block); those cards
 * must not be read again. */
void nl_mos_release(NlSubckt *s, size_t upto);
/* Free every block. */
void nl_mos_free(NlSubckt *s);

int nl_error(Netlist *nl, uint32_t file, size_t off, uint32_t span, const char *fmt, ...) PRINTF_LIKE(5, 6);
int nl_warn(Netlist *nl, uint32_t file, size_t off, uint32_t span, const char *fmt, ...) PRINTF_LIKE(5, 6);

#endif
