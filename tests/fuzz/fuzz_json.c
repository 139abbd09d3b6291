/* fuzz_json: the JSON reader (json.c) behind `merge` and `--baseline`, and the two readers on top of
 * it. The first byte is a mode: 0 json_parse with the whole document kept, 1 with the "devices" and
 * "findings" arrays streamed, 2 `merge` (mrg_add, twice, then every merge writer), 3 a baseline
 * (bl_load); the rest is the file. The corpus holds JSON reports written by biaslint itself
 * (tests/fuzz/mkcorpus.sh runs check --format json on the test circuits when the binary exists).
 * Promises checked: located errors (fuzz.h); a parsed document is well formed (strings NUL-terminated
 * at their length, object keys unique, numbers finite, lines and columns set); a streamed item is
 * well formed too; a failed merge leaves the result as it was. */
#include "fuzz.h"

#include "baseline.h"
#include "json.h"
#include "merge.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

FUZZ_IN_PRIVATE_DIR

static void check_value(const JsonValue *v, unsigned depth)
{
    if (!v)
        fuzz_fail("a NULL value");
    if (depth > JSON_DEFAULT_DEPTH + 1)
        fuzz_fail("nesting %u past the limit", depth);
    if (v->line == 0 || v->col == 0)
        fuzz_fail("a value without a position");
    switch (v->type) {
    case JSON_NUMBER:
        if (!isfinite(v->num))
            fuzz_fail("a number that is not finite");
        break;
    case JSON_STRING:
        if (!v->str || v->str[v->len] != '\0')
            fuzz_fail("a string not terminated at its length");
        break;
    case JSON_ARRAY:
        for (size_t i = 0; v->items && i < v->len; i++)
            check_value(v->items[i], depth + 1);
        break;
    case JSON_OBJECT:
        for (size_t i = 0; i < v->len; i++) {
            const JsonMember *m = &v->members[i];
            if (!m->key || m->key[m->keylen] != '\0')
                fuzz_fail("a key not terminated at its length");
            for (size_t k = 0; k < i && k < 64; k++)
                if (v->members[k].keylen == m->keylen && memcmp(v->members[k].key, m->key, m->keylen) == 0)
                    fuzz_fail("key '%s' twice in one object", m->key);
            check_value(m->value, depth + 1);
        }
        break;
    default:
        break;
    }
}

static int on_item(void *ctx, const char *key, size_t index, const JsonValue *item)
{
    (void)ctx;
    (void)index;
    if (!key)
        fuzz_fail("a streamed item without its key");
    check_value(item, 1);
    return ERR_OK;
}

static void write_file(const char *name, const void *p, size_t n)
{
    FILE *fp = fopen(name, "wb");
    if (!fp || (n && fwrite(p, 1, n, fp) != n) || fclose(fp) != 0)
        abort();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    if (n == 0)
        return 0;
    int mode = data[0] & 3;
    data++, n--;
    DiagList d;
    diag_init(&d);
    if (mode <= 1) {
        static const char *const keys[] = {"devices", "findings", NULL};
        JsonStream st = {keys, on_item, NULL};
        JsonDoc doc;
        memset(&doc, 0, sizeof doc);
        int rc = json_parse(&doc, "fuzz.json", (const char *)data, n, 0, mode ? &st : NULL, &d);
        fuzz_check_diags(&d, rc);
        if (rc == ERR_OK)
            check_value(doc.root, 1);
        else if (doc.root)
            fuzz_fail("a failed parse left a root");
        json_free(&doc);
    } else if (mode == 2) {
        write_file("run.json", data, n);
        MrgResult m;
        mrg_init(&m);
        int rc = mrg_add(&m, "run.json", &d);
        fuzz_check_diags(&d, rc);
        size_t before = m.n, runs = m.nruns;
        diag_free(&d);
        diag_init(&d);
        int rc2 = mrg_add(&m, "run.json", &d); /* the same run again: a second sample per entry */
        if (rc2 != ERR_OK && (m.n != before || m.nruns != runs))
            fuzz_fail("a failed mrg_add changed the result");
        mrg_finish(&m);
        if (rc == ERR_OK) {
            static const char *const writers[] = {"text", "json", "csv", "html"};
            for (size_t i = 0; i < 4; i++) {
                const MrgWriter *w = mrg_lookup(writers[i]);
                FILE *fp = fopen("/dev/null", "w");
                if (w && fp && w->write(&m, fp, 0) != ERR_OK)
                    fuzz_fail("merge writer %s failed on /dev/null", writers[i]);
                if (fp)
                    fclose(fp);
            }
        }
        mrg_free(&m);
        unlink("run.json");
    } else {
        write_file("base.json", data, n);
        Baseline *b = NULL;
        int rc = bl_load("base.json", &b, &d);
        fuzz_check_diags(&d, rc);
        if ((rc == ERR_OK) != (b != NULL))
            fuzz_fail("bl_load status %d with baseline %p", rc, (void *)b);
        for (size_t i = 0; b && i < bl_ncorners(b); i++)
            if (!bl_corner(b, i))
                fuzz_fail("corner %zu has no label", i);
        for (size_t i = 0; b && i < bl_nfindings(b); i++)
            if (!bl_finding(b, i))
                fuzz_fail("finding %zu is missing", i);
        bl_free(b);
        unlink("base.json");
    }
    diag_free(&d);
    return 0;
}
