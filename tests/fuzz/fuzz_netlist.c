/* fuzz_netlist: the netlist reader with flattening (nl_load), then the annotation round trip on
 * whatever it accepts. The input is one or more files: the first part is the top netlist; a line
 * `*@file NAME` (a SPICE comment, so seeds stay netlists) starts the next file, written as NAME
 * (letters, digits, '.', '_', '-') beside the top one, where .include and .lib find it.
 *
 * The intents in its comments are read as check reads them (intent_scan).
 * Promises checked: located errors (fuzz.h); every device has a name, a card, four nets, sizes that
 * are not negative nor infinite (NaN: absent); strip(annotate(x)) == strip(x); annotating the annotated file again gives
 * the same bytes. Limits are set low so that a hierarchy's size is refused before it is expanded. */
#include "fuzz.h"

#include "annotate.h"
#include "buf.h"
#include "check.h"
#include "intent.h"
#include "join.h"
#include "metrics.h"
#include "netlist.h"

#define MAXFILES 8
#define FILE_MARK "*@file "

static const NlOptions limits = {1000, 8, 16}; /* small: expansions stay fast, the limit paths run often */

static void write_file(const char *name, const uint8_t *p, size_t n)
{
    FILE *fp = fopen(name, "wb");
    if (!fp || (n && fwrite(p, 1, n, fp) != n) || fclose(fp) != 0)
        abort();
}

static size_t find_mark(const uint8_t *data, size_t n, size_t from)
{
    size_t mlen = strlen(FILE_MARK);
    for (size_t i = from; i + mlen <= n; i++)
        if ((i == 0 || data[i - 1] == '\n') && memcmp(data + i, FILE_MARK, mlen) == 0)
            return i;
    return n;
}

/* Split data into files; returns how many, with their names in names[]. */
static int write_parts(const uint8_t *data, size_t n, char names[MAXFILES][40])
{
    int nfiles = 0;
    size_t pos = 0;
    strcpy(names[0], "top.cir");
    for (;;) {
        size_t m = find_mark(data, n, pos);
        write_file(names[nfiles], data + pos, m - pos);
        nfiles++;
        if (m == n || nfiles == MAXFILES)
            return nfiles;
        /* the next file's name, sanitized, ends the mark line */
        size_t j = m + strlen(FILE_MARK), k = 0;
        char *nm = names[nfiles];
        for (; j < n && data[j] != '\n'; j++) {
            unsigned char c = data[j];
            int ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
                     c == '-' || (c == '.' && k > 0);
            if (ok && k < 32)
                nm[k++] = (char)c;
        }
        nm[k] = '\0';
        for (int q = 0; q < nfiles; q++)
            if (k == 0 || strcmp(names[q], nm) == 0)
                snprintf(nm, 40, "part%d", nfiles);
        pos = j < n ? j + 1 : n;
    }
}

static void check_design(const Design *ds)
{
    for (size_t i = 0; i < ds->ndevs; i++) {
        const Device *dv = &ds->devs[i];
        if (!dv->name || !dv->name[0] || dv->card >= ds->ncards)
            fuzz_fail("device %zu has no name or a bad card index", i);
        for (int k = 0; k < 4; k++)
            if (!nl_nets(ds, dv)[k])
                fuzz_fail("device %s lacks net %d", dv->name, k);
        /* NaN is an absent size (a cell read from its X card may give none); never negative or infinite */
        if (dv->w < 0 || dv->l < 0 || dv->m < 0 || dv->nf < 0 || isinf(dv->w) || isinf(dv->l) || isinf(dv->m) ||
            isinf(dv->nf))
            fuzz_fail("device %s has sizes w=%g l=%g m=%g nf=%g", dv->name, dv->w, dv->l, dv->m, dv->nf);
    }
    for (size_t i = 0; i < ds->ncards; i++) {
        const Card *c = &ds->cards[i];
        if (c->file >= ds->files.n)
            fuzz_fail("card %zu in file %u of %zu", i, c->file, ds->files.n);
        const SrcFile *f = ds->files.files[c->file];
        if (c->start > c->end || c->end > f->len || c->anchor_end > ds->files.files[0]->len)
            fuzz_fail("card %zu spans %zu..%zu (anchor %zu) in a file of %zu", i, c->start, c->end,
                      c->anchor_end, f->len);
    }
}

/* The annotation of ds with no operating-point data (every figure NaN, no findings). */
static void render(const Design *ds, Buf *out)
{
    Joined j;
    memset(&j, 0, sizeof j);
    j.n = ds->ndevs;
    j.rows = calloc(j.n ? j.n : 1, sizeof *j.rows);
    if (!j.rows)
        abort();
    for (size_t i = 0; i < j.n; i++) {
        j.rows[i].dev = &ds->devs[i];
        fig_normalize(NULL, ds->devs[i].type, &j.rows[i].fig);
    }
    Findings f;
    memset(&f, 0, sizeof f);
    if (ann_render(ds, &j, &f, out) != ERR_OK)
        abort();
    free(j.rows);
}

static void strip(const char *p, size_t n, Buf *out)
{
    if (ann_strip(p, n, out) != ERR_OK)
        abort();
}

static int same(const Buf *a, const Buf *b)
{
    return a->len == b->len && (a->len == 0 || memcmp(a->data, b->data, a->len) == 0);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

FUZZ_IN_PRIVATE_DIR

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    char names[MAXFILES][40];
    int nfiles = write_parts(data, n, names);
    Design ds;
    DiagList d;
    diag_init(&d);
    int rc = nl_load("top.cir", &limits, &ds, &d);
    fuzz_check_diags(&d, rc);
    diag_free(&d);
    if (rc == ERR_OK) {
        check_design(&ds);
        /* the intents written in its comments (`* sized for:`, `* waive:`), as check reads them */
        IntentSet is;
        diag_init(&d);
        int irc = intent_scan(&ds, &is, &d);
        fuzz_check_diags(&d, irc);
        for (size_t c = 0; irc != ERR_NOMEM && c < ds.ncards; c++) {
            size_t ne;
            const IntentEntry *e = intent_card(&is, (uint32_t)c, &ne);
            if (ne && !e)
                fuzz_fail("card %zu has %zu intents and no array", c, ne);
        }
        intent_free(&is);
        diag_free(&d);
        const SrcFile *top = ds.files.files[0];
        Buf ann = BUF_INIT, s1 = BUF_INIT, s2 = BUF_INIT, ann2 = BUF_INIT;
        render(&ds, &ann);
        strip(top->text, top->len, &s1);
        strip(ann.data ? ann.data : "", ann.len, &s2);
        if (!same(&s1, &s2))
            fuzz_fail("strip(annotate(x)) != strip(x): %zu and %zu bytes", s2.len, s1.len);
        nl_free(&ds);
        /* annotate the annotated file: the same bytes */
        write_file("top.cir", (const uint8_t *)(ann.data ? ann.data : ""), ann.len);
        diag_init(&d);
        rc = nl_load("top.cir", &limits, &ds, &d);
        diag_free(&d);
        if (rc != ERR_OK)
            fuzz_fail("the annotated netlist does not load (status %d)", rc);
        render(&ds, &ann2);
        if (!same(&ann, &ann2))
            fuzz_fail("annotation is not idempotent: %zu then %zu bytes", ann.len, ann2.len);
        buf_free(&ann);
        buf_free(&ann2);
        buf_free(&s1);
        buf_free(&s2);
    }
    nl_free(&ds);
    for (int i = 0; i < nfiles; i++)
        unlink(names[i]);
    return 0;
}
