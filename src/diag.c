/* diag: the diagnostic list. Messages are formatted once, when recorded. */
#include "diag.h"

#include <stdlib.h>
#include <string.h>

#define DIAG_DEFAULT_KEPT 200

void diag_init(DiagList *d)
{
    memset(d, 0, sizeof *d);
}

void diag_free(DiagList *d)
{
    if (!d)
        return;
    for (size_t i = 0; i < d->n; i++) {
        free(d->items[i].msg);
        free(d->items[i].excerpt);
        free((char *)d->items[i].loc.file);
    }
    free(d->items);
    memset(d, 0, sizeof *d);
}

static void count(DiagList *d, DiagSeverity sev)
{
    if (sev == DIAG_ERROR)
        d->nerrors++;
    else if (sev == DIAG_WARNING)
        d->nwarnings++;
}

int diag_nomem(DiagList *d)
{
    d->oom = 1;
    d->nerrors++;
    return ERR_NOMEM;
}

static char *vformat(const char *fmt, va_list ap)
{
    va_list ap2;
    va_copy(ap2, ap);
    int n = vsnprintf(NULL, 0, fmt, ap2);
    va_end(ap2);
    if (n < 0)
        return NULL;
    char *s = malloc((size_t)n + 1);
    if (s)
        vsnprintf(s, (size_t)n + 1, fmt, ap);
    return s;
}

/* Appends a slot; NULL when the list is full (counted as dropped) or memory ran out (oom set). */
static Diag *slot(DiagList *d, DiagSeverity sev)
{
    size_t max = d->max_kept ? d->max_kept : DIAG_DEFAULT_KEPT;
    count(d, sev);
    if (d->n >= max) {
        d->dropped++;
        return NULL;
    }
    if (d->n == d->cap) {
        size_t ncap = d->cap ? d->cap * 2 : 16;
        Diag *p = realloc(d->items, ncap * sizeof *p);
        if (!p) {
            d->oom = 1;
            return NULL;
        }
        d->items = p;
        d->cap = ncap;
    }
    Diag *g = &d->items[d->n];
    memset(g, 0, sizeof *g);
    g->sev = sev;
    return g;
}

static int status_for(DiagSeverity sev)
{
    return sev == DIAG_ERROR ? ERR_INPUT : ERR_OK;
}

int diag_vadd(DiagList *d, DiagSeverity sev, SrcLoc loc, const char *fmt, va_list ap)
{
    Diag *g = slot(d, sev);
    if (!g)
        return d->oom ? ERR_NOMEM : status_for(sev);
    g->loc = loc;
    g->msg = vformat(fmt, ap);
    /* the file name is copied: a diagnostic outlives the loaded file it points into */
    g->loc.file = loc.file ? strdup(loc.file) : NULL;
    if (!g->msg || (loc.file && !g->loc.file)) {
        free(g->msg);
        free((char *)g->loc.file);
        d->oom = 1;
        return ERR_NOMEM;
    }
    d->n++;
    return status_for(sev);
}

int diag_add(DiagList *d, DiagSeverity sev, SrcLoc loc, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int rc = diag_vadd(d, sev, loc, fmt, ap);
    va_end(ap);
    return rc;
}

int diag_add_excerpt(DiagList *d, DiagSeverity sev, SrcLoc loc, const char *line, size_t line_len,
                     uint32_t span, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int rc = diag_vadd(d, sev, loc, fmt, ap);
    va_end(ap);
    if (rc == ERR_NOMEM || d->n == 0 || !line)
        return rc;
    Diag *g = &d->items[d->n - 1];
    if (g->loc.line != loc.line || g->excerpt)
        return rc; /* the diagnostic was dropped past max_kept */
    while (line_len && (line[line_len - 1] == '\n' || line[line_len - 1] == '\r'))
        line_len--;
    if (line_len > 160)
        line_len = 160; /* a 1 MB line is not worth quoting whole */
    g->excerpt = malloc(line_len + 1);
    if (!g->excerpt) {
        d->oom = 1;
        return ERR_NOMEM;
    }
    memcpy(g->excerpt, line, line_len);
    g->excerpt[line_len] = '\0';
    g->span = span;
    return rc;
}

static const char *sev_word(DiagSeverity s)
{
    return s == DIAG_ERROR ? "error" : s == DIAG_WARNING ? "warning" : "note";
}

void diag_print(const DiagList *d, FILE *fp, int color, DiagSeverity min)
{
    for (size_t i = 0; i < d->n; i++) {
        const Diag *g = &d->items[i];
        if (g->sev < min)
            continue;
        const char *on = "", *off = "";
        if (color) {
            on = g->sev == DIAG_ERROR ? "\033[1;31m" : g->sev == DIAG_WARNING ? "\033[1;35m" : "\033[1;36m";
            off = "\033[0m";
        }
        if (g->loc.file && g->loc.line)
            fprintf(fp, "%s:%u:%u: ", g->loc.file, g->loc.line, g->loc.col ? g->loc.col : 1);
        else if (g->loc.file)
            fprintf(fp, "%s: ", g->loc.file);
        fprintf(fp, "%s%s%s: %s\n", on, sev_word(g->sev), off, g->msg);
        if (g->excerpt) {
            fprintf(fp, "  %s\n", g->excerpt);
            if (g->loc.col) {
                fputs("  ", fp);
                /* tabs stay tabs so the caret lines up under the excerpt */
                for (uint32_t c = 1; c < g->loc.col && g->excerpt[c - 1]; c++)
                    fputc(g->excerpt[c - 1] == '\t' ? '\t' : ' ', fp);
                fputc('^', fp);
                for (uint32_t c = 1; c < g->span; c++)
                    fputc('~', fp);
                fputc('\n', fp);
            }
        }
    }
    if (d->dropped)
        fprintf(fp, "biaslint: %zu more diagnostics not shown\n", d->dropped);
    if (d->oom)
        fprintf(fp, "biaslint: error: out of memory\n");
}
