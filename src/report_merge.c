/* report_merge: the writers of `biaslint merge` (text, JSON, CSV, HTML) over a MrgResult. Like the
 * check writers they compute nothing beyond picking what to show; every pass is linear in the
 * entries (the HTML spread plot keeps the few widest spreads with an insertion into a short array). */
#include "merge.h"

#include <csv.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "numfmt.h"
#include "report.h"
#include "svgplot.h"

#define SPREAD_BARS 40
#define MERGE_SCHEMA 1

static const char *sev_word(int s)
{
    return s >= 0 && s < SEV_COUNT ? rule_severity_name[s] : NULL;
}

static const char *run_path(const MrgResult *m, uint32_t run)
{
    return run < m->nruns ? m->runs[run].path : NULL;
}

static int several_corners(const MrgResult *m)
{
    for (size_t i = 1; i < m->n; i++)
        if (m->e[i].corner != m->e[0].corner && strcmp(m->e[i].corner, m->e[0].corner) != 0)
            return 1;
    return 0;
}

/* ---- text ---- */

static void eng(FILE *fp, double v, const char *unit, size_t width)
{
    char b[32];
    rep_eng(v, unit, b, sizeof b);
    fprintf(fp, "%*s", (int)width, b);
}

/* "sat-margin 12%, triode 3%": the share of the device's runs failing each check. */
static void failing_list(FILE *fp, const MrgEntry *e)
{
    const char *sep = "";
    for (int k = 0; e->fail && k < CHECK_COUNT; k++)
        if (e->fail[k]) {
            fprintf(fp, "%s%s %.0f%%", sep, rule_check_name[k], 100.0 * e->fail[k] / (double)e->nruns);
            sep = ", ";
        }
}

static void regions_list(FILE *fp, const MrgEntry *e, const char *pair, const char *sep_word)
{
    const char *sep = "";
    for (int r = 0; r < REGION_COUNT; r++)
        if (e->region_n[r]) {
            fprintf(fp, pair, sep, fig_region_name[r], e->region_n[r]);
            sep = sep_word;
        }
}

static int write_text(const MrgResult *m, FILE *fp, int color)
{
    (void)color;
    int corners = several_corners(m);
    fprintf(fp, "biaslint %s: summary of %zu run%s\n", BIASLINT_VERSION, m->nruns, m->nruns == 1 ? "" : "s");
    if (m->nruns)
        fprintf(fp, "Runs     %s .. %s; %zu with failing findings (warning or error, not waived)\n", m->runs[0].path,
                m->runs[m->nruns - 1].path, m->runs_failing);
    fprintf(fp, "Devices  %zu (device, corner) pairs; %zu changed region between runs\n", m->n, m->region_changes);
    fputs("Checks failing in some run:", fp);
    const char *sep = " ";
    for (int k = 0; k < CHECK_COUNT; k++)
        if (m->check_runs[k]) {
            fprintf(fp, "%s%s in %u of %zu runs", sep, rule_check_name[k], m->check_runs[k], m->nruns);
            sep = ", ";
        }
    fputs(*sep == ' ' ? " none\n\n" : "\n\n", fp);
    size_t wn = strlen("device"), wc = strlen("corner");
    for (size_t i = 0; i < m->n; i++) {
        size_t l = strlen(m->e[i].device);
        if (l > wn && l <= 40)
            wn = l;
        l = strlen(m->e[i].corner);
        if (l > wc)
            wc = l;
    }
    fprintf(fp, "%-*s  ", (int)wn, "device");
    if (corners)
        fprintf(fp, "%-*s  ", (int)wc, "corner");
    fputs(" runs  gm/ID min     mean      max      std  VDS-VDSAT min     mean      std  gm/gds min  failing / regions / worst run\n",
          fp);
    for (size_t i = 0; i < m->n; i++) {
        const MrgEntry *e = &m->e[i];
        fprintf(fp, "%-*s  ", (int)wn, e->device);
        if (corners)
            fprintf(fp, "%-*s  ", (int)wc, e->corner);
        fprintf(fp, "%5u", e->nruns);
        eng(fp, e->stat[MRG_GMID].min, "/V", 11);
        eng(fp, e->stat[MRG_GMID].mean, "/V", 9);
        eng(fp, e->stat[MRG_GMID].max, "/V", 9);
        eng(fp, mrg_std(&e->stat[MRG_GMID]), "/V", 9);
        eng(fp, e->stat[MRG_MARGIN].min, "V", 15);
        eng(fp, e->stat[MRG_MARGIN].mean, "V", 9);
        eng(fp, mrg_std(&e->stat[MRG_MARGIN]), "V", 9);
        eng(fp, e->stat[MRG_GAIN].min, "", 12);
        fputs("  ", fp);
        if (e->fail)
            failing_list(fp, e);
        else
            fputs("-", fp);
        fputs(" / ", fp);
        regions_list(fp, e, "%s%s %u", ", ");
        if (e->worst_sev >= 0)
            fprintf(fp, " / %s (%s)", run_path(m, e->worst_run), sev_word(e->worst_sev));
        else if (e->nruns > 1 && isfinite(e->worst_margin))
            fprintf(fp, " / %s (least margin)", run_path(m, e->worst_run));
        fputc('\n', fp);
    }
    if (m->other_checks)
        fprintf(fp, "\nSome runs have checks this biaslint does not know (e.g. '%s'): they are not counted.\n",
                m->other_checks);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

/* ---- JSON ---- */

static void stat_json(FILE *fp, const MrgResult *m, const char *name, const MrgStat *s)
{
    fprintf(fp, ", \"%s\": {\"n\": %zu, \"min\": ", name, s->n);
    rep_json_num(fp, s->min);
    fputs(", \"mean\": ", fp);
    rep_json_num(fp, s->mean);
    fputs(", \"max\": ", fp);
    rep_json_num(fp, s->max);
    fputs(", \"std\": ", fp);
    rep_json_num(fp, mrg_std(s));
    fputs(", \"min_run\": ", fp);
    rep_json_str(fp, s->n ? run_path(m, s->min_run) : NULL);
    fputs(", \"max_run\": ", fp);
    rep_json_str(fp, s->n ? run_path(m, s->max_run) : NULL);
    fputc('}', fp);
}

static int write_json(const MrgResult *m, FILE *fp, int color)
{
    (void)color;
    fputs("{\n  \"tool\": \"biaslint\", \"version\": ", fp);
    rep_json_str(fp, BIASLINT_VERSION);
    fprintf(fp, ", \"kind\": \"merge\", \"schema\": %d,\n  \"runs\": [", MERGE_SCHEMA);
    for (size_t r = 0; r < m->nruns; r++) {
        fputs(r ? ",\n    {\"file\": " : "\n    {\"file\": ", fp);
        rep_json_str(fp, m->runs[r].path);
        fprintf(fp, ", \"corners\": %zu, \"samples\": %zu, \"failing\": %zu}", m->runs[r].ncorners, m->runs[r].ndevices,
                m->runs[r].nfailing);
    }
    fputs(m->nruns ? "\n  ],\n  \"checks\": [" : "],\n  \"checks\": [", fp);
    size_t nc = 0;
    for (int k = 0; k < CHECK_COUNT; k++) {
        if (!m->check_runs[k])
            continue;
        fputs(nc++ ? ",\n    {\"check\": " : "\n    {\"check\": ", fp);
        rep_json_str(fp, rule_check_name[k]);
        fprintf(fp, ", \"runs_failing\": %u, \"fraction\": ", m->check_runs[k]);
        rep_json_num(fp, m->nruns ? (double)m->check_runs[k] / (double)m->nruns : NAN);
        fputc('}', fp);
    }
    fputs(nc ? "\n  ],\n  \"devices\": [" : "],\n  \"devices\": [", fp);
    for (size_t i = 0; i < m->n; i++) {
        const MrgEntry *e = &m->e[i];
        fputs(i ? ",\n    {\"device\": " : "\n    {\"device\": ", fp);
        rep_json_str(fp, e->device);
        fputs(", \"corner\": ", fp);
        rep_json_str(fp, e->corner);
        fputs(", \"model\": ", fp);
        rep_json_str(fp, e->model);
        fputs(", \"type\": ", fp);
        rep_json_str(fp, e->type);
        fputs(", \"file\": ", fp);
        rep_json_str(fp, e->file);
        fputs(", \"line\": ", fp);
        if (e->line)
            fprintf(fp, "%u", e->line);
        else
            fputs("null", fp);
        fprintf(fp, ", \"runs\": %u", e->nruns);
        for (int k = 0; k < MRG_NSTATS; k++)
            stat_json(fp, m, mrg_stat_name[k], &e->stat[k]);
        fputs(", \"fail_fraction\": {", fp);
        const char *sep = "";
        for (int k = 0; e->fail && k < CHECK_COUNT; k++)
            if (e->fail[k]) {
                fprintf(fp, "%s\"%s\": ", sep, rule_check_name[k]);
                rep_json_num(fp, (double)e->fail[k] / (double)e->nruns);
                sep = ", ";
            }
        fputs("}, \"regions\": {", fp);
        regions_list(fp, e, "%s\"%s\": %u", ", ");
        fprintf(fp, "}, \"region_changed\": %s, \"worst_run\": ", mrg_region_changed(e) ? "true" : "false");
        rep_json_str(fp, e->nruns ? run_path(m, e->worst_run) : NULL);
        fputs(", \"worst_severity\": ", fp);
        rep_json_str(fp, sev_word(e->worst_sev));
        fputc('}', fp);
    }
    fprintf(fp, "%s  \"summary\": {\"runs\": %zu, \"devices\": %zu, \"runs_failing\": %zu, \"region_changes\": %zu, "
                "\"unknown_check\": ",
            m->n ? "\n  ],\n" : "],\n", m->nruns, m->n, m->runs_failing, m->region_changes);
    rep_json_str(fp, m->other_checks);
    fputs("}\n}\n", fp);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

/* ---- CSV ---- */

typedef struct {
    FILE *fp;
    int first, bad;
} Out;

static void field_sep(Out *o)
{
    if (!o->first)
        fputc(',', o->fp);
    o->first = 0;
}

static void text(Out *o, const char *s)
{
    field_sep(o);
    if (s && csv_fwrite(o->fp, s, strlen(s)) != 0)
        o->bad = 1;
}

static void num(Out *o, double v)
{
    field_sep(o);
    char b[NUMFMT_SIZE];
    if (isfinite(v))
        fwrite(b, 1, numfmt_json(b, v), o->fp); /* the fewest digits that read back */
}

static int write_csv(const MrgResult *m, FILE *fp, int color)
{
    (void)color;
    Out o = {fp, 1, 0};
    static const char *const head[] = {"device", "corner", "model", "type", "file", "line", "runs"};
    for (size_t h = 0; h < sizeof head / sizeof head[0]; h++)
        text(&o, head[h]);
    static const char *const part[] = {"min", "mean", "max", "std"};
    for (int k = 0; k < MRG_NSTATS; k++)
        for (int q = 0; q < 4; q++) {
            char name[32];
            snprintf(name, sizeof name, "%s_%s", mrg_stat_name[k], part[q]);
            text(&o, name);
        }
    text(&o, "fail_fraction");
    text(&o, "regions");
    text(&o, "region_changed");
    text(&o, "worst_run");
    text(&o, "worst_severity");
    fputc('\n', fp);
    Buf list = BUF_INIT;
    for (size_t i = 0; i < m->n && !o.bad; i++) {
        const MrgEntry *e = &m->e[i];
        o.first = 1;
        text(&o, e->device);
        text(&o, e->corner);
        text(&o, e->model);
        text(&o, e->type);
        text(&o, e->file);
        field_sep(&o);
        if (e->line)
            fprintf(fp, "%u", e->line);
        field_sep(&o);
        fprintf(fp, "%u", e->nruns);
        for (int k = 0; k < MRG_NSTATS; k++) {
            num(&o, e->stat[k].min);
            num(&o, e->stat[k].mean);
            num(&o, e->stat[k].max);
            num(&o, mrg_std(&e->stat[k]));
        }
        /* "sat-margin:0.12;triode:0.03" and "moderate:71;strong:29", each one quoted field */
        int rc = ERR_OK;
        buf_clear(&list);
        for (int k = 0; e->fail && k < CHECK_COUNT; k++)
            if (e->fail[k])
                rc |= buf_printf(&list, "%s%s:%.6g", list.len ? ";" : "", rule_check_name[k],
                                 (double)e->fail[k] / (double)e->nruns);
        text(&o, list.len ? list.data : NULL);
        buf_clear(&list);
        for (int r = 0; r < REGION_COUNT; r++)
            if (e->region_n[r])
                rc |= buf_printf(&list, "%s%s:%u", list.len ? ";" : "", fig_region_name[r], e->region_n[r]);
        text(&o, list.len ? list.data : NULL);
        if (rc != ERR_OK)
            o.bad = 1;
        text(&o, mrg_region_changed(e) ? "true" : "false");
        text(&o, e->nruns ? run_path(m, e->worst_run) : NULL);
        text(&o, sev_word(e->worst_sev));
        fputc('\n', fp);
    }
    buf_free(&list);
    if (o.bad || fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

/* ---- HTML ---- */

static void esc(FILE *fp, const char *s)
{
    rep_xml_text(fp, s ? s : "");
}

/* The spread plot: gm/ID from minimum to maximum, the mean and one standard deviation either side,
 * for the entries whose gm/ID varies most relative to its mean. */
static void spread_plot(const MrgResult *m, FILE *fp, int corners)
{
    size_t pick[SPREAD_BARS], np = 0;
    double width[SPREAD_BARS];
    for (size_t i = 0; i < m->n; i++) {
        const MrgStat *s = &m->e[i].stat[MRG_GMID];
        if (s->n < 2 || !(s->mean > 0))
            continue;
        double w = (s->max - s->min) / s->mean;
        if (np == SPREAD_BARS && w <= width[np - 1])
            continue;
        size_t at = np < SPREAD_BARS ? np++ : np - 1;
        while (at > 0 && width[at - 1] < w) {
            width[at] = width[at - 1];
            pick[at] = pick[at - 1];
            at--;
        }
        width[at] = w;
        pick[at] = i;
    }
    fputs("<figure><figcaption>gm/ID over the runs, widest spread first</figcaption>\n", fp);
    if (np == 0) {
        fputs("<p class=\"note\">No device has gm/ID in two runs or more: nothing to spread.</p></figure>\n", fp);
        return;
    }
    double lo = INFINITY, hi = 0;
    for (size_t b = 0; b < np; b++) {
        lo = fmin(lo, m->e[pick[b]].stat[MRG_GMID].min);
        hi = fmax(hi, m->e[pick[b]].stat[MRG_GMID].max);
    }
    lo = fmin(lo, 0.0);
    svg_nice_range(&lo, &hi);
    double W = 900, left = 210, top = 10, rh = 17, H = top + (double)np * rh + 50;
    SvgAxis xa = {lo, hi, 0, left, W - 20}, none = {0, 0, 0, top + (double)np * rh, top};
    fprintf(fp, "<svg viewBox=\"0 0 %g %g\" width=\"%g\" height=\"%g\" role=\"img\" aria-label=\"gm/ID spread per device\">\n",
            W, H, W, H);
    svg_axes(fp, &xa, &none, "gm/ID (1/V): line minimum to maximum, box mean \xc2\xb1 one standard deviation", NULL);
    for (size_t b = 0; b < np; b++) {
        const MrgEntry *e = &m->e[pick[b]];
        const MrgStat *s = &e->stat[MRG_GMID];
        double y = top + (double)b * rh + rh / 2, sd = mrg_std(s);
        fputs("<text class=\"barname\" text-anchor=\"end\" x=\"", fp);
        svg_px(fp, left - 6);
        fputs("\" y=\"", fp);
        svg_px(fp, y + 4);
        fputs("\">", fp);
        esc(fp, e->device);
        if (corners) {
            fputs(" \xc2\xb7 ", fp);
            esc(fp, e->corner);
        }
        fputs("</text><g><title>", fp);
        esc(fp, e->device);
        char a[32], c2[32], d[32], f[32];
        fprintf(fp, ": gm/ID %s to %s, mean %s, std %s over %zu runs</title>", rep_eng(s->min, "/V", a, sizeof a),
                rep_eng(s->max, "/V", c2, sizeof c2), rep_eng(s->mean, "/V", d, sizeof d), rep_eng(sd, "/V", f, sizeof f),
                s->n);
        fputs("<line class=\"zero\" x1=\"", fp);
        svg_px(fp, svg_map(&xa, s->min));
        fputs("\" x2=\"", fp);
        svg_px(fp, svg_map(&xa, s->max));
        fputs("\" y1=\"", fp);
        svg_px(fp, y);
        fputs("\" y2=\"", fp);
        svg_px(fp, y);
        fputs("\"/><rect class=\"bar ok\" x=\"", fp);
        double x0 = svg_map(&xa, s->mean - (isfinite(sd) ? sd : 0)), x1 = svg_map(&xa, s->mean + (isfinite(sd) ? sd : 0));
        svg_px(fp, x0);
        fputs("\" y=\"", fp);
        svg_px(fp, y - 5);
        fputs("\" width=\"", fp);
        svg_px(fp, fmax(x1 - x0, 1));
        fputs("\" height=\"10\"/><circle class=\"pt c0\" r=\"3.5\" cx=\"", fp);
        svg_px(fp, svg_map(&xa, s->mean));
        fputs("\" cy=\"", fp);
        svg_px(fp, y);
        fputs("\"/></g>\n", fp);
    }
    fprintf(fp, "</svg>\n<p class=\"note\">The %zu devices whose gm/ID varies most (maximum minus minimum, relative to "
                "the mean), of %zu; the table lists them all.</p></figure>\n",
            np, m->n);
}

static void cell_num(FILE *fp, double v, const char *unit)
{
    char b[32];
    if (!isfinite(v))
        fputs("<td class=\"n\">-</td>", fp);
    else
        fprintf(fp, "<td class=\"n\" data-v=\"%.9g\">%s</td>", v, rep_eng(v, unit, b, sizeof b));
}

static int write_html(const MrgResult *m, FILE *fp, int color)
{
    (void)color;
    int corners = several_corners(m);
    char sub[64];
    snprintf(sub, sizeof sub, "%zu runs", m->nruns);
    rep_html_open(fp, "summary of many runs", sub, m->nruns ? m->runs[0].path : NULL);
    fprintf(fp, "<div class=\"tiles\"><div class=\"tile\"><b>%zu</b><span>runs</span></div>"
                "<div class=\"tile t-err\"><b>%zu</b><span>runs with failing findings</span></div>"
                "<div class=\"tile\"><b>%zu</b><span>devices%s</span></div>"
                "<div class=\"tile t-warn\"><b>%zu</b><span>changed region</span></div></div>\n",
            m->nruns, m->runs_failing, m->n, corners ? " x corners" : "", m->region_changes);
    fputs("<section><h2>Checks over the runs</h2>\n<table><thead><tr><th>check</th><th class=\"n\">runs failing</th>"
          "<th class=\"n\">fraction</th></tr></thead><tbody>\n",
          fp);
    int any = 0;
    for (int k = 0; k < CHECK_COUNT; k++)
        if (m->check_runs[k]) {
            any = 1;
            fprintf(fp, "<tr><td>%s</td><td class=\"n\">%u</td><td class=\"n\">%.1f%%</td></tr>\n", rule_check_name[k],
                    m->check_runs[k], 100.0 * m->check_runs[k] / (double)(m->nruns ? m->nruns : 1));
        }
    if (!any)
        fputs("<tr><td colspan=\"3\">No check failed in any run.</td></tr>\n", fp);
    fputs("</tbody></table></section>\n<section><h2>Spread</h2>\n", fp);
    spread_plot(m, fp, corners);
    fputs("</section>\n<section><h2>Devices</h2>\n<input class=\"filter\" id=\"devfilter\" type=\"search\" "
          "placeholder=\"filter: name, region, check...\">\n<div class=\"scroll\"><table class=\"sortable\" "
          "id=\"devices\"><thead><tr><th>device</th>",
          fp);
    if (corners)
        fputs("<th>corner</th>", fp);
    fputs("<th class=\"n\">runs</th><th class=\"n\">gm/ID min</th><th class=\"n\">mean</th><th class=\"n\">max</th>"
          "<th class=\"n\">std</th><th class=\"n\">VDS&#8722;VDSAT min</th><th class=\"n\">mean</th><th class=\"n\">std</th>"
          "<th class=\"n\">gm/gds min</th><th>failing</th><th>regions</th><th>worst run</th></tr></thead><tbody>\n",
          fp);
    for (size_t i = 0; i < m->n; i++) {
        const MrgEntry *e = &m->e[i];
        fprintf(fp, "<tr%s><td><code>", e->worst_sev == SEV_ERROR     ? " class=\"flag-error\""
                                        : e->worst_sev == SEV_WARNING ? " class=\"flag-warning\""
                                                                      : "");
        esc(fp, e->device);
        fputs("</code></td>", fp);
        if (corners) {
            fputs("<td>", fp);
            esc(fp, e->corner);
            fputs("</td>", fp);
        }
        fprintf(fp, "<td class=\"n\">%u</td>", e->nruns);
        cell_num(fp, e->stat[MRG_GMID].min, "/V");
        cell_num(fp, e->stat[MRG_GMID].mean, "/V");
        cell_num(fp, e->stat[MRG_GMID].max, "/V");
        cell_num(fp, mrg_std(&e->stat[MRG_GMID]), "/V");
        cell_num(fp, e->stat[MRG_MARGIN].min, "V");
        cell_num(fp, e->stat[MRG_MARGIN].mean, "V");
        cell_num(fp, mrg_std(&e->stat[MRG_MARGIN]), "V");
        cell_num(fp, e->stat[MRG_GAIN].min, "");
        fputs("<td>", fp);
        failing_list(fp, e);
        fputs("</td><td>", fp);
        regions_list(fp, e, "%s<span class=\"rg\">%s</span> %u", " ");
        fputs("</td><td><code>", fp);
        esc(fp, e->nruns ? run_path(m, e->worst_run) : NULL);
        fputs("</code></td></tr>\n", fp);
    }
    fputs("</tbody></table></div>\n<p class=\"note\">Failing: the share of a device's runs with a finding of that "
          "check at warning or error (not waived). Worst run: its most severe finding, then its least headroom.</p>\n"
          "</section>\n",
          fp);
    rep_html_close(fp);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

static const MrgWriter writers[] = {
    {"text", write_text}, {"json", write_json}, {"csv", write_csv}, {"html", write_html}};

const MrgWriter *mrg_lookup(const char *name)
{
    for (size_t i = 0; name && i < sizeof writers / sizeof writers[0]; i++)
        if (strcmp(writers[i].name, name) == 0)
            return &writers[i];
    return NULL;
}
