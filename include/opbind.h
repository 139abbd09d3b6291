/* opbind: the names under which a dump holds the records of a design's devices, for PDK netlists.
 * A cell checked on its own (--top) was simulated inside a testbench, so its records carry the
 * testbench path of its instance ("xtop.x1.xm4.mn"): the prefix is given (--prefix) or found in
 * the dump's names. A transistor whose cell is not defined (DEV_BARE) has one record under its X
 * instance ("xm4.<inner name>") whose inner name the netlist cannot tell: it is looked up there.
 * run.c calls bind_run between reading the dump and the join. */
#ifndef OPBIND_H
#define OPBIND_H

#include "design.h"
#include "diag.h"
#include "opdump.h"

typedef struct {
    const char *prefix; /* --prefix: the design's instance path in the simulated testbench, NULL: none */
    int detect;         /* no prefix given: find it in the dump's names (--top) */
} BindOptions;

/* Set Device.simname of every device of ds to its record's canonical name in t: under the prefix
 * (given, or found: the one instance path under which the dump holds the most devices of ds;
 * several equally good ones are an error naming them), and for DEV_BARE devices the one record
 * under the X instance, whose W, L, nf, m (and the type, from the record's model name, when the
 * netlist does not give it) then replace the X card's. Names are interned in ds->names.
 * *found receives the prefix used (interned, "" for none; may be NULL). Notes and warnings go to d.
 * ERR_OK, ERR_INPUT (an ambiguous prefix), ERR_NOMEM. */
int bind_run(Design *ds, const OpTable *t, const BindOptions *o, const char **found, DiagList *d) MUST_CHECK;

#endif
