/* svgplot: the little plotting kit the HTML report draws its inline SVG with: axes (linear or
 * decades), tick values at round numbers, data-to-pixel mapping, and numbers written compactly.
 * Pure functions and fprintf; no state. */
#ifndef SVGPLOT_H
#define SVGPLOT_H

#include <stddef.h>
#include <stdio.h>

typedef struct {
    double lo, hi;      /* data range; for a log axis both > 0 */
    int log;            /* 1: logarithmic (ticks at decades) */
    double px0, px1;    /* pixel positions of lo and hi (px1 < px0 for a y axis growing upwards) */
} SvgAxis;

/* The pixel of data value v, clamped to the axis; NaN when v is NaN (or <= 0 on a log axis). */
double svg_map(const SvgAxis *a, double v);

/* Tick values at round numbers (1, 2 or 5 times a power of ten; decades on a log axis) inside
 * [lo, hi], at most max of them, into out. Returns how many. */
size_t svg_ticks(const SvgAxis *a, double *out, size_t max);

/* A range [*lo, *hi] widened to round numbers for a linear axis (at least [0, 1] when empty). */
void svg_nice_range(double *lo, double *hi);

/* A pixel coordinate with one decimal, without trailing zeros ("12", "12.5"). */
void svg_px(FILE *fp, double v);

/* A tick label: "0.1", "20", "1k", "100m" (SI prefixes for |v| >= 1000 or < 0.01). */
void svg_label(FILE *fp, double v);

/* The axis line, ticks, tick labels and grid lines of a plot whose frame spans x [x0, x1] and
 * y [y0, y1] (y0 at the top); xa and ya map data to those pixels. Titles are drawn under the x axis
 * and rotated left of the y axis. Text is escaped. */
void svg_axes(FILE *fp, const SvgAxis *xa, const SvgAxis *ya, const char *xtitle, const char *ytitle);

#endif
