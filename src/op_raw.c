/* op_raw: ngspice raw files, binary and ASCII (ngspice-op-data.md, section 2), read into the
 * OpTable. Used through op_raw_reader by op_read.
 *
 *     file   := plot+
 *     plot   := header "Variables:" NL var{nvars} ("Values:" NL ascii-data | "Binary:" NL bytes)
 *     header := ("Title:" | "Date:" | "Plotname:" | "Flags:" | "No. Variables:" | "No. Points:" | other ":") text NL
 *     var    := TAB index TAB name TAB type [" dims=..."] NL
 *     ascii-data := (point-index value{nvars})*npoints        value: number, or "re,im" when complex
 *     bytes  := npoints * nvars doubles (two per value when complex), machine byte order
 *
 * The plot read is the first one named "Operating Point", or the only plot; it must hold one point.
 * Variables: v(node) is a node voltage; @m...[q], v(@m...[q]) and i(@m...[q]) are device quantities
 * (the wrapper dropped, the name made canonical); anything else (source currents, other devices,
 * quantities biaslint does not use) is skipped. A variable marked dims=0 was saved under a name
 * ngspice does not know: its data slot holds a meaningless 0 and is read as absent. A NaN or
 * infinite value (binary, or "nan" text in ASCII) is read as absent, with one warning for the file.
 * In a complex plot (a one-point AC analysis) device quantities are the real parts and node voltages
 * are skipped: they are small-signal values there. Binary data is read in this machine's byte order,
 * which is how ngspice writes it. */
#include "opdump.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"

typedef struct {
    const char *name;     /* Plotname value, or NULL */
    size_t nname;
    uint32_t line;        /* line of "Title:" */
    uint32_t npts_line;   /* line of "No. Points:" */
    bool complex;
    bool binary;
    size_t nvars, npts;
    size_t vars_off;      /* first variable line */
    uint32_t vars_line;
    size_t data_off;      /* first byte of the data */
    uint32_t data_line;   /* line of "Values:" / "Binary:" */
} Plot;

enum { VAR_SKIP, VAR_DEV, VAR_NODE };

typedef struct {
    uint32_t ref;  /* record index (VAR_DEV) or node index (VAR_NODE) */
    uint8_t kind;
    uint8_t q;
} Var;

typedef struct {
    size_t off;
    uint32_t len;
} NodeName;

typedef struct {
    OpTable *t;
    DiagList *d;
    const char *text;
    size_t len;
    size_t pos;      /* start of the next line */
    uint32_t line;   /* number of the current line */
    const char *ls;  /* the current line without its line end */
    size_t ll, loff;
    size_t nerr;
    size_t nonfinite; /* values that are NaN or infinite, read as absent */
} Raw;

static bool next_line(Raw *r)
{
    if (r->pos >= r->len)
        return false;
    const char *p = r->text + r->pos;
    const char *nl = memchr(p, '\n', r->len - r->pos);
    size_t n = nl ? (size_t)(nl - p) : r->len - r->pos;
    r->ls = p;
    r->loff = r->pos;
    r->ll = n && p[n - 1] == '\r' ? n - 1 : n;
    r->pos += n + (nl != NULL);
    r->line++;
    return true;
}

/* Blank bytes (space, \t \n \v \f \r): a table, since every byte of a large file passes here. */
static const unsigned char space_tab[256] = {[' '] = 1, ['\t'] = 1, ['\n'] = 1, ['\v'] = 1, ['\f'] = 1, ['\r'] = 1};

static inline bool is_space(char c)
{
    return space_tab[(unsigned char)c];
}

static bool starts(const char *s, size_t n, const char *w)
{
    size_t k = strlen(w);
    return n >= k && memcmp(s, w, k) == 0;
}

static void trim(const char **p, size_t *n)
{
    while (*n && is_space(**p)) {
        (*p)++;
        (*n)--;
    }
    while (*n && is_space((*p)[*n - 1]))
        (*n)--;
}

/* An error at loc; with the current line quoted when quote is set (text lines only). */
static int PRINTF_LIKE(5, 6) fail_at(Raw *r, SrcLoc loc, bool quote, uint32_t span, const char *fmt, ...)
{
    r->nerr++;
    Buf b = BUF_INIT;
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&b, fmt, ap);
    va_end(ap);
    if (rc != ERR_OK)
        return diag_nomem(r->d);
    if (quote)
        diag_add_excerpt(r->d, DIAG_ERROR, loc, r->ls, r->ll, span, "%s", b.data);
    else
        diag_add(r->d, DIAG_ERROR, loc, "%s", b.data);
    buf_free(&b);
    return ERR_INPUT;
}

static SrcLoc at(const Raw *r, const char *p)
{
    return (SrcLoc){r->t->file.path, r->line, (uint32_t)((size_t)(p - r->ls) + 1)};
}

/* A count on a header line: digits, blanks around them allowed (ngspice -r pads No. Points). */
static int parse_count(Raw *r, const char *v, size_t n, const char *what, size_t *out)
{
    const char *p = v;
    trim(&p, &n);
    size_t x = 0;
    bool ok = n > 0;
    for (size_t i = 0; i < n && ok; i++) {
        if (p[i] < '0' || p[i] > '9' || x > (SIZE_MAX - 9) / 10)
            ok = false;
        else
            x = x * 10 + (size_t)(p[i] - '0');
    }
    if (!ok)
        return fail_at(r, at(r, n ? p : v), true, (uint32_t)(n ? n : 1), "%s: '%.*s' is not a count", what, (int)n, p);
    *out = x;
    return ERR_OK;
}

/* From "Title:" to the data of one plot. On success the cursor is at the first byte of the data. */
static int parse_header(Raw *r, Plot *pl)
{
    memset(pl, 0, sizeof *pl);
    bool have_vars = false, have_pts = false, have_flags = false;
    if (!next_line(r))
        return ERR_OK;
    if (!starts(r->ls, r->ll, "Title:"))
        return fail_at(r, at(r, r->ls), true, 0,
                       "not an ngspice raw file: a plot starts with a 'Title:' line%s",
                       r->line == 1 ? "" : " (after the data of the previous plot)");
    pl->line = r->line;
    for (;;) {
        if (!next_line(r))
            return fail_at(r, (SrcLoc){r->t->file.path, r->line, 0}, false, 0,
                           "the raw file ends inside the header of the plot that starts on line %u (truncated?)",
                           pl->line);
        if (starts(r->ls, r->ll, "Variables:"))
            break;
        const char *colon = memchr(r->ls, ':', r->ll);
        if (!colon)
            return fail_at(r, at(r, r->ls), true, 0, "expected a raw-file header line 'Name: value' or 'Variables:'");
        const char *v = colon + 1;
        size_t vn = r->ll - (size_t)(v - r->ls);
        size_t kn = (size_t)(colon - r->ls);
        int rc = ERR_OK;
        if (kn == 8 && memcmp(r->ls, "Plotname", 8) == 0) {
            trim(&v, &vn);
            pl->name = v;
            pl->nname = vn;
        } else if (kn == 5 && memcmp(r->ls, "Flags", 5) == 0) {
            have_flags = true;
            bool real = false;
            for (size_t i = 0; i < vn;) {
                while (i < vn && is_space(v[i]))
                    i++;
                size_t b = i;
                while (i < vn && !is_space(v[i]))
                    i++;
                if (i - b == 7 && memcmp(v + b, "complex", 7) == 0)
                    pl->complex = true;
                else if (i - b == 4 && memcmp(v + b, "real", 4) == 0)
                    real = true;
            }
            if (!real && !pl->complex)
                return fail_at(r, at(r, v), true, 0, "Flags: neither 'real' nor 'complex'");
        } else if (kn == 13 && memcmp(r->ls, "No. Variables", 13) == 0) {
            have_vars = true;
            rc = parse_count(r, v, vn, "No. Variables", &pl->nvars);
        } else if (kn == 10 && memcmp(r->ls, "No. Points", 10) == 0) {
            have_pts = true;
            pl->npts_line = r->line;
            rc = parse_count(r, v, vn, "No. Points", &pl->npts);
        }
        if (rc != ERR_OK)
            return rc;
    }
    if (!have_vars || !have_pts || !have_flags)
        return fail_at(r, at(r, r->ls), true, 0, "the header before 'Variables:' lacks '%s'",
                       !have_flags ? "Flags:" : !have_vars ? "No. Variables:" : "No. Points:");
    pl->vars_off = r->pos;
    pl->vars_line = r->line + 1;
    return ERR_OK;
}

static bool data_marker(const Raw *r)
{
    return starts(r->ls, r->ll, "Values:") || starts(r->ls, r->ll, "Binary:");
}

/* Variable lines up to the data marker, from the cursor, nlines of them counted already. Sets where
   the data starts; a count other than No. Variables is an error at the marker. */
static int find_data(Raw *r, Plot *pl, size_t nlines)
{
    for (;;) {
        if (!next_line(r))
            return fail_at(r, (SrcLoc){r->t->file.path, r->line, 0}, false, 0,
                           "the raw file ends in the variable list of the plot that starts on line %u, before "
                           "'Values:' or 'Binary:' (truncated?)",
                           pl->line);
        if (data_marker(r))
            break;
        nlines++;
    }
    pl->binary = r->ls[0] == 'B';
    pl->data_line = r->line;
    pl->data_off = r->pos;
    if (nlines != pl->nvars)
        return fail_at(r, at(r, r->ls), true, 0, "No. Variables says %zu, but %zu variable line%s come%s before '%.7s'",
                       pl->nvars, nlines, nlines == 1 ? "" : "s", nlines == 1 ? "s" : "", r->ls);
    return ERR_OK;
}

static bool overflow_mul(size_t a, size_t b, size_t *out)
{
    if (a && b > SIZE_MAX / a)
        return true;
    *out = a * b;
    return false;
}

/* Bytes of binary data the plot holds, or an error when the file is shorter. */
static int binary_size(Raw *r, const Plot *pl, size_t *size)
{
    size_t per = pl->complex ? 16 : 8, n = SIZE_MAX;
    bool big = overflow_mul(pl->nvars, pl->npts, &n) || overflow_mul(n, per, &n);
    if (big || n > r->len - pl->data_off)
        return fail_at(r, (SrcLoc){r->t->file.path, pl->data_line, 1}, false, 0,
                       "binary data truncated: %zu point%s of %zu %s variable%s need %s%zu bytes from byte %zu "
                       "(after 'Binary:'), but the file ends at byte %zu",
                       pl->npts, pl->npts == 1 ? "" : "s", pl->nvars, pl->complex ? "complex" : "real",
                       pl->nvars == 1 ? "" : "s", big ? "more than " : "", big ? SIZE_MAX : n, pl->data_off, r->len);
    *size = n;
    return ERR_OK;
}

static uint32_t count_lines(const char *p, size_t n)
{
    uint32_t k = 0;
    for (const char *e = p + n; (p = memchr(p, '\n', (size_t)(e - p))); p++)
        k++;
    return k;
}

/* Past the data of a plot that is not read: binary by size, ASCII up to the next "Title:" line. */
static int skip_data(Raw *r, const Plot *pl)
{
    if (pl->binary) {
        size_t n;
        int rc = binary_size(r, pl, &n);
        if (rc != ERR_OK)
            return rc;
        r->line += count_lines(r->text + pl->data_off, n); /* line numbers as an editor shows them */
        r->pos = pl->data_off + n;
        return ERR_OK;
    }
    for (;;) {
        size_t save = r->pos;
        uint32_t sline = r->line;
        if (!next_line(r))
            return ERR_OK;
        if (starts(r->ls, r->ll, "Title:")) {
            r->pos = save;
            r->line = sline;
            return ERR_OK;
        }
    }
}

static bool is_plotname(const Plot *pl, const char *w)
{
    size_t k = strlen(w);
    if (!pl->name || pl->nname != k)
        return false;
    for (size_t i = 0; i < k; i++) {
        char c = pl->name[i];
        if (c >= 'A' && c <= 'Z')
            c = (char)(c + 32);
        if (c != w[i])
            return false;
    }
    return true;
}

/* ---- variables ---- */

typedef struct {
    const char *dev;  /* previous device name, for the common case of consecutive vectors */
    size_t ndev;
    uint32_t rec;
} DevCache;

/* Classify one variable line and create its record. */
static int parse_var(Raw *r, const Plot *pl, size_t i, Var *v, NodeName **nodes, size_t *nnodes, size_t *nodecap,
                     DevCache *dc)
{
    v->kind = VAR_SKIP;
    const char *tk[4];
    size_t tn[4], nt = 0;
    bool dims0 = false;
    for (size_t k = 0; k < r->ll;) {
        while (k < r->ll && is_space(r->ls[k]))
            k++;
        if (k >= r->ll)
            break;
        size_t b = k;
        while (k < r->ll && !is_space(r->ls[k]))
            k++;
        if (nt < 4) {
            tk[nt] = r->ls + b;
            tn[nt] = k - b;
        }
        if (nt >= 3 && k - b == 6 && memcmp(r->ls + b, "dims=0", 6) == 0)
            dims0 = true;
        nt++;
    }
    if (nt < 3)
        return fail_at(r, at(r, r->ls), true, 0, "variable %zu: expected an index, a name and a type", i);
    size_t idx = 0;
    bool ok = tn[0] > 0;
    for (size_t k = 0; k < tn[0] && ok; k++)
        if (tk[0][k] < '0' || tk[0][k] > '9' || idx > SIZE_MAX / 10 - 1)
            ok = false;
        else
            idx = idx * 10 + (size_t)(tk[0][k] - '0');
    if (!ok || idx != i)
        return fail_at(r, at(r, tk[0]), true, (uint32_t)tn[0], "bad variable index '%.*s': expected %zu",
                       (int)tn[0], tk[0], i);
    if (memchr(tk[1], '\0', tn[1]))
        return fail_at(r, at(r, tk[1]), true, (uint32_t)tn[1], "variable %zu: a NUL byte in its name", i);
    if (dims0)
        return ERR_OK; /* saved under a name ngspice does not know: no data */
    const char *nm = tk[1];
    size_t nn = tn[1];
    char wrap = 0;
    if (nn > 3 && (nm[0] == 'v' || nm[0] == 'V' || nm[0] == 'i' || nm[0] == 'I') && nm[1] == '(' && nm[nn - 1] == ')') {
        wrap = (char)(nm[0] | 0x20);
        nm += 2;
        nn -= 3;
    }
    if (nn > 0 && nm[0] == '@') {
        /* @dev[param] */
        const char *lb = memchr(nm, '[', nn);
        if (!lb || nm[nn - 1] != ']' || lb == nm + 1 || lb + 2 >= nm + nn)
            return ERR_OK;
        const char *dev = nm + 1;
        size_t ndev = (size_t)(lb - dev);
        if (dev[0] != 'm' && dev[0] != 'M')
            return ERR_OK; /* not a MOSFET */
        int q = op_qty_lookup_ngspice(lb + 1, (size_t)(nm + nn - 1 - (lb + 1)));
        if (q < 0)
            return ERR_OK;
        if (!(dc->dev && dc->ndev == ndev && memcmp(dc->dev, dev, ndev) == 0)) {
            const char *cn;
            size_t cl;
            op_canonical(dev, ndev, &cn, &cl);
            OpRecord *rec = op_add(r->t, cn, cl, at(r, tk[1]), true, r->d);
            if (!rec)
                return ERR_NOMEM;
            dc->dev = dev;
            dc->ndev = ndev;
            dc->rec = (uint32_t)(rec - r->t->recs);
        }
        v->kind = VAR_DEV;
        v->ref = dc->rec;
        v->q = (uint8_t)q;
        return ERR_OK;
    }
    /* a node: v(name), or a bare name typed voltage (not a scale such as v-sweep of a sweep: those
       plots are rejected anyway). Branch currents i(...) and anything with '#' are skipped. */
    bool node = wrap == 'v' || (wrap == 0 && tn[2] == 7 && memcmp(tk[2], "voltage", 7) == 0);
    if (!node || nn == 0 || memchr(nm, '#', nn) || pl->complex)
        return ERR_OK;
    if (*nnodes >= UINT32_MAX)
        return ERR_LIMIT;
    NodeName nd = {(size_t)(nm - r->text), (uint32_t)nn};
    if (BUF_PUSH(*nodes, *nnodes, *nodecap, nd) != ERR_OK)
        return ERR_NOMEM;
    v->kind = VAR_NODE;
    v->ref = (uint32_t)(*nnodes - 1);
    return ERR_OK;
}

/* ---- values ---- */

/* Where the values of point 0 go, as they are read: straight into the records and node voltages
   (a million-device file has ten million variables: no array of values in between). */
typedef struct {
    Var *vars;
    NodeName *nodes;
    size_t first_bad; /* the first variable read as absent (NaN or infinite), SIZE_MAX when none */
    int rc;           /* ERR_OK, or the first failure to store (out of memory, too many nodes) */
} Slots;

static void store(Raw *r, const Plot *pl, Slots *sl, size_t i, double v, bool absent)
{
    const Var *var = &sl->vars[i];
    if (absent) {
        r->nonfinite++;
        if (sl->first_bad == SIZE_MAX)
            sl->first_bad = i;
        return;
    }
    if (pl->npts != 1)
        return; /* refused after the read */
    OpTable *t = r->t;
    if (var->kind == VAR_NODE) {
        int rc = op_add_node(t, t->file.text + sl->nodes[var->ref].off, sl->nodes[var->ref].len, v);
        if (rc != ERR_OK && sl->rc == ERR_OK)
            sl->rc = rc;
    } else if (op_set(t, &t->recs[var->ref], (OpQty)var->q, v, (SrcLoc){t->file.path, (uint32_t)(pl->vars_line + i), 1},
                      r->d) != ERR_OK) {
        r->nerr++;
    }
}

/* ASCII values: tokens separated by blanks and line ends. */
typedef struct {
    Raw *r;
    size_t pos;
    uint32_t line;
    size_t lstart;
} Cur;

static bool cur_token(Cur *c, const char **s, size_t *n)
{
    const char *t = c->r->text;
    size_t len = c->r->len;
    while (c->pos < len && is_space(t[c->pos])) {
        if (t[c->pos] == '\n') {
            c->line++;
            c->lstart = c->pos + 1;
        }
        c->pos++;
    }
    if (c->pos >= len)
        return false;
    size_t b = c->pos;
    while (c->pos < len && !is_space(t[c->pos]))
        c->pos++;
    *s = t + b;
    *n = c->pos - b;
    return true;
}

static SrcLoc cur_loc(const Cur *c, const char *s)
{
    return (SrcLoc){c->r->t->file.path, c->line, (uint32_t)((size_t)(s - c->r->text) - c->lstart + 1)};
}

/* Point c->line's text into r->ls/ll so fail_at can quote it. */
static void cur_quote(Cur *c)
{
    Raw *r = c->r;
    r->ls = r->text + c->lstart;
    const char *nl = memchr(r->ls, '\n', r->len - c->lstart);
    r->ll = nl ? (size_t)(nl - r->ls) : r->len - c->lstart;
    if (r->ll && r->ls[r->ll - 1] == '\r')
        r->ll--;
}

static int ascii_number(Cur *c, const char *s, size_t n, size_t var, size_t point, double *v, bool *absent)
{
    int st = op_parse_number(s, n, v);
    *absent = false;
    if (st == OPNUM_NONFINITE) {
        *absent = true;
        return ERR_OK;
    }
    if (st != OPNUM_OK) {
        cur_quote(c);
        return fail_at(c->r, cur_loc(c, s), true, (uint32_t)n, "variable %zu of point %zu: '%.*s' is %s", var, point,
                       (int)n, s, st == OPNUM_RANGE ? "out of range for a double" : "not a number");
    }
    return ERR_OK;
}

static int read_ascii(Raw *r, const Plot *pl, Slots *sl, size_t *end)
{
    Cur c = {r, pl->data_off, pl->data_line + 1, pl->data_off};
    for (size_t p = 0; p < pl->npts; p++) {
        const char *s;
        size_t n;
        if (!cur_token(&c, &s, &n))
            return fail_at(r, (SrcLoc){r->t->file.path, c.line, 0}, false, 0,
                           "the data ends before point %zu; No. Points says %zu (truncated?)", p, pl->npts);
        size_t idx = 0;
        bool ok = true;
        for (size_t k = 0; k < n && ok; k++)
            if (s[k] < '0' || s[k] > '9' || idx > SIZE_MAX / 10 - 1)
                ok = false;
            else
                idx = idx * 10 + (size_t)(s[k] - '0');
        if (!ok || idx != p) {
            cur_quote(&c);
            return fail_at(r, cur_loc(&c, s), true, (uint32_t)n, "bad point index '%.*s': expected %zu", (int)n, s, p);
        }
        for (size_t i = 0; i < pl->nvars; i++) {
            if (!cur_token(&c, &s, &n))
                return fail_at(r, (SrcLoc){r->t->file.path, c.line, 0}, false, 0,
                               "the data ends at variable %zu of point %zu; the plot has %zu variables (truncated?)",
                               i, p, pl->nvars);
            const char *comma = memchr(s, ',', n);
            if (pl->complex != (comma != NULL)) {
                cur_quote(&c);
                return fail_at(r, cur_loc(&c, s), true, (uint32_t)n,
                               pl->complex ? "variable %zu: '%.*s' is not a complex value 're,im' (Flags: complex)"
                                           : "variable %zu: '%.*s' is a complex value in a real plot",
                               i, (int)n, s);
            }
            double v, im;
            bool absent, absent_im;
            size_t rn = comma ? (size_t)(comma - s) : n;
            int rc = ascii_number(&c, s, rn, i, p, &v, &absent);
            if (rc == ERR_OK && comma)
                rc = ascii_number(&c, comma + 1, n - rn - 1, i, p, &im, &absent_im);
            if (rc != ERR_OK)
                return rc;
            if (p == 0 && sl->vars[i].kind != VAR_SKIP)
                store(r, pl, sl, i, v, absent);
        }
    }
    /* nothing but another plot may follow */
    size_t save = c.pos;
    const char *s;
    size_t n;
    if (cur_token(&c, &s, &n) && !(n >= 6 && memcmp(s, "Title:", 6) == 0 && s == r->text + c.lstart)) {
        cur_quote(&c);
        return fail_at(r, cur_loc(&c, s), true, (uint32_t)n,
                       "more data than No. Points (%zu) and No. Variables (%zu) say: '%.*s'", pl->npts, pl->nvars,
                       (int)n, s);
    }
    *end = save;
    return ERR_OK;
}

static int read_binary(Raw *r, const Plot *pl, Slots *sl, size_t *end)
{
    size_t size;
    int rc = binary_size(r, pl, &size);
    if (rc != ERR_OK)
        return rc;
    size_t per = pl->complex ? 16 : 8;
    const char *base = r->text + pl->data_off;
    size_t dropped = pl->data_off;
    for (size_t i = 0; i < pl->nvars; i++) {
        src_drop_behind(&r->t->file, &dropped, pl->data_off + i * per);
        if (sl->vars[i].kind == VAR_SKIP)
            continue;
        double v;
        memcpy(&v, base + i * per, sizeof v); /* the real part comes first */
        store(r, pl, sl, i, v, !isfinite(v));
    }
    size_t e = pl->data_off + size;
    if (e < r->len && !(r->len - e >= 6 && memcmp(r->text + e, "Title:", 6) == 0))
        return fail_at(r, (SrcLoc){r->t->file.path, pl->data_line, 1}, false, 0,
                       "%zu bytes follow the binary data at byte %zu: No. Points (%zu) or No. Variables (%zu) does "
                       "not match the data",
                       r->len - e, e, pl->npts, pl->nvars);
    *end = e;
    return ERR_OK;
}

/* Read the chosen plot: its variables, then its one point. */
static int read_plot(Raw *r, Plot *pl)
{
    OpTable *t = r->t;
    if (pl->npts == 0)
        return fail_at(r, (SrcLoc){t->file.path, pl->npts_line, 1}, false, 0,
                       "plot '%.*s' holds no point (No. Points: 0): the analysis failed or did not run",
                       (int)pl->nname, pl->name ? pl->name : "");
    /* every variable line takes at least 6 bytes ("\t0\tv\tx\n" is 8): a larger count is not this file's */
    if (pl->nvars > (r->len - pl->vars_off) / 6)
        return fail_at(r, (SrcLoc){t->file.path, pl->vars_line - 1, 1}, false, 0,
                       "No. Variables says %zu: more variable lines than the rest of the file can hold", pl->nvars);
    Slots sl = {NULL, NULL, SIZE_MAX, ERR_OK};
    NodeName *nodes = NULL;
    size_t nnodes = 0, nodecap = 0;
    int rc = ERR_NOMEM;
    if (pl->nvars && !(sl.vars = malloc(pl->nvars * sizeof *sl.vars)))
        goto done;
    r->pos = pl->vars_off;
    r->line = pl->vars_line - 1;
    DevCache dc = {NULL, 0, 0};
    size_t dropped = 0;
    for (size_t i = 0; i < pl->nvars; i++) {
        src_drop_behind(&t->file, &dropped, r->pos);
        size_t save = r->pos;
        uint32_t sline = r->line;
        if (!next_line(r) || data_marker(r)) { /* fewer lines than No. Variables: find_data says so */
            r->pos = save;
            r->line = sline;
            rc = find_data(r, pl, i);
            if (rc == ERR_OK)
                rc = ERR_INPUT; /* find_data reports every count other than nvars */
            goto done;
        }
        if ((rc = parse_var(r, pl, i, &sl.vars[i], &nodes, &nnodes, &nodecap, &dc)) != ERR_OK)
            goto done;
    }
    if ((rc = find_data(r, pl, pl->nvars)) != ERR_OK)
        goto done;
    size_t end;
    sl.nodes = nodes;
    rc = pl->binary ? read_binary(r, pl, &sl, &end) : read_ascii(r, pl, &sl, &end);
    if (rc == ERR_OK)
        rc = sl.rc;
    if (rc != ERR_OK)
        goto done;
    if (pl->npts != 1) {
        rc = fail_at(r, (SrcLoc){t->file.path, pl->npts_line, 1}, false, 0,
                     "plot '%.*s' has %zu points: biaslint reads one operating point; run an op analysis and "
                     "write its plot (ngspice: `op`, then `write file.raw`, or `.op` with `ngspice -b -r file.raw`)",
                     (int)pl->nname, pl->name ? pl->name : "", pl->npts);
        goto done;
    }
    if (r->nonfinite && sl.first_bad != SIZE_MAX)
        diag_add(r->d, DIAG_WARNING, (SrcLoc){t->file.path, (uint32_t)(pl->vars_line + sl.first_bad), 1},
                 "%zu value%s NaN or infinite, read as absent (the first: variable %zu, declared here)", r->nonfinite,
                 r->nonfinite == 1 ? " is" : "s are", sl.first_bad);
    if (pl->complex)
        diag_add(r->d, DIAG_NOTE, (SrcLoc){t->file.path, pl->line, 1},
                 "plot '%.*s' is complex: device quantities are read from the real parts; its node voltages are "
                 "small-signal values, not the bias, and are skipped",
                 (int)pl->nname, pl->name ? pl->name : "");
    rc = r->nerr ? ERR_INPUT : ERR_OK;
done:
    if (rc == ERR_NOMEM)
        diag_nomem(r->d);
    else if (rc == ERR_LIMIT)
        diag_add(r->d, DIAG_ERROR, (SrcLoc){t->file.path, pl->vars_line, 1}, "more than %u node voltages in one plot",
                 (unsigned)UINT32_MAX);
    free(sl.vars);
    free(nodes);
    return rc;
}

static int raw_parse(OpTable *t, DiagList *d)
{
    Raw r;
    memset(&r, 0, sizeof r);
    r.t = t;
    r.d = d;
    r.text = t->file.text;
    r.len = t->file.len;
    Plot *plots = NULL;
    size_t nplots = 0, cap = 0;
    int rc;
    for (;;) {
        /* blank lines between plots */
        while (r.pos < r.len && (r.text[r.pos] == '\n' || r.text[r.pos] == '\r')) {
            if (r.text[r.pos] == '\n')
                r.line++;
            r.pos++;
        }
        if (r.pos >= r.len)
            break;
        Plot pl;
        if ((rc = parse_header(&r, &pl)) != ERR_OK)
            goto done;
        if (is_plotname(&pl, "operating point")) {
            rc = read_plot(&r, &pl);
            goto done;
        }
        if ((rc = find_data(&r, &pl, 0)) != ERR_OK || (rc = skip_data(&r, &pl)) != ERR_OK)
            goto done;
        if (BUF_PUSH(plots, nplots, cap, pl) != ERR_OK) {
            rc = diag_nomem(d);
            goto done;
        }
    }
    if (nplots == 1) {
        rc = read_plot(&r, &plots[0]);
    } else if (nplots == 0) {
        rc = diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, 0, 0}, "the raw file holds no plot");
    } else {
        Buf names = BUF_INIT;
        rc = ERR_OK;
        for (size_t i = 0; i < nplots && rc == ERR_OK; i++)
            rc = buf_printf(&names, "%s'%.*s' (line %u)", i ? ", " : "", (int)plots[i].nname,
                            plots[i].name ? plots[i].name : "", plots[i].line);
        if (rc != ERR_OK)
            rc = diag_nomem(d);
        else
            rc = diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, 1, 1},
                          "the raw file holds %zu plots and none is an operating point: %s; write the plot of an op "
                          "analysis",
                          nplots, names.data);
        buf_free(&names);
    }
done:
    free(plots);
    return rc;
}

/* 95: "Title:" then raw-file header lines; 45: "Title:" alone; else 0. */
static int raw_sniff(const char *buf, size_t len)
{
    if (len < 6 || memcmp(buf, "Title:", 6) != 0)
        return 0;
    size_t pos = 0;
    for (int k = 0; k < 12 && pos < len; k++) {
        const char *p = buf + pos;
        const char *nl = memchr(p, '\n', len - pos);
        size_t n = nl ? (size_t)(nl - p) : len - pos;
        pos += n + (nl != NULL);
        if (starts(p, n, "Plotname:") || starts(p, n, "No. Variables:") || starts(p, n, "Flags:") ||
            starts(p, n, "Binary:") || starts(p, n, "Values:"))
            return 95;
    }
    return 45;
}

const OpReader op_raw_reader = {"raw", raw_sniff, raw_parse};
