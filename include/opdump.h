/* opdump: operating-point records read from a simulator dump. One interface, one reader per
 * format (op_show.c: ngspice `show` tables in batch output; op_raw.c: ngspice raw files, binary and
 * ASCII; op_csv.c: a CSV device table). Values are kept as the simulator printed them; join
 * normalizes signs once the device type is known from the netlist (see DEVELOPERS.md). */
#ifndef OPDUMP_H
#define OPDUMP_H

#include <math.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "diag.h"
#include "source.h"
#include "strtab.h"

/* Quantities a record may hold, named as ngspice names the instance parameters. ORDER OPQ */
typedef enum {
    OPQ_ID, OPQ_GM, OPQ_GDS, OPQ_GMBS,
    OPQ_VGS, OPQ_VDS, OPQ_VBS,
    OPQ_VTH, OPQ_VON, OPQ_VDSAT,
    OPQ_CGG, OPQ_CGS, OPQ_CGD, OPQ_CGB,
    OPQ_W, OPQ_L, OPQ_M, OPQ_NF,
    OPQ_COUNT
} OpQty;

extern const char *const op_qty_name[OPQ_COUNT]; /* "id", "gm", ... ORDER OPQ */

/* Which model family printed the record, when the dump says (show block headers); it decides how
 * signs and Cgg are read (ngspice-op-data.md, section 4). */
typedef enum { OPFAM_UNKNOWN = 0, OPFAM_BSIM, OPFAM_MOS1 } OpFamily;

typedef struct {
    const char *name;     /* canonical: ngspice's "m.x1.m3" / "@m.x1.m3[..]" becomes "x1.m3"; interned */
    bool truncated;       /* the dump cut the name (ngspice `show` keeps 21 characters): match by prefix */
    OpFamily family;
    const char *model;    /* model name when the dump gives it, interned; NULL otherwise */
    double *q;            /* the values, NaN where absent (an absent value is never 0), in one of the
                             table's blocks: read them with op_q (the table may keep only the quantities
                             its dump has, op_layout); NULL once op_release_values gave them back */
    SrcLoc loc;           /* where the record starts in the dump (file borrowed from the OpTable) */
    uint32_t extra;       /* index of this record's first value in OpTable.extra_vals */
} OpRecord;

typedef enum { OPFMT_AUTO = 0, OPFMT_SHOW, OPFMT_RAW, OPFMT_CSV } OpFormat;

typedef struct {
    SrcFile file;           /* the dump, read whole; op_read releases its text once parsed (path stays) */
    OpFormat format;        /* the format actually read */
    Arena arena;
    StrTab *names;          /* a record's name has its index in recs as its value (strtab.h) */
    OpRecord *recs;         /* malloc'd array */
    size_t n, cap;
    double **vblock;        /* the records' values: block b holds records b*OP_VBLOCK.. (mem_pages) */
    size_t nvblock, capvblock;
    /* Which quantities a record keeps (op_layout): nq values per record, quantity k at slot[k] - 1, absent
       where slot[k] is 0. nq 0 (a zeroed table) keeps all OPQ_COUNT, in OpQty order. */
    uint8_t nq;
    uint8_t slot[OPQ_COUNT];
    /* Node voltages (raw files; show output where a node table is printed). Names canonical
       ("x1.tail", "out"), interned. */
    const char **node_name;
    double *node_v;
    size_t nnodes, nodes_cap;
    /* Extra CSV columns kept for reports: nextra names, n*nextra values (NaN where empty). */
    const char **extra_name;
    size_t nextra;
    double *extra_vals;
    size_t extra_cap;
    double temp_c;          /* simulation temperature when the dump says, else NaN */
} OpTable;

/* One reader per format. sniff returns a confidence 0..100 that buf holds this format;
 * parse fills t from t->file (records, nodes) and returns ERR_OK or a negative status with
 * located diagnostics. */
typedef struct {
    const char *name; /* "show", "raw", "csv" */
    int (*sniff)(const char *buf, size_t len);
    int (*parse)(OpTable *t, DiagList *d);
} OpReader;

extern const OpReader op_show_reader, op_raw_reader, op_csv_reader;

/* Read a dump, detecting its format unless fmt says. *out is the table (free with op_free), NULL on
 * error; nothing is left allocated on failure. Errors: ERR_IO, ERR_INPUT, ERR_NOMEM. */
int op_read(const char *path, OpFormat fmt, OpTable **out, DiagList *d) MUST_CHECK;
void op_free(OpTable *t);

/* ---- helpers shared by the readers (opdump.c) ---- */

/* A new record for canonical name[0..n) at loc, all quantities NaN, or the existing one when the
 * name is there already and merge is true (show output may list a device in several tables).
 * NULL with a diagnostic for a duplicate when merge is false, or out of memory (d->oom set).
 * The pointer is valid until the next op_add on t (the array may move). */
OpRecord *op_add(OpTable *t, const char *name, size_t n, SrcLoc loc, bool merge, DiagList *d);

/* Records per block of values (4096 records of OPQ_COUNT doubles are 144 pages): blocks, not one
 * array, so that the values neither move as the table grows nor stay in the process once given back. */
#define OP_VBLOCK 4096

/* Keep only the quantities marked in present, for a reader that knows them before its first record
 * (a CSV header): a CSV of nine columns then costs 72 bytes a record, not 144. Call before op_add;
 * quantities not marked read as absent and must not be set. */
void op_layout(OpTable *t, const bool present[OPQ_COUNT]);

/* Where record r of t keeps quantity q, or NULL when t keeps no place for it (op_layout). */
static inline double *op_place(const OpTable *t, const OpRecord *r, OpQty q)
{
    if (!t->nq)
        return &r->q[q];
    return t->slot[q] ? &r->q[t->slot[q] - 1] : NULL;
}

/* Quantity q of record r of t: NaN when absent. */
static inline double op_q(const OpTable *t, const OpRecord *r, OpQty q)
{
    const double *at = op_place(t, r, q);
    return at ? *at : (double)NAN;
}

/* All OPQ_COUNT quantities of r into out, in OpQty order (NaN where absent). */
void op_values(const OpTable *t, const OpRecord *r, double out[OPQ_COUNT]);

/* Give back the records' values (their q become NULL), for a reader that has read them for the last
 * time: join, once the rows hold the figures, so that the reports do not run beside them. */
void op_release_values(OpTable *t);

/* Give back the name index (op_find finds nothing after it); the records keep their names. */
void op_release_index(OpTable *t);

/* Set quantity q of r to v; a different value already there is a conflict: an error at loc. Setting
 * NaN does nothing (absent stays absent). ERR_OK or ERR_INPUT. */
int op_set(OpTable *t, OpRecord *r, OpQty q, double v, SrcLoc loc, DiagList *d) MUST_CHECK;

/* Add a node voltage (name canonical, as "x1.tail"). Appends: a dump that lists a node twice gives
 * two entries. ERR_OK or ERR_NOMEM. */
int op_add_node(OpTable *t, const char *name, size_t n, double v) MUST_CHECK;

/* The quantity named s[0..n) (case-insensitive, ngspice names and the documented aliases), or -1.
 * Aliases: gmb (gmbs), ids (id), vt (vth), width (w), length (l), mult (m). */
int op_qty_lookup(const char *s, size_t n);

/* As op_qty_lookup, but only ngspice's own spellings (op_qty_name, and "gmb", Mos1's name for gmbs):
 * what the show and raw readers accept, so that no alias can capture a row ngspice means otherwise. */
int op_qty_lookup_ngspice(const char *s, size_t n);

/* Decimal number s[0..n) (optional sign, digits, optional fraction, optional exponent; nothing else, no
 * SI suffix, no spaces) into *v, correctly rounded (as strtod; C locale). For n >= 128 the byte s[n]
 * must be readable and must not continue the number. Status: */
enum {
    OPNUM_OK = 0,
    OPNUM_SYNTAX = -1,    /* not a decimal number */
    OPNUM_NONFINITE = -2, /* "nan", "inf", "infinity" with optional sign, any case (ngspice prints -nan) */
    OPNUM_RANGE = -3,     /* overflows a double */
};
int op_parse_number(const char *s, size_t n, double *v);

/* ngspice's instance spelling to biaslint's canonical name: "m.x1.m3" -> "x1.m3", "mn1" -> "mn1",
 * a leading '@' (vector names) dropped; returns the start and length within s (case kept). */
void op_canonical(const char *s, size_t n, const char **cs, size_t *cn);

/* The record for a canonical name, or NULL. */
const OpRecord *op_find(const OpTable *t, const char *name);
/* out[i] = op_find(t, names[i]) for i < n (a name may be NULL: no record), the lookups' cache misses
 * overlapped: on a table of a million records this is several times faster than one at a time. */
void op_find_all(const OpTable *t, const char *const *names, size_t n, const OpRecord **out);

#endif
