/* opdump: the operating-point table shared by the three dump readers (op_show.c, op_raw.c,
 * op_csv.c): format detection, records merged by canonical name, quantity names, and the number
 * conversion every reader uses. Called by run.c through op_read. */
#include "opdump.h"

#include <errno.h>
#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "memhint.h"

/* ORDER OPQ */
const char *const op_qty_name[OPQ_COUNT] = {
    "id", "gm", "gds", "gmbs",
    "vgs", "vds", "vbs",
    "vth", "von", "vdsat",
    "cgg", "cgs", "cgd", "cgb",
    "w", "l", "m", "nf",
};

/* Second names. "gmb" is ngspice's own (Mos1); the others are for CSV headers written by people or
 * other tools. A name that needs a sign change (vsb) is the CSV reader's business, not listed here. */
static const struct {
    const char *name;
    OpQty q;
    bool ngspice; /* ngspice prints it: the show and raw readers accept it too */
} qty_alias[] = {
    {"gmb", OPQ_GMBS, true},
    {"ids", OPQ_ID, false},
    {"vt", OPQ_VTH, false},
    {"width", OPQ_W, false},
    {"length", OPQ_L, false},
    {"mult", OPQ_M, false},
};

static bool same_fold(const char *a, size_t n, const char *lower)
{
    for (size_t i = 0; i < n; i++) {
        unsigned char c = (unsigned char)a[i];
        if (c >= 'A' && c <= 'Z')
            c = (unsigned char)(c + ('a' - 'A'));
        if (c != (unsigned char)lower[i] || !lower[i])
            return false;
    }
    return lower[n] == '\0';
}

/* Values a record keeps, and the bytes of one block of them. */
static size_t nvals(const OpTable *t)
{
    return t->nq ? t->nq : OPQ_COUNT;
}

static size_t vblock_bytes(const OpTable *t)
{
    return (size_t)OP_VBLOCK * nvals(t) * sizeof(double);
}

#define QTY_NAME_MAX 6 /* the longest name above, "length" */

static bool same_n(const char *a, const char *b, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (a[i] != b[i] || !b[i]) /* a NUL in a (damaged input) must not walk past b's end */
            return false;
    return b[n] == '\0';
}

/* Readers call this for every row label and vector name (millions of times for a large dump), so it
 * folds once into a small buffer and compares first characters before whole names. */
static int lookup(const char *s, size_t n, bool ngspice_only)
{
    if (n == 0 || n > QTY_NAME_MAX)
        return -1;
    char low[QTY_NAME_MAX];
    for (size_t i = 0; i < n; i++)
        low[i] = s[i] >= 'A' && s[i] <= 'Z' ? (char)(s[i] + ('a' - 'A')) : s[i];
    for (int q = 0; q < OPQ_COUNT; q++)
        if (op_qty_name[q][0] == low[0] && same_n(low, op_qty_name[q], n))
            return q;
    for (size_t i = 0; i < sizeof qty_alias / sizeof qty_alias[0]; i++)
        if ((!ngspice_only || qty_alias[i].ngspice) && same_n(low, qty_alias[i].name, n))
            return (int)qty_alias[i].q;
    return -1;
}

int op_qty_lookup(const char *s, size_t n)
{
    return lookup(s, n, false);
}

int op_qty_lookup_ngspice(const char *s, size_t n)
{
    return lookup(s, n, true);
}

void op_canonical(const char *s, size_t n, const char **cs, size_t *cn)
{
    if (n > 0 && s[0] == '@') {
        s++;
        n--;
    }
    /* ngspice spells a device inside a subcircuit "<letter>.<path>"; a top-level name has no dot
       after its first letter (a SPICE device name is one token starting with its type letter). */
    if (n > 2 && (s[0] == 'm' || s[0] == 'M') && s[1] == '.') {
        s += 2;
        n -= 2;
    }
    *cs = s;
    *cn = n;
}

/* ---- numbers ---- */

/* Exact powers of ten: every 10^k with k <= 22 is a double without rounding (5^22 < 2^53). */
static const double pow10_exact[23] = {
    1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
    1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
};

static bool is_nonfinite_word(const char *s, size_t n)
{
    if (n && (s[0] == '+' || s[0] == '-')) {
        s++;
        n--;
    }
    return same_fold(s, n, "nan") || same_fold(s, n, "inf") || same_fold(s, n, "infinity");
}

/* The grammar is checked here, by hand, and the value comes from the fast path below or from
 * strtod. The fast path is Clinger's: when the decimal significand m is below 2^53 and |e| <= 22,
 * m and 10^|e| are both exact doubles, so one IEEE multiplication or division rounds correctly, the
 * same result strtod gives. It needs double arithmetic without excess precision (FLT_EVAL_METHOD 0,
 * which x86-64 and AArch64 have); elsewhere every number goes through strtod. */
int op_parse_number(const char *s, size_t n, double *v)
{
    size_t i = 0;
    bool neg = false;
    if (i < n && (s[i] == '+' || s[i] == '-'))
        neg = s[i++] == '-';
    uint64_t m = 0;
    int ndig = 0;        /* significant digits kept in m */
    long e10 = 0;        /* decimal exponent of m */
    bool digits = false, dropped = false;
    for (; i < n && s[i] >= '0' && s[i] <= '9'; i++) {
        digits = true;
        if (m == 0 && s[i] == '0')
            continue;
        if (ndig < 19) {
            m = m * 10 + (uint64_t)(s[i] - '0');
            ndig++;
        } else {
            e10++;
            dropped = dropped || s[i] != '0';
        }
    }
    if (i < n && s[i] == '.') {
        for (i++; i < n && s[i] >= '0' && s[i] <= '9'; i++) {
            digits = true;
            if (m == 0 && s[i] == '0') {
                e10--;
                continue;
            }
            if (ndig < 19) {
                m = m * 10 + (uint64_t)(s[i] - '0');
                ndig++;
                e10--;
            } else {
                dropped = dropped || s[i] != '0';
            }
        }
    }
    if (!digits)
        return is_nonfinite_word(s, n) ? OPNUM_NONFINITE : OPNUM_SYNTAX;
    if (i < n && (s[i] == 'e' || s[i] == 'E')) {
        i++;
        bool eneg = false;
        if (i < n && (s[i] == '+' || s[i] == '-'))
            eneg = s[i++] == '-';
        if (i >= n || s[i] < '0' || s[i] > '9')
            return OPNUM_SYNTAX;
        long x = 0;
        for (; i < n && s[i] >= '0' && s[i] <= '9'; i++)
            if (x < 100000)
                x = x * 10 + (s[i] - '0');
        e10 += eneg ? -x : x;
    }
    if (i != n)
        return OPNUM_SYNTAX;
    if (m == 0) {
        *v = neg ? -0.0 : 0.0;
        return OPNUM_OK;
    }
#if defined(FLT_EVAL_METHOD) && FLT_EVAL_METHOD == 0
    if (!dropped && m <= (UINT64_C(1) << 53)) {
        double d = (double)m;
        if (e10 >= 0 && e10 <= 22) {
            *v = neg ? -(d * pow10_exact[e10]) : d * pow10_exact[e10];
            return OPNUM_OK;
        }
        if (e10 < 0 && e10 >= -22) {
            *v = neg ? -(d / pow10_exact[-e10]) : d / pow10_exact[-e10];
            return OPNUM_OK;
        }
    }
#endif
    /* The rare rest (over 2^53 or far exponents) goes to strtod, on a NUL-terminated copy so that it
       sees exactly s[0..n). A number of 128 characters or more is read in place; the header asks that
       the byte after it end the number. The grammar was checked above (strtod alone would also take
       hex, "inf" and leading blanks). */
    char tmp[128], *end;
    const char *src = s;
    if (n < sizeof tmp) {
        memcpy(tmp, s, n);
        tmp[n] = '\0';
        src = tmp;
    }
    errno = 0;
    double d = strtod(src, &end);
    if (end != src + n)
        return OPNUM_SYNTAX;
    if (isinf(d))
        return OPNUM_RANGE;
    *v = d;
    return OPNUM_OK;
}

/* ---- records ---- */

OpRecord *op_add(OpTable *t, const char *name, size_t n, SrcLoc loc, bool merge, DiagList *d)
{
    /* the name's value in the table is its record's index: one probe finds both */
    uint32_t *idx;
    const char *iname = str_intern_val(t->names, name, n, &idx);
    if (!iname) {
        diag_nomem(d);
        return NULL;
    }
    if (*idx != STR_NOVAL) {
        if (merge)
            return &t->recs[*idx];
        diag_add(d, DIAG_ERROR, loc, "device '%s' is listed twice (first on line %u)", iname,
                 t->recs[*idx].loc.line);
        return NULL;
    }
    if (t->n >= UINT32_MAX - 1) {
        diag_add(d, DIAG_ERROR, loc, "more than %u devices in one dump", (unsigned)UINT32_MAX - 1);
        return NULL;
    }
    if (buf_grow_array((void **)&t->recs, &t->cap, t->n + 1, sizeof *t->recs) != ERR_OK) {
        diag_nomem(d);
        return NULL;
    }
    size_t b = t->n / OP_VBLOCK;
    if (b >= t->nvblock) {
        double *blk = mem_pages(vblock_bytes(t));
        if (!blk || buf_grow_array((void **)&t->vblock, &t->capvblock, b + 1, sizeof *t->vblock) != ERR_OK) {
            mem_pages_free(blk, vblock_bytes(t));
            diag_nomem(d);
            return NULL;
        }
        t->vblock[t->nvblock++] = blk;
    }
    *idx = (uint32_t)t->n;
    OpRecord *r = &t->recs[t->n];
    r->name = iname;
    r->truncated = false;
    r->family = OPFAM_UNKNOWN;
    r->model = NULL;
    size_t nv = nvals(t);
    r->q = t->vblock[b] + (t->n % OP_VBLOCK) * nv;
    t->n++;
    for (size_t k = 0; k < nv; k++)
        r->q[k] = NAN;
    r->loc = loc;
    r->extra = 0;
    return r;
}

void op_layout(OpTable *t, const bool present[OPQ_COUNT])
{
    if (t->n) /* the records made so far have the old layout */
        return;
    t->nq = 0;
    for (int q = 0; q < OPQ_COUNT; q++)
        t->slot[q] = present[q] ? ++t->nq : 0;
}

void op_values(const OpTable *t, const OpRecord *r, double out[OPQ_COUNT])
{
    for (int q = 0; q < OPQ_COUNT; q++)
        out[q] = op_q(t, r, (OpQty)q);
}

void op_release_values(OpTable *t)
{
    for (size_t b = 0; b < t->nvblock; b++)
        mem_pages_free(t->vblock[b], vblock_bytes(t));
    free(t->vblock);
    t->vblock = NULL;
    t->nvblock = t->capvblock = 0;
    for (size_t i = 0; i < t->n; i++)
        t->recs[i].q = NULL;
}

int op_set(OpTable *t, OpRecord *r, OpQty q, double v, SrcLoc loc, DiagList *d)
{
    if (isnan(v))
        return ERR_OK;
    double *at = op_place(t, r, q);
    if (!at) /* op_layout left it out: the reader broke its promise */
        return diag_add(d, DIAG_ERROR, loc, "internal error: %s of device '%s' has no place in its table",
                        op_qty_name[q], r->name);
    double old = *at;
    if (isnan(old) || old == v) {
        *at = v;
        return ERR_OK;
    }
    return diag_add(d, DIAG_ERROR, loc,
                    "conflicting values for %s of device '%s': %.9g here, %.9g in an earlier table "
                    "(the device's record starts on line %u)",
                    op_qty_name[q], r->name, v, old, r->loc.line);
}

int op_add_node(OpTable *t, const char *name, size_t n, double v)
{
    const char *iname = str_intern(t->names, name, n);
    if (!iname)
        return ERR_NOMEM;
    if (t->nnodes == t->nodes_cap) {
        size_t c1 = t->nodes_cap, c2 = t->nodes_cap;
        if (buf_grow_array((void **)&t->node_name, &c1, t->nnodes + 1, sizeof *t->node_name) != ERR_OK ||
            buf_grow_array((void **)&t->node_v, &c2, t->nnodes + 1, sizeof *t->node_v) != ERR_OK)
            return ERR_NOMEM; /* a grown first array is harmless: nodes_cap still fits both */
        t->nodes_cap = c1 < c2 ? c1 : c2;
    }
    t->node_name[t->nnodes] = iname;
    t->node_v[t->nnodes] = v;
    t->nnodes++;
    return ERR_OK;
}

const OpRecord *op_find(const OpTable *t, const char *name)
{
    const OpRecord *r;
    op_find_all(t, &name, 1, &r);
    return r;
}

void op_release_index(OpTable *t)
{
    str_free(t->names);
    t->names = NULL;
}

void op_find_all(const OpTable *t, const char *const *names, size_t n, const OpRecord **out)
{
    if (!t || !t->names) {
        for (size_t i = 0; i < n; i++)
            out[i] = NULL;
        return;
    }
    /* two stages DIST apart: hash the name and prefetch its slot; then look it up (the slot is
       there now). The ring holds 2 DIST hashes, so the first stage never overwrites one the second
       has yet to read. */
    enum { DIST = 16, RING = 2 * DIST };
    uint64_t h[RING];
    size_t len[RING];
    for (size_t i = 0; i < n + DIST; i++) {
        if (i >= DIST) {
            size_t k = i - DIST;
            uint32_t idx = STR_NOVAL;
            if (names[k])
                str_lookup_val(t->names, names[k], len[k % RING], h[k % RING], &idx);
            out[k] = idx != STR_NOVAL ? &t->recs[idx] : NULL;
        }
        if (i < n && names[i]) {
            len[i % RING] = strlen(names[i]);
            h[i % RING] = str_hash(names[i], len[i % RING]);
            str_prefetch(t->names, h[i % RING]);
        }
    }
}

/* ---- reading ---- */

static const OpReader *const readers[] = {&op_raw_reader, &op_csv_reader, &op_show_reader};

static const OpReader *reader_for(OpFormat fmt)
{
    switch (fmt) {
    case OPFMT_SHOW: return &op_show_reader;
    case OPFMT_RAW: return &op_raw_reader;
    case OPFMT_CSV: return &op_csv_reader;
    default: return NULL;
    }
}

static OpFormat format_of(const OpReader *r)
{
    return r == &op_show_reader ? OPFMT_SHOW : r == &op_raw_reader ? OPFMT_RAW : OPFMT_CSV;
}

/* The most confident reader; the cheap sniffs (raw, csv: first lines) run first, so the show sniff,
   which may scan the whole file, runs only when they are unsure. */
static const OpReader *detect(const char *buf, size_t len)
{
    const OpReader *best = NULL;
    int best_score = 0;
    for (size_t i = 0; i < sizeof readers / sizeof readers[0]; i++) {
        int s = readers[i]->sniff(buf, len);
        if (s > best_score) {
            best_score = s;
            best = readers[i];
        }
        if (best_score >= 90)
            break;
    }
    return best_score >= 40 ? best : NULL;
}

static bool blank(const char *s, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (s[i] != ' ' && s[i] != '\t' && s[i] != '\r' && s[i] != '\n' && s[i] != '\f' && s[i] != '\v')
            return false;
    return true;
}

int op_read(const char *path, OpFormat fmt, OpTable **out, DiagList *d)
{
    *out = NULL;
    int oom_before = d->oom;
    OpTable *t = calloc(1, sizeof *t);
    if (!t)
        return diag_nomem(d);
    arena_init(&t->arena);
    t->temp_c = NAN;
    int rc = src_load(&t->file, path, (SrcLoc){0}, d);
    if (rc != ERR_OK) {
        free(t);
        return rc;
    }
    if (!(t->names = str_new(&t->arena))) {
        rc = diag_nomem(d);
        goto done;
    }
    SrcLoc at_file = {t->file.path, 0, 0};
    if (blank(t->file.text, t->file.len)) {
        rc = diag_add(d, DIAG_ERROR, at_file, "'%s' is %s: it holds no operating-point data", path,
                      t->file.len ? "blank" : "empty");
        goto done;
    }
    const OpReader *r = fmt == OPFMT_AUTO ? detect(t->file.text, t->file.len) : reader_for(fmt);
    if (!r) {
        rc = diag_add(d, DIAG_ERROR, at_file,
                      fmt == OPFMT_AUTO
                          ? "'%s' is in no format biaslint reads: expected ngspice batch output with `show` "
                            "device tables, an ngspice raw file (binary or ASCII), or a CSV device table with "
                            "a name column; to force one, give --op-format show, raw or csv"
                          : "'%s': unknown operating-point format",
                      path);
        goto done;
    }
    t->format = format_of(r);
    rc = r->parse(t, d);
    if (d->oom && !oom_before)
        rc = ERR_NOMEM; /* memory ran out, if only for a diagnostic: that is the failure to report */
done:
    if (rc != ERR_OK) {
        op_free(t);
        return rc;
    }
    /* Nothing reads the dump's text once it is parsed (records keep their lines, diagnostics copied
       their excerpts), and it is the largest input of a big run: give it back, and the unused tail
       of the record array with it. */
    src_free_text(&t->file);
    if (t->n && t->n < t->cap) {
        OpRecord *fit = realloc(t->recs, t->n * sizeof *t->recs);
        if (fit) {
            t->recs = fit;
            t->cap = t->n;
        }
    }
    *out = t;
    return ERR_OK;
}

void op_free(OpTable *t)
{
    if (!t)
        return;
    src_free(&t->file);
    str_free(t->names);
    arena_free(&t->arena);
    op_release_values(t);
    free(t->recs);
    free(t->node_name);
    free(t->node_v);
    free(t->extra_name);
    free(t->extra_vals);
    free(t);
}
