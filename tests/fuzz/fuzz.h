/* fuzz: what the libFuzzer targets in tests/fuzz share. Each target feeds one reader through the
 * same entry point biaslint uses, then checks promises the reader makes (diagnostics are located,
 * records can be found by name, absent values stay NaN, nothing infinite is kept). A broken promise
 * calls fuzz_fail, which aborts so that libFuzzer saves the input. Built by `make fuzz`. */
#ifndef FUZZ_H
#define FUZZ_H

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "diag.h"
#include "opdump.h"

#define fuzz_fail(...)                                                              \
    do {                                                                            \
        fprintf(stderr, "fuzz: broken promise at %s:%d: ", __FILE__, __LINE__);     \
        fprintf(stderr, __VA_ARGS__);                                               \
        fputc('\n', stderr);                                                        \
        abort();                                                                    \
    } while (0)

/* Every error names a file. (Most name a line too; the readers give line 0 only for a whole-file
 * problem such as an empty dump, so the line is not asserted here: tests/hostile.sh asserts it per
 * case.) */
static inline void fuzz_check_diags(const DiagList *d, int status)
{
    for (size_t i = 0; i < d->n; i++) {
        const Diag *g = &d->items[i];
        if (!g->msg)
            fuzz_fail("diagnostic %zu has no message", i);
        if (g->sev == DIAG_ERROR && (!g->loc.file || !g->loc.file[0]))
            fuzz_fail("error without a file: %s", g->msg);
    }
    if (status != ERR_OK && d->nerrors == 0 && !d->oom)
        fuzz_fail("status %d without an error diagnostic", status);
    if (status == ERR_OK && d->nerrors != 0)
        fuzz_fail("status OK with %zu errors", d->nerrors);
}

/* A private folder for the files a target writes, made once; the process works inside it, so a
 * netlist's relative includes and working-folder lookups stay there. */
static inline void fuzz_enter_private_dir(void)
{
    static int done;
    if (done)
        return;
    const char *base = access("/dev/shm", W_OK) == 0 ? "/dev/shm" : "/tmp";
    char tmpl[64];
    snprintf(tmpl, sizeof tmpl, "%s/biaslint-fuzz-XXXXXX", base);
    if (!mkdtemp(tmpl) || chdir(tmpl) != 0) {
        perror("fuzz: private folder");
        abort();
    }
    done = 1;
}

/* The libFuzzer initializer of a target that writes files: it works in its private folder. */
#define FUZZ_IN_PRIVATE_DIR                                                                        \
    int LLVMFuzzerInitialize(int *argc, char ***argv);                                             \
    int LLVMFuzzerInitialize(int *argc, char ***argv)                                              \
    {                                                                                              \
        (void)argc;                                                                                \
        (void)argv;                                                                                \
        fuzz_enter_private_dir();                                                                  \
        return 0;                                                                                  \
    }

/* An OpTable over data[0..n) as op_read builds one after loading a file (op_read's own file
 * handling is tested in tests/test_opdump.c and tests/hostile.sh; here the bytes come from memory). */
static inline OpTable *fuzz_table(const uint8_t *data, size_t n, const char *path)
{
    OpTable *t = calloc(1, sizeof *t);
    if (!t)
        abort();
    arena_init(&t->arena);
    t->temp_c = NAN;
    t->file.text = malloc(n + 1);
    t->file.path = strdup(path);
    if (!t->file.text || !t->file.path || !(t->names = str_new(&t->arena)))
        abort();
    if (n)
        memcpy(t->file.text, data, n);
    t->file.text[n] = '\0';
    t->file.len = n;
    return t;
}

/* What a reader promises about a table it returned without error. */
static inline void fuzz_check_table(const OpTable *t)
{
    for (size_t i = 0; i < t->n; i++) {
        const OpRecord *r = &t->recs[i];
        if (!r->name)
            fuzz_fail("record %zu has no name", i);
        if (op_find(t, r->name) != r)
            fuzz_fail("record '%s' is not found by its name", r->name);
        for (int q = 0; q < OPQ_COUNT; q++)
            if (isinf(op_q(t, r, (OpQty)q)))
                fuzz_fail("record '%s' keeps an infinite %s", r->name, op_qty_name[q]);
        if (r->loc.file == NULL || r->loc.line == 0)
            fuzz_fail("record '%s' has no location", r->name);
    }
    for (size_t i = 0; i < t->nnodes; i++)
        if (!t->node_name[i] || isinf(t->node_v[i]))
            fuzz_fail("node %zu has no name or an infinite voltage", i);
    if (t->nextra && t->n && !t->extra_vals)
        fuzz_fail("extra columns without values");
    for (size_t i = 0; i < t->n * t->nextra; i++)
        if (isinf(t->extra_vals[i]))
            fuzz_fail("extra value %zu is infinite", i);
}

/* Parse data with reader r the way op_read does (the sniffs first, as format detection calls
 * them on any input), check the result, free everything. */
static inline void fuzz_reader(const OpReader *r, const uint8_t *data, size_t n, const char *path, int sniff_all)
{
    OpTable *t = fuzz_table(data, n, path);
    if (sniff_all) {
        const OpReader *all[] = {&op_show_reader, &op_raw_reader, &op_csv_reader};
        for (size_t i = 0; i < 3; i++) {
            int s = all[i]->sniff(t->file.text, t->file.len);
            if (s < 0 || s > 100)
                fuzz_fail("sniff %s gave %d", all[i]->name, s);
        }
    }
    DiagList d;
    diag_init(&d);
    int rc = r->parse(t, &d);
    fuzz_check_diags(&d, rc);
    if (rc == ERR_OK)
        fuzz_check_table(t);
    diag_free(&d);
    op_free(t);
}

#endif
