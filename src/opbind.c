/* opbind: device names to record names under a testbench prefix, and the records of transistors
 * read from their X cards. Linear in the records and devices, times the few candidate prefixes. */
#include "opbind.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "primitive.h"
#include "strtab.h"

#define PROBES 8          /* devices whose names are searched for in the dump to find the prefix */
#define MAX_CANDIDATES 64 /* more instance paths than this: ambiguous */

typedef struct {
    const char *s; /* points into a record name (or "" for none) */
    size_t len;
    size_t score;  /* devices whose records are found under it */
} Cand;

typedef struct {
    Design *ds;
    const OpTable *t;
    DiagList *d;
    /* parent paths of the records, for DEV_BARE devices: "xm4" for "xm4.mn" */
    Arena arena;
    StrTab *parents;
    StrMap first; /* parent -> index of its first record */
    StrMap many;  /* parent -> 1 when more than one record has it */
    int have_parents;
    int nomem;
    Buf tmp;
} Bind;

static inline const char *key_of(const Device *dv)
{
    return dv->simname ? dv->simname : dv->name;
}

static int build_parents(Bind *b)
{
    arena_init(&b->arena);
    if (!(b->parents = str_new(&b->arena)))
        return ERR_NOMEM;
    b->have_parents = 1;
    for (size_t i = 0; i < b->t->n; i++) {
        const OpRecord *r = &b->t->recs[i];
        const char *dot = r->truncated ? NULL : strrchr(r->name, '.');
        if (!dot)
            continue;
        const char *p = str_intern(b->parents, r->name, (size_t)(dot - r->name));
        if (!p)
            return ERR_NOMEM;
        uint32_t idx;
        if (strmap_get(&b->first, p, &idx)) {
            if (strmap_put(&b->many, p, 1) != ERR_OK)
                return ERR_NOMEM;
        } else if (strmap_put(&b->first, p, (uint32_t)i) != ERR_OK) {
            return ERR_NOMEM;
        }
    }
    return ERR_OK;
}

/* prefix.key into b->tmp (or key alone for an empty prefix). */
static int compose(Bind *b, const char *prefix, size_t plen, const char *key)
{
    buf_clear(&b->tmp);
    if ((plen && (buf_append(&b->tmp, prefix, plen) != ERR_OK || buf_putc(&b->tmp, '.') != ERR_OK)) ||
        buf_puts(&b->tmp, key) != ERR_OK) {
        b->nomem = 1;
        return ERR_NOMEM;
    }
    return ERR_OK;
}

/* The record of device dv under prefix, or NULL; *several when a DEV_BARE device's instance holds
 * more than one record. */
static const OpRecord *lookup(Bind *b, const Device *dv, const char *prefix, size_t plen, int *several)
{
    *several = 0;
    if (compose(b, prefix, plen, key_of(dv)) != ERR_OK)
        return NULL;
    if (dv->prim != DEV_BARE)
        return op_find(b->t, b->tmp.data);
    const char *p = str_lookup(b->parents, b->tmp.data, b->tmp.len);
    uint32_t idx;
    if (!p || !strmap_get(&b->first, p, &idx))
        return NULL;
    *several = strmap_get(&b->many, p, NULL);
    return &b->t->recs[idx];
}

/* The instance paths under which the dump holds a record named like dv: S = the record's name (or,
 * for a DEV_BARE device, its parent path) is key or ends in ".key". */
static int candidates_for(Bind *b, const Device *dv, Cand *c, size_t *nc, int *overflow)
{
    const char *key = key_of(dv);
    size_t klen = strlen(key);
    for (size_t i = 0; i < b->t->n; i++) {
        const OpRecord *r = &b->t->recs[i];
        if (r->truncated)
            continue;
        size_t slen = strlen(r->name);
        if (dv->prim == DEV_BARE) {
            const char *dot = strrchr(r->name, '.');
            if (!dot)
                continue;
            slen = (size_t)(dot - r->name);
        }
        size_t plen;
        if (slen == klen && memcmp(r->name, key, klen) == 0)
            plen = 0;
        else if (slen > klen + 1 && r->name[slen - klen - 1] == '.' && memcmp(r->name + slen - klen, key, klen) == 0)
            plen = slen - klen - 1;
        else
            continue;
        size_t k = 0;
        while (k < *nc && !(c[k].len == plen && memcmp(c[k].s, r->name, plen) == 0))
            k++;
        if (k < *nc)
            continue;
        if (*nc == MAX_CANDIDATES) {
            *overflow = 1;
            return ERR_OK;
        }
        c[(*nc)++] = (Cand){plen ? r->name : "", plen, 0};
    }
    return ERR_OK;
}

/* Find the prefix: the candidate under which most devices have records. */
static int detect(Bind *b, const char **pfx, size_t *plen)
{
    Design *ds = b->ds;
    Cand c[MAX_CANDIDATES];
    size_t nc = 0, probes = 0;
    int overflow = 0;
    for (size_t i = 0; i < ds->ndevs && probes < PROBES && !overflow; i++, probes++)
        if (candidates_for(b, &ds->devs[i], c, &nc, &overflow) != ERR_OK)
            return ERR_NOMEM;
    *pfx = "";
    *plen = 0;
    if (nc == 0) {
        diag_add(b->d, DIAG_WARNING, (SrcLoc){b->t->file.path, 0, 0},
                 "no record of the dump is named like a device of the design (e.g. %s), not even under a "
                 "testbench path: give the design's instance path with --prefix",
                 ds->ndevs ? ds->devs[0].name : "?");
        return ERR_OK;
    }
    for (size_t k = 0; k < nc; k++)
        for (size_t i = 0; i < ds->ndevs; i++) {
            int several;
            if (lookup(b, &ds->devs[i], c[k].s, c[k].len, &several))
                c[k].score++;
            else if (b->nomem)
                return ERR_NOMEM;
        }
    size_t best = 0;
    for (size_t k = 1; k < nc; k++)
        if (c[k].score > c[best].score)
            best = k;
    size_t ties = 0;
    for (size_t k = 0; k < nc; k++)
        ties += c[k].score == c[best].score;
    if (ties > 1 || overflow) {
        Buf list = BUF_INIT;
        int rc = ERR_OK;
        size_t shown = 0;
        for (size_t k = 0; k < nc && shown < 6; k++)
            if (c[k].score == c[best].score)
                rc |= buf_printf(&list, "%s'%.*s'", shown++ ? ", " : "", (int)c[k].len, c[k].s);
        if (rc == ERR_OK)
            diag_add(b->d, DIAG_ERROR, (SrcLoc){b->t->file.path, 0, 0},
                     "the dump holds the design's devices under %s instance paths (%s%s, each with %zu of the %zu "
                     "devices): name the one to check with --prefix",
                     overflow ? "many" : "several", list.data ? list.data : "", overflow || ties > shown ? ", ..." : "",
                     c[best].score, ds->ndevs);
        buf_free(&list);
        return rc == ERR_OK ? ERR_INPUT : ERR_NOMEM;
    }
    *pfx = c[best].s;
    *plen = c[best].len;
    if (*plen)
        diag_add(b->d, DIAG_NOTE, (SrcLoc){b->t->file.path, 0, 0},
                 "the dump holds the design under the instance path '%.*s' (found in its device names; "
                 "--prefix sets it): %zu of %zu devices have records there",
                 (int)*plen, *pfx, c[best].score, ds->ndevs);
    return ERR_OK;
}

int bind_run(Design *ds, const OpTable *t, const BindOptions *o, const char **found, DiagList *d)
{
    Bind b;
    memset(&b, 0, sizeof b);
    b.ds = ds;
    b.t = t;
    b.d = d;
    if (found)
        *found = "";
    size_t nbare = 0;
    for (size_t i = 0; i < ds->ndevs; i++)
        nbare += ds->devs[i].prim == DEV_BARE;
    const char *pfx = o && o->prefix ? o->prefix : "";
    size_t plen = strlen(pfx);
    while (plen && pfx[plen - 1] == '.')
        plen--; /* "xtop.x1." as well as "xtop.x1" */
    int rc = ERR_OK;
    if (!nbare && !plen && !(o && o->detect))
        return ERR_OK;
    if (nbare && build_parents(&b) != ERR_OK)
        goto nomem;
    if (!plen && o && o->detect && !o->prefix && (rc = detect(&b, &pfx, &plen)) != ERR_OK)
        goto done;
    if (found && !(*found = str_intern(ds->names, pfx, plen)))
        goto nomem;
    size_t nsev = 0, nvals = 0, nnone = 0, nuntyped = 0;
    const Device *ex_sev = NULL, *ex_val = NULL, *ex_none = NULL, *ex_untyped = NULL;
    for (size_t i = 0; i < ds->ndevs; i++) {
        Device *dv = &ds->devs[i];
        int several;
        const OpRecord *r = lookup(&b, dv, pfx, plen, &several);
        if (b.nomem)
            goto nomem;
        if (dv->prim != DEV_BARE) {
            if (plen && !(dv->simname = str_intern(ds->names, b.tmp.data, b.tmp.len)))
                goto nomem;
            continue;
        }
        if (!r || several) {
            nnone += !r;
            nsev += several;
            if (!r && !ex_none)
                ex_none = dv;
            if (several && !ex_sev)
                ex_sev = dv;
        } else {
            if (!(dv->simname = str_intern(ds->names, r->name, strlen(r->name))))
                goto nomem;
            int took = 0;
            const double q[4] = {op_q(t, r, OPQ_W), op_q(t, r, OPQ_L), op_q(t, r, OPQ_NF), op_q(t, r, OPQ_M)};
            double *to[4] = {&dv->w, &dv->l, &dv->nf, &dv->m};
            for (int k = 0; k < 4; k++)
                if (isfinite(q[k]) && q[k] > 0) {
                    took |= !(*to[k] == q[k]);
                    *to[k] = q[k];
                }
            if (took && !nvals++)
                ex_val = dv;
            if (dv->type == MOS_UNKNOWN && r->model)
                dv->type = prim_type_from_name(r->model);
        }
        if (dv->type == MOS_UNKNOWN && !nuntyped++)
            ex_untyped = dv;
    }
    if (nvals)
        diag_add(d, DIAG_NOTE, (SrcLoc){t->file.path, 0, 0},
                 "%zu of the transistors read from their X cards take%s W, L, nf or m from the dump, which holds "
                 "what was simulated (first: %s, record %s)",
                 nvals, nvals == 1 ? "s" : "", ex_val->name, ex_val->simname);
    if (nsev)
        diag_add(d, DIAG_WARNING, (SrcLoc){t->file.path, 0, 0},
                 "%zu X instance%s of an undefined cell hold%s more than one device record in the dump (first: %s), "
                 "so none is taken as the transistor's: give the cell's library, or exclude the cell with "
                 "--not-primitive",
                 nsev, nsev == 1 ? "" : "s", nsev == 1 ? "s" : "", ex_sev->name);
    if (nnone)
        diag_add(d, DIAG_WARNING, (SrcLoc){t->file.path, 0, 0},
                 "%zu X instance%s of an undefined cell ha%s no device record under %s in the dump (first: %s%s%.*s)",
                 nnone, nnone == 1 ? "" : "s", nnone == 1 ? "s" : "ve", nnone == 1 ? "it" : "them", ex_none->name,
                 plen ? ", looked for under " : "", (int)plen, pfx);
    if (nuntyped)
        diag_add(d, DIAG_WARNING, (SrcLoc){t->file.path, 0, 0},
                 "the type of %zu transistor%s read from %s X card%s is unknown (first: %s, cell %s): neither the "
                 "cell name nor the dump says n or p; declare it with --primitive CELL=nmos|pmos",
                 nuntyped, nuntyped == 1 ? "" : "s", nuntyped == 1 ? "its" : "their", nuntyped == 1 ? "" : "s",
                 ex_untyped->name, ex_untyped->model ? ex_untyped->model : "?");
    goto done;
nomem:
    rc = diag_nomem(d);
done:
    buf_free(&b.tmp);
    if (b.have_parents) {
        strmap_free(&b.first);
        strmap_free(&b.many);
        str_free(b.parents);
        arena_free(&b.arena);
    }
    return rc;
}
