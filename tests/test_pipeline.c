/* test_pipeline: netlist reader, dump readers, join and figures together, against ngspice itself.
 * For every circuit in tests/circuits/ the test simulates it with ngspice, asks ngspice to print
 * each device's id, gm, gds, vdsat, vth (or von) with 15 digits (`print` with numdgt, a path
 * independent of biaslint's readers), and checks that biaslint, reading the `show` log and the raw
 * file, finds the same devices with the same values (6 printed digits for show, 1e-12 for raw),
 * and that the derived figures follow their formulas. */
#define _DEFAULT_SOURCE /* realpath */
#include "testutil.h"

#include <dirent.h>
#include <sys/stat.h>

#include "join.h"
#include "metrics.h"
#include "netlist.h"
#include "opdump.h"
#include "rules.h"

#define QTY_CHECKED 5
static const char *const qty_checked[QTY_CHECKED] = {"id", "gm", "gds", "vdsat", "vth"};
static const OpQty qty_enum[QTY_CHECKED] = {OPQ_ID, OPQ_GM, OPQ_GDS, OPQ_VDSAT, OPQ_VTH};

typedef struct {
    char name[64];      /* canonical */
    double v[QTY_CHECKED];
    int mos1;
} RefDev;

static int run_ngspice(const char *dir, const char *deck, const char *log)
{
    char cmd[1024];
    snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b '%s' >'%s' 2>'%s.err'", dir, deck, log, log);
    return system(cmd);
}

/* ngspice's vector name for a canonical device name: "mn1" -> "@mn1", "x1.m3" -> "@m.x1.m3". */
static void vec_name(const char *canon, char *out, size_t n)
{
    snprintf(out, n, strchr(canon, '.') ? "@m.%s" : "@%s", canon);
}

/* Value of `NAME = value` in ngspice print output, NAN when absent. */
static double printed(const char *log, const char *vec)
{
    size_t n = strlen(vec);
    for (const char *p = log; (p = strstr(p, vec)); p += n) {
        if ((p == log || p[-1] == '\n') && strncmp(p + n, " = ", 3) == 0)
            return strtod(p + n + 3, NULL);
    }
    return NAN;
}

static void check_circuit(const char *dir, const char *cir)
{
    char path[512], deck[512], log[512];
    snprintf(path, sizeof path, "%s/%s", dir, cir);

    /* 1. biaslint's own view of the netlist */
    Design ds;
    memset(&ds, 0, sizeof ds);
    DiagList d;
    diag_init(&d);
    NlOptions nlo = {0, 0, 0};
    int rc = nl_load(path, &nlo, &ds, &d);
    if (rc != ERR_OK)
        diag_print(&d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    assert_true(ds.ndevs > 0);

    /* 2. a deck that prints the reference values, writes the show log and the raw file */
    char work[] = "/tmp/biaslint-pipe-XXXXXX";
    assert_non_null(mkdtemp(work));
    snprintf(deck, sizeof deck, "%s/deck.cir", work);
    FILE *fp = fopen(deck, "w");
    assert_non_null(fp);
    char abs[1024];
    assert_non_null(realpath(path, abs));
    fprintf(fp, "* wrapper for %s\n.include %s\n.control\n", cir, abs);
    fprintf(fp, "save all"); /* vectors must be named before op: ngspice has no wildcards */
    for (size_t i = 0; i < ds.ndevs; i++) {
        char v[128];
        vec_name(ds.devs[i].simname ? ds.devs[i].simname : ds.devs[i].name, v, sizeof v); /* record name */
        fprintf(fp, " %s[id] %s[gm] %s[gds] %s[vdsat] %s[vgs] %s[vds] %s[vbs]", v, v, v, v, v, v, v);
        fprintf(fp, ds.devs[i].mdl && ds.devs[i].mdl->level == 1 ? " %s[von]" : " %s[vth] %s[cgg]", v, v);
    }
    fprintf(fp, "\nop\nset width=400\nset numdgt=15\n");
    fprintf(fp, "show m : id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb\n");
    fprintf(fp, "write %s/op.raw\n", work);
    for (size_t i = 0; i < ds.ndevs; i++) {
        char v[128];
        vec_name(ds.devs[i].simname ? ds.devs[i].simname : ds.devs[i].name, v, sizeof v); /* record name */
        int l1 = ds.devs[i].mdl && ds.devs[i].mdl->level == 1;
        fprintf(fp, "print %s[id] %s[gm] %s[gds] %s[vdsat] %s[%s]\n", v, v, v, v, v, l1 ? "von" : "vth");
    }
    fprintf(fp, "quit\n.endc\n.end\n");
    fclose(fp);
    snprintf(log, sizeof log, "%s/show.log", work);
    assert_int_equal(run_ngspice(work, "deck.cir", log), 0);
    char *text = tu_slurp(log, NULL);
    assert_non_null(text);

    /* 3. read both dumps and join them */
    RuleSet *rs = rule_new_defaults(&d);
    assert_non_null(rs);
    char rawpath[512];
    snprintf(rawpath, sizeof rawpath, "%s/op.raw", work);
    const char *dumps[2] = {log, rawpath};
    const double tol[2] = {6e-6, 1e-12};
    for (int k = 0; k < 2; k++) {
        OpTable *t = NULL;
        rc = op_read(dumps[k], OPFMT_AUTO, &t, &d);
        if (rc != ERR_OK)
            diag_print(&d, stderr, 0, DIAG_NOTE);
        assert_int_equal(rc, ERR_OK);
        Joined j;
        JoinOptions jo = {0, 0.5, 0};
        rc = join_run(&ds, t, rs, &jo, &j, &d);
        if (rc != ERR_OK)
            diag_print(&d, stderr, 0, DIAG_NOTE);
        assert_int_equal(rc, ERR_OK);
        assert_int_equal(j.nmatched, ds.ndevs); /* every device found, under its flattened name */
        assert_int_equal(j.norphans, 0);
        for (size_t i = 0; i < j.n; i++) {
            const Row *r = &j.rows[i];
            char v[128], q[160];
            vec_name(r->dev->simname ? r->dev->simname : r->dev->name, v, sizeof v);
            int l1 = r->dev->mdl && r->dev->mdl->level == 1;
            for (int c = 0; c < QTY_CHECKED; c++) {
                snprintf(q, sizeof q, "%s[%s]", v, c == 4 && l1 ? "von" : qty_checked[c]);
                double ref = printed(text, q);
                if (isnan(ref))
                    print_error("no printed value for %s\n", q);
                assert_false(isnan(ref));
                double got = r->op->q[c == 4 && l1 ? OPQ_VON : qty_enum[c]];
                if (fabs(ref) < 1e-30 && fabs(got) < 1e-30)
                    continue;
                assert_close(got, ref, tol[k]);
            }
            /* derived figures follow their formulas from the normalized values */
            const Figures *g = &r->fig;
            if (g->id > 0 && g->gm > 0)
                assert_close(g->gm_id, g->gm / g->id, 1e-12);
            if (g->gds > 0)
                assert_close(g->gain, g->gm / g->gds, 1e-12);
            if (!isnan(g->vdsat) && !isnan(g->vds))
                assert_close(g->margin, g->vds - g->vdsat, 1e-12);
            if (!isnan(g->cgg) && g->cgg > 0)
                assert_close(g->ft, g->gm / (2 * 3.14159265358979323846 * g->cgg), 1e-12);
            /* physics bound: gm/ID <= 1/UT at the simulation temperature (weak-inversion limit with
               slope factor n >= 1; Tsividis & McAndrew, Operation and Modeling of the MOS
               Transistor, 3rd ed., weak inversion chapter; from memory) */
            if (!isnan(g->gm_id) && g->region != REGION_OFF)
                assert_true(g->gm_id < 1.0 / fig_ut(27.0));
            /* level 1 in saturation: gm/ID = 2/VOV exactly, the (1+lambda*VDS) factor cancels
               (Shichman & Hodges, IEEE JSSC SC-3(3), 1968; square law: Razavi, Design of Analog
               CMOS Integrated Circuits, 2nd ed., ch. 2) */
            if (l1 && g->region != REGION_OFF && g->region != REGION_TRIODE && g->vov > 0)
                assert_close(g->gm_id, 2.0 / g->vov, 1e-5);
        }
        join_free(&j);
        op_free(t);
    }
    rule_free(rs);
    free(text);
    nl_free(&ds);
    diag_free(&d);
    char cmd[600];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", work);
    assert_int_equal(system(cmd), 0);
}

static void test_circuits_against_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    DIR *dir = opendir("circuits");
    assert_non_null(dir);
    struct dirent *e;
    int n = 0;
    while ((e = readdir(dir))) {
        size_t len = strlen(e->d_name);
        if (len > 4 && strcmp(e->d_name + len - 4, ".cir") == 0) {
            fprintf(stderr, "  circuit %s\n", e->d_name);
            check_circuit("circuits", e->d_name);
            n++;
        }
    }
    closedir(dir);
    assert_true(n >= 5);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_circuits_against_ngspice),
    };
    return cmocka_run_group_tests_name("pipeline", tests, NULL, NULL);
}
