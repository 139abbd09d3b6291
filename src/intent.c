/* intent: the marked comments of the netlist into inline statements. For every MOSFET card (each
 * scanned once, however many instances it has) the comment lines right above it and the comments
 * on its own physical lines are searched for `sized for:` and `waive:`; what follows is parsed by
 * rule_parse_inline. Then every file is scanned once more for marked comments that no card took,
 * which are reported: an intent that applies to nothing must not pass silently. Linear in the
 * bytes of the files plus the cards (the taken comments are sorted once for the second scan). */
#include "intent.h"

#include <ctype.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"

#define ANN_PREFIX "*~" /* biaslint's own annotation lines (annotate.h); never intents */

typedef struct {
    uint32_t file;   /* canonical file index (the first index of the same file) */
    size_t off;      /* offset of the marker */
} Taken;

typedef struct {
    const Design *ds;
    IntentSet *out;
    DiagList *d;
    uint32_t *canon; /* per file index: the first index that holds the same file */
    unsigned char *colon; /* per file index: the file has a ':' somewhere (every marker ends in one) */
    Taken *taken;
    size_t ntaken, taken_cap;
    int bad;
    int oom;
} Scan;

static int blank(char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v';
}

/* The physical line holding text[off]: [*ls, *le), le before the line ending. */
static void line_bounds(const char *text, size_t len, size_t off, size_t *ls, size_t *le)
{
    size_t s = off;
    while (s > 0 && text[s - 1] != '\n')
        s--;
    size_t e = off;
    while (e < len && text[e] != '\n')
        e++;
    if (e > s && text[e - 1] == '\r')
        e--;
    *ls = s;
    *le = e;
}

/* Offset of the first non-blank byte of [ls, le), le when none. */
static size_t first_text(const char *t, size_t ls, size_t le)
{
    while (ls < le && blank(t[ls]))
        ls++;
    return ls;
}

/* A whole-line comment, as lex.c reads them: `*`, `$`, `;` or `//` first. */
static int is_comment_line(const char *t, size_t ls, size_t le)
{
    size_t i = first_text(t, ls, le);
    if (i >= le)
        return 0;
    return t[i] == '*' || t[i] == '$' || t[i] == ';' || (t[i] == '/' && i + 1 < le && t[i + 1] == '/');
}

/* The start of an inline comment on a card line, le when none: `;` or `//` anywhere, `$` at the
 * start of the text or after a blank (lex.h). */
static size_t inline_comment(const char *t, size_t ls, size_t le)
{
    for (size_t i = ls; i < le; i++) {
        if (t[i] == ';' || (t[i] == '/' && i + 1 < le && t[i + 1] == '/'))
            return i;
        if (t[i] == '$' && (i == ls || blank(t[i - 1])))
            return i;
    }
    return le;
}

static int word_at(const char *t, size_t i, size_t le, const char *w, size_t *end)
{
    size_t n = strlen(w);
    if (le - i < n)
        return 0;
    for (size_t k = 0; k < n; k++)
        if (tolower((unsigned char)t[i + k]) != w[k])
            return 0;
    *end = i + n;
    return 1;
}

/* A marker at the start of the comment text [c, le) (after its `*`, `$`, `;` or `//` and blanks):
 * its kind and *body (the offset after the ':'); -1 when none. `sized for:` may be spaced as
 * `sized for :`, `waive:` as `waive :`. */
static int marker(const char *t, size_t c, size_t le, size_t *mark, size_t *body)
{
    size_t i = c;
    while (i < le && (t[i] == '*' || t[i] == '$' || t[i] == ';' || t[i] == '/'))
        i++;
    while (i < le && blank(t[i]))
        i++;
    size_t e;
    *mark = i;
    if (word_at(t, i, le, "sized", &e)) {
        size_t j = e;
        if (j >= le || !blank(t[j]))
            return -1;
        while (j < le && blank(t[j]))
            j++;
        if (!word_at(t, j, le, "for", &e))
            return -1;
        j = e;
        while (j < le && blank(t[j]))
            j++;
        if (j >= le || t[j] != ':')
            return -1;
        *body = j + 1;
        return RULE_INLINE_SIZED;
    }
    if (word_at(t, i, le, "waive", &e)) {
        size_t j = e;
        while (j < le && blank(t[j]))
            j++;
        if (j >= le || t[j] != ':')
            return -1;
        *body = j + 1;
        return RULE_INLINE_WAIVE;
    }
    return -1;
}

static int is_annotation(const char *t, size_t ls, size_t le)
{
    return le - ls >= 2 && t[ls] == ANN_PREFIX[0] && t[ls + 1] == ANN_PREFIX[1];
}

/* Parse the marked comment of line [ls, le) of file fi at lineno, if the comment starting at c has
 * a marker; record it for card. */
static void take(Scan *s, uint32_t fi, uint32_t card, const char *t, size_t ls, size_t le, size_t c, uint32_t lineno)
{
    size_t mark, body;
    int kind = marker(t, c, le, &mark, &body);
    if (kind < 0 || s->oom)
        return;
    const SrcFile *f = s->ds->files.files[fi];
    IntentEntry e;
    memset(&e, 0, sizeof e);
    e.card = card;
    e.kind = (RuleInlineKind)kind;
    int rc = rule_parse_inline(&s->out->arena, e.kind, f->path, lineno, t + ls, le - ls, body - ls, &e.sized,
                               &e.waiver, s->d);
    if (rc == ERR_NOMEM) {
        s->oom = 1;
        return;
    }
    Taken tk = {s->canon[fi], mark};
    if (BUF_PUSH(s->taken, s->ntaken, s->taken_cap, tk) != ERR_OK) {
        s->oom = 1;
        return;
    }
    if (rc != ERR_OK) {
        s->bad = 1;
        return;
    }
    if (BUF_PUSH(s->out->items, s->out->n, s->out->cap, e) != ERR_OK)
        s->oom = 1;
}

/* The comment lines right above the card (annotation lines are stepped over), top to bottom, then
 * the card's own lines. */
static void scan_card(Scan *s, uint32_t ci)
{
    const Card *c = &s->ds->cards[ci];
    if (c->file >= s->ds->files.n)
        return;
    const SrcFile *f = s->ds->files.files[c->file];
    const char *t = f->text;
    size_t len = f->len;
    if (c->start > len || c->end > len || !s->colon[c->file])
        return;
    /* walk up: collect the block of comment lines above; none when the card before ends where this
       one starts (most cards of a large netlist) */
    const Card *prev = ci > 0 ? &s->ds->cards[ci - 1] : NULL;
    int abuts = prev && prev->file == c->file && prev->end == c->start;
    size_t top = c->start, nabove = 0;
    while (top > 0 && !abuts) {
        size_t ls, le;
        line_bounds(t, len, top - 1, &ls, &le);
        if (first_text(t, ls, le) >= le || !is_comment_line(t, ls, le))
            break;
        top = ls;
        nabove++;
    }
    uint32_t lineno = c->line >= nabove ? c->line - (uint32_t)nabove : 1;
    for (size_t off = top; off < c->start; lineno++) {
        size_t ls, le;
        line_bounds(t, len, off, &ls, &le);
        if (!is_annotation(t, ls, le))
            take(s, c->file, ci, t, ls, le, first_text(t, ls, le), lineno);
        off = le;
        while (off < len && t[off] != '\n')
            off++;
        off++;
    }
    lineno = c->line;
    /* the card's own lines: a marker ends in ':', and most cards have none */
    if (!memchr(t + c->start, ':', c->end - c->start))
        return;
    for (size_t off = c->start; off < c->end && off < len; lineno++) {
        size_t ls, le;
        line_bounds(t, len, off, &ls, &le);
        if (is_comment_line(t, ls, le)) {
            if (!is_annotation(t, ls, le))
                take(s, c->file, ci, t, ls, le, first_text(t, ls, le), lineno);
        } else {
            size_t cm = inline_comment(t, ls, le);
            if (cm < le)
                take(s, c->file, ci, t, ls, le, cm, lineno);
        }
        off = le;
        while (off < len && t[off] != '\n')
            off++;
        off++;
    }
}

static int by_taken(const void *a, const void *b)
{
    const Taken *x = a, *y = b;
    if (x->file != y->file)
        return x->file < y->file ? -1 : 1;
    return x->off < y->off ? -1 : x->off > y->off;
}

/* Marked comments that no card took: one warning each. */
static void strays(Scan *s)
{
    if (s->ntaken > 1)
        qsort(s->taken, s->ntaken, sizeof *s->taken, by_taken);
    for (uint32_t fi = 0; fi < s->ds->files.n; fi++) {
        if (s->canon[fi] != fi)
            continue; /* the same file read again (another .lib section): scanned once */
        const SrcFile *f = s->ds->files.files[fi];
        const char *t = f->text;
        size_t len = f->len;
        uint32_t lineno = 1;
        size_t dropped = 0; /* the text behind is not read again soon (source.h) */
        for (size_t off = 0; off < len && s->colon[fi]; lineno++) {
            src_drop_behind(f, &dropped, off);
            const char *nl = memchr(t + off, '\n', len - off);
            size_t ls = off, le = nl ? (size_t)(nl - t) : len;
            if (!memchr(t + ls, ':', le - ls)) { /* no marker on a line without a ':' */
                off = le + 1;
                continue;
            }
            if (le > ls && t[le - 1] == '\r')
                le--;
            size_t c = is_comment_line(t, ls, le) ? first_text(t, ls, le) : inline_comment(t, ls, le);
            size_t mark, body;
            int kind = c < le && !is_annotation(t, ls, le) ? marker(t, c, le, &mark, &body) : -1;
            if (kind >= 0) {
                Taken key = {fi, mark};
                /* with none taken, taken is NULL, which bsearch must not see (found by fuzz_netlist) */
                if (!s->ntaken || !bsearch(&key, s->taken, s->ntaken, sizeof *s->taken, by_taken))
                    diag_add(s->d, DIAG_WARNING, (SrcLoc){f->path, lineno, (uint32_t)(mark - ls + 1)},
                             "this '%s' comment is neither on a MOSFET card nor on the comment lines right above "
                             "one, so it applies to nothing",
                             kind == RULE_INLINE_SIZED ? INTENT_MARK_SIZED : INTENT_MARK_WAIVE);
            }
            off = le;
            while (off < len && t[off] != '\n')
                off++;
            off++;
        }
    }
}

/* Whether f holds a ':' anywhere (every marker ends in one), handing back the pages it has read. */
static int has_colon(const SrcFile *f)
{
    if (!f->text)
        return 0;
    for (size_t off = 0; off < f->len; off += SRC_DROP_STEP) {
        size_t n = f->len - off < SRC_DROP_STEP ? f->len - off : SRC_DROP_STEP;
        if (memchr(f->text + off, ':', n))
            return 1;
        src_drop(f, off, off + n);
    }
    return 0;
}

int intent_scan(const Design *ds, IntentSet *out, DiagList *d)
{
    memset(out, 0, sizeof *out);
    arena_init(&out->arena);
    Scan s = {ds, out, d, NULL, NULL, NULL, 0, 0, 0, 0};
    unsigned char *mos = calloc(ds->ncards ? ds->ncards : 1, 1);
    out->start = calloc(ds->ncards + 1, sizeof *out->start);
    s.canon = malloc((ds->files.n ? ds->files.n : 1) * sizeof *s.canon);
    s.colon = malloc(ds->files.n ? ds->files.n : 1);
    if (!mos || !out->start || !s.canon || !s.colon) {
        s.oom = 1;
        goto done;
    }
    out->ncards = ds->ncards;
    for (size_t i = 0; i < ds->ndevs; i++)
        if (ds->devs[i].card < ds->ncards)
            mos[ds->devs[i].card] = 1;
    /* the same file read twice (two .lib sections of it) has one canonical index */
    for (uint32_t i = 0; i < ds->files.n; i++) {
        s.canon[i] = i;
        const SrcFile *f = ds->files.files[i];
        s.colon[i] = (unsigned char)has_colon(f);
        for (uint32_t k = 0; k < i; k++) {
            const SrcFile *g = ds->files.files[k];
            if ((f->ino && f->dev == g->dev && f->ino == g->ino) || (!f->ino && strcmp(f->path, g->path) == 0)) {
                s.canon[i] = k;
                break;
            }
        }
    }
    size_t dropped = 0; /* of the top file, whose cards come in order */
    for (uint32_t c = 0; c < ds->ncards && !s.oom; c++) {
        out->start[c] = out->n;
        if (ds->cards[c].file == 0 && ds->files.n)
            src_drop_behind(ds->files.files[0], &dropped, ds->cards[c].start);
        if (mos[c])
            scan_card(&s, c);
    }
    out->start[ds->ncards] = out->n;
    if (!s.oom)
        strays(&s);
done:
    free(mos);
    free(s.canon);
    free(s.colon);
    free(s.taken);
    if (s.oom) {
        intent_free(out);
        return diag_nomem(d);
    }
    return s.bad ? ERR_INPUT : ERR_OK;
}

const IntentEntry *intent_card(const IntentSet *is, uint32_t card, size_t *n)
{
    *n = 0;
    if (!is || !is->start || card >= is->ncards)
        return NULL;
    *n = is->start[card + 1] - is->start[card];
    return *n ? &is->items[is->start[card]] : NULL;
}

void intent_free(IntentSet *is)
{
    if (!is)
        return;
    free(is->items);
    free(is->start);
    arena_free(&is->arena);
    memset(is, 0, sizeof *is);
}
