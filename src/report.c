/* report: the table of writers, rep_prepare (findings grouped across corners, the worst corner of
 * each group), the questions every writer asks of a finding (does it fail the run, is it new), the
 * help text of each check, and the formatters and escapes all writers share. */
#include "report.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "lut.h"
#include "numfmt.h"

static const ReportWriter *const writers[] = {&rep_text_writer,  &rep_json_writer,  &rep_csv_writer,
                                              &rep_junit_writer, &rep_sarif_writer, &rep_html_writer};

const char rep_format_names[] = "text|json|csv|junit|sarif|html";

const ReportWriter *rep_lookup(const char *name)
{
    if (!name)
        return NULL;
    for (size_t i = 0; i < sizeof writers / sizeof writers[0]; i++)
        if (strcmp(writers[i]->name, name) == 0)
            return writers[i];
    return NULL;
}

/* ---- grouping across corners ---- */

typedef struct {
    RepRef ref;
    int check;
    size_t occ;   /* the how-many-th finding of this device and check in its corner */
} Item;

static int by_check_corner(const void *a, const void *b)
{
    const Item *x = a, *y = b;
    if (x->check != y->check)
        return x->check < y->check ? -1 : 1;
    if (x->ref.corner != y->ref.corner)
        return x->ref.corner < y->ref.corner ? -1 : 1;
    return x->ref.index < y->ref.index ? -1 : x->ref.index > y->ref.index;
}

static int by_check_occ_corner(const void *a, const void *b)
{
    const Item *x = a, *y = b;
    if (x->check != y->check)
        return x->check < y->check ? -1 : 1;
    if (x->occ != y->occ)
        return x->occ < y->occ ? -1 : 1;
    return x->ref.corner < y->ref.corner ? -1 : x->ref.corner > y->ref.corner;
}

/* A group with the finding that opened it, to keep chk_run's order among the groups of a device. */
typedef struct {
    RepGroup g;
    RepRef key;
} Keyed;

static int by_key(const void *a, const void *b)
{
    RepRef x = ((const Keyed *)a)->key, y = ((const Keyed *)b)->key;
    if (x.corner != y.corner)
        return x.corner < y.corner ? -1 : 1;
    return x.index < y.index ? -1 : x.index > y.index;
}

/* How far a finding lies past its limit, relative to the limit where that is meaningful; -1 when
 * either is absent. Used only to rank the corners of one device and check. */
static double distance(const Finding *f)
{
    if (!isfinite(f->value) || !isfinite(f->limit))
        return -1.0;
    double d = fabs(f->value - f->limit);
    return f->limit != 0.0 ? d / fabs(f->limit) : d;
}

/* 1 when a is worse than b: not waived, then higher severity, then farther past the limit (earlier
 * corners win ties). */
static int worse(const Finding *a, const Finding *b)
{
    if (!a->waived != !b->waived)
        return !a->waived;
    if (a->sev != b->sev)
        return a->sev > b->sev;
    return distance(a) > distance(b);
}

/* The order of the groups: not waived by severity (errors first), then waived by severity. */
static size_t bucket(const RepGroup *g)
{
    size_t sev = (unsigned)g->sev < SEV_COUNT ? (size_t)g->sev : (size_t)SEV_ERROR;
    return (g->waived ? SEV_COUNT : 0) + (SEV_COUNT - 1 - sev);
}

void rep_prep_free(RepPrep *p)
{
    if (!p)
        return;
    free(p->groups);
    free(p->refs);
    free(p->group_of);
    free(p->base);
    free(p->row_start);
    memset(p, 0, sizeof *p);
}

static int uses_tables(const ReportCtx *c);

int rep_prepare(ReportCtx *c, RepPrep *p)
{
    int single = c->ncorners == 0 || (c->single_form && c->ncorners == 1);
    memset(p, 0, sizeof *p);
    if (single) {
        p->one = (RepCorner){"", c->op_path, c->op, c->joined, c->findings};
        c->corners = &p->one;
        c->ncorners = 1;
        c->single_form = 1;
    }
    size_t K = c->ncorners, nrows = c->corners[0].joined ? c->corners[0].joined->n : 0, N = 0;
    p->tables = uses_tables(c);
    p->base = malloc((K + 1) * sizeof *p->base);
    if (!p->base)
        goto nomem;
    for (size_t k = 0; k < K; k++) {
        p->base[k] = N;
        N += c->corners[k].findings ? c->corners[k].findings->n : 0;
    }
    p->base[K] = N;
    Item *items = malloc((N ? N : 1) * sizeof *items);
    size_t *start = calloc(nrows + 2, sizeof *start);
    p->refs = malloc((N ? N : 1) * sizeof *p->refs);
    p->group_of = malloc((N ? N : 1) * sizeof *p->group_of);
    Keyed *g = malloc((N ? N : 1) * sizeof *g);
    p->groups = malloc((N ? N : 1) * sizeof *p->groups);
    if (!items || !start || !p->refs || !p->group_of || !g || !p->groups) {
        free(items);
        free(start);
        free(g);
        goto nomem;
    }
    /* counting sort by device row, stable in (corner, index) order; a finding whose row is out of
       range (a bug elsewhere) goes into one last bucket rather than out of bounds */
    for (size_t k = 0; k < K; k++) {
        const Findings *fs = c->corners[k].findings;
        for (size_t i = 0; fs && i < fs->n; i++) {
            size_t r = fs->items[i].row < nrows ? fs->items[i].row : nrows;
            start[r + 1]++;
        }
    }
    for (size_t r = 0; r <= nrows; r++)
        start[r + 1] += start[r];
    {
        size_t *fill = malloc((nrows + 1) * sizeof *fill);
        if (!fill) {
            free(items);
            free(start);
            free(g);
            goto nomem;
        }
        memcpy(fill, start, (nrows + 1) * sizeof *fill);
        for (size_t k = 0; k < K; k++) {
            const Findings *fs = c->corners[k].findings;
            for (size_t i = 0; fs && i < fs->n; i++) {
                size_t r = fs->items[i].row < nrows ? fs->items[i].row : nrows;
                items[fill[r]++] = (Item){{(uint32_t)k, (uint32_t)i}, (int)fs->items[i].check, 0};
            }
        }
        free(fill);
    }
    /* within each device: number the findings of one check per corner, then group by (check, number) */
    size_t ng = 0;
    for (size_t r = 0; r <= nrows; r++) {
        Item *b = items + start[r];
        size_t n = start[r + 1] - start[r];
        if (n == 0)
            continue;
        size_t ng_row = ng;
        if (n > 1)
            qsort(b, n, sizeof *b, by_check_corner);
        for (size_t i = 0; i < n; i++)
            b[i].occ = i > 0 && b[i].check == b[i - 1].check && b[i].ref.corner == b[i - 1].ref.corner ? b[i - 1].occ + 1 : 0;
        if (n > 1)
            qsort(b, n, sizeof *b, by_check_occ_corner);
        for (size_t i = 0; i < n;) {
            size_t e = i + 1;
            while (e < n && b[e].check == b[i].check && b[e].occ == b[i].occ)
                e++;
            g[ng].key = b[i].ref;
            RepGroup *gr = &g[ng++].g;
            gr->row = r < nrows ? r : SIZE_MAX;
            gr->check = b[i].check;
            gr->first = start[r] + i;
            gr->n = e - i;
            gr->worst = b[i].ref;
            for (size_t q = i; q < e; q++) {
                p->refs[start[r] + q] = b[q].ref;
                if (worse(rep_finding(c, b[q].ref), rep_finding(c, gr->worst)))
                    gr->worst = b[q].ref;
            }
            gr->sev = rep_finding(c, gr->worst)->sev;
            gr->waived = rep_finding(c, gr->worst)->waived != 0; /* the worst is waived only if all are */
            i = e;
        }
        /* the groups of one device in the order their first findings came (chk_run's order) */
        if (ng - ng_row > 1)
            qsort(g + ng_row, ng - ng_row, sizeof *g, by_key);
    }
    /* stable counting sort of the groups into buckets: not waived by severity (errors first), then
       waived by severity */
    size_t at[2 * SEV_COUNT] = {0}, nb[2 * SEV_COUNT] = {0};
    for (size_t i = 0; i < ng; i++) {
        nb[bucket(&g[i].g)]++;
        if (g[i].g.waived)
            p->nwaived++;
        else
            p->count[(unsigned)g[i].g.sev < SEV_COUNT ? g[i].g.sev : SEV_ERROR]++;
    }
    size_t acc = 0;
    for (int b = 0; b < 2 * SEV_COUNT; b++) {
        at[b] = acc;
        acc += nb[b];
    }
    for (size_t i = 0; i < ng; i++) {
        const RepGroup *gi = &g[i].g;
        size_t to = at[bucket(gi)]++;
        p->groups[to] = *gi;
        for (size_t q = gi->first; q < gi->first + gi->n; q++)
            p->group_of[p->base[p->refs[q].corner] + p->refs[q].index] = to;
    }
    p->ngroups = ng;
    p->nrefs = N;
    p->row_start = start;
    free(items);
    free(g);
    c->prep = p;
    return ERR_OK;
nomem:
    rep_prep_free(p);
    return ERR_NOMEM;
}

const Finding *rep_finding(const ReportCtx *c, RepRef r)
{
    return &c->corners[r.corner].findings->items[r.index];
}

BlStatus rep_status(const ReportCtx *c, size_t k, size_t index)
{
    if (!c->baseline || !c->baseline->status || !c->prep)
        return BL_NONE;
    return (BlStatus)c->baseline->status[c->prep->base[k] + index];
}

BlStatus rep_group_status(const ReportCtx *c, const RepGroup *g)
{
    if (!c->baseline)
        return BL_NONE;
    for (size_t q = g->first; q < g->first + g->n; q++)
        if (rep_status(c, c->prep->refs[q].corner, c->prep->refs[q].index) == BL_NEW)
            return BL_NEW;
    return BL_UNCHANGED;
}

int rep_fails(const ReportCtx *c, size_t k, size_t index)
{
    const Finding *f = &c->corners[k].findings->items[index];
    if (f->waived)
        return 0;
    if (c->fail_new) /* without a baseline every finding counts as new */
        return f->sev >= SEV_WARNING && (!c->baseline || rep_status(c, k, index) == BL_NEW);
    return f->sev >= c->fail_level;
}

const Finding *rep_loose(const ReportCtx *c, size_t *n)
{
    const Findings *fs = c->ncorners ? c->corners[0].findings : NULL;
    *n = fs ? fs->nloose : 0;
    return fs ? fs->loose : NULL;
}

size_t rep_failing(const ReportCtx *c)
{
    size_t n = 0, nl;
    for (size_t k = 0; k < c->ncorners; k++)
        for (size_t i = 0; c->corners[k].findings && i < c->corners[k].findings->n; i++)
            n += rep_fails(c, k, i) != 0;
    /* a statement that selects no device is not a change in the design: only the level gates it */
    const Finding *l = rep_loose(c, &nl);
    for (size_t i = 0; !c->fail_new && i < nl; i++)
        n += !l[i].waived && l[i].sev >= c->fail_level;
    return n;
}

void rep_counts(const ReportCtx *c, size_t count[SEV_COUNT])
{
    for (int s = 0; s < SEV_COUNT; s++)
        count[s] = 0;
    for (size_t k = 0; k < c->ncorners; k++) {
        const Findings *fs = c->corners[k].findings;
        if (!fs)
            continue;
        for (int s = 0; s < SEV_COUNT; s++)
            count[s] += fs->count[s];
        for (size_t i = 0; k > 0 && i < fs->nloose; i++) /* counted in corner 0 already */
            if (!fs->loose[i].waived && (unsigned)fs->loose[i].sev < SEV_COUNT && count[fs->loose[i].sev])
                count[fs->loose[i].sev]--;
    }
}

/* ---- names and help ---- */

const char *rep_check_name(int k)
{
    return k >= 0 && k < CHECK_COUNT && rule_check_name[k] ? rule_check_name[k] : "?";
}

/* ORDER CHECK */
static const char *const check_help[CHECK_COUNT] = {
    [CHECK_MARGIN] = "VDS-VDSAT, the headroom a saturated device keeps before it leaves saturation, is below the "
                     "minimum of the rules. Raise the drain voltage (the bias of the node or of the device "
                     "stacked above), lower VDSAT (a wider device or less current: a higher gm/ID), or set the "
                     "limit that fits the design with a `check sat-margin min` rule.",
    [CHECK_TRIODE] = "VDS is below VDSAT: the device works as a resistor, not as a current source, and its "
                     "output resistance and gain are gone. Look at the bias of its drain and at the devices "
                     "stacked with it.",
    [CHECK_OFF] = "The drain current per square, ID*L/(W*m), is below the off limit of the region rules: the "
                  "device conducts next to nothing. When it is meant to be off (a power-down switch), switch "
                  "the check off for it; otherwise its gate bias is wrong.",
    [CHECK_GAIN] = "The intrinsic gain gm/gds is below the minimum of the rules: the device gives little "
                   "voltage gain. A longer channel, or a bias farther from triode, raises it.",
    [CHECK_NODATA] = "The operating-point data has no record for this device, so none of its figures could be "
                     "checked. Make the simulation save it (ngspice `show` tables, or device vectors such as "
                     "@m.x1.m1[id] in the raw file).",
    [CHECK_GMID] = "gm/ID lies outside the target or range stated for this device (a `sized` statement or an "
                   "inline intent): it sits elsewhere on its inversion curve than it was sized for. Resize W or "
                   "its current to bring it back, or restate the intent.",
    [CHECK_REGION] = "The device is not in the region stated for it. Its bias or its size moved it; the message "
                     "says which way.",
    [CHECK_FT] = "The transit frequency gm/(2*pi*Cgg) is outside what was stated for the device: it is too slow "
                 "(or faster than needed) for its role.",
    [CHECK_IC] = "The inversion coefficient is outside the range stated for the device.",
    [CHECK_ID] = "The drain current is outside the range stated for the device.",
    [CHECK_VOV] = "The overdrive VGS-VTH is outside the range stated for the device.",
    [CHECK_MATCH_VGS] = "The devices of a matched group have VGS values further apart than allowed: they do not "
                        "see the same bias, so they will not match.",
    [CHECK_MATCH_GMID] = "The devices of a matched group differ in gm/ID by more than allowed.",
    [CHECK_MATCH_RATIO] = "The drain currents of a matched group are off the expected ratio (by default the ratio "
                          "of W*nf*m/L): often unequal VDS in a mirror.",
    [CHECK_MATCH_VDS] = "The devices of a matched group have VDS values further apart than allowed, which "
                        "upsets the ratio of a mirror through channel-length modulation.",
    [CHECK_WAIVER] = "A waiver has expired, or matched no finding: review it, then renew or remove it.",
};

const char *rep_check_help(int k)
{
    if (k >= 0 && k < CHECK_COUNT && check_help[k])
        return check_help[k];
    return "A requirement of the rules that this device does not meet; the message gives the measured value "
           "and the limit.";
}

const char *rep_region_word(const Row *r)
{
    if (!r->op)
        return row_lut_miss(r) ? "outside table" : "no data";
    return fig_region_name[(unsigned)r->fig.region < REGION_COUNT ? r->fig.region : 0];
}

const char *rep_source(const Row *r)
{
    return !r->op ? NULL : row_lut(r) ? "table" : "dump";
}

const char *rep_table_path(const Row *r)
{
    return row_lut(r) ? lut_path(row_lut(r)) : NULL;
}

static int uses_tables(const ReportCtx *c)
{
    for (size_t k = 0; k < c->ncorners; k++) {
        const Joined *j = c->corners[k].joined;
        if (!j)
            continue;
        if (j->ntable)
            return 1;
        for (size_t i = 0; i < j->n; i++)
            if (row_lut(&j->rows[i]))
                return 1;
    }
    return 0;
}

int rep_suggestion(const Row *r, double *w, double *gm_id)
{
    if (!r->tab || !(r->tab->suggest_w > 0) || !isfinite(r->tab->suggest_w))
        return 0;
    *w = r->tab->suggest_w;
    *gm_id = r->tab->suggest_gmid;
    return 1;
}

const char *rep_type_name(MosType t)
{
    return t == MOS_NMOS ? "nmos" : t == MOS_PMOS ? "pmos" : "unknown";
}

void rep_card_place(const Design *ds, const Device *dv, const char **file, uint32_t *line)
{
    *file = NULL;
    *line = 0;
    if (!ds || dv->card >= ds->ncards)
        return;
    const Card *cd = &ds->cards[dv->card];
    if (cd->file < ds->files.n && ds->files.files[cd->file])
        *file = ds->files.files[cd->file]->path;
    *line = cd->line;
}

/* ---- engineering notation ---- */

/* SI prefixes from 1e-24 to 1e24, index (exponent/3 + 8). "u" stands for micro (ASCII output). */
static const char *const prefix[] = {"y", "z", "a", "f", "p", "n", "u", "m", "", "k", "M", "G", "T", "P", "E", "Z", "Y"};

char *rep_eng(double v, const char *unit, char *buf, size_t size)
{
    if (!unit)
        unit = "";
    if (size == 0)
        return buf;
    if (isnan(v)) {
        snprintf(buf, size, "-");
        return buf;
    }
    if (isinf(v)) {
        snprintf(buf, size, "%sinf%s", v < 0 ? "-" : "", unit);
        return buf;
    }
    if (v == 0.0) {
        snprintf(buf, size, "0%s", unit);
        return buf;
    }
    double a = fabs(v);
    /* the power of 1000 at or below a, from a table instead of log10 and pow (annotation asks this
       for several figures of every device); outside the prefixes, log10 as before */
    static const double p1000[17] = {1e-24, 1e-21, 1e-18, 1e-15, 1e-12, 1e-9, 1e-6, 1e-3, 1e0,
                                     1e3,   1e6,   1e9,   1e12,  1e15,  1e18,  1e21, 1e24};
    int e3;
    double mant;
    if (a >= p1000[0] && a < 1e27) {
        int e2;
        frexp(a, &e2); /* a < 2^e2: log10 a < e2 * 0.30103, a guess of k within one */
        int k = (int)floor((double)e2 * 0.30103 / 3.0) + 8;
        k = k < 0 ? 0 : k > 16 ? 16 : k;
        while (k > 0 && a < p1000[k])
            k--;
        while (k < 16 && a >= p1000[k + 1])
            k++;
        e3 = (k - 8) * 3;
        mant = a / p1000[k];
    } else {
        e3 = (int)floor(log10(a) / 3.0) * 3;
        mant = a / pow(10.0, e3);
    }
    if (mant < 1.0) { /* log10 rounding just below a power of 1000 */
        e3 -= 3;
        mant *= 1000.0;
    } else if (mant >= 1000.0) {
        e3 += 3;
        mant /= 1000.0;
    }
    /* round to 3 significant digits first: 999.7 becomes 1 of the next prefix, not "1e+03" */
    int digits = mant >= 100.0 ? 0 : mant >= 10.0 ? 1 : 2;
    double scale = digits == 0 ? 1.0 : digits == 1 ? 10.0 : 100.0;
    double r = round(mant * scale) / scale;
    if (r >= 1000.0) {
        e3 += 3;
        r /= 1000.0;
    }
    int idx = e3 / 3 + 8;
    if (idx < 0 || idx >= (int)(sizeof prefix / sizeof prefix[0])) {
        snprintf(buf, size, "%.3g%s", v, unit);
        return buf;
    }
    /* sign, "%.3g", prefix and unit, as snprintf would join them (truncated to size), without
       printf's cost: annotation calls this for every device */
    char num[NUMFMT_SIZE];
    numfmt_g(num, r, 3);
    const char *part[4] = {v < 0 ? "-" : "", num, prefix[idx], unit};
    size_t k = 0;
    for (int i = 0; i < 4; i++)
        for (const char *q = part[i]; *q && k + 1 < size; q++)
            buf[k++] = *q;
    buf[k] = '\0';
    return buf;
}

/* ---- escapes ---- */

/* Length of the valid UTF-8 sequence led by p[0] (no overlong forms, no surrogates), or 0. The
 * string is NUL-terminated, so a cut sequence fails on the NUL. */
static size_t utf8_seq(const unsigned char *p)
{
    unsigned char c = p[0];
    size_t len = c >= 0xc2 && c <= 0xdf ? 2 : c >= 0xe0 && c <= 0xef ? 3 : c >= 0xf0 && c <= 0xf4 ? 4 : 0;
    for (size_t k = 1; len && k < len; k++)
        if ((p[k] & 0xc0) != 0x80)
            return 0;
    if (len == 3 && ((c == 0xe0 && p[1] < 0xa0) || (c == 0xed && p[1] >= 0xa0)))
        return 0;
    if (len == 4 && ((c == 0xf0 && p[1] < 0x90) || (c == 0xf4 && p[1] >= 0x90)))
        return 0;
    return len;
}

size_t rep_json_escape(char *dst, const char *s, size_t n)
{
    const unsigned char *p = (const unsigned char *)s, *end = p + n;
    char *d = dst;
    while (p < end) {
        unsigned char c = *p;
        if (c >= 0x20 && c < 0x80 && c != '"' && c != '\\') {
            *d++ = (char)c;
            p++;
            continue;
        }
        if (c < 0x80) {
            const char *e = NULL;
            switch (c) {
            case '"': e = "\\\""; break;
            case '\\': e = "\\\\"; break;
            case '\n': e = "\\n"; break;
            case '\r': e = "\\r"; break;
            case '\t': e = "\\t"; break;
            case '\b': e = "\\b"; break;
            case '\f': e = "\\f"; break;
            default: break;
            }
            if (e) {
                *d++ = e[0];
                *d++ = e[1];
            } else {
                static const char hex[] = "0123456789abcdef";
                memcpy(d, "\\u00", 4);
                d[4] = hex[c >> 4];
                d[5] = hex[c & 15];
                d += 6;
            }
            p++;
            continue;
        }
        size_t len = utf8_seq(p);
        if (len) {
            memcpy(d, p, len);
            d += len;
            p += len;
        } else {
            memcpy(d, "\\ufffd", 6);
            d += 6;
            p++;
        }
    }
    return (size_t)(d - dst);
}

void rep_json_raw(FILE *fp, const char *s)
{
    if (!s)
        return;
    /* in pieces of at most 128 bytes, each cut before a byte that starts a character */
    char out[128 * REP_JSON_ESC_MAX];
    size_t n = strlen(s), at = 0;
    while (at < n) {
        size_t k = n - at < 128 ? n - at : 128;
        while (at + k < n && k > 1 && ((unsigned char)s[at + k] & 0xc0) == 0x80)
            k--;
        fwrite(out, 1, rep_json_escape(out, s + at, k), fp);
        at += k;
    }
}

void rep_json_str(FILE *fp, const char *s)
{
    if (!s) {
        fputs("null", fp);
        return;
    }
    fputc('"', fp);
    rep_json_raw(fp, s);
    fputc('"', fp);
}

void rep_json_num(FILE *fp, double v)
{
    if (!isfinite(v)) {
        fputs("null", fp);
        return;
    }
    char buf[NUMFMT_SIZE]; /* the first of %.15g, %.16g, %.17g that reads back, at a tenth of the cost */
    fwrite(buf, 1, numfmt_json(buf, v), fp);
}

void rep_xml_text(FILE *fp, const char *s)
{
    if (!s)
        return;
    const unsigned char *p = (const unsigned char *)s;
    while (*p) {
        unsigned char c = *p;
        if (c < 0x80) {
            switch (c) {
            case '&': fputs("&amp;", fp); break;
            case '<': fputs("&lt;", fp); break;
            case '>': fputs("&gt;", fp); break;
            case '"': fputs("&quot;", fp); break;
            case '\'': fputs("&#39;", fp); break;
            default:
                if (c < 0x20 && c != '\t' && c != '\n' && c != '\r')
                    fputs("\xef\xbf\xbd", fp); /* not allowed in XML 1.0, even as a reference */
                else
                    fputc(c, fp);
            }
            p++;
            continue;
        }
        size_t len = utf8_seq(p);
        /* U+FFFE and U+FFFF are not XML characters either */
        if (len == 3 && p[0] == 0xef && p[1] == 0xbf && p[2] >= 0xbe)
            len = 0;
        if (len) {
            fwrite(p, 1, len, fp);
            p += len;
        } else {
            fputs("\xef\xbf\xbd", fp);
            p++;
        }
    }
}
