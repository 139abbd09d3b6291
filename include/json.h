/* json: a strict JSON reader (RFC 8259) for the files biaslint reads back: baselines and the runs
 * that `merge` combines. Recursive descent with a depth limit; every value, string and member array
 * lives in one arena, freed in one call. Errors are located (file:line:column, the line quoted). */
#ifndef JSON_H
#define JSON_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "diag.h"

typedef enum { JSON_NULL = 0, JSON_FALSE, JSON_TRUE, JSON_NUMBER, JSON_STRING, JSON_ARRAY, JSON_OBJECT } JsonType;

typedef struct JsonValue JsonValue;
typedef struct JsonMember JsonMember;

struct JsonValue {
    JsonType type;
    uint32_t line, col;         /* where the value starts in the text (1-based) */
    double num;                 /* JSON_NUMBER */
    const char *str;            /* JSON_STRING: decoded UTF-8, NUL-terminated (may hold U+0000 as a NUL) */
    size_t len;                 /* JSON_STRING: bytes in str; JSON_ARRAY/OBJECT: number of items/members */
    JsonValue **items;          /* JSON_ARRAY */
    JsonMember *members;        /* JSON_OBJECT, in file order; keys are unique */
};

struct JsonMember {
    const char *key;            /* decoded, NUL-terminated */
    size_t keylen;
    JsonValue *value;
};

typedef struct {
    Arena arena;                /* everything below */
    JsonValue *root;
    const char *path;           /* borrowed: the name used in diagnostics */
} JsonDoc;

#define JSON_DEFAULT_DEPTH 64   /* nesting limit when max_depth is 0 */

/* Streaming for big arrays: each item of an array that is the value of one of `keys` in the root
 * object is handed to item() as soon as it is parsed and then dropped, so a report of a million
 * devices is read in bounded memory. Such an array stays in the document with its length in len and
 * items NULL. The item and everything in it live only during the call: copy what you keep. item()
 * returns ERR_OK to go on, or a negative status (after recording its own diagnostics) to stop the
 * parse with that status. Items are handed over before the rest of the text is checked: a later
 * syntax error still fails json_parse. */
typedef struct {
    const char *const *keys;    /* NULL-terminated */
    int (*item)(void *ctx, const char *key, size_t index, const JsonValue *item);
    void *ctx;
} JsonStream;

/* Parse text[0..len) (one JSON value, optionally surrounded by blanks; a UTF-8 BOM is refused) into
 * doc. path names the text in diagnostics. max_depth limits the nesting of arrays and objects (0:
 * JSON_DEFAULT_DEPTH). Refused: trailing commas, comments, single quotes, leading zeros, NaN/Inf,
 * numbers that overflow a double, control characters in strings, lone surrogates, invalid UTF-8,
 * duplicate keys in one object, anything after the value. stream (NULL for none) hands the items
 * of chosen arrays over one by one instead of keeping them. On error the first problem is recorded
 * in d with its line and column, doc is left empty, and ERR_INPUT (or ERR_LIMIT for the depth limit,
 * ERR_NOMEM) is returned. */
int json_parse(JsonDoc *doc, const char *path, const char *text, size_t len, unsigned max_depth,
               const JsonStream *stream, DiagList *d) MUST_CHECK;

/* Read the file at path whole and parse it (stream may be NULL); ERR_IO with a diagnostic when it
 * cannot be read. */
int json_load(JsonDoc *doc, const char *path, unsigned max_depth, const JsonStream *stream,
              DiagList *d) MUST_CHECK;

/* Free everything the document holds; accepts a zeroed doc. */
void json_free(JsonDoc *doc);

/* The member of object o called key, or NULL (also when o is NULL or not an object). Linear in the
 * members: for objects read many times, walk o->members once instead. */
const JsonValue *json_get(const JsonValue *o, const char *key);

/* The name of a type for messages: "null", "a number", "a string", ... */
const char *json_type_name(JsonType t);

#endif
