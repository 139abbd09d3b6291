/* test_intent: intents written in netlist comments. Netlists in fixtures/intent/ are read with the
 * real netlist reader; the test checks which card each `sized for:` / `waive:` comment lands on
 * (above the card, on its own lines, between its continuation lines, inside a subcircuit, in an
 * included file), what it says, where it is (file, line, column), the warnings for comments that
 * land on nothing, every error with its line and column, and that annotation keeps the comments
 * byte for byte (and they read the same afterwards). */
#include "testutil.h"

#include "annotate.h"
#include "intent.h"
#include "netlist.h"

typedef struct {
    Design ds;
    IntentSet in;
    DiagList d;
} Fx;

static int load(Fx *x, const char *path)
{
    memset(x, 0, sizeof *x);
    diag_init(&x->d);
    NlOptions o = {0, 0, 0};
    int rc = nl_load(path, &o, &x->ds, &x->d);
    if (rc != ERR_OK)
        diag_print(&x->d, stderr, 0, DIAG_NOTE);
    assert_int_equal(rc, ERR_OK);
    return intent_scan(&x->ds, &x->in, &x->d);
}

static void unload(Fx *x)
{
    intent_free(&x->in);
    nl_free(&x->ds);
    diag_free(&x->d);
}

static const Device *dev(const Fx *x, const char *name)
{
    for (size_t i = 0; i < x->ds.ndevs; i++)
        if (strcmp(x->ds.devs[i].name, name) == 0)
            return &x->ds.devs[i];
    print_error("no device %s\n", name);
    fail();
    return NULL;
}

static const IntentEntry *entries(const Fx *x, const char *name, size_t *n)
{
    return intent_card(&x->in, dev(x, name)->card, n);
}

static void test_places(void **state)
{
    (void)state;
    Fx x;
    assert_int_equal(load(&x, "fixtures/intent/basic.cir"), ERR_OK);
    assert_int_equal(x.d.nerrors, 0);
    size_t n;
    const IntentEntry *e;

    /* above the card: two requirements, their columns in the netlist line */
    e = entries(&x, "m1", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].kind, RULE_INLINE_SIZED);
    assert_null(e[0].sized.sel);
    assert_int_equal(e[0].sized.nreqs, 2);
    const Req *r = &e[0].sized.reqs[0];
    assert_int_equal(r->check, CHECK_GMID);
    assert_int_equal(r->form, REQ_TARGET);
    assert_close(r->target, 15.0, 1e-15);
    assert_close(r->lo, 13.5, 1e-12);
    assert_close(r->hi, 16.5, 1e-12);
    assert_string_equal(r->from.file, "fixtures/intent/basic.cir");
    assert_int_equal(r->from.line, 4);
    assert_int_equal(r->col, 14);
    r = &e[0].sized.reqs[1];
    assert_int_equal(r->check, CHECK_REGION);
    assert_int_equal(r->regions, 1u << REGION_MODERATE);
    assert_int_equal(r->col, 32);

    /* on the card's own line, after `$` and after `;` */
    e = entries(&x, "m2", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.reqs[0].check, CHECK_MARGIN);
    assert_close(e[0].sized.reqs[0].lo, 0.08, 1e-15);
    assert_int_equal(e[0].sized.reqs[0].from.line, 6);
    assert_int_equal(e[0].sized.reqs[0].col, 39);
    e = entries(&x, "m3", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.reqs[0].check, CHECK_GAIN);
    assert_int_equal(e[0].sized.reqs[0].sev, SEV_ERROR);

    /* two lines above (in order: the later one wins when check applies them), the marker in any
       case and spacing, and a comment between the card's continuation lines */
    e = entries(&x, "m4", &n);
    assert_int_equal(n, 3);
    assert_int_equal(e[0].sized.reqs[0].form, REQ_RANGE);
    assert_close(e[0].sized.reqs[0].lo, 12.0, 0);
    assert_close(e[0].sized.reqs[0].hi, 18.0, 0);
    assert_int_equal(e[0].sized.reqs[0].from.line, 8);
    assert_close(e[1].sized.reqs[0].target, 20.0, 0);
    assert_int_equal(e[1].sized.reqs[0].from.line, 9);
    assert_int_equal(e[2].sized.reqs[0].check, CHECK_FT);
    assert_close(e[2].sized.reqs[0].lo, 1e9, 1e-15);
    assert_int_equal(e[2].sized.reqs[0].from.line, 12);

    /* a blank line cuts a card off from the comments above it */
    e = entries(&x, "m5", &n);
    assert_int_equal(n, 0);
    assert_null(e);
    /* annotation lines are stepped over (and never read, whatever they hold) */
    e = entries(&x, "m6", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.reqs[0].check, CHECK_VOV);
    assert_close(e[0].sized.reqs[0].lo, 0.1, 1e-15);
    assert_close(e[0].sized.reqs[0].hi, 0.2, 1e-15);

    /* inside a subcircuit: one card, so every instance has the same entry */
    const Device *a = dev(&x, "x1.mc"), *b = dev(&x, "x2.mc"), *c = dev(&x, "x3.mc");
    assert_int_equal(a->card, b->card);
    assert_int_equal(a->card, c->card);
    e = intent_card(&x.in, c->card, &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.nreqs, 2);
    assert_int_equal(e[0].sized.reqs[0].check, CHECK_ID);
    assert_close(e[0].sized.reqs[0].lo, 9.5e-6, 1e-12);
    assert_int_equal(e[0].sized.reqs[1].regions, 1u << REGION_STRONG);

    /* an inline waiver */
    e = entries(&x, "m7", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].kind, RULE_INLINE_WAIVE);
    assert_null(e[0].waiver.sel);
    assert_int_equal(e[0].waiver.checks, (1u << CHECK_TRIODE) | (1u << CHECK_MARGIN));
    assert_int_equal(e[0].waiver.until, 20300131);
    assert_string_equal(e[0].waiver.reason, "a switch that is meant to be in triode");
    assert_int_equal(e[0].waiver.from.line, 27);

    /* marked comments on or above no MOSFET card: a warning each, at the marker */
    assert_int_equal(x.d.nwarnings, 2);
    assert_int_equal(x.d.n, 2);
    assert_int_equal(x.d.items[0].loc.line, 29);
    assert_int_equal(x.d.items[0].loc.col, 3);
    assert_non_null(strstr(x.d.items[0].msg, "'sized for:' comment is neither on a MOSFET card"));
    assert_int_equal(x.d.items[1].loc.line, 31);
    assert_int_equal(x.d.items[1].loc.col, 13);
    assert_string_equal(x.d.items[1].loc.file, "fixtures/intent/basic.cir");
    unload(&x);
}

/* Every bad comment is reported at its line and column in the netlist; the good ones still count. */
static void test_errors(void **state)
{
    (void)state;
    Fx x;
    assert_int_equal(load(&x, "fixtures/intent/bad.cir"), ERR_INPUT);
    static const struct {
        unsigned line, col;
        const char *msg;
    } want[] = {
        {3, 32, "unknown requirement 'modrate'"},
        {5, 52, "bad number '80mA' for margin: 'A' is neither an SI suffix (f p n u m k meg g t) nor the unit V"},
        {6, 16, "a waiver needs a reason"},
    };
    assert_int_equal(x.d.nerrors, 3);
    for (size_t k = 0; k < 3; k++) {
        const Diag *g = &x.d.items[k];
        if (g->loc.line != want[k].line || g->loc.col != want[k].col || !strstr(g->msg, want[k].msg)) {
            print_error("got %u:%u: %s\n", g->loc.line, g->loc.col, g->msg);
            fail();
        }
        assert_string_equal(g->loc.file, "fixtures/intent/bad.cir");
        assert_int_equal(g->sev, DIAG_ERROR);
        assert_non_null(g->excerpt); /* the netlist line is quoted */
    }
    size_t n;
    assert_int_equal(entries(&x, "m1", &n) == NULL, 1);
    entries(&x, "m4", &n);
    assert_int_equal(n, 1);
    unload(&x);
}

static void test_crlf_and_include(void **state)
{
    (void)state;
    Fx x;
    assert_int_equal(load(&x, "fixtures/intent/crlf.cir"), ERR_OK);
    size_t n;
    const IntentEntry *e = entries(&x, "m1", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.reqs[0].form, REQ_TARGET);
    assert_close(e[0].sized.reqs[0].tol, 1.0, 0);
    assert_false(e[0].sized.reqs[0].tol_pct);
    assert_close(e[0].sized.reqs[0].hi, 9.0, 1e-15);
    e = entries(&x, "m2", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.reqs[0].regions, (1u << REGION_STRONG) | (1u << REGION_MODERATE));
    assert_int_equal(e[0].sized.reqs[0].from.line, 5);
    assert_int_equal(x.d.n, 0);
    unload(&x);

    assert_int_equal(load(&x, "fixtures/intent/top.cir"), ERR_OK);
    e = entries(&x, "x1.mp", &n);
    assert_int_equal(n, 1);
    assert_int_equal(e[0].sized.nreqs, 2);
    assert_int_equal(e[0].sized.reqs[0].sev, SEV_WARNING);
    assert_string_equal(e[0].sized.reqs[0].from.file, "fixtures/intent/stage.inc");
    assert_int_equal(e[0].sized.reqs[0].from.line, 4);
    assert_int_equal(x.d.n, 0);
    unload(&x);
}

/* The annotated netlist keeps every intent comment byte for byte, and reads back to the same
 * intents (annotation lines go after the cards; the comments above the next card stay attached). */
static void test_annotation_keeps_them(void **state)
{
    (void)state;
    Fx x;
    assert_int_equal(load(&x, "fixtures/intent/basic.cir"), ERR_OK);
    Joined j;
    memset(&j, 0, sizeof j);
    Row *rows = calloc(x.ds.ndevs, sizeof *rows);
    assert_non_null(rows);
    for (size_t i = 0; i < x.ds.ndevs; i++) {
        rows[i].dev = &x.ds.devs[i];
        fig_normalize(NULL, x.ds.devs[i].type, &rows[i].fig);
    }
    j.rows = rows;
    j.n = x.ds.ndevs;
    Findings f;
    memset(&f, 0, sizeof f);
    Buf b = BUF_INIT;
    assert_int_equal(ann_render(&x.ds, &j, &f, &b), ERR_OK);
    const char *src = x.ds.files.files[0]->text;
    /* every original line that holds a marker is in the output unchanged */
    size_t kept = 0;
    for (const char *p = src; *p;) {
        const char *e = strchr(p, '\n');
        size_t len = e ? (size_t)(e - p) : strlen(p);
        char line[256];
        snprintf(line, sizeof line, "\n%.*s\n", (int)len, p);
        if ((strstr(line, "sized for") || strstr(line, "Sized For") || strstr(line, "waive:")) &&
            strncmp(line + 1, "*~", 2) != 0) {
            assert_non_null(strstr(b.data, line));
            kept++;
        }
        p = e ? e + 1 : p + len;
    }
    assert_int_equal(kept, 11); /* lines 4 6 7 8 9 12 17 20 27 29 31 */
    size_t before = x.in.n;
    char *path = tu_tmpfile("annotated.cir", b.data, b.len);
    assert_non_null(path);
    buf_free(&b);
    free(rows);
    unload(&x);
    /* the annotated file reads to the same intents (its include-free body needs no model path) */
    assert_int_equal(load(&x, path), ERR_OK);
    assert_int_equal(x.in.n, before);
    size_t n;
    entries(&x, "m6", &n);
    assert_int_equal(n, 1);
    entries(&x, "m4", &n);
    assert_int_equal(n, 3);
    unload(&x);
    free(path);
}

/* A marked comment on no MOSFET card, in a netlist where no comment lands on one: a warning, read
 * without touching the (empty) list of the comments that did land (found by fuzz_netlist under
 * UBSan). */
static void test_stray_alone(void **state)
{
    (void)state;
    static const char text[] = "* stray\n* waive: nothing here\nr1 a 0 1k\n.model n nmos level=1\nm1 a a 0 0 n\n.end\n";
    char *path = tu_tmpfile("stray.cir", text, sizeof text - 1);
    Fx x;
    assert_int_equal(load(&x, path), ERR_OK);
    assert_int_equal(x.d.nerrors, 0);
    assert_int_equal(x.d.n, 1);
    assert_int_equal(x.d.items[0].loc.line, 2);
    assert_non_null(strstr(x.d.items[0].msg, "applies to nothing"));
    unload(&x);
    free(path);
}

static void test_empty(void **state)
{
    (void)state;
    size_t n = 7;
    assert_null(intent_card(NULL, 0, &n));
    assert_int_equal(n, 0);
    IntentSet z;
    memset(&z, 0, sizeof z);
    assert_null(intent_card(&z, 3, &n));
    intent_free(&z);
    intent_free(NULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_places),
        cmocka_unit_test(test_errors),
        cmocka_unit_test(test_crlf_and_include),
        cmocka_unit_test(test_annotation_keeps_them),
        cmocka_unit_test(test_stray_alone),
        cmocka_unit_test(test_empty),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
