/* test_characterize: the sweep driver. Grids; the table at its own grid points against ngspice's
 * operating point at the same bias (NMOS and PMOS, BSIM4 and level 1: order, signs, orientation);
 * type, level and temperature from the model file; and every failure: model missing, level unknown,
 * ngspice missing, failing or stopping early, with no table and no temporary file left behind. */
#include "testutil.h"

#include <dirent.h>
#include <sys/stat.h>

#include "characterize.h"
#include "lut.h"
#include "lutref.h"
#include "sweepgrid.h"

#define MODELS "fixtures/lut/models.inc"

static void test_range_points(void **state)
{
    (void)state;
    static const struct {
        CharRange r;
        size_t n;
        double last;
        const char *err;
    } rows[] = {
        {{0, 1.8, 0.025}, 73, 1.8, NULL},
        {{0, 1.8, 0.05}, 37, 1.8, NULL},
        {{0, 1, 0.3}, 4, 0.9, NULL},
        {{0.1, 0.3, 0.1}, 3, 0.3, NULL}, /* 0.1 + 2*0.1 is 0.30000000000000004 in doubles: kept at 0.3 */
        {{0.5, 0.5, 1}, 1, 0.5, NULL},
        {{-0.2, 0.2, 0.2}, 3, 0.2, NULL},
        {{1, 0, 0.1}, 0, 0, "runs backwards"},
        {{0, 1, 0}, 0, 0, "step must be positive"},
        {{0, 1, -0.1}, 0, 0, "step must be positive"},
        {{0, 1000, 1e-3}, 0, 0, "at most"},
        {{NAN, 1, 0.1}, 0, 0, "must be numbers"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        DiagList d;
        diag_init(&d);
        double *v;
        size_t n;
        int rc = char_range_points(&rows[i].r, "VGS", &v, &n, &d);
        if (rows[i].err) {
            assert_int_equal(rc, ERR_INPUT);
            assert_null(v);
            assert_non_null(strstr(d.items[0].msg, rows[i].err));
            assert_non_null(strstr(d.items[0].msg, "VGS"));
        } else {
            assert_int_equal(rc, ERR_OK);
            assert_int_equal(n, rows[i].n);
            assert_true(v[n - 1] == rows[i].last);
            assert_true(v[0] == rows[i].r.start);
            free(v);
        }
        diag_free(&d);
    }
}

static CharSpec spec(const char *model, const double *l, size_t nl)
{
    CharSpec s;
    memset(&s, 0, sizeof s);
    s.models = MODELS;
    s.model = model;
    s.l = l;
    s.nl = nl;
    s.vgs = (CharRange){0.2, 1.0, 0.2};
    s.vds = (CharRange){0.1, 1.1, 0.5};
    s.vsb = (CharRange){0, 0.5, 0.5};
    s.temp_c = NAN;
    s.w_ref = 5e-6;
    return s;
}

typedef struct {
    double last;
    int calls, backwards;
} Prog;

static void progress(void *ctx, double f)
{
    Prog *p = ctx;
    if (f < p->last)
        p->backwards = 1;
    p->last = f;
    p->calls++;
}

/* Every grid point of the table is ngspice's operating point at that bias: a separate op run is the
 * reference. */
static void check_against_op(const char *model, int pmos, int mos1)
{
    static const double l[] = {1e-6, 2e-6};
    CharSpec s = spec(model, l, 2);
    CharResult r;
    DiagList d;
    diag_init(&d);
    Prog pr = {0, 0, 0};
    int rc = char_build(&s, progress, &pr, &r, &d);
    if (rc != ERR_OK)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    assert_true(pr.calls >= 2 && !pr.backwards && pr.last == 1.0);
    const LutInfo *in = &r.info;
    assert_string_equal(in->model, model);
    assert_int_equal(in->type, pmos ? MOS_PMOS : MOS_NMOS);
    assert_int_equal(in->level, mos1 ? 1 : 14);
    assert_close(in->temp_c, 27, 1e-12);
    assert_close(in->w_ref, 5e-6, 0);
    assert_string_equal(in->ngspice_version, "39");
    unsigned caps = (1u << LUTQ_CGG) | (1u << LUTQ_CGS) | (1u << LUTQ_CGD);
    assert_int_equal(in->have, LUT_REQUIRED | (1u << LUTQ_GMBS) | (mos1 ? 0 : caps));
    size_t nn = lut_nodes(in);
    assert_int_equal(nn, 2 * 2 * 3 * 5);
    RefPoint *p = calloc(nn, sizeof *p);
    RefVals *ref = calloc(nn, sizeof *ref);
    size_t k = 0;
    for (size_t a = 0; a < in->n[LUTAX_L]; a++)
        for (size_t b = 0; b < in->n[LUTAX_VSB]; b++)
            for (size_t c = 0; c < in->n[LUTAX_VDS]; c++)
                for (size_t g = 0; g < in->n[LUTAX_VGS]; g++, k++)
                    p[k] = (RefPoint){in->axis[LUTAX_L][a], in->axis[LUTAX_VGS][g], in->axis[LUTAX_VDS][c],
                                      in->axis[LUTAX_VSB][b], 0};
    char *dir = ref_dir();
    assert_non_null(dir);
    assert_int_equal(ref_op(dir, MODELS, NULL, model, pmos, mos1, 5e-6, p, nn, ref), 0);
    ref_dir_free(dir);
    for (k = 0; k < nn; k++) {
        const double *v = r.vals + k * LUTQ_COUNT;
        /* same device equations, solved once in a dc sweep and once in an op: equal to the solver's
           tolerance */
        assert_close(v[LUTQ_ID], ref[k].id, 1e-5);
        assert_close(v[LUTQ_GM], ref[k].gm, 1e-5);
        assert_close(v[LUTQ_GDS], ref[k].gds, 1e-5);
        assert_close(v[LUTQ_VTH], ref[k].vth, 1e-6);
        assert_close(v[LUTQ_VDSAT], ref[k].vdsat, 1e-6);
        if (!mos1)
            assert_close(v[LUTQ_CGG], ref[k].cgg, 1e-5);
        assert_true(v[LUTQ_ID] > 0 && v[LUTQ_VTH] > 0); /* magnitudes, whatever the type */
    }
    free(p);
    free(ref);
    char_result_free(&r);
    diag_free(&d);
}

static void test_nmos_bsim4_matches_op(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    check_against_op("nch", 0, 0);
}

static void test_pmos_bsim4_matches_op(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    check_against_op("pch", 1, 0);
}

static void test_pmos_level1_matches_op(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    check_against_op("p1", 1, 1);
}

/* The temperature: the section's .temp when none is asked for, else the one asked for. */
static void test_section_and_temperature(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    static const double l[] = {1e-6};
    CharSpec s = spec("nch", l, 1);
    s.models = "fixtures/lut/corners.lib";
    s.section = "hot";
    s.vsb = (CharRange){0, 0, 1};
    CharResult hot, cold;
    DiagList d;
    diag_init(&d);
    assert_int_equal(char_build(&s, NULL, NULL, &hot, &d), ERR_OK);
    assert_close(hot.info.temp_c, 85, 1e-12);
    assert_string_equal(hot.info.section, "hot");
    s.temp_c = -20;
    assert_int_equal(char_build(&s, NULL, NULL, &cold, &d), ERR_OK);
    assert_close(cold.info.temp_c, -20, 1e-12);
    /* the threshold falls as the temperature rises */
    assert_true(cold.vals[LUTQ_VTH] > hot.vals[LUTQ_VTH] + 0.02);
    char_result_free(&hot);
    char_result_free(&cold);
    diag_free(&d);
}

/* char_run writes a table that reads back as built, and keeps the deck when asked. */
static void test_run_writes_table(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    static const double l[] = {0.5e-6, 1e-6};
    CharSpec s = spec("nch", l, 2);
    char *out = TU_TMPFILE("nch.lut", "");
    char *deck = TU_TMPFILE("nch.cir", "");
    s.deck_copy = deck;
    DiagList d;
    diag_init(&d);
    assert_int_equal(char_run(&s, out, NULL, NULL, &d), ERR_OK);
    Lut *t = lut_load(out, &d);
    assert_non_null(t);
    CharResult r;
    assert_int_equal(char_build(&s, NULL, NULL, &r, &d), ERR_OK);
    LutVals v;
    assert_int_equal(lut_eval(t, 1e-6, 0.6, 0.6, 0.5, &v), 0);
    size_t node = ((1 * 2 + 1) * 3 + 1) * 5 + 2; /* L 1u, VSB 0.5, VDS 0.6, VGS 0.6 */
    assert_close(v.q[LUTQ_ID], r.vals[node * LUTQ_COUNT + LUTQ_ID], 1e-6); /* floats in memory */
    SrcFile f;
    assert_int_equal(src_load(&f, deck, (SrcLoc){0}, &d), ERR_OK);
    assert_non_null(strstr(f.text, "dc vgs 0.2 1 0.2 vds"));
    assert_non_null(strstr(f.text, ".include '/"));
    assert_non_null(strstr(f.text, "m1 d g 0 b nch w=5e-06 l=1e-06"));
    src_free(&f);
    lut_free(t);
    char_result_free(&r);
    free(out);
    free(deck);
    diag_free(&d);
}

/* ---- failures ---------------------------------------------------------------------------------- */

static char tmpdir[64];

static int count_entries(const char *dir)
{
    DIR *dp = opendir(dir);
    if (!dp)
        return -1;
    int n = 0;
    struct dirent *e;
    while ((e = readdir(dp)))
        n += strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0;
    closedir(dp);
    return n;
}

static char *abs_path(const char *rel)
{
    char cwd[1024];
    assert_non_null(getcwd(cwd, sizeof cwd));
    char *p = malloc(strlen(cwd) + strlen(rel) + 2);
    sprintf(p, "%s/%s", cwd, rel);
    return p;
}

/* Each failure: the status, a message naming the cause, no table, and the temporary folder gone. */
static void test_failures(void **state)
{
    (void)state;
    int ng = tu_have_ngspice();
    snprintf(tmpdir, sizeof tmpdir, "/tmp/biaslint-tchar-XXXXXX");
    assert_non_null(mkdtemp(tmpdir));
    char *old = getenv("TMPDIR") ? strdup(getenv("TMPDIR")) : NULL;
    setenv("TMPDIR", tmpdir, 1);
    char *fail_sh = abs_path("fixtures/lut/fake-fail.sh"), *cut_sh = abs_path("fixtures/lut/fake-truncate.sh");
    static const double l[] = {1e-6, 2e-6};
    static const double lbad[] = {2e-6, 1e-6};
    struct {
        const char *models, *section, *model, *ngspice;
        const double *l;
        double vds0;
        int needs_ngspice, rc;
        const char *msg, *msg2;
    } rows[] = {
        {MODELS, NULL, "nope", NULL, l, 0.1, 0, ERR_INPUT, "no MOSFET model 'nope'", "nch, pch, n1, p1"},
        {"fixtures/lut/none.inc", NULL, "nch", NULL, l, 0.1, 0, ERR_INPUT, "cannot read the model file", NULL},
        {"fixtures/lut/other.inc", NULL, "nodd", NULL, l, 0.1, 0, ERR_INPUT, "level 44", NULL},
        {"fixtures/lut/other.inc", NULL, "dd", NULL, l, 0.1, 0, ERR_INPUT, "no MOSFET model 'dd'", NULL},
        {"fixtures/lut/corners.lib", "nosuch", "nch", NULL, l, 0.1, 0, ERR_INPUT, "nosuch", NULL},
        {MODELS, NULL, "nch", NULL, lbad, 0.1, 0, ERR_INPUT, "lengths must increase", NULL},
        {MODELS, NULL, "nch", NULL, l, -0.1, 0, ERR_INPUT, "VDS >= 0", NULL},
        {MODELS, NULL, "nch", "/nonexistent/bin/ngspice", l, 0.1, 0, ERR_IO, "ngspice not found", NULL},
        {MODELS, NULL, "nch", fail_sh, l, 0.1, 0, ERR_INPUT, "exit status 3", "for some reason of its own"},
        {"fixtures/lut/broken.inc", NULL, "nbad", NULL, l, 0.1, 1, ERR_INPUT, "ngspice", "Toxe"},
        {MODELS, NULL, "nch", cut_sh, l, 0.1, 1, ERR_INPUT, "ends inside the sweep", NULL},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        if (rows[i].needs_ngspice && !ng)
            continue;
        CharSpec s = spec(rows[i].model, rows[i].l, 2);
        s.models = rows[i].models;
        s.section = rows[i].section;
        s.ngspice = rows[i].ngspice;
        s.vds.start = rows[i].vds0;
        char out[128];
        snprintf(out, sizeof out, "%s/out.lut", tmpdir);
        DiagList d;
        diag_init(&d);
        int rc = char_run(&s, out, NULL, NULL, &d);
        if (rc != rows[i].rc)
            fail_msg("row %zu: status %d, expected %d", i, rc, rows[i].rc);
        assert_true(d.nerrors >= 1);
        int found = 0, found2 = rows[i].msg2 == NULL;
        for (size_t k = 0; k < d.n; k++) {
            found |= strstr(d.items[k].msg, rows[i].msg) != NULL;
            found2 |= rows[i].msg2 && strstr(d.items[k].msg, rows[i].msg2) != NULL;
        }
        if (!found || !found2) {
            diag_print(&d, stderr, 0, DIAG_NOTE);
            fail_msg("row %zu: no message with '%s' / '%s'", i, rows[i].msg, rows[i].msg2 ? rows[i].msg2 : "");
        }
        if (count_entries(tmpdir) != 0) { /* no table, no temporary folder */
            char cmd[200];
            snprintf(cmd, sizeof cmd, "ls -laR %s >&2", tmpdir);
            if (system(cmd) != 0)
                fprintf(stderr, "(ls failed)\n");
            fail_msg("row %zu left files behind", i);
        }
        diag_free(&d);
    }
    if (old) {
        setenv("TMPDIR", old, 1);
        free(old);
    } else {
        unsetenv("TMPDIR");
    }
    rmdir(tmpdir);
    free(fail_sh);
    free(cut_sh);
}

/* The sweep reader alone (char_read_sweep, the fuzz target's entry) on ngspice's own output for a
 * small grid (the fuzz seeds, made by ngspice from the demo's models: a mode byte, then the raw
 * file): it reads back, and a file cut short, or one of a PMOS read as an NMOS, is refused with a
 * message. */
static void sweep_file(const char *seed, size_t keep, char **path, unsigned *mode)
{
    FILE *fp = fopen(seed, "rb");
    assert_non_null(fp);
    static char buf[1 << 16];
    size_t n = fread(buf, 1, sizeof buf, fp);
    fclose(fp);
    assert_true(n > 100);
    *mode = (unsigned char)buf[0];
    *path = tu_tmpfile("sweep.raw", buf + 1, keep && keep < n - 1 ? keep : n - 1);
    assert_non_null(*path);
}

static int read_sweep(const char *path, unsigned mode, DiagList *d)
{
    CharSpec s;
    sweep_grid(&s);
    return char_read_sweep(&s, mode & 1 ? MOS_PMOS : MOS_NMOS, !(mode & 2), path, d);
}

static void test_sweep_reader(void **state)
{
    (void)state;
    static const char *const seeds[] = {"fuzz/seeds/sweep/nmos-bsim.raw", "fuzz/seeds/sweep/pmos-bsim.raw",
                                        "fuzz/seeds/sweep/nmos-level1.raw"};
    for (size_t i = 0; i < 3; i++) {
        char *path;
        unsigned mode;
        DiagList d;
        sweep_file(seeds[i], 0, &path, &mode);
        diag_init(&d);
        assert_int_equal(read_sweep(path, mode, &d), ERR_OK);
        assert_int_equal(d.nerrors, 0);
        diag_free(&d);
        diag_init(&d); /* the other type: the swept voltages have the other sign */
        assert_int_equal(read_sweep(path, mode ^ 1u, &d), ERR_INPUT);
        assert_non_null(strstr(d.items[0].msg, "swept other values than asked"));
        diag_free(&d);
        free(path);
        sweep_file(seeds[i], 600, &path, &mode); /* cut inside the first plot's values */
        diag_init(&d);
        assert_int_equal(read_sweep(path, mode, &d), ERR_INPUT);
        assert_true(d.nerrors == 1 && d.items[0].msg[0]);
        diag_free(&d);
        free(path);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_range_points),
        cmocka_unit_test(test_nmos_bsim4_matches_op),
        cmocka_unit_test(test_pmos_bsim4_matches_op),
        cmocka_unit_test(test_pmos_level1_matches_op),
        cmocka_unit_test(test_section_and_temperature),
        cmocka_unit_test(test_run_writes_table),
        cmocka_unit_test(test_failures),
        cmocka_unit_test(test_sweep_reader),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
