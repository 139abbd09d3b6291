/* characterize: the ngspice sweep behind `biaslint characterize`. Everything happens in a private
 * temporary folder: probe.cir (a two-line netlist that .lib's the model file, read with nl_load to
 * learn the model's type and level from its .model card), sweep.cir (the deck), sweep.raw (what
 * ngspice writes), ngspice.out (its standard output). The folder is removed afterwards.
 *
 * The deck: one MOSFET per L, all on the same three ideal sources (gate, drain, bulk; the source
 * pin at ground), W = w_ref, nf = m = 1. For PMOS the sources are written the other way round, so
 * the swept values stay magnitudes. The control block, per VSB value: `alter` the bulk source,
 * then `dc VGS ... VDS ...` (VGS inner) over a block of VDS values, `write` (appended to one
 * binary raw file), `destroy all`. Several VDS blocks per VSB value give the progress bar steps;
 * the raw file's size tells how far ngspice is.
 *
 * Checks on what comes back: ngspice ran and exited 0; the raw file has every plot, each with
 * every point, with no vector ngspice could not fill (dims=0); the gate, drain and bulk voltages of
 * every point are the grid's; every value is finite; the temperature ngspice reports is the one
 * asked for. Anything else is an error that quotes ngspice's last messages, and no table is made. */
#define _XOPEN_SOURCE 700 /* realpath */
#include "characterize.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "buf.h"
#include "netlist.h"
#include "outfile.h"
#include "source.h"

#define MAX_AXIS_POINTS 100000
#define MAX_L 1000
#define CHUNK_TARGET 20      /* dc commands to aim for, for a progress bar with some steps */
#define STDERR_KEEP 8        /* ngspice's last stderr lines quoted in an error */

/* Families of models, by what ngspice reports for them. */
enum { FAM_BSIM, FAM_MOS };

/* Saved per device, by family. The quantity's ngspice name and where it goes. */
typedef struct {
    const char *name;
    LutQty q;
    int required;
} SaveQ;

static const SaveQ save_bsim[] = {{"id", LUTQ_ID, 1},       {"gm", LUTQ_GM, 1},     {"gds", LUTQ_GDS, 1},
                                  {"gmbs", LUTQ_GMBS, 0},   {"cgg", LUTQ_CGG, 0},   {"cgs", LUTQ_CGS, 0},
                                  {"cgd", LUTQ_CGD, 0},     {"vth", LUTQ_VTH, 1},   {"vdsat", LUTQ_VDSAT, 1}};
static const SaveQ save_mos[] = {{"id", LUTQ_ID, 1},     {"gm", LUTQ_GM, 1},   {"gds", LUTQ_GDS, 1},
                                 {"gmbs", LUTQ_GMBS, 0}, {"von", LUTQ_VTH, 1}, {"vdsat", LUTQ_VDSAT, 1}};

int char_range_points(const CharRange *r, const char *what, double **out, size_t *n, DiagList *d)
{
    *out = NULL;
    *n = 0;
    if (!isfinite(r->start) || !isfinite(r->stop) || !isfinite(r->step))
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "%s grid: start, stop and step must be numbers", what);
    if (r->stop < r->start)
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "%s grid %g:%g:%g runs backwards: write START:STOP:STEP with "
                        "STOP >= START (PMOS grids are magnitudes too)", what, r->start, r->stop, r->step);
    if (r->stop > r->start && !(r->step > 0))
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "%s grid: the step must be positive, not %g", what, r->step);
    double span = r->stop - r->start;
    double k = span > 0 ? floor(span / r->step * (1 + 1e-9) + 1e-9) : 0;
    if (k + 1 > MAX_AXIS_POINTS)
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "%s grid %g:%g:%g has %.0f points; at most %d", what, r->start,
                        r->stop, r->step, k + 1, MAX_AXIS_POINTS);
    size_t cnt = (size_t)k + 1;
    double *v = malloc(cnt * sizeof *v);
    if (!v)
        return diag_nomem(d);
    for (size_t i = 0; i < cnt; i++) {
        double x = r->start + (double)i * r->step;
        /* 12 significant digits, so that 0.1 + 2*0.05 is 0.2 and the deck and the table agree */
        char tmp[40];
        snprintf(tmp, sizeof tmp, "%.12g", x);
        v[i] = strtod(tmp, NULL);
        if (v[i] == 0)
            v[i] = 0; /* no -0 */
    }
    *out = v;
    *n = cnt;
    return ERR_OK;
}

/* ---- the temporary folder -------------------------------------------------------------------- */

typedef struct {
    char *dir;
    Buf path; /* scratch for "<dir>/<name>" */
} Tmp;

static const char *const tmp_names[] = {"probe.cir", "sweep.cir", "sweep.raw", "ngspice.out"};

static const char *tmp_path(Tmp *t, const char *name)
{
    buf_clear(&t->path);
    if (buf_printf(&t->path, "%s/%s", t->dir, name) != ERR_OK)
        return NULL;
    return t->path.data;
}

static int tmp_open(Tmp *t, DiagList *d)
{
    const char *base = getenv("TMPDIR");
    if (!base || !base[0] || strpbrk(base, " \t\n'\""))
        base = "/tmp";
    Buf b = BUF_INIT;
    if (buf_printf(&b, "%s/biaslint-char-XXXXXX", base) != ERR_OK)
        return diag_nomem(d);
    if (!mkdtemp(b.data)) {
        int e = errno;
        diag_add(d, DIAG_ERROR, (SrcLoc){0}, "cannot create a temporary folder under %s: %s", base, strerror(e));
        buf_free(&b);
        return ERR_IO;
    }
    t->dir = b.data;
    return ERR_OK;
}

/* Remove the folder and what is in it: ours (tmp_names) and whatever ngspice wrote there (BSIM4
 * writes bsim4.out when a parameter check fails). The folder is private (mkdtemp), so all of it is
 * ours to remove; nothing below it is a folder. */
static void tmp_close(Tmp *t)
{
    if (t->dir) {
        for (size_t i = 0; i < sizeof tmp_names / sizeof tmp_names[0]; i++) {
            const char *p = tmp_path(t, tmp_names[i]);
            if (p)
                unlink(p);
        }
        DIR *dp = opendir(t->dir);
        struct dirent *e;
        while (dp && (e = readdir(dp))) {
            if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
                continue;
            const char *p = tmp_path(t, e->d_name);
            if (p)
                unlink(p);
        }
        if (dp)
            closedir(dp);
        rmdir(t->dir);
    }
    free(t->dir);
    buf_free(&t->path);
    t->dir = NULL;
}

static int write_file(const char *path, const char *data, size_t n, DiagList *d)
{
    FILE *fp = fopen(path, "wb");
    if (!fp) {
        int e = errno;
        return diag_add(d, DIAG_ERROR, (SrcLoc){path, 0, 0}, "cannot write: %s", strerror(e)), ERR_IO;
    }
    size_t w = n ? fwrite(data, 1, n, fp) : 0;
    int bad = w != n || fflush(fp) != 0;
    if (fclose(fp) != 0 || bad) {
        diag_add(d, DIAG_ERROR, (SrcLoc){path, 0, 0}, "cannot write the file (disk full?)");
        return ERR_IO;
    }
    return ERR_OK;
}

/* ---- the model ---------------------------------------------------------------------------------- */

typedef struct {
    MosType type;
    int level;
    int fam;
} ModelFacts;

/* The line that brings the models into a deck. */
static int put_models_line(Buf *b, const char *abs, const char *section)
{
    if (section)
        return buf_printf(b, ".lib '%s' %s\n", abs, section);
    return buf_printf(b, ".include '%s'\n", abs);
}

static int probe_model(const CharSpec *s, const char *abs, Tmp *t, ModelFacts *mf, DiagList *d)
{
    Buf b = BUF_INIT;
    int rc;
    if (buf_puts(&b, "* biaslint characterize: which model is it\n") || put_models_line(&b, abs, s->section) ||
        buf_puts(&b, ".end\n")) {
        buf_free(&b);
        return diag_nomem(d);
    }
    const char *probe = tmp_path(t, "probe.cir");
    if (!probe) {
        buf_free(&b);
        return diag_nomem(d);
    }
    char *probe_path = malloc(strlen(probe) + 1);
    if (!probe_path) {
        buf_free(&b);
        return diag_nomem(d);
    }
    strcpy(probe_path, probe);
    rc = write_file(probe_path, b.data, b.len, d);
    buf_free(&b);
    if (rc != ERR_OK) {
        free(probe_path);
        return rc;
    }
    Design ds;
    memset(&ds, 0, sizeof ds);
    NlOptions no;
    memset(&no, 0, sizeof no);
    DiagList pd;
    diag_init(&pd);
    rc = nl_load(probe_path, &no, &ds, &pd);
    /* the model file's own errors matter; its warnings belong to the file, not to this command */
    for (size_t i = 0; i < pd.n; i++) {
        const Diag *x = &pd.items[i];
        if (x->sev == DIAG_ERROR && x->loc.file && strcmp(x->loc.file, probe_path) != 0)
            diag_add(d, DIAG_ERROR, x->loc, "%s", x->msg);
        else if (x->sev == DIAG_ERROR)
            diag_add(d, DIAG_ERROR, (SrcLoc){s->models, 0, 0}, "%s", x->msg);
    }
    diag_free(&pd);
    free(probe_path);
    if (rc != ERR_OK)
        return rc == ERR_NOMEM ? diag_nomem(d) : ERR_INPUT;
    size_t want = strlen(s->model);
    const Model *hit = NULL;
    for (size_t i = 0; i < ds.nmodels && !hit; i++) {
        const char *nm = ds.models[i].name;
        if (strncasecmp(nm, s->model, want) == 0 && (nm[want] == '\0' || nm[want] == '.'))
            hit = &ds.models[i];
    }
    if (!hit) {
        Buf names = BUF_INIT;
        size_t shown = 0;
        for (size_t i = 0; i < ds.nmodels && shown < 12; i++)
            if (ds.models[i].type != MOS_UNKNOWN && buf_printf(&names, "%s%s", shown++ ? ", " : "", ds.models[i].name))
                break;
        diag_add(d, DIAG_ERROR, (SrcLoc){s->models, 0, 0}, "no MOSFET model '%s' in this file%s%s%s; its MOSFET models: %s",
                 s->model, s->section ? " (section " : "", s->section ? s->section : "", s->section ? ")" : "",
                 names.len ? names.data : "none");
        buf_free(&names);
        nl_free(&ds);
        return ERR_INPUT;
    }
    mf->type = hit->type;
    mf->level = hit->level;
    uint32_t card_line = hit->card_line; /* hit lives in ds, freed below */
    /* ngspice runs the .control blocks of every file it reads, shell commands included: a model file
       (or a file it includes) with one is refused, so that characterize runs nothing a file says.
       File 0 is the probe. */
    for (size_t i = 1; i < ds.files.n; i++) {
        const SrcFile *sf = ds.files.files[i];
        uint32_t line = 1;
        for (size_t k = 0; k < sf->len; line++) {
            size_t j = k;
            while (j < sf->len && (sf->text[j] == ' ' || sf->text[j] == '\t'))
                j++;
            if (sf->len - j >= 8 && strncasecmp(sf->text + j, ".control", 8) == 0 &&
                (sf->len - j == 8 || strchr(" \t\r\n", sf->text[j + 8]))) {
                diag_add(d, DIAG_ERROR, (SrcLoc){sf->path, line, (uint32_t)(j - k + 1)},
                         "a .control block in a model file: ngspice would run its commands, so biaslint does not "
                         "characterize from this file; remove the block (or copy the model cards to a file of their own)");
                nl_free(&ds);
                return ERR_INPUT;
            }
            const char *nl = memchr(sf->text + k, '\n', sf->len - k);
            k = nl ? (size_t)(nl - sf->text) + 1 : sf->len;
        }
    }
    nl_free(&ds);
    if (mf->type != MOS_NMOS && mf->type != MOS_PMOS)
        return diag_add(d, DIAG_ERROR, (SrcLoc){s->models, card_line, 0},
                        "model '%s' is not a MOSFET model (nmos or pmos)", s->model);
    switch (mf->level) {
    case 1:
    case 2:
    case 3:
        mf->fam = FAM_MOS;
        break;
    case 8:
    case 49:
    case 14:
    case 54:
        mf->fam = FAM_BSIM;
        break;
    default:
        return diag_add(d, DIAG_ERROR, (SrcLoc){s->models, card_line, 0},
                        "model '%s' is level %d: characterize knows levels 1, 2, 3 (they report von) and BSIM3/BSIM4 "
                        "(8, 49, 14, 54)",
                        s->model, mf->level);
    }
    return ERR_OK;
}

/* ---- the deck ---------------------------------------------------------------------------------- */

typedef struct {
    double *ax[LUTAX_COUNT];
    size_t n[LUTAX_COUNT];
    size_t nblk;      /* VDS blocks per VSB value */
    size_t blk;       /* VDS values per block (the last may have fewer) */
    size_t nplots;
    const SaveQ *save;
    size_t nsave;
} Plan;

/* The grid of spec s into pl (axes malloc'd: plan_free). ERR_INPUT with a diagnostic for a bad range
 * or a grid over 2^27 points. */
static int plan_axes(const CharSpec *s, Plan *pl, DiagList *d)
{
    memset(pl, 0, sizeof *pl);
    int rc;
    if ((rc = char_range_points(&s->vgs, "VGS", &pl->ax[LUTAX_VGS], &pl->n[LUTAX_VGS], d)) != ERR_OK ||
        (rc = char_range_points(&s->vds, "VDS", &pl->ax[LUTAX_VDS], &pl->n[LUTAX_VDS], d)) != ERR_OK ||
        (rc = char_range_points(&s->vsb, "VSB", &pl->ax[LUTAX_VSB], &pl->n[LUTAX_VSB], d)) != ERR_OK)
        return rc;
    pl->n[LUTAX_L] = s->nl;
    if (!(pl->ax[LUTAX_L] = malloc((s->nl ? s->nl : 1) * sizeof(double))))
        return diag_nomem(d);
    if (s->nl)
        memcpy(pl->ax[LUTAX_L], s->l, s->nl * sizeof(double));
    size_t nodes = s->nl * pl->n[LUTAX_VSB] * pl->n[LUTAX_VDS] * pl->n[LUTAX_VGS];
    if (nodes > ((size_t)1 << 27))
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "the grid has %zu points: at most %zu", nodes, (size_t)1 << 27);
    return ERR_OK;
}

/* What to save for a model of family fam, and the VDS blocks (plots) of the sweep. */
static void plan_blocks(Plan *pl, int fam)
{
    pl->save = fam == FAM_BSIM ? save_bsim : save_mos;
    pl->nsave = fam == FAM_BSIM ? sizeof save_bsim / sizeof save_bsim[0] : sizeof save_mos / sizeof save_mos[0];
    size_t nd = pl->n[LUTAX_VDS], per_vsb = (CHUNK_TARGET + pl->n[LUTAX_VSB] - 1) / pl->n[LUTAX_VSB];
    if (per_vsb > nd)
        per_vsb = nd;
    if (per_vsb < 1)
        per_vsb = 1;
    pl->blk = (nd + per_vsb - 1) / per_vsb;
    pl->nblk = (nd + pl->blk - 1) / pl->blk;
    pl->nplots = pl->n[LUTAX_VSB] * pl->nblk;
}

static void plan_free(Plan *pl)
{
    for (int a = 0; a < LUTAX_COUNT; a++)
        free(pl->ax[a]);
}

static size_t plan_nodes(const Plan *pl)
{
    return pl->n[LUTAX_L] * pl->n[LUTAX_VSB] * pl->n[LUTAX_VDS] * pl->n[LUTAX_VGS];
}

static int put_num(Buf *b, double v)
{
    return buf_printf(b, "%.12g", v);
}

static int write_deck(const CharSpec *s, const char *abs, const ModelFacts *mf, const Plan *pl, Buf *b)
{
    int pm = mf->type == MOS_PMOS;
    int rc = buf_printf(b, "* biaslint characterize: model %s (%s, level %d) from %s%s%s\n", s->model,
                        pm ? "pmos" : "nmos", mf->level, s->models, s->section ? ", section " : "",
                        s->section ? s->section : "");
    rc |= buf_puts(b, "* one device per L on shared ideal sources; the values swept are magnitudes\n");
    rc |= put_models_line(b, abs, s->section);
    if (!isnan(s->temp_c)) {
        rc |= buf_puts(b, ".temp ");
        rc |= put_num(b, s->temp_c);
        rc |= buf_putc(b, '\n');
    }
    /* NMOS: V(g) = VGS, V(d) = VDS, V(b) = -VSB; PMOS the other way round */
    rc |= buf_puts(b, pm ? "vgs 0 g dc 0\nvds 0 d dc 0\nvsb b 0 dc 0\n" : "vgs g 0 dc 0\nvds d 0 dc 0\nvsb 0 b dc 0\n");
    for (size_t i = 0; i < pl->n[LUTAX_L]; i++) {
        rc |= buf_printf(b, "m%zu d g 0 b %s w=", i, s->model);
        rc |= put_num(b, s->w_ref);
        rc |= buf_puts(b, " l=");
        rc |= put_num(b, pl->ax[LUTAX_L][i]);
        rc |= buf_putc(b, '\n');
    }
    rc |= buf_puts(b, ".control\nset filetype=binary\nset appendwrite\nsave v(g) v(d) v(b)\n");
    for (size_t i = 0; i < pl->n[LUTAX_L]; i++) {
        rc |= buf_puts(b, "save");
        for (size_t k = 0; k < pl->nsave; k++)
            rc |= buf_printf(b, " @m%zu[%s]", i, pl->save[k].name);
        rc |= buf_putc(b, '\n');
    }
    const double *g = pl->ax[LUTAX_VGS], *ds = pl->ax[LUTAX_VDS];
    size_t ng = pl->n[LUTAX_VGS], nd = pl->n[LUTAX_VDS];
    double gstep = ng > 1 ? (g[ng - 1] - g[0]) / (double)(ng - 1) : 1;
    double dstep = nd > 1 ? (ds[nd - 1] - ds[0]) / (double)(nd - 1) : 1;
    for (size_t j = 0; j < pl->n[LUTAX_VSB]; j++) {
        rc |= buf_puts(b, "alter vsb dc=");
        rc |= put_num(b, pl->ax[LUTAX_VSB][j]);
        rc |= buf_putc(b, '\n');
        for (size_t k = 0; k < pl->nblk; k++) {
            size_t d0 = k * pl->blk, d1 = d0 + pl->blk - 1 < nd - 1 ? d0 + pl->blk - 1 : nd - 1;
            rc |= buf_puts(b, "dc vgs ");
            rc |= put_num(b, g[0]);
            rc |= buf_putc(b, ' ');
            rc |= put_num(b, g[ng - 1]);
            rc |= buf_putc(b, ' ');
            rc |= put_num(b, gstep);
            rc |= buf_puts(b, " vds ");
            rc |= put_num(b, ds[d0]);
            rc |= buf_putc(b, ' ');
            rc |= put_num(b, ds[d1]);
            rc |= buf_putc(b, ' ');
            rc |= put_num(b, dstep);
            rc |= buf_puts(b, "\nwrite sweep.raw\ndestroy all\n");
        }
    }
    rc |= buf_puts(b, "quit 0\n.endc\n.end\n");
    return rc ? ERR_NOMEM : ERR_OK;
}

/* ---- running ngspice ------------------------------------------------------------------------- */

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int cloexec_pipe(int p[2])
{
    if (pipe(p) != 0)
        return -1;
    fcntl(p[0], F_SETFD, FD_CLOEXEC);
    fcntl(p[1], F_SETFD, FD_CLOEXEC);
    return 0;
}

typedef struct {
    int status;       /* waitpid status */
    Buf err;          /* everything ngspice wrote on stderr */
    double seconds;
} RunOut;

/* Run `prog -b sweep.cir` in folder dir, stdout into dir/ngspice.out. While it runs, report
 * progress from the size of dir/sweep.raw against expect bytes. ERR_IO when it cannot start. */
static int run_ngspice(const char *prog, Tmp *t, double expect, CharProgress cb, void *ctx, RunOut *ro,
                       DiagList *d)
{
    char *raw = NULL, *outp = NULL;
    const char *p;
    if (!(p = tmp_path(t, "sweep.raw")) || !(raw = strdup(p)) || !(p = tmp_path(t, "ngspice.out")) ||
        !(outp = strdup(p))) {
        free(raw);
        return diag_nomem(d);
    }
    int ep[2] = {-1, -1}, xp[2] = {-1, -1};
    if (cloexec_pipe(ep) != 0 || cloexec_pipe(xp) != 0) {
        int e = errno;
        free(raw);
        free(outp);
        if (ep[0] >= 0) {
            close(ep[0]);
            close(ep[1]);
        }
        diag_add(d, DIAG_ERROR, (SrcLoc){0}, "cannot create a pipe: %s", strerror(e));
        return ERR_IO;
    }
    double t0 = now_s();
    pid_t pid = fork();
    if (pid < 0) {
        int e = errno;
        close(ep[0]), close(ep[1]), close(xp[0]), close(xp[1]);
        free(raw);
        free(outp);
        diag_add(d, DIAG_ERROR, (SrcLoc){0}, "cannot start ngspice: %s", strerror(e));
        return ERR_IO;
    }
    if (pid == 0) {
        /* the child: only async-signal-safe calls from here on */
        int fd = open(outp, O_WRONLY | O_CREAT | O_TRUNC, 0600);
        int in = open("/dev/null", O_RDONLY);
        if (fd < 0 || in < 0 || chdir(t->dir) != 0 || dup2(in, 0) < 0 || dup2(fd, 1) < 0 || dup2(ep[1], 2) < 0) {
            int e = errno;
            ssize_t w = write(xp[1], &e, sizeof e);
            (void)w;
            _exit(127);
        }
        char *argv[] = {(char *)prog, (char *)"-b", (char *)"sweep.cir", NULL};
        execvp(prog, argv);
        int e = errno;
        ssize_t w = write(xp[1], &e, sizeof e);
        (void)w;
        _exit(127);
    }
    close(ep[1]);
    close(xp[1]);
    int child_errno = 0;
    ssize_t got;
    while ((got = read(xp[0], &child_errno, sizeof child_errno)) < 0 && errno == EINTR)
        ;
    close(xp[0]);
    int rc = ERR_OK;
    if (got == (ssize_t)sizeof child_errno) {
        while (waitpid(pid, &ro->status, 0) < 0 && errno == EINTR)
            ;
        close(ep[0]);
        if (child_errno == ENOENT)
            diag_add(d, DIAG_ERROR, (SrcLoc){0},
                     "ngspice not found ('%s' is not on PATH): install ngspice (Debian: apt-get install ngspice, or "
                     "make deps) or set BIASLINT_NGSPICE to the program",
                     prog);
        else
            diag_add(d, DIAG_ERROR, (SrcLoc){0}, "cannot run ngspice ('%s'): %s", prog, strerror(child_errno));
        rc = ERR_IO;
        goto done;
    }
    char chunk[4096];
    for (;;) {
        struct pollfd pf = {ep[0], POLLIN, 0};
        int pr = poll(&pf, 1, 100);
        if (pr < 0 && errno != EINTR)
            break;
        if (pr > 0) {
            ssize_t n = read(ep[0], chunk, sizeof chunk);
            if (n < 0 && errno == EINTR)
                continue;
            if (n <= 0)
                break; /* EOF: ngspice has ended (or closed stderr) */
            if (buf_append(&ro->err, chunk, (size_t)n) != ERR_OK) {
                rc = diag_nomem(d);
                kill(pid, SIGTERM);
                break;
            }
        }
        if (cb && expect > 0) {
            struct stat stt;
            if (stat(raw, &stt) == 0) {
                double f = (double)stt.st_size / expect;
                cb(ctx, f < 0.99 ? f : 0.99);
            }
        }
    }
    close(ep[0]);
    while (waitpid(pid, &ro->status, 0) < 0 && errno == EINTR)
        ;
    ro->seconds = now_s() - t0;
done:
    free(raw);
    free(outp);
    return rc;
}

/* The last few lines of text, for an error message (into out). */
static int last_lines(const char *s, size_t n, size_t keep, Buf *out)
{
    while (n && (s[n - 1] == '\n' || s[n - 1] == '\r' || s[n - 1] == ' '))
        n--;
    size_t start = n, lines = 0;
    while (start > 0 && lines < keep) {
        start--;
        if (s[start] == '\n' && ++lines == keep) {
            start++;
            break;
        }
    }
    for (size_t i = start; i < n; i++) {
        char c = s[i] == '\r' ? '\n' : s[i];
        if (buf_putc(out, c) != ERR_OK)
            return ERR_NOMEM;
        if (c == '\n' && buf_puts(out, "    ") != ERR_OK)
            return ERR_NOMEM;
    }
    return ERR_OK;
}

/* The first few lines that say Fatal or Error (the cause, which the last lines may not show). */
static int fatal_lines(const char *s, size_t n, Buf *out)
{
    size_t shown = 0, i = 0;
    while (i < n && shown < 4) {
        const char *nl = memchr(s + i, '\n', n - i);
        size_t e = nl ? (size_t)(nl - s) : n;
        size_t len = e - i;
        const char *ln = s + i;
        int hit = (len >= 5 && memcmp(ln, "Fatal", 5) == 0) || (len >= 5 && memcmp(ln, "Error", 5) == 0) ||
                  (len >= 6 && memcmp(ln, "ERROR", 5) == 0);
        if (hit) {
            while (len && (ln[len - 1] == '\r' || ln[len - 1] == ' '))
                len--;
            if (buf_puts(out, shown ? "; " : "; it says: ") != ERR_OK || buf_append(out, ln, len) != ERR_OK)
                return ERR_NOMEM;
            shown++;
        }
        i = e + 1;
    }
    return ERR_OK;
}

static const char *find_text(const char *s, size_t n, const char *w)
{
    size_t k = strlen(w);
    for (size_t i = 0; i + k <= n; i++)
        if (s[i] == w[0] && memcmp(s + i, w, k) == 0)
            return s + i;
    return NULL;
}

/* ---- reading the raw file -------------------------------------------------------------------- */

enum { VK_SKIP, VK_G, VK_D, VK_B, VK_DEV };

typedef struct {
    uint8_t kind;
    uint8_t q;     /* VK_DEV: the quantity */
    uint32_t dev;  /* VK_DEV: the device (L index) */
} RVar;

typedef struct {
    const char *text;
    size_t len, pos;
} Rd;

static int rd_line(Rd *r, const char **s, size_t *n)
{
    if (r->pos >= r->len)
        return 0;
    const char *p = r->text + r->pos;
    const char *nl = memchr(p, '\n', r->len - r->pos);
    size_t k = nl ? (size_t)(nl - p) : r->len - r->pos;
    *s = p;
    *n = k && p[k - 1] == '\r' ? k - 1 : k;
    r->pos += k + (nl != NULL);
    return 1;
}

static size_t count_after(const char *s, size_t n, size_t skip)
{
    size_t v = 0;
    for (size_t i = skip; i < n; i++) {
        if (s[i] >= '0' && s[i] <= '9')
            v = v * 10 + (size_t)(s[i] - '0');
        else if (s[i] != ' ' && s[i] != '\t')
            return SIZE_MAX;
    }
    return v;
}

/* One variable name into its meaning: v(g) v(d) v(b), or @m<i>[q] with optional v()/i() around it. */
static RVar classify(const char *s, size_t n, const Plan *pl)
{
    RVar v = {VK_SKIP, 0, 0};
    if (n == 4 && s[0] == 'v' && s[1] == '(' && s[3] == ')') {
        v.kind = s[2] == 'g' ? VK_G : s[2] == 'd' ? VK_D : s[2] == 'b' ? VK_B : VK_SKIP;
        return v;
    }
    if (n > 3 && (s[0] == 'v' || s[0] == 'i') && s[1] == '(' && s[n - 1] == ')') {
        s += 2;
        n -= 3;
    }
    if (n < 5 || s[0] != '@' || s[1] != 'm')
        return v;
    size_t i = 2, dev = 0;
    if (!(s[i] >= '0' && s[i] <= '9'))
        return v;
    while (i < n && s[i] >= '0' && s[i] <= '9')
        dev = dev * 10 + (size_t)(s[i++] - '0');
    if (i >= n || s[i] != '[' || s[n - 1] != ']' || dev >= pl->n[LUTAX_L])
        return v;
    const char *q = s + i + 1;
    size_t qn = n - i - 2;
    for (size_t k = 0; k < pl->nsave; k++)
        if (strlen(pl->save[k].name) == qn && memcmp(pl->save[k].name, q, qn) == 0) {
            v.kind = VK_DEV;
            v.q = (uint8_t)k;
            v.dev = (uint32_t)dev;
        }
    return v;
}

static const char *where_str(const Plan *pl, size_t isb, size_t blk, char *buf, size_t size)
{
    size_t d0 = blk * pl->blk;
    size_t d1 = d0 + pl->blk - 1 < pl->n[LUTAX_VDS] - 1 ? d0 + pl->blk - 1 : pl->n[LUTAX_VDS] - 1;
    snprintf(buf, size, "VSB %g V, VDS %g to %g V", pl->ax[LUTAX_VSB][isb], pl->ax[LUTAX_VDS][d0],
             pl->ax[LUTAX_VDS][d1]);
    return buf;
}

/* Read every plot of the raw file into vals. Returns ERR_OK, or ERR_INPUT with a diagnostic that
 * says which sweep is short or wrong (the caller adds ngspice's messages). *missing gets the bits
 * of optional quantities ngspice could not give (dims=0). */
static int read_raw(const char *path, const Plan *pl, const ModelFacts *mf, double *vals, unsigned *missing,
                    DiagList *d)
{
    SrcFile f;
    DiagList quiet;
    diag_init(&quiet);
    if (src_load(&f, path, (SrcLoc){0}, &quiet) != ERR_OK) {
        diag_free(&quiet);
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "ngspice wrote no raw file: no sweep finished");
    }
    diag_free(&quiet);
    Rd r = {f.text, f.len, 0};
    RVar *vars = NULL;
    size_t capv = 0;
    int rc = ERR_OK;
    double s = mf->type == MOS_PMOS ? -1.0 : 1.0;
    size_t ng = pl->n[LUTAX_VGS], nd = pl->n[LUTAX_VDS], nsb = pl->n[LUTAX_VSB];
    char wh[96];
    *missing = 0;
    for (size_t plot = 0; plot < pl->nplots; plot++) {
        size_t isb = plot / pl->nblk, blk = plot % pl->nblk;
        size_t d0 = blk * pl->blk, dn = d0 + pl->blk <= nd ? pl->blk : nd - d0;
        size_t nvars = 0, npts = SIZE_MAX;
        const char *ls;
        size_t ll;
        int in_vars = 0, binary = 0;
        size_t nv = 0;
        while (rd_line(&r, &ls, &ll)) {
            if (in_vars) {
                /* TAB index TAB name TAB type [dims=0] */
                size_t i = 0;
                while (i < ll && (ls[i] == '\t' || ls[i] == ' '))
                    i++;
                while (i < ll && ls[i] >= '0' && ls[i] <= '9')
                    i++;
                while (i < ll && (ls[i] == '\t' || ls[i] == ' '))
                    i++;
                size_t ns = i;
                while (i < ll && ls[i] != '\t' && ls[i] != ' ')
                    i++;
                RVar v = classify(ls + ns, i - ns, pl);
                if (find_text(ls + i, ll - i, "dims=0") && v.kind == VK_DEV) {
                    if (pl->save[v.q].required) {
                        rc = diag_add(d, DIAG_ERROR, (SrcLoc){0},
                                      "ngspice has no '%s' for this model (level %d): it cannot be characterized",
                                      pl->save[v.q].name, mf->level);
                        goto done;
                    }
                    *missing |= 1u << pl->save[v.q].q;
                    v.kind = VK_SKIP;
                }
                vars[nv++] = v;
                if (nv == nvars)
                    in_vars = 0;
                continue;
            }
            if (ll >= 14 && memcmp(ls, "No. Variables:", 14) == 0) {
                nvars = count_after(ls, ll, 14);
                if (nvars == SIZE_MAX || nvars == 0 || nvars > 100000)
                    break;
                if (buf_grow_array((void **)&vars, &capv, nvars, sizeof *vars) != ERR_OK) {
                    rc = diag_nomem(d);
                    goto done;
                }
            } else if (ll >= 11 && memcmp(ls, "No. Points:", 11) == 0) {
                npts = count_after(ls, ll, 11);
            } else if (ll >= 10 && memcmp(ls, "Variables:", 10) == 0) {
                in_vars = nvars > 0;
                nv = 0;
            } else if (ll >= 7 && memcmp(ls, "Binary:", 7) == 0) {
                binary = 1;
                break;
            } else if (ll >= 7 && memcmp(ls, "Values:", 7) == 0) {
                break;
            }
        }
        if (!binary || nv != nvars || npts == SIZE_MAX) {
            rc = diag_add(d, DIAG_ERROR, (SrcLoc){0},
                          "ngspice did not finish the sweeps: %zu of %zu written (the one at %s is missing)", plot,
                          pl->nplots, where_str(pl, isb, blk, wh, sizeof wh));
            goto done;
        }
        if (npts != ng * dn) {
            where_str(pl, isb, blk, wh, sizeof wh);
            rc = diag_add(d, DIAG_ERROR, (SrcLoc){0},
                          "the sweep at %s stopped after %zu of %zu points: ngspice did not converge there", wh,
                          npts, ng * dn);
            goto done;
        }
        size_t bytes = npts * nvars * sizeof(double);
        if (r.len - r.pos < bytes) {
            rc = diag_add(d, DIAG_ERROR, (SrcLoc){0}, "the raw file ends inside the sweep at %s",
                          where_str(pl, isb, blk, wh, sizeof wh));
            goto done;
        }
        int seen[3] = {0, 0, 0};
        for (size_t k = 0; k < nvars; k++)
            if (vars[k].kind >= VK_G && vars[k].kind <= VK_B)
                seen[vars[k].kind - VK_G] = 1;
        if (!seen[0] || !seen[1] || !seen[2]) {
            rc = diag_add(d, DIAG_ERROR, (SrcLoc){0}, "the raw file lacks the terminal voltages v(g), v(d), v(b)");
            goto done;
        }
        const char *data = r.text + r.pos;
        for (size_t p = 0; p < npts; p++) {
            size_t ig = p % ng, id = d0 + p / ng;
            for (size_t k = 0; k < nvars; k++) {
                double x;
                memcpy(&x, data + (p * nvars + k) * sizeof(double), sizeof x);
                const RVar *v = &vars[k];
                if (v->kind == VK_SKIP)
                    continue;
                if (!isfinite(x)) {
                    rc = diag_add(d, DIAG_ERROR, (SrcLoc){0},
                                  "ngspice gave a value that is not a number at VGS %g V, VDS %g V, VSB %g V",
                                  pl->ax[LUTAX_VGS][ig], pl->ax[LUTAX_VDS][id], pl->ax[LUTAX_VSB][isb]);
                    goto done;
                }
                double want;
                switch (v->kind) {
                case VK_G:
                    want = s * pl->ax[LUTAX_VGS][ig];
                    break;
                case VK_D:
                    want = s * pl->ax[LUTAX_VDS][id];
                    break;
                case VK_B:
                    want = -s * pl->ax[LUTAX_VSB][isb];
                    break;
                default: {
                    size_t node = ((v->dev * nsb + isb) * nd + id) * ng + ig;
                    LutQty q = pl->save[v->q].q;
                    /* levels 1-3 give von and vdsat with the type's sign; BSIM gives magnitudes */
                    if (mf->fam == FAM_MOS && (q == LUTQ_VTH || q == LUTQ_VDSAT))
                        x *= s;
                    vals[node * LUTQ_COUNT + q] = x;
                    continue;
                }
                }
                if (fabs(x - want) > 1e-9 * (1 + fabs(want))) {
                    rc = diag_add(d, DIAG_ERROR, (SrcLoc){0},
                                  "ngspice swept other values than asked (%g V where the grid has %g V, sweep at %s): "
                                  "the sweep's point count or order is not what biaslint expects",
                                  x, want, where_str(pl, isb, blk, wh, sizeof wh));
                    goto done;
                }
            }
        }
        r.pos += bytes;
    }
done:
    free(vars);
    src_free(&f);
    return rc;
}

/* ---- the whole job ----------------------------------------------------------------------------- */

static int check_spec(const CharSpec *s, DiagList *d)
{
    if (!s->models || !s->model)
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "characterize needs --models FILE and --model NAME");
    if (!s->nl || s->nl > MAX_L)
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "characterize needs 1 to %d channel lengths (--l)", MAX_L);
    for (size_t i = 0; i < s->nl; i++) {
        if (!(s->l[i] > 0 && s->l[i] <= 1e-3))
            return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "channel length %g m: give lengths such as 180n or 1u",
                            s->l[i]);
        if (i && !(s->l[i] > s->l[i - 1]))
            return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "the lengths must increase (%g after %g)", s->l[i],
                            s->l[i - 1]);
    }
    if (!(s->w_ref > 0 && s->w_ref <= 1))
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "reference width %g m: give a width such as 10u", s->w_ref);
    if (!isnan(s->temp_c) && !(s->temp_c > -273.15 && s->temp_c < 1000))
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "temperature %g C is not a temperature", s->temp_c);
    if (s->vds.start < 0)
        return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "the VDS grid starts at %g V: tables hold VDS >= 0 (magnitudes "
                        "for PMOS)", s->vds.start);
    for (const char *p = s->model; *p; p++)
        if (!((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || (*p >= '0' && *p <= '9') || *p == '_' ||
              *p == '.' || *p == '-' || *p == '$'))
            return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "model name '%s': letters, digits and _ . - only", s->model);
    if (s->section)
        for (const char *p = s->section; *p; p++)
            if ((unsigned char)*p <= ' ' || *p == '\'' || *p == '"')
                return diag_add(d, DIAG_ERROR, (SrcLoc){0}, "section name '%s': no blanks or quotes", s->section);
    return ERR_OK;
}

void char_result_free(CharResult *res)
{
    if (!res)
        return;
    free(res->vals);
    if (res->owned) {
        char **o = res->owned;
        for (int i = 0; i < 8; i++)
            free(o[i]);
        free(o);
    }
    memset(res, 0, sizeof *res);
}

/* ngspice's version from the last line of its batch output: "ngspice-39 done". */
static char *ngspice_version(const char *out, size_t n)
{
    const char *p = NULL, *q;
    for (size_t i = 0; i + 8 <= n; i++)
        if (memcmp(out + i, "ngspice-", 8) == 0)
            p = out + i + 8;
    if (!p)
        return NULL;
    for (q = p; q < out + n && *q != ' ' && *q != '\n' && *q != '\r' && *q != '\t'; q++)
        ;
    char *v = malloc((size_t)(q - p) + 1);
    if (v) {
        memcpy(v, p, (size_t)(q - p));
        v[q - p] = '\0';
    }
    return v;
}

/* The temperature ngspice says it used: "Doing analysis at TEMP = 27.000000 and TNOM = ...". */
static double ngspice_temp(const char *out, size_t n)
{
    const char *p = find_text(out, n, "Doing analysis at TEMP =");
    if (!p)
        return NAN;
    return strtod(p + 24, NULL);
}

static char *dupstr(const char *s)
{
    if (!s)
        return NULL;
    char *c = malloc(strlen(s) + 1);
    if (c)
        strcpy(c, s);
    return c;
}

int char_build(const CharSpec *s, CharProgress cb, void *ctx, CharResult *res, DiagList *d)
{
    memset(res, 0, sizeof *res);
    Plan pl;
    memset(&pl, 0, sizeof pl);
    Tmp t = {NULL, BUF_INIT};
    Buf deck = BUF_INIT, msg = BUF_INIT;
    RunOut ro = {0, BUF_INIT, 0};
    SrcFile out;
    memset(&out, 0, sizeof out);
    char *abs = NULL;
    int rc = check_spec(s, d);
    if (rc != ERR_OK)
        return rc;
    if ((rc = plan_axes(s, &pl, d)) != ERR_OK)
        goto done;
    size_t nodes = plan_nodes(&pl);

    /* the model file: an absolute path ngspice can read from any folder */
    if (!(abs = realpath(s->models, NULL))) {
        int e = errno;
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){s->models, 0, 0}, "cannot read the model file: %s", strerror(e));
        goto done;
    }
    if (strpbrk(abs, " \t\n\r'\"")) {
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){s->models, 0, 0},
                      "the model file's path '%s' has a blank or a quote, which ngspice's .lib and .include cannot "
                      "read: copy or link it to a plain path",
                      abs);
        goto done;
    }
    if ((rc = tmp_open(&t, d)) != ERR_OK)
        goto done;
    ModelFacts mf = {MOS_UNKNOWN, 0, FAM_BSIM};
    if ((rc = probe_model(s, abs, &t, &mf, d)) != ERR_OK)
        goto done;
    plan_blocks(&pl, mf.fam);

    if ((rc = write_deck(s, abs, &mf, &pl, &deck)) != ERR_OK) {
        rc = diag_nomem(d);
        goto done;
    }
    const char *dp = tmp_path(&t, "sweep.cir");
    if (!dp) {
        rc = diag_nomem(d);
        goto done;
    }
    if ((rc = write_file(dp, deck.data, deck.len, d)) != ERR_OK)
        goto done;
    if (s->deck_copy && (rc = write_file(s->deck_copy, deck.data, deck.len, d)) != ERR_OK)
        goto done;

    size_t nvars = 3 + s->nl * pl.nsave + 1;
    double expect = (double)pl.nplots * (200.0 + 30.0 * (double)nvars) +
                    (double)(nodes / s->nl) * (double)nvars * sizeof(double);
    if (cb)
        cb(ctx, 0);
    /* ngspice runs in the temporary folder: a relative program path must not depend on that */
    const char *prog = s->ngspice ? s->ngspice : "ngspice";
    if (prog[0] != '/' && strchr(prog, '/')) {
        char cwd[4096];
        if (!getcwd(cwd, sizeof cwd) || buf_printf(&msg, "%s/%s", cwd, prog) != ERR_OK) {
            rc = diag_add(d, DIAG_ERROR, (SrcLoc){0}, "cannot resolve the program path '%s'", prog);
            goto done;
        }
        prog = msg.data;
    }
    rc = run_ngspice(prog, &t, expect, cb, ctx, &ro, d);
    buf_clear(&msg);
    if (rc != ERR_OK)
        goto done;
    res->ngspice_seconds = ro.seconds;
    const char *op = tmp_path(&t, "ngspice.out");
    DiagList quiet;
    diag_init(&quiet);
    if (!op || src_load(&out, op, (SrcLoc){0}, &quiet) != ERR_OK)
        memset(&out, 0, sizeof out);
    diag_free(&quiet);

    int failed = !WIFEXITED(ro.status) || WEXITSTATUS(ro.status) != 0;
    res->vals = malloc(nodes * LUTQ_COUNT * sizeof *res->vals);
    if (!res->vals) {
        rc = diag_nomem(d);
        goto done;
    }
    for (size_t i = 0; i < nodes * LUTQ_COUNT; i++)
        res->vals[i] = NAN;
    unsigned missing = 0;
    DiagList rd;
    diag_init(&rd);
    const char *rawp = tmp_path(&t, "sweep.raw");
    int rrc = failed ? ERR_INPUT : rawp ? read_raw(rawp, &pl, &mf, res->vals, &missing, &rd) : ERR_NOMEM;
    if (failed || rrc != ERR_OK) {
        if (rrc == ERR_NOMEM) {
            diag_free(&rd);
            rc = diag_nomem(d);
            goto done;
        }
        /* what went wrong, and what ngspice said */
        int e1 = buf_puts(&msg, "ngspice failed");
        if (!WIFEXITED(ro.status))
            e1 |= buf_printf(&msg, " (killed by signal %d)", WIFSIGNALED(ro.status) ? WTERMSIG(ro.status) : 0);
        else if (WEXITSTATUS(ro.status))
            e1 |= buf_printf(&msg, " (exit status %d)", WEXITSTATUS(ro.status));
        for (size_t i = 0; i < rd.n; i++)
            e1 |= buf_printf(&msg, ": %s", rd.items[i].msg);
        if (ro.err.len) {
            e1 |= fatal_lines(ro.err.data, ro.err.len, &msg);
            e1 |= buf_puts(&msg, "; its last messages:\n    ");
            e1 |= last_lines(ro.err.data, ro.err.len, STDERR_KEEP, &msg);
        } else if (out.len) {
            e1 |= buf_puts(&msg, "; the end of its output:\n    ");
            e1 |= last_lines(out.text, out.len, STDERR_KEEP, &msg);
        }
        diag_free(&rd);
        if (e1) {
            rc = diag_nomem(d);
            goto done;
        }
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){s->models, 0, 0}, "characterizing %s: %s", s->model, msg.data);
        goto done;
    }
    diag_free(&rd);
    double used_temp = out.len ? ngspice_temp(out.text, out.len) : NAN;
    if (!isnan(s->temp_c) && !(fabs(used_temp - s->temp_c) < 1e-6)) {
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){s->models, 0, 0},
                      "ngspice simulated at %g C, not at the %g C asked for: something in the model file sets the "
                      "temperature after biaslint's .temp card",
                      used_temp, s->temp_c);
        goto done;
    }
    if (isnan(used_temp)) {
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){0}, "ngspice did not say at which temperature it simulated");
        goto done;
    }

    /* the result */
    char **own = calloc(8, sizeof *own);
    if (!own) {
        rc = diag_nomem(d);
        goto done;
    }
    res->owned = own;
    own[0] = dupstr(s->model);
    own[1] = abs;
    abs = NULL;
    own[2] = dupstr(s->section);
    own[3] = dupstr(BIASLINT_VERSION);
    own[4] = out.len ? ngspice_version(out.text, out.len) : NULL;
    LutInfo *in = &res->info;
    for (int a = 0; a < LUTAX_COUNT; a++)
        in->n[a] = pl.n[a];
    /* the axes, in one block owned by the result */
    size_t tot = 0;
    for (int a = 0; a < LUTAX_COUNT; a++)
        tot += pl.n[a];
    double *axes = malloc(tot * sizeof *axes);
    if (!axes || !own[0] || (s->section && !own[2]) || !own[3]) {
        free(axes);
        rc = diag_nomem(d);
        goto done;
    }
    own[5] = (char *)axes;
    for (int a = 0, k = 0; a < LUTAX_COUNT; a++) {
        memcpy(axes + k, pl.ax[a], pl.n[a] * sizeof *axes);
        in->axis[a] = axes + k;
        k += (int)pl.n[a];
    }
    in->model = own[0];
    in->type = mf.type;
    in->level = mf.level;
    in->temp_c = used_temp;
    in->w_ref = s->w_ref;
    in->models_file = own[1];
    in->section = own[2];
    in->biaslint_version = own[3];
    in->ngspice_version = own[4];
    in->have = 0;
    for (size_t k = 0; k < pl.nsave; k++)
        in->have |= 1u << pl.save[k].q;
    in->have &= ~missing;
    if (cb)
        cb(ctx, 1);
    rc = ERR_OK;
done:
    if (rc != ERR_OK)
        char_result_free(res);
    plan_free(&pl);
    free(abs);
    buf_free(&deck);
    buf_free(&msg);
    buf_free(&ro.err);
    src_free(&out);
    tmp_close(&t);
    return rc;
}

int char_read_sweep(const CharSpec *s, MosType type, int bsim, const char *raw_path, DiagList *d)
{
    Plan pl;
    int rc = plan_axes(s, &pl, d);
    if (rc != ERR_OK) {
        plan_free(&pl);
        return rc;
    }
    ModelFacts mf = {type, bsim ? 54 : 1, bsim ? FAM_BSIM : FAM_MOS};
    plan_blocks(&pl, mf.fam);
    size_t n = plan_nodes(&pl) * LUTQ_COUNT;
    double *vals = malloc((n ? n : 1) * sizeof *vals);
    unsigned missing = 0;
    if (!vals)
        rc = diag_nomem(d);
    else
        rc = read_raw(raw_path, &pl, &mf, vals, &missing, d);
    free(vals);
    plan_free(&pl);
    return rc;
}

int char_run(const CharSpec *s, const char *outpath, CharProgress cb, void *ctx, DiagList *d)
{
    CharResult res;
    int rc = char_build(s, cb, ctx, &res, d);
    if (rc != ERR_OK)
        return rc;
    /* validate as a reader would, before anything is written */
    if (lut_check(&res.info, res.vals, outpath, d) != ERR_OK) {
        char_result_free(&res);
        return ERR_INPUT;
    }
    OutFile of = {0};
    const char *inputs[1] = {s->models};
    if ((rc = out_open(&of, outpath, inputs, 1, d)) == ERR_OK) {
        if (lut_write(of.fp, &res.info, res.vals) != ERR_OK) {
            diag_add(d, DIAG_ERROR, (SrcLoc){outpath, 0, 0}, "cannot write the table (disk full?)");
            rc = ERR_IO;
        } else {
            rc = out_commit(&of, d);
        }
    }
    out_abort(&of);
    char_result_free(&res);
    return rc;
}
