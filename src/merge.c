/* merge: each run's devices and findings streamed out of its JSON into scratch arrays, then, once
 * the whole file has parsed, folded into the per-(device, corner) entries: running statistics
 * (Welford), region counts, failing checks counted once per run, the worst run. A run that fails
 * to parse changes nothing. Linear in the samples; entries found through a hash of interned keys. */
#include "merge.h"
#include "report.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "json.h"

const char *const mrg_stat_name[MRG_NSTATS] = {"gm_id", "margin", "gain"};

typedef struct {
    const char *dev, *corner;    /* interned; corner NULL: the run's first corner (flat layout) */
    const char *label;           /* the corner label as written (arena copy) */
    const char *model, *type, *file; /* arena copies: the item dies with the callback */
    uint32_t line;
    double v[MRG_NSTATS];
    int region;
} Sample;

typedef struct {
    const char *dev, *corner;    /* interned */
    int check;                   /* CheckId, or -1 for a name this biaslint does not know */
    int sev;
    int waived;
} Fail;

void mrg_init(MrgResult *m)
{
    memset(m, 0, sizeof *m);
    arena_init(&m->arena);
    m->names = str_new(&m->arena);
}

void mrg_free(MrgResult *m)
{
    if (!m)
        return;
    free(m->runs);
    free(m->e);
    free(m->slot);
    free(m->samples);
    free(m->fails);
    str_free(m->names);
    arena_free(&m->arena);
    memset(m, 0, sizeof *m);
}

double mrg_std(const MrgStat *s)
{
    return s->n > 1 ? sqrt(s->m2 / (double)(s->n - 1)) : NAN;
}

int mrg_region_changed(const MrgEntry *e)
{
    int kinds = 0;
    for (int r = 0; r < REGION_COUNT; r++)
        kinds += e->region_n[r] != 0;
    return kinds > 1;
}

/* ---- reading one run ---- */

static int bad(MrgResult *m, const JsonValue *at, const char *fmt, ...) PRINTF_LIKE(3, 4);

static int bad(MrgResult *m, const JsonValue *at, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    diag_vadd(m->d, DIAG_ERROR, (SrcLoc){m->cur_path, at ? at->line : 0, at ? at->col : 0}, fmt, ap);
    va_end(ap);
    m->status = ERR_INPUT;
    return ERR_INPUT;
}

static const char *intern(MrgResult *m, const char *s)
{
    const char *p = str_intern(m->names, s ? s : "", s ? strlen(s) : 0);
    if (!p)
        m->status = ERR_NOMEM;
    return p;
}

/* A copy of a string member that is kept when its entry is new (arena; NULL for null or absent). */
static const char *keep(MrgResult *m, const JsonValue *o, const char *k)
{
    const JsonValue *v = json_get(o, k);
    if (!v || v->type != JSON_STRING)
        return NULL;
    const char *s = arena_strndup(&m->arena, v->str, v->len);
    if (!s)
        m->status = ERR_NOMEM;
    return s;
}

static double number(const JsonValue *o, const char *k)
{
    const JsonValue *v = json_get(o, k);
    return v && v->type == JSON_NUMBER ? v->num : NAN;
}

static int region_of(const JsonValue *o)
{
    const JsonValue *v = json_get(o, "region");
    if (!v || v->type != JSON_STRING)
        return REGION_UNKNOWN;
    for (int r = 0; r < REGION_COUNT; r++)
        if (strcmp(v->str, fig_region_name[r]) == 0)
            return r;
    return REGION_UNKNOWN;
}

static int push_sample(MrgResult *m, const Sample *s)
{
    if (m->nsamples == m->samples_cap &&
        buf_grow_array(&m->samples, &m->samples_cap, m->nsamples + 1, sizeof(Sample)) != ERR_OK)
        return m->status = ERR_NOMEM;
    ((Sample *)m->samples)[m->nsamples++] = *s;
    return ERR_OK;
}

static int device_item(MrgResult *m, size_t idx, const JsonValue *it)
{
    if (it->type != JSON_OBJECT)
        return bad(m, it, "devices[%zu] must be an object, not %s", idx, json_type_name(it->type));
    const JsonValue *name = json_get(it, "name");
    if (!name || name->type != JSON_STRING)
        return bad(m, name ? name : it, "devices[%zu] needs a \"name\" string", idx);
    Sample s;
    memset(&s, 0, sizeof s);
    s.dev = intern(m, name->str);
    s.model = keep(m, it, "model");
    s.type = keep(m, it, "type");
    s.file = keep(m, it, "file");
    double line = number(it, "line");
    s.line = isfinite(line) && line > 0 && line < 4e9 ? (uint32_t)line : 0;
    if (m->status != ERR_OK)
        return m->status;
    const JsonValue *cs = json_get(it, "corners");
    if (!cs) {
        s.v[MRG_GMID] = number(it, "gm_id");
        s.v[MRG_MARGIN] = number(it, "margin");
        s.v[MRG_GAIN] = number(it, "gain");
        s.region = region_of(it);
        return push_sample(m, &s);
    }
    if (cs->type != JSON_ARRAY)
        return bad(m, cs, "devices[%zu].corners must be an array", idx);
    for (size_t k = 0; k < cs->len; k++) {
        const JsonValue *c = cs->items[k], *label = json_get(c, "corner");
        if (!label || label->type != JSON_STRING)
            return bad(m, c, "devices[%zu].corners[%zu] needs a \"corner\" label", idx, k);
        s.corner = intern(m, label->str);
        s.label = keep(m, c, "corner");
        s.v[MRG_GMID] = number(c, "gm_id");
        s.v[MRG_MARGIN] = number(c, "margin");
        s.v[MRG_GAIN] = number(c, "gain");
        s.region = region_of(c);
        if (m->status != ERR_OK || push_sample(m, &s) != ERR_OK)
            return m->status;
    }
    return ERR_OK;
}

static int finding_item(MrgResult *m, size_t idx, const JsonValue *it)
{
    if (it->type != JSON_OBJECT)
        return bad(m, it, "findings[%zu] must be an object, not %s", idx, json_type_name(it->type));
    const JsonValue *dev = json_get(it, "device"), *chk = json_get(it, "check"), *sev = json_get(it, "severity"),
                    *cor = json_get(it, "corner"), *w = json_get(it, "waived");
    if (dev && dev->type == JSON_NULL)
        return ERR_OK; /* a finding of no device */
    if (!dev || dev->type != JSON_STRING)
        return bad(m, dev ? dev : it, "findings[%zu] needs \"device\": a string or null", idx);
    if (!chk || chk->type != JSON_STRING)
        return bad(m, chk ? chk : it, "findings[%zu] needs \"check\": a string", idx);
    int s = sev && sev->type == JSON_STRING ? rule_severity_lookup(sev->str, sev->len) : -1;
    if (s < 0)
        return bad(m, sev ? sev : it, "findings[%zu] needs \"severity\": error, warning or info", idx);
    Fail f = {intern(m, dev->str), cor && cor->type == JSON_STRING ? intern(m, cor->str) : NULL,
              rule_check_lookup(chk->str, chk->len), s, w && w->type == JSON_TRUE};
    if (m->status != ERR_OK)
        return m->status;
    if (f.check < 0 || f.check >= CHECK_COUNT) {
        f.check = -1;
        if (!m->other_checks && !(m->other_checks = arena_strndup(&m->arena, chk->str, chk->len)))
            return m->status = ERR_NOMEM;
    }
    if (m->nfails == m->fails_cap && buf_grow_array(&m->fails, &m->fails_cap, m->nfails + 1, sizeof(Fail)) != ERR_OK)
        return m->status = ERR_NOMEM;
    ((Fail *)m->fails)[m->nfails++] = f;
    return ERR_OK;
}

static int on_item(void *ctx, const char *key, size_t index, const JsonValue *item)
{
    MrgResult *m = ctx;
    return strcmp(key, "devices") == 0 ? device_item(m, index, item) : finding_item(m, index, item);
}

/* ---- folding a run in ---- */

static size_t hash2(const void *a, const void *b)
{
    uint64_t h = 1469598103934665603ull;
    h = (h ^ (uint64_t)(uintptr_t)a) * 1099511628211ull;
    h ^= h >> 31;
    h = (h ^ (uint64_t)(uintptr_t)b) * 1099511628211ull;
    h ^= h >> 29;
    return (size_t)h;
}

static int grow_slots(MrgResult *m)
{
    size_t cap = m->nslots ? m->nslots * 2 : 1024;
    size_t *s = calloc(cap, sizeof *s);
    if (!s)
        return ERR_NOMEM;
    for (size_t i = 0; i < m->n; i++) {
        size_t h = hash2(m->e[i].dkey, m->e[i].ckey) & (cap - 1);
        while (s[h])
            h = (h + 1) & (cap - 1);
        s[h] = i + 1;
    }
    free(m->slot);
    m->slot = s;
    m->nslots = cap;
    return ERR_OK;
}

/* The entry of (dev, corner), made from s when new; NULL when s is NULL and there is none. */
static MrgEntry *entry(MrgResult *m, const char *dev, const char *corner, const Sample *s)
{
    if (2 * (m->n + 1) > m->nslots && grow_slots(m) != ERR_OK) {
        m->status = ERR_NOMEM;
        return NULL;
    }
    size_t h = hash2(dev, corner) & (m->nslots - 1);
    for (; m->slot[h]; h = (h + 1) & (m->nslots - 1)) {
        MrgEntry *e = &m->e[m->slot[h] - 1];
        if (e->dkey == dev && e->ckey == corner)
            return e;
    }
    if (!s)
        return NULL;
    if (m->n == m->cap && buf_grow_array((void **)&m->e, &m->cap, m->n + 1, sizeof *m->e) != ERR_OK) {
        m->status = ERR_NOMEM;
        return NULL;
    }
    MrgEntry *e = &m->e[m->n];
    memset(e, 0, sizeof *e);
    e->device = dev; /* interned names are lower case, as biaslint writes them */
    e->corner = s->label ? s->label : m->first_label;
    e->dkey = dev;
    e->ckey = corner;
    e->model = s->model;
    e->type = s->type;
    e->file = s->file;
    e->line = s->line;
    e->worst_sev = -1;
    e->worst_margin = NAN;
    for (int k = 0; k < MRG_NSTATS; k++) {
        e->stat[k].min = e->stat[k].max = e->stat[k].mean = NAN;
    }
    m->slot[h] = ++m->n;
    return e;
}

static void add_stat(MrgStat *s, double v, uint32_t run)
{
    if (!isfinite(v))
        return;
    s->n++;
    if (s->n == 1) {
        s->min = s->max = s->mean = v;
        s->m2 = 0.0;
        s->min_run = s->max_run = run;
        return;
    }
    if (v < s->min) {
        s->min = v;
        s->min_run = run;
    }
    if (v > s->max) {
        s->max = v;
        s->max_run = run;
    }
    double d = v - s->mean;
    s->mean += d / (double)s->n;
    s->m2 += d * (v - s->mean);
}

static int fold(MrgResult *m, uint32_t run)
{
    Sample *sm = m->samples;
    Fail *fl = m->fails;
    MrgRun *r = &m->runs[run];
    /* samples: statistics and regions; remember this run's margin for the worst run */
    for (size_t i = 0; i < m->nsamples; i++) {
        Sample *s = &sm[i];
        if (!s->corner)
            s->corner = m->first_corner;
        MrgEntry *e = entry(m, s->dev, s->corner, s);
        if (!e)
            return ERR_NOMEM;
        e->nruns++;
        for (int k = 0; k < MRG_NSTATS; k++)
            add_stat(&e->stat[k], s->v[k], run);
        e->region_n[(unsigned)s->region < REGION_COUNT ? s->region : REGION_UNKNOWN]++;
        e->cur_run = run + 1;
        e->cur_sev = -1;
        e->cur_margin = s->v[MRG_MARGIN];
    }
    r->ndevices = m->nsamples;
    /* failing findings: each check counted once per run, per device and per run */
    int run_failed = 0;
    for (size_t i = 0; i < m->nfails; i++) {
        Fail *f = &fl[i];
        if (f->waived || f->sev < SEV_WARNING)
            continue;
        r->nfailing++;
        run_failed = 1;
        if (f->check >= 0 && m->check_mark[f->check] != run + 1) {
            m->check_mark[f->check] = run + 1;
            m->check_runs[f->check]++;
        }
        MrgEntry *e = entry(m, f->dev, f->corner ? f->corner : m->first_corner, NULL);
        if (!e || e->cur_run != run + 1)
            continue; /* a finding of a device the run does not list: nothing to attach it to */
        if (f->sev > e->cur_sev)
            e->cur_sev = f->sev;
        if (f->check < 0)
            continue;
        if (!e->fail) {
            e->fail = arena_zalloc(&m->arena, 2 * CHECK_COUNT * sizeof *e->fail);
            if (!e->fail)
                return ERR_NOMEM;
            e->fail_mark = e->fail + CHECK_COUNT;
        }
        if (e->fail_mark[f->check] != run + 1) {
            e->fail_mark[f->check] = run + 1;
            e->fail[f->check]++;
        }
    }
    m->runs_failing += run_failed;
    /* the worst run of each entry this run touched */
    for (size_t i = 0; i < m->nsamples; i++) {
        MrgEntry *e = entry(m, sm[i].dev, sm[i].corner, NULL);
        if (!e || e->cur_run != run + 1)
            continue;
        e->cur_run = 0; /* once per entry */
        int better = e->nruns == 1 || e->cur_sev > e->worst_sev ||
                     (e->cur_sev == e->worst_sev && isfinite(e->cur_margin) &&
                      (!isfinite(e->worst_margin) || e->cur_margin < e->worst_margin));
        if (better) {
            e->worst_sev = e->cur_sev;
            e->worst_margin = e->cur_margin;
            e->worst_run = run;
        }
    }
    return ERR_OK;
}

int mrg_add(MrgResult *m, const char *path, DiagList *d)
{
    if (!m->names)
        return diag_nomem(d);
    m->d = d;
    m->cur_path = path;
    m->status = ERR_OK;
    m->nsamples = m->nfails = 0;
    static const char *const keys[] = {"devices", "findings", NULL};
    JsonStream st = {keys, on_item, m};
    JsonDoc doc;
    int rc = json_load(&doc, path, 0, &st, d);
    if (rc == ERR_OK && m->status != ERR_OK)
        rc = m->status;
    if (rc == ERR_OK) {
        const JsonValue *root = doc.root, *tool = json_get(root, "tool"), *schema = json_get(root, "schema"),
                        *kind = json_get(root, "kind");
        const JsonValue *cs = json_get(root, "corners");
        if (root->type != JSON_OBJECT || !tool || tool->type != JSON_STRING || strcmp(tool->str, "biaslint") != 0)
            rc = bad(m, tool ? tool : root, "not a biaslint JSON report: it has no \"tool\": \"biaslint\"");
        else if (kind && kind->type == JSON_STRING && strcmp(kind->str, "merge") == 0)
            rc = bad(m, kind, "this is a merge summary, not the report of one run: merge the runs themselves");
        else if (!schema || schema->type != JSON_NUMBER || !rep_json_schema_known(schema->num))
            rc = bad(m, schema ? schema : root, "this biaslint reads reports of schema 1 to %d only", REP_JSON_SCHEMA);
        else if (!json_get(root, "devices"))
            rc = bad(m, root, "the report has no \"devices\" array");
        if (rc == ERR_OK) {
            const JsonValue *l0 = cs && cs->type == JSON_ARRAY && cs->len ? json_get(cs->items[0], "label") : NULL;
            m->first_corner = intern(m, l0 && l0->type == JSON_STRING ? l0->str : "");
            m->first_label = l0 && l0->type == JSON_STRING ? arena_strndup(&m->arena, l0->str, l0->len) : "";
            MrgRun run = {path, cs && cs->type == JSON_ARRAY ? cs->len : 1, 0, 0};
            if (!m->first_corner || !m->first_label || BUF_PUSH(m->runs, m->nruns, m->runs_cap, run) != ERR_OK)
                rc = ERR_NOMEM;
        }
        json_free(&doc);
    }
    if (rc == ERR_OK && m->nruns > UINT32_MAX - 2)
        rc = bad(m, NULL, "more than %u runs", (unsigned)(UINT32_MAX - 2));
    if (rc == ERR_OK && fold(m, (uint32_t)(m->nruns - 1)) != ERR_OK)
        rc = ERR_NOMEM; /* a half-folded run cannot be undone: the caller stops */
    if (rc == ERR_NOMEM)
        diag_nomem(d);
    m->d = NULL;
    return rc;
}

void mrg_finish(MrgResult *m)
{
    m->region_changes = 0;
    for (size_t i = 0; i < m->n; i++)
        m->region_changes += mrg_region_changed(&m->e[i]) != 0;
}
