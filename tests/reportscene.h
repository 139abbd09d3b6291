/* reportscene: a small hand-built design for the report tests, in one to three corners: an invented
 * two-stage amplifier (demo data of our own: the values are made up, except mb5's, which are the
 * ngspice numbers of check-values.md section 5 times 4). The design, the dump records and the joined
 * rows are built by hand; figures come from fig_normalize/fig_derive and findings from chk_run, as
 * in the pipeline. Also what the golden-file tests share: rendering into memory, reading a file,
 * masking the version. Include after testutil.h. */
#ifndef REPORTSCENE_H
#define REPORTSCENE_H

#include "check.h"
#include "report.h"

#define NDEV 6
#define MAXC 3

typedef struct {
    Design ds;
    SrcFile files[2];
    SrcFile *filep[2];
    Card cards[NDEV];
    Device devs[NDEV];
    Model models[3];
    OpRecord recs[MAXC][NDEV + 1];
    double vals[MAXC][NDEV + 1][OPQ_COUNT]; /* the records' values */
    Row rows[MAXC][NDEV];
    const OpRecord *orphans[MAXC][1];
    OpTable op[MAXC];
    Joined j[MAXC];
    Findings f[MAXC];
    RepCorner corners[MAXC];
    size_t ncorners;
    RuleSet *rs;
    DiagList d;
    ReportCtx ctx;
    RepPrep prep;
} Sc;

/* Corner labels when there are several (one corner: ""). */
static const char *const scene_label[MAXC] = {"typ", "cold", "hot"};

static inline OpRecord scene_rec(double *v, const char *name, OpFamily fam, const char *file, uint32_t line)
{
    OpRecord r;
    memset(&r, 0, sizeof r);
    r.q = v;
    r.name = name;
    r.family = fam;
    r.loc = (SrcLoc){file, line, 1};
    for (int q = 0; q < OPQ_COUNT; q++)
        r.q[q] = NAN;
    return r;
}

/* The records of corner k. Corner 0 is the base; "cold" pushes x1.m3 into triode and lowers its
 * gain; "hot" leaves x1.m3 5 mV of headroom and x1.m1 40 mV. */
static inline void scene_records(OpRecord *r, double (*v)[OPQ_COUNT], int k)
{
    static const char *const dump[MAXC] = {"amp.log", "amp.cold.log", "amp.hot.raw"};
    const char *f = dump[k];
    r[0] = scene_rec(v[0], "x1.m1", OPFAM_BSIM, f, 10);
    r[0].q[OPQ_ID] = 1e-5, r[0].q[OPQ_GM] = 1.5e-4, r[0].q[OPQ_GDS] = 3e-6, r[0].q[OPQ_VGS] = 0.6;
    r[0].q[OPQ_VDS] = k == 2 ? 0.16 : 0.5, r[0].q[OPQ_VBS] = 0, r[0].q[OPQ_VTH] = 0.45, r[0].q[OPQ_VDSAT] = 0.12;
    r[0].q[OPQ_CGG] = 2e-15;
    /* x1.m2: PMOS written with drain and source swapped, strong inversion */
    r[1] = scene_rec(v[1], "x1.m2", OPFAM_BSIM, f, 11);
    r[1].q[OPQ_ID] = 5e-5, r[1].q[OPQ_GM] = 4e-4, r[1].q[OPQ_GDS] = 5e-6, r[1].q[OPQ_VGS] = -0.2;
    r[1].q[OPQ_VDS] = -0.6, r[1].q[OPQ_VBS] = -0.6, r[1].q[OPQ_VTH] = 0.35, r[1].q[OPQ_VDSAT] = 0.2;
    r[1].q[OPQ_CGG] = 4.5e-15;
    /* x1.m3: 12 mV from leaving saturation, weak gain */
    r[2] = scene_rec(v[2], "x1.m3", OPFAM_BSIM, f, 12);
    r[2].q[OPQ_ID] = 2e-5, r[2].q[OPQ_GM] = 2.4e-4, r[2].q[OPQ_GDS] = k == 1 ? 4e-5 : 3e-5, r[2].q[OPQ_VGS] = 0.55;
    r[2].q[OPQ_VDS] = k == 1 ? 0.21 : k == 2 ? 0.225 : 0.232, r[2].q[OPQ_VBS] = 0, r[2].q[OPQ_VTH] = 0.42;
    r[2].q[OPQ_VDSAT] = 0.22;
    r[2].q[OPQ_CGG] = 3e-15;
    /* x1.m4: no record */
    r[3] = scene_rec(v[3], "unused", OPFAM_BSIM, f, 0);
    /* mb5: level 1, m = 4, Meyer capacitances (the ngspice numbers of check-values.md section 5, x4) */
    r[4] = scene_rec(v[4], "mb5", OPFAM_MOS1, f, 20);
    r[4].q[OPQ_ID] = 3.96e-5, r[4].q[OPQ_GM] = 2.64e-4, r[4].q[OPQ_GDS] = 3.6e-6, r[4].q[OPQ_VGS] = 0.8;
    r[4].q[OPQ_VDS] = 1.0, r[4].q[OPQ_VBS] = 0, r[4].q[OPQ_VON] = 0.5, r[4].q[OPQ_VDSAT] = 0.3;
    r[4].q[OPQ_CGS] = 1.841676e-14, r[4].q[OPQ_CGD] = 0, r[4].q[OPQ_CGB] = 0;
    /* mtail: off, and no vdsat in the dump */
    r[5] = scene_rec(v[5], "mtail_with_a_long_name", OPFAM_BSIM, f, 21);
    r[5].q[OPQ_ID] = 3e-13, r[5].q[OPQ_GM] = 1e-11, r[5].q[OPQ_GDS] = 1e-12, r[5].q[OPQ_VGS] = 0.0;
    r[5].q[OPQ_VDS] = 0.9, r[5].q[OPQ_VBS] = 0, r[5].q[OPQ_VTH] = 0.45;
    /* a record for a device the netlist does not have */
    r[6] = scene_rec(v[6], "x9.m1", OPFAM_BSIM, f, 22);
    r[6].q[OPQ_ID] = 1e-6;
}

/* Joins corner k by hand (rows in device order) and runs the checks on it. */
static inline void scene_corner(Sc *s, int k)
{
    OpRecord *r = s->recs[k];
    scene_records(r, s->vals[k], k);
    s->orphans[k][0] = &r[6];
    Joined *j = &s->j[k];
    for (int i = 0; i < NDEV; i++) {
        Row *row = &s->rows[k][i];
        row->dev = &s->devs[i];
        row->op = i == 3 ? NULL : &r[i];
        fig_normalize(row->op, row->dev->type, &row->fig);
        if (row->op) {
            fig_add_overlap(&row->fig, row->dev);
            fig_derive(&row->fig, row->dev, rule_bands(s->rs, row->dev, NULL));
            j->nmatched++;
        }
    }
    j->rows = s->rows[k];
    j->n = NDEV;
    j->orphans = s->orphans[k];
    j->norphans = 1;
    j->overlap = 1;
    assert_int_equal(chk_run(s->rs, &s->ds, j, &s->f[k]), ERR_OK);
    s->op[k].format = k == 2 ? OPFMT_RAW : OPFMT_SHOW;
    s->corners[k] = (RepCorner){s->ncorners > 1 ? scene_label[k] : "", r[0].loc.file, &s->op[k], j, &s->f[k]};
}

/* The scene in ncorners corners (1..MAXC), prepared for the writers; fail level warning. */
static inline void scene(Sc *s, size_t ncorners)
{
    memset(s, 0, sizeof *s);
    diag_init(&s->d);
    s->rs = rule_new_defaults(&s->d);
    assert_non_null(s->rs);
    s->files[0].path = (char *)"amp.cir";
    s->files[1].path = (char *)"lib/stage.inc";
    s->filep[0] = &s->files[0];
    s->filep[1] = &s->files[1];
    s->ds.files.files = s->filep;
    s->ds.files.n = 2;
    s->ds.temp_c = 27;
    s->ds.title = "* amp.cir: two-stage amplifier (invented for the tests)";
    s->models[0] = (Model){.name = "nch", .type = MOS_NMOS, .level = 14, .cgso = NAN, .cgdo = NAN, .cgbo = NAN};
    s->models[1] = (Model){.name = "pch", .type = MOS_PMOS, .level = 14, .cgso = 2e-10, .cgdo = 2e-10, .cgbo = NAN};
    s->models[2] = (Model){.name = "n1", .type = MOS_NMOS, .level = 1, .cgso = NAN, .cgdo = NAN, .cgbo = NAN};
    static const struct {
        const char *name;
        int model;
        double w, l, m, nf;
        uint32_t file, line;
    } dv[NDEV] = {
        {"x1.m1", 0, 2e-6, 0.5e-6, 1, 1, 1, 4}, {"x1.m2", 1, 4e-6, 0.5e-6, 1, 2, 1, 5},
        {"x1.m3", 0, 2e-6, 0.5e-6, 2, 1, 1, 6}, {"x1.m4", 1, 8e-6, 1e-6, 1, 1, 1, 7},
        {"mb5", 2, 1e-6, 1e-6, 4, 1, 0, 12},    {"mtail_with_a_long_name", 0, 10e-6, 1e-6, 1, 1, 0, 13},
    };
    for (int i = 0; i < NDEV; i++) {
        s->cards[i] = (Card){.file = dv[i].file, .line = dv[i].line, .col = 1};
        const Model *m = &s->models[dv[i].model];
        s->devs[i] = (Device){.name = dv[i].name, .model = m->name, .mdl = m, .type = m->type, .w = dv[i].w,
                              .l = dv[i].l, .m = dv[i].m, .nf = dv[i].nf, .cell = dv[i].file ? "stage" : NULL,
                              .card = (uint32_t)i};
    }
    s->ds.cards = s->cards;
    s->ds.ncards = NDEV;
    s->ds.devs = s->devs;
    s->ds.ndevs = NDEV;
    s->ds.models = s->models;
    s->ds.nmodels = 3;
    s->ncorners = ncorners;
    for (size_t k = 0; k < ncorners; k++)
        scene_corner(s, (int)k);
    memset(&s->ctx, 0, sizeof s->ctx);
    s->ctx.design = &s->ds;
    s->ctx.rules = s->rs;
    s->ctx.netlist_path = "amp.cir";
    s->ctx.fail_level = SEV_WARNING;
    if (ncorners == 1) { /* the single-corner form, as the writers met it before corners */
        s->ctx.op = &s->op[0];
        s->ctx.joined = &s->j[0];
        s->ctx.findings = &s->f[0];
        s->ctx.op_path = "amp.log";
    } else {
        s->ctx.corners = s->corners;
        s->ctx.ncorners = ncorners;
    }
    assert_int_equal(rep_prepare(&s->ctx, &s->prep), ERR_OK);
}

static inline void scene_free(Sc *s)
{
    for (size_t k = 0; k < s->ncorners; k++)
        chk_free(&s->f[k]);
    rep_prep_free(&s->prep);
    rule_free(s->rs);
    diag_free(&s->d);
}

/* Writes with w into memory; returns the text (malloc'd), its status through *rc. Not inlined: gcc 12
 * then mistakes the memory stream's buffer for a pointer to a local. */
__attribute__((noinline, unused)) static char *render(const ReportWriter *w, const ReportCtx *c, int *rc, size_t *len)
{
    char *text = NULL;
    size_t n = 0;
    FILE *fp = open_memstream(&text, &n);
    assert_non_null(fp);
    *rc = w->write(c, fp);
    assert_int_equal(fclose(fp), 0);
    *len = n;
    return text;
}

static inline char *slurp(const char *path, size_t *len)
{
    FILE *fp = fopen(path, "rb");
    if (!fp)
        return NULL;
    fseek(fp, 0, SEEK_END);
    long n = ftell(fp);
    fseek(fp, 0, SEEK_SET);
    char *s = malloc((size_t)n + 1);
    assert_non_null(s);
    assert_int_equal(fread(s, 1, (size_t)n, fp), (size_t)n);
    s[n] = '\0';
    fclose(fp);
    *len = (size_t)n;
    return s;
}

/* Replaces every occurrence of the version by @VERSION@ and the line numbers of the compiled-in
 * defaults by N, so that a release or a new comment in rules/defaults.rules does not change the
 * golden files (the origins themselves are checked in test_check and test_rules). */
static inline char *unversion(const char *text)
{
    const char *v = BIASLINT_VERSION;
    size_t vl = strlen(v), n = strlen(text);
    char *out = malloc(2 * n + 16), *o = out;
    assert_non_null(out);
    for (const char *p = text; *p;) {
        if (strncmp(p, v, vl) == 0) {
            memcpy(o, "@VERSION@", 9);
            o += 9;
            p += vl;
        } else if (strncmp(p, "<defaults>:", 11) == 0 || strncmp(p, "&lt;defaults&gt;:", 17) == 0) {
            size_t k = p[0] == '<' ? 11 : 17;
            memcpy(o, p, k);
            o += k;
            *o++ = 'N';
            p += k;
            while (*p >= '0' && *p <= '9')
                p++;
        } else {
            *o++ = *p++;
        }
    }
    *o = '\0';
    return out;
}

/* text against the golden file path (version masked); BIASLINT_UPDATE_GOLDEN=1 rewrites it. */
static inline void golden(const char *path, const char *text)
{
    char *got = unversion(text);
    if (getenv("BIASLINT_UPDATE_GOLDEN")) {
        FILE *fp = fopen(path, "wb");
        assert_non_null(fp);
        fputs(got, fp);
        fclose(fp);
    }
    size_t gl;
    char *want = slurp(path, &gl);
    if (!want) {
        print_error("no golden file %s (run with BIASLINT_UPDATE_GOLDEN=1 once, then review it)\n", path);
        fail();
    }
    if (strcmp(got, want) != 0) {
        /* the first differing line, for the log */
        const char *a = got, *b = want;
        unsigned line = 1;
        while (*a && *a == *b) {
            line += *a == '\n';
            a++;
            b++;
        }
        print_error("%s differs from what the writer gives, first at line %u\n", path, line);
        fail();
    }
    free(want);
    free(got);
}

#endif
