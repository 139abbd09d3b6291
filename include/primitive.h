/* primitive: the transistor primitive cells of PDK netlists. A PDK wraps each transistor in a
 * subcircuit that holds one M card (and parasitic D, R, C cards); the designer places an X card of
 * that cell, and biaslint reports, annotates and checks the device under that X card. This module
 * holds the policy: which cells are primitives (the automatic rule and the --primitive and
 * --not-primitive declarations), the type a cell name implies, and the summary of transistor-like
 * devices biaslint does not check. cli.c parses the declarations; flatten.c applies the rest. */
#ifndef PRIMITIVE_H
#define PRIMITIVE_H

#include <stddef.h>
#include <stdint.h>

#include "buf.h"
#include "design.h"

typedef enum { PRIM_DECLARE = 1, PRIM_EXCLUDE = 2 } PrimDecl;

/* One --primitive CELL[=nmos|pmos] or --not-primitive CELL. */
typedef struct {
    const char *pattern; /* cell name; '*' and '?' match as in file names (borrowed: argv) */
    size_t len;          /* bytes of pattern that form the name ("lp_n*=nmos": 4) */
    PrimDecl decl;
    MosType type;        /* PRIM_DECLARE with a type: the cell's devices are of this type */
} PrimSpec;

/* What a subcircuit is, for flatten (NlSubckt.prim). */
typedef enum {
    PRIM_NONE = 0, /* expanded as usual */
    PRIM_MOS,      /* a transistor primitive: one instance is one device, named by its X card */
    PRIM_OTHER,    /* a primitive of a kind biaslint does not check (one Q, J, Z or N card): listed */
} PrimClass;

/* Parse the argument of --primitive (decl PRIM_DECLARE: "CELL" or "CELL=nmos|pmos") or of
 * --not-primitive (PRIM_EXCLUDE: "CELL"). 1 with *out filled (borrowing arg), 0 when malformed. */
int prim_parse_spec(const char *arg, PrimDecl decl, PrimSpec *out);

/* The last declaration whose pattern matches cell (case-insensitive), or NULL. */
const PrimSpec *prim_find_spec(const PrimSpec *specs, size_t n, const char *cell);

/* 1 when s matches pat[0..plen) ('*' any run, '?' one byte), ignoring ASCII case. Linear in
 * |pat|*|s| at worst, no recursion. */
int prim_glob(const char *pat, size_t plen, const char *s);

/* The class of a subcircuit with nmos M cards, ninst X cards and nforeign element cards other than
 * R, C and D (nother of them Q, J, Z or N); spec is the cell's declaration or NULL. Automatic: one M
 * card, no X card and nothing but R, C, D beside it is PRIM_MOS; one Q, J, Z or N card and nothing
 * but R, C, D beside it is PRIM_OTHER. A declared cell (--primitive) may hold other elements too but
 * still needs exactly one M card and no X card; an excluded one (--not-primitive) is PRIM_NONE. */
PrimClass prim_classify(size_t nmos, size_t ninst, size_t nforeign, size_t nother, const PrimSpec *spec);

/* The type a cell or model name implies: a word of letters (the name split at every byte that is
 * not a letter) that is nch, nfet, nmos, nmosfet or ends in one of them after at most four more
 * letters ("lvnmos") is n-type, the same with p is p-type; no such word, or words of both kinds:
 * MOS_UNKNOWN. So lp_nch_18 and nfet_01v8 are n-type, pmos4 p-type, nmoscap and npn neither.
 * Common practice of PDK naming, no source. */
MosType prim_type_from_name(const char *name);

/* Kinds of transistor-like devices biaslint lists as not checked. ORDER UNCHECKED */
typedef enum {
    UNCHK_BJT,       /* Q cards */
    UNCHK_JFET,      /* J cards */
    UNCHK_MESFET,    /* Z cards */
    UNCHK_NELEM,     /* N cards: compact models through ngspice's N element (OSDI, Verilog-A) */
    UNCHK_UNDEFINED, /* X cards of cells the netlist does not define, not recognised as transistors */
    UNCHK_COUNT
} UncheckedKind;

/* The kind of an element card letter, or -1 when the letter is not a transistor-like one. */
int prim_unchecked_kind(int letter);

#define PRIM_LISTED 4 /* names given per kind in the summary */

/* The devices a flattening leaves unchecked, counted per kind with the first few names. */
typedef struct {
    uint64_t count[UNCHK_COUNT];
    const char *names[UNCHK_COUNT][PRIM_LISTED]; /* hierarchical names, interned by the caller */
    const char *cells[UNCHK_COUNT][PRIM_LISTED]; /* for X cards: the cell name, else NULL */
    uint32_t file[UNCHK_COUNT];                  /* where the first one is written */
    size_t off[UNCHK_COUNT];
} PrimUnchecked;

/* 1 when the caller should pass a name for the next device of this kind (one of the first few). */
static inline int prim_unchecked_wants_name(const PrimUnchecked *u, UncheckedKind k)
{
    return u->count[k] < PRIM_LISTED;
}

/* Count one unchecked device (name and cell may be NULL past the first few). */
void prim_unchecked_add(PrimUnchecked *u, UncheckedKind k, const char *name, const char *cell, uint32_t file,
                        size_t off);

/* The sentence for kind k: "3 bipolar transistors (Q cards) are not checked: biaslint reads MOSFET
 * operating points only (x1.q1, xq2 (cell lp_vnpn), ...)", appended to out. ERR_OK or ERR_NOMEM. */
int prim_unchecked_text(const PrimUnchecked *u, UncheckedKind k, const char *missing_lib, Buf *out) MUST_CHECK;

#endif
