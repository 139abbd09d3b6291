/* gen: synthetic benchmark inputs for biaslint, generated at bench time (never committed as data).
 *
 *   gen flat N SEED PREFIX [show]    flat netlist of N MOSFET cards
 *   gen hier NI ND SEED PREFIX       NI instances of a cell of ND MOSFETs (ND a multiple of 100): the
 *                                    cell is ND/100 instances of a 100-device block, so every device
 *                                    sits two X levels down (xc12.xa3.m45)
 *
 * Writes PREFIX.sp (the netlist), PREFIX.csv (CSV device table), PREFIX.raw (ngspice binary raw
 * file, the layout of ngspice-op-data.md section 2: header lines, TAB-separated variable lines with
 * ngspice's v()/i() wrappers, "Binary:" and one little-endian double per variable) and, with `show`,
 * PREFIX.show (ngspice batch output with `show m : ...` tables, 3 devices per block as at width 80).
 *
 * Everything here is invented: the circuit is no real design, the model cards carry made-up
 * parameters, and the operating points come from a rough charge-based model (gm/ID from the
 * inversion coefficient) with a seeded pseudo-random mix of healthy, off, triode, low-margin and
 * low-gain devices. Every value is rounded to 6 significant digits (ngspice's `show` precision) so
 * that the three dumps carry the same numbers and give the same report. Output is a function of the
 * arguments only (splitmix64 hashing of the seed and the device index), so runs are reproducible. */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- deterministic randomness: one hash per (seed, device, draw) ---- */

static uint64_t mix(uint64_t x)
{
    x += 0x9E3779B97F4A7C15ull;
    x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ull;
    x = (x ^ (x >> 27)) * 0x94D049BB133111EBull;
    return x ^ (x >> 31);
}

static uint64_t seed_g;

static uint64_t draw(uint64_t dev, unsigned k)
{
    return mix(seed_g ^ mix(dev * 64 + k));
}

static double u01(uint64_t dev, unsigned k)
{
    return (double)(draw(dev, k) >> 11) * (1.0 / 9007199254740992.0);
}

/* ---- models (invented) ---- */

typedef struct {
    const char *name;
    int pmos;
    double vth0;   /* V, rough threshold for the generated operating points */
    double ispec;  /* A per square, specific current of the rough model */
} Model;

static const Model models[] = {
    {"nsv", 0, 0.36, 0.60e-6}, {"psv", 1, 0.34, 0.25e-6}, {"nlv", 0, 0.24, 0.65e-6},
    {"plv", 1, 0.22, 0.27e-6}, {"nhv", 0, 0.52, 0.40e-6}, {"phv", 1, 0.50, 0.15e-6},
};
#define NMODELS (sizeof models / sizeof models[0])

static void write_models(FILE *f)
{
    fputs("* invented model cards: BSIM4 with made-up overlap capacitances, no real process\n", f);
    for (size_t k = 0; k < NMODELS; k++)
        fprintf(f, ".model %s %s level=14 version=4.8 cgso=%.3g cgdo=%.3g cgbo=1e-12\n", models[k].name,
                models[k].pmos ? "pmos" : "nmos", 1.1e-10 + 1e-11 * (double)k, 1.1e-10 + 1e-11 * (double)k);
}

/* ---- the sizes of one card ---- */

typedef struct {
    uint8_t model;
    uint8_t m, nf;
    uint8_t style;  /* how the card is written: see card_text */
    uint16_t wk;    /* W = wk * 0.1u (total over fingers) */
    uint8_t lk;     /* index into lens */
} Size;

static const double lens[] = {30e-9, 40e-9, 60e-9, 90e-9, 120e-9, 180e-9, 250e-9, 500e-9, 1e-6, 2e-6};
static const char *const len_text[] = {"30n", "40n", "60n", "90n", "0.12u", "180n", "0.25u", "500n", "1u", "2u"};
#define NLENS (sizeof lens / sizeof lens[0])

static Size pick_size(uint64_t dev)
{
    Size s;
    s.model = (uint8_t)(draw(dev, 0) % NMODELS);
    s.wk = (uint16_t)(2 + draw(dev, 1) % 199);
    s.lk = (uint8_t)(draw(dev, 2) % NLENS);
    uint64_t r = draw(dev, 3) % 100;
    s.m = r < 80 ? 1 : r < 90 ? 2 : 4;
    r = draw(dev, 4) % 100;
    s.nf = r < 70 ? 1 : r < 85 ? 2 : r < 95 ? 4 : 8;
    s.style = (uint8_t)(draw(dev, 5) % 100);
    return s;
}

static double size_w(const Size *s)
{
    return s->wk * 0.1e-6;
}

/* ---- operating points ---- */

enum { Q_ID, Q_GM, Q_GDS, Q_VGS, Q_VDS, Q_VBS, Q_VTH, Q_VDSAT, Q_CGG, NQ };
static const char *const qname[NQ] = {"id", "gm", "gds", "vgs", "vds", "vbs", "vth", "vdsat", "cgg"};

/* Round to 6 significant digits, the precision of ngspice's show tables. */
static double r6(double v, char *txt)
{
    char tmp[32];
    snprintf(tmp, sizeof tmp, "%.6g", v);
    if (txt)
        strcpy(txt, tmp);
    return strtod(tmp, NULL);
}

typedef struct {
    double v[NQ];
    char t[NQ][16];
} Op;

/* The operating point of device dev with total width w, length l, multiplier m: a healthy device
 * most of the time, and a planted share of off (1.5 %), triode (2 %), low-margin (3 %) and low-gain
 * (4 %) devices. Signs as ngspice prints BSIM4 values: vgs, vds positive for both types in normal
 * operation, id positive, vbs <= 0. */
static void make_op(uint64_t dev, const Model *md, double w, double l, double m, Op *op)
{
    const double n = 1.3, ut = 0.025865;
    double kind = u01(dev, 10);
    double ic = exp(log(0.02) + u01(dev, 11) * (log(60.0) - log(0.02)));
    double squares = w * m / l;
    double id = squares * md->ispec * ic;
    if (kind < 0.015) { /* off: 5..60 pA per square */
        id = squares * (5e-12 + 55e-12 * u01(dev, 12));
        ic = id / (squares * md->ispec);
    }
    double gmid = 1.0 / (n * ut) * 2.0 / (1.0 + sqrt(1.0 + 4.0 * ic));
    double gm = gmid * id;
    double vdsat = 2.0 * ut * sqrt(1.0 + 4.0 * ic) + 0.03; /* rough: 4UT in weak, ~VOV in strong */
    double vov = 2.0 * n * ut * log(exp(sqrt(ic)) - 1.0 + 1e-12);
    double vth = md->vth0 + 0.04 * (u01(dev, 13) - 0.5);
    double margin = 0.08 + 0.62 * u01(dev, 14);
    if (kind >= 0.015 && kind < 0.035)
        margin = -0.02 - 0.15 * u01(dev, 15); /* triode */
    else if (kind < 0.065)
        margin = 0.002 + 0.045 * u01(dev, 15); /* close to leaving saturation */
    double gain = 12.0 + 250.0 * u01(dev, 16) * u01(dev, 17);
    if (kind >= 0.065 && kind < 0.105)
        gain = 3.0 + 6.5 * u01(dev, 18);
    double vbs = u01(dev, 19) < 0.2 ? -0.1 - 0.4 * u01(dev, 20) : 0.0;
    double cgg = (0.67 * 0.0150 * w * l + 0.2e-9 * w) * m * (0.9 + 0.2 * u01(dev, 21)); /* channel + fringe */
    double vds = vdsat + margin;
    if (vds < 0.005)
        vds = 0.005;
    double v[NQ] = {id, gm, gm / gain, vth + vov, vds, vbs, vth, vdsat, cgg};
    for (int q = 0; q < NQ; q++)
        op->v[q] = r6(v[q], op->t[q]);
}

/* ---- writers ---- */

typedef struct {
    FILE *f;
    const char *path;
} Out;

static FILE *open_out(const char *prefix, const char *ext)
{
    char path[4096];
    snprintf(path, sizeof path, "%s.%s", prefix, ext);
    FILE *f = fopen(path, "wb");
    if (!f) {
        perror(path);
        exit(1);
    }
    setvbuf(f, NULL, _IOFBF, 1 << 20);
    return f;
}

static void close_out(FILE *f)
{
    if (ferror(f) || fclose(f) != 0) {
        fprintf(stderr, "gen: write error\n");
        exit(1);
    }
}

/* A W as a designer or an extractor writes it: 1.2u, 1200n, 1.2e-6 or {12*wu}. */
static void put_w(FILE *f, const Size *s, int expr)
{
    if (expr) {
        fprintf(f, "w={%u*wu}", s->wk);
        return;
    }
    switch (s->style % 3) {
    case 0: fprintf(f, "w=%.4gu", s->wk * 0.1); break;
    case 1: fprintf(f, "w=%un", s->wk * 100u); break;
    default: fprintf(f, "w=%.4ge-6", s->wk * 0.1); break;
    }
}

/* One M card. 5 % carry expressions, 30 % extracted junction geometry, 10 % a continuation line. */
static void card_text(FILE *f, const char *name, const char *nets[4], const Size *s, const char *wexpr)
{
    const Model *md = &models[s->model];
    fprintf(f, "%s %s %s %s %s %s ", name, nets[0], nets[1], nets[2], nets[3], md->name);
    int expr = s->style < 5;
    if (wexpr)
        fputs(wexpr, f);
    else
        put_w(f, s, expr);
    if (expr && !wexpr)
        fprintf(f, " l='lmin*%.4g'", lens[s->lk] / 10e-9);
    else
        fprintf(f, " l=%s", len_text[s->lk]);
    if (s->m != 1 || s->style % 20 == 7)
        fprintf(f, " m=%u", s->m);
    if (s->nf != 1)
        fprintf(f, " nf=%u", s->nf);
    if (s->style >= 70) {
        double w = size_w(s), ad = w * 0.12e-6;
        fprintf(f, "%sad=%.4g as=%.4g pd=%.4g ps=%.4g", s->style >= 90 ? "\n+ " : " ", ad, ad, 2 * w + 0.24e-6,
                2 * w + 0.24e-6);
    }
    fputc('\n', f);
}

static void csv_header(FILE *f)
{
    fputs("# biaslint benchmark dump (synthetic, invented values), one row per MOSFET\nname,model", f);
    for (int q = 0; q < NQ; q++)
        fprintf(f, ",%s", qname[q]);
    fputc('\n', f);
}

static void csv_row(FILE *f, const char *name, const char *model, const Op *op)
{
    fprintf(f, "%s,%s", name, model);
    for (int q = 0; q < NQ; q++) {
        fputc(',', f);
        fputs(op->t[q], f);
    }
    fputc('\n', f);
}

/* How ngspice types and wraps each saved device vector in a raw file (seen with ngspice 39). */
static const char *const qtype[NQ] = {"current", "admittance", "admittance", "voltage", "voltage",
                                      "voltage", "voltage", "voltage", "capacitance"};
/* ngspice lists an op plot's device vectors sorted by name: cgg gds gm id vbs vds vdsat vgs vth */
static const int qorder[NQ] = {Q_CGG, Q_GDS, Q_GM, Q_ID, Q_VBS, Q_VDS, Q_VDSAT, Q_VGS, Q_VTH};

static void raw_var(FILE *f, size_t idx, const char *vec, int q)
{
    if (qtype[q][0] == 'c' && qtype[q][1] == 'u')
        fprintf(f, "\t%zu\ti(@%s[%s])\tcurrent\n", idx, vec, qname[q]);
    else if (qtype[q][0] == 'v')
        fprintf(f, "\t%zu\tv(@%s[%s])\tvoltage\n", idx, vec, qname[q]);
    else
        fprintf(f, "\t%zu\t@%s[%s]\t%s\n", idx, vec, qname[q], qtype[q]);
}

static void raw_head(FILE *f, const char *title, size_t nvars)
{
    fprintf(f, "Title: %s\nDate: Tue Dec  1 21:41:08  2026\nPlotname: Operating Point\nFlags: real\n"
               "No. Variables: %zu\nNo. Points: 1\nVariables:\n",
            title, nvars);
}

static void put_double(FILE *f, double v)
{
    fwrite(&v, sizeof v, 1, f); /* machine byte order, as ngspice writes */
}

/* The records in an order unrelated to the netlist's, as simulators list them: a stride permutation. */
static size_t perm(size_t i, size_t n)
{
    size_t a = 7919;
    while (n % a == 0 || a % n == 0)
        a += 2;
    return (size_t)(((uint64_t)i * a + 12345u) % n); /* i < 2^40 and a < 2^20: no overflow */
}

/* ---- flat ---- */

typedef struct {
    Size s;
    Op op;
} Dev;

static void flat_nets(size_t i, size_t n, const Size *s, char buf[4][24], const char *nets[4])
{
    int pmos = models[s->model].pmos;
    snprintf(buf[0], 24, "n%zu", i);
    /* gates: mostly a drain a few cards up, as in a layout-ordered extraction; some long nets */
    if (i >= 32 && draw(i, 6) % 100 < 85)
        snprintf(buf[1], 24, "n%zu", i - 1 - (size_t)(draw(i, 7) % 31));
    else
        snprintf(buf[1], 24, "n%zu", (i * 7 + 3) % n);
    if (i % 4 == 0)
        snprintf(buf[2], 24, "%s", pmos ? "vdd" : "0");
    else
        snprintf(buf[2], 24, "n%zu", (i + 1) % n);
    snprintf(buf[3], 24, "%s", pmos ? "vdd" : "0");
    for (int k = 0; k < 4; k++)
        nets[k] = buf[k];
}

static void gen_flat(size_t n, const char *prefix, int show)
{
    Dev *dv = malloc(n * sizeof *dv);
    if (!dv) {
        fprintf(stderr, "gen: out of memory\n");
        exit(1);
    }
    char title[160];
    snprintf(title, sizeof title, "* biaslint benchmark: flat netlist of %zu MOSFETs (synthetic, seed %llu)", n,
             (unsigned long long)seed_g);
    FILE *f = open_out(prefix, "sp");
    fprintf(f, "%s\n* an invented post-layout-style netlist for timing biaslint; it is no real circuit\n", title);
    fputs(".param wu=0.1u lmin=10n\n", f);
    write_models(f);
    fputs("vdd vdd 0 dc 1.2\n", f);
    char nb[4][24], name[32];
    const char *nets[4];
    for (size_t i = 0; i < n; i++) {
        if (i % 1000 == 0)
            fprintf(f, "* ---- cluster %zu ----\n", i / 1000);
        dv[i].s = pick_size(i);
        flat_nets(i, n, &dv[i].s, nb, nets);
        snprintf(name, sizeof name, "m%zu", i);
        card_text(f, name, nets, &dv[i].s, NULL);
        const Size *s = &dv[i].s;
        make_op(i, &models[s->model], size_w(s), lens[s->lk], s->m, &dv[i].op);
    }
    fputs(".end\n", f);
    close_out(f);

    f = open_out(prefix, "csv");
    csv_header(f);
    for (size_t k = 0; k < n; k++) {
        size_t i = perm(k, n);
        snprintf(name, sizeof name, "m%zu", i);
        csv_row(f, name, models[dv[i].s.model].name, &dv[i].op);
    }
    close_out(f);

    /* raw: every net's voltage (save all), then the device vectors */
    size_t nnodes = n + 1, nvars = nnodes + n * NQ, idx = 0;
    f = open_out(prefix, "raw");
    raw_head(f, title, nvars);
    fprintf(f, "\t%zu\tv(vdd)\tvoltage\n", idx++);
    for (size_t i = 0; i < n; i++)
        fprintf(f, "\t%zu\tv(n%zu)\tvoltage\n", idx++, i);
    for (size_t k = 0; k < n; k++) {
        size_t i = perm(k, n);
        snprintf(name, sizeof name, "m%zu", i);
        for (int j = 0; j < NQ; j++)
            raw_var(f, idx++, name, qorder[j]);
    }
    fputs("Binary:\n", f);
    put_double(f, 1.2);
    for (size_t i = 0; i < n; i++)
        put_double(f, 0.1 + 1.0 * u01(i, 40));
    for (size_t k = 0; k < n; k++) {
        size_t i = perm(k, n);
        for (int j = 0; j < NQ; j++)
            put_double(f, dv[i].op.v[qorder[j]]);
    }
    close_out(f);

    if (show) {
        /* ngspice batch output: preamble, then one block per 3 devices, grouped by model, models and
           instances newest first */
        f = open_out(prefix, "show");
        fputs("\nNote: No compatibility mode selected!\n\n\nCircuit: ", f);
        for (const char *p = title; *p; p++)
            fputc(*p >= 'A' && *p <= 'Z' ? *p + 32 : *p, f);
        fputs("\n\nDoing analysis at TEMP = 27.000000 and TNOM = 27.000000\n\n\nNo. of Data Rows : 1\n", f);
        size_t *list = malloc(n * sizeof *list);
        if (!list) {
            fprintf(stderr, "gen: out of memory\n");
            exit(1);
        }
        for (size_t mk = NMODELS; mk-- > 0;) {
            size_t cnt = 0;
            for (size_t i = n; i-- > 0;)
                if (dv[i].s.model == mk)
                    list[cnt++] = i;
            for (size_t b = 0; b < cnt; b += 3) {
                size_t e = b + 3 < cnt ? b + 3 : cnt;
                fputs(" BSIM4: Berkeley Short Channel IGFET Model-4\n     device", f);
                for (size_t k = b; k < e; k++) {
                    snprintf(name, sizeof name, "m%zu", list[k]);
                    fprintf(f, " %21s", name);
                }
                fputs("\n      model", f);
                for (size_t k = b; k < e; k++)
                    fprintf(f, " %21s", models[mk].name);
                fputc('\n', f);
                for (int q = 0; q < NQ; q++) {
                    fprintf(f, "%11s", qname[q]);
                    for (size_t k = b; k < e; k++)
                        fprintf(f, " %21s", dv[list[k]].op.t[q]);
                    fputc('\n', f);
                }
                fputc('\n', f);
            }
        }
        fputs("ngspice-39 done\n", f);
        free(list);
        close_out(f);
    }
    free(dv);
}

/* ---- hierarchical ---- */

#define BLK 100 /* devices per block */

static void gen_hier(size_t ni, size_t nd, const char *prefix)
{
    size_t nblk = nd / BLK, n = ni * nd;
    char title[200];
    snprintf(title, sizeof title,
             "* biaslint benchmark: %zu instances of a %zu-device cell, two levels (synthetic, seed %llu)", ni, nd,
             (unsigned long long)seed_g);
    /* the block's cards, shared by every instance: device k of the block */
    Size bs[BLK];
    for (size_t k = 0; k < BLK; k++)
        bs[k] = pick_size(1000000007ull + k);
    /* per block instance inside the cell: width and length factors, and an m on the last one */
    unsigned wf[1024], lf[1024], bm[1024];
    for (size_t j = 0; j < nblk && j < 1024; j++) {
        wf[j] = 1 + (unsigned)(j % 3);
        lf[j] = 1 + (unsigned)(j % 2);
        bm[j] = j + 1 == nblk ? 2 : 1;
    }
    FILE *f = open_out(prefix, "sp");
    fprintf(f, "%s\n* an invented hierarchical netlist for timing biaslint; it is no real circuit\n", title);
    fputs(".param lmin=30n\n", f);
    write_models(f);
    fputs(".subckt blk in out vdd vss wf=1 lf=1\n", f);
    char name[64], nb[4][24], wx[48];
    for (size_t k = 0; k < BLK; k++) {
        const Size *s = &bs[k];
        int pmos = models[s->model].pmos;
        const char *nets[4];
        snprintf(nb[0], 24, k + 1 == BLK ? "out" : "t%zu", k);
        snprintf(nb[1], 24, k == 0 ? "in" : "t%zu", k ? k - 1 : 0);
        if (pmos || k % 3)
            snprintf(nb[2], 24, "%s", pmos ? "vdd" : "vss");
        else
            snprintf(nb[2], 24, "s%zu", k);
        snprintf(nb[3], 24, "%s", pmos ? "vdd" : "vss");
        for (int q = 0; q < 4; q++)
            nets[q] = nb[q];
        snprintf(name, sizeof name, "m%zu", k);
        /* every block card scales with the instance: w={wf*...}, l from lf on a third of them */
        snprintf(wx, sizeof wx, "w={wf*%.4gu}", s->wk * 0.1);
        Size t = *s;
        t.style = (uint8_t)(s->style < 5 ? 5 : s->style);
        if (t.style % 20 == 7)
            t.style++; /* no m on the block's cards: the X card's m= replaces it (ngspice), see below */
        t.m = 1;
        if (k % 3 == 0) {
            card_text(f, name, nets, &t, wx);
        } else {
            /* l on its own: write the card by hand */
            const Model *md = &models[s->model];
            fprintf(f, "%s %s %s %s %s %s %s l={lf*%s}%s", name, nets[0], nets[1], nets[2], nets[3], md->name, wx,
                    len_text[s->lk], s->nf != 1 ? "" : "\n");
            if (s->nf != 1)
                fprintf(f, " nf=%u\n", s->nf);
        }
    }
    fputs(".ends blk\n.subckt cell a z vdd vss\n", f);
    for (size_t j = 0; j < nblk; j++) {
        char in[24], out[24];
        snprintf(in, sizeof in, j ? "u%zu" : "a", j ? j - 1 : 0);
        snprintf(out, sizeof out, j + 1 < nblk ? "u%zu" : "z", j);
        fprintf(f, "xa%zu %s %s vdd vss blk wf=%u lf=%u", j, in, out, wf[j], lf[j]);
        if (j + 1 == nblk)
            fputs(" m=2", f);
        fputc('\n', f);
    }
    fputs(".ends cell\nvdd vdd 0 dc 1.2\n", f);
    for (size_t i = 0; i < ni; i++)
        fprintf(f, "xc%zu in%zu out%zu vdd 0 cell\n", i, i, i);
    fputs(".end\n", f);
    close_out(f);

    /* the op point of global device g = (i*nblk + j)*BLK + k, from its evaluated sizes */
    Op *ops = malloc(n * sizeof *ops);
    if (!ops) {
        fprintf(stderr, "gen: out of memory\n");
        exit(1);
    }
    for (size_t i = 0; i < ni; i++)
        for (size_t j = 0; j < nblk; j++)
            for (size_t k = 0; k < BLK; k++) {
                size_t g = (i * nblk + j) * BLK + k;
                const Size *s = &bs[k];
                double w = wf[j] * size_w(s), l = (k % 3 == 0 ? 1 : lf[j]) * lens[s->lk];
                double m = bm[j];
                make_op(g, &models[s->model], w, l, m, &ops[g]);
            }
#define HNAME(buf, g) \
    snprintf(buf, sizeof buf, "m.xc%zu.xa%zu.m%zu", (g) / nd, ((g) % nd) / BLK, (g) % BLK)
    f = open_out(prefix, "csv");
    csv_header(f);
    for (size_t q = 0; q < n; q++) {
        size_t g = perm(q, n);
        HNAME(name, g);
        csv_row(f, name, models[bs[g % BLK].model].name, &ops[g]);
    }
    close_out(f);

    f = open_out(prefix, "raw");
    size_t idx = 0;
    raw_head(f, title, 1 + n * NQ);
    fprintf(f, "\t%zu\tv(vdd)\tvoltage\n", idx++);
    for (size_t q = 0; q < n; q++) {
        size_t g = perm(q, n);
        HNAME(name, g);
        for (int j = 0; j < NQ; j++)
            raw_var(f, idx++, name, qorder[j]);
    }
    fputs("Binary:\n", f);
    put_double(f, 1.2);
    for (size_t q = 0; q < n; q++) {
        size_t g = perm(q, n);
        for (int j = 0; j < NQ; j++)
            put_double(f, ops[g].v[qorder[j]]);
    }
    close_out(f);
    free(ops);
}

static size_t num(const char *s)
{
    char *e;
    unsigned long long v = strtoull(s, &e, 10);
    if (*e || !*s) {
        fprintf(stderr, "gen: '%s' is not a count\n", s);
        exit(2);
    }
    return (size_t)v;
}

int main(int argc, char **argv)
{
    if (argc >= 5 && strcmp(argv[1], "flat") == 0) {
        seed_g = num(argv[3]);
        gen_flat(num(argv[2]), argv[4], argc > 5 && strcmp(argv[5], "show") == 0);
        return 0;
    }
    if (argc == 6 && strcmp(argv[1], "hier") == 0) {
        size_t nd = num(argv[3]);
        if (nd % BLK || nd / BLK > 1024 || nd == 0) {
            fprintf(stderr, "gen: the cell size must be a multiple of %d, at most %d\n", BLK, BLK * 1024);
            return 2;
        }
        seed_g = num(argv[4]);
        gen_hier(num(argv[2]), nd, argv[5]);
        return 0;
    }
    fprintf(stderr, "usage: gen flat N SEED PREFIX [show] | gen hier NI ND SEED PREFIX\n");
    return 2;
}
