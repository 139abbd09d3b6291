/* arena: bump allocation for everything a parse produces, freed in one call. */
#ifndef ARENA_H
#define ARENA_H

#include <stddef.h>

typedef struct ArenaBlock ArenaBlock;

typedef struct {
    ArenaBlock *head;  /* newest block; older blocks chain behind it */
    size_t used;       /* bytes used in head */
    size_t total;      /* bytes obtained from malloc, for statistics */
} Arena;

/* An empty arena; allocates nothing until first used. */
void arena_init(Arena *a);

/* n bytes aligned for any type, or NULL when memory ran out (the arena stays valid). */
void *arena_alloc(Arena *a, size_t n);

/* As arena_alloc, zero-filled. */
void *arena_zalloc(Arena *a, size_t n);

/* An array of n elements of size sz, NULL on overflow or out of memory. */
void *arena_array(Arena *a, size_t n, size_t sz);

/* A NUL-terminated copy of s[0..n), or NULL. */
char *arena_strndup(Arena *a, const char *s, size_t n);

/* Frees every block; the arena is empty again and may be reused. Accepts NULL. */
void arena_free(Arena *a);

#endif
