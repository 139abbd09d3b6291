/* op_csv: a CSV device table, one row per device, read with libcsv into the OpTable. Used through
 * op_csv_reader by op_read. The format:
 *
 *   - Lines starting with '#' (before the header or between rows) are comments; a UTF-8 BOM is skipped.
 *   - The first other line is the header. Names are matched case-insensitively, blanks around them
 *     ignored. One column names the device: "name", "device" or "instance". The quantities take
 *     ngspice's parameter names: id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb w l m nf,
 *     and these second names: ids (id), vt (vth), gmb (gmbs), width (w), length (l), mult (m), and
 *     vsb, whose values are negated into vbs. A "model" column gives the model name. Any other
 *     column is kept as an extra column (OpTable.extra_name/extra_vals) for the reports; a column
 *     with an empty name is ignored.
 *   - Columns come in any order. Values are plain decimal numbers in SI units (A, S, V, F, m), kept
 *     with the sign written (join normalizes signs). An empty field is absent. A number with an SI
 *     suffix, "nan" or "inf" in a quantity column is an error; text in an extra column is kept as
 *     absent with a warning.
 *   - Device names are canonical ("x1.m3") or ngspice's ("m.x1.m3", "@m.x1.m3"); each device once.
 *   - Comma-separated, RFC 4180 quoting, LF or CRLF line ends.
 *   - Node voltages instead of devices (for check --table): a header with a column "node" (or
 *     "net") and a column "v" (or "voltage") and no device column; one row per node, the name
 *     canonical or wrapped as ngspice writes it ("v(x1.tail)"), the voltage in volts. Other columns
 *     are ignored.
 * Errors (with line and column): a field that is not a number, a row whose field count differs
 * from the header's, a header without a name column or with a column twice, a device or node listed
 * twice, a node row without a voltage. */
#include "opdump.h"

#include <csv.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"

enum { COL_IGNORE, COL_NAME, COL_MODEL, COL_QTY, COL_EXTRA, COL_NODE, COL_VOLT };

typedef struct {
    uint8_t role;
    uint8_t q;       /* COL_QTY: the quantity */
    bool negate;     /* COL_QTY: vsb into vbs */
    bool warned;     /* COL_EXTRA: text seen and reported */
    uint32_t extra;  /* COL_EXTRA: index among the extra columns */
    const char *head; /* the header text as written (arena) */
} Col;

typedef struct {
    OpTable *t;
    DiagList *d;
    const char *text;
    size_t len;
    uint32_t line;      /* line being fed to libcsv */
    size_t loff;        /* its first byte */
    bool row_open;      /* a row has started and not ended */
    uint32_t row_line;  /* where the current row started */
    size_t row_off;
    bool have_header;
    uint32_t head_line;
    Col *cols;
    size_t ncols, colcap;
    size_t qty_col[OPQ_COUNT]; /* 1-based column of each quantity, 0 when none */
    size_t name_col, model_col;
    size_t extra_name_cap;
    bool has_name;
    bool nodes;         /* a node-voltage table (node and v columns, no device column) */
    size_t node_col, volt_col; /* nodes: the node and voltage columns, 0-based */
    StrMap seen;        /* nodes: interned node name -> the line it was first given on */
    size_t field;       /* index of the next field in the row */
    bool field0_empty;  /* the row's first field was empty (a row of blanks has only that) */
    Buf name;           /* this row: canonical name (reused), empty when none */
    size_t name_field;
    const char *model;
    double *val;        /* per column: the row's value */
    bool *set;
    bool row_bad;
    size_t nerr;
    bool oom;
} Csv;

/* Offset of field k of the row that starts at row_off (quotes respected); only for messages, so once
 * diagnostics are being dropped (the list is full) it does not scan: a wide row with an error in
 * every field would otherwise take time quadratic in its length. */
static size_t field_off(const Csv *c, size_t k)
{
    if (c->d->dropped)
        return c->row_off;
    size_t off = c->row_off, f = 0;
    bool q = false;
    while (off < c->len && f < k) {
        char ch = c->text[off];
        if (q) {
            if (ch == '"') {
                if (off + 1 < c->len && c->text[off + 1] == '"')
                    off++;
                else
                    q = false;
            }
        } else if (ch == '"') {
            q = true;
        } else if (ch == ',') {
            f++;
        } else if (ch == '\n') {
            break; /* fewer fields than k: the end of the row */
        }
        off++;
    }
    while (off < c->len && (c->text[off] == ' ' || c->text[off] == '\t'))
        off++;
    return off;
}

/* Line and column of byte off, counting from the row's first line (rows may hold quoted newlines). */
static SrcLoc loc_of(const Csv *c, size_t off)
{
    uint32_t line = c->row_line;
    size_t ls = c->row_off;
    for (size_t i = c->row_off; i < off && i < c->len; i++)
        if (c->text[i] == '\n') {
            line++;
            ls = i + 1;
        }
    return (SrcLoc){c->t->file.path, line, (uint32_t)(off - ls + 1)};
}

static void PRINTF_LIKE(5, 6) report(Csv *c, DiagSeverity sev, size_t off, uint32_t span, const char *fmt, ...)
{
    if (sev == DIAG_ERROR) {
        c->nerr++;
        c->row_bad = true;
    }
    if (c->d->dropped) { /* past the list's limit: counted only, without the scans for line and column */
        diag_add(c->d, sev, (SrcLoc){c->t->file.path, c->row_line, 0}, "%s", "");
        return;
    }
    Buf b = BUF_INIT;
    va_list ap;
    va_start(ap, fmt);
    int rc = buf_vprintf(&b, fmt, ap);
    va_end(ap);
    if (rc != ERR_OK) {
        c->oom = true;
        return;
    }
    SrcLoc loc = loc_of(c, off);
    size_t ls;
    size_t ll = src_line_at(&c->t->file, off, &ls);
    if (diag_add_excerpt(c->d, sev, loc, c->text + ls, ll, span, "%s", b.data) == ERR_NOMEM)
        c->oom = true;
    buf_free(&b);
}

static void trim(const char **p, size_t *n)
{
    while (*n && (**p == ' ' || **p == '\t')) {
        (*p)++;
        (*n)--;
    }
    while (*n && ((*p)[*n - 1] == ' ' || (*p)[*n - 1] == '\t'))
        (*n)--;
}

static bool fold_eq(const char *a, size_t n, const char *lower)
{
    for (size_t i = 0; i < n; i++) {
        char ch = a[i] >= 'A' && a[i] <= 'Z' ? (char)(a[i] + 32) : a[i];
        if (ch != lower[i] || !lower[i])
            return false;
    }
    return lower[n] == '\0';
}

static bool name_header(const char *s, size_t n)
{
    return fold_eq(s, n, "name") || fold_eq(s, n, "device") || fold_eq(s, n, "instance");
}

static bool node_header(const char *s, size_t n)
{
    return fold_eq(s, n, "node") || fold_eq(s, n, "net");
}

static bool volt_header(const char *s, size_t n)
{
    return fold_eq(s, n, "v") || fold_eq(s, n, "voltage");
}

/* A header without a device column but with node and voltage columns makes a node-voltage table:
 * those two columns take their roles, every other column is ignored. Returns whether it does. */
static bool node_table(Csv *c)
{
    size_t node = SIZE_MAX, volt = SIZE_MAX;
    for (size_t k = 0; k < c->ncols; k++) {
        const char *h = c->cols[k].head;
        if (c->cols[k].role != COL_EXTRA)
            continue;
        if (node == SIZE_MAX && node_header(h, strlen(h)))
            node = k;
        else if (volt == SIZE_MAX && volt_header(h, strlen(h)))
            volt = k;
    }
    if (node == SIZE_MAX || volt == SIZE_MAX)
        return false;
    for (size_t k = 0; k < c->ncols; k++)
        c->cols[k].role = k == node ? COL_NODE : k == volt ? COL_VOLT : COL_IGNORE;
    c->nodes = true;
    c->node_col = node;
    c->volt_col = volt;
    c->t->nextra = 0;
    return true;
}

static void header_field(Csv *c, const char *s, size_t n)
{
    OpTable *t = c->t;
    size_t k = c->field;
    trim(&s, &n);
    Col col = {COL_IGNORE, 0, false, false, 0, NULL};
    if (!(col.head = arena_strndup(&t->arena, s, n))) {
        c->oom = true;
        return;
    }
    int q;
    if (n == 0) {
        col.role = COL_IGNORE;
    } else if (name_header(s, n)) {
        col.role = COL_NAME;
    } else if (fold_eq(s, n, "model")) {
        col.role = COL_MODEL;
    } else if (fold_eq(s, n, "vsb")) {
        col.role = COL_QTY;
        col.q = OPQ_VBS;
        col.negate = true;
    } else if ((q = op_qty_lookup(s, n)) >= 0) {
        col.role = COL_QTY;
        col.q = (uint8_t)q;
    } else {
        col.role = COL_EXTRA;
        col.extra = (uint32_t)t->nextra;
        if (BUF_PUSH(t->extra_name, t->nextra, c->extra_name_cap, col.head) != ERR_OK) {
            c->oom = true;
            return;
        }
    }
    /* each quantity, the name and the model once: the first column of each, 1-based, 0 for none */
    size_t *first = col.role == COL_QTY     ? &c->qty_col[col.q]
                    : col.role == COL_NAME  ? &c->name_col
                    : col.role == COL_MODEL ? &c->model_col
                                            : NULL;
    if (first && *first)
        report(c, DIAG_ERROR, field_off(c, k), (uint32_t)n,
               "column '%s' repeats column %zu ('%s'): each quantity, and the name, once", col.head, *first,
               c->cols[*first - 1].head);
    else if (first)
        *first = k + 1;
    if (col.role == COL_NAME)
        c->has_name = true;
    if (BUF_PUSH(c->cols, c->ncols, c->colcap, col) != ERR_OK)
        c->oom = true;
}

static void data_field(Csv *c, const char *s, size_t n)
{
    OpTable *t = c->t;
    size_t k = c->field;
    if (k == 0)
        c->field0_empty = !s || n == 0;
    if (k >= c->ncols || !s)
        return; /* too many fields: reported at the row end; NULL: empty, absent */
    Col *col = &c->cols[k];
    trim(&s, &n);
    switch (col->role) {
    case COL_IGNORE:
        return;
    case COL_NAME: {
        if (n == 0)
            return; /* reported at the row end */
        const char *cn;
        size_t cl;
        op_canonical(s, n, &cn, &cl);
        if (cl == 0) {
            report(c, DIAG_ERROR, field_off(c, k), (uint32_t)n, "'%.*s' is not a device name", (int)n, s);
            return;
        }
        buf_clear(&c->name);
        if (buf_append(&c->name, cn, cl) != ERR_OK)
            c->oom = true;
        c->name_field = k;
        return;
    }
    case COL_MODEL:
        if (n && !(c->model = str_intern(t->names, s, n)))
            c->oom = true;
        return;
    case COL_NODE:
        if (n >= 3 && (s[0] == 'v' || s[0] == 'V') && s[1] == '(' && s[n - 1] == ')') {
            s += 2; /* v(x1.tail), as ngspice names a node's voltage */
            n -= 3;
            trim(&s, &n);
        }
        buf_clear(&c->name);
        if (n && buf_append(&c->name, s, n) != ERR_OK)
            c->oom = true;
        c->name_field = k;
        return;
    default:
        break;
    }
    if (n == 0)
        return;
    double v;
    int st = op_parse_number(s, n, &v);
    if (st == OPNUM_OK) {
        c->val[k] = col->negate ? -v : v;
        c->set[k] = true;
        return;
    }
    if (col->role == COL_EXTRA) {
        if (!col->warned) {
            col->warned = true;
            report(c, DIAG_WARNING, field_off(c, k), (uint32_t)n,
                   "extra column '%s' holds text ('%.*s'); its text values are kept as absent", col->head, (int)n, s);
        }
        return;
    }
    report(c, DIAG_ERROR, field_off(c, k), (uint32_t)n, "column '%s': '%.*s' is %s", col->head, (int)n, s,
           st == OPNUM_NONFINITE ? "not a finite number (NaN and infinity are not values)"
           : st == OPNUM_RANGE   ? "out of range for a double"
                                 : "not a number (plain decimal in SI units, no suffix)");
}

static void on_field(void *field, size_t len, void *data)
{
    Csv *c = data;
    if (c->oom)
        return;
    if (!c->have_header)
        header_field(c, field ? field : "", field ? len : 0);
    else
        data_field(c, field, len);
    c->field++;
}

static void end_header(Csv *c)
{
    OpTable *t = c->t;
    c->have_header = true;
    c->head_line = c->row_line;
    if (!c->has_name && !node_table(c))
        report(c, DIAG_ERROR, c->row_off, 0,
               "the header names no device column: one column must be called name, device or instance (or, "
               "for node voltages, two columns node and v)");
    bool present[OPQ_COUNT] = {false};
    for (size_t k = 0; k < c->ncols; k++)
        if (c->cols[k].role == COL_QTY)
            present[c->cols[k].q] = true;
    op_layout(t, present); /* a record keeps the header's quantities only */
    if (c->ncols) {
        c->val = malloc(c->ncols * sizeof *c->val);
        c->set = calloc(c->ncols, sizeof *c->set);
        if (!c->val || !c->set)
            c->oom = true;
    }
    if (t->nextra && !c->oom) { /* one note for all of them: a header may have thousands */
        Buf b = BUF_INIT;
        int rc = ERR_OK;
        for (size_t j = 0; j < t->nextra && j < 5 && rc == ERR_OK; j++)
            rc = buf_printf(&b, "%s'%s'", j ? ", " : "", t->extra_name[j]);
        if (rc == ERR_OK && t->nextra > 5)
            rc = buf_printf(&b, " and %zu more", t->nextra - 5);
        if (rc != ERR_OK || diag_add(c->d, DIAG_NOTE, (SrcLoc){t->file.path, c->row_line, 1},
                                     "%zu column%s not quantities biaslint reads, kept as extra columns for the "
                                     "reports: %s",
                                     t->nextra, t->nextra == 1 ? " is" : "s are", b.data) == ERR_NOMEM)
            c->oom = true;
        buf_free(&b);
    }
}

/* The row of a node-voltage table: its node and voltage, once per node. */
static void node_row(Csv *c)
{
    OpTable *t = c->t;
    if (!c->name.len || !c->set[c->volt_col]) {
        if (!c->row_bad)
            report(c, DIAG_ERROR, field_off(c, c->name.len ? c->volt_col : c->node_col), 0,
                   c->name.len ? "this row has no voltage" : "this row has no node name");
        return;
    }
    if (c->row_bad)
        return;
    if (memchr(c->name.data, '\0', c->name.len)) {
        report(c, DIAG_ERROR, field_off(c, c->name_field), (uint32_t)c->name.len,
               "a NUL byte in this node name: the file is damaged");
        return;
    }
    const char *nm = str_intern(t->names, c->name.data, c->name.len);
    uint32_t first;
    if (!nm) {
        c->oom = true;
    } else if (strmap_get(&c->seen, nm, &first)) {
        report(c, DIAG_ERROR, field_off(c, c->name_field), (uint32_t)c->name.len,
               "node '%s' is listed twice (first on line %u)", nm, first);
    } else if (strmap_put(&c->seen, nm, c->row_line) != ERR_OK ||
               op_add_node(t, nm, strlen(nm), c->val[c->volt_col]) != ERR_OK) {
        c->oom = true;
    }
}

static void end_row(Csv *c)
{
    OpTable *t = c->t;
    if (c->field == 1 && c->field0_empty && c->ncols > 1)
        goto reset; /* a line of blanks */
    if (c->field != c->ncols) {
        size_t off = c->field > c->ncols ? field_off(c, c->ncols) : field_off(c, c->field);
        if (c->field < c->ncols) { /* point at the end of the row */
            off = c->row_off;
            while (off < c->len && c->text[off] != '\n' && c->text[off] != '\r')
                off++;
        }
        report(c, DIAG_ERROR, off, 0, "this row has %zu field%s, the header (line %u) has %zu", c->field,
               c->field == 1 ? "" : "s", c->head_line, c->ncols);
        goto reset;
    }
    if (c->nodes) {
        node_row(c);
        goto reset;
    }
    if (!c->name.len) {
        size_t k = 0;
        while (k < c->ncols && c->cols[k].role != COL_NAME)
            k++;
        if (!c->row_bad)
            report(c, DIAG_ERROR, field_off(c, k), 0, "this row has no device name");
        goto reset;
    }
    /* a row with a bad value still names its device, so that a second row for it is reported */
    bool bad = c->row_bad;
    if (t->nextra && t->n >= UINT32_MAX / t->nextra) {
        report(c, DIAG_ERROR, c->row_off, 0, "more than %u extra values in one table", (unsigned)UINT32_MAX);
        goto reset;
    }
    if (memchr(c->name.data, '\0', c->name.len)) { /* a name biaslint could not print nor match */
        report(c, DIAG_ERROR, field_off(c, c->name_field), (uint32_t)c->name.len,
               "a NUL byte in this device name: the file is damaged");
        goto reset;
    }
    size_t before = t->n;
    OpRecord *r = op_add(t, c->name.data, c->name.len, (SrcLoc){t->file.path, c->row_line, 1}, true, c->d);
    if (!r) {
        c->oom = true;
        goto reset;
    }
    if ((size_t)(r - t->recs) < before) {
        report(c, DIAG_ERROR, field_off(c, c->name_field), (uint32_t)c->name.len,
               "device '%s' is listed twice (first on line %u)", r->name, r->loc.line);
        goto reset;
    }
    if (bad)
        goto reset; /* the read fails; its values are not needed */
    r->model = c->model;
    r->extra = (uint32_t)((t->n - 1) * t->nextra);
    if (t->nextra) {
        size_t need = t->n * t->nextra;
        if (buf_grow_array((void **)&t->extra_vals, &t->extra_cap, need, sizeof *t->extra_vals) != ERR_OK) {
            c->oom = true;
            goto reset;
        }
        for (size_t j = 0; j < t->nextra; j++)
            t->extra_vals[r->extra + j] = NAN;
    }
    for (size_t k = 0; k < c->ncols; k++) {
        if (!c->set[k])
            continue;
        const Col *col = &c->cols[k];
        if (col->role == COL_QTY)
            *op_place(t, r, col->q) = c->val[k]; /* op_layout gave each column a place */
        else if (col->role == COL_EXTRA)
            t->extra_vals[r->extra + col->extra] = c->val[k];
    }
reset:
    if (c->set)
        memset(c->set, 0, c->ncols * sizeof *c->set);
    buf_clear(&c->name);
    c->model = NULL;
    c->row_bad = false;
}

static void on_row(int ch, void *data)
{
    (void)ch;
    Csv *c = data;
    if (!c->oom) {
        if (!c->have_header)
            end_header(c);
        else
            end_row(c);
    }
    c->field = 0;
    c->row_open = false;
}

static bool blank_line(const char *p, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (p[i] != ' ' && p[i] != '\t' && p[i] != '\r' && p[i] != '\n')
            return false;
    return true;
}

/* A whole row on one line that libcsv would read as the plain split it is: it ends in LF (or CRLF)
 * and holds no quote and no other CR (which libcsv takes for a row end). Such rows, nearly all of a
 * large table, are split here; libcsv's byte-by-byte state machine, and the copy of every field it
 * makes, cost more than the rest of the reader. */
static bool plain_row(const char *lp, size_t n)
{
    if (n < 1 || lp[n - 1] != '\n' || memchr(lp, '"', n))
        return false;
    const char *cr = memchr(lp, '\r', n);
    return !cr || cr == lp + n - 2;
}

/* The fields of a plain row, as libcsv hands them over (CSV_EMPTY_IS_NULL): blanks and tabs trimmed,
 * an empty field as NULL; then the row end. */
static void split_row(Csv *c, const char *lp, size_t n)
{
    size_t m = n - 1 - (n >= 2 && lp[n - 2] == '\r');
    const char *p = lp, *end = lp + m;
    for (;;) {
        const char *comma = memchr(p, ',', (size_t)(end - p));
        const char *fe = comma ? comma : end, *fs = p;
        while (fs < fe && (*fs == ' ' || *fs == '\t'))
            fs++;
        while (fe > fs && (fe[-1] == ' ' || fe[-1] == '\t'))
            fe--;
        on_field(fe > fs ? (void *)(uintptr_t)fs : NULL, (size_t)(fe - fs), c);
        if (!comma)
            break;
        p = comma + 1;
    }
    on_row(lp[m], c);
}

static int csv_parse_table(OpTable *t, DiagList *d)
{
    Csv c;
    memset(&c, 0, sizeof c);
    c.t = t;
    c.d = d;
    c.text = t->file.text;
    c.len = t->file.len;
    struct csv_parser p;
    if (csv_init(&p, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL | CSV_EMPTY_IS_NULL) != 0)
        return diag_nomem(d);
    int rc = ERR_OK;
    bool stopped = false; /* a syntax error or a header without name column: the rest is not read */
    size_t pos = 0;
    if (c.len >= 3 && memcmp(c.text, "\xEF\xBB\xBF", 3) == 0)
        pos = 3;
    c.line = 0;
    size_t dropped = 0;
    while (pos < c.len && !c.oom) {
        src_drop_behind(&t->file, &dropped, pos);
        const char *lp = c.text + pos;
        const char *nl = memchr(lp, '\n', c.len - pos);
        size_t n = nl ? (size_t)(nl - lp) + 1 : c.len - pos;
        c.line++;
        c.loff = pos;
        pos += n;
        if (!c.row_open) {
            if (lp[0] == '#' || blank_line(lp, n))
                continue; /* comment or blank line between rows */
            c.row_open = true;
            c.row_line = c.line;
            c.row_off = c.loff;
            if (plain_row(lp, n)) {
                split_row(&c, lp, n);
                if (c.have_header && !c.has_name && !c.nodes) {
                    stopped = true;
                    break;
                }
                continue;
            }
        }
        size_t done = csv_parse(&p, lp, n, on_field, on_row, &c);
        if (c.have_header && !c.has_name && !c.nodes) {
            stopped = true; /* every row would repeat the header's error */
            break;
        }
        if (done != n) {
            int e = csv_error(&p);
            if (e == CSV_ENOMEM || e == CSV_ETOOBIG) {
                c.oom = true;
                break;
            }
            SrcLoc at = {t->file.path, c.line, (uint32_t)(done + 1)};
            size_t ll = n;
            while (ll && (lp[ll - 1] == '\n' || lp[ll - 1] == '\r'))
                ll--;
            c.nerr++;
            diag_add_excerpt(d, DIAG_ERROR, at, lp, ll, 1, "CSV syntax: %s (a quote inside an unquoted field, or "
                             "text after a closing quote)", csv_strerror(e));
            stopped = true;
            break;
        }
    }
    if (!stopped && !c.oom && csv_fini(&p, on_field, on_row, &c) != 0) {
        c.nerr++;
        diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, c.row_line, 1},
                 "CSV syntax: a quoted field that starts in the row on this line is never closed");
    }
    if (!c.oom && !c.have_header) {
        c.nerr++;
        diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, 0, 0}, "the CSV file has no header line (only comments)");
    } else if (!c.oom && !c.nerr && t->n == 0 && t->nnodes == 0) {
        c.nerr++;
        diag_add(d, DIAG_ERROR, (SrcLoc){t->file.path, c.head_line, 1}, "the CSV table has a header but no %s rows",
                 c.nodes ? "node" : "device");
    }
    rc = c.oom ? diag_nomem(d) : c.nerr ? ERR_INPUT : ERR_OK;
    csv_free(&p);
    free(c.cols);
    free(c.val);
    free(c.set);
    buf_free(&c.name);
    strmap_free(&c.seen);
    return rc;
}

/* 90: the first line that is not a comment has commas and a name column; 40: commas only (the
 * reader then explains what the header lacks); 0: anything else. */
static int csv_sniff(const char *buf, size_t len)
{
    size_t pos = len >= 3 && memcmp(buf, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
    while (pos < len) {
        const char *p = buf + pos;
        const char *nl = memchr(p, '\n', len - pos);
        size_t n = nl ? (size_t)(nl - p) : len - pos;
        pos += n + (nl != NULL);
        if (n && p[n - 1] == '\r')
            n--;
        if (blank_line(p, n) || p[0] == '#')
            continue;
        if (!memchr(p, ',', n))
            return 0;
        for (size_t i = 0; i < n; i++)
            if ((unsigned char)p[i] < 0x20 && p[i] != '\t')
                return 0; /* control bytes: not a text header */
        for (size_t i = 0; i <= n;) {
            size_t b = i;
            while (i < n && p[i] != ',')
                i++;
            const char *f = p + b;
            size_t fn = i - b;
            trim(&f, &fn);
            if (fn >= 2 && f[0] == '"' && f[fn - 1] == '"') {
                f++;
                fn -= 2;
            }
            if (name_header(f, fn) || node_header(f, fn))
                return 90;
            i++;
        }
        return 40;
    }
    return 0;
}

const OpReader op_csv_reader = {"csv", csv_sniff, csv_parse_table};
