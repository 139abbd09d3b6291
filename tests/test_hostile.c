/* test_hostile: the guarantees of the "Bad input" section through the library, and the regression
 * tests of the bugs the fuzz targets (tests/fuzz) found.
 * - The annotation round trip on every netlist file under tests/ and netlists-demo/: for each file
 *   that loads, strip(annotate(x)) == strip(x) (== x when x has no annotation lines) byte for byte,
 *   and annotating the annotated file again gives the same bytes. The operating points fed to the
 *   annotation are arbitrary numbers (varied so that findings appear): the property checked is
 *   byte-exactness, which holds whatever the numbers.
 * - Limits: include depth, subcircuit nesting, expression height and the device count are
 *   settable, give located errors, and the device count is refused before expansion, in bounded time.
 * - Dump values: NaN, infinity, overflow and denormals, against the C library's strtod (C11 7.22.1.3;
 *   glibc rounds correctly) as the reference for the number conversion.
 * - Fuzz regressions: NUL bytes in quantity names and device names (show, raw, CSV); a recursive
 *   function nested deep enough to overflow the evaluator's stack; stray control
 *   bytes in a short netlist; characterization tables (a short last row, control bytes in header
 *   values, an interpolant that overshoots, a subnormal current). */
#include "testutil.h"

#include <dirent.h>
#include <errno.h>
#include <sys/stat.h>
#include <time.h>

#include "annotate.h"
#include "check.h"
#include "expr.h"
#include "join.h"
#include "lex.h"
#include "lut.h"
#include "netlist.h"
#include "opdump.h"
#include "rules.h"

/* ---- helpers --------------------------------------------------------------------------------- */

static const Diag *first_error(const DiagList *d)
{
    for (size_t i = 0; i < d->n; i++)
        if (d->items[i].sev == DIAG_ERROR)
            return &d->items[i];
    return NULL;
}

/* The first error is at file (suffix) line:col and says msg. col 0: any column. */
static void assert_error_at(const DiagList *d, const char *file, unsigned line, unsigned col, const char *msg)
{
    const Diag *g = first_error(d);
    if (!g) {
        print_error("no error; expected %s:%u:%u %s\n", file, line, col, msg);
        fail();
    }
    size_t fl = strlen(file), gl = g->loc.file ? strlen(g->loc.file) : 0;
    if (gl < fl || strcmp(g->loc.file + gl - fl, file) != 0 || g->loc.line != line || (col && g->loc.col != col) ||
        !strstr(g->msg, msg)) {
        print_error("got %s:%u:%u: %s\nexpected %s:%u:%u: ...%s...\n", g->loc.file ? g->loc.file : "(none)", g->loc.line,
                    g->loc.col, g->msg, file, line, col, msg);
        fail();
    }
}

static char *read_all(const char *path, size_t *len)
{
    FILE *fp = fopen(path, "rb");
    if (!fp)
        return NULL;
    Buf b = BUF_INIT;
    char chunk[65536];
    size_t n;
    while ((n = fread(chunk, 1, sizeof chunk, fp)) > 0)
        if (buf_append(&b, chunk, n) != ERR_OK)
            break;
    fclose(fp);
    *len = b.len;
    return b.data ? b.data : calloc(1, 1);
}

static int write_all(const char *path, const char *p, size_t n)
{
    FILE *fp = fopen(path, "wb");
    if (!fp)
        return -1;
    int bad = n && fwrite(p, 1, n, fp) != n;
    return fclose(fp) != 0 || bad ? -1 : 0;
}

/* ---- the annotation round trip on every netlist ----------------------------------------------- */

static char mirror_root[64];
static char **netlists;
static size_t nnetlists, capnetlists;

static int has_ext(const char *p, const char *ext)
{
    size_t n = strlen(p), e = strlen(ext);
    return n > e && strcmp(p + n - e, ext) == 0;
}

/* Copy the tree at src into dst (made here), regular files up to 4 MB, and list its netlists, so
 * that an annotated copy finds its includes where the original does. */
static void mirror(const char *src, const char *dst)
{
    assert_true(mkdir(dst, 0777) == 0 || errno == EEXIST);
    DIR *dir = opendir(src);
    assert_non_null(dir);
    struct dirent *e;
    while ((e = readdir(dir))) {
        if (e->d_name[0] == '.')
            continue; /* ., .., hidden files */
        char sp[1024], dp[1024];
        snprintf(sp, sizeof sp, "%s/%s", src, e->d_name);
        snprintf(dp, sizeof dp, "%s/%s", dst, e->d_name);
        struct stat st;
        if (lstat(sp, &st) != 0)
            continue;
        if (S_ISDIR(st.st_mode)) {
            mirror(sp, dp);
            continue;
        }
        if (!S_ISREG(st.st_mode) || st.st_size > 4 * 1024 * 1024)
            continue;
        size_t n;
        char *text = read_all(sp, &n);
        assert_non_null(text);
        assert_int_equal(write_all(dp, text, n), 0);
        free(text);
        if (has_ext(sp, ".cir") || has_ext(sp, ".sp") || has_ext(sp, ".inc") || has_ext(sp, ".lib"))
            assert_int_equal(BUF_PUSH(netlists, nnetlists, capnetlists, strdup(sp)), ERR_OK);
    }
    closedir(dir);
}

/* An op table with one record per device of ds, in memory (as op_read builds one from a file). */
static OpTable *synthetic_table(const Design *ds, DiagList *d)
{
    OpTable *t = calloc(1, sizeof *t);
    assert_non_null(t);
    arena_init(&t->arena);
    t->temp_c = NAN;
    t->file.path = strdup("synthetic.csv");
    t->file.text = strdup("");
    t->names = str_new(&t->arena);
    assert_non_null(t->names);
    for (size_t i = 0; i < ds->ndevs; i++) {
        const char *nm = ds->devs[i].simname ? ds->devs[i].simname : ds->devs[i].name; /* record name */
        OpRecord *r = op_add(t, nm, strlen(nm), (SrcLoc){t->file.path, (uint32_t)i + 2, 1}, true, d);
        assert_non_null(r);
        /* varied so that every region and some findings appear in the annotation */
        double q[][2] = {{OPQ_ID, i % 5 == 4 ? 1e-14 : 1e-5 * (double)(1 + i % 3)},
                         {OPQ_GM, 2e-4},
                         {OPQ_GDS, i % 7 == 3 ? 1e-4 : 1e-6},
                         {OPQ_VGS, 0.6},
                         {OPQ_VDS, i % 3 == 1 ? 0.05 : 0.9},
                         {OPQ_VBS, 0},
                         {OPQ_VTH, 0.4},
                         {OPQ_VDSAT, 0.15},
                         {OPQ_CGG, 1e-14}};
        for (size_t k = 0; k < sizeof q / sizeof q[0]; k++)
            assert_int_equal(op_set(t, r, (OpQty)q[k][0], q[k][1], r->loc, d), ERR_OK);
    }
    return t;
}

/* Annotate the netlist at path (loaded with nl_load) into out. ERR_OK, or the load's status. */
static int annotate_file(const char *path, const RuleSet *rs, Buf *out, Buf *orig)
{
    Design ds;
    DiagList d;
    diag_init(&d);
    int rc = nl_load(path, NULL, &ds, &d);
    if (rc != ERR_OK) {
        diag_free(&d);
        return rc;
    }
    const SrcFile *top = ds.files.files[0];
    if (orig)
        assert_int_equal(buf_append(orig, top->text, top->len), ERR_OK);
    OpTable *t = synthetic_table(&ds, &d);
    Joined jn;
    Findings fs;
    memset(&jn, 0, sizeof jn);
    memset(&fs, 0, sizeof fs);
    JoinOptions jo = {0, 0.5, 0};
    if (ds.ndevs) {
        assert_int_equal(join_run(&ds, t, rs, &jo, &jn, &d), ERR_OK);
        assert_int_equal(chk_run(rs, &ds, &jn, &fs), ERR_OK);
    }
    assert_int_equal(ann_render(&ds, &jn, &fs, out), ERR_OK);
    chk_free(&fs);
    join_free(&jn);
    op_free(t);
    nl_free(&ds);
    diag_free(&d);
    return ERR_OK;
}

static int has_mark(const char *p, size_t n)
{
    for (size_t i = 0; i + 1 < n; i++)
        if (p[i] == ANN_MARK[0] && p[i + 1] == ANN_MARK[1])
            return 1;
    return 0;
}

static int same(const Buf *a, const Buf *b)
{
    return a->len == b->len && (a->len == 0 || memcmp(a->data, b->data, a->len) == 0);
}

static void test_round_trip_every_netlist(void **state)
{
    (void)state;
    snprintf(mirror_root, sizeof mirror_root, "/tmp/biaslint-mirror-XXXXXX");
    assert_non_null(mkdtemp(mirror_root));
    /* tests/ is the working folder; the paths are kept as the reader is given them */
    char dst[128];
    snprintf(dst, sizeof dst, "%s/tests", mirror_root);
    mirror(".", dst);
    snprintf(dst, sizeof dst, "%s/netlists-demo", mirror_root);
    mirror("../netlists-demo", dst);
    assert_true(nnetlists >= 30);

    DiagList d;
    diag_init(&d);
    RuleSet *rs = rule_new_defaults(&d);
    assert_non_null(rs);
    size_t loaded = 0, with_devices = 0;
    int bad = 0;
    for (size_t i = 0; i < nnetlists; i++) {
        const char *path = netlists[i];
        Buf ann = BUF_INIT, orig = BUF_INIT, s1 = BUF_INIT, s2 = BUF_INIT, ann2 = BUF_INIT;
        if (annotate_file(path, rs, &ann, &orig) != ERR_OK)
            goto next; /* an error fixture: its errors are tested elsewhere */
        loaded++;
        if (ann.len != orig.len)
            with_devices++;
        assert_int_equal(ann_strip(orig.data ? orig.data : "", orig.len, &s1), ERR_OK);
        assert_int_equal(ann_strip(ann.data ? ann.data : "", ann.len, &s2), ERR_OK);
        if (!same(&s1, &s2)) {
            print_error("%s: strip(annotate(x)) != strip(x)\n", path);
            bad++;
        }
        if (!has_mark(orig.data ? orig.data : "", orig.len) && !same(&s2, &orig)) {
            print_error("%s: strip(annotate(x)) != x\n", path);
            bad++;
        }
        /* the annotated text in the mirror, where the original's includes are, annotated again */
        char mp[1200]; /* "./x/y.cir" -> <mirror>/tests/./x/y.cir, "../netlists-demo/z" -> <mirror>/tests/../netlists-demo/z */
        snprintf(mp, sizeof mp, "%s/tests/%s", mirror_root, path);
        assert_int_equal(write_all(mp, ann.data ? ann.data : "", ann.len), 0);
        if (annotate_file(mp, rs, &ann2, NULL) != ERR_OK || !same(&ann, &ann2)) {
            print_error("%s: annotating the annotated file changes it (%zu then %zu bytes)\n", path, ann.len, ann2.len);
            bad++;
        }
    next:
        buf_free(&ann);
        buf_free(&orig);
        buf_free(&s1);
        buf_free(&s2);
        buf_free(&ann2);
        free(netlists[i]);
    }
    free(netlists);
    rule_free(rs);
    diag_free(&d);
    print_message("round trip: %zu of %zu netlist files loaded, %zu with MOSFET cards\n", loaded, nnetlists,
                  with_devices);
    assert_int_equal(bad, 0);
    assert_true(loaded >= 25);
    assert_true(with_devices >= 15);
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", mirror_root);
    assert_int_equal(system(cmd), 0);
}

/* ---- limits ---------------------------------------------------------------------------------- */

static void test_include_depth_is_settable(void **state)
{
    (void)state;
    char name[32], text[64];
    char *top = NULL;
    for (int i = 5; i >= 1; i--) {
        snprintf(name, sizeof name, "lim_inc%d.inc", i);
        snprintf(text, sizeof text, i == 5 ? "* last\n" : ".include lim_inc%d.inc\n", i + 1);
        free(tu_tmpfile(name, text, strlen(text)));
    }
    top = TU_TMPFILE("lim_top.cir", "title\n.include lim_inc1.inc\n.end\n");
    Design ds;
    DiagList d;
    diag_init(&d);
    NlOptions o = {.max_include_depth = 3};
    assert_int_equal(nl_load(top, &o, &ds, &d), ERR_INPUT);
    assert_error_at(&d, "lim_inc3.inc", 1, 10, "more than 3 levels");
    diag_free(&d);
    diag_init(&d);
    o.max_include_depth = 5;
    assert_int_equal(nl_load(top, &o, &ds, &d), ERR_OK); /* five levels pass a limit of five */
    nl_free(&ds);
    diag_free(&d);
    free(top);
}

static char *nested_netlist(int levels, size_t *len)
{
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "title\n.model nch nmos level=14\n.subckt s0 a\nm1 a a 0 0 nch\n.ends\n"), ERR_OK);
    for (int i = 1; i <= levels; i++)
        assert_int_equal(buf_printf(&b, ".subckt s%d a\nx1 a s%d\n.ends\n", i, i - 1), ERR_OK);
    assert_int_equal(buf_printf(&b, "x0 n s%d\n.end\n", levels), ERR_OK);
    *len = b.len;
    return b.data;
}

static void test_subckt_depth_is_settable(void **state)
{
    (void)state;
    size_t n;
    char *text = nested_netlist(6, &n);
    char *path = tu_tmpfile("lim_nest.cir", text, n);
    free(text);
    Design ds;
    DiagList d;
    diag_init(&d);
    NlOptions o = {.max_subckt_depth = 4};
    assert_int_equal(nl_load(path, &o, &ds, &d), ERR_INPUT);
    const Diag *g = first_error(&d);
    assert_non_null(g);
    assert_true(g->loc.line > 0);
    assert_non_null(strstr(g->msg, "nested more than 4 levels"));
    diag_free(&d);
    diag_init(&d);
    o.max_subckt_depth = 7; /* x0 plus six levels below */
    assert_int_equal(nl_load(path, &o, &ds, &d), ERR_OK);
    assert_int_equal(ds.ndevs, 1);
    /* s0 holds one M card: a primitive cell, named by its X card, its record the M card's */
    assert_string_equal(ds.devs[0].name, "x0.x1.x1.x1.x1.x1.x1");
    assert_string_equal(ds.devs[0].simname, "x0.x1.x1.x1.x1.x1.x1.m1");
    nl_free(&ds);
    diag_free(&d);
    free(path);
}

static void test_expression_height_is_settable(void **state)
{
    (void)state;
    Arena a;
    arena_init(&a);
    StrTab *t = str_new(&a);
    ExprParser p;
    memset(&p, 0, sizeof p);
    p.arena = &a;
    p.names = t;
    p.max_height = 10;
    char s[64] = "";
    for (int i = 0; i < 12; i++)
        strcat(s, "(");
    strcat(s, "1");
    for (int i = 0; i < 12; i++)
        strcat(s, ")");
    assert_null(expr_parse_str(&p, s, strlen(s)));
    assert_non_null(strstr(p.err, "nested too deeply"));
    assert_true(p.err_off < strlen(s));
    p.max_height = 20;
    assert_non_null(expr_parse_str(&p, s, strlen(s)));
    /* the default limit holds against a very deep expression without exhausting the C stack */
    p.max_height = 0;
    size_t n = 1000000;
    char *deep = malloc(2 * n + 2);
    memset(deep, '(', n);
    deep[n] = '1';
    memset(deep + n + 1, ')', n);
    deep[2 * n + 1] = '\0';
    assert_null(expr_parse_str(&p, deep, 2 * n + 1));
    assert_non_null(strstr(p.err, "nested too deeply"));
    free(deep);
    /* and so does a long chain of operators */
    char *chain = malloc(2 * n + 1);
    for (size_t i = 0; i < n; i++) {
        chain[2 * i] = 'a';
        chain[2 * i + 1] = '^';
    }
    chain[2 * n - 1] = 'b';
    chain[2 * n] = '\0';
    Expr *e = expr_parse_str(&p, chain, 2 * n);
    (void)e; /* parsed (left to right, no recursion) or refused; either way no crash */
    free(chain);
    str_free(t);
    arena_free(&a);
}

/* Fuzz regression (fuzz_expr): a recursive .func whose body nests 190 operators evaluates about
 * 19 000 levels deep before the call-depth limit stops it; with the argument arrays in every
 * evaluator frame that overflowed the stack under ASan (and a 2 MB stack without it). */
static void test_deep_recursive_function(void **state)
{
    (void)state;
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "title\n.func f(x) {"), ERR_OK);
    for (int i = 0; i < 190; i++)
        assert_int_equal(buf_putc(&b, '-'), ERR_OK);
    assert_int_equal(buf_puts(&b, "f(x)}\n.model nch nmos level=14\nm1 d g 0 0 nch w={f(1)}\n.end\n"), ERR_OK);
    char *path = tu_tmpfile("deepfunc.cir", b.data, b.len);
    buf_free(&b);
    Design ds;
    DiagList d;
    diag_init(&d);
    assert_int_equal(nl_load(path, NULL, &ds, &d), ERR_INPUT);
    assert_error_at(&d, "deepfunc.cir", 2, 203, "evaluation nested too deeply");
    diag_free(&d);
    free(path);
}

static double seconds_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + (double)ts.tv_nsec * 1e-9;
}

/* levels of fanout instances each: fanout^levels MOSFETs */
static char *fanout_netlist(int levels, int fanout, size_t *len)
{
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "title\n.model nch nmos level=14\n.subckt l0 a\nm1 a a 0 0 nch\n.ends\n"), ERR_OK);
    for (int i = 1; i <= levels; i++) {
        assert_int_equal(buf_printf(&b, ".subckt l%d a\n", i), ERR_OK);
        for (int j = 1; j <= fanout; j++)
            assert_int_equal(buf_printf(&b, "x%d a l%d\n", j, i - 1), ERR_OK);
        assert_int_equal(buf_puts(&b, ".ends\n"), ERR_OK);
    }
    assert_int_equal(buf_printf(&b, "xtop n l%d\n.end\n", levels), ERR_OK);
    *len = b.len;
    return b.data;
}

static void test_device_limit_before_expanding(void **state)
{
    (void)state;
    size_t n;
    /* 10 levels of 10: 10^10 MOSFETs, refused at once (expanding would take terabytes) */
    char *text = fanout_netlist(10, 10, &n);
    char *path = tu_tmpfile("lim_huge.cir", text, n);
    free(text);
    Design ds;
    DiagList d;
    diag_init(&d);
    double t0 = seconds_now();
    assert_int_equal(nl_load(path, NULL, &ds, &d), ERR_INPUT);
    assert_true(seconds_now() - t0 < 1.0);
    assert_error_at(&d, "lim_huge.cir", 126, 1, "10000000000 MOSFETs once flattened, more than the limit of 50000000");
    assert_int_equal(ds.ndevs, 0);
    diag_free(&d);
    /* 60 levels of 10 saturate the count instead of overflowing it */
    text = fanout_netlist(60, 10, &n);
    char *path2 = tu_tmpfile("lim_sat.cir", text, n);
    free(text);
    diag_init(&d);
    assert_int_equal(nl_load(path2, NULL, &ds, &d), ERR_INPUT);
    assert_non_null(first_error(&d));
    assert_non_null(strstr(first_error(&d)->msg, "over "));
    diag_free(&d);
    /* the limit is exact: 3 levels of 4 = 64 pass a limit of 64 and fail one of 63 */
    text = fanout_netlist(3, 4, &n);
    char *path3 = tu_tmpfile("lim_64.cir", text, n);
    free(text);
    diag_init(&d);
    NlOptions o = {.max_devices = 64};
    assert_int_equal(nl_load(path3, &o, &ds, &d), ERR_OK);
    assert_int_equal(ds.ndevs, 64);
    nl_free(&ds);
    diag_free(&d);
    diag_init(&d);
    o.max_devices = 63;
    assert_int_equal(nl_load(path3, &o, &ds, &d), ERR_INPUT);
    assert_error_at(&d, "lim_64.cir", 24, 1, "64 MOSFETs once flattened, more than the limit of 63");
    diag_free(&d);
    free(path);
    free(path2);
    free(path3);
}

/* A hierarchy with no MOSFET beneath: ten levels of ten instances of a resistor cell (10^10
 * instances) beside one MOSFET. The device count does not bound such an expansion, so the instance
 * count does, against the same limit, before anything is expanded (found by fuzz_netlist, as a hang). */
/* levels of ten instances each of a resistor cell, with one MOSFET beside them at the top, into a
 * temporary file: 4 + 12 * levels lines, the top X card last but one. */
static char *resistor_cells(const char *name, int levels)
{
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "* levels of ten resistor cells\n.subckt c0 a b\nr1 a b 1k\n.ends\n"), ERR_OK);
    for (int i = 1; i <= levels; i++) {
        assert_int_equal(buf_printf(&b, ".subckt c%d a b\n", i), ERR_OK);
        for (int k = 1; k <= 10; k++)
            assert_int_equal(buf_printf(&b, "x%d a b c%d\n", k, i - 1), ERR_OK);
        assert_int_equal(buf_puts(&b, ".ends\n"), ERR_OK);
    }
    assert_int_equal(buf_printf(&b, ".model nch nmos level=1\nm1 d g 0 0 nch w=1u l=1u\nx1 a b c%d\n.end\n", levels),
                     ERR_OK);
    char *path = tu_tmpfile(name, b.data, b.len);
    buf_free(&b);
    return path;
}

static void test_instance_limit_before_expanding(void **state)
{
    (void)state;
    char *path = resistor_cells("deviceless.cir", 10);
    Design ds;
    DiagList d;
    diag_init(&d);
    double t0 = seconds_now();
    assert_int_equal(nl_load(path, NULL, &ds, &d), ERR_INPUT);
    assert_true(seconds_now() - t0 < 1.0);
    assert_error_at(&d, "deviceless.cir", 127, 1,
                    "11111111111 subcircuit instances once flattened, more than the limit of 600000000 "
                    "(11111111110 in one c10): the device limit times the hierarchy's depth of 12");
    diag_free(&d);
    /* three levels of ten and the top's X card: 1111 instances, depth 5; a device limit of 223 allows
       1115 of them, one of 222 allows 1110 */
    char *path2 = resistor_cells("deviceless3.cir", 3);
    NlOptions o = {.max_devices = 223};
    diag_init(&d);
    assert_int_equal(nl_load(path2, &o, &ds, &d), ERR_OK);
    assert_int_equal(ds.ndevs, 1);
    nl_free(&ds);
    diag_free(&d);
    o.max_devices = 222;
    diag_init(&d);
    assert_int_equal(nl_load(path2, &o, &ds, &d), ERR_INPUT);
    assert_error_at(&d, "deviceless3.cir", 43, 1, "1111 subcircuit instances once flattened, more than the limit of 1110");
    diag_free(&d);
    free(path);
    free(path2);
}

/* A size that is not positive (l=0-2u, w=0, m=-1) is a warning and an unknown size, never a negative
 * one that would give negative densities (found by fuzz_netlist). */
static void test_sizes_not_positive(void **state)
{
    (void)state;
    char *path = TU_TMPFILE("negsize.cir", "* t\n.model nch nmos level=1\nm1 d g 0 0 nch w=20u l=0-2u m=2\n"
                                          "m2 d g 0 0 nch w=0 l=1u\nm3 d g 0 0 nch w=1u l=1u m=-1\n.end\n");
    Design ds;
    DiagList d;
    diag_init(&d);
    assert_int_equal(nl_load(path, NULL, &ds, &d), ERR_OK);
    assert_int_equal(ds.ndevs, 3);
    assert_true(isnan(ds.devs[0].l) && ds.devs[0].w == 20e-6 && ds.devs[0].m == 2);
    assert_true(isnan(ds.devs[1].w) && ds.devs[1].l == 1e-6);
    assert_true(isnan(ds.devs[2].m));
    size_t warned = 0;
    for (size_t i = 0; i < d.n; i++)
        if (strstr(d.items[i].msg, "not a positive number: taken as unknown"))
            warned++;
    assert_int_equal(warned, 3);
    assert_int_equal(d.items[0].loc.line, 3);
    nl_free(&ds);
    diag_free(&d);
    free(path);
}

/* ---- numbers in dumps ------------------------------------------------------------------------ */

static void test_numbers_against_strtod(void **state)
{
    (void)state;
    static const char *const rows[] = {
        "4.9e-324", "4.94065645841246544e-324", "2.4703282292062328e-324", "2.2250738585072011e-308",
        "2.2250738585072014e-308", "1.7976931348623157e308", "1e-400", "-0", "0e999999999",
        "123456789012345678901234567890", "0.000000000000000000000000000001", "9007199254740993",
        "1e22", "1e23", "-1.5e-310", "1e-5",
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        double v = -1, want = strtod(rows[i], NULL);
        assert_int_equal(op_parse_number(rows[i], strlen(rows[i]), &v), OPNUM_OK);
        if (memcmp(&v, &want, sizeof v) != 0) {
            print_error("'%s': %.17g, strtod gives %.17g\n", rows[i], v, want);
            fail();
        }
    }
    static const struct {
        const char *s;
        int st;
    } bad[] = {
        {"nan", OPNUM_NONFINITE}, {"-nan", OPNUM_NONFINITE}, {"Inf", OPNUM_NONFINITE}, {"-infinity", OPNUM_NONFINITE},
        {"1e309", OPNUM_RANGE},   {"-1e999", OPNUM_RANGE},   {"1.8e308", OPNUM_RANGE}, {"0x10", OPNUM_SYNTAX},
        {" 1", OPNUM_SYNTAX},     {"1e", OPNUM_SYNTAX},      {"", OPNUM_SYNTAX},       {"1.2.3", OPNUM_SYNTAX},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        double v = 0;
        assert_int_equal(op_parse_number(bad[i].s, strlen(bad[i].s), &v), bad[i].st);
    }
    /* a number of a million digits converts in bounded time */
    size_t n = 1000000;
    char *s = malloc(n + 8);
    s[0] = '0';
    s[1] = '.';
    memset(s + 2, '0', n);
    memcpy(s + 2 + n, "1e5", 4);
    double v = 0, t0 = seconds_now();
    assert_int_equal(op_parse_number(s, strlen(s), &v), OPNUM_OK);
    assert_true(seconds_now() - t0 < 1.0);
    assert_true(v == strtod(s, NULL));
    free(s);
}

/* Fuzz regression (fuzz_show, fuzz_csv): a quantity name with a NUL byte made the name comparison
 * read past the end of the shorter name (an ASan global-buffer-overflow in opdump.c same_n). */
static void test_quantity_name_with_nul(void **state)
{
    (void)state;
    assert_int_equal(op_qty_lookup("gm\0\0\0\0", 6), -1);
    assert_int_equal(op_qty_lookup("id\0x", 4), -1);
    assert_int_equal(op_qty_lookup_ngspice("vth\0\0\0", 6), -1);
    assert_int_equal(op_qty_lookup("gm", 2), OPQ_GM);
    assert_int_equal(op_qty_lookup("length", 6), OPQ_L);
}

/* Dumps read through op_read: NUL bytes in device names (fuzz regressions: the name was kept with
 * the NUL, so the record could not be found or printed), and non-finite and extreme values. */
typedef struct {
    const char *name;
    OpFormat fmt;
    const char *bytes;
    size_t len;
    int status;       /* op_read's */
    unsigned line, col;
    const char *msg;  /* in the first error (status != OK) or the first warning */
} DumpRow;

#define BYTES(lit) lit, sizeof(lit) - 1

static const char raw_head[] = "Title: t\nDate: d\nPlotname: Operating Point\nFlags: real\nNo. Variables: 3\n"
                               "No. Points: 1\nVariables:\n";

static const DumpRow dump_rows[] = {
    {"show: NUL in a device name", OPFMT_SHOW,
     BYTES(" BSIM4: Berkeley Short Channel IGFET Model-4\n     device               m.x1\0m1\n"
           "      model                   nch\n         id           3.27829e-05\n\n"),
     ERR_INPUT, 2, 27, "NUL byte in this device name"},
    {"csv: NUL in a device name", OPFMT_CSV, BYTES("name,id,gm\nx1.m1,1e-5,2e-4\nx1\0m2,1e-5,2e-4\n"), ERR_INPUT, 3, 1,
     "NUL byte in this device name"},
    {"csv: infinity", OPFMT_CSV, BYTES("name,id,gm\nx1.m1,1e-5,-Inf\n"), ERR_INPUT, 2, 12, "not a finite number"},
    {"csv: overflow", OPFMT_CSV, BYTES("name,id,gm\nx1.m1,1e-5,2e400\n"), ERR_INPUT, 2, 12, "out of range"},
    {"csv: duplicate device", OPFMT_CSV, BYTES("name,id\nm1,1\nm2,2\nM1,3\n"), ERR_INPUT, 4, 1,
     "listed twice (first on line 2)"},
    {"show: NaN is read as absent", OPFMT_SHOW,
     BYTES(" BSIM4: Berkeley Short Channel IGFET Model-4\n     device               m.x1.m1\n"
           "         id                  -nan\n         gm           0.000522462\n\n"),
     ERR_OK, 3, 30, "NaN or infinity, read as absent"},
};

static void test_dump_rows(void **state)
{
    (void)state;
    int bad = 0;
    for (size_t i = 0; i < sizeof dump_rows / sizeof dump_rows[0]; i++) {
        const DumpRow *r = &dump_rows[i];
        char name[32];
        snprintf(name, sizeof name, "dump%zu", i);
        char *path = tu_tmpfile(name, r->bytes, r->len);
        DiagList d;
        diag_init(&d);
        OpTable *t = NULL;
        int rc = op_read(path, r->fmt, &t, &d);
        const Diag *g = NULL;
        for (size_t k = 0; k < d.n && !g; k++)
            if (d.items[k].sev == (r->status == ERR_OK ? DIAG_WARNING : DIAG_ERROR))
                g = &d.items[k];
        if (rc != r->status || (rc == ERR_OK) != (t != NULL) || !g || g->loc.line != r->line ||
            g->loc.col != r->col || !strstr(g->msg, r->msg)) {
            print_error("%s: status %d (want %d); first diagnostic %u:%u %s (want %u:%u %s)\n", r->name, rc, r->status,
                        g ? g->loc.line : 0, g ? g->loc.col : 0, g ? g->msg : "(none)", r->line, r->col, r->msg);
            bad++;
        }
        if (t) {
            const OpRecord *rec = op_find(t, "x1.m1");
            if (!rec || !isnan(op_q(t, rec, OPQ_ID)) || op_q(t, rec, OPQ_GM) != 0.000522462) {
                print_error("%s: the NaN id should be absent and gm kept\n", r->name);
                bad++;
            }
        }
        op_free(t);
        diag_free(&d);
        free(path);
    }
    assert_int_equal(bad, 0);
}

/* Binary raw file: NaN and infinity are absent (with one warning), a denormal is kept exactly. The
 * doubles are little-endian IEEE 754, as ngspice writes them on this machine. */
static void test_raw_binary_extremes(void **state)
{
    (void)state;
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, raw_head), ERR_OK);
    assert_int_equal(buf_puts(&b, "\t0\t@m1[id]\tcurrent\n\t1\t@m1[gm]\tadmittance\n\t2\t@m1[gds]\tadmittance\n"
                                  "Binary:\n"), ERR_OK);
    double v[3] = {NAN, INFINITY, 4.9406564584124654e-324};
    assert_int_equal(buf_append(&b, v, sizeof v), ERR_OK);
    char *path = tu_tmpfile("extremes.raw", b.data, b.len);
    DiagList d;
    diag_init(&d);
    OpTable *t = NULL;
    assert_int_equal(op_read(path, OPFMT_AUTO, &t, &d), ERR_OK);
    assert_int_equal(d.nwarnings, 1);
    const OpRecord *r = op_find(t, "m1");
    assert_non_null(r);
    assert_true(isnan(r->q[OPQ_ID]));
    assert_true(isnan(r->q[OPQ_GM]));
    assert_true(r->q[OPQ_GDS] == 4.9406564584124654e-324);
    op_free(t);
    diag_free(&d);
    /* a header that claims more data than a 64-bit size can hold is an error, not a wrap-around */
    buf_clear(&b);
    assert_int_equal(buf_puts(&b, "Title: t\nDate: d\nPlotname: Operating Point\nFlags: real\n"
                                  "No. Variables: 3\nNo. Points: 768614336404564651\nVariables:\n"
                                  "\t0\t@m1[id]\tcurrent\n\t1\t@m1[gm]\tadmittance\n\t2\t@m1[gds]\tadmittance\n"
                                  "Binary:\n"), ERR_OK);
    assert_int_equal(buf_append(&b, v, sizeof v), ERR_OK);
    char *path2 = tu_tmpfile("wrap.raw", b.data, b.len);
    diag_init(&d);
    assert_int_equal(op_read(path2, OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_null(t);
    assert_non_null(first_error(&d));
    assert_true(first_error(&d)->loc.line > 0);
    diag_free(&d);
    buf_free(&b);
    free(path);
    free(path2);
}

/* A raw file with a NUL byte in a vector name (fuzz regression, fuzz_raw). */
static void test_raw_nul_in_name(void **state)
{
    (void)state;
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, raw_head), ERR_OK);
    static const char vars[] = "\t0\t@m1[id]\tcurrent\n\t1\t@m\0x[gm]\tadmittance\n\t2\tv(d)\tvoltage\nValues:\n"
                               " 0\t1e-5\n\t2e-4\n\t0.9\n";
    assert_int_equal(buf_append(&b, vars, sizeof vars - 1), ERR_OK);
    char *path = tu_tmpfile("nul.raw", b.data, b.len);
    DiagList d;
    diag_init(&d);
    OpTable *t = NULL;
    assert_int_equal(op_read(path, OPFMT_AUTO, &t, &d), ERR_INPUT);
    assert_error_at(&d, "nul.raw", 9, 4, "variable 1: a NUL byte in its name");
    diag_free(&d);
    buf_free(&b);
    free(path);
}

/* Fuzz regression (fuzz_netlist): a short netlist with two stray control bytes loaded, but once its
 * annotation line was stripped (a shorter file, the same two bytes) it "looked binary", so the
 * annotated netlist could not be annotated again. The input as the fuzzer found it. */
static void test_stray_control_bytes(void **state)
{
    (void)state;
    static const char x[] = "hand-written fuzz seed: hierch nmos le=2p \003mout i={dbs.lib\n.lib tt\n"
                            ".mo1megdel nch nmos lev\017llevel=08 lmin\n*~ =1u lmax=10u\n.endl tt\n";
    Buf s = BUF_INIT;
    assert_int_equal(ann_strip(x, sizeof x - 1, &s), ERR_OK);
    assert_true(s.len < sizeof x - 1);
    char *p1 = tu_tmpfile("stray1.cir", x, sizeof x - 1), *p2 = tu_tmpfile("stray2.cir", s.data, s.len);
    Design ds;
    DiagList d;
    diag_init(&d);
    assert_int_equal(nl_load(p1, NULL, &ds, &d), ERR_OK);
    nl_free(&ds);
    assert_int_equal(nl_load(p2, NULL, &ds, &d), ERR_OK);
    nl_free(&ds);
    size_t off;
    assert_false(lex_binary(s.data, s.len, &off));
    /* the second such input: sixteen control bytes, near the 1 in 64 limit, in a file whose
       annotation line made the difference; annotation lines no longer count either way */
    Buf t = BUF_INIT;
    assert_int_equal(buf_puts(&t, "* title\n*~ an annotation line of biaslint's, ninety-some bytes long, "
                                  "that stripping takes away .........\n"), ERR_OK);
    for (int i = 0; i < 16; i++)
        assert_int_equal(buf_putc(&t, '\005'), ERR_OK);
    while (t.len < 16 * 64 + 40)
        assert_int_equal(buf_puts(&t, "\n* filler"), ERR_OK);
    Buf u = BUF_INIT;
    assert_int_equal(ann_strip(t.data, t.len, &u), ERR_OK);
    assert_int_equal(lex_binary(t.data, t.len, &off), lex_binary(u.data, u.len, &off));
    buf_free(&t);
    buf_free(&u);
    /* eight control bytes in a short file still look binary */
    assert_true(lex_binary("\001\002\003\004\005\006\007\010 m1 a b c d n", 21, &off));
    assert_int_equal(off, 0);
    diag_free(&d);
    buf_free(&s);
    free(p1);
    free(p2);
}

/* Fuzz regression (fuzz_netlist): the top level's nets are numbered through the values of the
 * design's name table, and a `.subckt` card without a name (an error, but reading goes on to find
 * more) made a second subcircuit without a name that was taken for the top level. Its nets then
 * kept numbers of its own in the top level's place, and the top level's cards below found their
 * nets "known" with no node behind them: flattening read past the top level's node array. */
static void test_nameless_subckt(void **state)
{
    (void)state;
    static const char x[] = "* a nameless subcircuit\n.subckt\nm2 e f g h nch w=1u l=1u\n.ends\n"
                            "m3 h g f e nch w=1u l=1u\n.model nch nmos level=1\n.end\n";
    char *p = tu_tmpfile("nameless.cir", x, sizeof x - 1);
    Design ds;
    DiagList d;
    diag_init(&d);
    assert_int_equal(nl_load(p, NULL, &ds, &d), ERR_INPUT);
    assert_true(d.n >= 1);
    assert_int_equal(d.items[0].loc.line, 2);
    assert_non_null(strstr(d.items[0].msg, ".subckt without a name"));
    /* the same cards with the .subckt named load, and the top level's card has its own four nets */
    static const char y[] = "* a named subcircuit\n.subckt s e f g h\nm2 e f g h nch w=1u l=1u\n.ends\n"
                            "m3 h g f e nch w=1u l=1u\n.model nch nmos level=1\n.end\n";
    char *q = tu_tmpfile("named.cir", y, sizeof y - 1);
    assert_int_equal(nl_load(q, NULL, &ds, &d), ERR_OK);
    assert_int_equal(ds.ndevs, 1);
    assert_string_equal(ds.devs[0].name, "m3");
    static const char *const want[4] = {"h", "g", "f", "e"};
    for (int k = 0; k < 4; k++)
        assert_string_equal(nl_nets(&ds, &ds.devs[0])[k], want[k]);
    nl_free(&ds);
    diag_free(&d);
    free(p);
    free(q);
}

/* ---- characterization tables (fuzz_lut regressions) ------------------------------------------ */

/* fixtures/lut/good.lut with the first occurrence of each from[i] replaced by to[i], as a file. */
static char *lut_variant(const char *name, const char *const *from, const char *const *to, size_t n)
{
    size_t len;
    char *text = read_all("fixtures/lut/good.lut", &len);
    assert_non_null(text);
    Buf b = BUF_INIT;
    assert_int_equal(buf_append(&b, text, len), ERR_OK);
    free(text);
    for (size_t i = 0; i < n; i++) {
        char *at = strstr(b.data, from[i]);
        assert_non_null(at);
        Buf c = BUF_INIT;
        size_t pre = (size_t)(at - b.data), fl = strlen(from[i]);
        assert_int_equal(buf_append(&c, b.data, pre), ERR_OK);
        assert_int_equal(buf_puts(&c, to[i]), ERR_OK);
        assert_int_equal(buf_append(&c, b.data + pre + fl, b.len - pre - fl), ERR_OK);
        buf_free(&b);
        b = c;
    }
    char *path = tu_tmpfile(name, b.data, b.len);
    buf_free(&b);
    return path;
}

static void test_lut_hostile(void **state)
{
    (void)state;
    DiagList d;
    /* the last row short and without a line ending: its error was located through a NULL line
       pointer (UBSan: offset applied to a null pointer) */
    const char *f1[] = {"2e-06,0,1,1,1.3125e-05,5.25e-05,6.25e-07,0.5,0.5\n"}, *t1[] = {"2e-06,0,1,1,1.3125e-05"};
    char *p1 = lut_variant("short_last.lut", f1, t1, 1);
    diag_init(&d);
    assert_null(lut_load(p1, &d));
    assert_non_null(first_error(&d));
    assert_int_equal(first_error(&d)->loc.line, 20);
    diag_free(&d);
    /* a control byte in a header value: accepted, it was written back as a line that did not load */
    const char *f2[] = {"# model: tiny"}, *t2[] = {"# model: \r\001tiny"};
    char *p2 = lut_variant("ctl_key.lut", f2, t2, 1);
    diag_init(&d);
    assert_null(lut_load(p2, &d));
    assert_error_at(&d, "ctl_key.lut", 2, 10, "control byte in the value of header key 'model'");
    diag_free(&d);
    /* a table whose log-space interpolant overshoots past the double range: missing, never infinite */
    const char *f3[] = {"0.8,9.225e-06,", "0.0001025,1.25e-06", "2.625e-05,0.000105,1.25e-06,0.5",
                        "1,1.28125e-05", "1,0.6,5.25e-07", "3.15e-05,2.25e-07", "5.25e-05,6.25e-07,0.5,0.5\n"},
               *t3[] = {"0.8,9.225e106,", "001.00025,1625e-06", "2.625e-05,0.000105,1.2e-506,0.0",
                        "1,71.28125e-05", "1,0.6,2.25e-07", "3.15e-852,.52e-07", "5.25e305,6.25e-07,0.5,0.5\n"};
    char *p3 = lut_variant("overshoot.lut", f3, t3, 7);
    diag_init(&d);
    /* values past 1e30 are refused (the table stores floats) */
    assert_null(lut_load(p3, &d));
    assert_error_at(&d, "overshoot.lut", 10, 17, "id_a is '9.225e106': a table value must be below 1e+30");
    diag_free(&d);
    /* below that, the same shape: every interpolated value finite or missing */
    t3[0] = "0.8,9.225e29,";
    t3[6] = "5.25e29,6.25e-07,0.5,0.5\n";
    free(p3);
    p3 = lut_variant("overshoot2.lut", f3, t3, 7);
    diag_init(&d);
    Lut *t = lut_load(p3, &d);
    assert_non_null(t);
    int inf = 0;
    for (int i = 0; i <= 2000; i++) {
        LutVals v;
        double vgs = 0.6 + 0.4 * (i % 41) / 40.0, l = 1e-6 + 1e-6 * (i % 21) / 20.0, vds = 0.5 + 0.5 * (i % 11) / 10.0;
        assert_int_equal(lut_eval(t, l, vgs, vds, 0, &v), 0);
        for (int q = 0; q < LUTQ_COUNT; q++)
            inf += isinf(v.q[q]) != 0;
        inf += isinf(v.gm_id) + isinf(v.id_w) + isinf(v.gain) + isinf(v.ft) != 0;
    }
    assert_int_equal(inf, 0);
    lut_free(t);
    diag_free(&d);
    free(p1);
    free(p2);
    free(p3);
    /* a subnormal ID (1.4e-322) at a node: gds there was ID * exp(log(gds/ID)) = 0 * inf, NaN */
    static const char tiny[] = "# biaslint-table 1\n# model: tiny\n# type: nmos\n# level: 1\n# temp_c: 27\n"
                               "# w_ref_m: 1e-05\nl_m,vsb_v,vds_v,vgs_v,id_a,gm_s,gds_s,vth_v,vdsat_v\n"
                               "1e-06,0,0.5,0.6,1.425e-322,6.05e-19,5e-08,0.5,0.1\n"
                               "1e-06,0,0.5,0.8,9.450e-46,2.15e-05,4.5e-07,0.5,0.3\n"
                               "1e-06,0,0.5,6,2.5625e-05,4e-16,1.25e-06,0.5,0.5\n";
    char *p4 = tu_tmpfile("subnormal.lut", tiny, sizeof tiny - 1);
    diag_init(&d);
    t = lut_load(p4, &d);
    assert_non_null(t);
    static const double vgs[] = {0.6, 0.8, 6}, gds[] = {5e-08, 4.5e-07, 1.25e-06};
    for (int i = 0; i < 3; i++) {
        LutVals v;
        assert_int_equal(lut_eval(t, 1e-6, vgs[i], 0.5, 0, &v), 0);
        /* the node stores log(gds/ID), 724 here, as a float: about 6e-5 absolute, so 1e-4 relative */
        assert_close(v.q[LUTQ_GDS], gds[i], 1e-4);
    }
    lut_free(t);
    diag_free(&d);
    free(p4);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_round_trip_every_netlist),
        cmocka_unit_test(test_include_depth_is_settable),
        cmocka_unit_test(test_subckt_depth_is_settable),
        cmocka_unit_test(test_expression_height_is_settable),
        cmocka_unit_test(test_deep_recursive_function),
        cmocka_unit_test(test_device_limit_before_expanding),
        cmocka_unit_test(test_instance_limit_before_expanding),
        cmocka_unit_test(test_sizes_not_positive),
        cmocka_unit_test(test_numbers_against_strtod),
        cmocka_unit_test(test_quantity_name_with_nul),
        cmocka_unit_test(test_dump_rows),
        cmocka_unit_test(test_raw_binary_extremes),
        cmocka_unit_test(test_raw_nul_in_name),
        cmocka_unit_test(test_stray_control_bytes),
        cmocka_unit_test(test_nameless_subckt),
        cmocka_unit_test(test_lut_hostile),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
