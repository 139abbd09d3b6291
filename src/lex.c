/* lex: logical lines, the token cursor and SPICE numbers. One pass over the buffer: each physical
 * line is found with memchr and classified by its first non-blank byte; inline comments are found
 * only by the cursor, when a card's tokens are read. */
#include "lex.h"

#include <stdlib.h>
#include <string.h>

enum { K_BLANK, K_COMMENT, K_PLUS, K_CARD };

static inline int is_blank(int ch)
{
    return ch == ' ' || ch == '\t' || ch == '\r' || ch == '\f' || ch == '\v';
}

static inline int lower(int ch)
{
    return ch >= 'A' && ch <= 'Z' ? ch + ('a' - 'A') : ch;
}

static inline int is_digit(int ch)
{
    return ch >= '0' && ch <= '9';
}

static inline int is_alpha(int ch)
{
    return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z');
}

/* Offset of the '\n' ending the line that starts at s, or n. */
static inline size_t line_end(const char *t, size_t s, size_t n)
{
    const char *p = memchr(t + s, '\n', n - s);
    return p ? (size_t)(p - t) : n;
}

static inline size_t skip_blank(const char *t, size_t s, size_t e)
{
    while (s < e && is_blank((unsigned char)t[s]))
        s++;
    return s;
}

/* What a physical line is, from its first non-blank byte b (e: its end). */
static int classify(const char *t, size_t b, size_t e)
{
    if (b >= e)
        return K_BLANK;
    switch (t[b]) {
    case '*':
    case '$':
    case ';':
        return K_COMMENT;
    case '/':
        return b + 1 < e && t[b + 1] == '/' ? K_COMMENT : K_CARD;
    case '+':
        return K_PLUS;
    default:
        return K_CARD;
    }
}

size_t lex_bom(const char *text, size_t len)
{
    return len >= 3 && (unsigned char)text[0] == 0xEF && (unsigned char)text[1] == 0xBB &&
                   (unsigned char)text[2] == 0xBF
               ? 3
               : 0;
}

int lex_binary(const char *text, size_t len, size_t *off)
{
    const char *nul = memchr(text, '\0', len);
    if (nul) {
        *off = (size_t)(nul - text);
        return 1;
    }
    /* The first 64 KiB outside annotation lines (lines starting with "*~", ANN_MARK in annotate.h):
       annotating adds only such lines and stripping removes only them, so neither can change the
       verdict (fuzz_netlist found a netlist that turned "binary" once stripped). */
    size_t n = 0, bad = 0, first = 0;
    for (size_t i = 0; i < len && n < 65536;) {
        if ((i == 0 || text[i - 1] == '\n') && i + 1 < len && text[i] == '*' && text[i + 1] == '~') {
            const char *e = memchr(text + i, '\n', len - i);
            i = e ? (size_t)(e - text) + 1 : len;
            continue;
        }
        unsigned char ch = (unsigned char)text[i];
        if (ch < 0x20 && ch != '\t' && ch != '\n' && ch != '\v' && ch != '\f' && ch != '\r' && ch != 0x1B) {
            if (!bad++)
                first = i;
        }
        n++;
        i++;
    }
    /* and at least 8: a few stray bytes in a short file are not binary */
    if (bad >= 8 && bad * 64 > n) {
        *off = first;
        return 1;
    }
    return 0;
}

void lex_init(Lexer *lx, const char *text, size_t len, int title)
{
    lx->text = text;
    lx->len = len;
    lx->pos = lex_bom(text, len);
    lx->line = 1;
    lx->title = title;
}

void lex_init_range(Lexer *lx, const char *text, size_t start, size_t end, uint32_t line)
{
    lx->text = text;
    lx->len = end;
    lx->pos = start;
    lx->line = line;
    lx->title = 0;
}

int lex_next(Lexer *lx, LexLine *ln)
{
    const char *t = lx->text;
    size_t n = lx->len;
    while (lx->pos < n) {
        size_t s = lx->pos, e = line_end(t, s, n), nx = e < n ? e + 1 : n;
        uint32_t lno = lx->line;
        lx->pos = nx;
        lx->line++;
        if (lx->title) {
            lx->title = 0;
            *ln = (LexLine){LEX_TITLE, s, s, nx, lno, lno};
            return 1;
        }
        size_t b = skip_blank(t, s, e);
        int k = classify(t, b, e);
        if (k == K_BLANK || k == K_COMMENT)
            continue;
        *ln = (LexLine){k == K_PLUS ? LEX_ORPHAN : LEX_CARD, s, b, nx, lno, lno};
        if (k == K_PLUS)
            return 1;
        /* Continuations may follow after comment and blank lines (ngspice joins them too). The
         * comment lines after the last continuation are skipped here for good. */
        size_t p = nx;
        uint32_t pl = lno + 1;
        while (p < n) {
            size_t pe = line_end(t, p, n), pn = pe < n ? pe + 1 : n;
            int pk = classify(t, skip_blank(t, p, pe), pe);
            if (pk == K_CARD)
                break;
            if (pk == K_PLUS) {
                ln->end = pn;
                ln->last = pl;
            }
            p = pn;
            pl++;
        }
        lx->pos = p;
        lx->line = pl;
        return 1;
    }
    return 0;
}

/* End of the text of the physical line whose content starts at p (after the card's first blanks or
 * after a '+'): the line ending, a NUL, or the start of an inline comment. */
static const unsigned char special[256] = {
    ['\n'] = 1, ['\r'] = 1, ['\0'] = 1, [';'] = 1, ['/'] = 1, ['$'] = 1,
};

static size_t content_end(const char *t, size_t p, size_t lim)
{
    for (size_t i = p; i < lim; i++) {
        char ch = t[i];
        if (!special[(unsigned char)ch])
            continue;
        if (ch == '\n' || ch == '\r' || ch == '\0' || ch == ';')
            return i;
        if (ch == '/' && i + 1 < lim && t[i + 1] == '/')
            return i;
        if (ch == '$' && (i == p || t[i - 1] == ' ' || t[i - 1] == '\t'))
            return i;
    }
    return lim;
}

void lex_cur_init(LexCur *c, const char *text, const LexLine *ln)
{
    c->text = text;
    c->pos = ln->body;
    c->end = ln->end;
    /* The title line has no comments: its text runs to the line ending. */
    if (ln->kind == LEX_TITLE) {
        size_t e = ln->body;
        while (e < ln->end && text[e] != '\n' && text[e] != '\r')
            e++;
        c->eol = e;
    } else {
        c->eol = content_end(text, ln->body, ln->end);
    }
}

void lex_cur_init_str(LexCur *c, const char *s, size_t n)
{
    c->text = s;
    c->pos = 0;
    c->end = n;
    c->eol = content_end(s, 0, n);
}

/* Move to the content of the next `+` line of the logical line; 0 when there is none. */
static int hop(LexCur *c)
{
    const char *t = c->text;
    size_t q = c->eol < c->end ? line_end(t, c->eol, c->end) : c->end;
    if (q < c->end)
        q++;
    while (q < c->end) {
        size_t e = line_end(t, q, c->end), b = skip_blank(t, q, e);
        int k = classify(t, b, e);
        if (k == K_PLUS) {
            c->pos = b + 1;
            c->eol = content_end(t, b + 1, c->end);
            return 1;
        }
        if (k == K_CARD)
            break; /* not reached for spans made by lex_next */
        q = e < c->end ? e + 1 : c->end;
    }
    c->pos = c->eol; /* stay at the end of the last text, where a "missing" error points */
    return 0;
}

int lex_cur_skip(LexCur *c)
{
    for (;;) {
        while (c->pos < c->eol && is_blank((unsigned char)c->text[c->pos]))
            c->pos++;
        if (c->pos < c->eol)
            return (unsigned char)c->text[c->pos];
        if (!hop(c))
            return 0;
    }
}

int lex_cur_done(LexCur *c)
{
    return lex_cur_skip(c) == 0;
}

static inline int word_end(int ch, unsigned flags)
{
    if (is_blank(ch) || ch == '=')
        return 1;
    return (flags & LEX_W_PARENS) && (ch == '(' || ch == ')' || ch == ',');
}

size_t lex_word(LexCur *c, LexTok *t, unsigned flags)
{
    int ch;
    for (;;) {
        ch = lex_cur_skip(c);
        if (!(flags & LEX_W_PARENS) || (ch != '(' && ch != ')' && ch != ','))
            break;
        lex_cur_adv(c);
    }
    t->off = c->pos;
    t->len = 0;
    if (!ch)
        return 0;
    if (ch == '=') {
        c->pos++;
        t->len = 1;
        return 1;
    }
    while (c->pos < c->eol && !word_end((unsigned char)c->text[c->pos], flags))
        c->pos++;
    t->len = c->pos - t->off;
    return t->len;
}

int lex_name(LexCur *c, LexTok *t)
{
    int ch = lex_cur_skip(c);
    t->off = c->pos;
    t->len = 0;
    if (!ch)
        return 0;
    if (ch == '\'' || ch == '"') {
        size_t s = c->pos + 1, e = s;
        while (e < c->eol && c->text[e] != ch)
            e++;
        if (e >= c->eol) {
            t->len = 1;
            c->pos = c->eol;
            return -1;
        }
        t->off = s;
        t->len = e - s;
        c->pos = e + 1;
        return 1;
    }
    while (c->pos < c->eol && !is_blank((unsigned char)c->text[c->pos]))
        c->pos++;
    t->len = c->pos - t->off;
    return 1;
}

int lex_is(const char *text, LexTok t, const char *kw)
{
    size_t i = 0;
    for (; i < t.len; i++)
        if (!kw[i] || lower((unsigned char)text[t.off + i]) != kw[i])
            return 0;
    return kw[i] == '\0';
}

size_t lex_number(const char *s, size_t n, unsigned flags, double *v)
{
    size_t i = 0, nd = 0;
    while (i < n && is_digit((unsigned char)s[i]))
        i++, nd++;
    if (i < n && s[i] == '.') {
        i++;
        while (i < n && is_digit((unsigned char)s[i]))
            i++, nd++;
    }
    if (nd == 0 || nd > 100)
        return 0;
    size_t mant = i;
    long ex = 0;
    /* An exponent only when digits follow: `1e` is 1 with a unit letter, as in ngspice. */
    if (i < n && (s[i] == 'e' || s[i] == 'E')) {
        size_t j = i + 1;
        int neg = 0;
        if (j < n && (s[j] == '+' || s[j] == '-'))
            neg = s[j++] == '-';
        if (j < n && is_digit((unsigned char)s[j])) {
            while (j < n && is_digit((unsigned char)s[j])) {
                if (ex < 100000)
                    ex = ex * 10 + (s[j] - '0');
                j++;
            }
            if (neg)
                ex = -ex;
            i = j;
        }
    }
    double mul = 1.0;
    if (i < n) {
        int a = lower((unsigned char)s[i]);
        int b = i + 1 < n ? lower((unsigned char)s[i + 1]) : 0;
        int c3 = i + 2 < n ? lower((unsigned char)s[i + 2]) : 0;
        switch (a) {
        case 't': ex += 12; break;
        case 'g': ex += 9; break;
        case 'k': ex += 3; break;
        case 'u': ex -= 6; break;
        case 'n': ex -= 9; break;
        case 'p': ex -= 12; break;
        case 'f': ex -= 15; break;
        case 'm':
            if (b == 'e' && c3 == 'g')
                ex += 6;
            else if (b == 'i' && c3 == 'l' && (flags & LEX_NUM_SPICE))
                mul = 25.4, ex -= 6;
            else
                ex -= 3;
            break;
        default: break;
        }
    }
    while (i < n && is_alpha((unsigned char)s[i]))
        i++;
    /* Exact fast path (Clinger): up to 15 digits make an exact integer and 10^k is exact for k <= 22,
     * so one multiplication or division rounds correctly, as strtod would. */
    if (nd <= 15) {
        static const double p10[] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
                                     1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
        uint64_t digits = 0;
        long frac = 0;
        int seen_dot = 0;
        for (size_t j = 0; j < mant; j++) {
            if (s[j] == '.') {
                seen_dot = 1;
                continue;
            }
            digits = digits * 10 + (uint64_t)(s[j] - '0');
            frac += seen_dot;
        }
        long e10 = ex - frac;
        if (e10 >= -22 && e10 <= 22) {
            double m = (double)digits;
            *v = (e10 >= 0 ? m * p10[e10] : m / p10[-e10]) * mul;
            return i;
        }
    }
    /* Otherwise rebuild the number as "<digits>e<exponent>" so that 4.7u and 4.7e-6 give the same
     * double. */
    char buf[128];
    memcpy(buf, s, mant);
    int k = (int)mant;
    buf[k++] = 'e';
    long e = ex < -9999 ? -9999 : ex > 9999 ? 9999 : ex;
    if (e < 0) {
        buf[k++] = '-';
        e = -e;
    }
    char dig[8];
    int nd2 = 0;
    do {
        dig[nd2++] = (char)('0' + e % 10);
        e /= 10;
    } while (e);
    while (nd2)
        buf[k++] = dig[--nd2];
    buf[k] = '\0';
    *v = strtod(buf, NULL) * mul;
    return i;
}
