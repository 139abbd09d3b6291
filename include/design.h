/* design: what the netlist reader hands to the rest of biaslint: the loaded files, the cards that
 * annotation needs, the models, and the flat list of MOSFETs with hierarchical names. */
#ifndef DESIGN_H
#define DESIGN_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "diag.h"
#include "source.h"
#include "strtab.h"

typedef enum { MOS_UNKNOWN = 0, MOS_NMOS, MOS_PMOS } MosType;

/* One logical line of a netlist file that annotation must know about: a MOSFET card, or in the top
 * file the `.include`/`.lib` line through which a file with MOSFET cards was loaded. */
typedef struct {
    uint32_t file;     /* index into Design.files; 0 is the top netlist */
    uint32_t line;     /* line number of its first physical line */
    uint32_t col;      /* column of its first character (1) */
    size_t start;      /* byte offset of the first physical line */
    size_t end;        /* byte offset just past the last physical line's line ending (or EOF) */
    size_t anchor_end; /* offset in the top file after which this card's annotation goes: `end` for
                          cards in file 0, else the end of the top-level line that included it */
} Card;

/* A `.model` card: the fields biaslint uses. */
typedef struct {
    const char *name;  /* interned, lower case, including any bin suffix ("nch.1") */
    MosType type;
    int level;         /* 1 when not given, as in SPICE */
    double cgso, cgdo, cgbo; /* overlap capacitances per metre (F/m), NaN when not on the card */
    uint32_t card_file, card_line;
} Model;

/* One MOSFET instance after flattening. The fields are in the order that leaves no padding: a
 * large design holds millions of these. */
typedef struct {
    const char *name;    /* canonical hierarchical name, interned, lower case: "x1.xamp.m3" */
    const char *model;   /* model name as written on the card, interned ("nch"); bins resolved to base */
    const Model *mdl;    /* the resolved .model card, NULL when absent (type then MOS_UNKNOWN) */
    double w, l;         /* metres, as written on the card after evaluation (W is total over fingers) */
    double m;            /* multiplier as ngspice 39 computes it: the card's m, or the calling X card's m
                            where ngspice replaces it (not a product; flatten.c, mult_flags) */
    double nf;           /* fingers, 1 when not given */
    const char *cell;    /* subcircuit the card stands in, interned; NULL at top level */
    /* added for PDK netlists (primitive cells, --top/--prefix); zero for a plain M card */
    const char *simname; /* canonical name of the device's record in the dump when it differs from
                            name: a primitive's inner M card ("xm4.mn"), under the testbench prefix
                            with --prefix; NULL: name */
    uint32_t card;       /* index into Design.cards */
    MosType type;
    uint8_t prim;        /* DEV_MCARD, DEV_PRIM or DEV_BARE */
} Device;

/* Device.prim: what stands behind a device. For DEV_PRIM and DEV_BARE, name is the X instance, card
 * the X card, model the cell name and cell the subcircuit holding the X card. */
enum {
    DEV_MCARD = 0, /* an M card */
    DEV_PRIM = 1,  /* an X card of a transistor primitive cell: W, L, m, nf, model of its one M card */
    DEV_BARE = 2,  /* an X card of a transistor cell the netlist does not define: from the X card */
};

typedef struct {
    SrcSet files;        /* every file read: the netlist, includes, libraries */
    Arena arena;         /* names, models, devices, cards */
    StrTab *names;       /* a name's value (strtab.h): its node index at the top level of the netlist */
    Card *cards;
    size_t ncards;
    Model *models;
    size_t nmodels;
    Device *devs;
    size_t ndevs;
    const char *(*nets)[4]; /* per device (parallel to devs): its d, g, s, b nets, hierarchical names,
                               interned ("x1.tail", "vdd", "0"); apart from Device, since only lookup
                               tables read them: NULL once nl_release_index gave them back */
    double temp_c;       /* .temp or .option temp, 27 when not given */
    const char *title;   /* the title line, arena copy */
} Design;

/* The d, g, s, b nets of device dv of ds. */
static inline const char *const *nl_nets(const Design *ds, const Device *dv)
{
    return ds->nets[dv - ds->devs];
}

#endif
