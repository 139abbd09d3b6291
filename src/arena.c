/* arena: blocks grow geometrically so a million small allocations cost a few dozen mallocs. */
#include "arena.h"

#include <stdalign.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "memhint.h"

#define ARENA_MIN_BLOCK (64u * 1024u)
#define ARENA_MAX_BLOCK (64u * 1024u * 1024u)
#define ALIGN alignof(max_align_t)

struct ArenaBlock {
    ArenaBlock *next;
    size_t size;
    alignas(max_align_t) unsigned char data[];
};

void arena_init(Arena *a)
{
    a->head = NULL;
    a->used = 0;
    a->total = 0;
}

void *arena_alloc(Arena *a, size_t n)
{
    if (n > SIZE_MAX - ALIGN)
        return NULL;
    n = (n + ALIGN - 1) & ~(size_t)(ALIGN - 1);
    if (n == 0)
        n = ALIGN;
    if (!a->head || a->head->size - a->used < n) {
        size_t size = a->head ? a->head->size * 2 : ARENA_MIN_BLOCK;
        if (size > ARENA_MAX_BLOCK)
            size = ARENA_MAX_BLOCK;
        if (size < n)
            size = n;
        if (size > SIZE_MAX - sizeof(ArenaBlock))
            return NULL;
        ArenaBlock *b = malloc(sizeof(ArenaBlock) + size);
        if (!b)
            return NULL;
        mem_hint_huge(b, sizeof(ArenaBlock) + size); /* the big blocks hold names read in random order */
        b->next = a->head;
        b->size = size;
        a->head = b;
        a->used = 0;
        a->total += size;
    }
    void *p = a->head->data + a->used;
    a->used += n;
    return p;
}

void *arena_zalloc(Arena *a, size_t n)
{
    void *p = arena_alloc(a, n);
    if (p)
        memset(p, 0, n);
    return p;
}

void *arena_array(Arena *a, size_t n, size_t sz)
{
    if (sz && n > SIZE_MAX / sz)
        return NULL;
    return arena_alloc(a, n * sz);
}

char *arena_strndup(Arena *a, const char *s, size_t n)
{
    char *p = arena_alloc(a, n + 1);
    if (p) {
        memcpy(p, s, n);
        p[n] = '\0';
    }
    return p;
}

void arena_free(Arena *a)
{
    if (!a)
        return;
    ArenaBlock *b = a->head;
    while (b) {
        ArenaBlock *next = b->next;
        free(b);
        b = next;
    }
    arena_init(a);
}
