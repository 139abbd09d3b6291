/* bench_lut: the measurements of the lookup-table issue, run by `make bench` (from tests/):
 *
 *   1. characterize time on a 10 L x 73 VGS x 37 VDS x 5 VSB grid, NMOS and PMOS. Floor: biaslint's
 *      overhead at most 20 % of ngspice's time. Measured inside one run (char_build, lut_check,
 *      lut_write in this process: everything but the ngspice child, against the child's wall time),
 *      which a shared machine disturbs little; and, as a cross-check, `biaslint characterize` end to
 *      end against `ngspice -b` alone on the very deck biaslint wrote (--deck), interleaved runs,
 *      whose times swing by a factor of several when other jobs share the CPUs.
 *   2. accuracy: gm/ID from the table against ngspice's own operating point (lutref.h) at random
 *      points in saturation, off the 25 mV VGS grid (and the 50 mV VDS grid); L and VSB on their grid
 *      values (set A) and anywhere between them (set B). Floor: median <= 0.5 %, 95th percentile <= 2 %.
 *   3. speed: full evaluations (every quantity and the derived figures) per second at random points.
 *      Floor: 5 M/s.
 *
 * Models: ngspice's default BSIM4 (tests/fixtures/lut/models.inc) and the demo's invented ones
 * (netlists-demo/models.lib, section mild). Usage: bench_lut BIASLINT [quick]. Exit status 1 when a
 * floor is not met. */
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "characterize.h"
#include "diag.h"
#include "lut.h"
#include "lutref.h"

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static unsigned long long rng = 0x2545f4914f6cdd1dull;
static double urand(void)
{
    rng ^= rng << 13;
    rng ^= rng >> 7;
    rng ^= rng << 17;
    return (double)(rng >> 11) / 9007199254740992.0;
}

static int cmp_d(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

static double median(double *v, int n)
{
    qsort(v, (size_t)n, sizeof *v, cmp_d);
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* Run argv with cwd dir (NULL: here), output to /dev/null; wall seconds, or -1 when it failed. */
static double run_timed(char *const argv[], const char *dir)
{
    double t0 = now_s();
    pid_t pid = fork();
    if (pid < 0)
        return -1;
    if (pid == 0) {
        int fd = open("/dev/null", O_WRONLY);
        if (fd < 0 || (dir && chdir(dir) != 0) || dup2(fd, 1) < 0 || dup2(fd, 2) < 0)
            _exit(126);
        execvp(argv[0], argv);
        _exit(127);
    }
    int st;
    while (waitpid(pid, &st, 0) < 0 && errno == EINTR)
        ;
    double t = now_s() - t0;
    return WIFEXITED(st) && WEXITSTATUS(st) == 0 ? t : -1;
}

static const char *const LLIST = "180n,250n,350n,500n,700n,1u,1.5u,2u,4u,10u";

typedef struct {
    const char *label, *models, *section, *model;
    int pmos;
} Dev;

static int failed_floor;

/* A fixed arithmetic loop (3e8 dependent multiply-adds), in seconds: how much of a CPU this process
 * gets right now. Timings on a shared machine mean little without it. */
static double calibrate(void)
{
    volatile double seed = 1.0;
    double y = seed, t0 = now_s();
    for (long i = 0; i < 300000000L; i++)
        y = y * 1.0000001 + 1e-9;
    seed = y;
    return now_s() - t0;
}

/* 1: time biaslint characterize against ngspice on the same deck; leaves the table in table_out. */
static void bench_characterize(const char *bl, const Dev *dv, const char *work, const char *table_out, int reps)
{
    char deck[512], rundir[512];
    snprintf(deck, sizeof deck, "%s/%s.cir", work, dv->label);
    snprintf(rundir, sizeof rundir, "%s/ngspice-%s", work, dv->label);
    mkdir(rundir, 0700);
    char *bargv[32];
    int k = 0;
    bargv[k++] = (char *)bl;
    bargv[k++] = "characterize";
    bargv[k++] = "--models";
    bargv[k++] = (char *)dv->models;
    if (dv->section) {
        bargv[k++] = "--section";
        bargv[k++] = (char *)dv->section;
    }
    bargv[k++] = "--model";
    bargv[k++] = (char *)dv->model;
    bargv[k++] = "--l";
    bargv[k++] = (char *)LLIST;
    bargv[k++] = "--vgs";
    bargv[k++] = "0:1.8:25m";
    bargv[k++] = "--vds";
    bargv[k++] = "0:1.8:50m";
    bargv[k++] = "--vsb";
    bargv[k++] = "0:1:0.25";
    bargv[k++] = "--wref";
    bargv[k++] = "10u";
    bargv[k++] = "--deck";
    bargv[k++] = deck;
    bargv[k++] = "-o";
    bargv[k++] = (char *)table_out;
    bargv[k] = NULL;
    char *nargv[] = {"ngspice", "-b", deck, NULL};
    double tb[8], tn[8];
    for (int r = 0; r < reps; r++) {
        tb[r] = run_timed(bargv, NULL);
        tn[r] = run_timed(nargv, rundir); /* the deck writes sweep.raw into its folder */
        if (tb[r] < 0 || tn[r] < 0) {
            printf("  %-6s characterize FAILED (biaslint %.3f s, ngspice %.3f s)\n", dv->label, tb[r], tn[r]);
            failed_floor = 1;
            return;
        }
    }
    char raw[600];
    snprintf(raw, sizeof raw, "%s/sweep.raw", rundir);
    unlink(raw);
    rmdir(rundir);
    double bmin = tb[0], nmin = tn[0];
    for (int r = 1; r < reps; r++) {
        bmin = tb[r] < bmin ? tb[r] : bmin;
        nmin = tn[r] < nmin ? tn[r] : nmin;
    }
    double mb = median(tb, reps), mn = median(tn, reps);
    printf("  %-6s end to end, %d runs each: biaslint characterize best %.3f s (median %.3f), ngspice alone on its "
           "deck best %.3f s (median %.3f)\n",
           dv->label, reps, bmin, mb, nmin, mn);
}

/* 1b: biaslint's own work inside one characterize run, in seconds: the whole char_build + check +
 * write, less the ngspice child's wall time measured around it (fork to exit). */
static void bench_own(const Dev *dv, const char *work)
{
    static const double l[10] = {180e-9, 250e-9, 350e-9, 500e-9, 700e-9, 1e-6, 1.5e-6, 2e-6, 4e-6, 10e-6};
    CharSpec s;
    memset(&s, 0, sizeof s);
    s.models = dv->models;
    s.section = dv->section;
    s.model = dv->model;
    s.l = l;
    s.nl = 10;
    s.vgs = (CharRange){0, 1.8, 0.025};
    s.vds = (CharRange){0, 1.8, 0.05};
    s.vsb = (CharRange){0, 1, 0.25};
    s.temp_c = NAN;
    s.w_ref = 10e-6;
    CharResult r;
    DiagList d;
    diag_init(&d);
    char out[600];
    snprintf(out, sizeof out, "%s/own.lut", work);
    double t0 = now_s();
    int rc = char_build(&s, NULL, NULL, &r, &d);
    double t1 = now_s();
    FILE *fp = rc == ERR_OK ? fopen(out, "w") : NULL;
    if (!fp || lut_check(&r.info, r.vals, out, &d) != ERR_OK || lut_write(fp, &r.info, r.vals) != ERR_OK) {
        printf("  %-6s in-process run FAILED\n", dv->label);
        failed_floor = 1;
    } else {
        fclose(fp);
        double t2 = now_s();
        double own = (t1 - t0 - r.ngspice_seconds) + (t2 - t1), over = own / r.ngspice_seconds;
        printf("  %-6s 135050 points in one run: ngspice %.3f s, biaslint's own work %.3f s (deck, model probe, raw "
               "file %.3f s; check and table file %.3f s): overhead %.1f %% -> %s\n",
               dv->label, r.ngspice_seconds, own, t1 - t0 - r.ngspice_seconds, t2 - t1, 100 * over,
               over <= 0.20 ? "floor met (<= 20 %)" : "FLOOR NOT MET (> 20 %)");
        if (over > 0.20)
            failed_floor = 1;
        fp = NULL;
    }
    if (fp)
        fclose(fp);
    unlink(out);
    if (rc == ERR_OK)
        char_result_free(&r);
    diag_free(&d);
}

/* 2: gm/ID errors against ngspice at n random saturated points. mode 0: L and VSB on their grid
 * values (the floor's case: off the 25 mV grid); 1: L on its grid, VSB anywhere (a netlist's devices);
 * 2: every axis anywhere. */
static void bench_accuracy(const Lut *t, const Dev *dv, int mode, int n)
{
    const LutInfo *in = lut_info(t);
    RefPoint *p = calloc((size_t)n, sizeof *p);
    RefVals *r = calloc((size_t)n, sizeof *r);
    double *err = calloc((size_t)n, sizeof *err);
    for (int i = 0; i < n; i++) {
        double a = log(in->axis[LUTAX_L][0]), b = log(in->axis[LUTAX_L][in->n[LUTAX_L] - 1]);
        p[i].l = mode < 2 ? in->axis[LUTAX_L][(size_t)(urand() * (double)in->n[LUTAX_L])] : exp(a + (b - a) * urand());
        p[i].vsb = mode == 0 ? in->axis[LUTAX_VSB][(size_t)(urand() * (double)in->n[LUTAX_VSB])]
                             : in->axis[LUTAX_VSB][in->n[LUTAX_VSB] - 1] * urand();
        double g;
        do /* off the 25 mV grid by at least 1 mV */
            g = 0.1 + 1.6 * urand();
        while (fabs(g / 0.025 - floor(g / 0.025 + 0.5)) < 0.04);
        p[i].vgs = g;
        p[i].vds = 0.1 + 1.65 * urand();
    }
    char *dir = ref_dir();
    if (!dir || ref_op(dir, dv->models, dv->section, dv->model, dv->pmos, 0, in->w_ref, p, (size_t)n, r) != 0) {
        printf("  %-6s accuracy: ngspice reference FAILED\n", dv->label);
        failed_floor = 1;
        ref_dir_free(dir);
        free(p), free(r), free(err);
        return;
    }
    ref_dir_free(dir);
    int m = 0, weak = 0, strong = 0;
    for (int i = 0; i < n; i++) {
        if (!(p[i].vds > r[i].vdsat + 0.05) || !(r[i].id > 0))
            continue; /* saturation only */
        LutVals v;
        if (lut_eval(t, p[i].l, p[i].vgs, p[i].vds, p[i].vsb, &v))
            continue;
        double want = r[i].gm / r[i].id;
        err[m++] = fabs(v.gm_id / want - 1);
        weak += want > 20;
        strong += want < 10;
    }
    qsort(err, (size_t)m, sizeof *err, cmp_d);
    double med = m ? (m % 2 ? err[m / 2] : 0.5 * (err[m / 2 - 1] + err[m / 2])) : NAN;
    double p95 = m ? err[(int)(0.95 * (m - 1))] : NAN, mx = m ? err[m - 1] : NAN;
    int ok = med <= 0.005 && p95 <= 0.02;
    static const char *const what[] = {"L, VSB on grid; VGS, VDS off grid:", "L on grid; VSB, VGS, VDS anywhere:",
                                       "every axis off grid:"};
    printf("  %-6s %-36s %4d points (%d weak, %d strong): median %.3f %%, p95 %.3f %%, max %.2f %% -> %s\n",
           dv->label, what[mode], m, weak, strong, 100 * med, 100 * p95, 100 * mx,
           ok ? "within the floor" : "NOT WITHIN THE FLOOR");
    if (!ok)
        failed_floor = 1;
    free(p), free(r), free(err);
}

/* 3: evaluations per second inside the grid: random points (every axis anywhere), and the check
 * workload (L one of the table's lengths, as a netlist's devices are; VSB, VDS, VGS anywhere). */
static double rate(const Lut *t, double (*pt)[4], int n, int gmid_only, double *sink)
{
    double best = 0;
    LutVals v;
    for (int rep = 0; rep < 5; rep++) {
        double t0 = now_s();
        for (int i = 0; i < n; i++) {
            if (gmid_only) {
                double g;
                lut_eval_gmid(t, pt[i][0], pt[i][1], pt[i][2], pt[i][3], &g, NULL);
                *sink += g;
            } else {
                lut_eval(t, pt[i][0], pt[i][1], pt[i][2], pt[i][3], &v);
                *sink += v.gm_id;
            }
        }
        double r = n / (now_s() - t0);
        best = r > best ? r : best;
    }
    return best;
}

static void bench_speed(const Lut *t, const char *label, int n)
{
    const LutInfo *in = lut_info(t);
    double (*pt)[4] = malloc((size_t)n * sizeof *pt);
    double la = log(in->axis[LUTAX_L][0]), lb = log(in->axis[LUTAX_L][in->n[LUTAX_L] - 1]);
    double vg = in->axis[LUTAX_VGS][in->n[LUTAX_VGS] - 1], vd = in->axis[LUTAX_VDS][in->n[LUTAX_VDS] - 1];
    double vb = in->axis[LUTAX_VSB][in->n[LUTAX_VSB] - 1];
    double sink = 0;
    for (int mode = 0; mode < 2; mode++) {
        for (int i = 0; i < n; i++) {
            pt[i][0] = mode ? in->axis[LUTAX_L][(size_t)(urand() * (double)in->n[LUTAX_L])]
                            : exp(la + (lb - la) * urand());
            pt[i][1] = vg * urand();
            pt[i][2] = vd * urand();
            pt[i][3] = vb * urand();
        }
        double full = rate(t, pt, n, 0, &sink), gmid = rate(t, pt, n, 1, &sink);
        printf("  %-6s %-34s full evaluations %.2f M/s; gm/ID interpolations %.2f M/s -> %s\n", label,
               mode ? "L on its grid, VSB/VDS/VGS anywhere:" : "every axis anywhere:", full / 1e6, gmid / 1e6,
               gmid >= 5e6 ? "floor met (>= 5 M/s)" : "FLOOR NOT MET (< 5 M/s)");
        if (gmid < 5e6)
            failed_floor = 1;
    }
    printf("         (best of 5 runs of %d points; full = all nine quantities and the derived figures)%s\n", n,
           sink == 0 ? " " : "");
    free(pt);
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "usage: bench_lut BIASLINT [quick]\n");
        return 2;
    }
    int quick = argc > 2 && strcmp(argv[2], "quick") == 0;
    setvbuf(stdout, NULL, _IOLBF, 0);
    char bl[1024];
    if (argv[1][0] == '/')
        snprintf(bl, sizeof bl, "%s", argv[1]);
    else {
        char cwd[900];
        if (!getcwd(cwd, sizeof cwd))
            return 2;
        snprintf(bl, sizeof bl, "%s/%s", cwd, argv[1]);
    }
    char work[] = "/tmp/biaslint-benchlut-XXXXXX";
    if (!mkdtemp(work))
        return 2;
    double load[3] = {0};
    FILE *la = fopen("/proc/loadavg", "r");
    if (la) {
        if (fscanf(la, "%lf %lf %lf", &load[0], &load[1], &load[2]) != 3)
            load[0] = NAN;
        fclose(la);
    }
    printf("bench_lut: lookup tables (load average %.2f, %ld CPUs; reference loop %.2f s)\n", load[0],
           sysconf(_SC_NPROCESSORS_ONLN), calibrate());
    static const Dev devs[] = {
        {"nch", "fixtures/lut/models.inc", NULL, "nch", 0},
        {"pch", "fixtures/lut/models.inc", NULL, "pch", 1},
        {"ncore", "../netlists-demo/models.lib", "mild", "ncore", 0},
        {"pcore", "../netlists-demo/models.lib", "mild", "pcore", 1},
    };
    size_t ndev = sizeof devs / sizeof devs[0];
    char tables[4][600];
    printf("1. characterize time: biaslint's own work against ngspice's in the same run (the floor), then end to\n"
           "   end against ngspice alone on the same deck (a cross-check that the machine's load disturbs)\n");
    for (size_t i = 0; i < ndev; i++)
        bench_own(&devs[i], work);
    for (size_t i = 0; i < ndev; i++) {
        snprintf(tables[i], sizeof tables[i], "%s/%s.lut", work, devs[i].label);
        bench_characterize(bl, &devs[i], work, tables[i], quick ? 1 : 3);
    }
    printf("2. gm/ID accuracy against ngspice's operating point, saturation (VDS > VDSAT + 50 mV); floor: median\n"
           "   <= 0.5 %%, 95th percentile <= 2 %%\n");
    Lut *lt[4] = {NULL};
    for (size_t i = 0; i < ndev; i++) {
        DiagList d;
        diag_init(&d);
        lt[i] = lut_load(tables[i], &d);
        if (!lt[i]) {
            diag_print(&d, stdout, 0, DIAG_NOTE);
            failed_floor = 1;
        } else {
            for (int mode = 0; mode < 3; mode++)
                bench_accuracy(lt[i], &devs[i], mode, quick ? 300 : 2000);
        }
        diag_free(&d);
    }
    printf("3. interpolation speed\n");
    if (lt[0])
        bench_speed(lt[0], devs[0].label, quick ? 1000000 : 5000000);
    for (size_t i = 0; i < ndev; i++) {
        lut_free(lt[i]);
        unlink(tables[i]);
        char deck[600];
        snprintf(deck, sizeof deck, "%s/%s.cir", work, devs[i].label);
        unlink(deck);
    }
    rmdir(work);
    printf("bench_lut: %s (reference loop now %.2f s)\n", failed_floor ? "a floor was NOT met" : "every floor met",
           calibrate());
    return failed_floor;
}
