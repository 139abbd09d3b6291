/* annotate: the top netlist byte for byte, with biaslint's marked comment lines after each MOSFET
 * card; stripping those lines gives back the original bytes, and annotating again replaces them.
 *
 * An annotation line is a physical line that starts with ANN_MARK. Cards in included files are
 * annotated after the top-file line (.include/.lib) that brought them in. */
#ifndef ANNOTATE_H
#define ANNOTATE_H

#include <stddef.h>

#include "buf.h"
#include "check.h"
#include "design.h"
#include "join.h"

#define ANN_MARK "*~"
#define ANN_MAX_INSTANCES 4 /* a card used by more instances gets one summary line */

/* The annotated text of ds's top file into out (appended). ERR_OK or ERR_NOMEM. */
int ann_render(const Design *ds, const Joined *j, const Findings *f, Buf *out) MUST_CHECK;

/* text without its annotation lines, into out (appended). ERR_OK or ERR_NOMEM. */
int ann_strip(const char *text, size_t len, Buf *out) MUST_CHECK;

#endif
