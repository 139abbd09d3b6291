/* baseline: a JSON report read with json.c (device and finding arrays streamed, so a large report is
 * read in bounded memory), its names interned, and this run matched against it through two hash
 * tables keyed by interned pointers: (device, check, corner) for findings, (device, corner) for
 * regions. Everything is linear in the findings plus the devices. */
#include "baseline.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "json.h"
#include "strtab.h"

typedef struct {
    const char *dev, *corner; /* interned; corner NULL: the baseline's first corner (flat device layout) */
    const char *region;       /* arena copy */
} OldRegion;

typedef struct {
    const char *dev, *check, *corner; /* interned keys */
} Key;

struct Baseline {
    Arena arena;              /* copies of every string kept */
    StrTab *names;
    BlOldFinding *f;          /* display strings (arena copies, case kept) */
    Key *fkey;                /* interned keys of f, same index */
    size_t nf, fcap;
    OldRegion *reg;
    size_t nreg, regcap;
    const char **corners;     /* labels as written */
    size_t ncorners, ccap;
    const char *path;         /* owned copy */
    DiagList *d;              /* during bl_load only */
    int status;
};

/* ---- reading ---- */

static int bad(Baseline *b, const JsonValue *at, const char *fmt, ...) PRINTF_LIKE(3, 4);

static int bad(Baseline *b, const JsonValue *at, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    diag_vadd(b->d, DIAG_ERROR, (SrcLoc){b->path, at ? at->line : 0, at ? at->col : 0}, fmt, ap);
    va_end(ap);
    b->status = ERR_INPUT;
    return ERR_INPUT;
}

static const char *copy(Baseline *b, const JsonValue *v)
{
    if (!v || v->type != JSON_STRING)
        return NULL;
    const char *s = arena_strndup(&b->arena, v->str, v->len);
    if (!s)
        b->status = ERR_NOMEM;
    return s;
}

static const char *intern(Baseline *b, const char *s)
{
    const char *p = str_intern(b->names, s ? s : "", s ? strlen(s) : 0);
    if (!p)
        b->status = ERR_NOMEM;
    return p;
}

static double opt_number(const JsonValue *o, const char *k)
{
    const JsonValue *v = json_get(o, k);
    return v && v->type == JSON_NUMBER ? v->num : NAN;
}

static int finding_item(Baseline *b, size_t idx, const JsonValue *it)
{
    if (it->type != JSON_OBJECT)
        return bad(b, it, "findings[%zu] must be an object, not %s", idx, json_type_name(it->type));
    const JsonValue *dev = json_get(it, "device"), *chk = json_get(it, "check"), *sev = json_get(it, "severity"),
                    *cor = json_get(it, "corner"), *line = json_get(it, "line");
    if (!dev || (dev->type != JSON_STRING && dev->type != JSON_NULL))
        return bad(b, dev ? dev : it, "findings[%zu] needs \"device\": a string or null", idx);
    if (!chk || chk->type != JSON_STRING)
        return bad(b, chk ? chk : it, "findings[%zu] needs \"check\": a string", idx);
    int s = sev && sev->type == JSON_STRING ? rule_severity_lookup(sev->str, sev->len) : -1;
    if (s < 0)
        return bad(b, sev ? sev : it, "findings[%zu] needs \"severity\": error, warning or info", idx);
    if (cor && cor->type != JSON_STRING && cor->type != JSON_NULL)
        return bad(b, cor, "findings[%zu].corner must be a string", idx);
    if (line && line->type != JSON_NULL && (line->type != JSON_NUMBER || line->num < 0 || line->num > 4e9))
        return bad(b, line, "findings[%zu].line must be a line number or null", idx);
    BlOldFinding f;
    memset(&f, 0, sizeof f);
    f.device = copy(b, dev);
    f.check = copy(b, chk);
    f.corner = cor && cor->type == JSON_STRING ? copy(b, cor) : "";
    f.sev = (Severity)s;
    f.value = opt_number(it, "value");
    f.limit = opt_number(it, "limit");
    f.message = copy(b, json_get(it, "message"));
    f.file = copy(b, json_get(it, "file"));
    f.rule = copy(b, json_get(it, "rule"));
    f.line = line && line->type == JSON_NUMBER ? (uint32_t)line->num : 0;
    Key k = {intern(b, f.device), intern(b, f.check), intern(b, f.corner)};
    if (b->status != ERR_OK)
        return b->status;
    if (b->nf == b->fcap) {
        size_t cap = b->fcap;
        if (buf_grow_array((void **)&b->f, &cap, b->nf + 1, sizeof *b->f) != ERR_OK)
            return b->status = ERR_NOMEM;
        size_t cap2 = b->fcap;
        if (buf_grow_array((void **)&b->fkey, &cap2, b->nf + 1, sizeof *b->fkey) != ERR_OK)
            return b->status = ERR_NOMEM;
        b->fcap = cap < cap2 ? cap : cap2;
    }
    b->f[b->nf] = f;
    b->fkey[b->nf++] = k;
    return ERR_OK;
}

static int add_region(Baseline *b, const char *dev, const char *corner, const JsonValue *region)
{
    OldRegion r = {dev, corner, region && region->type == JSON_STRING ? copy(b, region) : NULL};
    if (b->status != ERR_OK)
        return b->status;
    if (!r.region)
        return ERR_OK;
    if (BUF_PUSH(b->reg, b->nreg, b->regcap, r) != ERR_OK)
        return b->status = ERR_NOMEM;
    return ERR_OK;
}

static int device_item(Baseline *b, size_t idx, const JsonValue *it)
{
    if (it->type != JSON_OBJECT)
        return bad(b, it, "devices[%zu] must be an object, not %s", idx, json_type_name(it->type));
    const JsonValue *name = json_get(it, "name");
    if (!name || name->type == JSON_NULL)
        return ERR_OK; /* a device without a name cannot be matched */
    if (name->type != JSON_STRING)
        return bad(b, name, "devices[%zu].name must be a string", idx);
    const char *dev = intern(b, name->str);
    if (!dev)
        return b->status;
    const JsonValue *cs = json_get(it, "corners");
    if (!cs)
        return add_region(b, dev, NULL, json_get(it, "region"));
    if (cs->type != JSON_ARRAY)
        return bad(b, cs, "devices[%zu].corners must be an array", idx);
    for (size_t k = 0; k < cs->len; k++) {
        const JsonValue *c = cs->items[k];
        const JsonValue *label = json_get(c, "corner");
        if (!label || label->type != JSON_STRING)
            return bad(b, c, "devices[%zu].corners needs a \"corner\" label in every entry", idx);
        const char *corner = intern(b, label->str);
        if (!corner || add_region(b, dev, corner, json_get(c, "region")) != ERR_OK)
            return b->status;
    }
    return ERR_OK;
}

static int on_item(void *ctx, const char *key, size_t index, const JsonValue *item)
{
    Baseline *b = ctx;
    if (strcmp(key, "findings") == 0)
        return finding_item(b, index, item);
    return device_item(b, index, item);
}

static int header(Baseline *b, const JsonValue *root)
{
    if (root->type != JSON_OBJECT)
        return bad(b, root, "this is %s, not a biaslint JSON report (an object)", json_type_name(root->type));
    const JsonValue *tool = json_get(root, "tool"), *schema = json_get(root, "schema");
    if (!tool || tool->type != JSON_STRING || strcmp(tool->str, "biaslint") != 0)
        return bad(b, tool ? tool : root, "not a biaslint JSON report: it has no \"tool\": \"biaslint\"");
    if (!schema || schema->type != JSON_NUMBER || !rep_json_schema_known(schema->num)) {
        if (schema && schema->type == JSON_NUMBER && schema->num > REP_JSON_SCHEMA)
            return bad(b, schema, "this report has schema %g; this biaslint reads schemas 1 to %d: use the "
                                  "biaslint that wrote it, or a newer one",
                       schema->num, REP_JSON_SCHEMA);
        return bad(b, schema ? schema : root, "the report has no \"schema\" number (1 to %d)", REP_JSON_SCHEMA);
    }
    const JsonValue *f = json_get(root, "findings"), *dv = json_get(root, "devices");
    if (!f || f->type != JSON_ARRAY)
        return bad(b, f ? f : root, "the report has no \"findings\" array");
    if (!dv || dv->type != JSON_ARRAY)
        return bad(b, dv ? dv : root, "the report has no \"devices\" array");
    const JsonValue *cs = json_get(root, "corners");
    if (cs && cs->type == JSON_ARRAY) {
        for (size_t k = 0; k < cs->len; k++) {
            const JsonValue *label = json_get(cs->items[k], "label");
            if (!label || label->type != JSON_STRING)
                return bad(b, cs->items[k], "corners[%zu] needs a \"label\" string", k);
            const char *l = copy(b, label);
            if (!l || BUF_PUSH(b->corners, b->ncorners, b->ccap, l) != ERR_OK)
                return b->status = ERR_NOMEM;
        }
    } else if (BUF_PUSH(b->corners, b->ncorners, b->ccap, "") != ERR_OK) { /* schema 1: one unnamed dump */
        return b->status = ERR_NOMEM;
    }
    if (b->ncorners == 0 && BUF_PUSH(b->corners, b->ncorners, b->ccap, "") != ERR_OK)
        return b->status = ERR_NOMEM;
    /* devices written flat belong to the first corner */
    const char *first = intern(b, b->corners[0]);
    if (!first)
        return b->status;
    for (size_t i = 0; i < b->nreg; i++)
        if (!b->reg[i].corner)
            b->reg[i].corner = first;
    return ERR_OK;
}

void bl_free(Baseline *b)
{
    if (!b)
        return;
    free(b->f);
    free(b->fkey);
    free(b->reg);
    free(b->corners);
    free((char *)b->path);
    str_free(b->names);
    arena_free(&b->arena);
    free(b);
}

int bl_load(const char *path, Baseline **out, DiagList *d)
{
    *out = NULL;
    Baseline *b = calloc(1, sizeof *b);
    if (!b)
        return diag_nomem(d);
    arena_init(&b->arena);
    b->path = strdup(path);
    b->names = str_new(&b->arena);
    b->d = d;
    if (!b->path || !b->names) {
        bl_free(b);
        return diag_nomem(d);
    }
    static const char *const keys[] = {"devices", "findings", NULL};
    JsonStream st = {keys, on_item, b};
    JsonDoc doc;
    int rc = json_load(&doc, path, 0, &st, d);
    if (rc == ERR_OK) {
        rc = header(b, doc.root);
        json_free(&doc);
    }
    if (rc == ERR_OK && b->status != ERR_OK)
        rc = b->status;
    if (rc == ERR_NOMEM)
        diag_nomem(d);
    if (rc != ERR_OK) {
        bl_free(b);
        return rc;
    }
    b->d = NULL;
    *out = b;
    return ERR_OK;
}

size_t bl_ncorners(const Baseline *b)
{
    return b->ncorners;
}

const char *bl_corner(const Baseline *b, size_t k)
{
    return k < b->ncorners ? b->corners[k] : NULL;
}

size_t bl_nfindings(const Baseline *b)
{
    return b->nf;
}

const BlOldFinding *bl_finding(const Baseline *b, size_t i)
{
    return i < b->nf ? &b->f[i] : NULL;
}

/* ---- comparing ---- */

static size_t mix(const void *a, const void *b, const void *c)
{
    uint64_t h = 1469598103934665603ull;
    uintptr_t v[3] = {(uintptr_t)a, (uintptr_t)b, (uintptr_t)c};
    for (int i = 0; i < 3; i++) {
        h ^= (uint64_t)v[i];
        h *= 1099511628211ull;
        h ^= h >> 29;
    }
    return (size_t)h;
}

/* Open addressing over chains: a chain holds the baseline findings of one key, linked in file order
 * through next[]; its cursor is the first one no current finding has taken yet. */
typedef struct {
    Key key;
    size_t cursor;  /* baseline index + 1 of the next unmatched finding, 0 when all are taken */
    size_t tail;    /* baseline index of the last one, while building */
} Chain;

typedef struct {
    size_t *slot;   /* chain index + 1, 0 empty */
    size_t cap;
} Table;

static int table_init(Table *t, size_t n)
{
    t->cap = 16;
    while (t->cap < 2 * n + 1)
        t->cap *= 2;
    t->slot = calloc(t->cap, sizeof *t->slot);
    return t->slot ? ERR_OK : ERR_NOMEM;
}

/* The slot where key k's chain is or would go. */
static size_t find_chain(const Table *t, const Chain *ch, const Key *k)
{
    size_t h = mix(k->dev, k->check, k->corner) & (t->cap - 1);
    while (t->slot[h]) {
        const Key *o = &ch[t->slot[h] - 1].key;
        if (o->dev == k->dev && o->check == k->check && o->corner == k->corner)
            break;
        h = (h + 1) & (t->cap - 1);
    }
    return h;
}

void bl_compare_free(BlCompare *x)
{
    if (!x)
        return;
    free(x->status);
    free(x->was_sev);
    free(x->resolved);
    free(x->regions);
    memset(x, 0, sizeof *x);
}

int bl_compare(const Baseline *b, const ReportCtx *c, const char *path, BlCompare *out, DiagList *d)
{
    memset(out, 0, sizeof *out);
    out->path = path;
    const RepPrep *p = c->prep;
    size_t N = p->nrefs, nf = b->nf, nchains = 0, rescap = 0, regcap = 0;
    Table ft = {NULL, 0}, rt = {NULL, 0};
    size_t *next = malloc((nf ? nf : 1) * sizeof *next);
    Chain *ch = malloc((nf ? nf : 1) * sizeof *ch);
    char *used = calloc(nf ? nf : 1, 1);
    const char **labels = malloc(c->ncorners * sizeof *labels);
    out->status = calloc(N ? N : 1, 1);
    out->was_sev = malloc(N ? N : 1);
    if (!next || !ch || !used || !labels || !out->status || !out->was_sev || table_init(&ft, nf) != ERR_OK ||
        table_init(&rt, b->nreg) != ERR_OK)
        goto nomem;
    for (size_t i = 0; i < nf; i++) {
        size_t h = find_chain(&ft, ch, &b->fkey[i]);
        next[i] = 0;
        if (!ft.slot[h]) {
            ch[nchains] = (Chain){b->fkey[i], i + 1, i};
            ft.slot[h] = ++nchains;
        } else {
            Chain *c1 = &ch[ft.slot[h] - 1];
            next[c1->tail] = i + 1;
            c1->tail = i;
        }
    }
    /* regions: the last entry for a (device, corner) wins */
    for (size_t i = 0; i < b->nreg; i++) {
        const OldRegion *r = &b->reg[i];
        size_t h = mix(r->dev, r->corner, NULL) & (rt.cap - 1);
        for (;; h = (h + 1) & (rt.cap - 1)) {
            size_t s = rt.slot[h];
            if (!s || (b->reg[s - 1].dev == r->dev && b->reg[s - 1].corner == r->corner)) {
                rt.slot[h] = i + 1;
                break;
            }
        }
    }
    /* the baseline's interned label for each corner of this run, NULL when it has no such corner */
    size_t matched_corners = 0;
    for (size_t k = 0; k < c->ncorners; k++) {
        const char *l = str_lookup(b->names, c->corners[k].label, strlen(c->corners[k].label));
        int known = 0;
        for (size_t q = 0; l && q < b->ncorners; q++)
            known |= str_lookup(b->names, b->corners[q], strlen(b->corners[q])) == l;
        labels[k] = known ? l : NULL;
        matched_corners += known != 0;
    }
    if (matched_corners == 0 && c->ncorners) {
        Buf have = BUF_INIT, want = BUF_INIT;
        int rc = 0;
        for (size_t q = 0; q < b->ncorners; q++)
            rc |= buf_printf(&have, "%s'%s'", q ? ", " : "", b->corners[q]);
        for (size_t k = 0; k < c->ncorners; k++)
            rc |= buf_printf(&want, "%s'%s'", k ? ", " : "", c->corners[k].label);
        if (rc == ERR_OK)
            diag_add(d, DIAG_WARNING, (SrcLoc){path, 0, 0},
                     "the baseline's corners (%s) are not this run's (%s): every finding counts as new; name the "
                     "corners alike (--op LABEL=FILE) to compare them",
                     have.data, want.data);
        buf_free(&have);
        buf_free(&want);
    }
    /* every current finding, corner by corner in findings order (so the k-th meets the k-th) */
    for (size_t k = 0; k < c->ncorners; k++) {
        const RepCorner *rc = &c->corners[k];
        const Joined *j = rc->joined;
        for (size_t i = 0; rc->findings && i < rc->findings->n; i++) {
            const Finding *f = &rc->findings->items[i];
            size_t at = p->base[k] + i, hit = 0;
            out->was_sev[at] = -1;
            if (labels[k] && f->row < j->n && j->rows[f->row].dev->name) {
                const char *nm = j->rows[f->row].dev->name, *cn = rep_check_name((int)f->check);
                Key key = {str_lookup(b->names, nm, strlen(nm)), str_lookup(b->names, cn, strlen(cn)), labels[k]};
                if (key.dev && key.check) {
                    size_t h = find_chain(&ft, ch, &key);
                    if (ft.slot[h]) {
                        Chain *c1 = &ch[ft.slot[h] - 1];
                        hit = c1->cursor;
                        if (hit)
                            c1->cursor = next[hit - 1];
                    }
                }
            }
            if (hit) {
                used[hit - 1] = 1;
                Severity old = b->f[hit - 1].sev;
                out->status[at] = f->sev > old ? BL_NEW : BL_UNCHANGED;
                out->was_sev[at] = (int8_t)old;
            } else {
                out->status[at] = BL_NEW;
            }
            if (out->status[at] == BL_NEW) {
                out->nnew++;
                out->nnew_failing += f->sev >= SEV_WARNING && !f->waived;
            } else {
                out->nunchanged++;
            }
        }
    }
    for (size_t i = 0; i < nf; i++)
        if (!used[i] && BUF_PUSH(out->resolved, out->nresolved, rescap, b->f[i]) != ERR_OK)
            goto nomem;
    /* regions, device by device in netlist order */
    const Joined *j0 = c->corners[0].joined;
    for (size_t i = 0; i < j0->n; i++) {
        const char *nm = j0->rows[i].dev->name;
        const char *dev = nm ? str_lookup(b->names, nm, strlen(nm)) : NULL;
        if (!dev) {
            out->ndevices_unmatched++;
            continue;
        }
        for (size_t k = 0; k < c->ncorners; k++) {
            if (!labels[k])
                continue;
            size_t h = mix(dev, labels[k], NULL) & (rt.cap - 1);
            for (; rt.slot[h]; h = (h + 1) & (rt.cap - 1)) {
                const OldRegion *o = &b->reg[rt.slot[h] - 1];
                if (o->dev == dev && o->corner == labels[k])
                    break;
            }
            if (!rt.slot[h])
                continue;
            const OldRegion *o = &b->reg[rt.slot[h] - 1];
            const Row *r = &c->corners[k].joined->rows[i];
            const char *now = fig_region_name[(unsigned)r->fig.region < REGION_COUNT && r->op ? r->fig.region : 0];
            if (strcmp(o->region, now) != 0) {
                BlRegionChange rg = {i, (uint32_t)k, o->region};
                if (BUF_PUSH(out->regions, out->nregions, regcap, rg) != ERR_OK)
                    goto nomem;
            }
        }
    }
    free(next);
    free(ch);
    free(used);
    free(labels);
    free(ft.slot);
    free(rt.slot);
    return ERR_OK;
nomem:
    free(next);
    free(ch);
    free(used);
    free(labels);
    free(ft.slot);
    free(rt.slot);
    bl_compare_free(out);
    return diag_nomem(d);
}
