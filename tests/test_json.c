/* test_json: the JSON reader against RFC 8259 (T. Bray, ed., "The JavaScript Object Notation (JSON)
 * Data Interchange Format", IETF, 2017): a table of texts it must accept and refuse, cross-checked
 * with the independent strict reader of jsoncheck.h so the two cannot drift into the same mistake
 * (numbers beyond a double, which RFC 8259 section 9 leaves to the implementation, are tested apart);
 * every error row with its line and column; the depth limit; decoded strings and numbers (numbers
 * against strtod, the C library's correctly rounded conversion); duplicate keys in wide objects;
 * streaming of big arrays in bounded memory; files. */
#include "testutil.h"

#include "buf.h"
#include "json.h"
#include "jsoncheck.h"

static int parse(const char *text, size_t len, JsonDoc *doc, DiagList *d)
{
    return json_parse(doc, "t.json", text, len, 0, NULL, d);
}

/* Both readers agree on each text. */
static const struct {
    const char *text;
    int ok;
} cases[] = {
    {"0", 1}, {"-0", 1}, {"1e-05", 1}, {"[]", 1}, {"{}", 1}, {"\"\\u00b5\\ud83d\\ude00\"", 1},
    {"{\"a\":[null,true,false,1.5E+3]}", 1}, {" \"\xc2\xb5\" ", 1}, {"\n\t[1,\r\n2]\n", 1}, {"123456789012345678901234567890", 1},
    {"1e-400", 1}, {"\"\\/\\b\\f\\n\\r\\t\"", 1}, {"{\"\":0}", 1},
    {"", 0}, {"{", 0}, {"{\"a\":1,}", 0}, {"[1,]", 0}, {"{\"a\" 1}", 0}, {"{'a':1}", 0}, {"01", 0}, {"1.", 0},
    {".5", 0}, {"-", 0}, {"1e", 0}, {"+1", 0}, {"\"\x01\"", 0}, {"\"\\x\"", 0}, {"\"\\ud800\"", 0},
    {"\"\\udc00\"", 0}, {"\"\xff\"", 0}, {"\"\xc0\xaf\"", 0}, {"\"\xed\xa0\x80\"", 0}, {"nul", 0}, {"NaN", 0},
    {"{\"a\":1,\"a\":2}", 0}, {"[1] 2", 0}, {"\"abc", 0}, {"{\"a\":inf}", 0}, {"[1 2]", 0},
    {"/* c */ 1", 0}, {"0x10", 0}, {"\xef\xbb\xbf{}", 0}, {"[\"a\nb\"]", 0}, {"truex", 0}, {"{1:2}", 0},
};

static void test_accept_refuse(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        DiagList d;
        diag_init(&d);
        JsonDoc doc;
        size_t len = strlen(cases[i].text);
        int rc = parse(cases[i].text, len, &doc, &d);
        JVal *v = jparse(cases[i].text, len);
        int theirs = v != NULL;
        jfree(v);
        if ((rc == ERR_OK) != cases[i].ok || theirs != cases[i].ok) {
            print_error("case %zu '%s': json.c %s, jsoncheck %s, expected %s\n", i, cases[i].text,
                        rc == ERR_OK ? "accepts" : "refuses", theirs ? "accepts" : "refuses",
                        cases[i].ok ? "accept" : "refuse");
            fail();
        }
        if (rc == ERR_OK)
            assert_non_null(doc.root);
        else
            assert_null(doc.root);
        /* a refusal always says where */
        if (rc != ERR_OK) {
            assert_int_equal(d.nerrors, 1);
            assert_string_equal(d.items[0].loc.file, "t.json");
            assert_true(d.items[0].loc.line >= 1);
        }
        json_free(&doc);
        diag_free(&d);
    }
}

/* Errors: status, line, column and what the message says. */
static const struct {
    const char *text;
    int status;
    uint32_t line, col;
    const char *says;
} errs[] = {
    {"{\n  \"a\": 1,\n}", ERR_INPUT, 3, 1, "trailing comma before '}'"},
    {"[1,\n 2,\n 3 4]", ERR_INPUT, 3, 4, "expected ',' or ']'"},
    {"{\"devices\": [\n  {\"name\": 'x'}\n]}", ERR_INPUT, 2, 12, "double quotes"},
    {"{\"a\": 012}", ERR_INPUT, 1, 7, "may not start with 0"},
    {"{\"a\":\n  \"no end", ERR_INPUT, 2, 3, "no closing quote"},
    {"[\"tab\there\"]", ERR_INPUT, 1, 6, "control character"},
    {"[\"\\q\"]", ERR_INPUT, 1, 3, "unknown escape '\\q'"},
    {"[\"\\u12\"]", ERR_INPUT, 1, 3, "four hex digits"},
    {"\"\\ud83d x\"", ERR_INPUT, 1, 2, "high surrogate"},
    {"{\"k1\":1,\"k2\":2,\"k3\":3,\"k4\":4,\"k5\":5,\"k6\":6,\"k7\":7,\"k8\":8,\"k9\":9,\n\"k3\":0}", ERR_INPUT, 2, 1,
     "duplicate key \"k3\""},
    {"{\"a\":1, \"a\":2}", ERR_INPUT, 1, 9, "duplicate key \"a\""},
    {"{} x", ERR_INPUT, 1, 4, "after the end"},
    {"", ERR_INPUT, 1, 1, "the end of the file"},
    {"[1e999]", ERR_INPUT, 1, 2, "does not fit a double"},
    {"\xef\xbb\xbf[]", ERR_INPUT, 1, 1, "byte order mark"},
    {"[1, // no\n 2]", ERR_INPUT, 1, 5, "no comments"},
    {"[\"\xe2\x28\xa1\"]", ERR_INPUT, 1, 3, "invalid UTF-8"},
    {"[tru]", ERR_INPUT, 1, 2, "expected a value"},
    {"[\x01]", ERR_INPUT, 1, 2, "byte 0x01"},
};

static void test_errors(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof errs / sizeof errs[0]; i++) {
        DiagList d;
        diag_init(&d);
        JsonDoc doc;
        int rc = parse(errs[i].text, strlen(errs[i].text), &doc, &d);
        if (rc != errs[i].status || d.n != 1 || d.items[0].loc.line != errs[i].line ||
            d.items[0].loc.col != errs[i].col || !strstr(d.items[0].msg, errs[i].says)) {
            print_error("row %zu: status %d, %u:%u '%s'; expected %d, %u:%u '...%s...'\n", i, rc,
                        d.n ? d.items[0].loc.line : 0, d.n ? d.items[0].loc.col : 0, d.n ? d.items[0].msg : "",
                        errs[i].status, errs[i].line, errs[i].col, errs[i].says);
            fail();
        }
        assert_non_null(d.items[0].excerpt); /* the line is quoted */
        json_free(&doc);
        diag_free(&d);
    }
}

static void test_depth(void **state)
{
    (void)state;
    char deep[200];
    for (int n = 63; n <= 65; n++) {
        memset(deep, '[', (size_t)n);
        memset(deep + n, ']', (size_t)n);
        DiagList d;
        diag_init(&d);
        JsonDoc doc;
        int rc = parse(deep, 2 * (size_t)n, &doc, &d);
        assert_int_equal(rc, n <= JSON_DEFAULT_DEPTH ? ERR_OK : ERR_LIMIT);
        if (rc != ERR_OK) {
            assert_non_null(strstr(d.items[0].msg, "limit of 64"));
            assert_int_equal(d.items[0].loc.col, 65);
        }
        json_free(&doc);
        diag_free(&d);
    }
    /* a limit of our own */
    DiagList d;
    diag_init(&d);
    JsonDoc doc;
    assert_int_equal(json_parse(&doc, "t", "{\"a\":[[1]]}", 11, 3, NULL, &d), ERR_OK);
    json_free(&doc);
    assert_int_equal(json_parse(&doc, "t", "{\"a\":[[[1]]]}", 13, 3, NULL, &d), ERR_LIMIT);
    diag_free(&d);
    /* a million open brackets: refused at the limit, no stack overflow */
    size_t big = 1000000;
    char *b = malloc(big);
    assert_non_null(b);
    memset(b, '[', big);
    diag_init(&d);
    assert_int_equal(json_parse(&doc, "t", b, big, 0, NULL, &d), ERR_LIMIT);
    diag_free(&d);
    free(b);
}

static void test_values(void **state)
{
    (void)state;
    static const char text[] =
        "{\"s\": \"a\\\"b\\\\c\\u00e9\\ud83d\\ude00\\u0000z\", \"n\": [0, -0.0, 1.5e3, 2.2250738585072014e-308, "
        "0.1, 123456789.123456789, 5e-324, -17], \"t\": true, \"f\": false, \"z\": null, \"e\": {}, \"k\": \"\\u00b5\"}";
    DiagList d;
    diag_init(&d);
    JsonDoc doc;
    assert_int_equal(parse(text, sizeof text - 1, &doc, &d), ERR_OK);
    const JsonValue *s = json_get(doc.root, "s");
    assert_int_equal(s->type, JSON_STRING);
    /* a"b\c, e-acute, U+1F600, U+0000, z */
    static const char want[] = "a\"b\\c\xc3\xa9\xf0\x9f\x98\x80\0z";
    assert_int_equal(s->len, sizeof want - 1);
    assert_memory_equal(s->str, want, sizeof want - 1);
    const JsonValue *n = json_get(doc.root, "n");
    assert_int_equal(n->type, JSON_ARRAY);
    static const char *const nums[] = {"0", "-0.0", "1.5e3", "2.2250738585072014e-308", "0.1", "123456789.123456789",
                                       "5e-324", "-17"};
    assert_int_equal(n->len, 8);
    for (size_t i = 0; i < n->len; i++) {
        assert_int_equal(n->items[i]->type, JSON_NUMBER);
        assert_true(n->items[i]->num == strtod(nums[i], NULL));
    }
    assert_true(signbit(n->items[1]->num));
    assert_int_equal(json_get(doc.root, "t")->type, JSON_TRUE);
    assert_int_equal(json_get(doc.root, "f")->type, JSON_FALSE);
    assert_int_equal(json_get(doc.root, "z")->type, JSON_NULL);
    assert_int_equal(json_get(doc.root, "e")->type, JSON_OBJECT);
    assert_int_equal(json_get(doc.root, "e")->len, 0);
    assert_null(json_get(doc.root, "missing"));
    assert_null(json_get(n, "s"));
    assert_null(json_get(NULL, "s"));
    /* members keep their order and their places */
    assert_string_equal(doc.root->members[0].key, "s");
    assert_string_equal(doc.root->members[6].key, "k");
    assert_int_equal(n->line, 1);
    assert_int_equal(json_get(doc.root, "k")->col, (uint32_t)(strstr(text, "\"k\": ") + 5 - text) + 1);
    assert_string_equal(json_type_name(JSON_OBJECT), "an object");
    json_free(&doc);
    json_free(&doc); /* twice is harmless */
    diag_free(&d);
}

/* A wide object: duplicate keys are found in linear time (a quadratic check of 200 000 keys would
   not finish). */
static void test_wide_object(void **state)
{
    (void)state;
    size_t n = 200000;
    Buf b = BUF_INIT;
    assert_int_equal(buf_putc(&b, '{'), ERR_OK);
    for (size_t i = 0; i < n; i++)
        assert_int_equal(buf_printf(&b, "%s\"k%zu\":%zu", i ? "," : "", i, i), ERR_OK);
    assert_int_equal(buf_putc(&b, '}'), ERR_OK);
    DiagList d;
    diag_init(&d);
    JsonDoc doc;
    assert_int_equal(parse(b.data, b.len, &doc, &d), ERR_OK);
    assert_int_equal(doc.root->len, n);
    assert_true(json_get(doc.root, "k199999")->num == 199999);
    json_free(&doc);
    /* the same with one key repeated at the end */
    b.len--;
    assert_int_equal(buf_puts(&b, ",\"k77\":0}"), ERR_OK);
    assert_int_equal(parse(b.data, b.len, &doc, &d), ERR_INPUT);
    assert_non_null(strstr(d.items[0].msg, "duplicate key \"k77\""));
    diag_free(&d);
    buf_free(&b);
}

/* ---- streaming ---- */

typedef struct {
    size_t devices, findings, stop_at;
    double sum;
    const char *last_key;
} Seen;

static int on_item(void *ctx, const char *key, size_t index, const JsonValue *item)
{
    Seen *s = ctx;
    s->last_key = key;
    if (!strcmp(key, "devices")) {
        assert_int_equal(index, s->devices);
        s->devices++;
        s->sum += json_get(item, "id")->num;
    } else {
        s->findings++;
    }
    if (s->stop_at && s->devices == s->stop_at)
        return ERR_INPUT;
    return ERR_OK;
}

static void test_stream(void **state)
{
    (void)state;
    size_t n = 300000;
    Buf b = BUF_INIT;
    assert_int_equal(buf_puts(&b, "{\"tool\": \"t\", \"devices\": ["), ERR_OK);
    for (size_t i = 0; i < n; i++)
        assert_int_equal(buf_printf(&b, "%s\n {\"name\": \"x%zu.m1\", \"id\": %zu, \"corners\": [{\"a\": 1}, {\"a\": 2}]}",
                                    i ? "," : "", i, i),
                         ERR_OK);
    assert_int_equal(buf_puts(&b, "],\n \"findings\": [{\"devices\": [1, 2]}], \"other\": {\"devices\": [7]}}"), ERR_OK);
    static const char *const keys[] = {"devices", "findings", NULL};
    Seen seen = {0, 0, 0, 0.0, NULL};
    JsonStream st = {keys, on_item, &seen};
    DiagList d;
    diag_init(&d);
    JsonDoc doc;
    assert_int_equal(json_parse(&doc, "s.json", b.data, b.len, 0, &st, &d), ERR_OK);
    assert_int_equal(seen.devices, n);
    assert_int_equal(seen.findings, 1);
    assert_true(seen.sum == (double)n * (double)(n - 1) / 2);
    /* the streamed arrays stay as lengths; the nested "devices" array (not in the root) is kept */
    const JsonValue *dv = json_get(doc.root, "devices");
    assert_int_equal(dv->type, JSON_ARRAY);
    assert_int_equal(dv->len, n);
    assert_null(dv->items);
    assert_int_equal(json_get(json_get(doc.root, "other"), "devices")->len, 1);
    assert_non_null(json_get(json_get(doc.root, "other"), "devices")->items);
    /* bounded memory: the document holds the root and two small members, not 300 000 devices */
    assert_true(doc.arena.total < 1024u * 1024u);
    json_free(&doc);
    /* a callback can stop the parse with its own status */
    seen = (Seen){0, 0, 1000, 0.0, NULL};
    assert_int_equal(json_parse(&doc, "s.json", b.data, b.len, 0, &st, &d), ERR_INPUT);
    assert_int_equal(seen.devices, 1000);
    assert_null(doc.root);
    /* a syntax error after the streamed items still fails the parse */
    b.data[b.len - 1] = ',';
    seen = (Seen){0, 0, 0, 0.0, NULL};
    assert_int_equal(json_parse(&doc, "s.json", b.data, b.len, 0, &st, &d), ERR_INPUT);
    assert_int_equal(seen.devices, n);
    diag_free(&d);
    buf_free(&b);
}

static void test_files(void **state)
{
    (void)state;
    DiagList d;
    diag_init(&d);
    JsonDoc doc;
    assert_int_equal(json_load(&doc, "fixtures/no/such.json", 0, NULL, &d), ERR_IO);
    assert_int_equal(d.nerrors, 1);
    char *p = TU_TMPFILE("ok.json", "{\"a\": [1, 2]}\n");
    assert_non_null(p);
    assert_int_equal(json_load(&doc, p, 0, NULL, &d), ERR_OK);
    assert_int_equal(json_get(doc.root, "a")->len, 2);
    json_free(&doc);
    char *q = TU_TMPFILE("bad.json", "{\"a\": [1, 2}\n");
    assert_int_equal(json_load(&doc, q, 0, NULL, &d), ERR_INPUT);
    assert_string_equal(d.items[d.n - 1].loc.file, q);
    assert_int_equal(d.items[d.n - 1].loc.col, 12);
    free(p);
    free(q);
    diag_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_accept_refuse), cmocka_unit_test(test_errors),      cmocka_unit_test(test_depth),
        cmocka_unit_test(test_values),        cmocka_unit_test(test_wide_object), cmocka_unit_test(test_stream),
        cmocka_unit_test(test_files),
    };
    return cmocka_run_group_tests_name("json", tests, NULL, NULL);
}
