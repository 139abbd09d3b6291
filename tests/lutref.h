/* lutref: the reference for the table tests and the table benchmark: ngspice's own operating point
 * at given biases. One deck holds one MOSFET per point, each on its own ideal sources (source pin at
 * ground), so a single `ngspice -b` run answers every point; the values come back through biaslint's
 * raw reader (op_read). */
#ifndef LUTREF_H
#define LUTREF_H

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "buf.h"
#include "diag.h"
#include "opdump.h"

typedef struct {
    double l, vgs, vds, vsb; /* n-type convention: magnitudes for PMOS */
    double w;                /* width; 0: the caller's default */
} RefPoint;

typedef struct {
    double id, gm, gds, vth, vdsat, cgg; /* n-type convention, as a table holds them */
} RefVals;

/* ngspice at every point: model `model` from the file models (.include'd, or .lib'd with section),
 * PMOS when pmos, level-1 quantities (von for vth, no cgg) when mos1, width w unless the point says.
 * The deck and raw file go to folder dir. Returns 0, or -1 (ngspice failed, or a value is missing). */
static inline int ref_op(const char *dir, const char *models, const char *section, const char *model, int pmos,
                         int mos1, double w, const RefPoint *p, size_t n, RefVals *out)
{
    Buf b = BUF_INIT;
    double s = pmos ? -1.0 : 1.0;
    char abs[1024], cwd[900];
    if (models[0] == '/')
        snprintf(abs, sizeof abs, "%s", models);
    else if (getcwd(cwd, sizeof cwd))
        snprintf(abs, sizeof abs, "%s/%s", cwd, models);
    else
        return -1;
    int e = section ? buf_printf(&b, "* lutref: ngspice operating points\n.lib '%s' %s\n", abs, section)
                    : buf_printf(&b, "* lutref: ngspice operating points\n.include '%s'\n", abs);
    for (size_t i = 0; i < n; i++)
        e |= buf_printf(&b, "vg%zu g%zu 0 dc %.12g\nvd%zu d%zu 0 dc %.12g\nvb%zu b%zu 0 dc %.12g\n"
                            "m%zu d%zu g%zu 0 b%zu %s w=%.12g l=%.12g\n",
                        i, i, s * p[i].vgs, i, i, s * p[i].vds, i, i, -s * p[i].vsb, i, i, i, i, model,
                        p[i].w > 0 ? p[i].w : w, p[i].l);
    e |= buf_puts(&b, ".control\nset filetype=binary\n");
    for (size_t i = 0; i < n; i++)
        e |= mos1 ? buf_printf(&b, "save @m%zu[id] @m%zu[gm] @m%zu[gds] @m%zu[vdsat] @m%zu[von]\n", i, i, i, i, i)
                  : buf_printf(&b, "save @m%zu[id] @m%zu[gm] @m%zu[gds] @m%zu[vdsat] @m%zu[vth] @m%zu[cgg]\n", i, i,
                               i, i, i, i);
    e |= buf_puts(&b, "op\nwrite ref.raw\nquit 0\n.endc\n.end\n");
    char deck[512], raw[512], cmd[1200];
    snprintf(deck, sizeof deck, "%s/ref.cir", dir);
    snprintf(raw, sizeof raw, "%s/ref.raw", dir);
    FILE *fp = fopen(deck, "w");
    if (e || !fp) {
        buf_free(&b);
        if (fp)
            fclose(fp);
        return -1;
    }
    fwrite(b.data, 1, b.len, fp);
    fclose(fp);
    buf_free(&b);
    unlink(raw);
    snprintf(cmd, sizeof cmd, "cd '%s' && ngspice -b ref.cir >ref.log 2>&1", dir);
    if (system(cmd) != 0)
        return -1;
    DiagList d;
    diag_init(&d);
    OpTable *t = NULL;
    int rc = op_read(raw, OPFMT_RAW, &t, &d);
    diag_free(&d);
    if (rc != ERR_OK)
        return -1;
    for (size_t i = 0; i < n; i++) {
        char name[32];
        snprintf(name, sizeof name, "m%zu", i);
        const char *nm = str_lookup(t->names, name, strlen(name));
        const OpRecord *r = nm ? op_find(t, nm) : NULL;
        if (!r) {
            op_free(t);
            return -1;
        }
        out[i].id = r->q[OPQ_ID];
        out[i].gm = r->q[OPQ_GM];
        out[i].gds = r->q[OPQ_GDS];
        out[i].vth = mos1 ? s * r->q[OPQ_VON] : r->q[OPQ_VTH];
        out[i].vdsat = mos1 ? s * r->q[OPQ_VDSAT] : r->q[OPQ_VDSAT];
        out[i].cgg = r->q[OPQ_CGG];
    }
    op_free(t);
    return 0;
}

/* A private folder for ref_op's files: "/tmp/biaslint-lutref-XXXXXX" (malloc'd), NULL on failure. */
static inline char *ref_dir(void)
{
    char *d = malloc(64);
    if (!d)
        return NULL;
    snprintf(d, 64, "/tmp/biaslint-lutref-XXXXXX");
    if (!mkdtemp(d)) {
        free(d);
        return NULL;
    }
    return d;
}

/* Remove what ref_op left in dir, and dir. */
static inline void ref_dir_free(char *dir)
{
    if (!dir)
        return;
    static const char *const names[] = {"ref.cir", "ref.raw", "ref.log"};
    char p[600];
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
        snprintf(p, sizeof p, "%s/%s", dir, names[i]);
        unlink(p);
    }
    rmdir(dir);
    free(dir);
}

#endif
