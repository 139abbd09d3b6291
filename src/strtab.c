/* strtab: an open-addressing set of case-folded strings stored in an arena. */
#include "strtab.h"

#include <ctype.h>
#include <stdlib.h>
#include <string.h>

#include "memhint.h"

/* One slot: the string with its hash and its value beside it, so that a probe touches one cache line
 * and a name's value costs no second lookup (a table of millions of names is far larger than the
 * caches; every probe is a miss). */
typedef struct {
    const char *s;       /* interned string, NULL when the slot is free */
    uint32_t hash;       /* low 32 bits of its hash, to skip most comparisons */
    uint32_t val;        /* the caller's value for the name, STR_NOVAL until set */
} Slot;

struct StrTab {
    Arena *arena;
    Slot *slots;         /* power-of-two table */
    size_t cap, n;
};

static inline unsigned char fold(unsigned char c)
{
    return (unsigned char)(c >= 'A' && c <= 'Z' ? c + ('a' - 'A') : c);
}

uint64_t str_hash(const char *s, size_t n)
{
    uint64_t h = 1469598103934665603ull;
    for (size_t i = 0; i < n; i++) {
        h ^= fold((unsigned char)s[i]);
        h *= 1099511628211ull;
    }
    return h;
}

StrTab *str_new(Arena *a)
{
    StrTab *t = calloc(1, sizeof *t);
    if (!t)
        return NULL;
    t->arena = a;
    return t;
}

void str_free(StrTab *t)
{
    if (!t)
        return;
    free(t->slots);
    free(t);
}

size_t str_count(const StrTab *t)
{
    return t->n;
}

static int same(const char *interned, const char *s, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if ((unsigned char)interned[i] != fold((unsigned char)s[i]))
            return 0;
    return interned[n] == '\0';
}

static size_t probe(const StrTab *t, const char *s, size_t n, uint64_t h)
{
    size_t mask = t->cap - 1, i = (size_t)h & mask;
    uint32_t h32 = (uint32_t)h;
    while (t->slots[i].s && !(t->slots[i].hash == h32 && same(t->slots[i].s, s, n)))
        i = (i + 1) & mask;
    return i;
}

static int grow(StrTab *t)
{
    size_t ncap = t->cap ? t->cap * 2 : 256;
    Slot *slots = mem_zeroed(ncap, sizeof *slots); /* probes read before they write (memhint.h) */
    if (!slots)
        return ERR_NOMEM;
    for (size_t i = 0; i < t->cap; i++) {
        if (!t->slots[i].s)
            continue;
        size_t j = t->slots[i].hash & (ncap - 1);
        /* rehash from the stored low bits: ncap <= 2^32 slots is far beyond any netlist */
        while (slots[j].s)
            j = (j + 1) & (ncap - 1);
        slots[j] = t->slots[i];
    }
    free(t->slots);
    t->slots = slots;
    t->cap = ncap;
    return ERR_OK;
}

const char *str_copy(Arena *a, const char *s, size_t n)
{
    char *p = arena_alloc(a, n + 1);
    if (!p)
        return NULL;
    for (size_t k = 0; k < n; k++)
        p[k] = (char)fold((unsigned char)s[k]);
    p[n] = '\0';
    return p;
}

const char *str_lookup(const StrTab *t, const char *s, size_t n)
{
    return str_lookup_val(t, s, n, str_hash(s, n), NULL);
}

const char *str_lookup_val(const StrTab *t, const char *s, size_t n, uint64_t h, uint32_t *val)
{
    if (val)
        *val = STR_NOVAL;
    if (!t->cap)
        return NULL;
    const Slot *sl = &t->slots[probe(t, s, n, h)];
    if (val && sl->s)
        *val = sl->val;
    return sl->s;
}

void str_prefetch(const StrTab *t, uint64_t h)
{
#if defined(__GNUC__)
    if (t->cap)
        __builtin_prefetch(&t->slots[(size_t)h & (t->cap - 1)]);
#else
    (void)t;
    (void)h;
#endif
}

const char *str_intern(StrTab *t, const char *s, size_t n)
{
    return str_intern_val(t, s, n, NULL);
}

const char *str_intern_val(StrTab *t, const char *s, size_t n, uint32_t **val)
{
    if ((t->n + 1) * 4 > t->cap * 3 && grow(t) != ERR_OK)
        return NULL;
    uint64_t h = str_hash(s, n);
    size_t i = probe(t, s, n, h);
    if (!t->slots[i].s) {
        const char *p = str_copy(t->arena, s, n);
        if (!p)
            return NULL;
        t->slots[i] = (Slot){p, (uint32_t)h, STR_NOVAL};
        t->n++;
    }
    if (val)
        *val = &t->slots[i].val;
    return t->slots[i].s;
}

/* StrMap: keys are interned pointers, so hashing the address is enough. */
static inline size_t ptr_hash(const char *p)
{
    uint64_t x = (uint64_t)(uintptr_t)p;
    x ^= x >> 33;
    x *= 0xff51afd7ed558ccdull;
    x ^= x >> 33;
    return (size_t)x;
}

static int map_grow(StrMap *m)
{
    size_t ncap = m->cap ? m->cap * 2 : 64;
    StrMapSlot *slots = mem_zeroed(ncap, sizeof *slots); /* as above */
    if (!slots)
        return ERR_NOMEM;
    for (size_t i = 0; i < m->cap; i++) {
        if (!m->slots[i].key)
            continue;
        size_t j = ptr_hash(m->slots[i].key) & (ncap - 1);
        while (slots[j].key)
            j = (j + 1) & (ncap - 1);
        slots[j] = m->slots[i];
    }
    free(m->slots);
    m->slots = slots;
    m->cap = ncap;
    return ERR_OK;
}

int strmap_put(StrMap *m, const char *key, uint32_t val)
{
    if ((m->n + 1) * 4 > m->cap * 3 && map_grow(m) != ERR_OK)
        return ERR_NOMEM;
    size_t mask = m->cap - 1, i = ptr_hash(key) & mask;
    while (m->slots[i].key && m->slots[i].key != key)
        i = (i + 1) & mask;
    if (!m->slots[i].key) {
        m->slots[i].key = key;
        m->n++;
    }
    m->slots[i].val = val;
    return ERR_OK;
}

int strmap_get(const StrMap *m, const char *key, uint32_t *val)
{
    if (!m->cap || !key)
        return 0;
    size_t mask = m->cap - 1, i = ptr_hash(key) & mask;
    while (m->slots[i].key) {
        if (m->slots[i].key == key) {
            if (val)
                *val = m->slots[i].val;
            return 1;
        }
        i = (i + 1) & mask;
    }
    return 0;
}

void strmap_free(StrMap *m)
{
    if (!m)
        return;
    free(m->slots);
    m->slots = NULL;
    m->cap = m->n = 0;
}
