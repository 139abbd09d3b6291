/* strtab: interned, case-folded names (equal names are equal pointers), and a map from interned
 * names to indices for hash joins. */
#ifndef STRTAB_H
#define STRTAB_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "diag.h"

typedef struct StrTab StrTab;

/* A table whose strings live in arena a (borrowed; it must outlive the table's strings). NULL on OOM. */
StrTab *str_new(Arena *a);
void str_free(StrTab *t); /* frees the hash index; the strings stay in the arena. Accepts NULL. */

/* The interned, lower-cased copy of s[0..n), NUL-terminated; NULL when memory ran out. */
const char *str_intern(StrTab *t, const char *s, size_t n);

/* Each name of a table has one uint32 value of the caller's (a record index, say), kept in its slot
 * so that reading it costs no second lookup; STR_NOVAL until set. */
#define STR_NOVAL UINT32_MAX
/* str_intern, and *val pointed at the name's value (valid until the next str_intern on t). */
const char *str_intern_val(StrTab *t, const char *s, size_t n, uint32_t **val);
/* str_lookup with the hash of s[0..n) computed (str_hash) and the name's value in *val (STR_NOVAL
 * when the name is not there or its value was never set); val may be NULL. */
const char *str_lookup_val(const StrTab *t, const char *s, size_t n, uint64_t h, uint32_t *val);

/* The interned copy if s[0..n) (case-folded) was interned before, else NULL. Allocates nothing. */
const char *str_lookup(const StrTab *t, const char *s, size_t n);

size_t str_count(const StrTab *t);

/* A lower-cased, NUL-terminated copy of s[0..n) in arena a, not interned: for names that are
 * unique anyway (device and instance names), which would only crowd a table of millions of names
 * and cost it a cache miss each. Compare them with strcmp. NULL when memory ran out. */
const char *str_copy(Arena *a, const char *s, size_t n);

/* FNV-1a over the lower-cased bytes: the hash every name table in biaslint uses. */
uint64_t str_hash(const char *s, size_t n);

/* For lookups in bulk: ask the memory for the slot of hash h ahead of str_lookup_val, so that the
 * cache misses of many lookups overlap instead of following one another. */
void str_prefetch(const StrTab *t, uint64_t h);

/* StrMap: interned name -> uint32 value, open addressing, keyed by pointer. A key and its value share
 * one slot, so a lookup in a map of millions of names is one cache miss. */
typedef struct {
    const char *key;  /* NULL: a free slot */
    uint32_t val;
} StrMapSlot;

typedef struct {
    StrMapSlot *slots;
    size_t cap;  /* power of two, 0 when empty */
    size_t n;
} StrMap;

#define STRMAP_INIT {NULL, 0, 0}

/* Insert or replace. ERR_OK or ERR_NOMEM (map unchanged). */
int strmap_put(StrMap *m, const char *key, uint32_t val) MUST_CHECK;
/* 1 and *val set when key is present, else 0. */
int strmap_get(const StrMap *m, const char *key, uint32_t *val);
void strmap_free(StrMap *m);

#endif
