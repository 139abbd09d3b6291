/* flatten: the circuit model of netlist.c into the flat MOSFET list of the Design: hierarchical
 * names, nets, W, L, m, nf, model and type. Called by nl_load once parsing is done.
 *
 * Before anything is expanded it resolves every X card (undefined subcircuit, node count), every M
 * card's model, finds subcircuits that instantiate themselves, counts the MOSFETs bottom-up and
 * checks the device and nesting limits; then it walks the hierarchy with an explicit stack,
 * evaluating parameters per instance with ngspice's scoping (see flatten.c). */
#ifndef FLATTEN_H
#define FLATTEN_H

#include "diag.h"
#include "netlist.h"

/* Fill nl->ds->devs (and the evaluated fields of nl->ds->models, temp_c). Errors and warnings go
 * to nl->d through nl_error/nl_warn. Returns ERR_OK (check nl->nerrors for input errors), or
 * ERR_NOMEM. */
int flat_run(Netlist *nl) MUST_CHECK;

#endif
