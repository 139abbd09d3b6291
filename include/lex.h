/* lex: the SPICE netlist lexer. Logical lines over one buffer (the title line, `+` continuations,
 * comment lines, inline comments, CRLF, a UTF-8 BOM), a token cursor over one logical line, and
 * SPICE numbers with scale suffixes. Nothing here allocates; netlist.c pulls lines with lex_next and
 * tokens with the cursor, expr.c reads expressions through the same cursor. */
#ifndef LEX_H
#define LEX_H

#include <stddef.h>
#include <stdint.h>

typedef enum {
    LEX_CARD,   /* a card: element, dot card, possibly with `+` continuation lines */
    LEX_TITLE,  /* the first line of the top file, whatever it holds */
    LEX_ORPHAN, /* a `+` line with no card before it (ngspice ignores it) */
} LexKind;

/* One logical line. Comment and blank lines between a card and its continuations lie inside the
 * span; those after the last continuation do not. */
typedef struct {
    LexKind kind;
    size_t start;  /* first byte of the first physical line */
    size_t body;   /* first byte that is not blank (the element letter or the '.') */
    size_t end;    /* just past the line ending of the last physical line, or the end of the range */
    uint32_t line; /* number of the first physical line, 1-based */
    uint32_t last; /* number of the last physical line */
} LexLine;

typedef struct {
    const char *text;
    size_t len;    /* end of the range being read */
    size_t pos;    /* start of the next physical line to read */
    uint32_t line; /* its number */
    int title;     /* the next line is the title */
} Lexer;

/* Read text[0..len). A UTF-8 byte order mark is skipped; with title set the first line is the title. */
void lex_init(Lexer *lx, const char *text, size_t len, int title);

/* Read text[start..end), whose first line has number line (a `.lib` section of a file). */
void lex_init_range(Lexer *lx, const char *text, size_t start, size_t end, uint32_t line);

/* The next logical line: 1 with *ln filled, 0 at the end of the range. Comment and blank lines are
 * skipped. Comment lines start (after blanks) with `*`, `$`, `;` or `//`. */
int lex_next(Lexer *lx, LexLine *ln);

/* 3 when text starts with a UTF-8 byte order mark, else 0. */
size_t lex_bom(const char *text, size_t len);

/* 1 when text looks like a binary file rather than a netlist: it holds a NUL byte, or more than 1 in
 * 64 of its first 64 KiB (and at least 8) are control bytes other than TAB, LF, VT, FF, CR and ESC;
 * annotation lines ("*~", biaslint's own) are not counted. *off is then the
 * offset of the first NUL (or of the first such control byte). 0 otherwise. */
int lex_binary(const char *text, size_t len, size_t *off);

/* A cursor over one logical line. A continuation boundary reads as a blank; inline comments
 * (`;` anywhere, `//` anywhere, `$` after a blank or at the start of a line's text) end a physical
 * line's content. A token never spans two physical lines; an expression in braces may. */
typedef struct {
    const char *text;
    size_t pos; /* next byte */
    size_t eol; /* end of the content of the current physical line */
    size_t end; /* end of the logical line */
} LexCur;

typedef struct {
    size_t off; /* byte offset in the text */
    size_t len;
} LexTok;

void lex_cur_init(LexCur *c, const char *text, const LexLine *ln);

/* A cursor over s[0..n), one physical line (inline comments still end it). */
void lex_cur_init_str(LexCur *c, const char *s, size_t n);

/* Skip blanks and continuation boundaries; the next byte (as unsigned char), or 0 at the end of the
 * logical line. */
int lex_cur_skip(LexCur *c);

/* The byte under the cursor, 0 at the end of the current physical line's content. */
static inline int lex_cur_peek(const LexCur *c)
{
    return c->pos < c->eol ? (unsigned char)c->text[c->pos] : 0;
}

/* The byte after the one under the cursor on the same physical line, or 0. */
static inline int lex_cur_peek2(const LexCur *c)
{
    return c->pos + 1 < c->eol ? (unsigned char)c->text[c->pos + 1] : 0;
}

static inline void lex_cur_adv(LexCur *c)
{
    if (c->pos < c->eol)
        c->pos++;
}

/* 1 when only blanks and comments are left on the logical line. */
int lex_cur_done(LexCur *c);

#define LEX_W_PARENS 1u /* '(', ')' and ',' end a word and are skipped as blanks (.model, .func) */

/* The next word: a run of bytes up to a blank, '=' or the end of the physical line's content. A
 * word that starts with '=' is that one byte. Returns its length, 0 at the end of the logical line. */
size_t lex_word(LexCur *c, LexTok *t, unsigned flags);

/* A file or section name: 'quoted', "quoted" (the quotes are not part of *t) or a plain word.
 * 1 with *t set, 0 at the end of the line, -1 for a quote that is not closed on its line (*t then
 * covers the opening quote). */
int lex_name(LexCur *c, LexTok *t);

/* 1 when text[t] equals the lower-case keyword kw, ignoring case. */
int lex_is(const char *text, LexTok t, const char *kw);

#define LEX_NUM_SPICE 1u /* rules of element and model cards: `mil` is 25.4e-6; elsewhere (ngspice's
                            expression evaluator) `mil` reads as milli, like any `m` */

/* A number at s[0..n): digits with an optional fraction and exponent, then an optional scale suffix
 * (t g meg k m u n p f, mil; case-insensitive) and any letters after it (units, ignored as SPICE
 * does: 10uA, 2MEGohm). Returns the bytes used with *v set, 0 when s does not start with a digit or
 * '.' followed by a digit, or the number is absurdly long (over 100 digits). No sign. *v is infinite
 * (or 0) when the exponent is out of range; callers reject an infinite value. */
size_t lex_number(const char *s, size_t n, unsigned flags, double *v);

#endif
