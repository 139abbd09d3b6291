/* json: recursive descent over one buffer. Children of an open array or object are collected on a
 * scratch stack shared by all levels and copied into the arena when the container closes, so the
 * work is linear in the text and nothing is allocated per token outside the arena. Duplicate keys
 * are found with a scratch hash table, also linear. The first error stops the parse. */
#include "json.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "buf.h"
#include "source.h"
#include "strtab.h"

typedef struct {
    const char *key;
    size_t keylen;
    JsonValue *value;
    const char *at;     /* the key's opening quote, for the duplicate-key message */
    uint32_t line;
} Slot;

typedef struct {
    const char *path, *text, *p, *end;
    const char *line_start; /* first byte of the line p is on */
    uint32_t line;
    unsigned depth, max_depth;
    Arena *arena;
    JsonValue **items;      /* scratch: children of the open arrays, innermost last */
    size_t nitems, items_cap;
    Slot *slots;            /* scratch: members of the open objects */
    size_t nslots, slots_cap;
    size_t *seen;           /* scratch hash table for duplicate keys: slot index + 1, 0 empty */
    size_t seen_cap;
    DiagList *d;
    int status;             /* ERR_OK until the first error */
    const JsonStream *stream;
    Arena *doc_arena;       /* the document's own arena (ps->arena points at scratch while streaming) */
    Arena scratch;          /* streamed items, dropped every STREAM_DROP bytes */
} P;

#define STREAM_DROP (4u * 1024u * 1024u)

static uint32_t col_of(const P *ps, const char *at)
{
    return (uint32_t)(at - ps->line_start) + 1;
}

/* Records the error at byte `at` on line `line`; the line is quoted when the column is not past
 * what the excerpt shows. */
static int fail_at(P *ps, const char *at, uint32_t line, int status, const char *fmt, const char *arg)
{
    if (ps->status != ERR_OK)
        return ps->status;
    ps->status = status;
    const char *ls = at;
    while (ls > ps->text && ls[-1] != '\n')
        ls--;
    const char *le = memchr(at, '\n', (size_t)(ps->end - at));
    if (!le)
        le = ps->end;
    uint32_t col = (uint32_t)(at - ls) + 1;
    SrcLoc loc = {ps->path, line, col};
    int rc = col <= 160 ? diag_add_excerpt(ps->d, DIAG_ERROR, loc, ls, (size_t)(le - ls), 1, fmt, arg)
                        : diag_add(ps->d, DIAG_ERROR, loc, fmt, arg);
    if (rc == ERR_NOMEM)
        ps->status = ERR_NOMEM;
    return ps->status;
}

static int fail(P *ps, const char *fmt, const char *arg)
{
    return fail_at(ps, ps->p < ps->end ? ps->p : ps->end, ps->line, ERR_INPUT, fmt, arg);
}

static int nomem(P *ps)
{
    if (ps->status == ERR_OK)
        ps->status = diag_nomem(ps->d);
    return ERR_NOMEM;
}

static void blanks(P *ps)
{
    while (ps->p < ps->end) {
        char c = *ps->p;
        if (c == '\n') {
            ps->p++;
            ps->line++;
            ps->line_start = ps->p;
        } else if (c == ' ' || c == '\t' || c == '\r') {
            ps->p++;
        } else {
            break;
        }
    }
}

/* What the byte at p is, for messages. */
static const char *what(const P *ps, char *buf, size_t size)
{
    if (ps->p >= ps->end)
        return "the end of the file";
    unsigned char c = (unsigned char)*ps->p;
    if (c >= 0x21 && c < 0x7f)
        snprintf(buf, size, "'%c'", c);
    else
        snprintf(buf, size, "byte 0x%02x", c);
    return buf;
}

static int hexval(char c)
{
    return c >= '0' && c <= '9' ? c - '0' : c >= 'a' && c <= 'f' ? c - 'a' + 10 : c >= 'A' && c <= 'F' ? c - 'A' + 10 : -1;
}

static int hex4(P *ps, unsigned *u)
{
    if (ps->end - ps->p < 4)
        return 0;
    unsigned v = 0;
    for (int k = 0; k < 4; k++) {
        int h = hexval(ps->p[k]);
        if (h < 0)
            return 0;
        v = v * 16 + (unsigned)h;
    }
    ps->p += 4;
    *u = v;
    return 1;
}

static char *put_utf8(char *o, unsigned cp)
{
    if (cp < 0x80) {
        *o++ = (char)cp;
    } else if (cp < 0x800) {
        *o++ = (char)(0xc0 | cp >> 6);
        *o++ = (char)(0x80 | (cp & 0x3f));
    } else if (cp < 0x10000) {
        *o++ = (char)(0xe0 | cp >> 12);
        *o++ = (char)(0x80 | (cp >> 6 & 0x3f));
        *o++ = (char)(0x80 | (cp & 0x3f));
    } else {
        *o++ = (char)(0xf0 | cp >> 18);
        *o++ = (char)(0x80 | (cp >> 12 & 0x3f));
        *o++ = (char)(0x80 | (cp >> 6 & 0x3f));
        *o++ = (char)(0x80 | (cp & 0x3f));
    }
    return o;
}

/* Length of the valid UTF-8 sequence at s (no overlong forms, no surrogates, <= U+10FFFF), or 0. */
static size_t utf8_len(const unsigned char *s, const unsigned char *end)
{
    unsigned c = s[0];
    size_t n = c >= 0xc2 && c <= 0xdf ? 2 : c >= 0xe0 && c <= 0xef ? 3 : c >= 0xf0 && c <= 0xf4 ? 4 : 0;
    if (!n || (size_t)(end - s) < n)
        return 0;
    for (size_t k = 1; k < n; k++)
        if ((s[k] & 0xc0) != 0x80)
            return 0;
    if ((c == 0xe0 && s[1] < 0xa0) || (c == 0xed && s[1] >= 0xa0) || (c == 0xf0 && s[1] < 0x90) ||
        (c == 0xf4 && s[1] >= 0x90))
        return 0;
    return n;
}

/* string = '"' { char | escape } '"'. The decoded text is never longer than its source, so one
 * arena block of the source length holds it. */
static int string(P *ps, const char **out, size_t *outlen)
{
    const char *open = ps->p;
    ps->p++; /* the quote */
    const char *q = ps->p;
    while (q < ps->end && *q != '"' && *q != '\n')
        q += *q == '\\' && q + 1 < ps->end ? 2 : 1;
    char *buf = arena_alloc(ps->arena, (size_t)(q - ps->p) + 1), *o = buf;
    if (!buf)
        return nomem(ps);
    while (ps->p < ps->end && *ps->p != '"') {
        unsigned char c = (unsigned char)*ps->p;
        if (c < 0x20) {
            if (c == '\n')
                return fail_at(ps, open, ps->line, ERR_INPUT, "this string has no closing quote on its line%s", "");
            return fail(ps, "a control character in a string must be written as an escape (\\u00XX)%s", "");
        }
        if (c == '\\') {
            const char *esc = ps->p++;
            if (ps->p >= ps->end)
                break;
            char e = *ps->p++;
            unsigned u;
            switch (e) {
            case '"': *o++ = '"'; break;
            case '\\': *o++ = '\\'; break;
            case '/': *o++ = '/'; break;
            case 'b': *o++ = '\b'; break;
            case 'f': *o++ = '\f'; break;
            case 'n': *o++ = '\n'; break;
            case 'r': *o++ = '\r'; break;
            case 't': *o++ = '\t'; break;
            case 'u':
                if (!hex4(ps, &u))
                    return fail_at(ps, esc, ps->line, ERR_INPUT, "\\u must be followed by four hex digits%s", "");
                if (u >= 0xd800 && u < 0xdc00) {
                    unsigned lo;
                    if (ps->end - ps->p < 6 || ps->p[0] != '\\' || ps->p[1] != 'u')
                        return fail_at(ps, esc, ps->line, ERR_INPUT,
                                       "a high surrogate (\\ud800-\\udbff) must be followed by a low one%s", "");
                    ps->p += 2;
                    if (!hex4(ps, &lo) || lo < 0xdc00 || lo > 0xdfff)
                        return fail_at(ps, esc, ps->line, ERR_INPUT,
                                       "a high surrogate (\\ud800-\\udbff) must be followed by a low one%s", "");
                    u = 0x10000 + ((u - 0xd800) << 10) + (lo - 0xdc00);
                } else if (u >= 0xdc00 && u < 0xe000) {
                    return fail_at(ps, esc, ps->line, ERR_INPUT, "a low surrogate (\\udc00-\\udfff) without a high one%s",
                                   "");
                }
                o = put_utf8(o, u);
                break;
            default:
                return fail_at(ps, esc, ps->line, ERR_INPUT, "unknown escape '\\%s' in a string",
                               (char[]){e >= 0x21 && e < 0x7f ? e : '?', '\0'});
            }
            continue;
        }
        if (c >= 0x80) {
            size_t n = utf8_len((const unsigned char *)ps->p, (const unsigned char *)ps->end);
            if (!n)
                return fail(ps, "invalid UTF-8 in a string%s", "");
            memcpy(o, ps->p, n);
            o += n;
            ps->p += n;
            continue;
        }
        *o++ = (char)c;
        ps->p++;
    }
    if (ps->p >= ps->end)
        return fail_at(ps, open, ps->line, ERR_INPUT, "this string has no closing quote%s", "");
    ps->p++;
    *o = '\0';
    *out = buf;
    *outlen = (size_t)(o - buf);
    return ERR_OK;
}

static int digits(P *ps)
{
    const char *s = ps->p;
    while (ps->p < ps->end && *ps->p >= '0' && *ps->p <= '9')
        ps->p++;
    return ps->p > s;
}

/* number = [ '-' ] ( '0' | [1-9] digits ) [ '.' digits ] [ ( 'e' | 'E' ) [ '+' | '-' ] digits ] */
static int number(P *ps, JsonValue *v)
{
    const char *s = ps->p;
    if (*ps->p == '-')
        ps->p++;
    if (ps->p < ps->end && *ps->p == '0') {
        ps->p++;
        if (ps->p < ps->end && *ps->p >= '0' && *ps->p <= '9')
            return fail_at(ps, s, ps->line, ERR_INPUT, "a number may not start with 0 followed by digits%s", "");
    } else if (!digits(ps)) {
        return fail_at(ps, s, ps->line, ERR_INPUT, "'-' must be followed by digits%s", "");
    }
    if (ps->p < ps->end && *ps->p == '.') {
        ps->p++;
        if (!digits(ps))
            return fail(ps, "digits must follow the decimal point%s", "");
    }
    if (ps->p < ps->end && (*ps->p == 'e' || *ps->p == 'E')) {
        ps->p++;
        if (ps->p < ps->end && (*ps->p == '+' || *ps->p == '-'))
            ps->p++;
        if (!digits(ps))
            return fail(ps, "digits must follow the exponent%s", "");
    }
    /* strtod needs a terminated copy: the grammar above already fixed where the number ends */
    size_t n = (size_t)(ps->p - s);
    char small[64], *tmp = n < sizeof small ? small : arena_strndup(ps->arena, s, n);
    if (!tmp)
        return nomem(ps);
    if (tmp == small) {
        memcpy(small, s, n);
        small[n] = '\0';
    }
    char *endp;
    double x = strtod(tmp, &endp);
    if ((size_t)(endp - tmp) != n || isinf(x))
        return fail_at(ps, s, ps->line, ERR_INPUT, "this number does not fit a double%s", "");
    v->num = x;
    return ERR_OK;
}

static JsonValue *value(P *ps);

/* After an item of an array (close ']') or a member of an object (close '}'): 1 when a ',' follows
 * (another item comes), 0 at the closing bracket (consumed), -1 with the error otherwise. */
static int after_item(P *ps, char close)
{
    char b[16];
    blanks(ps);
    if (ps->p < ps->end && *ps->p == ',') {
        ps->p++;
        blanks(ps);
        if (ps->p < ps->end && *ps->p == close) {
            fail(ps, "a trailing comma before '%s'", close == ']' ? "]" : "}");
            return -1;
        }
        return 1;
    }
    if (ps->p < ps->end && *ps->p == close) {
        ps->p++;
        return 0;
    }
    fail(ps, close == ']' ? "expected ',' or ']' in an array, found %s" : "expected ',' or '}' in an object, found %s",
         what(ps, b, sizeof b));
    return -1;
}

static JsonValue *new_value(P *ps, JsonType t)
{
    JsonValue *v = arena_zalloc(ps->arena, sizeof *v);
    if (!v) {
        nomem(ps);
        return NULL;
    }
    v->type = t;
    v->line = ps->line;
    v->col = col_of(ps, ps->p);
    return v;
}

static int enter(P *ps)
{
    if (++ps->depth > ps->max_depth) {
        char lim[24];
        snprintf(lim, sizeof lim, "%u", ps->max_depth);
        fail_at(ps, ps->p, ps->line, ERR_LIMIT, "arrays and objects are nested deeper than the limit of %s", lim);
        return 0;
    }
    return 1;
}

/* array = '[' [ value { ',' value } ] ']' */
static JsonValue *array(P *ps)
{
    JsonValue *v = new_value(ps, JSON_ARRAY);
    if (!v || !enter(ps))
        return NULL;
    ps->p++;
    size_t base = ps->nitems;
    blanks(ps);
    if (ps->p < ps->end && *ps->p == ']') {
        ps->p++;
    } else {
        for (;;) {
            JsonValue *item = value(ps);
            if (!item)
                return NULL;
            if (BUF_PUSH(ps->items, ps->nitems, ps->items_cap, item) != ERR_OK) {
                nomem(ps);
                return NULL;
            }
            int more = after_item(ps, ']');
            if (more < 0)
                return NULL;
            if (!more)
                break;
        }
    }
    v->len = ps->nitems - base;
    if (v->len) {
        v->items = arena_array(ps->arena, v->len, sizeof *v->items);
        if (!v->items) {
            nomem(ps);
            return NULL;
        }
        memcpy(v->items, ps->items + base, v->len * sizeof *v->items);
    }
    ps->nitems = base;
    ps->depth--;
    return v;
}

static int dup_key(P *ps, const Slot *s)
{
    return fail_at(ps, s->at, s->line, ERR_INPUT, "duplicate key \"%s\" in one object", s->key);
}

/* The members slots[base..nslots) must have distinct keys: pairwise for small objects, through a
 * scratch hash table for larger ones, so a wide object costs linear time. */
static int unique_keys(P *ps, size_t base)
{
    size_t n = ps->nslots - base;
    if (n <= 8) {
        for (size_t i = base; i < ps->nslots; i++)
            for (size_t k = base; k < i; k++)
                if (ps->slots[i].keylen == ps->slots[k].keylen &&
                    memcmp(ps->slots[i].key, ps->slots[k].key, ps->slots[i].keylen) == 0)
                    return dup_key(ps, &ps->slots[i]);
        return ERR_OK;
    }
    size_t cap = 16;
    while (cap < 2 * n)
        cap *= 2;
    if (cap > ps->seen_cap) {
        size_t *p = realloc(ps->seen, cap * sizeof *p);
        if (!p)
            return nomem(ps);
        ps->seen = p;
        ps->seen_cap = cap;
    }
    memset(ps->seen, 0, cap * sizeof *ps->seen);
    for (size_t i = base; i < ps->nslots; i++) {
        const Slot *s = &ps->slots[i];
        size_t h = (size_t)str_hash(s->key, s->keylen) & (cap - 1);
        for (; ps->seen[h]; h = (h + 1) & (cap - 1)) {
            const Slot *o = &ps->slots[ps->seen[h] - 1];
            if (o->keylen == s->keylen && memcmp(o->key, s->key, s->keylen) == 0) /* the hash folds case */
                return dup_key(ps, s);
        }
        ps->seen[h] = i + 1;
    }
    return ERR_OK;
}

/* An array whose items go to the stream callback one at a time (the root object's member `key`). */
static JsonValue *streamed_array(P *ps, const char *key)
{
    JsonValue *v = new_value(ps, JSON_ARRAY);
    if (!v || !enter(ps))
        return NULL;
    ps->p++;
    blanks(ps);
    size_t n = 0;
    if (ps->p < ps->end && *ps->p == ']') {
        ps->p++;
    } else {
        for (;;) {
            ps->arena = &ps->scratch;
            JsonValue *item = value(ps);
            ps->arena = ps->doc_arena;
            if (!item)
                return NULL;
            int rc = ps->stream->item(ps->stream->ctx, key, n++, item);
            if (rc != ERR_OK) {
                if (ps->status == ERR_OK)
                    ps->status = rc;
                return NULL;
            }
            if (ps->scratch.total > STREAM_DROP) {
                arena_free(&ps->scratch);
                arena_init(&ps->scratch);
            }
            int more = after_item(ps, ']');
            if (more < 0)
                return NULL;
            if (!more)
                break;
        }
    }
    v->len = n;
    ps->depth--;
    return v;
}

static int streams(const P *ps, const char *key)
{
    if (!ps->stream || ps->depth != 1 || ps->arena != ps->doc_arena)
        return 0;
    for (const char *const *k = ps->stream->keys; *k; k++)
        if (strcmp(*k, key) == 0)
            return 1;
    return 0;
}

/* object = '{' [ string ':' value { ',' string ':' value } ] '}' */
static JsonValue *object(P *ps)
{
    JsonValue *v = new_value(ps, JSON_OBJECT);
    if (!v || !enter(ps))
        return NULL;
    ps->p++;
    size_t base = ps->nslots;
    blanks(ps);
    char b[16];
    if (ps->p < ps->end && *ps->p == '}') {
        ps->p++;
    } else {
        for (;;) {
            blanks(ps);
            if (ps->p >= ps->end || *ps->p != '"') {
                fail(ps, "expected a key in double quotes, found %s", what(ps, b, sizeof b));
                return NULL;
            }
            Slot s = {NULL, 0, NULL, ps->p, ps->line};
            if (string(ps, &s.key, &s.keylen) != ERR_OK)
                return NULL;
            blanks(ps);
            if (ps->p >= ps->end || *ps->p != ':') {
                fail(ps, "expected ':' after the key, found %s", what(ps, b, sizeof b));
                return NULL;
            }
            ps->p++;
            blanks(ps);
            if (ps->p < ps->end && *ps->p == '[' && streams(ps, s.key))
                s.value = streamed_array(ps, s.key);
            else
                s.value = value(ps);
            if (!s.value)
                return NULL;
            if (BUF_PUSH(ps->slots, ps->nslots, ps->slots_cap, s) != ERR_OK) {
                nomem(ps);
                return NULL;
            }
            int more = after_item(ps, '}');
            if (more < 0)
                return NULL;
            if (!more)
                break;
        }
    }
    if (unique_keys(ps, base) != ERR_OK)
        return NULL;
    v->len = ps->nslots - base;
    if (v->len) {
        v->members = arena_array(ps->arena, v->len, sizeof *v->members);
        if (!v->members) {
            nomem(ps);
            return NULL;
        }
        for (size_t i = 0; i < v->len; i++) {
            const Slot *s = &ps->slots[base + i];
            v->members[i] = (JsonMember){s->key, s->keylen, s->value};
        }
    }
    ps->nslots = base;
    ps->depth--;
    return v;
}

static int word(P *ps, const char *w)
{
    size_t n = strlen(w);
    if ((size_t)(ps->end - ps->p) < n || memcmp(ps->p, w, n) != 0)
        return 0;
    ps->p += n;
    return 1;
}

static JsonValue *value(P *ps)
{
    blanks(ps);
    char b[16];
    if (ps->p >= ps->end) {
        fail(ps, "expected a value, found %s", "the end of the file");
        return NULL;
    }
    char c = *ps->p;
    if (c == '[')
        return array(ps);
    if (c == '{')
        return object(ps);
    JsonValue *v;
    if (c == '"') {
        if (!(v = new_value(ps, JSON_STRING)) || string(ps, &v->str, &v->len) != ERR_OK)
            return NULL;
        return v;
    }
    if (c == '-' || (c >= '0' && c <= '9')) {
        if (!(v = new_value(ps, JSON_NUMBER)) || number(ps, v) != ERR_OK)
            return NULL;
        return v;
    }
    if (!(v = new_value(ps, JSON_NULL)))
        return NULL;
    if (word(ps, "null"))
        return v;
    if (word(ps, "true")) {
        v->type = JSON_TRUE;
        return v;
    }
    if (word(ps, "false")) {
        v->type = JSON_FALSE;
        return v;
    }
    if (c == '\'')
        fail(ps, "strings take double quotes, not %s", "'");
    else if (c == '/')
        fail(ps, "JSON has no comments (found %s)", "'/'");
    else
        fail(ps, "expected a value, found %s", what(ps, b, sizeof b));
    return NULL;
}

int json_parse(JsonDoc *doc, const char *path, const char *text, size_t len, unsigned max_depth,
               const JsonStream *stream, DiagList *d)
{
    memset(doc, 0, sizeof *doc);
    arena_init(&doc->arena);
    doc->path = path;
    P ps;
    memset(&ps, 0, sizeof ps);
    ps.path = path;
    ps.text = ps.p = ps.line_start = text;
    ps.end = text + len;
    ps.line = 1;
    ps.max_depth = max_depth ? max_depth : JSON_DEFAULT_DEPTH;
    ps.arena = ps.doc_arena = &doc->arena;
    ps.d = d;
    ps.status = ERR_OK;
    ps.stream = stream && stream->keys && stream->item ? stream : NULL;
    arena_init(&ps.scratch);
    JsonValue *root = NULL;
    if (len >= 3 && (unsigned char)text[0] == 0xef && (unsigned char)text[1] == 0xbb && (unsigned char)text[2] == 0xbf) {
        fail(&ps, "the file starts with a UTF-8 byte order mark, which JSON does not allow%s", "");
    } else if ((root = value(&ps)) != NULL) {
        blanks(&ps);
        char b[16];
        if (ps.p < ps.end) {
            fail(&ps, "unexpected %s after the end of the JSON value", what(&ps, b, sizeof b));
            root = NULL;
        }
    }
    free(ps.items);
    free(ps.slots);
    free(ps.seen);
    arena_free(&ps.scratch);
    if (!root || ps.status != ERR_OK) {
        int st = ps.status != ERR_OK ? ps.status : ERR_INPUT;
        json_free(doc);
        return st;
    }
    doc->root = root;
    return ERR_OK;
}

int json_load(JsonDoc *doc, const char *path, unsigned max_depth, const JsonStream *stream, DiagList *d)
{
    memset(doc, 0, sizeof *doc);
    SrcFile f;
    if (src_load(&f, path, (SrcLoc){0}, d) != ERR_OK)
        return ERR_IO;
    int rc = json_parse(doc, path, f.text, f.len, max_depth, stream, d);
    src_free(&f);
    return rc;
}

void json_free(JsonDoc *doc)
{
    if (!doc)
        return;
    arena_free(&doc->arena);
    memset(doc, 0, sizeof *doc);
}

const JsonValue *json_get(const JsonValue *o, const char *key)
{
    if (!o || o->type != JSON_OBJECT)
        return NULL;
    size_t n = strlen(key);
    for (size_t i = 0; i < o->len; i++)
        if (o->members[i].keylen == n && memcmp(o->members[i].key, key, n) == 0)
            return o->members[i].value;
    return NULL;
}

const char *json_type_name(JsonType t)
{
    switch (t) {
    case JSON_NULL: return "null";
    case JSON_FALSE:
    case JSON_TRUE: return "a boolean";
    case JSON_NUMBER: return "a number";
    case JSON_STRING: return "a string";
    case JSON_ARRAY: return "an array";
    default: return "an object";
    }
}
