/* svgplot: axes and ticks for the HTML report's inline SVG. Styling is left to the page's CSS
 * (classes "ax", "grid", "tick", "atitle"), so the plots follow its palette. */
#include "svgplot.h"

#include <math.h>

#include "report.h"

double svg_map(const SvgAxis *a, double v)
{
    if (isnan(v))
        return NAN;
    double lo = a->lo, hi = a->hi;
    if (a->log) {
        if (v <= 0.0 || lo <= 0.0 || hi <= 0.0)
            return NAN;
        v = log10(v);
        lo = log10(lo);
        hi = log10(hi);
    }
    if (hi == lo)
        return (a->px0 + a->px1) / 2.0;
    double t = (v - lo) / (hi - lo);
    if (t < 0.0)
        t = 0.0;
    if (t > 1.0)
        t = 1.0;
    return a->px0 + t * (a->px1 - a->px0);
}

/* The round step (1, 2, 5 x 10^k) that splits span into about n parts. */
static double nice_step(double span, double n)
{
    double raw = span / n;
    double p = pow(10.0, floor(log10(raw)));
    double m = raw / p;
    return (m <= 1.0 ? 1.0 : m <= 2.0 ? 2.0 : m <= 5.0 ? 5.0 : 10.0) * p;
}

size_t svg_ticks(const SvgAxis *a, double *out, size_t max)
{
    size_t n = 0;
    if (!(a->hi > a->lo) || max == 0)
        return 0;
    if (a->log) {
        if (a->lo <= 0.0)
            return 0;
        for (double e = ceil(log10(a->lo) - 1e-9); e <= floor(log10(a->hi) + 1e-9) && n < max; e += 1.0)
            out[n++] = pow(10.0, e);
        return n;
    }
    double step = nice_step(a->hi - a->lo, 6.0);
    for (double v = ceil(a->lo / step - 1e-9) * step; v <= a->hi + step * 1e-9 && n < max; v += step)
        out[n++] = fabs(v) < step * 1e-9 ? 0.0 : v;
    return n;
}

void svg_nice_range(double *lo, double *hi)
{
    if (!isfinite(*lo) || !isfinite(*hi) || *hi < *lo) {
        *lo = 0.0;
        *hi = 1.0;
        return;
    }
    if (*hi == *lo) {
        double d = *lo == 0.0 ? 1.0 : fabs(*lo) * 0.1;
        *lo -= d;
        *hi += d;
    }
    double step = nice_step(*hi - *lo, 6.0);
    *lo = floor(*lo / step) * step;
    *hi = ceil(*hi / step) * step;
}

void svg_px(FILE *fp, double v)
{
    if (!isfinite(v))
        v = 0.0;
    double r = round(v * 10.0) / 10.0;
    if (r == floor(r))
        fprintf(fp, "%.0f", r);
    else
        fprintf(fp, "%.1f", r);
}

void svg_label(FILE *fp, double v)
{
    char buf[32];
    double a = fabs(v);
    if (v == 0.0)
        fputs("0", fp);
    else if (a >= 1000.0 || a < 0.01)
        fputs(rep_eng(v, "", buf, sizeof buf), fp);
    else
        fprintf(fp, "%g", round(v * 1000.0) / 1000.0);
}

void svg_axes(FILE *fp, const SvgAxis *xa, const SvgAxis *ya, const char *xtitle, const char *ytitle)
{
    double x0 = xa->px0, x1 = xa->px1, ytop = ya->px1, ybot = ya->px0, t[32];
    size_t n = svg_ticks(xa, t, 32);
    for (size_t i = 0; i < n; i++) {
        double x = svg_map(xa, t[i]);
        fputs("<line class=\"grid\" x1=\"", fp);
        svg_px(fp, x);
        fputs("\" x2=\"", fp);
        svg_px(fp, x);
        fputs("\" y1=\"", fp);
        svg_px(fp, ytop);
        fputs("\" y2=\"", fp);
        svg_px(fp, ybot);
        fputs("\"/><text class=\"tick\" text-anchor=\"middle\" x=\"", fp);
        svg_px(fp, x);
        fputs("\" y=\"", fp);
        svg_px(fp, ybot + 16);
        fputs("\">", fp);
        svg_label(fp, t[i]);
        fputs("</text>\n", fp);
    }
    n = svg_ticks(ya, t, 32);
    for (size_t i = 0; i < n; i++) {
        double y = svg_map(ya, t[i]);
        fputs("<line class=\"grid\" x1=\"", fp);
        svg_px(fp, x0);
        fputs("\" x2=\"", fp);
        svg_px(fp, x1);
        fputs("\" y1=\"", fp);
        svg_px(fp, y);
        fputs("\" y2=\"", fp);
        svg_px(fp, y);
        fputs("\"/><text class=\"tick\" text-anchor=\"end\" x=\"", fp);
        svg_px(fp, x0 - 6);
        fputs("\" y=\"", fp);
        svg_px(fp, y + 4);
        fputs("\">", fp);
        svg_label(fp, t[i]);
        fputs("</text>\n", fp);
    }
    fputs("<path class=\"ax\" d=\"M", fp);
    svg_px(fp, x0);
    fputc(' ', fp);
    svg_px(fp, ytop);
    fputs("V", fp);
    svg_px(fp, ybot);
    fputs("H", fp);
    svg_px(fp, x1);
    fputs("\"/>\n", fp);
    if (xtitle) {
        fputs("<text class=\"atitle\" text-anchor=\"middle\" x=\"", fp);
        svg_px(fp, (x0 + x1) / 2);
        fputs("\" y=\"", fp);
        svg_px(fp, ybot + 36);
        fputs("\">", fp);
        rep_xml_text(fp, xtitle);
        fputs("</text>\n", fp);
    }
    if (ytitle) {
        double yc = (ytop + ybot) / 2, xc = x0 - 46;
        fputs("<text class=\"atitle\" text-anchor=\"middle\" transform=\"translate(", fp);
        svg_px(fp, xc);
        fputc(' ', fp);
        svg_px(fp, yc);
        fputs(") rotate(-90)\">", fp);
        rep_xml_text(fp, ytitle);
        fputs("</text>\n", fp);
    }
}
