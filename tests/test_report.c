/* test_report: engineering notation, the writer table, the text report against a golden file, the
 * JSON report through a strict validator written here (keys, nulls for absent values, escapes,
 * numbers that read back exactly), write errors, and linear time on many rows. The design, the
 * dump records and the joined rows are built by hand; findings come from chk_run. */
#include "testutil.h"

#include "check.h"
#include "report.h"

/* ---- rep_eng ---- */

static const struct {
    double v;
    const char *unit, *want;
} eng_rows[] = {
    {1.23e-5, "A", "12.3uA"}, {NAN, "A", "-"},        {0.0, "V", "0V"},          {999.7, "V", "1kV"},
    {0.0012, "", "1.2m"},     {-0.012, "V", "-12mV"}, {1e-15, "F", "1fF"},       {2.2814e9, "Hz", "2.28GHz"},
    {1e30, "", "1e+30"},      {6.6667, "/V", "6.67/V"}, {73.333, "", "73.3"},    {100.0, "", "100"},
    {0.9995, "", "1"},        {1e-3, "", "1m"},       {1.0, "V", "1V"},          {12e-6, "A", "12uA"},
    {INFINITY, "", "inf"},    {-2.5e-12, "A", "-2.5pA"}, {4.60419e-15, "F", "4.6fF"}, {999.4999, "", "999"},
    {1e-24, "", "1y"},        {123456.0, "", "123k"}, {0.3, "V", "300mV"},       {9.996e-7, "A", "1uA"}, {9.994e-7, "A", "999nA"},
    {1.5e-4, "S", "150uS"},   {-0.0, "V", "0V"},      {5e-300, "", "5e-300"},
};

static void test_eng(void **state)
{
    (void)state;
    char buf[32];
    for (size_t i = 0; i < sizeof eng_rows / sizeof eng_rows[0]; i++) {
        rep_eng(eng_rows[i].v, eng_rows[i].unit, buf, sizeof buf);
        if (strcmp(buf, eng_rows[i].want) != 0) {
            print_error("rep_eng(%.17g, \"%s\") = \"%s\", expected \"%s\"\n", eng_rows[i].v, eng_rows[i].unit, buf,
                        eng_rows[i].want);
            fail();
        }
    }
    /* a short buffer is cut, never overrun */
    char small[5];
    memset(small, 'z', sizeof small);
    rep_eng(1.23e-5, "A", small, 4);
    assert_int_equal(small[4], 'z');
    assert_int_equal(strlen(small), 3);
    assert_ptr_equal(rep_eng(1.0, NULL, buf, sizeof buf), buf);
    assert_string_equal(buf, "1");
}

static void test_lookup(void **state)
{
    (void)state;
    assert_ptr_equal(rep_lookup("text"), &rep_text_writer);
    assert_ptr_equal(rep_lookup("json"), &rep_json_writer);
    assert_null(rep_lookup("xml"));
    assert_null(rep_lookup(""));
    assert_null(rep_lookup(NULL));
}

/* ---- the scenario: an invented two-stage amplifier (demo data of our own) ---- */

#define NDEV 6

typedef struct {
    Design ds;
    SrcFile files[2];
    SrcFile *filep[2];
    Card cards[NDEV];
    Device devs[NDEV];
    Model models[3];
    OpRecord recs[NDEV + 1];
    Row rows[NDEV];
    const OpRecord *orphans[1];
    OpTable op;
    Joined j;
    Findings f;
    RuleSet *rs;
    DiagList d;
    ReportCtx ctx;
} Sc;

static OpRecord rec(const char *name, OpFamily fam, uint32_t line)
{
    OpRecord r;
    memset(&r, 0, sizeof r);
    r.name = name;
    r.family = fam;
    r.loc = (SrcLoc){"amp.log", line, 1};
    for (int q = 0; q < OPQ_COUNT; q++)
        r.q[q] = NAN;
    return r;
}

static void scenario(Sc *s)
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
    s->models[0] = (Model){.name = "nch", .type = MOS_NMOS, .level = 14, .cgso = NAN, .cgdo = NAN, .cgbo = NAN};
    s->models[1] = (Model){.name = "pch", .type = MOS_PMOS, .level = 14, .cgso = 2e-10, .cgdo = 2e-10, .cgbo = NAN};
    s->models[2] = (Model){.name = "n1", .type = MOS_NMOS, .level = 1, .cgso = NAN, .cgdo = NAN, .cgbo = NAN};
    static const struct {
        const char *name;
        int model;
        double w, l, m, nf;
        uint32_t file, line;
    } dv[NDEV] = {
        {"x1.m1", 0, 2e-6, 0.5e-6, 1, 1, 1, 4},   {"x1.m2", 1, 4e-6, 0.5e-6, 1, 2, 1, 5},
        {"x1.m3", 0, 2e-6, 0.5e-6, 2, 1, 1, 6},   {"x1.m4", 1, 8e-6, 1e-6, 1, 1, 1, 7},
        {"mb5", 2, 1e-6, 1e-6, 4, 1, 0, 12},      {"mtail_with_a_long_name", 0, 10e-6, 1e-6, 1, 1, 0, 13},
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

    OpRecord *r = s->recs;
    /* x1.m1: moderate inversion, 15 /V */
    r[0] = rec("x1.m1", OPFAM_BSIM, 10);
    r[0].q[OPQ_ID] = 1e-5, r[0].q[OPQ_GM] = 1.5e-4, r[0].q[OPQ_GDS] = 3e-6, r[0].q[OPQ_VGS] = 0.6;
    r[0].q[OPQ_VDS] = 0.5, r[0].q[OPQ_VBS] = 0, r[0].q[OPQ_VTH] = 0.45, r[0].q[OPQ_VDSAT] = 0.12;
    r[0].q[OPQ_CGG] = 2e-15;
    /* x1.m2: PMOS written with drain and source swapped, strong inversion */
    r[1] = rec("x1.m2", OPFAM_BSIM, 11);
    r[1].q[OPQ_ID] = 5e-5, r[1].q[OPQ_GM] = 4e-4, r[1].q[OPQ_GDS] = 5e-6, r[1].q[OPQ_VGS] = -0.2;
    r[1].q[OPQ_VDS] = -0.6, r[1].q[OPQ_VBS] = -0.6, r[1].q[OPQ_VTH] = 0.35, r[1].q[OPQ_VDSAT] = 0.2;
    r[1].q[OPQ_CGG] = 4.5e-15;
    /* x1.m3: 12 mV from leaving saturation, weak gain */
    r[2] = rec("x1.m3", OPFAM_BSIM, 12);
    r[2].q[OPQ_ID] = 2e-5, r[2].q[OPQ_GM] = 2.4e-4, r[2].q[OPQ_GDS] = 3e-5, r[2].q[OPQ_VGS] = 0.55;
    r[2].q[OPQ_VDS] = 0.232, r[2].q[OPQ_VBS] = 0, r[2].q[OPQ_VTH] = 0.42, r[2].q[OPQ_VDSAT] = 0.22;
    r[2].q[OPQ_CGG] = 3e-15;
    /* x1.m4: no record */
    /* mb5: level 1, m = 4, Meyer capacitances (the ngspice numbers of check-values.md section 5, x4) */
    r[4] = rec("mb5", OPFAM_MOS1, 20);
    r[4].q[OPQ_ID] = 3.96e-5, r[4].q[OPQ_GM] = 2.64e-4, r[4].q[OPQ_GDS] = 3.6e-6, r[4].q[OPQ_VGS] = 0.8;
    r[4].q[OPQ_VDS] = 1.0, r[4].q[OPQ_VBS] = 0, r[4].q[OPQ_VON] = 0.5, r[4].q[OPQ_VDSAT] = 0.3;
    r[4].q[OPQ_CGS] = 1.841676e-14, r[4].q[OPQ_CGD] = 0, r[4].q[OPQ_CGB] = 0;
    /* mtail: off, and no vdsat in the dump */
    r[5] = rec("mtail_with_a_long_name", OPFAM_BSIM, 21);
    r[5].q[OPQ_ID] = 3e-13, r[5].q[OPQ_GM] = 1e-11, r[5].q[OPQ_GDS] = 1e-12, r[5].q[OPQ_VGS] = 0.0;
    r[5].q[OPQ_VDS] = 0.9, r[5].q[OPQ_VBS] = 0, r[5].q[OPQ_VTH] = 0.45;
    /* a record for a device the netlist does not have */
    r[6] = rec("x9.m1", OPFAM_BSIM, 22);
    r[6].q[OPQ_ID] = 1e-6;
    s->orphans[0] = &r[6];

    for (int i = 0; i < NDEV; i++) {
        Row *row = &s->rows[i];
        row->dev = &s->devs[i];
        row->op = i == 3 ? NULL : &r[i];
        fig_normalize(row->op, row->dev->type, &row->fig);
        if (row->op) {
            fig_add_overlap(&row->fig, row->dev);
            fig_derive(&row->fig, row->dev, rule_bands(s->rs, row->dev, NULL));
            s->j.nmatched++;
        }
    }
    s->j.rows = s->rows;
    s->j.n = NDEV;
    s->j.orphans = s->orphans;
    s->j.norphans = 1;
    s->j.overlap = 1;
    assert_int_equal(chk_run(s->rs, &s->ds, &s->j, &s->f), ERR_OK);
    s->op.format = OPFMT_SHOW;
    s->ctx = (ReportCtx){.design = &s->ds, .op = &s->op, .joined = &s->j, .findings = &s->f, .rules = s->rs,
                         .netlist_path = "amp.cir", .op_path = "amp.log", .fail_level = SEV_WARNING, .color = 0};
}

static void scenario_free(Sc *s)
{
    chk_free(&s->f);
    rule_free(s->rs);
    diag_free(&s->d);
}

/* Writes with w into memory; returns the text (malloc'd) and its status through *rc. */
static char *render(const ReportWriter *w, const ReportCtx *c, int *rc, size_t *len)
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

static char *slurp(const char *path, size_t *len)
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

/* Replaces the version string by @VERSION@ and the line numbers of the compiled-in defaults by N,
   so that a release or a new comment in rules/defaults.rules does not change the golden file (the
   origins themselves are checked in test_check and test_rules). */
static char *unversion(const char *text)
{
    const char *v = BIASLINT_VERSION;
    size_t vl = strlen(v), n = strlen(text);
    char *out = malloc(n + 16), *o = out;
    assert_non_null(out);
    int done = 0;
    for (const char *p = text; *p;) {
        if (!done && strncmp(p, v, vl) == 0) {
            memcpy(o, "@VERSION@", 9);
            o += 9;
            p += vl;
            done = 1;
        } else if (strncmp(p, "<defaults>:", 11) == 0) {
            memcpy(o, "<defaults>:N", 12);
            o += 12;
            p += 11;
            while (*p >= '0' && *p <= '9')
                p++;
        } else {
            *o++ = *p++;
        }
    }
    *o = '\0';
    return out;
}

#define GOLDEN "fixtures/report/amp.txt"

static void test_text_golden(void **state)
{
    (void)state;
    Sc s;
    scenario(&s);
    int rc;
    size_t n;
    char *text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    char *got = unversion(text);
    if (getenv("BIASLINT_UPDATE_GOLDEN")) {
        FILE *fp = fopen(GOLDEN, "wb");
        assert_non_null(fp);
        fputs(got, fp);
        fclose(fp);
    }
    size_t gl;
    char *want = slurp(GOLDEN, &gl);
    assert_non_null(want);
    if (strcmp(got, want) != 0) {
        print_error("text report differs from %s; got:\n%s\n", GOLDEN, got);
        fail();
    }
    assert_null(strchr(text, '\033')); /* no colour unless asked */
    free(want);
    free(got);
    free(text);
    scenario_free(&s);
}

static void test_text_details(void **state)
{
    (void)state;
    Sc s;
    scenario(&s);
    int rc;
    size_t n;
    s.ctx.color = 1;
    char *text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    assert_non_null(strstr(text, "\033[1;31mErrors (1)\033[0m"));
    free(text);
    /* fail level error: one finding at or above it */
    s.ctx.color = 0;
    s.ctx.fail_level = SEV_ERROR;
    text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_non_null(strstr(text, "fail level error: 1 at or above it, FAIL\n"));
    free(text);
    /* no findings at all */
    Findings none;
    memset(&none, 0, sizeof none);
    s.ctx.findings = &none;
    text = render(&rep_text_writer, &s.ctx, &rc, &n);
    assert_non_null(strstr(text, "No findings."));
    assert_non_null(strstr(text, "none at or above it, pass\n"));
    free(text);
    scenario_free(&s);
}

/* ---- a strict JSON reader (RFC 8259), enough to validate and inspect the report ---- */

typedef enum { J_NULL, J_BOOL, J_NUM, J_STR, J_ARR, J_OBJ } JType;
typedef struct JVal JVal;
struct JVal {
    JType t;
    int b;
    double num;
    char *str;      /* decoded, NUL-terminated (J_STR) */
    char **keys;    /* J_OBJ */
    JVal **items;   /* J_ARR, J_OBJ */
    size_t n, cap;
};

typedef struct {
    const char *p, *end;
    int depth;
} JIn;

static void jfree(JVal *v)
{
    if (!v)
        return;
    for (size_t i = 0; i < v->n; i++) {
        jfree(v->items[i]);
        if (v->keys)
            free(v->keys[i]);
    }
    free(v->items);
    free(v->keys);
    free(v->str);
    free(v);
}

static void ws(JIn *in)
{
    while (in->p < in->end && (*in->p == ' ' || *in->p == '\t' || *in->p == '\n' || *in->p == '\r'))
        in->p++;
}

static int hexval(char c)
{
    return c >= '0' && c <= '9' ? c - '0' : c >= 'a' && c <= 'f' ? c - 'a' + 10 : c >= 'A' && c <= 'F' ? c - 'A' + 10 : -1;
}

static int hex4(JIn *in, unsigned *u)
{
    if (in->end - in->p < 4)
        return -1;
    *u = 0;
    for (int k = 0; k < 4; k++) {
        int h = hexval(in->p[k]);
        if (h < 0)
            return -1;
        *u = *u * 16 + (unsigned)h;
    }
    in->p += 4;
    return 0;
}

static void put_utf8(char **o, unsigned cp)
{
    char *q = *o;
    if (cp < 0x80) {
        *q++ = (char)cp;
    } else if (cp < 0x800) {
        *q++ = (char)(0xc0 | cp >> 6);
        *q++ = (char)(0x80 | (cp & 0x3f));
    } else if (cp < 0x10000) {
        *q++ = (char)(0xe0 | cp >> 12);
        *q++ = (char)(0x80 | (cp >> 6 & 0x3f));
        *q++ = (char)(0x80 | (cp & 0x3f));
    } else {
        *q++ = (char)(0xf0 | cp >> 18);
        *q++ = (char)(0x80 | (cp >> 12 & 0x3f));
        *q++ = (char)(0x80 | (cp >> 6 & 0x3f));
        *q++ = (char)(0x80 | (cp & 0x3f));
    }
    *o = q;
}

/* Raw bytes must be valid UTF-8 (no overlong forms, no surrogates). Returns the length or 0. */
static size_t utf8_len(const unsigned char *s, const unsigned char *end)
{
    unsigned c = s[0];
    size_t n = c >= 0xc2 && c <= 0xdf ? 2 : c >= 0xe0 && c <= 0xef ? 3 : c >= 0xf0 && c <= 0xf4 ? 4 : 0;
    if (!n || (size_t)(end - s) < n)
        return 0;
    for (size_t k = 1; k < n; k++)
        if ((s[k] & 0xc0) != 0x80)
            return 0;
    if ((c == 0xe0 && s[1] < 0xa0) || (c == 0xed && s[1] >= 0xa0) || (c == 0xf0 && s[1] < 0x90) ||
        (c == 0xf4 && s[1] >= 0x90))
        return 0;
    return n;
}

static char *jstring(JIn *in)
{
    if (in->p >= in->end || *in->p != '"')
        return NULL;
    in->p++;
    /* decoded text is never longer than its source: measure up to the closing quote first */
    const char *q = in->p;
    while (q < in->end && *q != '"')
        q += *q == '\\' && q + 1 < in->end ? 2 : 1;
    char *out = malloc((size_t)(q - in->p) + 1), *o = out;
    assert_non_null(out);
    while (in->p < in->end && *in->p != '"') {
        unsigned char c = (unsigned char)*in->p;
        if (c < 0x20)
            goto bad; /* control characters must be escaped */
        if (c == '\\') {
            in->p++;
            if (in->p >= in->end)
                goto bad;
            char e = *in->p++;
            unsigned u;
            switch (e) {
            case '"': *o++ = '"'; break;
            case '\\': *o++ = '\\'; break;
            case '/': *o++ = '/'; break;
            case 'b': *o++ = '\b'; break;
            case 'f': *o++ = '\f'; break;
            case 'n': *o++ = '\n'; break;
            case 'r': *o++ = '\r'; break;
            case 't': *o++ = '\t'; break;
            case 'u':
                if (hex4(in, &u))
                    goto bad;
                if (u >= 0xd800 && u < 0xdc00) {
                    unsigned lo;
                    if (in->end - in->p < 6 || in->p[0] != '\\' || in->p[1] != 'u')
                        goto bad;
                    in->p += 2;
                    if (hex4(in, &lo) || lo < 0xdc00 || lo > 0xdfff)
                        goto bad;
                    u = 0x10000 + ((u - 0xd800) << 10) + (lo - 0xdc00);
                } else if (u >= 0xdc00 && u < 0xe000) {
                    goto bad;
                }
                put_utf8(&o, u);
                break;
            default:
                goto bad;
            }
            continue;
        }
        if (c >= 0x80) {
            size_t n = utf8_len((const unsigned char *)in->p, (const unsigned char *)in->end);
            if (!n)
                goto bad;
            memcpy(o, in->p, n);
            o += n;
            in->p += n;
            continue;
        }
        *o++ = (char)c;
        in->p++;
    }
    if (in->p >= in->end)
        goto bad;
    in->p++;
    *o = '\0';
    return out;
bad:
    free(out);
    return NULL;
}

static JVal *jvalue(JIn *in);

static JVal *jnew(JType t)
{
    JVal *v = calloc(1, sizeof *v);
    assert_non_null(v);
    v->t = t;
    return v;
}

static int lit(JIn *in, const char *w)
{
    size_t n = strlen(w);
    if ((size_t)(in->end - in->p) < n || strncmp(in->p, w, n) != 0)
        return 0;
    in->p += n;
    return 1;
}

static JVal *jnumber(JIn *in)
{
    const char *s = in->p;
    if (in->p < in->end && *in->p == '-')
        in->p++;
    if (in->p >= in->end)
        return NULL;
    if (*in->p == '0')
        in->p++;
    else if (*in->p >= '1' && *in->p <= '9')
        while (in->p < in->end && *in->p >= '0' && *in->p <= '9')
            in->p++;
    else
        return NULL;
    if (in->p < in->end && *in->p == '.') {
        in->p++;
        if (in->p >= in->end || !(*in->p >= '0' && *in->p <= '9'))
            return NULL;
        while (in->p < in->end && *in->p >= '0' && *in->p <= '9')
            in->p++;
    }
    if (in->p < in->end && (*in->p == 'e' || *in->p == 'E')) {
        in->p++;
        if (in->p < in->end && (*in->p == '+' || *in->p == '-'))
            in->p++;
        if (in->p >= in->end || !(*in->p >= '0' && *in->p <= '9'))
            return NULL;
        while (in->p < in->end && *in->p >= '0' && *in->p <= '9')
            in->p++;
    }
    size_t n = (size_t)(in->p - s);
    char *tmp = malloc(n + 1);
    assert_non_null(tmp);
    memcpy(tmp, s, n);
    tmp[n] = '\0';
    JVal *v = jnew(J_NUM);
    v->num = strtod(tmp, NULL);
    free(tmp);
    return v;
}

static void jpush(JVal *v, char *key, JVal *item)
{
    if (v->n == v->cap) {
        v->cap = v->cap ? v->cap * 2 : 8;
        v->items = realloc(v->items, v->cap * sizeof *v->items);
        assert_non_null(v->items);
        if (v->t == J_OBJ) {
            v->keys = realloc(v->keys, v->cap * sizeof *v->keys);
            assert_non_null(v->keys);
        }
    }
    if (v->t == J_OBJ)
        v->keys[v->n] = key;
    v->items[v->n++] = item;
}

static JVal *jvalue(JIn *in)
{
    ws(in);
    if (in->p >= in->end || ++in->depth > 64)
        return NULL;
    JVal *v = NULL;
    char c = *in->p;
    if (c == '{' || c == '[') {
        int obj = c == '{';
        v = jnew(obj ? J_OBJ : J_ARR);
        in->p++;
        ws(in);
        if (in->p < in->end && *in->p == (obj ? '}' : ']')) {
            in->p++;
        } else {
            for (;;) {
                char *key = NULL;
                if (obj) {
                    ws(in);
                    key = jstring(in);
                    if (!key)
                        goto bad;
                    for (size_t k = 0; k < v->n; k++)
                        if (!strcmp(v->keys[k], key)) {
                            free(key);
                            goto bad; /* duplicate key */
                        }
                    ws(in);
                    if (in->p >= in->end || *in->p != ':') {
                        free(key);
                        goto bad;
                    }
                    in->p++;
                }
                JVal *item = jvalue(in);
                if (!item) {
                    free(key);
                    goto bad;
                }
                jpush(v, key, item);
                ws(in);
                if (in->p < in->end && *in->p == ',') {
                    in->p++;
                    continue;
                }
                if (in->p < in->end && *in->p == (obj ? '}' : ']')) {
                    in->p++;
                    break;
                }
                goto bad;
            }
        }
    } else if (c == '"') {
        char *s = jstring(in);
        if (!s)
            return NULL;
        v = jnew(J_STR);
        v->str = s;
    } else if (lit(in, "null")) {
        v = jnew(J_NULL);
    } else if (lit(in, "true")) {
        v = jnew(J_BOOL);
        v->b = 1;
    } else if (lit(in, "false")) {
        v = jnew(J_BOOL);
    } else {
        v = jnumber(in);
    }
    in->depth--;
    return v;
bad:
    jfree(v);
    return NULL;
}

/* The whole text is one JSON value, or NULL. */
static JVal *jparse(const char *text, size_t len)
{
    JIn in = {text, text + len, 0};
    JVal *v = jvalue(&in);
    if (!v)
        return NULL;
    ws(&in);
    if (in.p != in.end) {
        jfree(v);
        return NULL;
    }
    return v;
}

static const JVal *jget(const JVal *o, const char *key)
{
    if (!o || o->t != J_OBJ)
        return NULL;
    for (size_t i = 0; i < o->n; i++)
        if (!strcmp(o->keys[i], key))
            return o->items[i];
    return NULL;
}

static void has_keys(const JVal *o, const char *const *keys)
{
    assert_non_null(o);
    assert_int_equal(o->t, J_OBJ);
    for (size_t i = 0; keys[i]; i++)
        if (!jget(o, keys[i])) {
            print_error("key \"%s\" is missing\n", keys[i]);
            fail();
        }
}

static void test_validator(void **state)
{
    (void)state;
    /* the validator itself must refuse what is not JSON */
    static const char *const bad[] = {
        "", "{", "{\"a\":1,}", "[1,]", "{\"a\" 1}", "{'a':1}", "01", "1.", ".5", "-", "1e", "+1",
        "\"\x01\"", "\"\\x\"", "\"\\ud800\"", "\"\xff\"", "\"\xc0\xaf\"", "nul", "NaN", "{\"a\":1,\"a\":2}", "[1] 2",
        "\"abc", "{\"a\":inf}",
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        JVal *v = jparse(bad[i], strlen(bad[i]));
        if (v) {
            print_error("accepted: %s\n", bad[i]);
            jfree(v);
            fail();
        }
    }
    static const char *const good[] = {
        "0", "-0", "1e-05", "[]", "{}", "\"\\u00b5\\ud83d\\ude00\"", "{\"a\":[null,true,false,1.5E+3]}", " \"\xc2\xb5\" ",
    };
    for (size_t i = 0; i < sizeof good / sizeof good[0]; i++) {
        JVal *v = jparse(good[i], strlen(good[i]));
        assert_non_null(v);
        jfree(v);
    }
}

static const char *const device_keys[] = {
    "name", "model", "type", "w", "l", "m", "nf", "file", "line", "id", "gm", "gds", "vgs", "vds", "vsb",
    "vth", "vdsat", "cgg", "gm_id", "id_w", "gain", "ft", "vov", "margin", "region", "swapped", NULL,
};
static const char *const finding_keys[] = {"device", "check", "severity", "value", "limit", "message",
                                           "file", "line", "rule", NULL};
static const char *const summary_keys[] = {"devices", "errors", "warnings", "infos", "matched",
                                           "without_data", "orphans", NULL};
static const char *const top_keys[] = {"tool", "version", "schema", "netlist", "op", "devices",
                                       "findings", "summary", NULL};

static void test_json(void **state)
{
    (void)state;
    Sc s;
    scenario(&s);
    int rc;
    size_t n;
    char *text = render(&rep_json_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    JVal *root = jparse(text, n);
    if (!root) {
        print_error("not valid JSON:\n%s\n", text);
        fail();
    }
    has_keys(root, top_keys);
    assert_string_equal(jget(root, "tool")->str, "biaslint");
    assert_string_equal(jget(root, "version")->str, BIASLINT_VERSION);
    assert_int_equal(jget(root, "schema")->num, 1);
    assert_string_equal(jget(root, "netlist")->str, "amp.cir");
    assert_string_equal(jget(root, "op")->str, "amp.log");

    const JVal *devs = jget(root, "devices");
    assert_int_equal(devs->t, J_ARR);
    assert_int_equal(devs->n, NDEV);
    for (size_t i = 0; i < devs->n; i++)
        has_keys(devs->items[i], device_keys);
    const JVal *m1 = devs->items[0];
    assert_string_equal(jget(m1, "name")->str, "x1.m1");
    assert_string_equal(jget(m1, "type")->str, "nmos");
    assert_string_equal(jget(m1, "file")->str, "lib/stage.inc");
    assert_int_equal(jget(m1, "line")->num, 4);
    /* numbers read back to the very same double */
    assert_true(jget(m1, "id")->num == s.rows[0].fig.id);
    assert_true(jget(m1, "gm_id")->num == s.rows[0].fig.gm_id);
    assert_true(jget(m1, "ft")->num == s.rows[0].fig.ft);
    assert_true(jget(m1, "w")->num == 2e-6);
    assert_string_equal(jget(m1, "region")->str, "moderate");
    assert_int_equal(jget(m1, "swapped")->t, J_BOOL);
    assert_false(jget(m1, "swapped")->b);
    /* the swapped PMOS */
    const JVal *m2 = devs->items[1];
    assert_true(jget(m2, "swapped")->b);
    assert_string_equal(jget(m2, "type")->str, "pmos");
    assert_true(jget(m2, "vds")->num == 0.6);
    assert_true(jget(m2, "nf")->num == 2);
    /* the device without data: every figure null, region unknown */
    const JVal *m4 = devs->items[3];
    static const char *const figs[] = {"id", "gm", "gds", "vgs", "vds", "vsb", "vth", "vdsat", "cgg",
                                       "gm_id", "id_w", "gain", "ft", "vov", "margin", NULL};
    for (size_t k = 0; figs[k]; k++)
        if (jget(m4, figs[k])->t != J_NULL) {
            print_error("x1.m4 %s is not null\n", figs[k]);
            fail();
        }
    assert_string_equal(jget(m4, "region")->str, "unknown");
    assert_true(jget(m4, "w")->num == 8e-6);
    /* the off device has no vdsat: vdsat and margin null, the rest present */
    const JVal *mt = devs->items[5];
    assert_int_equal(jget(mt, "vdsat")->t, J_NULL);
    assert_int_equal(jget(mt, "margin")->t, J_NULL);
    assert_int_equal(jget(mt, "id")->t, J_NUM);
    assert_string_equal(jget(mt, "region")->str, "off");
    assert_int_equal(jget(mt, "model")->t, J_STR);
    assert_int_equal(jget(mt, "cell")->t, J_NULL);

    const JVal *fs = jget(root, "findings");
    assert_int_equal(fs->t, J_ARR);
    assert_int_equal(fs->n, s.f.n);
    for (size_t i = 0; i < fs->n; i++) {
        has_keys(fs->items[i], finding_keys);
        assert_string_equal(jget(fs->items[i], "message")->str, s.f.items[i].message);
    }
    const JVal *f0 = fs->items[0];
    assert_string_equal(jget(f0, "severity")->str, "error");
    assert_string_equal(jget(f0, "check")->str, "sat-margin");
    assert_string_equal(jget(f0, "device")->str, "x1.m3");
    assert_true(jget(f0, "limit")->num == 0.05);
    assert_int_equal(jget(f0, "line")->num, 6);
    assert_non_null(strstr(jget(f0, "rule")->str, "<defaults>:"));
    /* the no-data finding: value and limit null */
    int saw_nodata = 0;
    for (size_t i = 0; i < fs->n; i++)
        if (!strcmp(jget(fs->items[i], "check")->str, "no-data")) {
            saw_nodata = 1;
            assert_int_equal(jget(fs->items[i], "value")->t, J_NULL);
            assert_int_equal(jget(fs->items[i], "limit")->t, J_NULL);
        }
    assert_true(saw_nodata);

    const JVal *sum = jget(root, "summary");
    has_keys(sum, summary_keys);
    assert_int_equal(jget(sum, "devices")->num, NDEV);
    assert_int_equal(jget(sum, "errors")->num, s.f.count[SEV_ERROR]);
    assert_int_equal(jget(sum, "warnings")->num, s.f.count[SEV_WARNING]);
    assert_int_equal(jget(sum, "infos")->num, s.f.count[SEV_INFO]);
    assert_int_equal(jget(sum, "matched")->num, 5);
    assert_int_equal(jget(sum, "without_data")->num, 1);
    assert_int_equal(jget(sum, "orphans")->num, 1);
    assert_true(jget(sum, "failed")->b);
    jfree(root);
    free(text);
    scenario_free(&s);
}

/* Names with quotes, backslashes, control characters, UTF-8 and a byte that is not UTF-8. */
static void test_json_escapes(void **state)
{
    (void)state;
    Sc s;
    scenario(&s);
    s.devs[0].name = "x\"q\\b\t\x01\xc2\xb5\xff/z";
    s.ctx.netlist_path = NULL; /* absent: null */
    int rc;
    size_t n;
    char *text = render(&rep_json_writer, &s.ctx, &rc, &n);
    assert_int_equal(rc, ERR_OK);
    assert_non_null(strstr(text, "\"x\\\"q\\\\b\\t\\u0001\xc2\xb5\\ufffd/z\""));
    JVal *root = jparse(text, n);
    assert_non_null(root);
    assert_string_equal(jget(jget(root, "devices")->items[0], "name")->str, "x\"q\\b\t\x01\xc2\xb5\xef\xbf\xbd/z");
    assert_int_equal(jget(root, "netlist")->t, J_NULL);
    jfree(root);
    free(text);
    scenario_free(&s);
}

static void test_write_errors(void **state)
{
    (void)state;
    Sc s;
    scenario(&s);
    FILE *fp = fopen("/dev/full", "w");
    if (!fp)
        skip();
    assert_int_equal(rep_json_writer.write(&s.ctx, fp), ERR_IO);
    fclose(fp);
    fp = fopen("/dev/full", "w");
    assert_non_null(fp);
    assert_int_equal(rep_text_writer.write(&s.ctx, fp), ERR_IO);
    fclose(fp);
    scenario_free(&s);
}

/* 200 000 rows through both writers: linear (a quadratic step would not finish); 20 000 of them
   validated and the table columns checked. */
static void many(Sc *s, size_t n, Row **rows, Joined *j, Findings *f, ReportCtx *c)
{
    *rows = malloc(n * sizeof **rows);
    assert_non_null(*rows);
    for (size_t i = 0; i < n; i++)
        (*rows)[i] = s->rows[i % NDEV];
    *j = s->j;
    j->rows = *rows;
    j->n = n;
    assert_int_equal(chk_run(s->rs, &s->ds, j, f), ERR_OK);
    *c = s->ctx;
    c->joined = j;
    c->findings = f;
}

static void test_many_rows(void **state)
{
    (void)state;
    Sc s;
    scenario(&s);
    Row *rows;
    Joined j;
    Findings f;
    ReportCtx c;
    many(&s, 200000, &rows, &j, &f, &c);
    FILE *fp = fopen("/dev/null", "w");
    assert_non_null(fp);
    assert_int_equal(rep_json_writer.write(&c, fp), ERR_OK);
    assert_int_equal(rep_text_writer.write(&c, fp), ERR_OK);
    fclose(fp);
    chk_free(&f);
    free(rows);

    many(&s, 20000, &rows, &j, &f, &c);
    int rc;
    size_t len;
    char *text = render(&rep_json_writer, &c, &rc, &len);
    assert_int_equal(rc, ERR_OK);
    JVal *root = jparse(text, len);
    assert_non_null(root);
    assert_int_equal(jget(root, "devices")->n, 20000);
    assert_int_equal(jget(root, "findings")->n, f.n);
    jfree(root);
    free(text);
    text = render(&rep_text_writer, &c, &rc, &len);
    assert_int_equal(rc, ERR_OK);
    /* every table row puts its region where the header says */
    const char *head = strstr(text, "\ndevice ");
    assert_non_null(head);
    head++;
    size_t regcol = (size_t)(strstr(head, "region") - head), rowsseen = 0;
    for (const char *line = strchr(head, '\n') + 1; *line != '\n'; line = strchr(line, '\n') + 1) {
        assert_int_equal(line[regcol - 1], ' ');
        assert_true(line[regcol] != ' ' && line[regcol] != '\n');
        rowsseen++;
    }
    assert_int_equal(rowsseen, 20000);
    free(text);
    chk_free(&f);
    free(rows);
    scenario_free(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_eng),
        cmocka_unit_test(test_lookup),
        cmocka_unit_test(test_text_golden),
        cmocka_unit_test(test_text_details),
        cmocka_unit_test(test_validator),
        cmocka_unit_test(test_json),
        cmocka_unit_test(test_json_escapes),
        cmocka_unit_test(test_write_errors),
        cmocka_unit_test(test_many_rows),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
