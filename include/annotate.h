/* annotate: the top netlist byte for byte, with biaslint's marked comment lines after each MOSFET
 * card; stripping those lines gives back the original bytes, and annotating again replaces them.
 *
 * An annotation line is a physical line that starts with ANN_MARK, other than the first (the
 * title, whatever it holds). Cards in included files are
 * annotated after the top-file line (.include/.lib) that brought them in. */
#ifndef ANNOTATE_H
#define ANNOTATE_H

#include <stddef.h>
#include <stdio.h>

#include "buf.h"
#include "check.h"
#include "design.h"
#include "join.h"

#define ANN_MARK "*~"
#define ANN_MAX_INSTANCES 4 /* a card used by more instances gets one summary line */

/* The annotated text of ds's top file into out (appended). ERR_OK or ERR_NOMEM. */
int ann_render(const Design *ds, const Joined *j, const Findings *f, Buf *out) MUST_CHECK;

/* One corner's rows and findings for ann_render_corners. */
typedef struct {
    const char *label;         /* shown on each line ("[x1.m1] frost: ..."); NULL or "": not shown */
    const Joined *joined;      /* rows in Design device order, as in every corner */
    const Findings *findings;
} AnnCorner;

/* As ann_render, with each device's lines once per corner, in the order given (ann_render is this
 * with one unlabelled corner). ERR_OK or ERR_NOMEM. */
int ann_render_corners(const Design *ds, const AnnCorner *corners, size_t ncorners, Buf *out) MUST_CHECK;

/* As ann_render_corners, written to fp piece by piece instead of held whole in memory (the text of
 * a large netlist is written as it is made). ERR_OK, ERR_NOMEM or ERR_IO; after an error fp may hold
 * part of the text (callers write to a temporary file and drop it). */
int ann_write_corners(const Design *ds, const AnnCorner *corners, size_t ncorners, FILE *fp) MUST_CHECK;

/* text without its annotation lines, into out (appended). ERR_OK or ERR_NOMEM. */
int ann_strip(const char *text, size_t len, Buf *out) MUST_CHECK;

#endif
