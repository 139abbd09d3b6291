/* jsoncheck: a strict JSON reader (RFC 8259) written for the tests, independent of src/json.c, to
 * validate what the writers produce and to inspect it: every syntax rule checked (no trailing comma,
 * no leading zero, escapes, surrogate pairs, UTF-8, no duplicate keys), values decoded into a small
 * malloc'd tree. Shared by the report, baseline, merge and JSON tests. Include after testutil.h. */
#ifndef JSONCHECK_H
#define JSONCHECK_H

typedef enum { J_NULL, J_BOOL, J_NUM, J_STR, J_ARR, J_OBJ } JType;
typedef struct JVal JVal;
struct JVal {
    JType t;
    int b;
    double num;
    char *str;      /* decoded, NUL-terminated (J_STR) */
    char **keys;    /* J_OBJ */
    JVal **items;   /* J_ARR, J_OBJ */
    size_t n, cap;
};

typedef struct {
    const char *p, *end;
    int depth;
} JIn;

static inline void jfree(JVal *v)
{
    if (!v)
        return;
    for (size_t i = 0; i < v->n; i++) {
        jfree(v->items[i]);
        if (v->keys)
            free(v->keys[i]);
    }
    free(v->items);
    free(v->keys);
    free(v->str);
    free(v);
}

static inline void jc_ws(JIn *in)
{
    while (in->p < in->end && (*in->p == ' ' || *in->p == '\t' || *in->p == '\n' || *in->p == '\r'))
        in->p++;
}

static inline int jc_hexval(char c)
{
    return c >= '0' && c <= '9' ? c - '0' : c >= 'a' && c <= 'f' ? c - 'a' + 10 : c >= 'A' && c <= 'F' ? c - 'A' + 10 : -1;
}

static inline int jc_hex4(JIn *in, unsigned *u)
{
    if (in->end - in->p < 4)
        return -1;
    *u = 0;
    for (int k = 0; k < 4; k++) {
        int h = jc_hexval(in->p[k]);
        if (h < 0)
            return -1;
        *u = *u * 16 + (unsigned)h;
    }
    in->p += 4;
    return 0;
}

static inline void jc_put_utf8(char **o, unsigned cp)
{
    char *q = *o;
    if (cp < 0x80) {
        *q++ = (char)cp;
    } else if (cp < 0x800) {
        *q++ = (char)(0xc0 | cp >> 6);
        *q++ = (char)(0x80 | (cp & 0x3f));
    } else if (cp < 0x10000) {
        *q++ = (char)(0xe0 | cp >> 12);
        *q++ = (char)(0x80 | (cp >> 6 & 0x3f));
        *q++ = (char)(0x80 | (cp & 0x3f));
    } else {
        *q++ = (char)(0xf0 | cp >> 18);
        *q++ = (char)(0x80 | (cp >> 12 & 0x3f));
        *q++ = (char)(0x80 | (cp >> 6 & 0x3f));
        *q++ = (char)(0x80 | (cp & 0x3f));
    }
    *o = q;
}

/* Raw bytes must be valid UTF-8 (no overlong forms, no surrogates). Returns the length or 0. */
static inline size_t jc_utf8_len(const unsigned char *s, const unsigned char *end)
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

static inline char *jc_jstring(JIn *in)
{
    if (in->p >= in->end || *in->p != '"')
        return NULL;
    in->p++;
    /* decoded text is never longer than its source: measure up to the closing quote first */
    const char *q = in->p;
    while (q < in->end && *q != '"')
        q += *q == '\\' && q + 1 < in->end ? 2 : 1;
    char *out = malloc((size_t)(q - in->p) + 1), *o = out;
    assert_non_null(out);
    while (in->p < in->end && *in->p != '"') {
        unsigned char c = (unsigned char)*in->p;
        if (c < 0x20)
            goto bad; /* control characters must be escaped */
        if (c == '\\') {
            in->p++;
            if (in->p >= in->end)
                goto bad;
            char e = *in->p++;
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
                if (jc_hex4(in, &u))
                    goto bad;
                if (u >= 0xd800 && u < 0xdc00) {
                    unsigned lo;
                    if (in->end - in->p < 6 || in->p[0] != '\\' || in->p[1] != 'u')
                        goto bad;
                    in->p += 2;
                    if (jc_hex4(in, &lo) || lo < 0xdc00 || lo > 0xdfff)
                        goto bad;
                    u = 0x10000 + ((u - 0xd800) << 10) + (lo - 0xdc00);
                } else if (u >= 0xdc00 && u < 0xe000) {
                    goto bad;
                }
                jc_put_utf8(&o, u);
                break;
            default:
                goto bad;
            }
            continue;
        }
        if (c >= 0x80) {
            size_t n = jc_utf8_len((const unsigned char *)in->p, (const unsigned char *)in->end);
            if (!n)
                goto bad;
            memcpy(o, in->p, n);
            o += n;
            in->p += n;
            continue;
        }
        *o++ = (char)c;
        in->p++;
    }
    if (in->p >= in->end)
        goto bad;
    in->p++;
    *o = '\0';
    return out;
bad:
    free(out);
    return NULL;
}

static inline JVal *jc_jvalue(JIn *in);

static inline JVal *jc_jnew(JType t)
{
    JVal *v = calloc(1, sizeof *v);
    assert_non_null(v);
    v->t = t;
    return v;
}

static inline int jc_lit(JIn *in, const char *w)
{
    size_t n = strlen(w);
    if ((size_t)(in->end - in->p) < n || strncmp(in->p, w, n) != 0)
        return 0;
    in->p += n;
    return 1;
}

static inline JVal *jc_jnumber(JIn *in)
{
    const char *s = in->p;
    if (in->p < in->end && *in->p == '-')
        in->p++;
    if (in->p >= in->end)
        return NULL;
    if (*in->p == '0')
        in->p++;
    else if (*in->p >= '1' && *in->p <= '9')
        while (in->p < in->end && *in->p >= '0' && *in->p <= '9')
            in->p++;
    else
        return NULL;
    if (in->p < in->end && *in->p == '.') {
        in->p++;
        if (in->p >= in->end || !(*in->p >= '0' && *in->p <= '9'))
            return NULL;
        while (in->p < in->end && *in->p >= '0' && *in->p <= '9')
            in->p++;
    }
    if (in->p < in->end && (*in->p == 'e' || *in->p == 'E')) {
        in->p++;
        if (in->p < in->end && (*in->p == '+' || *in->p == '-'))
            in->p++;
        if (in->p >= in->end || !(*in->p >= '0' && *in->p <= '9'))
            return NULL;
        while (in->p < in->end && *in->p >= '0' && *in->p <= '9')
            in->p++;
    }
    size_t n = (size_t)(in->p - s);
    char *tmp = malloc(n + 1);
    assert_non_null(tmp);
    memcpy(tmp, s, n);
    tmp[n] = '\0';
    JVal *v = jc_jnew(J_NUM);
    v->num = strtod(tmp, NULL);
    free(tmp);
    return v;
}

static inline void jc_jpush(JVal *v, char *key, JVal *item)
{
    if (v->n == v->cap) {
        v->cap = v->cap ? v->cap * 2 : 8;
        v->items = realloc(v->items, v->cap * sizeof *v->items);
        assert_non_null(v->items);
        if (v->t == J_OBJ) {
            v->keys = realloc(v->keys, v->cap * sizeof *v->keys);
            assert_non_null(v->keys);
        }
    }
    if (v->t == J_OBJ)
        v->keys[v->n] = key;
    v->items[v->n++] = item;
}

static inline JVal *jc_jvalue(JIn *in)
{
    jc_ws(in);
    if (in->p >= in->end || ++in->depth > 64)
        return NULL;
    JVal *v = NULL;
    char c = *in->p;
    if (c == '{' || c == '[') {
        int obj = c == '{';
        v = jc_jnew(obj ? J_OBJ : J_ARR);
        in->p++;
        jc_ws(in);
        if (in->p < in->end && *in->p == (obj ? '}' : ']')) {
            in->p++;
        } else {
            for (;;) {
                char *key = NULL;
                if (obj) {
                    jc_ws(in);
                    key = jc_jstring(in);
                    if (!key)
                        goto bad;
                    for (size_t k = 0; k < v->n; k++)
                        if (!strcmp(v->keys[k], key)) {
                            free(key);
                            goto bad; /* duplicate key */
                        }
                    jc_ws(in);
                    if (in->p >= in->end || *in->p != ':') {
                        free(key);
                        goto bad;
                    }
                    in->p++;
                }
                JVal *item = jc_jvalue(in);
                if (!item) {
                    free(key);
                    goto bad;
                }
                jc_jpush(v, key, item);
                jc_ws(in);
                if (in->p < in->end && *in->p == ',') {
                    in->p++;
                    continue;
                }
                if (in->p < in->end && *in->p == (obj ? '}' : ']')) {
                    in->p++;
                    break;
                }
                goto bad;
            }
        }
    } else if (c == '"') {
        char *s = jc_jstring(in);
        if (!s)
            return NULL;
        v = jc_jnew(J_STR);
        v->str = s;
    } else if (jc_lit(in, "null")) {
        v = jc_jnew(J_NULL);
    } else if (jc_lit(in, "true")) {
        v = jc_jnew(J_BOOL);
        v->b = 1;
    } else if (jc_lit(in, "false")) {
        v = jc_jnew(J_BOOL);
    } else {
        v = jc_jnumber(in);
    }
    in->depth--;
    return v;
bad:
    jfree(v);
    return NULL;
}

/* The whole text is one JSON value, or NULL. */
static inline JVal *jparse(const char *text, size_t len)
{
    JIn in = {text, text + len, 0};
    JVal *v = jc_jvalue(&in);
    if (!v)
        return NULL;
    jc_ws(&in);
    if (in.p != in.end) {
        jfree(v);
        return NULL;
    }
    return v;
}

static inline const JVal *jget(const JVal *o, const char *key)
{
    if (!o || o->t != J_OBJ)
        return NULL;
    for (size_t i = 0; i < o->n; i++)
        if (!strcmp(o->keys[i], key))
            return o->items[i];
    return NULL;
}

static inline void has_keys(const JVal *o, const char *const *keys)
{
    assert_non_null(o);
    assert_int_equal(o->t, J_OBJ);
    for (size_t i = 0; keys[i]; i++)
        if (!jget(o, keys[i])) {
            print_error("key \"%s\" is missing\n", keys[i]);
            fail();
        }
}

#endif
