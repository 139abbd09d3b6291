/* report_html: one self-contained page for a design review: no network, no external script, style
 * or font. A verdict and summary tiles, the corners, two plots drawn here as inline SVG (gm/ID
 * against intrinsic gain with the region bands shaded, and the headroom VDS-VDSAT of the devices
 * that have least of it, as bars against their limit), the findings with their worst corner, what
 * changed since a baseline, and a sortable, filterable device table (a few lines of inline script).
 *
 * Every pass over the devices is linear, and what is drawn is capped so a large design still gives
 * a page a browser opens: the scatter plot shows every flagged device and an even sample of the
 * rest, the bars the devices with least headroom, the table every flagged row and a sample of the
 * rest; each says what it leaves out. */
#include "report.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "svgplot.h"

#define PLOT_POINTS 2500   /* points in the gm/ID-gain plot: all flagged ones first, then a sample */
#define PLOT_LABELS 16     /* flagged points get a visible name when there are at most this many */
#define HEADROOM_BARS 40   /* bars in the headroom plot: the least headroom first */
#define TABLE_ROWS 5000    /* device-corner rows in the table */
#define FINDING_ROWS 2000  /* findings (device and check) listed */
#define BASELINE_ROWS 500  /* resolved findings and region changes listed */
#define NCOLORS 6          /* corner colours, ORDER CORNERCOLOR in the style sheet */

static void esc(FILE *fp, const char *s)
{
    rep_xml_text(fp, s ? s : "");
}

static const char *sev_word(int s)
{
    return s >= 0 && s < SEV_COUNT ? rule_severity_name[s] : "";
}

/* The worst severity of the findings of device row i in corner k that are not waived, -1 when none. */
static int worst_here(const ReportCtx *c, size_t i, size_t k)
{
    const RepPrep *p = c->prep;
    int w = -1;
    for (size_t q = p->row_start[i]; q < p->row_start[i + 1]; q++) {
        const Finding *f = rep_finding(c, p->refs[q]);
        if (p->refs[q].corner == k && !f->waived && (int)f->sev > w)
            w = (int)f->sev;
    }
    return w;
}

/* 1 when device row i has any finding in corner k, waived or not. */
static int any_here(const ReportCtx *c, size_t i, size_t k)
{
    const RepPrep *p = c->prep;
    for (size_t q = p->row_start[i]; q < p->row_start[i + 1]; q++)
        if (p->refs[q].corner == k)
            return 1;
    return 0;
}

/* ---- page frame ---- */

static void style(FILE *fp)
{
    fputs("<style>\n"
          ":root{--ink:#1f2a33;--mute:#5e6a72;--paper:#f3f1ec;--card:#fff;--line:#ddd6c8;--head:#1f2d3a;"
          "--accent:#e0a526;--err:#b3362c;--warn:#c7851a;--info:#4f6d8f;--ok:#3d8b5d;"
          "--off:#e4e4e0;--weak:#dcebf5;--moderate:#e2f0df;--strong:#f5ead7;--triode:#f4dcdc}\n"
          "*{box-sizing:border-box}body{margin:0;background:var(--paper);color:var(--ink);"
          "font:14px/1.45 system-ui,-apple-system,'Segoe UI',Roboto,'Helvetica Neue',Arial,sans-serif}\n"
          "header{background:var(--head);color:#f1ede4;padding:18px 28px 14px;border-bottom:4px solid var(--accent)}\n"
          "header h1{margin:0;font-size:20px;font-weight:600;letter-spacing:.02em}"
          "header .sub{color:#c9c3b6;font-size:13px;margin-top:4px;word-break:break-all}\n"
          "main{max-width:1320px;margin:0 auto;padding:20px 28px 40px}\n"
          "section{background:var(--card);border:1px solid var(--line);border-radius:6px;padding:16px 18px;"
          "margin:0 0 18px}\n"
          "h2{font-size:16px;margin:0 0 10px;font-weight:600}h3{font-size:14px;margin:14px 0 6px}\n"
          ".note{color:var(--mute);font-size:12.5px;margin:6px 0 0}\n"
          ".tiles{display:flex;flex-wrap:wrap;gap:12px;margin:0 0 18px}\n"
          ".tile{background:var(--card);border:1px solid var(--line);border-radius:6px;padding:10px 16px;"
          "min-width:120px}.tile b{display:block;font-size:24px;font-weight:650}"
          ".tile span{color:var(--mute);font-size:12px;text-transform:uppercase;letter-spacing:.05em}\n"
          ".verdict{border-left:8px solid var(--ok)}.verdict.fail{border-left-color:var(--err)}"
          ".verdict b{font-size:20px}\n"
          ".t-err b{color:var(--err)}.t-warn b{color:var(--warn)}.t-info b{color:var(--info)}\n"
          ".plots{display:flex;flex-wrap:wrap;gap:18px}.plots>figure{flex:1 1 600px;margin:0}\n"
          "figure figcaption{font-weight:600;margin:0 0 4px}svg{max-width:100%;height:auto;display:block}\n"
          "table{border-collapse:collapse;width:100%;font-size:13px}\n"
          "th,td{padding:4px 8px;border-bottom:1px solid #ece7dc;text-align:left;vertical-align:top}\n"
          "th{background:#f7f5f0;position:sticky;top:0;font-weight:600;white-space:nowrap}\n"
          "td.n,th.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}td.nw{white-space:nowrap}\n"
          "table.sortable th{cursor:pointer}table.sortable th:hover{background:#efe9dc}\n"
          "th[aria-sort=ascending]::after{content:' \\25B4'}th[aria-sort=descending]::after{content:' \\25BE'}\n"
          ".scroll{max-height:640px;overflow:auto;border:1px solid #ece7dc}\n"
          ".chip{display:inline-block;padding:0 7px;border-radius:9px;font-size:11.5px;font-weight:600;color:#fff}"
          ".chip.error{background:var(--err)}.chip.warning{background:var(--warn)}.chip.info{background:var(--info)}"
          ".chip.new{background:#fff;color:var(--err);border:1px solid var(--err)}.chip.waived{background:#8d959c}"
          ".chip.unchanged{background:#fff;color:var(--mute);border:1px solid var(--line)}\n"
          ".rg{padding:0 6px;border-radius:3px}.rg.off,.rg.no-data,.rg.unknown{background:var(--off)}"
          ".rg.weak{background:var(--weak)}.rg.moderate{background:var(--moderate)}"
          ".rg.strong{background:var(--strong)}.rg.triode{background:var(--triode)}\n"
          "tr.flag-error td:first-child{box-shadow:inset 4px 0 var(--err)}"
          "tr.flag-warning td:first-child{box-shadow:inset 4px 0 var(--warn)}\n"
          "input.filter{font:inherit;padding:4px 8px;border:1px solid var(--line);border-radius:4px;width:280px;"
          "margin:0 0 8px}\n"
          ".ax{stroke:#4a5560;fill:none;stroke-width:1}.grid{stroke:#ebe6db;stroke-width:1}"
          ".tick{fill:#5e6a72;font-size:11px}.atitle{fill:#1f2a33;font-size:12.5px}\n"
          ".band.strong{fill:var(--strong)}.band.moderate{fill:var(--moderate)}.band.weak{fill:var(--weak)}"
          ".bandlabel{fill:#6f675a;font-size:11px;font-style:italic}\n"
          ".pt{stroke:#fff;stroke-width:.8;fill-opacity:.85}.pt.flag{stroke-width:2.2;fill-opacity:1}"
          ".pt.flag.error{stroke:var(--err)}.pt.flag.warning{stroke:var(--warn)}\n"
          ".ptlabel{font-size:10.5px;fill:#1f2a33;paint-order:stroke;stroke:#fff;stroke-width:3px}\n"
          "/* ORDER CORNERCOLOR */\n"
          ".c0{fill:#1b7f79}.c1{fill:#7b4f9d}.c2{fill:#b5562b}.c3{fill:#4c6e1f}.c4{fill:#35577d}.c5{fill:#9c3d63}\n"
          ".k0{background:#1b7f79}.k1{background:#7b4f9d}.k2{background:#b5562b}.k3{background:#4c6e1f}"
          ".k4{background:#35577d}.k5{background:#9c3d63}\n"
          ".limit{stroke:var(--err);stroke-width:1.3;stroke-dasharray:5 4}.limitlabel{fill:var(--err);font-size:11px}\n"
          ".bar.ok{fill:#8fbf9a}.bar.low{fill:var(--warn)}.bar.bad{fill:var(--err)}.own{stroke:#1f2a33;stroke-width:1.6}\n"
          ".barname{font-size:11px;fill:#1f2a33}.zero{stroke:#4a5560;stroke-width:1}\n"
          ".legend{display:flex;flex-wrap:wrap;gap:14px;font-size:12px;color:var(--mute);margin:6px 0 0}"
          ".legend i{display:inline-block;width:11px;height:11px;border-radius:6px;margin-right:5px;"
          "vertical-align:-1px}\n"
          "footer{color:var(--mute);font-size:12px;text-align:center;padding:0 0 24px}\n"
          "code{font-family:ui-monospace,'SFMono-Regular',Menlo,Consolas,monospace;font-size:12.5px}\n"
          "</style>\n",
          fp);
}

/* Click a header to sort by that column (numbers by data-v), type to filter the device table. */
static void script(FILE *fp)
{
    fputs("<script>\n"
          "(function(){\n"
          "function key(td,num){var v=td.getAttribute('data-v');if(v===null)v=td.textContent;"
          "if(!num)return v.toLowerCase();var x=parseFloat(v);return isNaN(x)?null:x;}\n"
          "document.querySelectorAll('table.sortable').forEach(function(t){\n"
          " t.querySelectorAll('thead th').forEach(function(th,i){\n"
          "  th.addEventListener('click',function(){\n"
          "   var asc=th.getAttribute('aria-sort')!=='ascending',num=th.classList.contains('n');\n"
          "   t.querySelectorAll('thead th').forEach(function(h){h.removeAttribute('aria-sort');});\n"
          "   th.setAttribute('aria-sort',asc?'ascending':'descending');\n"
          "   var b=t.tBodies[0],rows=Array.prototype.slice.call(b.rows);\n"
          "   rows.sort(function(x,y){var a=key(x.cells[i],num),c=key(y.cells[i],num);\n"
          "    if(a===c)return 0;if(a===null)return 1;if(c===null)return -1;return (a<c?-1:1)*(asc?1:-1);});\n"
          "   rows.forEach(function(r){b.appendChild(r);});});});});\n"
          "var f=document.getElementById('devfilter');if(f)f.addEventListener('input',function(){\n"
          " var q=f.value.toLowerCase();document.querySelectorAll('#devices tbody tr').forEach(function(r){\n"
          "  r.style.display=r.textContent.toLowerCase().indexOf(q)<0?'none':'';});});\n"
          "document.documentElement.setAttribute('data-biaslint','ready');\n" /* the tests look for it */
          "})();\n"
          "</script>\n",
          fp);
}

/* ---- summary ---- */

static void tile(FILE *fp, const char *cls, size_t n, const char *what)
{
    fprintf(fp, "<div class=\"tile %s\"><b>%zu</b><span>", cls, n);
    esc(fp, what);
    fputs("</span></div>\n", fp);
}

static void summary(const ReportCtx *c, FILE *fp)
{
    size_t count[SEV_COUNT];
    rep_counts(c, count);
    size_t failing = rep_failing(c);
    fprintf(fp, "<div class=\"tiles\">\n<div class=\"tile verdict%s\"><b>%s</b><span>", failing ? " fail" : "",
            failing ? "Fail" : "Pass");
    if (c->fail_new)
        fprintf(fp, "%zu new warning%s or error%s", failing, failing == 1 ? "" : "s", failing == 1 ? "" : "s");
    else
        fprintf(fp, "%zu at or above %s", failing,
                rule_severity_name[(unsigned)c->fail_level < SEV_COUNT ? c->fail_level : SEV_ERROR]);
    fputs("</span></div>\n", fp);
    tile(fp, "", c->corners[0].joined->n, "devices");
    if (c->ncorners > 1)
        tile(fp, "", c->ncorners, "corners");
    tile(fp, "t-err", count[SEV_ERROR], c->ncorners > 1 ? "errors (all corners)" : "errors");
    tile(fp, "t-warn", count[SEV_WARNING], c->ncorners > 1 ? "warnings (all corners)" : "warnings");
    tile(fp, "t-info", count[SEV_INFO], "info");
    if (c->prep->nwaived)
        tile(fp, "", c->prep->nwaived, "waived");
    if (c->baseline) {
        tile(fp, "t-err", c->baseline->nnew, "new since baseline");
        tile(fp, "", c->baseline->nresolved, "resolved");
        tile(fp, "", c->baseline->nregions, "region changes");
    }
    fputs("</div>\n", fp);
}

static const char *format_name(const OpTable *t)
{
    if (!t)
        return "op data";
    switch (t->format) {
    case OPFMT_SHOW: return "ngspice show tables";
    case OPFMT_RAW: return "ngspice raw file";
    case OPFMT_CSV: return "CSV";
    default: return "op data";
    }
}

static void corners(const ReportCtx *c, FILE *fp)
{
    fputs("<section id=\"corners\"><h2>Operating points</h2>\n<table><thead><tr><th>corner</th><th>data</th><th>format</th>"
          "<th class=\"n\">with data</th><th class=\"n\">without</th><th class=\"n\">records matching no device</th>"
          "<th class=\"n\">errors</th><th class=\"n\">warnings</th><th class=\"n\">info</th></tr></thead><tbody>\n",
          fp);
    for (size_t k = 0; k < c->ncorners; k++) {
        const RepCorner *rc = &c->corners[k];
        size_t with = 0;
        for (size_t i = 0; i < rc->joined->n; i++)
            with += rc->joined->rows[i].op != NULL;
        fprintf(fp, "<tr><td><svg width=\"10\" height=\"10\" style=\"display:inline;margin-right:6px\">"
                    "<circle cx=\"5\" cy=\"5\" r=\"5\" class=\"c%zu\"/></svg>",
                k % NCOLORS);
        esc(fp, rc->label[0] ? rc->label : "(single run)");
        fputs("</td><td><code>", fp);
        esc(fp, rc->op_path);
        fputs("</code></td><td>", fp);
        esc(fp, format_name(rc->op));
        if (rc->joined->ntable)
            fprintf(fp, "; figures of %zu devices from lookup tables, at the bias of the node voltages", rc->joined->ntable);
        const Findings *fs = rc->findings;
        fprintf(fp, "</td><td class=\"n\">%zu</td><td class=\"n\">%zu</td><td class=\"n\">%zu</td><td class=\"n\">%zu</td>"
                    "<td class=\"n\">%zu</td><td class=\"n\">%zu</td></tr>\n",
                with, rc->joined->n - with, rc->joined->norphans, fs ? fs->count[SEV_ERROR] : 0,
                fs ? fs->count[SEV_WARNING] : 0, fs ? fs->count[SEV_INFO] : 0);
    }
    fputs("</tbody></table>\n", fp);
    if (c->rules) {
        char a[32], b[32], o[32];
        Device any;
        memset(&any, 0, sizeof any);
        const BandRule *br = rule_band_rule(c->rules, &any);
        const CheckRule *mar = rule_check(c->rules, CHECK_MARGIN), *gain = rule_check(c->rules, CHECK_GAIN);
        fprintf(fp, "<p class=\"note\">Regions, where no statement for a type or model says otherwise: strong "
                    "inversion below %s, weak above %s, off below %s per square. ",
                rep_eng(br->bands.strong_below, "/V", a, sizeof a), rep_eng(br->bands.weak_above, "/V", b, sizeof b),
                rep_eng(br->bands.off_below, "A", o, sizeof o));
        fprintf(fp, "Headroom VDS&#8722;VDSAT at least %s (%s), gm/gds at least %s (%s).</p>\n",
                rep_eng(mar->limit, "V", a, sizeof a), mar->enabled ? rule_severity_name[mar->sev] : "ignored",
                rep_eng(gain->limit, "", b, sizeof b), gain->enabled ? rule_severity_name[gain->sev] : "ignored");
    }
    fputs("</section>\n", fp);
}

/* ---- plot (a): gm/ID against gm/gds ---- */

#define PW 640.0
#define PH 430.0

typedef struct {
    size_t plottable, flagged;      /* device-corners with a gm/ID and a gain; of them flagged */
    double xmax, ymin, ymax;
} Scatter;

static int plottable(const Row *r)
{
    return r->op && isfinite(r->fig.gm_id) && r->fig.gm_id > 0 && isfinite(r->fig.gain) && r->fig.gain > 0;
}

static void point(const ReportCtx *c, FILE *fp, const SvgAxis *xa, const SvgAxis *ya, size_t i, size_t k, int sev,
                  int label)
{
    const Row *r = &c->corners[k].joined->rows[i];
    double x = svg_map(xa, r->fig.gm_id), y = svg_map(ya, r->fig.gain);
    int flag = sev >= SEV_WARNING;
    fprintf(fp, "<circle class=\"pt c%zu%s%s\" cx=\"", k % NCOLORS, flag ? " flag " : "", flag ? sev_word(sev) : "");
    svg_px(fp, x);
    fputs("\" cy=\"", fp);
    svg_px(fp, y);
    fprintf(fp, "\" r=\"%s\"><title>", flag ? "5.5" : "3.6");
    esc(fp, r->dev->name);
    if (c->ncorners > 1) {
        fputs(" (", fp);
        esc(fp, c->corners[k].label);
        fputc(')', fp);
    }
    char a[32], b[32];
    fprintf(fp, ": gm/ID %s, gm/gds %s, %s", rep_eng(r->fig.gm_id, "/V", a, sizeof a), rep_eng(r->fig.gain, "", b, sizeof b),
            rep_region_word(r));
    const RepPrep *p = c->prep;
    for (size_t q = p->row_start[i]; q < p->row_start[i + 1]; q++)
        if (p->refs[q].corner == k) {
            const Finding *f = rep_finding(c, p->refs[q]);
            fputs("\n", fp);
            esc(fp, rule_severity_name[f->sev]);
            fputc(' ', fp);
            esc(fp, rep_check_name((int)f->check));
            fputs(": ", fp);
            esc(fp, f->message);
        }
    fputs("</title></circle>\n", fp);
    if (label && flag) {
        const char *leaf = strrchr(r->dev->name, '.');
        fputs("<text class=\"ptlabel\" x=\"", fp);
        svg_px(fp, x + 8);
        fputs("\" y=\"", fp);
        svg_px(fp, y + 4);
        fputs("\">", fp);
        esc(fp, leaf ? leaf + 1 : r->dev->name);
        if (c->ncorners > 1) {
            fputc(' ', fp);
            esc(fp, c->corners[k].label);
        }
        fputs("</text>\n", fp);
    }
}

static void band(FILE *fp, const SvgAxis *xa, const SvgAxis *ya, double lo, double hi, const char *name)
{
    if (!(hi > lo))
        return;
    double x0 = svg_map(xa, lo), x1 = svg_map(xa, hi);
    if (!(x1 > x0))
        return;
    fprintf(fp, "<rect class=\"band %s\" x=\"", name);
    svg_px(fp, x0);
    fputs("\" y=\"", fp);
    svg_px(fp, ya->px1);
    fputs("\" width=\"", fp);
    svg_px(fp, x1 - x0);
    fputs("\" height=\"", fp);
    svg_px(fp, ya->px0 - ya->px1);
    fputs("\"/><text class=\"bandlabel\" text-anchor=\"middle\" x=\"", fp);
    svg_px(fp, (x0 + x1) / 2);
    fputs("\" y=\"", fp);
    svg_px(fp, ya->px1 + 14);
    fprintf(fp, "\">%s</text>\n", name);
}

static void plot_gmid_gain(const ReportCtx *c, FILE *fp)
{
    size_t n = c->corners[0].joined->n;
    Scatter s = {0, 0, 0.0, INFINITY, 0.0};
    for (size_t i = 0; i < n; i++)
        for (size_t k = 0; k < c->ncorners; k++) {
            const Row *r = &c->corners[k].joined->rows[i];
            if (!plottable(r))
                continue;
            s.plottable++;
            s.flagged += worst_here(c, i, k) >= SEV_WARNING;
            s.xmax = fmax(s.xmax, r->fig.gm_id);
            s.ymin = fmin(s.ymin, r->fig.gain);
            s.ymax = fmax(s.ymax, r->fig.gain);
        }
    Bands bands = {NAN, NAN, NAN};
    if (c->rules) {
        Device any;
        memset(&any, 0, sizeof any);
        bands = rule_band_rule(c->rules, &any)->bands;
    }
    double gain_limit = c->rules ? rule_check(c->rules, CHECK_GAIN)->limit : NAN;
    double xlo = 0.0, xhi = fmax(s.xmax, isfinite(bands.weak_above) ? bands.weak_above * 1.3 : 25.0);
    svg_nice_range(&xlo, &xhi);
    double ylo = isfinite(s.ymin) ? s.ymin : 1.0, yhi = s.ymax > 0 ? s.ymax : 1000.0;
    if (isfinite(gain_limit) && gain_limit > 0) {
        ylo = fmin(ylo, gain_limit);
        yhi = fmax(yhi, gain_limit);
    }
    ylo = pow(10.0, floor(log10(fmax(ylo, 1e-3))));
    yhi = pow(10.0, ceil(log10(fmin(fmax(yhi * 1.5, ylo * 10.0), 1e7)))); /* room above the highest point */
    if (yhi <= ylo)
        yhi = ylo * 10.0;
    SvgAxis xa = {xlo, xhi, 0, 70.0, PW - 18.0}, ya = {ylo, yhi, 1, PH - 56.0, 14.0};

    fputs("<figure><figcaption>Efficiency against intrinsic gain</figcaption>\n", fp);
    fprintf(fp, "<svg viewBox=\"0 0 %g %g\" width=\"%g\" height=\"%g\" role=\"img\" "
                "aria-label=\"gm/ID against gm/gds, one point per device and corner\">\n",
            PW, PH, PW, PH);
    if (isfinite(bands.strong_below) && isfinite(bands.weak_above)) {
        band(fp, &xa, &ya, xlo, fmin(bands.strong_below, xhi), "strong");
        band(fp, &xa, &ya, fmax(bands.strong_below, xlo), fmin(bands.weak_above, xhi), "moderate");
        band(fp, &xa, &ya, fmax(bands.weak_above, xlo), xhi, "weak");
    }
    svg_axes(fp, &xa, &ya, "gm/ID (1/V)", "gm/gds (log)");
    if (isfinite(gain_limit) && gain_limit > 0) {
        double y = svg_map(&ya, gain_limit);
        fputs("<line class=\"limit\" x1=\"", fp);
        svg_px(fp, xa.px0);
        fputs("\" x2=\"", fp);
        svg_px(fp, xa.px1);
        fputs("\" y1=\"", fp);
        svg_px(fp, y);
        fputs("\" y2=\"", fp);
        svg_px(fp, y);
        fputs("\"/><text class=\"limitlabel\" text-anchor=\"end\" x=\"", fp);
        svg_px(fp, xa.px1 - 4);
        fputs("\" y=\"", fp);
        svg_px(fp, y - 5);
        char g[32];
        fprintf(fp, "\">minimum gain %s</text>\n", rep_eng(gain_limit, "", g, sizeof g));
    }
    /* which points: all flagged ones (up to the cap), then every stride-th of the others */
    size_t flag_shown = s.flagged < PLOT_POINTS ? s.flagged : PLOT_POINTS;
    size_t others = s.plottable - s.flagged, room = PLOT_POINTS - flag_shown;
    size_t stride = others <= room ? 1 : room ? (others + room - 1) / room : 0;
    size_t shown = 0, seen = 0, fseen = 0;
    int labels = s.flagged <= PLOT_LABELS;
    for (int pass = 0; pass < 2; pass++) /* the others first, so flagged points are drawn on top */
        for (size_t i = 0; i < n; i++)
            for (size_t k = 0; k < c->ncorners; k++) {
                const Row *r = &c->corners[k].joined->rows[i];
                if (!plottable(r))
                    continue;
                int sev = worst_here(c, i, k);
                int flag = sev >= SEV_WARNING;
                if (flag != pass)
                    continue;
                if (flag ? fseen++ < flag_shown : stride && seen++ % stride == 0) {
                    point(c, fp, &xa, &ya, i, k, sev, labels);
                    shown++;
                }
            }
    fputs("</svg>\n<div class=\"legend\">", fp);
    if (c->ncorners > 1)
        for (size_t k = 0; k < c->ncorners; k++) {
            fprintf(fp, "<span><i class=\"k%zu\"></i>", k % NCOLORS);
            esc(fp, c->corners[k].label);
            fputs("</span>", fp);
        }
    fputs("<span><i style=\"border:2px solid var(--err)\"></i>error</span>"
          "<span><i style=\"border:2px solid var(--warn)\"></i>warning</span>"
          "<span><i style=\"background:var(--strong)\"></i>strong</span>"
          "<span><i style=\"background:var(--moderate)\"></i>moderate</span>"
          "<span><i style=\"background:var(--weak)\"></i>weak inversion</span></div>\n",
          fp);
    fprintf(fp, "<p class=\"note\">One point per device%s; hover a point for its figures and findings. ",
            c->ncorners > 1 ? " and corner" : "");
    if (shown < s.plottable && flag_shown < s.flagged)
        fprintf(fp, "Showing %zu of %zu: the first %zu of the %zu flagged ones (the findings list has them all). ", shown,
                s.plottable, flag_shown, s.flagged);
    else if (shown < s.plottable)
        fprintf(fp, "Showing %zu of %zu: every flagged one and every %zu%s of the others. ", shown, s.plottable, stride,
                stride == 2 ? "nd" : stride == 3 ? "rd" : "th");
    size_t total = n * c->ncorners;
    if (s.plottable < total)
        fprintf(fp, "%zu without a gm/ID or a gain (no data, off, or gds 0) are not drawn. ", total - s.plottable);
    fputs("Bands: the default region boundaries; a type or model with its own boundaries may differ.</p>\n"
          "</figure>\n",
          fp);
}

/* ---- plot (b): headroom ---- */

typedef struct {
    double margin, limit;   /* limit: the device's own (from its finding) or the rule's */
    size_t row, corner;
    int sev;                /* its sat-margin or triode finding's severity, -1 */
} Bar;

static void plot_headroom(const ReportCtx *c, FILE *fp)
{
    size_t n = c->corners[0].joined->n, with = 0, nb = 0;
    Bar bars[HEADROOM_BARS];
    double rule_limit = c->rules ? rule_check(c->rules, CHECK_MARGIN)->limit : NAN;
    for (size_t i = 0; i < n; i++)
        for (size_t k = 0; k < c->ncorners; k++) {
            const Row *r = &c->corners[k].joined->rows[i];
            if (!r->op || !isfinite(r->fig.margin))
                continue;
            with++;
            /* keep the HEADROOM_BARS smallest margins, sorted: insertion into a short array */
            if (nb == HEADROOM_BARS && r->fig.margin >= bars[nb - 1].margin)
                continue;
            Bar b = {r->fig.margin, rule_limit, i, k, -1};
            const RepPrep *p = c->prep;
            for (size_t q = p->row_start[i]; q < p->row_start[i + 1]; q++) {
                const Finding *f = rep_finding(c, p->refs[q]);
                if (p->refs[q].corner != k || (f->check != CHECK_MARGIN && f->check != CHECK_TRIODE))
                    continue;
                if ((int)f->sev > b.sev)
                    b.sev = (int)f->sev;
                if (f->check == CHECK_MARGIN && isfinite(f->limit))
                    b.limit = f->limit;
            }
            size_t at = nb < HEADROOM_BARS ? nb++ : nb - 1;
            while (at > 0 && bars[at - 1].margin > b.margin) {
                bars[at] = bars[at - 1];
                at--;
            }
            bars[at] = b;
        }
    fputs("<figure><figcaption>Headroom VDS&#8722;VDSAT, least first</figcaption>\n", fp);
    if (nb == 0) {
        fputs("<p class=\"note\">No device has both VDS and VDSAT in the data, so there is no headroom to show.</p>"
              "</figure>\n",
              fp);
        return;
    }
    double lo = fmin(0.0, bars[0].margin), hi = bars[nb - 1].margin;
    for (size_t b = 0; b < nb; b++)
        if (isfinite(bars[b].limit))
            hi = fmax(hi, bars[b].limit * 1.5);
    if (isfinite(rule_limit))
        hi = fmax(hi, rule_limit * 1.5);
    svg_nice_range(&lo, &hi);
    double left = 190.0, top = 24.0, row_h = 17.0, h = top + (double)nb * row_h + 50.0;
    SvgAxis xa = {lo, hi, 0, left, PW - 18.0}, ya = {0, 1, 0, top + (double)nb * row_h, top};
    fprintf(fp, "<svg viewBox=\"0 0 %g %g\" width=\"%g\" height=\"%g\" role=\"img\" "
                "aria-label=\"VDS-VDSAT per device as bars, with the limit\">\n",
            PW, h, PW, h);
    SvgAxis none = {0, 0, 0, ya.px0, ya.px1}; /* no y ticks: the device names label the rows */
    svg_axes(fp, &xa, &none, "VDS\xe2\x88\x92VDSAT (V)", NULL);
    double x0 = svg_map(&xa, 0.0);
    for (size_t b = 0; b < nb; b++) {
        const Bar *br = &bars[b];
        const Row *r = &c->corners[br->corner].joined->rows[br->row];
        double y = top + (double)b * row_h + 3.0, xm = svg_map(&xa, br->margin);
        const char *cls = br->margin < 0 ? "bad" : isfinite(br->limit) && br->margin < br->limit ? "low" : "ok";
        if (br->sev == SEV_ERROR)
            cls = "bad";
        fputs("<text class=\"barname\" text-anchor=\"end\" x=\"", fp);
        svg_px(fp, left - 6);
        fputs("\" y=\"", fp);
        svg_px(fp, y + 10);
        fputs("\">", fp);
        const char *name = r->dev->name ? r->dev->name : "?";
        size_t len = strlen(name);
        if (len > 26) {
            fputs("\xe2\x80\xa6", fp);
            esc(fp, name + len - 25);
        } else {
            esc(fp, name);
        }
        if (c->ncorners > 1) {
            fputs(" \xc2\xb7 ", fp);
            esc(fp, c->corners[br->corner].label);
        }
        fprintf(fp, "</text><rect class=\"bar %s\" x=\"", cls);
        svg_px(fp, fmin(x0, xm));
        fputs("\" y=\"", fp);
        svg_px(fp, y);
        fputs("\" width=\"", fp);
        svg_px(fp, fmax(fabs(xm - x0), 1.0));
        fputs("\" height=\"12\"><title>", fp);
        esc(fp, name);
        if (c->ncorners > 1) {
            fputs(" (", fp);
            esc(fp, c->corners[br->corner].label);
            fputc(')', fp);
        }
        char a[32], l[32], v1[32], v2[32];
        fprintf(fp, ": VDS-VDSAT %s (VDS %s, VDSAT %s), limit %s</title></rect>\n", rep_eng(br->margin, "V", a, sizeof a),
                rep_eng(r->fig.vds, "V", v1, sizeof v1), rep_eng(r->fig.vdsat, "V", v2, sizeof v2),
                rep_eng(br->limit, "V", l, sizeof l));
        if (isfinite(br->limit) && br->limit != rule_limit) { /* a limit of its own: a tick on its row */
            double xl = svg_map(&xa, br->limit);
            fputs("<line class=\"own\" x1=\"", fp);
            svg_px(fp, xl);
            fputs("\" x2=\"", fp);
            svg_px(fp, xl);
            fputs("\" y1=\"", fp);
            svg_px(fp, y - 2);
            fputs("\" y2=\"", fp);
            svg_px(fp, y + 14);
            fputs("\"/>\n", fp);
        }
    }
    fputs("<line class=\"zero\" x1=\"", fp);
    svg_px(fp, x0);
    fputs("\" x2=\"", fp);
    svg_px(fp, x0);
    fputs("\" y1=\"", fp);
    svg_px(fp, top);
    fputs("\" y2=\"", fp);
    svg_px(fp, ya.px0);
    fputs("\"/>\n", fp);
    if (isfinite(rule_limit)) {
        double xl = svg_map(&xa, rule_limit);
        char l[32];
        fputs("<line class=\"limit\" x1=\"", fp);
        svg_px(fp, xl);
        fputs("\" x2=\"", fp);
        svg_px(fp, xl);
        fputs("\" y1=\"", fp);
        svg_px(fp, top);
        fputs("\" y2=\"", fp);
        svg_px(fp, ya.px0);
        fputs("\"/><text class=\"limitlabel\" x=\"", fp);
        svg_px(fp, xl + 4);
        fputs("\" y=\"", fp);
        svg_px(fp, top - 8);
        fprintf(fp, "\">limit %s</text>\n", rep_eng(rule_limit, "V", l, sizeof l));
    }
    fputs("</svg>\n<div class=\"legend\"><span><i style=\"background:var(--err)\"></i>triode or error</span>"
          "<span><i style=\"background:var(--warn)\"></i>below its limit</span>"
          "<span><i style=\"background:#8fbf9a\"></i>above its limit</span>"
          "<span><i style=\"border-radius:0;width:2px;background:#1f2a33\"></i>a limit of its own</span></div>\n",
          fp);
    if (nb == with)
        fprintf(fp, "<p class=\"note\">All %zu device%s with VDS and VDSAT in the data, least headroom first.</p>\n"
                    "</figure>\n",
                nb, c->ncorners > 1 ? "-corners" : "s");
    else
        fprintf(fp, "<p class=\"note\">The %zu device%s with the least headroom, of %zu with VDS and VDSAT in the "
                    "data; the device table lists every one.</p>\n</figure>\n",
                nb, c->ncorners > 1 ? "-corners" : "s", with);
}

/* The plots in page order. A lookup-table plot (gm/ID against ID/W for the channel lengths in use,
 * with the devices placed on their curves) joins this list when the report context carries tables;
 * it is to draw nothing when no table was given, so a run without tables shows no empty frame. */
typedef struct {
    void (*draw)(const ReportCtx *c, FILE *fp);
} PlotSection;

static const PlotSection plot_sections[] = {{plot_gmid_gain}, {plot_headroom}};

static void plots(const ReportCtx *c, FILE *fp)
{
    fputs("<section id=\"plots\"><h2>Where the devices sit</h2>\n<div class=\"plots\">\n", fp);
    for (size_t i = 0; i < sizeof plot_sections / sizeof plot_sections[0]; i++)
        plot_sections[i].draw(c, fp);
    fputs("</div></section>\n", fp);
}

/* ---- findings and baseline ---- */

static void place(FILE *fp, const char *file, uint32_t line)
{
    if (!file) {
        fputs("-", fp);
        return;
    }
    fputs("<code>", fp);
    esc(fp, file);
    if (line)
        fprintf(fp, ":%u", line);
    fputs("</code>", fp);
}

static void findings(const ReportCtx *c, FILE *fp)
{
    const RepPrep *p = c->prep;
    const Joined *j = c->corners[0].joined;
    size_t nloose;
    rep_loose(c, &nloose);
    fprintf(fp, "<section id=\"findings\"><h2>Findings (%zu)</h2>\n", p->ngroups + nloose);
    if (p->ngroups + nloose == 0) {
        fputs("<p>No findings: every check passed for every device", fp);
        fputs(c->ncorners > 1 ? " in every corner.</p>\n</section>\n" : ".</p>\n</section>\n", fp);
        return;
    }
    fputs("<div class=\"scroll\"><table class=\"sortable\"><thead><tr><th>severity</th>", fp);
    if (c->baseline)
        fputs("<th>baseline</th>", fp);
    fputs("<th>device</th><th>check</th>", fp);
    if (c->ncorners > 1)
        fputs("<th>corners (worst first)</th>", fp);
    fputs("<th>what</th><th>card</th><th>rule</th></tr></thead><tbody>\n", fp);
    size_t shown = p->ngroups < FINDING_ROWS ? p->ngroups : FINDING_ROWS;
    for (size_t gi = 0; gi < shown; gi++) {
        const RepGroup *g = &p->groups[gi];
        const Finding *f = rep_finding(c, g->worst);
        fprintf(fp, "<tr><td data-v=\"%d\"><span class=\"chip %s\">%s</span>", (g->waived ? 3 : 0) + 2 - (int)g->sev,
                sev_word((int)g->sev), sev_word((int)g->sev));
        if (g->waived) {
            fputs(" <span class=\"chip waived\" title=\"", fp);
            esc(fp, f->waiver_reason);
            fputs("\">waived</span>", fp);
        }
        fputs("</td>", fp);
        if (c->baseline) {
            BlStatus st = rep_group_status(c, g);
            fprintf(fp, "<td><span class=\"chip %s\">%s</span></td>", st == BL_NEW ? "new" : "unchanged",
                    st == BL_NEW ? "new" : "unchanged");
        }
        fputs("<td><code>", fp);
        esc(fp, g->row < j->n ? j->rows[g->row].dev->name : "?");
        fputs("</code></td><td class=\"nw\">", fp);
        esc(fp, rep_check_name((int)f->check));
        fputs("</td>", fp);
        if (c->ncorners > 1) {
            fputs("<td><b>", fp);
            esc(fp, c->corners[g->worst.corner].label);
            fputs("</b>", fp);
            for (size_t q = g->first; q < g->first + g->n; q++)
                if (p->refs[q].corner != g->worst.corner) {
                    fputs(", ", fp);
                    esc(fp, c->corners[p->refs[q].corner].label);
                }
            fputs("</td>", fp);
        }
        fputs("<td>", fp);
        esc(fp, f->message);
        if (f->waived) {
            fputs("<br><i>waived: ", fp);
            esc(fp, f->waiver_reason);
            fputs("</i>", fp);
        }
        fputs("</td><td class=\"nw\">", fp);
        place(fp, f->loc.file, f->loc.line);
        fputs("</td><td class=\"nw\">", fp);
        place(fp, f->rule.file, f->rule.line);
        fputs("</td></tr>\n", fp);
    }
    fputs("</tbody></table></div>\n", fp);
    if (shown < p->ngroups)
        fprintf(fp, "<p class=\"note\">The first %zu of %zu (errors first); the JSON and CSV reports list them all.</p>\n",
                shown, p->ngroups);
    size_t nl;
    const Finding *l = rep_loose(c, &nl);
    if (nl) {
        fprintf(fp, "<h3>Statements that select no device (%zu)</h3><ul>\n", nl);
        for (size_t i = 0; i < nl; i++) {
            fprintf(fp, "<li><span class=\"chip %s\">%s</span> ", sev_word((int)l[i].sev), sev_word((int)l[i].sev));
            place(fp, l[i].loc.file, l[i].loc.line);
            fputs(" ", fp);
            esc(fp, l[i].message);
            fputs("</li>\n", fp);
        }
        fputs("</ul>\n", fp);
    }
    fputs("<p class=\"note\">One row per device and check", fp);
    if (c->ncorners > 1)
        fputs("; the message is the worst corner's (highest severity, then farthest from its limit)", fp);
    fputs(".</p>\n</section>\n", fp);
}

static void baseline(const ReportCtx *c, FILE *fp)
{
    const BlCompare *b = c->baseline;
    if (!b)
        return;
    fputs("<section id=\"baseline\"><h2>Since the baseline</h2>\n<p>Compared with <code>", fp);
    esc(fp, b->path);
    fprintf(fp, "</code>: %zu new, %zu unchanged, %zu resolved", b->nnew, b->nunchanged, b->nresolved);
    if (b->ndevices_unmatched)
        fprintf(fp, "; %zu devices are not in the baseline", b->ndevices_unmatched);
    fputs(".</p>\n", fp);
    if (b->nresolved) {
        fputs("<h3>Resolved</h3><div class=\"scroll\"><table><thead><tr><th>was</th><th>device</th><th>check</th>"
              "<th>corner</th><th>what it said</th><th>card</th></tr></thead><tbody>\n",
              fp);
        size_t shown = b->nresolved < BASELINE_ROWS ? b->nresolved : BASELINE_ROWS;
        for (size_t i = 0; i < shown; i++) {
            const BlOldFinding *o = &b->resolved[i];
            fprintf(fp, "<tr><td><span class=\"chip %s\">%s</span></td><td><code>", sev_word((int)o->sev),
                    sev_word((int)o->sev));
            esc(fp, o->device);
            fputs("</code></td><td>", fp);
            esc(fp, o->check);
            fputs("</td><td>", fp);
            esc(fp, o->corner);
            fputs("</td><td>", fp);
            esc(fp, o->message);
            fputs("</td><td class=\"nw\">", fp);
            place(fp, o->file, o->line);
            fputs("</td></tr>\n", fp);
        }
        fputs("</tbody></table></div>\n", fp);
        if (shown < b->nresolved)
            fprintf(fp, "<p class=\"note\">%zu more in the JSON report.</p>\n", b->nresolved - shown);
    }
    if (b->nregions) {
        fputs("<h3>Region changes</h3><table><thead><tr><th>device</th><th>corner</th><th>was</th><th>now</th>"
              "</tr></thead><tbody>\n",
              fp);
        size_t shown = b->nregions < BASELINE_ROWS ? b->nregions : BASELINE_ROWS;
        for (size_t i = 0; i < shown; i++) {
            const BlRegionChange *rg = &b->regions[i];
            const Row *r = &c->corners[rg->corner].joined->rows[rg->row];
            const char *now = rep_region_word(r);
            fputs("<tr><td><code>", fp);
            esc(fp, r->dev->name);
            fputs("</code></td><td>", fp);
            esc(fp, c->corners[rg->corner].label);
            fputs("</td><td><span class=\"rg ", fp);
            esc(fp, rg->was);
            fputs("\">", fp);
            esc(fp, rg->was);
            fputs("</span></td><td><span class=\"rg ", fp);
            fputs(strchr(now, ' ') ? "no-data" : now, fp); /* "no data", "outside table" */
            fputs("\">", fp);
            esc(fp, now);
            fputs("</span></td></tr>\n", fp);
        }
        fputs("</tbody></table>\n", fp);
        if (shown < b->nregions)
            fprintf(fp, "<p class=\"note\">%zu more in the JSON report.</p>\n", b->nregions - shown);
    }
    fputs("</section>\n", fp);
}

/* ---- the device table ---- */

static void num_cell(FILE *fp, double v, const char *unit)
{
    char buf[40];
    if (!isfinite(v)) {
        fputs("<td class=\"n\">-</td>", fp);
        return;
    }
    fprintf(fp, "<td class=\"n\" data-v=\"%.9g\">%s</td>", v, rep_eng(v, unit, buf, sizeof buf));
}

static void device_row(const ReportCtx *c, FILE *fp, size_t i, size_t k, int worst)
{
    const Row *r = &c->corners[k].joined->rows[i];
    const Device *dv = r->dev;
    char w[32], l[32];
    fprintf(fp, "<tr%s%s%s><td><code>", worst >= SEV_WARNING ? " class=\"flag-" : "", worst >= SEV_WARNING ? sev_word(worst) : "",
            worst >= SEV_WARNING ? "\"" : "");
    esc(fp, dv->name);
    fputs("</code></td>", fp);
    if (c->ncorners > 1) {
        fputs("<td>", fp);
        esc(fp, c->corners[k].label);
        fputs("</td>", fp);
    }
    fputs("<td>", fp);
    esc(fp, dv->model);
    fprintf(fp, "</td><td>%s</td><td data-v=\"%.9g\">%s/%s", rep_type_name(dv->type), dv->w, rep_eng(dv->w, "", w, sizeof w),
            rep_eng(dv->l, "", l, sizeof l));
    if (isfinite(dv->m) && dv->m != 1.0)
        fprintf(fp, " m=%g", dv->m);
    if (isfinite(dv->nf) && dv->nf != 1.0)
        fprintf(fp, " nf=%g", dv->nf);
    fputs("</td>", fp);
    num_cell(fp, r->fig.id, "A");
    num_cell(fp, r->fig.gm_id, "/V");
    num_cell(fp, r->fig.gain, "");
    num_cell(fp, r->fig.ft, "Hz");
    num_cell(fp, r->fig.margin, "V");
    if (c->prep->tables) {
        const char *from = rep_source(r);
        fputs("<td title=\"", fp);
        esc(fp, rep_table_path(r) ? rep_table_path(r) : "the simulator's device data");
        fprintf(fp, "\">%s</td>", from ? from : row_lut_miss(r) ? "outside table" : "-");
    }
    const char *rg = rep_region_word(r);
    fprintf(fp, "<td><span class=\"rg %s\">%s</span></td><td>", r->op ? rg : "no-data", rg);
    const RepPrep *p = c->prep;
    const char *sep = "";
    for (size_t q = p->row_start[i]; q < p->row_start[i + 1]; q++)
        if (p->refs[q].corner == k) {
            const Finding *f = rep_finding(c, p->refs[q]);
            fprintf(fp, "%s<span class=\"chip %s\" title=\"", sep, f->waived ? "waived" : sev_word((int)f->sev));
            esc(fp, f->message);
            fputs("\">", fp);
            esc(fp, rep_check_name((int)f->check));
            fputs("</span>", fp);
            sep = " ";
        }
    fputs("</td></tr>\n", fp);
}

static void devices(const ReportCtx *c, FILE *fp)
{
    size_t n = c->corners[0].joined->n, total = n * c->ncorners, flagged = 0;
    for (size_t i = 0; i < n; i++)
        for (size_t k = 0; k < c->ncorners; k++)
            flagged += any_here(c, i, k);
    size_t room = flagged < TABLE_ROWS ? TABLE_ROWS - flagged : 0, others = total - flagged;
    size_t stride = others <= room ? 1 : room ? (others + room - 1) / room : 0;
    fprintf(fp, "<section id=\"device-table\"><h2>Devices (%zu)</h2>\n<input class=\"filter\" id=\"devfilter\" type=\"search\" "
                "placeholder=\"filter: name, model, region, check...\">\n",
            n);
    fputs("<div class=\"scroll\"><table class=\"sortable\" id=\"devices\"><thead><tr><th>device</th>", fp);
    if (c->ncorners > 1)
        fputs("<th>corner</th>", fp);
    fputs("<th>model</th><th>type</th><th>W/L</th><th class=\"n\">ID</th><th class=\"n\">gm/ID</th>"
          "<th class=\"n\">gm/gds</th><th class=\"n\">fT</th><th class=\"n\">VDS&#8722;VDSAT</th>",
          fp);
    if (c->prep->tables)
        fputs("<th title=\"where the figures come from: the dump's device data, or a lookup table at the bias of the "
              "node voltages\">from</th>",
              fp);
    fputs("<th>region</th><th>findings</th></tr></thead><tbody>\n", fp);
    size_t shown = 0, seen = 0;
    for (size_t i = 0; i < n; i++)
        for (size_t k = 0; k < c->ncorners; k++) {
            int w = worst_here(c, i, k);
            if (any_here(c, i, k) ? shown < TABLE_ROWS : stride && seen++ % stride == 0) {
                device_row(c, fp, i, k, w);
                shown++;
            }
        }
    fputs("</tbody></table></div>\n", fp);
    if (shown < total && flagged > TABLE_ROWS)
        fprintf(fp, "<p class=\"note\">%zu of %zu rows: the first %zu of the %zu with a finding; the CSV and JSON "
                    "reports have them all.</p>\n",
                shown, total, shown, flagged);
    else if (shown < total)
        fprintf(fp, "<p class=\"note\">%zu of %zu rows: every one with a finding and every %zu%s of the others; "
                    "the CSV and JSON reports have them all.</p>\n",
                shown, total, stride, stride == 2 ? "nd" : stride == 3 ? "rd" : "th");
    fputs("<p class=\"note\">Click a column to sort by it; type in the box to filter.</p>\n</section>\n", fp);
}

void rep_html_open(FILE *fp, const char *what, const char *subject, const char *detail)
{
    while (detail && (*detail == '*' || *detail == ' ' || *detail == '\t')) /* a SPICE title may be a comment */
        detail++;
    fputs("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
          "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>biaslint: ",
          fp);
    esc(fp, subject ? subject : what);
    fputs("</title>\n", fp);
    style(fp);
    fputs("</head>\n<body>\n<header><h1>biaslint &#183; ", fp);
    esc(fp, what);
    fputs("</h1><div class=\"sub\">", fp);
    esc(fp, subject);
    if (detail && detail[0]) {
        fputs(" &#8212; ", fp);
        esc(fp, detail);
    }
    fputs("</div></header>\n<main>\n", fp);
}

void rep_html_close(FILE *fp)
{
    fputs("</main>\n<footer>Written by biaslint ", fp);
    esc(fp, BIASLINT_VERSION);
    fputs(". The figures are only as good as the device models and the simulation behind them.</footer>\n", fp);
    script(fp);
    fputs("</body>\n</html>\n", fp);
}

static int write_html(const ReportCtx *c, FILE *fp)
{
    if (!c->prep || c->ncorners == 0)
        return ERR_INPUT;
    rep_html_open(fp, "operating-point review", c->netlist_path, c->design ? c->design->title : NULL);
    summary(c, fp);
    corners(c, fp);
    plots(c, fp);
    findings(c, fp);
    baseline(c, fp);
    devices(c, fp);
    rep_html_close(fp);
    if (fflush(fp) != 0 || ferror(fp))
        return ERR_IO;
    return ERR_OK;
}

const ReportWriter rep_html_writer = {"html", "html", write_html};
